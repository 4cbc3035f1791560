//! `length_unit`: a model written in millimetres gives the same mesh and results as the same
//! model in metres; unknown units are refused; plausibility warnings (size, kelvin).

mod common;

use xsheat::mesh::MeshOptions;
use xsheat::model::{self, ModelFile};
use xsheat::run;

/// A small section in metres with every kind of length key: rectangle, arc, circle, region,
/// boundary size, material and mesh max_area, probe, line, cut.
const IN_M: &str = r#"
[mesh]
max_area = 0.004
[materials.a]
conductivity = 1.2
[materials.b]
conductivity = 0.3
max_area = 0.001
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.4], { arc = { center = [0.5, 0.4], to = [0.0, 0.4], direction = "ccw" } }]
edges = ["cold", "", "", ""]
[[regions]]
material = "b"
rectangle = { corner = [0.1, 0.05], width = 0.3, height = 0.1 }
[[holes]]
circle = { center = [0.5, 0.45], radius = 0.08 }
boundary = "pipe"
[boundaries.cold]
kind = "fixed"
temperature = 2.0
[boundaries.pipe]
kind = "convection"
h = 40.0
ambient = 60.0
size = 0.02
[[probes]]
name = "P"
at = [0.7, 0.2]
[[lines]]
name = "L"
from = [0.05, 0.3]
to = [0.95, 0.3]
samples = 11
[[cuts]]
name = "c"
points = [[0.02, 0.25], [0.98, 0.25]]
"#;

fn solve(file: ModelFile) -> run::Solved {
    let p = run::prepare_model(file).expect("valid");
    run::solve(p, &MeshOptions::default()).expect("solves")
}

/// The same model with every length written in millimetres (as TOML text, read back).
fn in_mm() -> String {
    let mut m = model::parse(IN_M).unwrap();
    model::scale_lengths(&mut m, 1000.0);
    m.length_unit = Some("mm".into());
    toml::to_string(&m).unwrap()
}

#[test]
fn millimetres_give_the_same_mesh_and_results_as_metres() {
    let text = in_mm();
    assert!(text.contains("length_unit = \"mm\""), "{text}");
    assert!(text.contains("1000.0"), "{text}");
    let a = solve(model::parse(IN_M).unwrap());
    let b = solve(model::parse(&text).unwrap());
    assert_eq!(a.mesh.triangles.len(), b.mesh.triangles.len());
    assert_eq!(a.mesh.nodes.len(), b.mesh.nodes.len());
    for (p, q) in a.mesh.nodes.iter().zip(&b.mesh.nodes) {
        assert!((p[0] - q[0]).abs() < 1e-12 && (p[1] - q[1]).abs() < 1e-12);
    }
    for (s, t) in a.results.temperature.iter().zip(&b.results.temperature) {
        assert!((s - t).abs() < 1e-9, "{s} vs {t}");
    }
    for (x, y) in a.results.boundaries.iter().zip(&b.results.boundaries) {
        assert!((x.heat_flow - y.heat_flow).abs() < 1e-9 * x.heat_flow.abs().max(1.0));
        assert!((x.length - y.length).abs() < 1e-12);
    }
    let (pa, pb) = (&a.results.probes[0], &b.results.probes[0]);
    assert!((pa.temperature - pb.temperature).abs() < 1e-9);
    // The echo is in metres.
    let echo = b.prepared.section.resolved_json();
    assert!(echo.get("length_unit").is_none());
    assert_eq!(echo["probes"][0]["at"][0].as_f64(), Some(0.7));
}

#[test]
fn check_prints_the_size_in_metres_and_refuses_unknown_units() {
    let d = common::tmp();
    let path = common::write(d.path(), "mm.toml", &in_mm());
    let o = common::xsheat([std::ffi::OsStr::new("check"), path.as_os_str()]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    assert!(
        o.stdout
            .contains("bounding-box diagonal 1.343936 m (model lengths in mm"),
        "{}",
        o.stdout
    );
    assert!(
        o.stdout.contains("model lengths in mm, converted to m"),
        "{}",
        o.stdout
    );
    let bad = common::write(
        d.path(),
        "in.toml",
        &format!("length_unit = \"inch\"\n{IN_M}"),
    );
    let out = d.path().join("out");
    let o = common::xsheat([
        std::ffi::OsStr::new("solve"),
        bad.as_os_str(),
        std::ffi::OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains("length_unit = \"inch\""), "{}", o.stderr);
    assert!(!out.exists());
}

#[test]
fn implausible_sizes_and_kelvin_temperatures_are_warned() {
    // A 1 m section typed in metres but declared as... kilometres of millimetres: 20 km.
    let mut m = model::parse(IN_M).unwrap();
    model::scale_lengths(&mut m, 20_000.0);
    let s = model::validate(&m).unwrap();
    assert!(
        s.warnings.iter().any(|w| w.contains("m across")),
        "{:?}",
        s.warnings
    );
    let mut m = model::parse(IN_M).unwrap();
    model::scale_lengths(&mut m, 1e-4);
    let s = model::validate(&m).unwrap();
    assert!(
        s.warnings.iter().any(|w| w.contains("below 1 mm")),
        "{:?}",
        s.warnings
    );
    let s = model::validate(
        &model::parse(&IN_M.replace("temperature = 2.0", "temperature = 293.15")).unwrap(),
    )
    .unwrap();
    assert!(
        s.warnings
            .iter()
            .any(|w| w.contains("boundaries.cold") && w.contains("did you type kelvin")),
        "{:?}",
        s.warnings
    );
    // 273.15 K = 0 °C (SI definition of the kelvin scale).
    assert!(model::looks_like_kelvin(273.4));
    assert!(!model::looks_like_kelvin(250.0));
    assert!(!model::looks_like_kelvin(20.0));
    let s = model::validate(&model::parse(IN_M).unwrap()).unwrap();
    assert!(
        !s.warnings
            .iter()
            .any(|w| w.contains("kelvin") || w.contains("across"))
    );
}
