//! Point location in a mesh: the triangle holding a point, or the nearest boundary point.

use crate::mesh::{Mesh, RingRef};
use crate::model::Section;

/// Barycentric tolerance of point location: a point is inside a triangle when every
/// barycentric coordinate is at least `-INSIDE_TOLERANCE`.
pub const INSIDE_TOLERANCE: f64 = 1e-12;
/// Points this far outside the discretised boundary, relative to the section's diameter, are
/// still evaluated (at the nearest boundary point).
pub const SNAP_RELATIVE_TOLERANCE: f64 = 1e-9;

/// A uniform grid of buckets over the mesh's bounding box; each bucket lists the items whose
/// bounding boxes overlap it, in increasing item order (compressed storage).
#[derive(Debug, Clone)]
pub(crate) struct BucketGrid {
    x0: f64,
    y0: f64,
    cw: f64,
    ch: f64,
    pub(crate) nx: usize,
    pub(crate) ny: usize,
    pub(crate) start: Vec<usize>,
    items: Vec<usize>,
}

impl BucketGrid {
    fn build(bbox: [f64; 4], count: usize, item_bbox: impl Fn(usize) -> [f64; 4]) -> Self {
        let [x0, y0, x1, y1] = bbox;
        let w = (x1 - x0).max(f64::MIN_POSITIVE);
        let h = (y1 - y0).max(f64::MIN_POSITIVE);
        let target = count.max(1) as f64;
        let nx = ((target * w / h).sqrt().ceil() as usize).clamp(1, 1 << 16);
        let ny = ((target / nx as f64).ceil() as usize).clamp(1, 1 << 16);
        let mut grid = BucketGrid {
            x0,
            y0,
            cw: w / nx as f64,
            ch: h / ny as f64,
            nx,
            ny,
            start: vec![0; nx * ny + 1],
            items: Vec::new(),
        };
        let ranges: Vec<[usize; 4]> = (0..count)
            .map(|k| {
                let b = item_bbox(k);
                let (i0, j0) = grid.cell_of([b[0], b[1]]);
                let (i1, j1) = grid.cell_of([b[2], b[3]]);
                [i0, j0, i1, j1]
            })
            .collect();
        for r in &ranges {
            for j in r[1]..=r[3] {
                for i in r[0]..=r[2] {
                    grid.start[j * nx + i + 1] += 1;
                }
            }
        }
        for c in 0..nx * ny {
            grid.start[c + 1] += grid.start[c];
        }
        let mut fill = grid.start.clone();
        grid.items = vec![0; grid.start[nx * ny]];
        for (k, r) in ranges.iter().enumerate() {
            for j in r[1]..=r[3] {
                for i in r[0]..=r[2] {
                    let c = j * nx + i;
                    grid.items[fill[c]] = k;
                    fill[c] += 1;
                }
            }
        }
        grid
    }

    fn cell_of(&self, p: [f64; 2]) -> (usize, usize) {
        let f = |v: f64, o: f64, s: f64, n: usize| {
            let c = ((v - o) / s).floor();
            if c.is_nan() || c < 0.0 {
                0
            } else if c >= n as f64 {
                n - 1
            } else {
                c as usize
            }
        };
        (
            f(p[0], self.x0, self.cw, self.nx),
            f(p[1], self.y0, self.ch, self.ny),
        )
    }

    fn cell(&self, i: usize, j: usize) -> &[usize] {
        let c = j * self.nx + i;
        &self.items[self.start[c]..self.start[c + 1]]
    }
}

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
        triangle: usize,
        barycentric: [f64; 3],
    },
    /// Just outside the discretised section (within the snap tolerance): evaluate at the
    /// nearest boundary point.
    Snapped(BoundaryPoint),
    /// Farther outside; `distance` to the nearest boundary point, m (infinite without edges).
    Outside { distance: f64 },
}

/// Point location in a mesh: bucket grids over triangle and boundary-edge bounding boxes, so a
/// query costs O(1) for quality meshes, independent of the mesh size.
#[derive(Debug, Clone)]
pub struct Locator<'a> {
    mesh: &'a Mesh,
    pub(crate) triangles: BucketGrid,
    edges: BucketGrid,
    diameter: f64,
}

fn segment_bbox(p: [f64; 2], q: [f64; 2]) -> [f64; 4] {
    [
        p[0].min(q[0]),
        p[1].min(q[1]),
        p[0].max(q[0]),
        p[1].max(q[1]),
    ]
}

impl<'a> Locator<'a> {
    /// Builds the grids, O(N). The mesh must have been checked ([`check_mesh`]).
    pub fn new(mesh: &'a Mesh) -> Self {
        let mut bbox = [
            f64::INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NEG_INFINITY,
        ];
        for p in &mesh.nodes {
            bbox = [
                bbox[0].min(p[0]),
                bbox[1].min(p[1]),
                bbox[2].max(p[0]),
                bbox[3].max(p[1]),
            ];
        }
        if mesh.nodes.is_empty() {
            bbox = [0.0, 0.0, 1.0, 1.0];
        }
        let diameter = ((bbox[2] - bbox[0]).powi(2) + (bbox[3] - bbox[1]).powi(2)).sqrt();
        let triangles = BucketGrid::build(bbox, mesh.triangles.len(), |t| {
            let [a, b, c] = mesh.triangles[t];
            let (pa, pb, pc) = (mesh.nodes[a], mesh.nodes[b], mesh.nodes[c]);
            let s = segment_bbox(pa, pb);
            [
                s[0].min(pc[0]),
                s[1].min(pc[1]),
                s[2].max(pc[0]),
                s[3].max(pc[1]),
            ]
        });
        let edges = BucketGrid::build(bbox, mesh.boundary_edges.len(), |e| {
            let [a, b] = mesh.boundary_edges[e].nodes;
            segment_bbox(mesh.nodes[a], mesh.nodes[b])
        });
        Locator {
            mesh,
            triangles,
            edges,
            diameter,
        }
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
        let twice_area = |a: [f64; 2], b: [f64; 2], c: [f64; 2]| {
            (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1])
        };
        let total = twice_area(v[0], v[1], v[2]);
        [
            twice_area(p, v[1], v[2]) / total,
            twice_area(v[0], p, v[2]) / total,
            twice_area(v[0], v[1], p) / total,
        ]
    }

    /// The triangle containing p (barycentric coordinates ≥ −[`INSIDE_TOLERANCE`]) and p's
    /// barycentric coordinates in it. On a shared edge or vertex the triangle in which p lies
    /// deepest wins (ties: lowest index).
    pub fn locate(&self, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        if !(p[0].is_finite() && p[1].is_finite()) {
            return None;
        }
        let (i, j) = self.triangles.cell_of(p);
        let mut best: Option<(usize, [f64; 3], f64)> = None;
        for &t in self.triangles.cell(i, j) {
            let l = self.barycentric(t, p);
            let depth = l[0].min(l[1]).min(l[2]);
            if depth >= -INSIDE_TOLERANCE && best.is_none_or(|b| depth > b.2) {
                best = Some((t, l, depth));
            }
        }
        best.map(|(t, l, _)| (t, l))
    }

    pub(crate) fn edge_point(&self, e: usize, p: [f64; 2]) -> BoundaryPoint {
        let [a, b] = self.mesh.boundary_edges[e].nodes;
        let (pa, pb) = (self.mesh.nodes[a], self.mesh.nodes[b]);
        let d = [pb[0] - pa[0], pb[1] - pa[1]];
        let len2 = d[0] * d[0] + d[1] * d[1];
        let t = if len2 > 0.0 {
            (((p[0] - pa[0]) * d[0] + (p[1] - pa[1]) * d[1]) / len2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let point = [pa[0] + t * d[0], pa[1] + t * d[1]];
        let distance = ((p[0] - point[0]).powi(2) + (p[1] - point[1]).powi(2)).sqrt();
        BoundaryPoint {
            edge: e,
            t,
            point,
            distance,
        }
    }

    /// The nearest point on the mesh boundary (ties: lowest edge index); `None` without
    /// boundary edges or for a non-finite p. Searches rings of buckets outwards and stops once
    /// no unsearched bucket can hold a closer point.
    pub fn nearest_boundary_point(&self, p: [f64; 2]) -> Option<BoundaryPoint> {
        if self.mesh.boundary_edges.is_empty() || !(p[0].is_finite() && p[1].is_finite()) {
            return None;
        }
        let g = &self.edges;
        let (ci, cj) = g.cell_of(p);
        let mut best: Option<BoundaryPoint> = None;
        let consider = |e: usize, best: &mut Option<BoundaryPoint>| {
            let q = self.edge_point(e, p);
            if best
                .is_none_or(|b| q.distance < b.distance || (q.distance == b.distance && e < b.edge))
            {
                *best = Some(q);
            }
        };
        for k in 0usize.. {
            let i0 = ci.saturating_sub(k);
            let j0 = cj.saturating_sub(k);
            let i1 = (ci + k).min(g.nx - 1);
            let j1 = (cj + k).min(g.ny - 1);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    // only the ring at Chebyshev distance k
                    if i.abs_diff(ci) != k && j.abs_diff(cj) != k {
                        continue;
                    }
                    for &e in g.cell(i, j) {
                        consider(e, &mut best);
                    }
                }
            }
            // Lower bound on the distance to any bucket outside the searched block.
            let mut bound = f64::INFINITY;
            if ci > k {
                bound = bound.min((p[0] - (g.x0 + i0 as f64 * g.cw)).max(0.0));
            }
            if ci + k < g.nx - 1 {
                bound = bound.min((g.x0 + (i1 + 1) as f64 * g.cw - p[0]).max(0.0));
            }
            if cj > k {
                bound = bound.min((p[1] - (g.y0 + j0 as f64 * g.ch)).max(0.0));
            }
            if cj + k < g.ny - 1 {
                bound = bound.min((g.y0 + (j1 + 1) as f64 * g.ch - p[1]).max(0.0));
            }
            if bound == f64::INFINITY || best.is_some_and(|b| b.distance < bound) {
                break;
            }
        }
        best
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
