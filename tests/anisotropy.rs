//! Anisotropic conductivity `conductivity = [k_major, k_minor]` with `orientation`: 1D slabs
//! with the major axis along and across the flow, the P1 patch test with the axes at 30°, the
//! outputs (summary.json, field.vtu tensor arrays, the echo), load cases and bad input. Each
//! check against the outside world names its source.

mod common;

use common::solve_text;
use vtkio::Vtk;
use vtkio::model::{Attribute, DataSet, IOBuffer, Piece};
use xsheat::mesh::MeshOptions;
use xsheat::{fem, model, post, run, solve};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

/// A slab 0.5 m long in x, 1 m high, 30 °C at x = 0 and 10 °C at x = 0.5, top and bottom
/// insulated; the conductivity line is filled in per test. Invented numbers.
fn slab(conductivity: &str) -> String {
    format!(
        r#"
[mesh]
max_area = 0.01
[materials.laminate]
{conductivity}
[outline]
material = "laminate"
points = [[0.0, 0.0], [0.5, 0.0], [0.5, 1.0], [0.0, 1.0]]
edges = ["side", "cold", "side", "warm"]
[boundaries.warm]
kind = "fixed"
temperature = 30.0
[boundaries.cold]
kind = "fixed"
temperature = 10.0
[boundaries.side]
kind = "insulated"
[[probes]]
name = "q1"
at = [0.125, 0.4]
"#
    )
}

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .expect("boundary")
        .heat_flow
}

#[test]
fn slab_with_the_major_axis_along_or_across_the_flow_is_one_dimensional() {
    // Source: Fourier's law for a plane slab, q = k·ΔT/L, with k the conductivity in the
    // direction of the flow (Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3);
    // with a principal axis along the flow the field stays 1D. P1 is exact for the linear
    // field: agreement to round-off.
    for (law, k_flow) in [
        ("conductivity = [4.0, 1.0]\norientation = 0.0", 4.0),
        ("conductivity = [4.0, 1.0]\norientation = 90.0", 1.0),
        ("conductivity = [4.0, 1.0]\norientation = 180.0", 4.0),
        ("conductivity = [4.0, 1.0]\norientation = -90.0", 1.0),
    ] {
        let s = solve(&slab(law));
        let q = k_flow * 20.0 / 0.5; // W/m² over a 1 m high face = W/m
        let warm = flow(&s, "warm");
        assert!((warm - q).abs() <= 1e-10 * q, "{law}: {warm} vs {q}");
        assert!((flow(&s, "cold") + q).abs() <= 1e-10 * q, "{law}");
        let t = s.results.probes[0].temperature;
        assert!((t - 25.0).abs() <= 1e-10, "{law}: probe {t}");
        for f in &s.results.cell_flux {
            assert!(
                (f[0] - q).abs() <= 1e-9 * q && f[1].abs() <= 1e-9 * q,
                "{law}: {f:?}"
            );
        }
    }
}

/// A 1 m square, every side on one fixed boundary, of a material with principal values 5 and
/// 0.5 W/(m·K) at 30°. Invented numbers.
const SQUARE: &str = r#"
[mesh]
max_area = 0.01
[materials.rock]
conductivity = [5.0, 0.5]
orientation = 30.0
[outline]
material = "rock"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
boundary = "rim"
[boundaries.rim]
kind = "fixed"
temperature = 0.0
"#;

#[test]
fn linear_field_with_rotated_axes_passes_the_patch_test() {
    // Source: the P1 patch test (common practice): the exact solution T = a + g·x of
    // div(K∇T) = 0 is linear, so the linear triangles reproduce it at every node and give
    // every element the flux q = −K·g, to round-off, whatever K. Here the rim's Dirichlet
    // values are set to the linear field through the library.
    let p = run::prepare_model(model::parse(SQUARE).expect("parse")).expect("valid");
    let mesh = run::mesh(&p, &MeshOptions::default()).expect("mesh");
    let mut system = fem::assemble(&p.section, &mesh).expect("assemble");
    let field = |x: [f64; 2]| 12.0 + 3.0 * x[0] - 7.0 * x[1];
    for (v, f) in system.fixed.iter_mut().enumerate() {
        if f.is_some() {
            *f = Some(field(mesh.nodes[v]));
        }
    }
    let solution = solve::solve_system(&system).expect("solve");
    let r = post::postprocess(&p.section, &mesh, &system, &solution).expect("post");
    for (v, t) in r.temperature.iter().enumerate() {
        assert!((t - field(mesh.nodes[v])).abs() <= 1e-11, "node {v}: {t}");
    }
    // K = R·diag(5, 0.5)·Rᵀ at 30°: cos² = 3/4, sin² = 1/4, sin·cos = √3/4 (worked by hand).
    let (kxx, kyy, kxy) = (
        5.0 * 0.75 + 0.5 * 0.25,
        5.0 * 0.25 + 0.5 * 0.75,
        4.5 * 3f64.sqrt() / 4.0,
    );
    let q = [-(kxx * 3.0 - kxy * 7.0), -(kxy * 3.0 - kyy * 7.0)];
    for (t, f) in r.cell_flux.iter().enumerate() {
        assert!(
            (f[0] - q[0]).abs() <= 1e-10 && (f[1] - q[1]).abs() <= 1e-10,
            "triangle {t}: {f:?} vs {q:?}"
        );
    }
    // The heat entering through the rim sums to zero (no source).
    assert!(r.energy_imbalance.abs() <= 1e-10, "{}", r.energy_imbalance);
    // The error estimate of an exact field vanishes to round-off.
    let est = post::estimate::zz_estimate(&p.section, &mesh, &system, &r).expect("estimate");
    assert!(est.relative <= 1e-9, "relative estimate {}", est.relative);
}

#[test]
fn outputs_carry_the_tensor_and_the_echo_the_law() {
    let text = slab("conductivity = [4.0, 1.0]\norientation = 30.0");
    let (run, _d, out) = solve_text(&text, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).expect("summary"))
            .expect("json");
    let m = &v["materials"][0];
    assert_eq!(m["conductivity_major_w_per_m_k"], 4.0);
    assert_eq!(m["conductivity_minor_w_per_m_k"], 1.0);
    assert_eq!(m["orientation_deg"], 30.0);
    // Worked by hand as above: K_xx = 4·3/4 + 1/4 = 3.25, K_yy = 1 + 3/4 = 1.75.
    assert!((m["conductivity_xx_w_per_m_k"].as_f64().unwrap() - 3.25).abs() < 1e-12);
    assert!((m["conductivity_yy_w_per_m_k"].as_f64().unwrap() - 1.75).abs() < 1e-12);
    assert_eq!(v["model"]["materials"]["laminate"]["conductivity"][1], 1.0);
    assert_eq!(v["model"]["materials"]["laminate"]["orientation"], 30.0);

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
    let xy = cell("conductivity_xy_w_per_m_k");
    assert_eq!(xy.len(), piece.cells.types.len());
    assert!(
        xy.iter()
            .all(|k| (k - 3.0 * 3f64.sqrt() / 4.0).abs() < 1e-12)
    );
    assert!(
        cell("conductivity_xx_w_per_m_k")
            .iter()
            .all(|k| (k - 3.25).abs() < 1e-12)
    );
    assert!(
        cell("conductivity_yy_w_per_m_k")
            .iter()
            .all(|k| (k - 1.75).abs() < 1e-12)
    );

    // The echo reads back as the same materials.
    let p = run::prepare_model(model::parse(&text).expect("parse")).expect("valid");
    let back = toml::to_string(&p.section.resolved_model()).expect("toml");
    let again = model::validate(&model::parse(&back).expect("parse echo")).expect("valid");
    assert_eq!(again.materials, p.section.materials);
}

#[test]
fn load_cases_turn_and_change_the_principal_values() {
    let text = format!(
        "{}\n[[cases]]\nname = \"turned\"\n[cases.materials.laminate]\norientation = 90.0\n[[cases]]\nname = \"isotropic\"\n[cases.materials.laminate]\nconductivity = 2.0\n",
        slab("conductivity = [4.0, 1.0]")
    );
    let s = solve(&text);
    // Source: Fourier's law as above; the turned case conducts along x with k_minor = 1.
    let warm = |i: usize| {
        s.cases[i]
            .results
            .boundaries
            .iter()
            .find(|b| b.name == "warm")
            .expect("warm")
            .heat_flow
    };
    assert!((flow(&s, "warm") - 160.0).abs() < 1e-9);
    assert!((warm(0) - 40.0).abs() < 1e-9, "{}", warm(0));
    assert!((warm(1) - 80.0).abs() < 1e-9, "{}", warm(1));
    assert!(s.section().case_changes_matrix(0));
}

#[test]
fn bad_anisotropic_input_is_refused_naming_the_key() {
    for (law, words) in [
        (
            "conductivity = 2.0\norientation = 30.0",
            &["materials.laminate", "orientation", "pair"][..],
        ),
        (
            "conductivity = [2.0, 0.0]",
            &["materials.laminate", "conductivity[1]"][..],
        ),
        (
            "conductivity = [2.0, 1.0]\norientation = nan",
            &["materials.laminate", "orientation"][..],
        ),
        (
            "conductivity = [2.0, 1e9]",
            &["materials.laminate", "conductivity[1]"][..],
        ),
        (
            "conductivity = { table = [[0.0, 1.0], [50.0, 2.0]] }\norientation = 30.0",
            &["materials.laminate", "orientation", "table"][..],
        ),
    ] {
        let err = model::validate(&model::parse(&slab(law)).expect("parse"))
            .expect_err(law)
            .to_string();
        for w in words {
            assert!(err.contains(w), "{law}: {err}");
        }
    }
    for law in ["conductivity = [2.0, 1.0, 0.5]", "conductivity = [2.0]"] {
        let err = model::parse(&slab(law)).expect_err(law).to_string();
        assert!(err.contains("conductivity"), "{law}: {err}");
    }
    // A case turning an isotropic material.
    let text = format!(
        "{}\n[[cases]]\nname = \"turn\"\n[cases.materials.laminate]\norientation = 10.0\n",
        slab("conductivity = 2.0")
    );
    let err = model::validate(&model::parse(&text).expect("parse"))
        .expect_err("turn an isotropic material")
        .to_string();
    assert!(
        err.contains("cases[0]") && err.contains("orientation"),
        "{err}"
    );
}

#[test]
fn the_grid_model_refuses_anisotropic_materials() {
    let p = run::prepare_model(model::parse(&slab("conductivity = [4.0, 1.0]")).expect("parse"))
        .expect("valid");
    let err = xsheat::grid::build(&p.section, 0.1)
        .expect_err("anisotropic grid")
        .to_string();
    assert!(
        err.contains("materials.laminate") && err.contains("isotropic"),
        "{err}"
    );
}
