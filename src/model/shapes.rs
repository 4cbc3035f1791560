//! Ring primitives as written: a `rectangle`, arcs inside `points` and the closing point (a
//! last point that repeats the first). A written ring (other than a circle) becomes its written
//! segments — a start vertex each, and for an arc the arc to the next vertex — and the arcs are
//! split into chords by the circle rule ([`super::circle_segments`] on the arc's share of a
//! full turn).

use super::validate::finite_point;
use super::{
    ArcFile, BoundaryFile, MAX_CIRCLE_SEGMENTS, MAX_COORD, PointEntry, RectangleFile, RingFile,
    circle_segments,
};
use crate::error::{Error, Result, printable};
use crate::geom::distance;
use serde::Serialize;
use std::collections::BTreeMap;
use std::f64::consts::PI;

/// Relative tolerance on the two radii of an arc (start and `to` against the centre): 10⁻⁴,
/// enough for coordinates typed with five significant digits.
pub const ARC_RADIUS_TOLERANCE: f64 = 1.0e-4;

/// An arc of a ring as validated, kept for `check` (chord count and sagitta).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Arc {
    /// Index of the written segment the arc is (as in `edges`).
    pub written_segment: usize,
    /// Centre, m.
    pub center: [f64; 2],
    /// Radius at the start, m.
    pub radius: f64,
    /// Angle swept, degrees (0, 360).
    pub angle_deg: f64,
    /// Number of chords.
    pub segments: usize,
}

impl Arc {
    /// Largest distance between the arc and its chords, m: r(1 − cos(θ/2n)).
    pub fn sagitta(&self) -> f64 {
        self.radius * (1.0 - (self.angle_deg.to_radians() / (2.0 * self.segments as f64)).cos())
    }
}

/// A written ring before its arcs are split: one start vertex per written segment, and the arc
/// (with the index of its `points` entry) that leads from it to the next vertex.
pub(super) struct WrittenRing {
    /// Start vertex of each written segment, m.
    pub vertices: Vec<[f64; 2]>,
    /// The arc of each written segment, with its entry index in `points`.
    pub arcs: Vec<Option<(usize, ArcFile)>>,
}

/// The written segments of a `points` or `rectangle` ring. A last point that repeats the first
/// closes the ring: it is dropped without a warning and the ring has one segment fewer (one
/// `edges` name per real segment) — unless `edges` has one name per written point, the older
/// rule, where the repeat is dropped like any other consecutive repeat.
pub(super) fn written_ring(label: &str, r: &RingFile, tol: f64) -> Result<WrittenRing> {
    if let Some(rect) = &r.rectangle {
        return rectangle(label, rect);
    }
    let entries = r.points.as_deref().unwrap_or(&[]);
    let mut vertices = Vec::with_capacity(entries.len());
    let mut arc_into: Vec<Option<(usize, ArcFile)>> = Vec::with_capacity(entries.len());
    for (i, e) in entries.iter().enumerate() {
        match e {
            PointEntry::Point(p) => {
                finite_point(*p, &format!("{label}: points[{i}]"))?;
                arc_into.push(None);
            }
            PointEntry::Arc { arc } => {
                finite_point(arc.center, &format!("{label}: points[{i}]: arc center"))?;
                finite_point(arc.to, &format!("{label}: points[{i}]: arc to"))?;
                arc_into.push(Some((i, arc.clone())));
            }
        }
        vertices.push(e.vertex());
    }
    let n = vertices.len();
    let closes = n >= 4
        && distance(vertices[n - 1], vertices[0]) <= tol
        && r.edges.as_ref().is_none_or(|e| e.len() != n);
    if closes {
        if let Some((i, _)) = &arc_into[0] {
            return Err(Error::input(format!(
                "{label}: points[{i}]: the arc starts at the last point, which repeats the first: the arc would end where it starts (drop the repeated last point, or use `circle`)"
            )));
        }
        vertices.pop();
    }
    let m = vertices.len();
    // Segment k runs from vertex k to vertex k+1; its arc is the one written at entry k+1.
    let arcs = (0..m).map(|k| arc_into[(k + 1) % n].clone()).collect();
    Ok(WrittenRing { vertices, arcs })
}

/// The four corners of a rectangle, counter-clockwise from `corner`.
fn rectangle(label: &str, rect: &RectangleFile) -> Result<WrittenRing> {
    finite_point(rect.corner, &format!("{label}: rectangle corner"))?;
    for (key, v) in [("width", rect.width), ("height", rect.height)] {
        if !v.is_finite() || v <= 0.0 || v > 2.0 * MAX_COORD {
            return Err(Error::input(format!(
                "{label}: rectangle {key} = {v} m must be a positive finite number, at most {:e} m",
                2.0 * MAX_COORD
            )));
        }
    }
    let [x, y] = rect.corner;
    let (w, h) = (rect.width, rect.height);
    let vertices = vec![[x, y], [x + w, y], [x + w, y + h], [x, y + h]];
    for (i, p) in vertices.iter().enumerate() {
        finite_point(*p, &format!("{label}: rectangle corner {i}"))?;
    }
    Ok(WrittenRing {
        vertices,
        arcs: vec![None; 4],
    })
}

/// A ring with its arcs split: every point with the boundary id and written index of the
/// segment that starts there, and the arcs.
pub(super) struct Expanded {
    /// Points, m, in written order.
    pub points: Vec<[f64; 2]>,
    /// Boundary id of the segment starting at each point.
    pub names: Vec<Option<usize>>,
    /// Written segment index of the segment starting at each point.
    pub written: Vec<usize>,
    /// The arcs.
    pub arcs: Vec<Arc>,
}

/// What splitting arcs needs to know about the model.
pub(super) struct ArcRule<'a> {
    /// The boundaries as written (an arc on a boundary with `size` gets ⌈θr/size⌉ chords at least).
    pub boundaries: &'a BTreeMap<String, BoundaryFile>,
    /// Global max_area, m².
    pub max_area: f64,
    /// Distance below which two points are the same point, m.
    pub tol: f64,
}

/// Split the arcs of `w` into chords; `names` has one boundary id per written segment and
/// `name_of(k)` gives the boundary name of written segment k ("" = unnamed).
pub(super) fn expand(
    label: &str,
    w: &WrittenRing,
    names: &[Option<usize>],
    name_of: &dyn Fn(usize) -> String,
    rule: &ArcRule,
) -> Result<Expanded> {
    let m = w.vertices.len();
    let mut out = Expanded {
        points: Vec::with_capacity(m),
        names: Vec::with_capacity(m),
        written: Vec::with_capacity(m),
        arcs: Vec::new(),
    };
    for (k, (&start, &name)) in w.vertices.iter().zip(names).enumerate() {
        out.points.push(start);
        out.names.push(name);
        out.written.push(k);
        if let Some((entry, arc)) = &w.arcs[k] {
            let size = rule
                .boundaries
                .get(&name_of(k))
                .and_then(|b| b.size)
                .filter(|s| s.is_finite() && *s > 0.0);
            let (inner, info) = split_arc(label, *entry, k, start, arc, size, rule)?;
            for p in inner {
                out.points.push(p);
                out.names.push(name);
                out.written.push(k);
            }
            out.arcs.push(info);
        }
    }
    Ok(out)
}

/// The sense of an arc: +1 counter-clockwise, −1 clockwise.
fn sense(label: &str, entry: usize, direction: &str) -> Result<f64> {
    match direction {
        "ccw" => Ok(1.0),
        "cw" => Ok(-1.0),
        other => Err(Error::input(format!(
            "{label}: points[{entry}]: arc direction \"{}\" is not \"ccw\" (counter-clockwise) or \"cw\" (clockwise){}",
            printable(other),
            super::suggest::suggest(other, ["ccw", "cw"].into_iter())
                .map(|s| format!("; did you mean \"{s}\"?"))
                .unwrap_or_default()
        ))),
    }
}

/// The interior chord points of one arc (start and end excluded) and its record.
fn split_arc(
    label: &str,
    entry: usize,
    written_segment: usize,
    start: [f64; 2],
    arc: &ArcFile,
    size: Option<f64>,
    rule: &ArcRule,
) -> Result<(Vec<[f64; 2]>, Arc)> {
    let at = format!("{label}: points[{entry}]");
    let dir = sense(label, entry, &arc.direction)?;
    let c = arc.center;
    let (r0, r1) = (distance(start, c), distance(arc.to, c));
    if r0 <= rule.tol || r1 <= rule.tol {
        return Err(Error::input(format!(
            "{at}: arc centre ({}, {}) lies on the arc's start or end point",
            c[0], c[1]
        )));
    }
    if (r0 - r1).abs() > ARC_RADIUS_TOLERANCE * r0.max(r1) + rule.tol {
        return Err(Error::input(format!(
            "{at}: arc radius mismatch: the start ({}, {}) is {r0} m from the centre ({}, {}) but `to` ({}, {}) is {r1} m from it (they must agree within {} %)",
            start[0],
            start[1],
            c[0],
            c[1],
            arc.to[0],
            arc.to[1],
            ARC_RADIUS_TOLERANCE * 100.0
        )));
    }
    if distance(start, arc.to) <= rule.tol {
        return Err(Error::input(format!(
            "{at}: the arc ends where it starts ({}, {}); a full circle is written `circle = {{ center, radius }}`",
            start[0], start[1]
        )));
    }
    let a0 = (start[1] - c[1]).atan2(start[0] - c[0]);
    let a1 = (arc.to[1] - c[1]).atan2(arc.to[0] - c[0]);
    let sweep = (dir * (a1 - a0)).rem_euclid(2.0 * PI);
    let n = arc_segments(&at, r0.max(r1), sweep, arc.segments, size, rule.max_area)?;
    let inner = (1..n)
        .map(|j| {
            let t = j as f64 / n as f64;
            let a = a0 + dir * sweep * t;
            let rr = r0 + (r1 - r0) * t;
            [c[0] + rr * a.cos(), c[1] + rr * a.sin()]
        })
        .collect();
    let info = Arc {
        written_segment,
        center: c,
        radius: r0,
        angle_deg: sweep.to_degrees(),
        segments: n,
    };
    Ok((inner, info))
}

/// Chord count of an arc of radius `r` sweeping `sweep` radians: `given`, else
/// ⌈N·θ/2π⌉ with N the circle rule's count for a full circle (raised to ⌈2πr/size⌉ when the
/// arc's boundary has a `size`), at least 1.
fn arc_segments(
    at: &str,
    r: f64,
    sweep: f64,
    given: Option<usize>,
    size: Option<f64>,
    max_area: f64,
) -> Result<usize> {
    if let Some(n) = given {
        if !(1..=MAX_CIRCLE_SEGMENTS).contains(&n) {
            return Err(Error::input(format!(
                "{at}: arc segments = {n} must lie in 1..={MAX_CIRCLE_SEGMENTS}"
            )));
        }
        return Ok(n);
    }
    let mut full = circle_segments(r, max_area, None) as f64;
    if let Some(s) = size {
        full = full.max((2.0 * PI * r / s).ceil());
    }
    let n = (full * sweep / (2.0 * PI)).ceil().max(1.0);
    if n.is_nan() || n > MAX_CIRCLE_SEGMENTS as f64 {
        return Err(Error::input(format!(
            "{at}: the arc would have {n} chords (from max_area or the boundary's size), above the limit of {MAX_CIRCLE_SEGMENTS}; give the arc `segments`, or raise max_area or the boundary's size"
        )));
    }
    Ok(n as usize)
}

/// The ring's outline sketched for defaults and pre-checks (before validation): the vertices
/// with each arc drawn with 64 chords per full turn; nothing for a circle or bad entries.
pub(super) fn sketch(r: &RingFile) -> Vec<[f64; 2]> {
    let Ok(w) = written_ring("", r, 0.0) else {
        return Vec::new();
    };
    let m = w.vertices.len();
    let mut out = Vec::with_capacity(m);
    for k in 0..m {
        let start = w.vertices[k];
        out.push(start);
        if let Some((_, arc)) = &w.arcs[k] {
            let c = arc.center;
            let dir = if arc.direction == "cw" { -1.0 } else { 1.0 };
            let a0 = (start[1] - c[1]).atan2(start[0] - c[0]);
            let a1 = (arc.to[1] - c[1]).atan2(arc.to[0] - c[0]);
            let sweep = (dir * (a1 - a0)).rem_euclid(2.0 * PI);
            let r = distance(start, c);
            let n = ((64.0 * sweep / (2.0 * PI)).ceil() as usize).max(1);
            for j in 1..n {
                let a = a0 + dir * sweep * j as f64 / n as f64;
                out.push([c[0] + r * a.cos(), c[1] + r * a.sin()]);
            }
        }
    }
    out
}

/// Points a written ring will hold, for the limit on all rings together: its entries plus, per
/// arc, its `segments` or the circle rule's count for a full circle of its radius.
pub(super) fn written_point_count(r: &RingFile, max_area: f64) -> usize {
    if r.rectangle.is_some() {
        return 4;
    }
    let entries = r.points.as_deref().unwrap_or(&[]);
    entries
        .iter()
        .map(|e| match e {
            PointEntry::Point(_) => 1,
            PointEntry::Arc { arc } => arc.segments.unwrap_or_else(|| {
                let r = distance(arc.to, arc.center);
                if r.is_finite() {
                    circle_segments(r, max_area, None).min(MAX_CIRCLE_SEGMENTS + 1)
                } else {
                    1
                }
            }),
        })
        .fold(0usize, usize::saturating_add)
}
