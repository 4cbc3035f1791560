//! Nonlinear models against closed forms: a slab with k = k0(1 + βT) between two fixed
//! temperatures (Kirchhoff transform), Picard against Newton, and a slab face that convects
//! and radiates (the scalar energy balance of the face solved here by bisection). Each
//! assertion names its source.

mod common;

use xsheat::mesh::MeshOptions;
use xsheat::model;
use xsheat::run::{self, CheckStatus};
use xsheat::solve::nonlinear::Method;

/// k0 = 0.5 W/(m·K), β = 0.01 1/K; slab 0.1 m thick (x), 0.05 m high, T1 = 100 °C at x = L,
/// T2 = 0 °C at x = 0, top and bottom insulated.
const K0: f64 = 0.5;
const BETA: f64 = 0.01;
const L: f64 = 0.1;
const HEIGHT: f64 = 0.05;
const T1: f64 = 100.0;
const T2: f64 = 0.0;

fn slab(max_area: f64) -> String {
    // The table is k0(1 + βT) at 0 and 100 °C: piecewise linear with one segment is exactly
    // the linear law over the whole field (which stays in [T2, T1] by the maximum principle).
    format!(
        r#"
[mesh]
max_area = {max_area}
[materials.ins]
conductivity = {{ table = [[{T2}, {k2}], [{T1}, {k1}]] }}
[outline]
material = "ins"
points = [[0, 0], [{L}, 0], [{L}, {HEIGHT}], [0, {HEIGHT}]]
edges = ["", "hot", "", "cold"]
[boundaries.hot]
kind = "fixed"
temperature = {T1}
[boundaries.cold]
kind = "fixed"
temperature = {T2}
[[probes]]
name = "mid"
at = [0.05, 0.025]
"#,
        k1 = K0 * (1.0 + BETA * T1),
        k2 = K0 * (1.0 + BETA * T2),
    )
}

fn solve(text: &str, method: Method) -> run::Solved {
    let file = model::parse(text).expect("parse");
    let mut p = run::prepare_model(file).expect("prepare");
    p.nonlinear = method;
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    for c in &s.checks {
        assert_eq!(c.status(), CheckStatus::Passed, "{}: {}", c.name, c.detail);
    }
    s
}

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .unwrap_or_else(|| panic!("no boundary {name}"))
        .heat_flow
}

/// Kirchhoff transform of k0(1 + βT): U(T) = k0(T + βT²/2); U is linear in x in the slab.
fn kirchhoff(t: f64) -> f64 {
    K0 * (t + BETA * t * t / 2.0)
}

#[test]
fn kirchhoff_slab_heat_flow_and_midplane_temperature() {
    // Closed form (Carslaw & Jaeger, Conduction of Heat in Solids, §1.5 on variable
    // conductivity by the Kirchhoff transform; from memory):
    // q = (k0/L)·[(T1 − T2) + β/2·(T1² − T2²)] = 750 W/m², times the height 0.05 m.
    let q = K0 / L * ((T1 - T2) + BETA / 2.0 * (T1 * T1 - T2 * T2)) * HEIGHT;
    // Midplane temperature: U(T_mid) = (U(T1) + U(T2))/2, solved for T_mid (same source).
    let u_mid = 0.5 * (kirchhoff(T1) + kirchhoff(T2));
    let t_mid = (-1.0 + (1.0 + 2.0 * BETA * u_mid / K0).sqrt()) / BETA;
    let mut errors = Vec::new();
    for max_area in [2e-4, 5e-5] {
        let s = solve(&slab(max_area), Method::Newton);
        let q_hot = flow(&s, "hot");
        let q_cold = flow(&s, "cold");
        // The element conductivity k(T̄_e) is the exact element mean of a linear k over a
        // linear field, and P1 reproduces the 1D Kirchhoff solution's flow up to the
        // discretisation error of the nonlinear field, O(h²) (common practice): on these
        // meshes (h ≈ 0.02 and 0.01 m over L = 0.1 m) 1e-4 relative bounds it with a margin.
        assert!((q_hot - q).abs() <= 1e-4 * q, "hot {q_hot} vs {q}");
        assert!((q_cold + q).abs() <= 1e-4 * q, "cold {q_cold} vs {q}");
        let t = s.results.probes[0].temperature;
        errors.push((t - t_mid).abs());
        // The same O(h²) bound for the midplane temperature: 1e-3 of the range (common
        // practice for P1 at these mesh sizes).
        assert!((t - t_mid).abs() <= 1e-3 * (T1 - T2), "mid {t} vs {t_mid}");
    }
    // Refinement does not increase the probe error (O(h²) convergence, common practice); a
    // floor of 1e-9 K allows for a probe that is exact to round-off on both meshes.
    assert!(errors[1] <= errors[0].max(1e-9), "{errors:?}");
}

#[test]
fn picard_and_newton_agree() {
    // Both iterate the same discrete equations to ‖ΔT‖∞ ≤ 1e-8·100 K; their fixed points
    // agree to the iteration's remainder (consistency of the two methods, common practice).
    let text = slab(2e-4);
    let p = solve(&text, Method::Picard);
    let n = solve(&text, Method::Newton);
    let (hp, hn) = (p.nonlinear.as_ref().unwrap(), n.nonlinear.as_ref().unwrap());
    assert_eq!(hp.factorisation, "cholesky");
    assert_eq!(hn.factorisation, "lu");
    assert!(
        hn.history.len() < hp.history.len(),
        "Newton converges in fewer updates: {} vs {}",
        hn.history.len(),
        hp.history.len()
    );
    let range = T1 - T2;
    for (a, b) in p.solution.temperature.iter().zip(&n.solution.temperature) {
        assert!((a - b).abs() <= 1e-9 * range, "{a} vs {b}");
    }
    // The flows follow the temperatures to the same remainder: 1e-8 of the flow, as ΔT ≤ 1e-8
    // of the range (1e-9 held on one mesh and missed by 1.4e-9 on another equally valid one).
    let (qp, qn) = (flow(&p, "hot"), flow(&n, "hot"));
    assert!((qp - qn).abs() <= 1e-8 * qn.abs(), "{qp} vs {qn}");
}

/// Slab 0.2 m thick, k = 1.4, fixed 80 °C at x = 0; the face at x = L convects (h = 8 to
/// 20 °C) and radiates (ε = 0.9 to surroundings 5 °C); or only radiates.
fn face_model(convection: bool) -> String {
    let face = if convection {
        "kind = \"convection\"\nh = 8.0\nambient = 20.0\nemissivity = 0.9\nsurroundings = 5.0"
    } else {
        "kind = \"radiation\"\nemissivity = 0.9\nsurroundings = 5.0"
    };
    format!(
        r#"
[mesh]
max_area = 0.002
[materials.wall]
conductivity = 1.4
[outline]
material = "wall"
points = [[0, 0], [0.2, 0], [0.2, 0.3], [0, 0.3]]
edges = ["", "face", "", "inside"]
[boundaries.inside]
kind = "fixed"
temperature = 80.0
[boundaries.face]
{face}
"#
    )
}

/// Face temperature from the scalar energy balance k(T_in − T_f)/L = h(T_f − T∞) +
/// εσ(T_f⁴ − T_s⁴) (kelvin), by bisection on [T_s, T_in] where the balance changes sign.
fn face_temperature(h: f64) -> f64 {
    let (k, l, t_in, t_inf, eps, ts) = (1.4, 0.2, 80.0, 20.0, 0.9, 5.0);
    let sigma = 5.670374419e-8; // CODATA 2018
    let kelvin = |t: f64| t + 273.15;
    let g = |tf: f64| {
        k * (t_in - tf) / l
            - h * (tf - t_inf)
            - eps * sigma * (kelvin(tf).powi(4) - kelvin(ts).powi(4))
    };
    let (mut lo, mut hi) = (ts, t_in);
    assert!(g(lo) > 0.0 && g(hi) < 0.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if g(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[test]
fn radiating_and_convecting_face_matches_the_scalar_balance() {
    for (convection, h) in [(true, 8.0), (false, 0.0)] {
        let tf = face_temperature(h);
        let q = 1.4 * (80.0 - tf) / 0.2 * 0.3;
        for method in [Method::Picard, Method::Newton] {
            let s = solve(&face_model(convection), method);
            let face = s
                .results
                .boundaries
                .iter()
                .find(|b| b.name == "face")
                .unwrap();
            // The 1D field is linear in x (constant k, no source), which P1 reproduces, and
            // the face is isothermal, where Gauss quadrature of ε·σ·T⁴ is exact: the only
            // error left is the iteration's, ≤ 1e-8·ΔT (energy balance of the face,
            // Incropera ch. 1 surface energy balance, from memory; root by bisection here).
            assert!(
                (face.mean_temperature - tf).abs() <= 1e-7,
                "{} vs {tf}",
                face.mean_temperature
            );
            assert!(
                (face.heat_flow + q).abs() <= 1e-7 * q,
                "{} vs {q}",
                face.heat_flow
            );
            let inside = s
                .results
                .boundaries
                .iter()
                .find(|b| b.name == "inside")
                .unwrap();
            assert!((inside.heat_flow - q).abs() <= 1e-7 * q);
            // h_r = εσ(T_f² + T_s²)(T_f + T_s) in kelvin (the linearised coefficient, from
            // the same law).
            let (a, b) = (tf + 273.15, 278.15);
            let hr = 0.9 * 5.670374419e-8 * (a * a + b * b) * (a + b);
            let got = face
                .radiation_coefficient
                .expect("radiating face reports h_r");
            assert!((got - hr).abs() <= 1e-7 * hr, "{got} vs {hr}");
        }
    }
}

#[test]
fn cli_prints_history_and_writes_it_with_the_radiation_column() {
    let (run, _dir, out) = common::solve_text(&face_model(true), &["--nonlinear", "newton"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stdout.contains("nonlinear iteration (newton"),
        "{}",
        run.stdout
    );
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    let nl = &summary["nonlinear"];
    assert_eq!(nl["method"], "newton");
    let history = nl["history"].as_array().unwrap();
    assert!(!history.is_empty());
    let last = history.last().unwrap();
    assert!(last["update_k"].as_f64().unwrap() <= nl["tolerance_k"].as_f64().unwrap());
    let checks = summary["checks"].as_array().unwrap();
    assert!(
        checks
            .iter()
            .any(|c| c["name"] == "nonlinear_residual" && c["passed"] == true)
    );
    let face = summary["boundaries"]
        .as_array()
        .unwrap()
        .iter()
        .find(|b| b["name"] == "face")
        .unwrap();
    assert!(face["radiation_coefficient_w_per_m2_k"].as_f64().unwrap() > 0.0);
    assert_eq!(face["condition"]["emissivity"], 0.9);
    let csv = std::fs::read_to_string(out.join("boundaries.csv")).unwrap();
    assert!(
        csv.lines()
            .next()
            .unwrap()
            .ends_with(",radiation_coefficient_w_per_m2_k"),
        "{csv}"
    );
    // The echoed model reads back with the radiation keys.
    assert_eq!(summary["model"]["boundaries"]["face"]["surroundings"], 5.0);
}

#[test]
fn field_leaving_the_table_warns_with_the_material_and_range() {
    let text = slab(5e-4).replace(
        &format!("[[{T2}, {}], [{T1}, {}]]", K0, K0 * (1.0 + BETA * T1)),
        "[[10.0, 0.5], [50.0, 0.7]]",
    );
    let s = solve(&text, Method::Picard);
    assert!(
        s.warnings.iter().any(|w| w.contains("materials.ins")
            && w.contains("beyond its conductivity table [10, 50]")
            && w.contains("0.000 … 100.000")),
        "{:?}",
        s.warnings
    );
}

#[test]
fn iteration_cap_fails_with_the_history() {
    let file = model::parse(&slab(5e-4)).unwrap();
    let p = run::prepare_model(file).unwrap();
    let mesh = run::mesh(&p, &MeshOptions::default()).unwrap();
    let sys = xsheat::fem::nonlinear::NonlinearSystem::new(&p.section, &mesh).unwrap();
    let start = xsheat::solve::solve_system(&sys.start_system(50.0)).unwrap();
    let e = xsheat::solve::nonlinear::iterate_capped(&sys, start.temperature, Method::Picard, 2)
        .unwrap_err();
    assert_eq!(e.exit_code(), 1);
    let text = e.to_string();
    assert!(text.contains("no convergence in 2 iterations"), "{text}");
    assert!(
        text.contains("History:") && text.contains("    2  |ΔT|max"),
        "{text}"
    );
}

/// field.vtu carries each triangle's conductivity at its mean temperature for a table
/// material, and summary.json the table beside k at the middle of its range.
#[test]
fn table_material_outputs_its_cell_conductivity_and_table() {
    use vtkio::Vtk;
    use vtkio::model::{Attribute, DataSet, IOBuffer, Piece};
    let (run, _dir, out) = common::solve_text(&slab(2e-4), &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    let m = &summary["materials"][0];
    let (k_cold, k_hot) = (K0 * (1.0 + BETA * T2), K0 * (1.0 + BETA * T1));
    // The middle of the table's range, 50 °C: k0(1 + 50β).
    assert!((m["conductivity_w_per_m_k"].as_f64().unwrap() - (k_cold + k_hot) / 2.0).abs() < 1e-12);
    assert_eq!(m["conductivity_table_c_w_per_m_k"][1][1], k_hot);
    let vtk = Vtk::import(out.join("field.vtu")).expect("field.vtu reads back");
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        panic!("not an unstructured grid")
    };
    let Piece::Inline(piece) = pieces.into_iter().next().unwrap() else {
        panic!("piece not inline")
    };
    let cell = |name: &str| -> Vec<f64> {
        piece
            .data
            .cell
            .iter()
            .find_map(|a| match a {
                Attribute::DataArray(d) if d.name == name => match &d.data {
                    IOBuffer::F64(v) => Some(v.clone()),
                    _ => None,
                },
                _ => None,
            })
            .unwrap_or_else(|| panic!("{name} missing"))
    };
    let (xx, yy, xy) = (
        cell("conductivity_xx_w_per_m_k"),
        cell("conductivity_yy_w_per_m_k"),
        cell("conductivity_xy_w_per_m_k"),
    );
    assert_eq!(xx.len(), piece.cells.types.len());
    // Isotropic in every cell, within the table's values, and spread over most of the range
    // (the field runs from 0 to 100 °C across the slab).
    assert!(xx.iter().zip(&yy).all(|(a, b)| a == b));
    assert!(xy.iter().all(|k| *k == 0.0));
    assert!(xx.iter().all(|k| (k_cold..=k_hot).contains(k)), "{xx:?}");
    let lo = xx.iter().cloned().fold(f64::INFINITY, f64::min);
    let hi = xx.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    assert!(hi - lo > 0.8 * (k_hot - k_cold), "{lo} .. {hi}");
}
