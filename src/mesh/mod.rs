//! Mesh stage: spade's constrained Delaunay triangulation of the tagged segment set and its
//! Ruppert-style refinement (angle and area limits), our own classification of triangles
//! (hole or material), the geometric mapping of every final boundary edge back to its boundary
//! name, and quality statistics.
//!
//! This file holds the mesh types, the options and the entry points; `mesher` triangulates
//! and refines, `classify` finds the zone of every triangle, `extract` builds the [`Mesh`],
//! `quality` computes its statistics; `import` reads a mesh made elsewhere (`solve --mesh`).

mod classify;
pub mod contact;
mod extract;
pub mod import;
mod mesher;
mod quality;
pub mod spatial;

pub use mesher::Mesher;

use crate::error::Result;
use crate::geom;
use crate::geometry::Pslg;
use crate::model::Section;
use serde::Serialize;

pub use crate::geometry::RingRef;

/// An edge of the mesh on the section boundary (outline or hole).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryEdge {
    /// Node indices, ordered so that the section lies to the left (counter-clockwise around it).
    pub nodes: [usize; 2],
    /// Boundary id (index into `Section::boundaries`), `None` for an unnamed (insulated) segment.
    pub boundary: Option<usize>,
    /// The triangle this edge belongs to.
    pub triangle: usize,
    /// The ring (outline or hole) the edge lies on.
    pub ring: RingRef,
    /// Index of the ring's segment the edge lies on (validated order: see
    /// `Ring::written_segment` for the index as written).
    pub segment: usize,
}

/// An edge where two materials of a contact meet, split into two node pairs (one per side) and
/// coupled by the conductance 1/R per unit length (`mesh::contact`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InterfaceEdge {
    /// The edge's nodes on the side of the contact's first material (`Contact::a`).
    pub a: [usize; 2],
    /// The same points' nodes on the side of the second material (`Contact::b`); equal to the
    /// `a` node where the interface ends (no split there).
    pub b: [usize; 2],
    /// The triangles on the a side and on the b side.
    pub triangles: [usize; 2],
    /// Index into `Section::contacts`.
    pub contact: usize,
    /// Edge length, m.
    pub length: f64,
    /// Contact conductance 1/R, W/(m²·K).
    pub conductance: f64,
}

/// A triangle angle that cannot be raised to the limit because two input segments meet at a
/// smaller angle there.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SmallInputAngle {
    /// The vertex, m.
    pub at: [f64; 2],
    /// The input angle, degrees.
    pub angle_deg: f64,
    /// Triangles with their centroid within this distance, m, count as next to it.
    pub radius: f64,
}

/// Size and quality figures of a mesh.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeshStats {
    /// Number of nodes.
    pub nodes: usize,
    /// Number of triangles.
    pub triangles: usize,
    /// Number of boundary edges.
    pub boundary_edges: usize,
    /// Smallest angle over all triangles, degrees.
    pub min_angle_deg: f64,
    /// Smallest angle over triangles not next to a small input angle (not touching its vertex,
    /// centroid outside its `radius`), degrees.
    pub min_angle_away_from_small_input_angles_deg: f64,
    /// m²
    pub max_area: f64,
    /// m²
    pub min_area: f64,
    /// Triangle with the smallest angle.
    pub worst_triangle: usize,
    /// Centroid of the worst triangle, m.
    pub worst_triangle_centroid: [f64; 2],
    /// Input angles too small for the angle limit.
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
    /// Contact interface edges (empty without `[[contacts]]`), in order of their nodes.
    pub interfaces: Vec<InterfaceEdge>,
    /// Size and quality figures.
    pub stats: MeshStats,
}

impl Mesh {
    /// Signed area of triangle t (positive for counter-clockwise), m².
    pub fn triangle_area(&self, t: usize) -> f64 {
        let [a, b, c] = self.triangles[t];
        geom::triangle_area(self.nodes[a], self.nodes[b], self.nodes[c])
    }

    /// Length of boundary edge e, m.
    pub fn edge_length(&self, e: &BoundaryEdge) -> f64 {
        geom::distance(self.nodes[e.nodes[0]], self.nodes[e.nodes[1]])
    }
}

/// Wall-clock seconds spent in each pass of the mesh stage (for benchmarks: the example
/// `mesh_stages` prints them; never written to result files).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct MeshTimings {
    /// Building the segment set's vertices and constraints and spade's bulk load of the
    /// constrained Delaunay triangulation.
    pub cdt_s: f64,
    /// spade's refinement (all passes).
    pub refine_s: f64,
    /// Our classification of the triangulation (constraint pieces and face zones), all passes.
    pub classify_s: f64,
    /// The size estimate and the scans for triangles the size controls or the angle limit
    /// still find wanting (all passes).
    pub scan_s: f64,
    /// Inserting the points those scans ask for.
    pub insert_s: f64,
    /// Extracting the kept faces, nodes, triangles and boundary edges (with the Morton
    /// renumbering).
    pub extract_s: f64,
    /// Quality statistics.
    pub stats_s: f64,
    /// Splitting contact interfaces.
    pub contact_s: f64,
}

impl MeshTimings {
    /// Sum of all passes, s.
    pub fn total_s(&self) -> f64 {
        self.cdt_s
            + self.refine_s
            + self.classify_s
            + self.scan_s
            + self.insert_s
            + self.extract_s
            + self.stats_s
            + self.contact_s
    }
}

type Cdt = spade::ConstrainedDelaunayTriangulation<spade::Point2<f64>>;

/// Triangles per `area / max_area` of a quality mesh (Delaunay refinement leaves triangles of
/// about 0.64 of the limit on average). Measured (actual triangles ÷ area / max_area, default
/// angle limit): the L-section and wall-strip test fixtures 1.555 and 1.556; the earlier factor
/// 2.2 was 40 % high on them. See [`estimate_triangles`] for the ratios on the demos.
pub const TRIANGLES_PER_AREA_LIMIT: f64 = 1.6;
/// Triangles per input point of the rings: refinement grades the mesh away from closely
/// spaced ring points. Measured on a unit square with 1,000 and 10,000 evenly spaced ring points
/// and a coarse `max_area`: 5.2 and 5.65 triangles per point.
pub const TRIANGLES_PER_RING_POINT: f64 = 5.7;
/// Most triangles `--max-triangles` may allow (10⁸: some 40 GB of mesh, system and factor).
pub const MAX_TRIANGLES_LIMIT: usize = 100_000_000;

/// Rough number of triangles a quality mesh with this area limit has over this area:
/// [`TRIANGLES_PER_AREA_LIMIT`] × area / max_area. The mesher adds the ring points' share
/// ([`estimate_point_triangles`]) and 4 × length / size per sized boundary piece. Measured ratio
/// of triangles made to the mesher's estimate: buried-pipes 1.04, utility-tunnel 1.33 (graded
/// local size control), wall-junction 1.08, L-section 0.97, wall-strip 0.96, unit squares with
/// 1,000 / 10,000 ring points 0.82–0.99.
pub fn estimate_triangles(section_area: f64, max_area: f64) -> f64 {
    TRIANGLES_PER_AREA_LIMIT * section_area / max_area
}

/// Triangles that the input points of the rings alone ask for:
/// [`TRIANGLES_PER_RING_POINT`] per point.
pub fn estimate_point_triangles(points: usize) -> f64 {
    TRIANGLES_PER_RING_POINT * points as f64
}

/// Options of the mesh stage beyond the model file.
#[derive(Debug, Clone, Copy)]
pub struct MeshOptions {
    /// Refuse a mesh estimated to exceed this many triangles.
    pub max_triangles: usize,
    /// Refine (false: constrained Delaunay triangulation of the input only, for `check`).
    pub refine: bool,
}

impl Default for MeshOptions {
    fn default() -> Self {
        MeshOptions {
            max_triangles: crate::model::DEFAULT_MAX_TRIANGLES,
            refine: true,
        }
    }
}

impl MeshOptions {
    /// Refining options with a triangle limit (`--max-triangles`); the limit must lie in
    /// 1..=[`MAX_TRIANGLES_LIMIT`].
    pub fn with_max_triangles(max_triangles: usize) -> crate::error::Result<MeshOptions> {
        if max_triangles == 0 {
            return Err(crate::error::Error::input(
                "--max-triangles = 0: give at least 1 (the largest mesh accepted, in triangles)",
            ));
        }
        if max_triangles > MAX_TRIANGLES_LIMIT {
            return Err(crate::error::Error::input(format!(
                "--max-triangles = {max_triangles} is above the limit of {MAX_TRIANGLES_LIMIT} triangles"
            )));
        }
        Ok(MeshOptions {
            max_triangles,
            refine: true,
        })
    }
}

/// Area of the discretised section (outline minus holes), m².
pub fn section_area(section: &Section) -> f64 {
    geom::polygon_area(&section.outline.points)
        - section
            .holes
            .iter()
            .map(|h| geom::polygon_area(&h.points))
            .sum::<f64>()
}

/// Smallest angle of a triangle, degrees.
pub fn min_angle_of(p: [[f64; 2]; 3]) -> f64 {
    geom::min_angle_deg(p)
}

/// A size field for adaptive refinement: the largest triangle area wanted at a point, m².
pub trait SizeField {
    /// Largest triangle area wanted at `p`, m².
    fn max_area_at(&self, p: [f64; 2]) -> f64;
}

/// Triangles touching a boundary with a `size` have their longest edge at most this factor
/// times the size.
pub const BOUNDARY_SIZE_FACTOR: f64 = 1.5;
/// Input angles below this factor times `min_angle` are reported as too small for the angle
/// limit. Ruppert's quality guarantee assumes input angles of at least 60° (Ruppert, J.
/// Algorithms 18, 1995); on our property tests the limit was missed next to input angles of
/// about 1.2 × the limit, never beyond 2 × the limit.
pub const SMALL_INPUT_ANGLE_FACTOR: f64 = 2.0;
/// Passes of "insert points where the size field asks, refine again" before giving up.
const MAX_SIZE_PASSES: usize = 60;
/// Passes that insert circumcentres of triangles still below the angle limit.
const MAX_ANGLE_PASSES: usize = 6;

/// A constraint edge handed to the triangulation: end vertices (triangulation indices) and the
/// PSLG piece it lies on (a piece may be split in advance to honour a boundary `size`).
struct Constraint {
    a: usize,
    b: usize,
    piece: usize,
}

/// Mesh a section: PSLG → constrained Delaunay triangulation → refinement → classification.
pub fn build(section: &Section, pslg: &Pslg, opts: &MeshOptions) -> Result<Mesh> {
    build_with(section, pslg, opts, None)
}

/// Mesh a section with an optional size field (adaptive refinement) on top of the model's own
/// limits: the global `max_area`, each material's `max_area`, each boundary's `size`.
pub fn build_with(
    section: &Section,
    pslg: &Pslg,
    opts: &MeshOptions,
    field: Option<&dyn SizeField>,
) -> Result<Mesh> {
    let mut m = Mesher::new(section, pslg, opts)?;
    if opts.refine {
        m.refine(field, &[])?;
    }
    m.mesh()
}

impl Mesh {
    /// Checks the mesh's internal consistency: one material id per triangle, every triangle and
    /// boundary-edge node index in range, boundary edges with two distinct nodes and an existing
    /// triangle. A failure is an internal error of the stage that made the mesh; the message
    /// names the offending item.
    pub fn check_consistency(&self) -> crate::error::Result<()> {
        let bad = |what: String| {
            Err(crate::error::Error::run(format!(
                "internal mesh inconsistency: {what}"
            )))
        };
        let (n, nt) = (self.nodes.len(), self.triangles.len());
        if self.material.len() != nt {
            return bad(format!(
                "{} material ids for {nt} triangles",
                self.material.len()
            ));
        }
        for (t, tri) in self.triangles.iter().enumerate() {
            if let Some(&v) = tri.iter().find(|&&v| v >= n) {
                return bad(format!(
                    "triangle {t} refers to node {v}, but the mesh has {n} nodes"
                ));
            }
        }
        for (e, edge) in self.boundary_edges.iter().enumerate() {
            let [a, b] = edge.nodes;
            if a >= n || b >= n || a == b {
                return bad(format!(
                    "boundary edge {e} has nodes {a} and {b} (the mesh has {n} nodes)"
                ));
            }
            if edge.triangle >= nt {
                return bad(format!(
                    "boundary edge {e} refers to triangle {}, but the mesh has {nt} triangles",
                    edge.triangle
                ));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn max_triangles_above_the_documented_maximum_is_refused() {
        assert!(MeshOptions::with_max_triangles(MAX_TRIANGLES_LIMIT).is_ok());
        for n in [MAX_TRIANGLES_LIMIT + 1, 1usize << 63, usize::MAX] {
            let e = MeshOptions::with_max_triangles(n).unwrap_err();
            assert_eq!(e.exit_code(), 2);
            assert!(e.message().contains("100000000"), "{}", e.message());
        }
    }

    #[test]
    fn ring_points_count_in_the_estimate() {
        assert_eq!(estimate_point_triangles(0), 0.0);
        // A million-point ring asks for millions of triangles whatever the area limit.
        assert!(estimate_point_triangles(1_000_000) > 5.0e6);
    }
}
