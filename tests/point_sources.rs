//! Point sources (`[[point_sources]]`): the line-source field in a disk, the energy balance, a
//! closed cut around the source, the node at the source's position and the echo. Each check
//! against the outside world names its source.

use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

const R: f64 = 1.0;
const K: f64 = 2.0;
const P: f64 = 100.0;
const T_RIM: f64 = 10.0;

fn disk(max_area: f64) -> String {
    format!(
        r#"
[mesh]
max_area = {max_area:?}
[materials.soil]
conductivity = {K:?}
[outline]
material = "soil"
circle = {{ center = [0.0, 0.0], radius = {R:?}, segments = 512 }}
boundary = "rim"
[boundaries.rim]
kind = "fixed"
temperature = {T_RIM:?}
[[point_sources]]
name = "cable"
at = [0.0, 0.0]
power = {P:?}
[[probes]]
name = "r1"
at = [0.25, 0.0]
[[probes]]
name = "r2"
at = [0.0, 0.5]
[[probes]]
name = "r3"
at = [-0.75, 0.0]
[[cuts]]
name = "around"
points = [[-0.3, -0.3], [0.3, -0.3], [0.3, 0.3], [-0.3, 0.3], [-0.3, -0.3]]
"#
    )
}

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

/// Largest error at the three probes against the line source in a disk.
fn probe_error(s: &run::Solved) -> f64 {
    s.results
        .probes
        .iter()
        .map(|p| {
            let r = p.x.hypot(p.y);
            // Source: line source at the centre of a disk with a fixed rim temperature,
            // T(r) = T_rim + q/(2πk)·ln(R/r) (Incropera et al., Fundamentals of Heat and Mass
            // Transfer, ch. 3; cited from memory).
            let exact = T_RIM + P / (2.0 * std::f64::consts::PI * K) * (R / r).ln();
            (p.temperature - exact).abs()
        })
        .fold(0.0, f64::max)
}

#[test]
fn line_source_in_a_disk_matches_the_logarithmic_field_and_converges() {
    let coarse = solve(&disk(4e-3));
    let fine = solve(&disk(5e-4));
    let (e_coarse, e_fine) = (probe_error(&coarse), probe_error(&fine));
    // Tolerance: 0.5 % of the rise at r = R/4 (q/(2πk)·ln 4 ≈ 11 K). The inscribed polygon of
    // 512 segments lies within R(1 − cos(π/512)) ≈ 1.9e-5 R of the circle (≈ 1.5e-4 K here);
    // P1 nodal values away from the source converge as h², so the fine mesh stays well inside.
    let rise = P / (2.0 * std::f64::consts::PI * K) * 4f64.ln();
    assert!(e_fine < 5e-3 * rise, "fine-mesh error {e_fine} K");
    assert!(
        e_fine < 0.5 * e_coarse,
        "no convergence: {e_coarse} K → {e_fine} K"
    );
}

#[test]
fn rim_flow_and_closed_cut_carry_the_source_power() {
    let s = solve(&disk(2e-3));
    // Source: energy conservation (steady state: the heat released leaves through the rim);
    // the balance closes to round-off.
    let rim = s
        .results
        .boundaries
        .iter()
        .find(|b| b.name == "rim")
        .unwrap();
    assert!(
        (rim.heat_flow + P).abs() < 1e-9 * P,
        "rim {}",
        rim.heat_flow
    );
    assert!((s.results.heat_source - P).abs() < 1e-12 * P);
    assert!(s.results.energy_imbalance.abs() < 1e-9 * P);
    // Source: energy conservation; a closed anticlockwise cut gives the heat flowing into the
    // area it encloses, minus the source's power (README, heat flow across cuts).
    let cut = s.results.cuts.iter().find(|c| c.name == "around").unwrap();
    assert!(
        (cut.heat_flow + P).abs() < 1e-9 * P,
        "cut {}",
        cut.heat_flow
    );
    let ps = &s.results.point_sources[0];
    assert_eq!(ps.name, "cable");
    assert_eq!(ps.power, P);
}

#[test]
fn a_node_lies_exactly_at_the_source_also_in_cm() {
    let text = disk(4e-3)
        .replace("at = [0.0, 0.0]", "at = [12.3456789, -9.87654321]")
        .replace("radius = 1.0", "radius = 100.0")
        .replace("max_area = 0.004", "max_area = 40.0")
        .replace("at = [0.25, 0.0]", "at = [25.0, 0.0]")
        .replace("at = [0.0, 0.5]", "at = [0.0, 50.0]")
        .replace("at = [-0.75, 0.0]", "at = [-75.0, 0.0]")
        .replace("[[cuts]]\nname = \"around\"\npoints = [[-0.3, -0.3], [0.3, -0.3], [0.3, 0.3], [-0.3, 0.3], [-0.3, -0.3]]\n", "");
    let text = format!("length_unit = \"cm\"\n{text}");
    let s = solve(&text);
    let at = s.section().point_sources[0].at;
    assert!((at[0] - 0.123456789).abs() < 1e-15 && (at[1] + 0.0987654321).abs() < 1e-15);
    let node = s.results.point_sources[0].node;
    assert_eq!(s.mesh.nodes[node], at);
    assert!(s.mesh.nodes.contains(&at));
}

#[test]
fn echo_reads_back_to_the_same_point_sources() {
    let p = run::prepare_model(model::parse(&disk(4e-3)).unwrap()).unwrap();
    let back = toml::to_string(&p.section.resolved_model()).expect("toml");
    let again = model::validate(&model::parse(&back).expect("parse echo")).expect("valid echo");
    assert_eq!(again.point_sources, p.section.point_sources);
}

#[test]
fn a_sink_is_allowed_and_balances() {
    let s = solve(&disk(4e-3).replace("power = 100.0", "power = -40.0"));
    // Source: energy conservation, as above.
    let rim = s
        .results
        .boundaries
        .iter()
        .find(|b| b.name == "rim")
        .unwrap();
    assert!((rim.heat_flow - 40.0).abs() < 1e-9 * 40.0);
    assert!(s.results.t_min.value < T_RIM);
}
