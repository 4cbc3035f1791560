//! Point location against the section's rings, without a mesh: the zone (void, outline
//! material or region) of a point, and the nearest point of the section boundary.

use super::{RingId, Zone};
use crate::geom::{self, Point};
use crate::model::{Ring, Section};

/// A ring with its bounding box, for fast rejection, and its edges by horizontal slab.
///
/// The slab lists stay hand-made rather than an R-tree ([`crate::geom::index`]): the
/// crossing-number test needs exactly the edges spanning the query's y, which one slab list
/// holds contiguously, so a query is one division and a short scan; an R-tree query of the
/// ray's box descends the tree for every point, and the grid model asks millions of them
/// (one per cell centre and grid point).
pub(super) struct RingView<'a> {
    pub(super) id: RingId,
    pub(super) ring: &'a Ring,
    lo: Point,
    hi: Point,
    /// Edges by horizontal slab of the bounding box (an edge in every slab its y-range
    /// overlaps), so a crossing-number test reads only the edges near the query's y.
    slabs: Vec<Vec<u32>>,
}

impl<'a> RingView<'a> {
    fn new(id: RingId, ring: &'a Ring) -> Self {
        let b = geom::bbox(ring.points.iter().copied());
        let (lo, hi) = ([b[0], b[1]], [b[2], b[3]]);
        let n = ring.len();
        let count = (n / 4).clamp(1, 1 << 18);
        let mut view = RingView {
            id,
            ring,
            lo,
            hi,
            slabs: vec![Vec::new(); count],
        };
        for i in 0..n {
            let (a, b) = ring.segment(i);
            let (s0, s1) = (view.slab(a[1].min(b[1])), view.slab(a[1].max(b[1])));
            for list in &mut view.slabs[s0..=s1] {
                list.push(i as u32);
            }
        }
        view
    }

    /// The slab holding height `y` (clamped to the bounding box).
    fn slab(&self, y: f64) -> usize {
        let count = self.slabs.len();
        let height = self.hi[1] - self.lo[1];
        if height > 0.0 {
            (((y - self.lo[1]) / height * count as f64) as usize).min(count - 1)
        } else {
            0
        }
    }

    /// Whether `p` is inside the ring: the crossing rule of [`geom::point_in_ring`], over the
    /// edges of p's slab only.
    pub(super) fn contains(&self, p: Point) -> bool {
        if !(p[0] >= self.lo[0] && p[0] <= self.hi[0] && p[1] >= self.lo[1] && p[1] <= self.hi[1]) {
            return false;
        }
        let mut inside = false;
        for &i in &self.slabs[self.slab(p[1])] {
            let (b, a) = self.ring.segment(i as usize);
            if geom::crosses_ray(a, b, p) {
                inside = !inside;
            }
        }
        inside
    }
}

/// Point location against the section's rings (no mesh needed).
pub struct Classifier<'a> {
    pub(super) outline: RingView<'a>,
    pub(super) holes: Vec<RingView<'a>>,
    pub(super) regions: Vec<RingView<'a>>,
}

impl<'a> Classifier<'a> {
    /// Indexes the rings of `section`.
    pub fn new(section: &'a Section) -> Self {
        Classifier {
            outline: RingView::new(RingId::Outline, &section.outline),
            holes: section
                .holes
                .iter()
                .enumerate()
                .map(|(i, h)| RingView::new(RingId::Hole(i), h))
                .collect(),
            regions: section
                .regions
                .iter()
                .enumerate()
                .map(|(i, r)| RingView::new(RingId::Region(i), &r.ring))
                .collect(),
        }
    }

    /// Zone of a point, given for some rings whether the point counts as inside them.
    pub(super) fn zone_with(&self, p: Point, known: &[(RingId, bool)]) -> Zone {
        let inside = |v: &RingView| -> bool {
            known
                .iter()
                .find(|(id, _)| *id == v.id)
                .map(|(_, b)| *b)
                .unwrap_or_else(|| v.contains(p))
        };
        if !inside(&self.outline) {
            return None;
        }
        if self.holes.iter().any(inside) {
            return None;
        }
        for (i, r) in self.regions.iter().enumerate().rev() {
            if inside(r) {
                return Some(i + 1);
            }
        }
        Some(0)
    }

    /// Zone of a point strictly away from every ring.
    pub fn zone(&self, p: Point) -> Zone {
        self.zone_with(p, &[])
    }

    /// Whether `p` is inside the outline (holes and regions aside).
    pub(super) fn inside_outline(&self, p: Point) -> bool {
        self.outline.contains(p)
    }

    /// The first hole containing `p`, if any.
    pub(super) fn hole_containing(&self, p: Point) -> Option<usize> {
        self.holes.iter().position(|h| h.contains(p))
    }

    /// Nearest point on the section boundary (outline and holes): (distance, ring, point).
    pub fn nearest_boundary(&self, p: Point) -> (f64, RingId, Point) {
        let mut best = (f64::INFINITY, RingId::Outline, p);
        for v in std::iter::once(&self.outline).chain(self.holes.iter()) {
            let r = v.ring;
            for i in 0..r.len() {
                let (a, b) = r.segment(i);
                let (t, d) = geom::project(a, b, p);
                if d < best.0 {
                    best = (d, v.id, geom::lerp(a, b, t));
                }
            }
        }
        best
    }
}
