//! Convergence of the P1 solution and effectivity of the Zienkiewicz–Zhu estimate on a smooth
//! manufactured solution, meshed by the pipeline's own quality mesher.
//!
//! Exact solution on the unit square (analytic, no corner singularity):
//!   T(x, y) = sin(πx)·sinh(πy)/sinh(π) + 1 − x² − y²,
//! harmonic part plus a quadratic with ∇²T = −4, so −k∇²T = Q with the uniform source Q = 4k
//! that the model file supports. The non-uniform Dirichlet data T on the boundary are set on the
//! assembled system (`System::fixed`), which the model file cannot express.
//!
//! Expected orders: for P1 elements and a smooth solution, ‖T − T_h‖_L2 = O(h²) and
//! ‖T − T_h‖_E = O(h) (the standard a priori estimates, e.g. S. C. Brenner and L. R. Scott, The
//! Mathematical Theory of Finite Element Methods, 3rd ed., Springer, 2008, ch. 0 and 5).

use std::f64::consts::PI;
use xsheat::mesh::MeshOptions;
use xsheat::{fem, model, post, run, solve};

const K: f64 = 1.5;

fn exact(p: [f64; 2]) -> f64 {
    (PI * p[0]).sin() * (PI * p[1]).sinh() / PI.sinh() + 1.0 - p[0] * p[0] - p[1] * p[1]
}

fn exact_gradient(p: [f64; 2]) -> [f64; 2] {
    let s = PI.sinh();
    [
        PI * (PI * p[0]).cos() * (PI * p[1]).sinh() / s - 2.0 * p[0],
        PI * (PI * p[0]).sin() * (PI * p[1]).cosh() / s - 2.0 * p[1],
    ]
}

/// Degree-5 seven-point rule on a triangle in barycentric coordinates (Radon's formula, as
/// tabulated e.g. by Strang & Fix, An Analysis of the Finite Element Method, 1973).
fn seven_point_rule() -> Vec<([f64; 3], f64)> {
    let s = 15f64.sqrt();
    let (a1, b1) = ((9.0 - 2.0 * s) / 21.0, (6.0 + s) / 21.0);
    let (a2, b2) = ((9.0 + 2.0 * s) / 21.0, (6.0 - s) / 21.0);
    let (w1, w2) = ((155.0 + s) / 1200.0, (155.0 - s) / 1200.0);
    vec![
        ([1.0 / 3.0; 3], 9.0 / 40.0),
        ([a1, b1, b1], w1),
        ([b1, a1, b1], w1),
        ([b1, b1, a1], w1),
        ([a2, b2, b2], w2),
        ([b2, a2, b2], w2),
        ([b2, b2, a2], w2),
    ]
}

struct Level {
    h: f64,
    triangles: usize,
    l2: f64,
    energy: f64,
    estimate: f64,
}

fn level(max_area: f64) -> Level {
    let text = format!(
        r#"
[mesh]
max_area = {max_area}
[materials.m]
conductivity = {K}
heat_source = {q}
[outline]
material = "m"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
boundary = "edge"
[boundaries.edge]
kind = "fixed"
temperature = 0.0
"#,
        q = 4.0 * K
    );
    let p = run::prepare_model(model::parse(&text).unwrap()).unwrap();
    let mesh = run::mesh(&p, &MeshOptions::default()).unwrap();
    let mut system = fem::assemble(&p.section, &mesh).unwrap();
    for (i, f) in system.fixed.iter_mut().enumerate() {
        if f.is_some() {
            *f = Some(exact(mesh.nodes[i]));
        }
    }
    let sol = solve::solve_system(&system).unwrap();
    let results = post::postprocess(&p.section, &mesh, &system, &sol).unwrap();
    let est = post::estimate::zz_estimate(&p.section, &mesh, &system, &results).unwrap();

    let rule = seven_point_rule();
    let (mut l2, mut en) = (0.0, 0.0);
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let pts = ids.map(|v| mesh.nodes[v]);
        let vals = ids.map(|v| sol.temperature[v]);
        let area = mesh.triangle_area(t).abs();
        let gh = results.cell_gradient[t];
        for (b, w) in &rule {
            let x = [
                b[0] * pts[0][0] + b[1] * pts[1][0] + b[2] * pts[2][0],
                b[0] * pts[0][1] + b[1] * pts[1][1] + b[2] * pts[2][1],
            ];
            let uh = b[0] * vals[0] + b[1] * vals[1] + b[2] * vals[2];
            let g = exact_gradient(x);
            let e = exact(x) - uh;
            l2 += w * area * e * e;
            en += w * area * K * ((g[0] - gh[0]).powi(2) + (g[1] - gh[1]).powi(2));
        }
    }
    Level {
        h: (mesh.stats.area / mesh.triangles.len() as f64).sqrt(),
        triangles: mesh.triangles.len(),
        l2: l2.sqrt(),
        energy: en.sqrt(),
        estimate: est.energy_norm,
    }
}

/// Least-squares slope of ln(error) against ln(h).
fn slope(h: &[f64], e: &[f64]) -> f64 {
    let n = h.len() as f64;
    let x: Vec<f64> = h.iter().map(|v| v.ln()).collect();
    let y: Vec<f64> = e.iter().map(|v| v.ln()).collect();
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx).powi(2)).sum();
    sxy / sxx
}

#[test]
fn seven_point_rule_is_exact_for_degree_five() {
    // ∫ over the unit triangle of x^a y^b = a! b! / (a + b + 2)! (standard).
    let fact = |n: u32| (1..=n).map(f64::from).product::<f64>();
    for (a, b) in [(0, 0), (2, 1), (4, 1), (3, 2), (0, 5)] {
        let exact = fact(a) * fact(b) / fact(a + b + 2);
        let got: f64 = seven_point_rule()
            .iter()
            .map(|(l, w)| 0.5 * w * l[1].powi(a as i32) * l[2].powi(b as i32))
            .sum();
        assert!((got - exact).abs() < 1e-15, "x^{a} y^{b}: {got} vs {exact}");
    }
}

#[test]
fn p1_orders_and_zz_effectivity_on_a_manufactured_solution() {
    // Five meshes, max_area divided by 4 each time (four uniform refinements).
    let levels: Vec<Level> = (0..5).map(|k| level(0.01 / 4f64.powi(k))).collect();
    for l in &levels {
        println!(
            "N = {:>6}  h = {:.5}  L2 = {:.4e}  E = {:.4e}  ZZ = {:.4e}  effectivity = {:.4}",
            l.triangles,
            l.h,
            l.l2,
            l.energy,
            l.estimate,
            l.estimate / l.energy
        );
    }
    let h: Vec<f64> = levels.iter().map(|l| l.h).collect();
    let l2: Vec<f64> = levels.iter().map(|l| l.l2).collect();
    let en: Vec<f64> = levels.iter().map(|l| l.energy).collect();
    let p_l2 = slope(&h, &l2);
    let p_en = slope(&h, &en);
    println!("observed orders: L2 {p_l2:.4}, energy {p_en:.4}");
    // A priori P1 orders (Brenner & Scott, see the file header): 2 in L2, 1 in energy.
    assert!((p_l2 - 2.0).abs() <= 0.15, "L2 order {p_l2}");
    assert!((p_en - 1.0).abs() <= 0.15, "energy order {p_en}");
    // ZZ effectivity index, estimated / true energy-norm error. Zienkiewicz & Zhu (1987) report
    // effectivities close to 1 for smooth problems; the band 0.8–1.25 is our acceptance limit.
    for l in &levels {
        let theta = l.estimate / l.energy;
        assert!(
            (0.8..=1.25).contains(&theta),
            "effectivity {theta} at N = {}",
            l.triangles
        );
    }
}
