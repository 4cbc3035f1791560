//! Geometry stage: checks that need several rings at once (self-intersection, holes inside the
//! outline and apart from each other, probes and lines inside the section) and builds the
//! planar straight-line graph (PSLG) the mesher triangulates. Every input segment is split at
//! every contact with another segment (crossings, T-junctions, collinear overlaps) after snapping
//! points closer than the tolerance, so the mesher receives non-crossing constraints only. Each
//! resulting piece knows the zone on either side — void (outside or in a hole), the outline's
//! material, or a region — and, on the section boundary, its boundary name.

use crate::error::{Error, Result};
use crate::model::{Ring, Section};
use serde::Serialize;
use std::collections::{BTreeMap, HashMap};

/// Which ring a boundary edge lies on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum RingRef {
    Outline,
    Hole(usize),
}

/// What lies on one side of a piece: `None` = void, `Some(0)` = the outline's material,
/// `Some(i + 1)` = `regions[i]`.
pub type Zone = Option<usize>;

/// Which ring an input segment came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum RingId {
    Outline,
    Hole(usize),
    Region(usize),
}

impl RingId {
    fn label(&self) -> String {
        match self {
            RingId::Outline => "outline".into(),
            RingId::Hole(i) => format!("holes[{i}]"),
            RingId::Region(i) => format!("regions[{i}]"),
        }
    }
}

/// One input segment that a piece lies on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Source {
    pub ring: RingId,
    /// Segment index within the validated ring.
    pub segment: usize,
    /// True when the piece runs in the ring's (counter-clockwise) direction.
    pub forward: bool,
}

/// A non-crossing constraint segment of the PSLG.
#[derive(Debug, Clone, PartialEq)]
pub struct Piece {
    pub v: [usize; 2],
    pub sources: Vec<Source>,
    /// Zone to the left and to the right of v[0] → v[1].
    pub left: Zone,
    pub right: Zone,
    /// Boundary id on the section boundary (`None` = unnamed), only meaningful if `ring` is set.
    pub boundary: Option<usize>,
    /// The boundary ring this piece lies on, if it is on the section boundary.
    pub ring: Option<RingRef>,
}

impl Piece {
    pub fn is_boundary(&self) -> bool {
        self.left.is_none() != self.right.is_none()
    }
}

/// The planar straight-line graph handed to the mesher.
#[derive(Debug, Clone)]
pub struct Pslg {
    pub vertices: Vec<[f64; 2]>,
    /// Pieces that separate different zones (boundaries and material interfaces).
    pub pieces: Vec<Piece>,
    /// Material id of each zone (index = zone number).
    pub zone_material: Vec<usize>,
    /// Snapping tolerance, m.
    pub tol: f64,
    pub warnings: Vec<String>,
}

/// Orientation of c relative to a→b: > 0 when c lies to the left.
#[inline]
pub fn orient(a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

#[inline]
fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
}

/// Parameter t ∈ [0, 1] and distance of the point of segment a→b nearest to p.
pub fn project(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> (f64, f64) {
    let d = [b[0] - a[0], b[1] - a[1]];
    let l2 = d[0] * d[0] + d[1] * d[1];
    let t = if l2 > 0.0 {
        (((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1]) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let q = [a[0] + t * d[0], a[1] + t * d[1]];
    (t, dist(p, q))
}

/// Crossing-number point-in-polygon test. Points on the boundary may go either way.
pub fn point_in_ring(points: &[[f64; 2]], p: [f64; 2]) -> bool {
    let n = points.len();
    let mut inside = false;
    let mut j = n - 1;
    for i in 0..n {
        let (a, b) = (points[i], points[j]);
        if (a[1] > p[1]) != (b[1] > p[1]) {
            let x = a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
            if p[0] < x {
                inside = !inside;
            }
        }
        j = i;
    }
    inside
}

/// A ring with its bounding box, for fast rejection.
struct RingView<'a> {
    id: RingId,
    ring: &'a Ring,
    lo: [f64; 2],
    hi: [f64; 2],
    /// Edges by horizontal slab of the bounding box (an edge in every slab its y-range
    /// overlaps), so a crossing-number test reads only the edges near the query's y.
    slabs: Vec<Vec<u32>>,
}

impl<'a> RingView<'a> {
    fn new(id: RingId, ring: &'a Ring) -> Self {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for p in &ring.points {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
        let n = ring.len();
        let count = (n / 4).clamp(1, 1 << 18);
        let mut slabs = vec![Vec::new(); count];
        let height = hi[1] - lo[1];
        let slab = |y: f64| -> usize {
            if height > 0.0 {
                (((y - lo[1]) / height * count as f64) as usize).min(count - 1)
            } else {
                0
            }
        };
        for i in 0..n {
            let (a, b) = ring.segment(i);
            let (s0, s1) = (slab(a[1].min(b[1])), slab(a[1].max(b[1])));
            for list in &mut slabs[s0..=s1] {
                list.push(i as u32);
            }
        }
        RingView {
            id,
            ring,
            lo,
            hi,
            slabs,
        }
    }

    fn contains(&self, p: [f64; 2]) -> bool {
        if !(p[0] >= self.lo[0] && p[0] <= self.hi[0] && p[1] >= self.lo[1] && p[1] <= self.hi[1]) {
            return false;
        }
        let count = self.slabs.len();
        let height = self.hi[1] - self.lo[1];
        let k = if height > 0.0 {
            (((p[1] - self.lo[1]) / height * count as f64) as usize).min(count - 1)
        } else {
            0
        };
        // The same crossing rule as `point_in_ring`, over the edges of p's slab only.
        let mut inside = false;
        for &i in &self.slabs[k] {
            let (b, a) = self.ring.segment(i as usize);
            if (a[1] > p[1]) != (b[1] > p[1]) {
                let x = a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
                if p[0] < x {
                    inside = !inside;
                }
            }
        }
        inside
    }
}

/// Point location against the section's rings (no mesh needed).
pub struct Classifier<'a> {
    outline: RingView<'a>,
    holes: Vec<RingView<'a>>,
    regions: Vec<RingView<'a>>,
}

impl<'a> Classifier<'a> {
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
    fn zone_with(&self, p: [f64; 2], known: &[(RingId, bool)]) -> Zone {
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
    pub fn zone(&self, p: [f64; 2]) -> Zone {
        self.zone_with(p, &[])
    }

    /// Nearest point on the section boundary (outline and holes): (distance, ring, point).
    pub fn nearest_boundary(&self, p: [f64; 2]) -> (f64, RingId, [f64; 2]) {
        let mut best = (f64::INFINITY, RingId::Outline, p);
        for v in std::iter::once(&self.outline).chain(self.holes.iter()) {
            let r = v.ring;
            for i in 0..r.len() {
                let (a, b) = r.segment(i);
                let (t, d) = project(a, b, p);
                if d < best.0 {
                    best = (
                        d,
                        v.id,
                        [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])],
                    );
                }
            }
        }
        best
    }
}

/// Snapping vertex pool: points closer than `tol` are one vertex (the first one inserted).
struct VertexPool {
    tol: f64,
    cell: f64,
    points: Vec<[f64; 2]>,
    grid: HashMap<(i64, i64), Vec<usize>>,
}

impl VertexPool {
    fn new(tol: f64) -> Self {
        VertexPool {
            tol,
            cell: tol * 4.0,
            points: Vec::new(),
            grid: HashMap::new(),
        }
    }
    fn key(&self, p: [f64; 2]) -> (i64, i64) {
        (
            (p[0] / self.cell).floor() as i64,
            (p[1] / self.cell).floor() as i64,
        )
    }
    fn insert(&mut self, p: [f64; 2]) -> usize {
        let (kx, ky) = self.key(p);
        let mut best: Option<(f64, usize)> = None;
        for dx in -1..=1 {
            for dy in -1..=1 {
                // Saturating: far from the origin relative to the tolerance, the keys saturate
                // at the i64 range (a section micrometres wide 100 km from the origin).
                let cell = (kx.saturating_add(dx), ky.saturating_add(dy));
                if let Some(list) = self.grid.get(&cell) {
                    for &i in list {
                        let d = dist(self.points[i], p);
                        if d <= self.tol
                            && best.is_none_or(|(bd, bi)| d < bd || (d == bd && i < bi))
                        {
                            best = Some((d, i));
                        }
                    }
                }
            }
        }
        if let Some((_, i)) = best {
            return i;
        }
        let i = self.points.len();
        self.points.push(p);
        self.grid.entry((kx, ky)).or_default().push(i);
        i
    }
}

/// An input segment with its owner.
#[derive(Clone, Copy)]
struct Seg {
    a: [f64; 2],
    b: [f64; 2],
    ring: RingId,
    /// Index in the ring.
    index: usize,
    /// Number of segments of the ring.
    ring_len: usize,
}

/// How two segments touch.
#[derive(Debug, Clone, Copy)]
enum Contact {
    /// Point on segment 1 at parameter t1, on segment 2 at t2.
    At { p: [f64; 2], t1: f64, t2: f64 },
}

/// All contacts between two segments, within `tol`: endpoints lying on the other segment, and
/// a proper crossing.
fn contacts(s: &Seg, o: &Seg, tol: f64, out: &mut Vec<Contact>) {
    out.clear();
    let mut push = |p: [f64; 2], t1: f64, t2: f64| {
        if !out.iter().any(|c| match c {
            Contact::At { p: q, .. } => dist(*q, p) <= tol,
        }) {
            out.push(Contact::At { p, t1, t2 });
        }
    };
    for (p, t2) in [(o.a, 0.0), (o.b, 1.0)] {
        let (t, d) = project(s.a, s.b, p);
        if d <= tol {
            push(p, t, t2);
        }
    }
    for (p, t1) in [(s.a, 0.0), (s.b, 1.0)] {
        let (t, d) = project(o.a, o.b, p);
        if d <= tol {
            push(p, t1, t);
        }
    }
    if !out.is_empty() {
        return;
    }
    let d1 = orient(s.a, s.b, o.a);
    let d2 = orient(s.a, s.b, o.b);
    let d3 = orient(o.a, o.b, s.a);
    let d4 = orient(o.a, o.b, s.b);
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        let t = d3 / (d3 - d4);
        let u = d1 / (d1 - d2);
        let p = [
            s.a[0] + t * (s.b[0] - s.a[0]),
            s.a[1] + t * (s.b[1] - s.a[1]),
        ];
        out.push(Contact::At { p, t1: t, t2: u });
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

/// Pairs of segments whose bounding boxes overlap (sweep over x), in a deterministic order.
fn candidate_pairs(segs: &[Seg], tol: f64) -> Vec<(usize, usize)> {
    let mut order: Vec<usize> = (0..segs.len()).collect();
    let xmin = |s: &Seg| s.a[0].min(s.b[0]);
    let xmax = |s: &Seg| s.a[0].max(s.b[0]);
    order.sort_by(|&i, &j| xmin(&segs[i]).total_cmp(&xmin(&segs[j])).then(i.cmp(&j)));
    let mut pairs = Vec::new();
    for (w, &i) in order.iter().enumerate() {
        let s = &segs[i];
        let (ylo, yhi) = (s.a[1].min(s.b[1]) - tol, s.a[1].max(s.b[1]) + tol);
        let xhi = xmax(s) + tol;
        for &j in &order[w + 1..] {
            let o = &segs[j];
            if xmin(o) > xhi {
                break;
            }
            if o.a[1].min(o.b[1]) > yhi || o.a[1].max(o.b[1]) < ylo {
                continue;
            }
            pairs.push((i.min(j), i.max(j)));
        }
    }
    pairs.sort_unstable();
    pairs
}

fn written(section: &Section, id: RingId, seg: usize) -> usize {
    let ring = match id {
        RingId::Outline => &section.outline,
        RingId::Hole(i) => &section.holes[i],
        RingId::Region(i) => &section.regions[i].ring,
    };
    ring.written_segment[seg]
}

fn fmt_pt(p: [f64; 2]) -> String {
    format!("({:.6}, {:.6})", p[0], p[1])
}

/// Snapping tolerance of a section: 1e-9 × its diameter.
pub fn tolerance(section: &Section) -> f64 {
    1e-9 * section.diameter().max(1e-9)
}

/// Check the rings against each other and build the PSLG.
pub fn build(section: &Section) -> Result<Pslg> {
    let tol = tolerance(section);
    let mut warnings = Vec::new();
    let mut segs = Vec::new();
    segments_of(RingId::Outline, &section.outline, &mut segs);
    for (i, h) in section.holes.iter().enumerate() {
        segments_of(RingId::Hole(i), h, &mut segs);
    }
    for (i, r) in section.regions.iter().enumerate() {
        segments_of(RingId::Region(i), &r.ring, &mut segs);
    }

    // Contacts: validate, and collect split points per segment.
    let mut splits: Vec<Vec<(f64, [f64; 2])>> = vec![Vec::new(); segs.len()];
    let mut buf = Vec::new();
    let mut region_clipped: BTreeMap<usize, (bool, Vec<usize>)> = BTreeMap::new();
    for (i, j) in candidate_pairs(&segs, tol) {
        let (s, o) = (&segs[i], &segs[j]);
        contacts(s, o, tol, &mut buf);
        if buf.is_empty() {
            continue;
        }
        if s.ring == o.ring {
            let n = s.ring_len;
            let adjacent_next = (s.index + 1) % n == o.index;
            let adjacent_prev = (o.index + 1) % n == s.index;
            // Contacts of adjacent segments at their shared vertex are expected.
            let unexpected: Vec<[f64; 2]> = buf
                .iter()
                .map(|Contact::At { p, .. }| *p)
                .filter(|p| {
                    let shared_next = adjacent_next && dist(*p, s.b) <= tol;
                    let shared_prev = adjacent_prev && dist(*p, s.a) <= tol;
                    !(shared_next || shared_prev)
                })
                .collect();
            if let Some(p) = unexpected.first() {
                let ring = s.ring.label();
                return Err(Error::input(format!(
                    "{ring}: ring intersects itself: segment {} touches segment {} near {}",
                    written(section, s.ring, s.index),
                    written(section, o.ring, o.index),
                    fmt_pt(*p)
                )));
            }
            continue;
        }
        let p = match buf[0] {
            Contact::At { p, .. } => p,
        };
        match (s.ring, o.ring) {
            (RingId::Outline, RingId::Hole(h)) | (RingId::Hole(h), RingId::Outline) => {
                let (hs, os) = if s.ring == RingId::Outline {
                    (o, s)
                } else {
                    (s, o)
                };
                return Err(Error::input(format!(
                    "holes[{h}]: ring crosses or touches the outline: its segment {} meets outline segment {} near {}",
                    written(section, hs.ring, hs.index),
                    written(section, os.ring, os.index),
                    fmt_pt(p)
                )));
            }
            (RingId::Hole(a), RingId::Hole(b)) => {
                let (a, b) = (a.max(b), a.min(b));
                return Err(Error::input(format!(
                    "holes[{a}]: ring crosses or touches holes[{b}] near {}",
                    fmt_pt(p)
                )));
            }
            _ => {}
        }
        for c in &buf {
            let Contact::At { p, t1, t2 } = *c;
            splits[i].push((t1, p));
            splits[j].push((t2, p));
        }
    }

    // Holes inside the outline and not inside each other.
    let classifier = Classifier::new(section);
    for (i, h) in section.holes.iter().enumerate() {
        if !point_in_ring(&section.outline.points, h.points[0]) {
            return Err(Error::input(format!(
                "holes[{i}]: lies outside the outline"
            )));
        }
        for (j, g) in section.holes.iter().enumerate() {
            if i != j && point_in_ring(&g.points, h.points[0]) {
                return Err(Error::input(format!(
                    "holes[{i}]: lies inside holes[{j}] (holes may not be nested)"
                )));
            }
        }
    }

    // Vertex pool: ring vertices first (outline, holes, regions), then split points.
    let mut pool = VertexPool::new(tol);
    let mut seg_vertices: Vec<Vec<usize>> = Vec::with_capacity(segs.len());
    let start_ids: Vec<usize> = segs.iter().map(|s| pool.insert(s.a)).collect();
    for (k, s) in segs.iter().enumerate() {
        let mut sp = std::mem::take(&mut splits[k]);
        sp.sort_by(|x, y| x.0.total_cmp(&y.0));
        let mut ids = vec![start_ids[k]];
        for (_, p) in sp {
            ids.push(pool.insert(p));
        }
        ids.push(pool.insert(s.b));
        ids.dedup();
        seg_vertices.push(ids);
    }

    // Pieces, deduplicated by their vertex pair (lower id first).
    let mut by_key: BTreeMap<(usize, usize), Vec<Source>> = BTreeMap::new();
    for (k, s) in segs.iter().enumerate() {
        for w in seg_vertices[k].windows(2) {
            let (a, b) = (w[0], w[1]);
            if a == b {
                continue;
            }
            let key = (a.min(b), a.max(b));
            by_key.entry(key).or_default().push(Source {
                ring: s.ring,
                segment: s.index,
                forward: a < b,
            });
        }
    }

    let zone_material: Vec<usize> = std::iter::once(section.outline_material)
        .chain(section.regions.iter().map(|r| r.material))
        .collect();
    let mut pieces = Vec::new();
    let mut zone_seen = vec![false; zone_material.len()];
    for ((a, b), sources) in by_key {
        let (pa, pb) = (pool.points[a], pool.points[b]);
        let mid = [(pa[0] + pb[0]) / 2.0, (pa[1] + pb[1]) / 2.0];
        // Side membership for the rings the piece lies on; for the piece direction a → b the
        // ring's interior is on the left when the ring runs a → b.
        let mut left_known = Vec::new();
        let mut right_known = Vec::new();
        for s in &sources {
            if !left_known.iter().any(|(id, _)| *id == s.ring) {
                left_known.push((s.ring, s.forward));
                right_known.push((s.ring, !s.forward));
            }
        }
        let left = classifier.zone_with(mid, &left_known);
        let right = classifier.zone_with(mid, &right_known);
        for z in [left, right].into_iter().flatten() {
            zone_seen[z] = true;
        }
        if left == right {
            // Interior to one zone, or in the void: no constraint needed. A region piece in
            // the void was clipped.
            if left.is_none() {
                for s in &sources {
                    if let RingId::Region(r) = s.ring {
                        let outside = !classifier.outline.contains(mid);
                        let e = region_clipped.entry(r).or_insert((false, Vec::new()));
                        if outside {
                            e.0 = true;
                        } else if let Some(h) =
                            classifier.holes.iter().position(|h| h.contains(mid))
                            && !e.1.contains(&h)
                        {
                            e.1.push(h);
                        }
                    }
                }
            }
            continue;
        }
        let mut boundary = None;
        let mut ring = None;
        if left.is_none() || right.is_none() {
            for s in &sources {
                match s.ring {
                    RingId::Outline => {
                        ring = Some(RingRef::Outline);
                        boundary = section.outline.edge_boundary[s.segment];
                    }
                    RingId::Hole(h) => {
                        ring = Some(RingRef::Hole(h));
                        boundary = section.holes[h].edge_boundary[s.segment];
                    }
                    RingId::Region(_) => {}
                }
                if ring.is_some() {
                    break;
                }
            }
            if ring.is_none() {
                return Err(Error::run(format!(
                    "internal: a boundary piece near {} lies on no outline or hole segment",
                    fmt_pt(mid)
                )));
            }
        }
        pieces.push(Piece {
            v: [a, b],
            sources,
            left,
            right,
            boundary,
            ring,
        });
    }
    for (r, (outside, holes)) in &region_clipped {
        let mut parts = Vec::new();
        if *outside {
            parts.push("outside the outline".to_string());
        }
        for h in holes {
            parts.push(format!("inside holes[{h}]"));
        }
        warnings.push(format!(
            "regions[{r}]: the parts {} are clipped away",
            parts.join(" and ")
        ));
    }
    // A region whose zone occurs on no piece has no area of its own left.
    for (i, seen) in zone_seen.iter().enumerate().skip(1) {
        if !seen {
            return Err(Error::input(format!(
                "regions[{}]: no area left after clipping (it lies outside the outline, inside a hole, or under later regions)",
                i - 1
            )));
        }
    }

    // Probes and lines inside the section.
    for (i, p) in section.probes.iter().enumerate() {
        if classifier.zone(p.at).is_none() {
            let (d, ring, _) = classifier.nearest_boundary(p.at);
            if d > probe_tolerance(section, ring, tol) {
                return Err(Error::input(format!(
                    "probes[{i}] \"{}\": point {} lies outside the section ({d:.3e} m from the nearest boundary, on {})",
                    p.name,
                    fmt_pt(p.at),
                    ring.label()
                )));
            }
        }
    }
    for (i, l) in section.lines.iter().enumerate() {
        let n = l.samples;
        let sample = |k: usize| {
            let t = k as f64 / (n - 1) as f64;
            [
                l.from[0] + t * (l.to[0] - l.from[0]),
                l.from[1] + t * (l.to[1] - l.from[1]),
            ]
        };
        // Point-in-polygon first (fast); the nearest-boundary search only if that finds none.
        let any_inside = (0..n).any(|k| classifier.zone(sample(k)).is_some())
            || (0..n).any(|k| {
                let (d, ring, _) = classifier.nearest_boundary(sample(k));
                d <= probe_tolerance(section, ring, tol)
            });
        if !any_inside {
            return Err(Error::input(format!(
                "lines[{i}] \"{}\": no sample lies inside the section",
                l.name
            )));
        }
    }

    Ok(Pslg {
        vertices: pool.points,
        pieces,
        zone_material,
        tol,
        warnings,
    })
}

/// Distance outside the discretised section within which a point is taken at the nearest
/// boundary point: the ring's sagitta for circles, else the snapping tolerance.
pub fn probe_tolerance(section: &Section, ring: RingId, tol: f64) -> f64 {
    let circle = match ring {
        RingId::Outline => section.outline.circle,
        RingId::Hole(i) => section.holes[i].circle,
        RingId::Region(_) => None,
    };
    circle
        .map(|c| c.sagitta() * 1.000001)
        .unwrap_or(0.0)
        .max(tol)
}

#[cfg(test)]
mod tests {
    use super::*;
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
        let len = |x: &Piece| {
            let (a, b) = (p.vertices[x.v[0]], p.vertices[x.v[1]]);
            ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
        };
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
}
