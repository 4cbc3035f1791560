//! Mesh stage: spade's constrained Delaunay triangulation of the tagged segment set and its
//! Ruppert-style refinement (angle and area limits), our own classification of triangles
//! (hole or material), the geometric mapping of every final boundary edge back to its boundary
//! name, and quality statistics.

use serde::Serialize;

/// Which ring a boundary edge lies on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum RingRef {
    Outline,
    Hole(usize),
}

/// An edge of the mesh on the section boundary (outline or hole).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryEdge {
    /// Node indices, ordered so that the section lies to the left (counter-clockwise around it).
    pub nodes: [usize; 2],
    /// Boundary id (index into `Section::boundaries`), `None` for an unnamed (insulated) segment.
    pub boundary: Option<usize>,
    /// The triangle this edge belongs to.
    pub triangle: usize,
    pub ring: RingRef,
}

/// A triangle angle that cannot be raised to the limit because two input segments meet at a
/// smaller angle there.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SmallInputAngle {
    pub at: [f64; 2],
    pub angle_deg: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeshStats {
    pub nodes: usize,
    pub triangles: usize,
    pub boundary_edges: usize,
    /// Smallest angle over all triangles, degrees.
    pub min_angle_deg: f64,
    /// Smallest angle over triangles that do not touch a small input angle, degrees.
    pub min_angle_away_from_small_input_angles_deg: f64,
    /// m²
    pub max_area: f64,
    /// m²
    pub min_area: f64,
    /// Triangle with the smallest angle.
    pub worst_triangle: usize,
    pub worst_triangle_centroid: [f64; 2],
    pub small_input_angles: Vec<SmallInputAngle>,
    /// Area of the meshed section, m².
    pub area: f64,
}

/// A conforming triangle mesh of the section.
#[derive(Debug, Clone, PartialEq)]
pub struct Mesh {
    /// Node coordinates, m.
    pub nodes: Vec<[f64; 2]>,
    /// Node indices of each triangle, counter-clockwise.
    pub triangles: Vec<[usize; 3]>,
    /// Material id of each triangle.
    pub material: Vec<usize>,
    /// Every edge on the outline or a hole, each once.
    pub boundary_edges: Vec<BoundaryEdge>,
    pub stats: MeshStats,
}

impl Mesh {
    /// Signed area of triangle t (positive for counter-clockwise), m².
    pub fn triangle_area(&self, t: usize) -> f64 {
        let [a, b, c] = self.triangles[t];
        let (pa, pb, pc) = (self.nodes[a], self.nodes[b], self.nodes[c]);
        0.5 * ((pb[0] - pa[0]) * (pc[1] - pa[1]) - (pc[0] - pa[0]) * (pb[1] - pa[1]))
    }

    /// Length of boundary edge e, m.
    pub fn edge_length(&self, e: &BoundaryEdge) -> f64 {
        let (p, q) = (self.nodes[e.nodes[0]], self.nodes[e.nodes[1]]);
        ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2)).sqrt()
    }
}
