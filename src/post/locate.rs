//! Point location in a mesh: the triangle holding a point, or the nearest boundary point.

use crate::geom::{
    self,
    index::{BoxIndex, inflate, segment_bbox},
};
use crate::mesh::{Mesh, RingRef};
use crate::model::Section;
use std::sync::OnceLock;

/// Barycentric tolerance of point location: a point is inside a triangle when every
/// barycentric coordinate is at least `-INSIDE_TOLERANCE`.
pub const INSIDE_TOLERANCE: f64 = 1e-12;
/// Points this far outside the discretised boundary, relative to the section's diameter, are
/// still evaluated (at the nearest boundary point).
pub const SNAP_RELATIVE_TOLERANCE: f64 = 1e-9;

/// The point of the mesh boundary nearest to a query point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryPoint {
    /// Index into `Mesh::boundary_edges`.
    pub edge: usize,
    /// Position along the edge from `nodes[0]` (0) to `nodes[1]` (1).
    pub t: f64,
    /// m
    pub point: [f64; 2],
    /// Distance from the query point, m.
    pub distance: f64,
}

/// Where a point was found by [`Locator::place`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Placement {
    /// Inside triangle `triangle` with these barycentric coordinates.
    Inside {
        /// Index into `Mesh::triangles`.
        triangle: usize,
        /// Barycentric coordinates of the point in the triangle.
        barycentric: [f64; 3],
    },
    /// Just outside the discretised section (within the snap tolerance): evaluate at the
    /// nearest boundary point.
    Snapped(BoundaryPoint),
    /// Farther outside; `distance` to the nearest boundary point, m (infinite without edges).
    Outside {
        /// m
        distance: f64,
    },
}

/// Point location in a mesh: R-trees over triangle and boundary-edge bounding boxes (built on
/// the first query, so a run without probes or lines pays nothing), so a query costs
/// O(log N) for quality meshes.
#[derive(Debug, Clone)]
pub struct Locator<'a> {
    mesh: &'a Mesh,
    triangles: OnceLock<BoxIndex>,
    edges: OnceLock<BoxIndex>,
    diameter: f64,
}

impl<'a> Locator<'a> {
    /// A locator of `mesh`; the indexes are built on first use. The mesh must have been checked
    /// (every triangle and edge refers to existing nodes).
    pub fn new(mesh: &'a Mesh) -> Self {
        let bbox = if mesh.nodes.is_empty() {
            [0.0, 0.0, 1.0, 1.0]
        } else {
            geom::bbox(mesh.nodes.iter().copied())
        };
        Locator {
            mesh,
            triangles: OnceLock::new(),
            edges: OnceLock::new(),
            diameter: geom::distance([bbox[0], bbox[1]], [bbox[2], bbox[3]]),
        }
    }

    /// The mesh this locator belongs to.
    pub fn mesh(&self) -> &'a Mesh {
        self.mesh
    }

    /// The index of the triangles' bounding boxes.
    pub(crate) fn triangle_index(&self) -> &BoxIndex {
        self.triangles.get_or_init(|| {
            let m = self.mesh;
            BoxIndex::new(
                m.triangles
                    .iter()
                    .map(|t| geom::bbox(t.iter().map(|&n| m.nodes[n]))),
            )
        })
    }

    /// The index of the boundary edges' bounding boxes.
    fn edge_index(&self) -> &BoxIndex {
        self.edges.get_or_init(|| {
            let m = self.mesh;
            BoxIndex::new(m.boundary_edges.iter().map(|e| {
                let [a, b] = e.nodes;
                segment_bbox(m.nodes[a], m.nodes[b])
            }))
        })
    }

    /// Diagonal of the mesh's bounding box, m.
    pub fn diameter(&self) -> f64 {
        self.diameter
    }

    /// Barycentric coordinates of p in triangle t.
    pub fn barycentric(&self, t: usize, p: [f64; 2]) -> [f64; 3] {
        let ids = self.mesh.triangles[t];
        let v = [
            self.mesh.nodes[ids[0]],
            self.mesh.nodes[ids[1]],
            self.mesh.nodes[ids[2]],
        ];
        let total = geom::cross(v[0], v[1], v[2]);
        [
            geom::cross(p, v[1], v[2]) / total,
            geom::cross(v[0], p, v[2]) / total,
            geom::cross(v[0], v[1], p) / total,
        ]
    }

    /// The triangle containing p (barycentric coordinates ≥ −[`INSIDE_TOLERANCE`]) and p's
    /// barycentric coordinates in it. On a shared edge or vertex the triangle in which p lies
    /// deepest wins (ties: lowest index).
    pub fn locate(&self, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        if !(p[0].is_finite() && p[1].is_finite()) {
            return None;
        }
        // A point up to the barycentric tolerance outside a triangle lies outside its box by at
        // most that fraction of the triangle's size.
        let margin = INSIDE_TOLERANCE * self.diameter;
        let candidates = self
            .triangle_index()
            .meeting_vec(inflate([p[0], p[1], p[0], p[1]], margin));
        let mut best: Option<(usize, [f64; 3], f64)> = None;
        for t in candidates {
            let l = self.barycentric(t, p);
            let depth = l[0].min(l[1]).min(l[2]);
            if depth >= -INSIDE_TOLERANCE && best.is_none_or(|b| depth > b.2) {
                best = Some((t, l, depth));
            }
        }
        best.map(|(t, l, _)| (t, l))
    }

    /// The point of boundary edge `e` nearest to `p`.
    pub(crate) fn edge_point(&self, e: usize, p: [f64; 2]) -> BoundaryPoint {
        let [a, b] = self.mesh.boundary_edges[e].nodes;
        let (pa, pb) = (self.mesh.nodes[a], self.mesh.nodes[b]);
        let (t, distance) = geom::project(pa, pb, p);
        BoundaryPoint {
            edge: e,
            t,
            point: geom::lerp(pa, pb, t),
            distance,
        }
    }

    /// The nearest point on the mesh boundary (ties: lowest edge index); `None` without
    /// boundary edges or for a non-finite p.
    pub fn nearest_boundary_point(&self, p: [f64; 2]) -> Option<BoundaryPoint> {
        if self.mesh.boundary_edges.is_empty() || !(p[0].is_finite() && p[1].is_finite()) {
            return None;
        }
        let (e, _) = self
            .edge_index()
            .nearest(p, |e| self.edge_point(e, p).distance)?;
        Some(self.edge_point(e, p))
    }

    /// Locates p with the snapping rule of probes and line samples: inside a triangle; else at
    /// the nearest boundary point if it is within `max(sagitta, 1e-9 × diameter)` (sagitta of
    /// the circle the nearest edge's ring was made from, 0 for polygons); else outside.
    pub fn place(&self, section: &Section, p: [f64; 2]) -> Placement {
        if let Some((triangle, barycentric)) = self.locate(p) {
            return Placement::Inside {
                triangle,
                barycentric,
            };
        }
        let Some(q) = self.nearest_boundary_point(p) else {
            return Placement::Outside {
                distance: f64::INFINITY,
            };
        };
        let circle = match self.mesh.boundary_edges[q.edge].ring {
            RingRef::Outline => section.outline.circle,
            RingRef::Hole(i) => section.holes.get(i).and_then(|h| h.circle),
        };
        let ring_tolerance = circle.map_or(0.0, |c| c.sagitta());
        let tolerance = ring_tolerance.max(SNAP_RELATIVE_TOLERANCE * self.diameter);
        if q.distance <= tolerance {
            Placement::Snapped(q)
        } else {
            Placement::Outside {
                distance: q.distance,
            }
        }
    }

    /// Interpolates nodal values at a placement (`None` when outside).
    pub fn interpolate<const D: usize>(
        &self,
        placement: &Placement,
        values: &[[f64; D]],
    ) -> Option<[f64; D]> {
        let (ids, w): (Vec<usize>, Vec<f64>) = match *placement {
            Placement::Inside {
                triangle,
                barycentric,
            } => (self.mesh.triangles[triangle].to_vec(), barycentric.to_vec()),
            Placement::Snapped(q) => (
                self.mesh.boundary_edges[q.edge].nodes.to_vec(),
                vec![1.0 - q.t, q.t],
            ),
            Placement::Outside { .. } => return None,
        };
        let mut out = [0.0; D];
        for (&i, &wi) in ids.iter().zip(&w) {
            for (o, v) in out.iter_mut().zip(&values[i]) {
                *o += wi * v;
            }
        }
        Some(out)
    }
}
