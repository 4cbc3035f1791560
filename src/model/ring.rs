//! Rings as validated: a written ring (points or circle, with its boundary names) becomes a
//! counter-clockwise [`Ring`] without repeated points, each segment keeping its name.

use super::shapes::{ArcRule, Expanded, expand, sketch, written_ring};
use super::suggest::{did_you_mean, known_list};
use super::validate::finite_point;
use super::{BoundaryFile, Circle, MAX_CIRCLE_SEGMENTS, MAX_COORD, Ring, RingFile};
use crate::error::{Error, Result};
use crate::geom::{distance, polygon_area};
use std::collections::BTreeMap;

/// Number of segments of a circle: N = max(24, ⌈2πr/ℓ⌉), ℓ = (4·max_area/√3)^½ (the side of
/// an equilateral triangle of area `max_area`), unless given.
pub fn circle_segments(radius: f64, max_area: f64, given: Option<usize>) -> usize {
    if let Some(n) = given {
        return n;
    }
    let l = (4.0 * max_area / 3f64.sqrt()).sqrt();
    let n = (2.0 * std::f64::consts::PI * radius / l).ceil();
    if n.is_finite() && n > 24.0 {
        n.min(1.0e7) as usize
    } else {
        24
    }
}

/// Segment count of a ring written as a circle (`None` for a polygon): `segments` if given,
/// else [`circle_segments`] raised to ⌈2πr/size⌉ when the circle's boundary has a `size`.
pub fn ring_circle_segments(
    r: &RingFile,
    boundaries: &BTreeMap<String, BoundaryFile>,
    max_area: f64,
) -> Option<usize> {
    let c = r.circle.as_ref()?;
    let mut n = circle_segments(c.radius, max_area, c.segments);
    let size = r
        .boundary
        .as_ref()
        .and_then(|b| boundaries.get(b))
        .and_then(|b| b.size)
        .filter(|s| s.is_finite() && *s > 0.0);
    if let (Some(s), None) = (size, c.segments) {
        let k = (2.0 * std::f64::consts::PI * c.radius / s).ceil();
        if k.is_finite() && k as usize > n {
            n = (k as usize).min(1_000_000);
        }
    }
    Some(n)
}

/// Raw area of a ring as written (|shoelace| of the points with arcs sketched, or πr²), for
/// the default size.
pub(super) fn raw_area(r: &RingFile) -> f64 {
    if let Some(c) = &r.circle {
        std::f64::consts::PI * c.radius * c.radius
    } else {
        let p = sketch(r);
        if p.len() < 3 {
            0.0
        } else {
            polygon_area(&p).abs()
        }
    }
}

/// What building a ring needs to know about the rest of the model.
#[derive(Clone, Copy)]
pub(super) struct RingContext<'a> {
    /// The boundaries as written (for circle sizes and suggestions).
    pub boundaries: &'a BTreeMap<String, BoundaryFile>,
    /// Boundary name → id.
    pub boundary_ids: &'a BTreeMap<String, usize>,
    /// Global max_area, m² (for circle segment counts).
    pub max_area: f64,
    /// Distance below which two points are the same point, m.
    pub tol: f64,
    /// Whether the ring may name boundaries (outline, holes) or not (regions).
    pub allow_names: bool,
}

impl RingContext<'_> {
    /// Boundary id of `name` ("" = unnamed), or an error naming `what` and the defined names.
    fn lookup(&self, name: &str, what: &str) -> Result<Option<usize>> {
        if name.is_empty() {
            return Ok(None);
        }
        match self.boundary_ids.get(name) {
            Some(&id) => Ok(Some(id)),
            None => Err(Error::input(format!(
                "{what} names boundary \"{}\", which is not defined under [boundaries] (defined: {}){}",
                crate::error::printable(name),
                known_list(self.boundaries.keys()),
                did_you_mean(name, self.boundaries.keys())
            ))),
        }
    }
}

/// A ring's points and segment data while it is being cleaned up.
struct Segments {
    points: Vec<[f64; 2]>,
    edge_boundary: Vec<Option<usize>>,
    written_segment: Vec<usize>,
}

/// Validate a written ring and build it: counter-clockwise, repeats dropped, names kept.
pub(super) fn build_ring(
    label: &str,
    r: &RingFile,
    ctx: &RingContext,
    warnings: &mut Vec<String>,
) -> Result<Ring> {
    check_ring_keys(label, r, ctx)?;
    let (expanded, circle) = match &r.circle {
        Some(c) => {
            let (points, circle) = circle_points(label, r, c, ctx)?;
            let names = segment_names(label, r, ctx, points.len())?;
            let written = (0..points.len()).collect();
            let e = Expanded {
                points,
                names,
                written,
                arcs: Vec::new(),
            };
            (e, circle)
        }
        None => {
            let w = written_ring(label, r, ctx.tol)?;
            let names = segment_names(label, r, ctx, w.vertices.len())?;
            let name_of = |k: usize| match (&r.edges, &r.boundary) {
                (Some(e), _) => e.get(k).cloned().unwrap_or_default(),
                (None, Some(b)) => b.clone(),
                (None, None) => String::new(),
            };
            let rule = ArcRule {
                boundaries: ctx.boundaries,
                max_area: ctx.max_area,
                tol: ctx.tol,
            };
            (expand(label, &w, &names, &name_of, &rule)?, None)
        }
    };
    let arcs = expanded.arcs.clone();
    let mut segs = drop_repeats(label, r, &expanded, ctx.tol, warnings);
    if segs.points.len() < 3 {
        return Err(Error::input(format!(
            "{label}: a ring needs at least 3 distinct points, found {}",
            segs.points.len()
        )));
    }
    check_self_touch(label, &segs, ctx.tol)?;
    check_area(label, &segs.points, ctx.tol)?;
    if polygon_area(&segs.points) < 0.0 {
        reverse(&mut segs);
    }
    Ok(Ring {
        label: label.to_string(),
        points: segs.points,
        edge_boundary: segs.edge_boundary,
        written_segment: segs.written_segment,
        circle,
        arcs,
    })
}

/// Exactly one of `points`/`circle`/`rectangle`, at most one of `edges`/`boundary`, no names
/// on regions.
fn check_ring_keys(label: &str, r: &RingFile, ctx: &RingContext) -> Result<()> {
    let given: Vec<&str> = [
        ("points", r.points.is_some()),
        ("circle", r.circle.is_some()),
        ("rectangle", r.rectangle.is_some()),
    ]
    .iter()
    .filter(|(_, g)| *g)
    .map(|(k, _)| *k)
    .collect();
    match given.len() {
        0 => {
            return Err(Error::input(format!(
                "{label}: missing `points`, `circle`, `rectangle` or `points_file`"
            )));
        }
        1 => {}
        _ => {
            return Err(Error::input(format!(
                "{label}: give one of `points`, `circle` and `rectangle`, not {}",
                given.join(" and ")
            )));
        }
    }
    if r.edges.is_some() && r.boundary.is_some() {
        return Err(Error::input(format!(
            "{label}: give either `edges` or `boundary`, not both"
        )));
    }
    if !ctx.allow_names && (r.edges.is_some() || r.boundary.is_some()) {
        return Err(Error::input(format!(
            "{label}: `edges`/`boundary` are not allowed on a region: region edges are material \
             interfaces; name boundary segments on the outline or on holes"
        )));
    }
    Ok(())
}

/// The inscribed polygon of a written circle, after checking centre, radius and segments.
fn circle_points(
    label: &str,
    r: &RingFile,
    c: &super::CircleFile,
    ctx: &RingContext,
) -> Result<(Vec<[f64; 2]>, Option<Circle>)> {
    finite_point(c.center, &format!("{label}: circle center"))?;
    if !c.radius.is_finite() || c.radius <= 0.0 {
        return Err(Error::input(format!(
            "{label}: circle radius {} must be a positive finite number (m)",
            c.radius
        )));
    }
    if c.radius > MAX_COORD {
        return Err(Error::input(format!(
            "{label}: circle radius {} m is outside the accepted range (<= {MAX_COORD:e} m)",
            c.radius
        )));
    }
    if let Some(n) = c.segments
        && !(3..=MAX_CIRCLE_SEGMENTS).contains(&n)
    {
        return Err(Error::input(format!(
            "{label}: circle segments = {n} must lie in 3..={MAX_CIRCLE_SEGMENTS}"
        )));
    }
    if r.edges.is_some() {
        return Err(Error::input(format!(
            "{label}: `edges` needs `points`; name a circle's boundary with `boundary = \"...\"`"
        )));
    }
    let n = ring_circle_segments(r, ctx.boundaries, ctx.max_area).unwrap_or(24);
    if n > MAX_CIRCLE_SEGMENTS {
        return Err(Error::input(format!(
            "{label}: the circle would have {n} segments (from max_area or the boundary's size), above the limit of {MAX_CIRCLE_SEGMENTS}; give `segments`, or raise max_area or the boundary's size"
        )));
    }
    let pts = (0..n)
        .map(|k| {
            let a = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
            [
                c.center[0] + c.radius * a.cos(),
                c.center[1] + c.radius * a.sin(),
            ]
        })
        .collect();
    let circle = Circle {
        center: c.center,
        radius: c.radius,
        segments: n,
    };
    Ok((pts, Some(circle)))
}

/// Boundary id per written segment, from `edges` or the uniform `boundary`.
fn segment_names(
    label: &str,
    r: &RingFile,
    ctx: &RingContext,
    n: usize,
) -> Result<Vec<Option<usize>>> {
    let uniform = match &r.boundary {
        Some(b) => ctx.lookup(b, &format!("{label}: boundary"))?,
        None => None,
    };
    match &r.edges {
        Some(edges) => {
            if edges.len() != n {
                return Err(Error::input(format!(
                    "{label}: `edges` has {} names but the ring has {n} segments (one per point, the last closing the ring; a last point repeating the first adds none)",
                    edges.len()
                )));
            }
            edges
                .iter()
                .enumerate()
                .map(|(i, e)| ctx.lookup(e, &format!("{label}: edges[{i}]")))
                .collect()
        }
        None => Ok(vec![uniform; n]),
    }
}

/// Drop zero-length segments (a point repeated consecutively), with a warning each.
fn drop_repeats(
    label: &str,
    r: &RingFile,
    e: &Expanded,
    tol: f64,
    warnings: &mut Vec<String>,
) -> Segments {
    let n = e.points.len();
    let mut segs = Segments {
        points: Vec::new(),
        edge_boundary: Vec::new(),
        written_segment: Vec::new(),
    };
    for i in 0..n {
        let (p, q) = (e.points[i], e.points[(i + 1) % n]);
        if n > 1 && distance(p, q) <= tol {
            let k = e.written[i];
            let name = r
                .edges
                .as_ref()
                .and_then(|names| names.get(k).cloned())
                .filter(|s| !s.is_empty());
            warnings.push(format!(
                "{label}: point {} repeats point {k} at ({}, {}); dropped with its zero-length segment {k}{}",
                e.written[(i + 1) % n],
                q[0],
                q[1],
                name.map(|s| format!(" (named \"{s}\")")).unwrap_or_default()
            ));
            continue;
        }
        segs.points.push(p);
        segs.edge_boundary.push(e.names[i]);
        segs.written_segment.push(e.written[i]);
    }
    segs
}

/// A vertex repeated non-consecutively makes the ring touch itself.
fn check_self_touch(label: &str, segs: &Segments, tol: f64) -> Result<()> {
    let points = &segs.points;
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|&a, &b| {
        points[a][0]
            .total_cmp(&points[b][0])
            .then(points[a][1].total_cmp(&points[b][1]))
    });
    for w in 0..order.len() {
        let a = order[w];
        for &b in order.iter().skip(w + 1) {
            if points[b][0] - points[a][0] > tol {
                break;
            }
            if distance(points[a], points[b]) <= tol {
                let (i, j) = (a.min(b), a.max(b));
                return Err(Error::input(format!(
                    "{label}: point {} repeats point {} at ({}, {}) (a ring may not touch itself)",
                    segs.written_segment[j], segs.written_segment[i], points[i][0], points[i][1]
                )));
            }
        }
    }
    Ok(())
}

/// All points on one line: no area. (A zero net area with points off the line is a ring that
/// crosses itself; the geometry stage names the crossing segments.)
fn check_area(label: &str, points: &[[f64; 2]], tol: f64) -> Result<()> {
    let p0 = points[0];
    let far = points
        .iter()
        .copied()
        .max_by(|a, b| distance(*a, p0).total_cmp(&distance(*b, p0)))
        .unwrap_or(p0);
    let base = distance(far, p0);
    let off_line = points.iter().any(|p| {
        let cross = (far[0] - p0[0]) * (p[1] - p0[1]) - (far[1] - p0[1]) * (p[0] - p0[0]);
        cross.abs() / base > tol
    });
    if off_line {
        Ok(())
    } else {
        Err(Error::input(format!(
            "{label}: ring has no area (its points are collinear)"
        )))
    }
}

/// Reverse a clockwise ring, each segment keeping its name and written index.
fn reverse(segs: &mut Segments) {
    let m = segs.points.len();
    segs.points.reverse();
    let eb = segs.edge_boundary.clone();
    let ws = segs.written_segment.clone();
    for j in 0..m {
        let k = (2 * m - 2 - j) % m;
        segs.edge_boundary[j] = eb[k];
        segs.written_segment[j] = ws[k];
    }
}
