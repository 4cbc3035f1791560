//! Unit tests of the parent module.

use super::*;
use crate::fem::assemble;
use crate::fem::testutil::{rectangle_mesh, rectangle_section};
use crate::model::{Circle, Line, Probe};
use crate::solve::{Solution, solve_system};

fn run(section: &Section, mesh: &Mesh) -> (System, Solution, Results) {
    let system = assemble(section, mesh).unwrap();
    let solution = solve_system(&system).unwrap();
    let results = postprocess(section, mesh, &system, &solution).unwrap();
    (system, solution, results)
}

fn flow(results: &Results, name: &str) -> f64 {
    results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .unwrap_or_else(|| panic!("no boundary {name}"))
        .heat_flow
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Slab 0 ≤ x ≤ 2 m, 0 ≤ y ≤ 0.5 m, k = 1.7, 100 °C at x = 0 ("hot"), 20 °C at x = 2
/// ("cold"), top and bottom unnamed (insulated).
fn slab() -> (Section, Mesh) {
    let fixed = |t| BoundaryKind::Fixed { temperature: t };
    let section = rectangle_section(
        2.0,
        0.5,
        &[("steel", 1.7, 0.0)],
        &[("cold", fixed(20.0)), ("hot", fixed(100.0))],
        [None, Some(0), None, Some(1)],
    );
    let mesh = rectangle_mesh(2.0, 0.5, 8, 3, [None, Some(0), None, Some(1)], |_| 0);
    (section, mesh)
}

#[test]
fn slab_with_fixed_ends_is_linear_and_obeys_fourier() {
    let (section, mesh) = slab();
    let (_, solution, results) = run(&section, &mesh);
    // Fourier's law for a plane wall: T(x) = T0 + (T1 − T0)·x/L, Q = k·H·ΔT/L.
    // P1 reproduces a linear field exactly, so the match is to round-off.
    for (p, t) in mesh.nodes.iter().zip(&solution.temperature) {
        assert!((t - (100.0 - 40.0 * p[0])).abs() < 1e-11, "{t} at {p:?}");
    }
    let expected = 1.7 * 0.5 * 80.0 / 2.0;
    assert!(rel(flow(&results, "hot"), expected) < 1e-10);
    assert!(rel(flow(&results, "cold"), -expected) < 1e-10);
    for q in results.cell_flux.iter().chain(&results.nodal_flux) {
        assert!(rel(q[0], 1.7 * 40.0) < 1e-10 && q[1].abs() < 1e-9);
    }
    let unnamed = results.boundaries.last().unwrap();
    assert_eq!(
        (unnamed.name.as_str(), unnamed.kind.as_str()),
        ("(unnamed)", "insulated")
    );
    assert_eq!(unnamed.heat_flow, 0.0);
    assert!(rel(unnamed.length, 4.0) < 1e-14);
    // Mean of a linear trace along the insulated faces: (100 + 20)/2.
    assert!(rel(unnamed.mean_temperature, 60.0) < 1e-12);
    assert_eq!((results.t_max.value, results.t_max.node), (100.0, 0));
    assert_eq!((results.t_min.value, results.t_min.node), (20.0, 8));
    assert!(results.energy_imbalance_relative < 1e-12);
    assert!(solution.residual_relative < 1e-12);
}

#[test]
fn two_layer_wall_with_films_matches_series_resistances() {
    let (l1, l2, k1, k2, h1, h2, t1, t2, height) =
        (0.3, 0.2, 0.8, 45.0, 10.0, 25.0, 20.0, -5.0, 0.6);
    let section = rectangle_section(
        l1 + l2,
        height,
        &[("brick", k1, 0.0), ("steel", k2, 0.0)],
        &[
            ("inside", BoundaryKind::Convection { h: h1, ambient: t1 }),
            ("outside", BoundaryKind::Convection { h: h2, ambient: t2 }),
        ],
        [None, Some(1), None, Some(0)],
    );
    let mesh = rectangle_mesh(
        l1 + l2,
        height,
        10,
        4,
        [None, Some(1), None, Some(0)],
        |c| usize::from(c[0] > l1),
    );
    let (_, _, results) = run(&section, &mesh);
    // Incropera, Fundamentals of Heat and Mass Transfer, ch. 3: series thermal resistances,
    // q'' = ΔT / (1/h1 + L1/k1 + L2/k2 + 1/h2). Exact for P1: the field is piecewise linear
    // with kinks on a mesh line, and the film terms see a constant trace.
    let q = (t1 - t2) / (1.0 / h1 + l1 / k1 + l2 / k2 + 1.0 / h2);
    assert!(rel(flow(&results, "inside"), q * height) < 1e-9);
    assert!(rel(flow(&results, "outside"), -q * height) < 1e-9);
    let inside = results
        .boundaries
        .iter()
        .find(|b| b.name == "inside")
        .unwrap();
    // Surface temperature behind the inner film: T∞1 − q''/h1 (same source).
    assert!(rel(inside.mean_temperature, t1 - q / h1) < 1e-9);
    assert!(results.energy_imbalance_relative < 1e-12);
}

#[test]
fn wall_with_uniform_source_closes_the_energy_balance() {
    let (l, height, k, q) = (1.0, 0.1, 2.0, 1000.0);
    let fixed = BoundaryKind::Fixed { temperature: 0.0 };
    let tags = [None, Some(1), None, Some(0)];
    let section = rectangle_section(
        l,
        height,
        &[("core", k, q)],
        &[("left", fixed), ("right", fixed)],
        tags,
    );
    let mesh = rectangle_mesh(l, height, 20, 2, tags, |_| 0);
    let (_, solution, results) = run(&section, &mesh);
    assert!(rel(results.heat_source, q * l * height) < 1e-14);
    assert!(results.energy_imbalance_relative < 1e-12);
    // Each face carries half the generated heat out of the section.
    assert!(rel(flow(&results, "left"), -0.5 * q * l * height) < 1e-12);
    // Incropera, ch. 3, plane wall with uniform generation and equal face temperatures:
    // T(x) = Q·x·(L − x)/(2k), maximum Q·L²/(8k) at mid-plane.
    // Observed: on this structured mesh the P1 solution is nodally exact (the discrete
    // equations reduce to the 1D three-point scheme with exactly integrated uniform load,
    // which is exact at the nodes for a quadratic), so the tolerance is round-off.
    let t_max = q * l * l / (8.0 * k);
    assert!(rel(results.t_max.value, t_max) < 1e-12);
    assert!(rel(results.t_max.at[0], 0.5) < 1e-15);
    for (p, t) in mesh.nodes.iter().zip(&solution.temperature) {
        let exact = q * p[0] * (l - p[0]) / (2.0 * k);
        assert!((t - exact).abs() < 1e-12 * t_max, "{t} vs {exact} at {p:?}");
    }
}

#[test]
fn imposed_flux_flows_out_through_the_fixed_face() {
    let (l, height, k, q) = (0.4, 0.3, 3.0, 250.0);
    let tags = [None, Some(0), None, Some(1)];
    let section = rectangle_section(
        l,
        height,
        &[("m", k, 0.0)],
        &[
            ("cold", BoundaryKind::Fixed { temperature: 10.0 }),
            ("heater", BoundaryKind::Flux { flux: q }),
        ],
        tags,
    );
    let mesh = rectangle_mesh(l, height, 5, 3, tags, |_| 0);
    let (_, _, results) = run(&section, &mesh);
    // Energy conservation: what enters through the heater leaves through the fixed face.
    assert!(rel(flow(&results, "heater"), q * height) < 1e-14);
    assert!(rel(flow(&results, "cold"), -q * height) < 1e-10);
    // Fourier's law: the heated face sits q·L/k above the fixed one.
    assert!(rel(results.t_max.value, 10.0 + q * l / k) < 1e-12);
}

#[test]
fn corner_reaction_is_split_by_adjacent_fixed_lengths() {
    // Bottom fixed at 0 °C ("a"), left at 100 °C ("b"), top convective, right insulated;
    // cells 0.25 m × 0.1 m, so the corner node's two fixed edges differ in length.
    let tags = [Some(0), None, Some(2), Some(1)];
    let section = rectangle_section(
        1.0,
        0.4,
        &[("m", 1.3, 0.0)],
        &[
            ("a", BoundaryKind::Fixed { temperature: 0.0 }),
            ("b", BoundaryKind::Fixed { temperature: 100.0 }),
            (
                "c",
                BoundaryKind::Convection {
                    h: 5.0,
                    ambient: 20.0,
                },
            ),
        ],
        tags,
    );
    let mesh = rectangle_mesh(1.0, 0.4, 4, 4, tags, |_| 0);
    let (system, solution, results) = run(&section, &mesh);
    // The corner takes the mean of the two fixed temperatures (the documented rule).
    assert_eq!(solution.temperature[0], 50.0);
    let r = system.residual(&solution.temperature).unwrap();
    let (dx, dy) = (0.25, 0.1);
    let bottom: f64 = (1..=4).map(|i| r[i]).sum();
    let left: f64 = (1..=4).map(|j| r[j * 5]).sum();
    assert!(
        r[0].abs() > 1.0,
        "corner reaction should be significant: {}",
        r[0]
    );
    let a = bottom + r[0] * dx / (dx + dy);
    let b = left + r[0] * dy / (dx + dy);
    assert!(rel(flow(&results, "a"), a) < 1e-12);
    assert!(rel(flow(&results, "b"), b) < 1e-12);
    // Nothing is lost in the split: Σ fixed flows = Σ reactions at fixed nodes.
    let total: f64 = (0..r.len())
        .filter(|&i| system.fixed[i].is_some())
        .map(|i| r[i])
        .sum();
    assert!(rel(flow(&results, "a") + flow(&results, "b"), total) < 1e-12);
    assert!(results.energy_imbalance_relative < 1e-12);
}

fn probe(name: &str, x: f64, y: f64) -> Probe {
    Probe {
        name: name.into(),
        at: [x, y],
    }
}

#[test]
fn probes_inside_snapped_and_outside() {
    let (mut section, mesh) = slab();
    let diameter = (2.0f64 * 2.0 + 0.5 * 0.5).sqrt();
    section.probes = vec![
        probe("in", 0.77, 0.31),
        probe("edge", -1e-12 * diameter, 0.2),
    ];
    let (_, _, results) = run(&section, &mesh);
    // Linear exact field (Fourier's law, see the slab test) is reproduced by interpolation.
    let p = &results.probes[0];
    assert!(!p.snapped && rel(p.temperature, 100.0 - 40.0 * 0.77) < 1e-12);
    let p = &results.probes[1];
    assert!(p.snapped && rel(p.temperature, 100.0) < 1e-12);
    assert_eq!((p.x, p.y), (0.0, 0.2));
    assert_eq!(results.warnings.len(), 1);
    assert!(results.warnings[0].starts_with("probes[1] \"edge\""));

    section.probes.push(probe("far", -1.0, 0.2));
    let system = assemble(&section, &mesh).unwrap();
    let solution = solve_system(&system).unwrap();
    let err = postprocess(&section, &mesh, &system, &solution).unwrap_err();
    assert_eq!(
        err,
        Error::input(
            "probes[2] \"far\": point (-1, 0.2) lies outside the section (nearest boundary point 1 m away)"
        )
    );
}

#[test]
fn probe_within_the_sagitta_of_a_circular_ring_is_snapped() {
    let (mut section, mesh) = slab();
    section.probes = vec![probe("p", -0.05, 0.2)];
    let system = assemble(&section, &mesh).unwrap();
    let solution = solve_system(&system).unwrap();
    assert!(matches!(
        postprocess(&section, &mesh, &system, &solution),
        Err(Error::Input(_))
    ));
    // Pretend the outline was made from a circle: sagitta = 1 − cos(π/8) ≈ 0.076 m.
    section.outline.circle = Some(Circle {
        center: [1.0, 0.25],
        radius: 1.0,
        segments: 8,
    });
    let results = postprocess(&section, &mesh, &system, &solution).unwrap();
    assert!(results.probes[0].snapped);
    assert!(rel(results.probes[0].temperature, 100.0) < 1e-12);
}

#[test]
fn lines_skip_outside_samples_and_refuse_lines_entirely_outside() {
    let (mut section, mesh) = slab();
    section.lines = vec![Line {
        name: "mid".into(),
        from: [-0.5, 0.25],
        to: [2.0, 0.25],
        samples: 11,
    }];
    let (system, solution, results) = run(&section, &mesh);
    let line = &results.lines[0];
    assert_eq!(line.skipped, vec![(0, [-0.5, 0.25]), (1, [-0.25, 0.25])]);
    assert_eq!(line.samples.len(), 9);
    assert_eq!(results.warnings.len(), 1);
    assert!(results.warnings[0].starts_with("lines[0] \"mid\": 2 of 11 samples"));
    for s in &line.samples {
        // Fourier's law (slab test): T linear, q = k·ΔT/L = 68 W/m² along +x.
        assert!(rel(s.temperature, 100.0 - 40.0 * s.x) < 1e-12);
        assert!(rel(s.qx, 68.0) < 1e-10 && s.qy.abs() < 1e-9);
        assert!((s.s - (s.x + 0.5)).abs() < 1e-15);
    }
    section.lines.push(Line {
        name: "away".into(),
        from: [3.0, 0.0],
        to: [4.0, 1.0],
        samples: 5,
    });
    let err = postprocess(&section, &mesh, &system, &solution).unwrap_err();
    assert!(
        matches!(&err, Error::Input(m) if m.starts_with("lines[1] \"away\": none of its 5 samples"))
    );
}

/// Deterministic pseudo-random numbers in [0, 1) (64-bit linear congruential generator).
fn lcg(state: &mut u64) -> f64 {
    *state = state
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    (*state >> 11) as f64 / (1u64 << 53) as f64
}

#[test]
fn locator_agrees_with_brute_force() {
    let mesh = rectangle_mesh(2.0, 1.0, 13, 7, [Some(0); 4], |_| 0);
    let locator = Locator::new(&mesh);
    let mut s = 7u64;
    for _ in 0..2000 {
        let p = [-1.0 + 4.0 * lcg(&mut s), -1.0 + 3.0 * lcg(&mut s)];
        let brute = (0..mesh.triangles.len())
            .map(|t| {
                let l = locator.barycentric(t, p);
                l[0].min(l[1]).min(l[2])
            })
            .fold(f64::NEG_INFINITY, f64::max);
        match locator.locate(p) {
            Some((t, l)) => {
                assert_eq!(l, locator.barycentric(t, p));
                assert_eq!(l[0].min(l[1]).min(l[2]), brute);
            }
            None => assert!(brute < -INSIDE_TOLERANCE),
        }
        let q = locator.nearest_boundary_point(p).unwrap();
        let d = (0..mesh.boundary_edges.len())
            .map(|e| locator.edge_point(e, p).distance)
            .fold(f64::INFINITY, f64::min);
        assert_eq!(q.distance, d);
    }
}

#[test]
fn locator_queries_stay_small_on_a_large_mesh() {
    let mesh = rectangle_mesh(3.0, 1.0, 600, 300, [Some(0); 4], |_| 0);
    let locator = Locator::new(&mesh);
    // Every point query reads only the few triangles whose boxes hold the point.
    let index = locator.triangle_index();
    let max = (0..=60)
        .flat_map(|i| (0..=30).map(move |j| [i as f64 * 0.05, j as f64 / 30.0]))
        .map(|p| index.meeting_vec([p[0], p[1], p[0], p[1]]).len())
        .max()
        .unwrap();
    assert!(max <= 16, "a point query reads {max} triangles");
    let (t, _) = locator.locate([1.2345, 0.6789]).unwrap();
    assert!(
        locator
            .barycentric(t, [1.2345, 0.6789])
            .iter()
            .all(|&l| l >= 0.0)
    );
}

/// About 10⁶ triangles through assembly, solve and post-processing (run with `--ignored`).
#[test]
#[ignore = "large: a 10⁶-triangle correctness check; timings belong to examples/bench.rs"]
fn million_triangles_end_to_end() {
    let tags = [Some(0), Some(1), Some(0), Some(1)];
    let mut section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 10.0)],
        &[
            ("a", BoundaryKind::Fixed { temperature: 0.0 }),
            (
                "b",
                BoundaryKind::Convection {
                    h: 3.0,
                    ambient: 5.0,
                },
            ),
        ],
        tags,
    );
    section.probes = (0..1000)
        .map(|i| probe(&format!("p{i}"), (i as f64 + 0.5) / 1000.0, 0.37))
        .collect();
    let mesh = rectangle_mesh(1.0, 1.0, 708, 708, tags, |_| 0);
    let (_, solution, results) = run(&section, &mesh);
    assert_eq!(mesh.triangles.len(), 2 * 708 * 708);
    assert!(solution.residual_relative < 1e-10);
    assert!(results.energy_imbalance_relative < 1e-10);
}

#[test]
fn condition_kind_serialises_and_displays_as_the_model_file_name() {
    for (kind, name) in [
        (ConditionKind::Fixed, "fixed"),
        (ConditionKind::Insulated, "insulated"),
        (ConditionKind::Flux, "flux"),
        (ConditionKind::Convection, "convection"),
    ] {
        assert_eq!(serde_json::to_value(kind).unwrap(), name);
        assert_eq!(kind.to_string(), name);
    }
    assert_eq!(format!("[{:<6}]", ConditionKind::Flux), "[flux  ]");
    let (section, mesh) = slab();
    let (_, _, results) = run(&section, &mesh);
    let kinds: Vec<_> = results.boundaries.iter().map(|b| b.kind).collect();
    assert_eq!(
        kinds,
        [
            ConditionKind::Fixed,
            ConditionKind::Fixed,
            ConditionKind::Insulated
        ]
    );
}
