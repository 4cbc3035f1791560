//! Mesh-stage tests: material tagging of layered and nested regions, conformity, boundary-name
//! mapping, and the quality bounds on every demo section.

use xsheat::mesh::MeshOptions;
use xsheat::model;
use xsheat::run;

fn prepare(text: &str) -> run::Prepared {
    let file = model::parse(text).expect("parse");
    run::prepare_model(file).expect("valid model")
}

fn centroid(m: &xsheat::mesh::Mesh, t: usize) -> [f64; 2] {
    let [a, b, c] = m.triangles[t];
    let (pa, pb, pc) = (m.nodes[a], m.nodes[b], m.nodes[c]);
    [(pa[0] + pb[0] + pc[0]) / 3.0, (pa[1] + pb[1] + pc[1]) / 3.0]
}

const LAYERED: &str = r#"
[mesh]
max_area = 0.02
[materials.a-soil]
conductivity = 1.0
[materials.b-rock]
conductivity = 2.0
[materials.c-inclusion]
conductivity = 3.0
[outline]
material = "a-soil"
points = [[0.0, 0.0], [4.0, 0.0], [4.0, 3.0], [0.0, 3.0]]
edges = ["bottom", "side", "top", "side"]
# shares the outline's base and both sides
[[regions]]
material = "b-rock"
points = [[0.0, 0.0], [4.0, 0.0], [4.0, 1.0], [0.0, 1.0]]
# nested inside the soil, away from every edge
[[regions]]
material = "c-inclusion"
points = [[1.5, 1.8], [2.5, 1.8], [2.5, 2.4], [1.5, 2.4]]
# nested inside the rock layer, a later region of the same material as the outline
[[regions]]
material = "a-soil"
circle = { center = [3.0, 0.5], radius = 0.3, segments = 32 }
[boundaries.bottom]
kind = "fixed"
temperature = 10.0
[boundaries.top]
kind = "convection"
h = 10.0
ambient = 20.0
[boundaries.side]
kind = "insulated"
"#;

fn expected_material(p: [f64; 2]) -> usize {
    // ids in alphabetical order: a-soil 0, b-rock 1, c-inclusion 2
    let in_circle = {
        // inscribed 32-gon of the circle; centroids near the rim are inside the polygon
        (p[0] - 3.0).powi(2) + (p[1] - 0.5).powi(2) < 0.3f64.powi(2)
    };
    if in_circle {
        0
    } else if p[1] < 1.0 {
        1
    } else if (1.5..=2.5).contains(&p[0]) && (1.8..=2.4).contains(&p[1]) {
        2
    } else {
        0
    }
}

#[test]
fn layered_and_nested_regions_carry_the_right_material() {
    let p = prepare(LAYERED);
    let m = run::mesh(&p, &MeshOptions::default()).unwrap();
    assert!(m.stats.triangles > 500);
    let mut area = [0.0; 3];
    for t in 0..m.triangles.len() {
        let c = centroid(&m, t);
        assert_eq!(m.material[t], expected_material(c), "triangle {t} at {c:?}");
        area[m.material[t]] += m.triangle_area(t);
    }
    // Exact areas of the layout (the circle as its inscribed 32-gon: ½·N·r²·sin(2π/N)).
    let circle = 0.5 * 32.0 * 0.09 * (2.0 * std::f64::consts::PI / 32.0).sin();
    assert!((area[2] - 0.6).abs() < 1e-12);
    assert!((area[1] - (4.0 - circle)).abs() < 1e-12);
    assert!((area[0] - (12.0 - 4.0 - 0.6 + circle)).abs() < 1e-12);
}

#[test]
fn boundary_edges_map_back_to_their_names() {
    let p = prepare(LAYERED);
    let m = run::mesh(&p, &MeshOptions::default()).unwrap();
    let s = &p.section;
    let id = |n: &str| s.boundaries.iter().position(|b| b.name == n);
    let mut len = std::collections::BTreeMap::new();
    for e in &m.boundary_edges {
        *len.entry(e.boundary).or_insert(0.0) += m.edge_length(e);
        // The section lies to the left of every boundary edge.
        let t = m.triangles[e.triangle];
        assert!(t.contains(&e.nodes[0]) && t.contains(&e.nodes[1]));
        let c = centroid(&m, e.triangle);
        let (a, b) = (m.nodes[e.nodes[0]], m.nodes[e.nodes[1]]);
        assert!(xsheat::geom::orient(a, b, c) > 0.0);
    }
    assert!((len[&id("bottom")] - 4.0).abs() < 1e-12);
    assert!((len[&id("top")] - 4.0).abs() < 1e-12);
    assert!((len[&id("side")] - 6.0).abs() < 1e-12);
    assert_eq!(len.len(), 3);
}

#[test]
fn sloped_edge_vertex_leaves_no_sliver() {
    // A region corner (1, 2) on the sloped outline edge x + y = 3: the split point must land on
    // the slope exactly as a shared vertex, or a sliver below the angle limit would appear.
    let text = r#"
[mesh]
max_area = 0.01
min_angle = 28
[materials.a]
conductivity = 1.0
[materials.b]
conductivity = 2.0
[outline]
material = "a"
points = [[0.0, 0.0], [3.0, 0.0], [0.0, 3.0]]
edges = ["base", "slope", "side"]
[[regions]]
material = "b"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 2.0], [0.0, 2.0]]
[boundaries.base]
kind = "fixed"
temperature = 0.0
[boundaries.slope]
kind = "convection"
h = 5.0
ambient = 30.0
[boundaries.side]
kind = "insulated"
"#;
    let p = prepare(text);
    let m = run::mesh(&p, &MeshOptions::default()).unwrap();
    // The only input angles below 28° are none here: (1, 2) lies on the slope.
    assert!(m.stats.min_angle_away_from_small_input_angles_deg >= 28.0 - 1e-9);
    let total: f64 = (0..m.triangles.len()).map(|t| m.triangle_area(t)).sum();
    assert!((total - 4.5).abs() < 1e-12, "area {total}");
}

#[test]
fn demo_sections_meet_the_quality_bounds() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/geometry");
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        // Sweep plans (`*-sweep.toml`) live beside the demos but are not models.
        if path.extension().and_then(|e| e.to_str()) != Some("toml")
            || path.to_string_lossy().ends_with("-sweep.toml")
        {
            continue;
        }
        n += 1;
        let p = run::prepare(&path).unwrap();
        let m = run::mesh(&p, &MeshOptions::default()).unwrap();
        let s = &p.section;
        assert!(
            m.stats.min_angle_away_from_small_input_angles_deg >= s.mesh.min_angle - 1e-9,
            "{}: min angle {}",
            path.display(),
            m.stats.min_angle_away_from_small_input_angles_deg
        );
        assert!(
            m.stats.max_area <= s.mesh.max_area * (1.0 + 1e-9),
            "{}",
            path.display()
        );
        let discretised = xsheat::mesh::section_area(s);
        assert!((m.stats.area - discretised).abs() <= 1e-9 * discretised);
    }
    assert!(n >= 2);
}

#[test]
fn local_size_control_by_material_and_boundary() {
    // Fine near a pipe (boundary size 0.01 m) and in a backfill layer (max_area 0.002 m²),
    // coarse elsewhere (0.05 m²).
    let text = r#"
[mesh]
max_area = 0.05
min_angle = 28
[materials.backfill]
conductivity = 0.9
max_area = 0.002
[materials.soil]
conductivity = 1.4
[outline]
material = "soil"
points = [[-3.0, -4.0], [3.0, -4.0], [3.0, 0.0], [-3.0, 0.0]]
edges = ["deep", "side", "surface", "side"]
[[regions]]
material = "backfill"
points = [[-0.8, -2.0], [0.8, -2.0], [0.8, -0.5], [-0.8, -0.5]]
[[holes]]
circle = { center = [1.8, -1.5], radius = 0.1 }
boundary = "pipe"
[boundaries.pipe]
kind = "fixed"
temperature = 60.0
size = 0.01
[boundaries.deep]
kind = "fixed"
temperature = 9.0
[boundaries.surface]
kind = "convection"
h = 20.0
ambient = 0.0
[boundaries.side]
kind = "insulated"
"#;
    let p = prepare(text);
    let s = &p.section;
    // The pipe's polygon follows the size: ⌈2π·0.1/0.01⌉ = 63 segments.
    assert_eq!(s.holes[0].len(), 63);
    let m = run::mesh(&p, &MeshOptions::default()).unwrap();
    let backfill = s
        .materials
        .iter()
        .position(|x| x.name == "backfill")
        .unwrap();
    let pipe = s.boundaries.iter().position(|b| b.name == "pipe").unwrap();
    let mut on_pipe = vec![false; m.nodes.len()];
    for e in &m.boundary_edges {
        if e.boundary == Some(pipe) {
            on_pipe[e.nodes[0]] = true;
            on_pipe[e.nodes[1]] = true;
            assert!(m.edge_length(e) <= 0.01 * (1.0 + 1e-9));
        }
    }
    let mut touching = 0;
    for (t, tri) in m.triangles.iter().enumerate() {
        let a = m.triangle_area(t);
        if m.material[t] == backfill {
            assert!(a <= 0.002 * (1.0 + 1e-9), "backfill triangle {t} area {a}");
        }
        assert!(a <= 0.05 * (1.0 + 1e-9));
        if tri.iter().any(|&n| on_pipe[n]) {
            touching += 1;
            let p: Vec<[f64; 2]> = tri.iter().map(|&n| m.nodes[n]).collect();
            let l = (0..3)
                .map(|k| {
                    let (a, b) = (p[k], p[(k + 1) % 3]);
                    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
                })
                .fold(0.0, f64::max);
            assert!(
                l <= xsheat::mesh::BOUNDARY_SIZE_FACTOR * 0.01 * (1.0 + 1e-9),
                "triangle {t} at the pipe has an edge of {l} m"
            );
        }
    }
    assert!(touching >= 63);
    assert!(m.stats.min_angle_away_from_small_input_angles_deg >= 28.0 - 1e-9);
    // Graded, not uniformly fine: far fewer triangles than 0.002 m² everywhere would need.
    let uniform = xsheat::mesh::estimate_triangles(24.0, 0.002);
    assert!(
        (m.stats.triangles as f64) < 0.3 * uniform,
        "{} vs {uniform}",
        m.stats.triangles
    );
}

#[test]
fn small_input_angles_are_reported_and_excluded() {
    // A wedge with a 10° tip: the angle bound cannot hold next to it.
    let tip = 10f64.to_radians();
    let text = format!(
        r#"
[mesh]
max_area = 0.002
min_angle = 28
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [{}, {}]]
edges = ["fixed", "air", "air"]
[boundaries.fixed]
kind = "fixed"
temperature = 0.0
[boundaries.air]
kind = "convection"
h = 5.0
ambient = 20.0
"#,
        tip.cos(),
        tip.sin()
    );
    let p = prepare(&text);
    let m = run::mesh(&p, &MeshOptions::default()).unwrap();
    let small = &m.stats.small_input_angles;
    // Only the 10° tip lies below 2 × 28°; the other two corners have 85°.
    assert_eq!(small.len(), 1, "{small:?}");
    assert!((small[0].angle_deg - 10.0).abs() < 1e-9);
    assert!(small[0].at == [0.0, 0.0]);
    assert!(m.stats.min_angle_deg < 28.0);
    assert!(m.stats.min_angle_away_from_small_input_angles_deg >= 28.0 - 1e-9);
}

#[test]
fn a_size_field_grades_the_mesh_where_it_asks() {
    struct LeftHalfFine;
    impl xsheat::mesh::SizeField for LeftHalfFine {
        fn max_area_at(&self, p: [f64; 2]) -> f64 {
            if p[0] < 1.0 { 0.001 } else { f64::INFINITY }
        }
    }
    let text = r#"
[mesh]
max_area = 0.02
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]]
boundary = "rim"
[boundaries.rim]
kind = "fixed"
temperature = 0.0
"#;
    let p = prepare(text);
    let m = xsheat::mesh::build_with(
        &p.section,
        &p.pslg,
        &MeshOptions::default(),
        Some(&LeftHalfFine),
    )
    .unwrap();
    let (mut left, mut right) = (0, 0);
    for t in 0..m.triangles.len() {
        let c = centroid(&m, t);
        let a = m.triangle_area(t);
        assert!(a <= 0.02 * (1.0 + 1e-9));
        if c[0] < 1.0 {
            assert!(
                a <= 0.001 * (1.0 + 1e-9),
                "triangle {t} at {c:?} has area {a}"
            );
            left += 1;
        } else {
            right += 1;
        }
    }
    // Same area on both sides, far more triangles where the field asks for them.
    assert!(left > 5 * right, "left {left}, right {right}");
    assert!(m.stats.min_angle_deg >= 28.0 - 1e-9);
}
