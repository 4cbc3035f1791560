//! Unit tests of the geometry stage.

use super::*;
use crate::geom::{distance as dist, point_in_ring, project};
use crate::model;

fn section(text: &str) -> Section {
    model::validate(&model::parse(text).unwrap()).unwrap()
}

const BASE: &str = r#"
[materials.a]
conductivity = 1.0
[materials.b]
conductivity = 2.0
[outline]
material = "a"
points = [[0.0, 0.0], [4.0, 0.0], [4.0, 2.0], [0.0, 2.0]]
edges = ["bottom", "side", "top", "side"]
[boundaries.bottom]
kind = "fixed"
temperature = 0.0
[boundaries.top]
kind = "insulated"
[boundaries.side]
kind = "insulated"
"#;

#[test]
fn region_sharing_the_base_splits_the_outline_at_its_corners() {
    // The region's top corners lie on the outline's sides (T-junctions) and its base
    // overlaps the outline's base (collinear overlap).
    let s = section(&format!(
        "{BASE}[[regions]]\nmaterial = \"b\"\npoints = [[0.0, 0.0], [4.0, 0.0], [4.0, 1.0], [0.0, 1.0]]\n"
    ));
    let p = build(&s).unwrap();
    // Vertices: 4 outline corners + 2 region corners on the sides.
    assert_eq!(p.vertices.len(), 6);
    let boundary: Vec<&Piece> = p.pieces.iter().filter(|x| x.is_boundary()).collect();
    let interface: Vec<&Piece> = p.pieces.iter().filter(|x| !x.is_boundary()).collect();
    // Base, two split sides of two pieces each, top: 6 boundary pieces; 1 interface.
    assert_eq!(boundary.len(), 6);
    assert_eq!(interface.len(), 1);
    let len = |x: &Piece| dist(p.vertices[x.v[0]], p.vertices[x.v[1]]);
    assert!((len(interface[0]) - 4.0).abs() < 1e-12);
    // The base piece has the region (zone 1) inside and keeps the outline's name.
    let bottom = s.boundaries.iter().position(|b| b.name == "bottom");
    let base = boundary.iter().find(|x| x.boundary == bottom).unwrap();
    assert!(base.left == Some(1) || base.right == Some(1));
}

#[test]
fn crossing_region_is_clipped_with_a_warning() {
    let s = section(&format!(
        "{BASE}[[regions]]\nmaterial = \"b\"\npoints = [[3.0, -1.0], [5.0, -1.0], [5.0, 1.0], [3.0, 1.0]]\n"
    ));
    let p = build(&s).unwrap();
    assert!(
        p.warnings
            .iter()
            .any(|w| w.contains("regions[0]") && w.contains("outside the outline"))
    );
    // Crossing points (4, 1) and (3, 0) become vertices.
    for q in [[4.0, 1.0], [3.0, 0.0]] {
        assert!(p.vertices.iter().any(|v| dist(*v, q) < 1e-12), "{q:?}");
    }
    // No piece lies outside the outline.
    for x in &p.pieces {
        for &v in &x.v {
            let q = p.vertices[v];
            assert!(q[0] <= 4.0 + 1e-12 && q[1] >= -1e-12);
        }
    }
}

#[test]
fn slab_index_agrees_with_the_plain_crossing_test() {
    let s = section(&format!(
        "{BASE}[[holes]]\ncircle = {{ center = [2.0, 1.0], radius = 0.7, segments = 999 }}\nboundary = \"side\"\n[[regions]]\nmaterial = \"b\"\npoints = [[0.5, 0.2], [3.5, 0.3], [1.0, 1.9]]\n"
    ));
    let c = Classifier::new(&s);
    let mut k = 0u64;
    for i in 0..200 {
        for j in 0..100 {
            let p = [-0.1 + 4.2 * i as f64 / 199.0, -0.1 + 2.2 * j as f64 / 99.0];
            for v in c
                .holes
                .iter()
                .chain(c.regions.iter())
                .chain(std::iter::once(&c.outline))
            {
                assert_eq!(v.contains(p), point_in_ring(&v.ring.points, p), "{p:?}");
                k += 1;
            }
        }
    }
    assert_eq!(k, 60_000);
}

#[test]
fn point_in_ring_and_projection() {
    let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
    assert!(point_in_ring(&sq, [0.5, 0.5]));
    assert!(!point_in_ring(&sq, [1.5, 0.5]));
    let (t, d) = project([0.0, 0.0], [2.0, 0.0], [1.0, 1.0]);
    assert!((t - 0.5).abs() < 1e-15 && (d - 1.0).abs() < 1e-15);
}

#[test]
fn crossing_found_by_the_box_index_splits_both_segments() {
    // A region whose sides cross the outline's top and right side away from any vertex: the
    // candidate pairs come from the R-tree of segment boxes, the crossing from the exact
    // orientation signs; the crossing points must become shared vertices on both rings.
    let s = section(&format!(
        "{BASE}[[regions]]\nmaterial = \"b\"\npoints = [[1.0, 1.0], [5.0, 1.5], [1.5, 3.0]]\n"
    ));
    let p = build(&s).unwrap();
    // Crossings with x = 4 (at y = 1.375 and y = 1.5 + 1.5/3.5) and with y = 2 (at x = 5 − 3.5/3
    // and x = 1.25).
    let on_right = p
        .vertices
        .iter()
        .filter(|v| (v[0] - 4.0).abs() < 1e-12 && v[1] > 0.0 && v[1] < 2.0)
        .count();
    let on_top = p
        .vertices
        .iter()
        .filter(|v| (v[1] - 2.0).abs() < 1e-12 && v[0] > 0.0 && v[0] < 4.0)
        .count();
    assert_eq!((on_right, on_top), (2, 2));
    assert!(p.warnings.iter().any(|w| w.contains("regions[0]")));
}
