//! Unit tests of the parent module.

use super::*;
use crate::model::Section;

fn section(text: &str) -> Section {
    crate::model::validate(&crate::model::parse(text).unwrap()).unwrap()
}

const PLATE: &str = r#"
[materials.steel]
conductivity = 45.0
[outline]
material = "steel"
points = [[0.0, 0.0], [0.4, 0.0], [0.4, 0.3], [0.0, 0.3]]
edges = ["cold", "side", "warm", "side"]
[boundaries.cold]
kind = "fixed"
temperature = 5.0
[boundaries.warm]
kind = "fixed"
temperature = 25.0
[boundaries.side]
kind = "insulated"
"#;

#[test]
fn grid_layout_and_kinds() {
    let s = section(PLATE);
    let m = build(&s, 0.1).unwrap();
    assert_eq!((m.nx, m.ny), (5, 4));
    assert_eq!(m.nodes.len(), 20);
    assert_eq!(m.origin, [0.0, 0.0]);
    let fixed = m
        .nodes
        .iter()
        .filter(|n| matches!(n.kind, NodeKind::Fixed { .. }))
        .count();
    assert_eq!(fixed, 10);
    // Side nodes between the fixed rows are edge nodes.
    let side = m.node_index(0, 1).unwrap();
    assert_eq!(m.nodes[side].kind, NodeKind::Edge);
    // Half conductance along the insulated side, full across the interior.
    assert!((m.arm_conductance(side, N) - 22.5).abs() < 1e-12);
    assert!((m.arm_conductance(side, E) - 45.0).abs() < 1e-12);
    assert_eq!(m.arm_conductance(side, W), 0.0);
}

#[test]
fn linear_profile_is_exact() {
    // 1D conduction between two fixed faces, insulated sides: T linear in y (exact for FD).
    let s = section(PLATE);
    let m = build(&s, 0.05).unwrap();
    let sol = solve(&m).unwrap();
    for (n, node) in m.nodes.iter().enumerate() {
        let exact = 5.0 + 20.0 * node.y / 0.3;
        assert!((sol.temperature[n] - exact).abs() < 1e-10);
    }
    // q = k ΔT / L · width = 45 · 20 / 0.3 · 0.4 = 1200 W/m.
    let get = |name: &str| sol.heat_flow.iter().find(|(b, _)| b == name).unwrap().1;
    assert!((get("warm") - 1200.0).abs() < 1e-8);
    assert!((get("cold") + 1200.0).abs() < 1e-8);
    assert!(sol.imbalance.abs() < 1e-9);
}
