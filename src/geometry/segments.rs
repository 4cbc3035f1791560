//! The segment stage of the PSLG build: every input segment of every ring, the contacts between
//! them (crossings, T-junctions, collinear overlaps) found through an R-tree of segment boxes,
//! the ring checks those contacts imply (self-intersection, holes touching the outline or each
//! other), and the snapping vertex pool that turns split points into shared vertices.

use super::{RingId, Source};
use crate::error::{Error, Result};
use crate::geom::index::{BoxIndex, PointIndex, inflate, segment_bbox};
use crate::geom::{self, Point};
use crate::model::{Ring, Section};
use std::collections::BTreeMap;

/// An input segment with its owner.
#[derive(Clone, Copy)]
pub(super) struct Seg {
    pub(super) a: Point,
    pub(super) b: Point,
    pub(super) ring: RingId,
    /// Index in the ring.
    pub(super) index: usize,
    /// Number of segments of the ring.
    ring_len: usize,
}

/// A point where two segments touch: on segment 1 at parameter `t1`, on segment 2 at `t2`.
#[derive(Debug, Clone, Copy)]
struct Contact {
    p: Point,
    t1: f64,
    t2: f64,
}

/// Split points of each segment: (parameter along it, point).
pub(super) type Splits = Vec<Vec<(f64, Point)>>;

/// Whether `x` and `y` have strictly opposite signs.
fn opposite(x: f64, y: f64) -> bool {
    (x > 0.0 && y < 0.0) || (x < 0.0 && y > 0.0)
}

/// All contacts between two segments, within `tol`: endpoints lying on the other segment, and
/// a proper crossing (decided by the exact orientation predicate).
fn contacts(s: &Seg, o: &Seg, tol: f64, out: &mut Vec<Contact>) {
    out.clear();
    let mut push = |p: Point, t1: f64, t2: f64| {
        if !out.iter().any(|c| geom::distance(c.p, p) <= tol) {
            out.push(Contact { p, t1, t2 });
        }
    };
    for (p, t2) in [(o.a, 0.0), (o.b, 1.0)] {
        let (t, d) = geom::project(s.a, s.b, p);
        if d <= tol {
            push(p, t, t2);
        }
    }
    for (p, t1) in [(s.a, 0.0), (s.b, 1.0)] {
        let (t, d) = geom::project(o.a, o.b, p);
        if d <= tol {
            push(p, t1, t);
        }
    }
    if !out.is_empty() {
        return;
    }
    let crossing = opposite(geom::orient(s.a, s.b, o.a), geom::orient(s.a, s.b, o.b))
        && opposite(geom::orient(o.a, o.b, s.a), geom::orient(o.a, o.b, s.b));
    if crossing {
        // The parameters from the plain cross products (their signs agree with the exact
        // predicate away from degeneracy, which the endpoint tests above have handled).
        let (d1, d2) = (geom::cross(s.a, s.b, o.a), geom::cross(s.a, s.b, o.b));
        let (d3, d4) = (geom::cross(o.a, o.b, s.a), geom::cross(o.a, o.b, s.b));
        let t = d3 / (d3 - d4);
        let u = d1 / (d1 - d2);
        out.push(Contact {
            p: geom::lerp(s.a, s.b, t),
            t1: t,
            t2: u,
        });
    }
}

fn segments_of(id: RingId, ring: &Ring, out: &mut Vec<Seg>) {
    for i in 0..ring.len() {
        let (a, b) = ring.segment(i);
        out.push(Seg {
            a,
            b,
            ring: id,
            index: i,
            ring_len: ring.len(),
        });
    }
}

/// Every segment of the section: outline, holes, regions, in that order.
pub(super) fn all_segments(section: &Section) -> Vec<Seg> {
    let mut segs = Vec::new();
    segments_of(RingId::Outline, &section.outline, &mut segs);
    for (i, h) in section.holes.iter().enumerate() {
        segments_of(RingId::Hole(i), h, &mut segs);
    }
    for (i, r) in section.regions.iter().enumerate() {
        segments_of(RingId::Region(i), &r.ring, &mut segs);
    }
    segs
}

/// Pairs `(i, j)`, `i < j`, of segments whose bounding boxes come within `tol` of each other,
/// ascending.
fn candidate_pairs(segs: &[Seg], tol: f64) -> Vec<(usize, usize)> {
    let index = BoxIndex::new(segs.iter().map(|s| segment_bbox(s.a, s.b)));
    let mut near = Vec::new();
    let mut pairs = Vec::new();
    for (i, s) in segs.iter().enumerate() {
        index.meeting(inflate(segment_bbox(s.a, s.b), tol), &mut near);
        pairs.extend(near.iter().filter(|&&j| j > i).map(|&j| (i, j)));
    }
    pairs
}

/// The segment number as written in the model file.
fn written(section: &Section, id: RingId, seg: usize) -> usize {
    let ring = match id {
        RingId::Outline => &section.outline,
        RingId::Hole(i) => &section.holes[i],
        RingId::Region(i) => &section.regions[i].ring,
    };
    ring.written_segment[seg]
}

/// Contacts of two segments of one ring other than the shared vertex of neighbours: the ring
/// intersects itself.
fn check_same_ring(section: &Section, s: &Seg, o: &Seg, found: &[Contact], tol: f64) -> Result<()> {
    let n = s.ring_len;
    let adjacent_next = (s.index + 1) % n == o.index;
    let adjacent_prev = (o.index + 1) % n == s.index;
    let unexpected = found.iter().map(|c| c.p).find(|p| {
        let shared_next = adjacent_next && geom::distance(*p, s.b) <= tol;
        let shared_prev = adjacent_prev && geom::distance(*p, s.a) <= tol;
        !(shared_next || shared_prev)
    });
    match unexpected {
        Some(p) => Err(Error::input(format!(
            "{}: ring intersects itself: segment {} touches segment {} near {}",
            s.ring.label(),
            written(section, s.ring, s.index),
            written(section, o.ring, o.index),
            geom::format_point(p)
        ))),
        None => Ok(()),
    }
}

/// Contacts between different rings that the model forbids: a hole meeting the outline or
/// another hole.
fn check_rings_apart(section: &Section, s: &Seg, o: &Seg, p: Point) -> Result<()> {
    match (s.ring, o.ring) {
        (RingId::Outline, RingId::Hole(h)) | (RingId::Hole(h), RingId::Outline) => {
            let (hs, os) = if s.ring == RingId::Outline {
                (o, s)
            } else {
                (s, o)
            };
            Err(Error::input(format!(
                "holes[{h}]: ring crosses or touches the outline: its segment {} meets outline segment {} near {}",
                written(section, hs.ring, hs.index),
                written(section, os.ring, os.index),
                geom::format_point(p)
            )))
        }
        (RingId::Hole(a), RingId::Hole(b)) => {
            let (a, b) = (a.max(b), a.min(b));
            Err(Error::input(format!(
                "holes[{a}]: ring crosses or touches holes[{b}] near {}",
                geom::format_point(p)
            )))
        }
        _ => Ok(()),
    }
}

/// Checks every contact between segments and collects the points where each segment must be
/// split.
pub(super) fn split_points(section: &Section, segs: &[Seg], tol: f64) -> Result<Splits> {
    let mut splits: Splits = vec![Vec::new(); segs.len()];
    let mut found = Vec::new();
    for (i, j) in candidate_pairs(segs, tol) {
        let (s, o) = (&segs[i], &segs[j]);
        contacts(s, o, tol, &mut found);
        if found.is_empty() {
            continue;
        }
        if s.ring == o.ring {
            check_same_ring(section, s, o, &found, tol)?;
            continue;
        }
        check_rings_apart(section, s, o, found[0].p)?;
        for c in &found {
            splits[i].push((c.t1, c.p));
            splits[j].push((c.t2, c.p));
        }
    }
    Ok(splits)
}

/// Snapping vertex pool: points closer than `tol` are one vertex (the first one inserted).
struct VertexPool {
    tol: f64,
    points: Vec<Point>,
    index: PointIndex,
    near: Vec<usize>,
}

impl VertexPool {
    fn new(tol: f64) -> Self {
        VertexPool {
            tol,
            points: Vec::new(),
            index: PointIndex::new(),
            near: Vec::new(),
        }
    }

    /// The vertex nearest to `p` within the tolerance (ties: the lowest), else a new one.
    fn insert(&mut self, p: Point) -> usize {
        self.index.within(p, self.tol, &mut self.near);
        let mut best: Option<(f64, usize)> = None;
        for &i in &self.near {
            let d = geom::distance(self.points[i], p);
            if d <= self.tol && best.is_none_or(|(bd, _)| d < bd) {
                best = Some((d, i));
            }
        }
        if let Some((_, i)) = best {
            return i;
        }
        let i = self.points.len();
        self.points.push(p);
        self.index.insert(p, i);
        i
    }
}

/// The PSLG's vertices (ring vertices first: outline, holes, regions; then split points, all
/// snapped) and the chain of vertices along each segment.
pub(super) fn snap_vertices(
    segs: &[Seg],
    mut splits: Splits,
    tol: f64,
) -> (Vec<Point>, Vec<Vec<usize>>) {
    let mut pool = VertexPool::new(tol);
    let start_ids: Vec<usize> = segs.iter().map(|s| pool.insert(s.a)).collect();
    let mut chains = Vec::with_capacity(segs.len());
    for (k, s) in segs.iter().enumerate() {
        let mut sp = std::mem::take(&mut splits[k]);
        sp.sort_by(|x, y| x.0.total_cmp(&y.0));
        let mut ids = vec![start_ids[k]];
        for (_, p) in sp {
            ids.push(pool.insert(p));
        }
        ids.push(pool.insert(s.b));
        ids.dedup();
        chains.push(ids);
    }
    (pool.points, chains)
}

/// The pieces between consecutive chain vertices, deduplicated by vertex pair (lower id
/// first), each with the input segments it lies on.
pub(super) fn piece_sources(
    segs: &[Seg],
    chains: &[Vec<usize>],
) -> BTreeMap<(usize, usize), Vec<Source>> {
    let mut by_key: BTreeMap<(usize, usize), Vec<Source>> = BTreeMap::new();
    for (s, chain) in segs.iter().zip(chains) {
        for w in chain.windows(2) {
            let (a, b) = (w[0], w[1]);
            if a == b {
                continue;
            }
            by_key
                .entry((a.min(b), a.max(b)))
                .or_default()
                .push(Source {
                    ring: s.ring,
                    segment: s.index,
                    forward: a < b,
                });
        }
    }
    by_key
}
