//! Hand-built meshes and sections for the tests of the fem, solve and post stages.

use crate::mesh::{BoundaryEdge, Mesh, MeshStats, RingRef};
use crate::model::{self, BoundaryKind, Section};

/// Structured triangulation of `[0, w] × [0, h]` with `nx × ny` cells, each split along
/// its rising diagonal. Boundary edges are tagged `tags = [bottom, right, top, left]`;
/// `material_of` gives the material id of a triangle from its centroid.
pub fn rectangle_mesh(
    w: f64,
    h: f64,
    nx: usize,
    ny: usize,
    tags: [Option<usize>; 4],
    material_of: impl Fn([f64; 2]) -> usize,
) -> Mesh {
    let id = |i: usize, j: usize| j * (nx + 1) + i;
    let mut nodes = Vec::with_capacity((nx + 1) * (ny + 1));
    for j in 0..=ny {
        for i in 0..=nx {
            nodes.push([w * i as f64 / nx as f64, h * j as f64 / ny as f64]);
        }
    }
    let mut triangles = Vec::with_capacity(2 * nx * ny);
    for j in 0..ny {
        for i in 0..nx {
            triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
            triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
    }
    let material = triangles
        .iter()
        .map(|t| {
            let c = t.iter().fold([0.0, 0.0], |a, &v| {
                [a[0] + nodes[v][0] / 3.0, a[1] + nodes[v][1] / 3.0]
            });
            material_of(c)
        })
        .collect();
    let cell = |i: usize, j: usize| 2 * (j * nx + i);
    let mut boundary_edges = Vec::new();
    let edge = |nodes: [usize; 2], boundary: Option<usize>, triangle, segment| BoundaryEdge {
        nodes,
        boundary,
        triangle,
        ring: RingRef::Outline,
        segment,
    };
    for i in 0..nx {
        boundary_edges.push(edge([id(i, 0), id(i + 1, 0)], tags[0], cell(i, 0), 0));
    }
    for j in 0..ny {
        boundary_edges.push(edge(
            [id(nx, j), id(nx, j + 1)],
            tags[1],
            cell(nx - 1, j),
            1,
        ));
    }
    for i in (0..nx).rev() {
        boundary_edges.push(edge(
            [id(i + 1, ny), id(i, ny)],
            tags[2],
            cell(i, ny - 1) + 1,
            2,
        ));
    }
    for j in (0..ny).rev() {
        boundary_edges.push(edge([id(0, j + 1), id(0, j)], tags[3], cell(0, j) + 1, 3));
    }
    let (dx, dy) = (w / nx as f64, h / ny as f64);
    let min_angle = dy.atan2(dx).min(dx.atan2(dy)).to_degrees();
    let stats = MeshStats {
        nodes: nodes.len(),
        triangles: triangles.len(),
        boundary_edges: boundary_edges.len(),
        min_angle_deg: min_angle,
        min_angle_away_from_small_input_angles_deg: min_angle,
        max_area: 0.5 * dx * dy,
        min_area: 0.5 * dx * dy,
        worst_triangle: 0,
        worst_triangle_centroid: [2.0 * dx / 3.0, dy / 3.0],
        small_input_angles: Vec::new(),
        area: w * h,
    };
    Mesh {
        nodes,
        triangles,
        material,
        boundary_edges,
        interfaces: Vec::new(),
        stats,
    }
}

/// Section of the rectangle `[0, w] × [0, h]`: materials `(name, k, Q)` and boundaries
/// `(name, kind)` are given in id order (names must be sorted); the outline's four sides
/// carry `tags = [bottom, right, top, left]`.
pub fn rectangle_section(
    w: f64,
    h: f64,
    materials: &[(&str, f64, f64)],
    boundaries: &[(&str, BoundaryKind)],
    tags: [Option<usize>; 4],
) -> Section {
    let mut text = String::new();
    for (name, k, q) in materials {
        text += &format!("[materials.{name}]\nconductivity = {k:?}\nheat_source = {q:?}\n");
    }
    let edge = |t: Option<usize>| format!("\"{}\"", t.map_or("", |id| boundaries[id].0));
    let edges: Vec<String> = tags.into_iter().map(edge).collect();
    text += &format!(
        "[outline]\nmaterial = \"{}\"\npoints = [[0.0, 0.0], [{w:?}, 0.0], [{w:?}, {h:?}], [0.0, {h:?}]]\nedges = [{}]\n",
        materials[0].0,
        edges.join(", ")
    );
    for (name, kind) in boundaries {
        text += &format!("[boundaries.{name}]\nkind = \"{}\"\n", kind.name());
        match kind {
            BoundaryKind::Fixed { temperature } => {
                text += &format!("temperature = {temperature:?}\n")
            }
            BoundaryKind::Insulated => {}
            BoundaryKind::Flux { flux } => text += &format!("flux = {flux:?}\n"),
            BoundaryKind::Convection { h, ambient } => {
                text += &format!("h = {h:?}\nambient = {ambient:?}\n")
            }
            BoundaryKind::Radiation {
                emissivity,
                surroundings,
            } => text += &format!("emissivity = {emissivity:?}\nsurroundings = {surroundings:?}\n"),
        }
    }
    let section = model::validate(&model::parse(&text).expect("test model parses"))
        .expect("test model is valid");
    assert_eq!(section.outline.edge_boundary, tags, "sides keep their tags");
    section
}
