//! Spatial indexes over `rstar` R-trees: items by bounding box ([`BoxIndex`], built once) and
//! points inserted one by one ([`PointIndex`]). Every query returns item indices in increasing
//! order, so callers that break ties by index see the same order whatever the tree's layout.

use super::Point;
use rstar::primitives::{GeomWithData, Rectangle};
use rstar::{AABB, RTree};

/// An axis-aligned box `[x_min, y_min, x_max, y_max]`, m.
pub type Bbox = [f64; 4];

/// `b` grown by `margin` on every side.
#[inline]
pub fn inflate(b: Bbox, margin: f64) -> Bbox {
    [b[0] - margin, b[1] - margin, b[2] + margin, b[3] + margin]
}

/// Bounding box of the segment `a b`.
#[inline]
pub fn segment_bbox(a: Point, b: Point) -> Bbox {
    [
        a[0].min(b[0]),
        a[1].min(b[1]),
        a[0].max(b[0]),
        a[1].max(b[1]),
    ]
}

fn envelope(b: Bbox) -> AABB<Point> {
    AABB::from_corners([b[0], b[1]], [b[2], b[3]])
}

type BoxItem = GeomWithData<Rectangle<Point>, usize>;

/// Items `0..n` by their bounding boxes, loaded in bulk.
#[derive(Debug, Clone)]
pub struct BoxIndex {
    tree: RTree<BoxItem>,
}

impl BoxIndex {
    /// Index items `0, 1, …` by the boxes given in that order.
    pub fn new(boxes: impl IntoIterator<Item = Bbox>) -> Self {
        let items: Vec<BoxItem> = boxes
            .into_iter()
            .enumerate()
            .map(|(i, b)| GeomWithData::new(Rectangle::from_corners([b[0], b[1]], [b[2], b[3]]), i))
            .collect();
        BoxIndex {
            tree: RTree::bulk_load(items),
        }
    }

    /// Number of items.
    pub fn len(&self) -> usize {
        self.tree.size()
    }

    /// Whether there are no items.
    pub fn is_empty(&self) -> bool {
        self.tree.size() == 0
    }

    /// Items whose box meets the box `b` (touching counts), ascending, into `out` (cleared
    /// first).
    pub fn meeting(&self, b: Bbox, out: &mut Vec<usize>) {
        out.clear();
        out.extend(
            self.tree
                .locate_in_envelope_intersecting(envelope(b))
                .map(|g| g.data),
        );
        out.sort_unstable();
    }

    /// Items whose box meets the box `b`, ascending.
    pub fn meeting_vec(&self, b: Bbox) -> Vec<usize> {
        let mut out = Vec::new();
        self.meeting(b, &mut out);
        out
    }

    /// The item nearest to `p` by the exact distance `exact(item)` (which must be at least the
    /// distance from `p` to the item's box), with ties going to the lowest index; `None` when
    /// the index is empty. Items are visited in order of their boxes' distance and the search
    /// stops once no unvisited box can hold a closer item.
    pub fn nearest(&self, p: Point, mut exact: impl FnMut(usize) -> f64) -> Option<(usize, f64)> {
        let mut best: Option<(usize, f64)> = None;
        for (g, box_d2) in self.tree.nearest_neighbor_iter_with_distance_2(p) {
            if let Some((_, d)) = best {
                // A small margin keeps items at an equal distance (ties) in play despite the
                // rounding of the squared box distance.
                if box_d2 > d * d * (1.0 + 1e-9) {
                    break;
                }
            }
            let d = exact(g.data);
            if best.is_none_or(|(bi, bd)| d < bd || (d == bd && g.data < bi)) {
                best = Some((g.data, d));
            }
        }
        best
    }
}

type PointItem = GeomWithData<Point, usize>;

/// Points with item numbers, inserted one at a time.
#[derive(Debug, Clone, Default)]
pub struct PointIndex {
    tree: RTree<PointItem>,
}

impl PointIndex {
    /// An empty index.
    pub fn new() -> Self {
        PointIndex::default()
    }

    /// Adds point `p` as item `item`.
    pub fn insert(&mut self, p: Point, item: usize) {
        self.tree.insert(GeomWithData::new(p, item));
    }

    /// Items within distance `radius` of `p` (a slightly larger circle may be searched; callers
    /// test the exact distance), ascending, into `out` (cleared first).
    pub fn within(&self, p: Point, radius: f64, out: &mut Vec<usize>) {
        out.clear();
        let r = radius * (1.0 + 1e-9);
        out.extend(self.tree.locate_within_distance(p, r * r).map(|g| g.data));
        out.sort_unstable();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::{distance, project};

    /// A deterministic scatter of segments (a linear congruential sequence).
    fn segments(n: usize) -> Vec<(Point, Point)> {
        let mut s = 12345u64;
        let mut next = || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        };
        (0..n)
            .map(|_| {
                let a = [next() * 10.0, next() * 5.0];
                (a, [a[0] + next() - 0.5, a[1] + next() - 0.5])
            })
            .collect()
    }

    #[test]
    fn box_queries_agree_with_a_scan_in_index_order() {
        let segs = segments(500);
        let index = BoxIndex::new(segs.iter().map(|&(a, b)| segment_bbox(a, b)));
        assert_eq!(index.len(), 500);
        let query = [2.0, 1.0, 3.5, 1.2];
        let got = index.meeting_vec(query);
        let want: Vec<usize> = (0..segs.len())
            .filter(|&i| {
                let b = segment_bbox(segs[i].0, segs[i].1);
                b[0] <= query[2] && b[2] >= query[0] && b[1] <= query[3] && b[3] >= query[1]
            })
            .collect();
        assert!(!want.is_empty());
        assert_eq!(got, want);
    }

    #[test]
    fn nearest_agrees_with_a_scan_and_breaks_ties_by_index() {
        let segs = segments(300);
        let index = BoxIndex::new(segs.iter().map(|&(a, b)| segment_bbox(a, b)));
        for k in 0..50 {
            let p = [k as f64 * 0.21 - 0.5, (k % 7) as f64 * 0.8];
            let d = |i: usize| project(segs[i].0, segs[i].1, p).1;
            let scan =
                (0..segs.len())
                    .map(|i| (i, d(i)))
                    .fold(None, |b: Option<(usize, f64)>, (i, x)| match b {
                        Some((_, bd)) if bd <= x => b,
                        _ => Some((i, x)),
                    });
            assert_eq!(index.nearest(p, d), scan);
        }
        // Two identical items: the lower index wins.
        let twin = BoxIndex::new([[0.0, 0.0, 1.0, 1.0], [0.0, 0.0, 1.0, 1.0]]);
        assert_eq!(twin.nearest([3.0, 0.5], |_| 2.0), Some((0, 2.0)));
        assert_eq!(BoxIndex::new([]).nearest([0.0, 0.0], |_| 0.0), None);
    }

    #[test]
    fn points_within_a_radius() {
        let mut index = PointIndex::new();
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [0.5, 0.5], [3.0, 3.0]];
        for (i, &p) in pts.iter().enumerate().rev() {
            index.insert(p, i);
        }
        let mut out = Vec::new();
        index.within([0.0, 0.0], 1.0, &mut out);
        assert_eq!(out, vec![0, 1, 2, 3]);
        assert!(out.iter().all(|&i| distance(pts[i], [0.0, 0.0]) <= 1.0));
        index.within([3.0, 3.1], 0.05, &mut out);
        assert!(out.is_empty());
    }
}
