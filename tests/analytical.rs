//! Whole-pipeline checks against analytical solutions. Each check names its source.

use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
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

fn probe(s: &run::Solved, name: &str) -> f64 {
    s.results
        .probes
        .iter()
        .find(|p| p.name == name)
        .unwrap()
        .temperature
}

#[test]
fn composite_wall_with_convection_on_both_faces() {
    // Two layers in series between two films. Source: 1D series thermal resistances,
    // q'' = ΔT / (1/h1 + L1/k1 + L2/k2 + 1/h2) (Incropera, Fundamentals of Heat and Mass
    // Transfer, ch. 3). The exact solution is piecewise linear, which P1 elements reproduce, so
    // the heat flow must agree to round-off.
    let text = r#"
[mesh]
max_area = 0.004
[materials.masonry]
conductivity = 1.2
[materials.insulation]
conductivity = 0.04
[outline]
material = "masonry"
points = [[0.0, 0.0], [0.5, 0.0], [0.5, 1.0], [0.0, 1.0]]
edges = ["cut", "outside", "cut", "inside"]
[[regions]]
material = "insulation"
points = [[0.2, 0.0], [0.5, 0.0], [0.5, 1.0], [0.2, 1.0]]
[boundaries.inside]
kind = "convection"
h = 25.0
ambient = 20.0
[boundaries.outside]
kind = "convection"
h = 8.0
ambient = -5.0
[boundaries.cut]
kind = "insulated"
"#;
    let s = solve(text);
    let r_total = 1.0 / 25.0 + 0.2 / 1.2 + 0.3 / 0.04 + 1.0 / 8.0;
    let q = 25.0 / r_total; // W/m² = W/m per metre of wall height 1 m
    let qin = flow(&s, "inside");
    let qout = flow(&s, "outside");
    assert!((qin - q).abs() <= 1e-9 * q, "inside {qin} vs {q}");
    assert!((qout + q).abs() <= 1e-9 * q, "outside {qout} vs {}", -q);
}

#[test]
fn hollow_cylinder_between_two_fixed_temperatures() {
    // Source: conduction through a cylindrical wall, q' = 2πk(T1 − T2)/ln(r2/r1)
    // (Incropera, ch. 3, radial systems). Tolerance 0.5 % (polygonal rings of 128 segments and a
    // P1 mesh).
    let text = r#"
[mesh]
max_area = 0.0008
[materials.lining]
conductivity = 2.3
[outline]
material = "lining"
circle = { center = [0.0, 0.0], radius = 1.0, segments = 128 }
boundary = "outer"
[[holes]]
circle = { center = [0.0, 0.0], radius = 0.4, segments = 128 }
boundary = "inner"
[boundaries.outer]
kind = "fixed"
temperature = 15.0
[boundaries.inner]
kind = "fixed"
temperature = 80.0
[[probes]]
name = "mid"
at = [0.0, 0.7]
"#;
    let s = solve(text);
    let exact = 2.0 * std::f64::consts::PI * 2.3 * (80.0 - 15.0) / (1.0f64 / 0.4).ln();
    let q = flow(&s, "inner");
    assert!((q - exact).abs() <= 5e-3 * exact, "inner {q} vs {exact}");
    assert!((flow(&s, "outer") + q).abs() <= 1e-9 * q);
    // T(r) = T1 + (T2 − T1)·ln(r/r1)/ln(r2/r1), same source.
    let t = 80.0 + (15.0 - 80.0) * (0.7f64 / 0.4).ln() / (1.0f64 / 0.4).ln();
    assert!(
        (probe(&s, "mid") - t).abs() < 0.05,
        "{} vs {t}",
        probe(&s, "mid")
    );
}

#[test]
fn rectangle_with_one_hot_side_matches_the_fourier_series() {
    // Source: separation of variables for a rectangle with T = T1 on three sides and T2 on the
    // fourth (Incropera, §4.2): θ(x, y) = (2/π) Σ_{n≥1} ((−1)^{n+1} + 1)/n · sin(nπx/L) ·
    // sinh(nπy/L)/sinh(nπW/L), θ = (T − T1)/(T2 − T1). Check points away from the singular
    // corners; tolerance 0.1 K for a 100 K difference.
    let text = r#"
[mesh]
max_area = 0.0004
min_angle = 30
[materials.plate]
conductivity = 45.0
[outline]
material = "plate"
points = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]]
edges = ["cold", "cold", "hot", "cold"]
[boundaries.cold]
kind = "fixed"
temperature = 5.0
[boundaries.hot]
kind = "fixed"
temperature = 105.0
[[probes]]
name = "a"
at = [1.0, 0.5]
[[probes]]
name = "b"
at = [0.5, 0.5]
[[probes]]
name = "c"
at = [1.5, 0.25]
[[probes]]
name = "d"
at = [1.0, 0.8]
[[probes]]
name = "e"
at = [0.3, 0.9]
"#;
    let s = solve(text);
    let (l, w) = (2.0f64, 1.0f64);
    let theta = |x: f64, y: f64| -> f64 {
        let mut sum = 0.0;
        for n in 1..400 {
            let nf = n as f64;
            let c = ((-1.0f64).powi(n + 1) + 1.0) / nf;
            if c == 0.0 {
                continue;
            }
            let k = nf * std::f64::consts::PI / l;
            // sinh(k y)/sinh(k W) written with exponentials to avoid overflow
            let ratio =
                (k * (y - w)).exp() * (1.0 - (-2.0 * k * y).exp()) / (1.0 - (-2.0 * k * w).exp());
            sum += c * (k * x).sin() * ratio;
        }
        2.0 / std::f64::consts::PI * sum
    };
    for p in &s.results.probes {
        let exact = 5.0 + 100.0 * theta(p.x, p.y);
        assert!(
            (p.temperature - exact).abs() < 0.1,
            "probe {} at ({}, {}): {} vs {exact}",
            p.name,
            p.x,
            p.y,
            p.temperature
        );
    }
}

#[test]
fn disk_with_uniform_source_and_fixed_rim() {
    // Source: solid cylinder with uniform generation, T0 − Ts = q̇R²/(4k) (Incropera, ch. 3,
    // radial systems with generation). Tolerance 0.5 %.
    let text = r#"
[mesh]
max_area = 0.0005
[materials.core]
conductivity = 1.5
heat_source = 2000.0
[outline]
material = "core"
circle = { center = [0.0, 0.0], radius = 0.5, segments = 96 }
boundary = "rim"
[boundaries.rim]
kind = "fixed"
temperature = 12.0
[[probes]]
name = "centre"
at = [0.0, 0.0]
"#;
    let s = solve(text);
    let rise = 2000.0 * 0.25 / (4.0 * 1.5);
    let got = probe(&s, "centre") - 12.0;
    assert!((got - rise).abs() <= 5e-3 * rise, "{got} vs {rise}");
    // All generated heat leaves through the rim (energy balance, exact for the discrete model).
    assert!((flow(&s, "rim") + s.results.heat_source).abs() <= 1e-9 * s.results.heat_source);
}
