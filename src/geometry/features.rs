//! Features of the segment set that limit what a mesh can resolve, found before meshing:
//! corners where fixed boundaries of different temperatures meet (the temperature jumps there)
//! and places where two pieces that share no vertex come closer than the mesher resolves
//! (features thinner than the resolution). Both become warnings of the geometry stage, so
//! `check`, `mesh` and `solve` print them.

use super::{Classifier, Piece, Zone};
use crate::geom::index::{BoxIndex, inflate, segment_bbox};
use crate::geom::{self, Point};
use crate::model::{BoundaryKind, Ring, Section};
use serde::Serialize;
use std::f64::consts::PI;

/// Pieces closer than this factor times the section's diameter (the diagonal of the outline's
/// bounding box) without sharing a vertex are reported as thinner than the resolution. The
/// mesher leaves triangles below (10⁻⁶ × the diagonal)² in area unrefined, so a feature
/// within a few of those lengths gets slivers (or very many triangles).
pub const THIN_FEATURE_FACTOR: f64 = 1e-5;
/// At most this many thin places are named in the warning (the thinnest first).
const THIN_REPORTED: usize = 5;

/// A vertex of the section boundary where fixed boundaries of different temperatures meet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct JumpCorner {
    /// The vertex, m.
    pub at: Point,
    /// Boundary ids before and after the vertex (counter-clockwise around the section).
    pub boundaries: [usize; 2],
    /// Their fixed temperatures, °C.
    pub temperatures: [f64; 2],
    /// The section's angle at the vertex (the wedge the material fills), radians.
    pub angle: f64,
    /// Conductivity of the material in the wedge, W/(m·K) (`None` if it could not be found).
    pub conductivity: Option<f64>,
}

impl JumpCorner {
    /// Growth of each boundary's heat flow per halving of the mesh size near the corner,
    /// k·|ΔT|·ln 2/α, W/m: the potential of a wedge with two Dirichlet values is
    /// T = T1 + (T2 − T1)·θ/α, whose normal flux k·ΔT/(α·r) integrates to k·ΔT/α·ln(L/h)
    /// along each edge.
    pub fn flow_growth_per_halving(&self) -> Option<f64> {
        let dt = (self.temperatures[1] - self.temperatures[0]).abs();
        self.conductivity.map(|k| k * dt * 2f64.ln() / self.angle)
    }
}

/// A place where two pieces that share no vertex come closer than the resolution.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ThinFeature {
    /// The midpoint of the shortest connection between the two pieces, m.
    pub at: Point,
    /// The distance between the pieces, m.
    pub thickness: f64,
}

/// The fixed temperature of a boundary id, if it is a fixed boundary.
fn fixed_temperature(section: &Section, b: Option<usize>) -> Option<(usize, f64)> {
    let id = b?;
    match section.boundaries[id].kind {
        BoundaryKind::Fixed { temperature } => Some((id, temperature)),
        _ => None,
    }
}

/// Angle from direction `u` counter-clockwise to direction `v`, in (0, 2π].
fn ccw_angle(u: Point, v: Point) -> f64 {
    let a = (u[0] * v[1] - u[1] * v[0]).atan2(u[0] * v[0] + u[1] * v[1]);
    if a <= 0.0 { a + 2.0 * PI } else { a }
}

/// Jump corners of one ring; `hole` rings have the section outside them.
fn ring_corners(
    section: &Section,
    classifier: &Classifier,
    zone_material: &[usize],
    ring: &Ring,
    hole: bool,
    out: &mut Vec<JumpCorner>,
) {
    let n = ring.len();
    for i in 0..n {
        let prev = (i + n - 1) % n;
        let (Some((b0, t0)), Some((b1, t1))) = (
            fixed_temperature(section, ring.edge_boundary[prev]),
            fixed_temperature(section, ring.edge_boundary[i]),
        ) else {
            continue;
        };
        if t0 == t1 {
            continue;
        }
        let (p, c, q) = (ring.points[prev], ring.points[i], ring.points[(i + 1) % n]);
        let u = [q[0] - c[0], q[1] - c[1]];
        let v = [p[0] - c[0], p[1] - c[1]];
        let inner = ccw_angle(u, v);
        let angle = if hole { 2.0 * PI - inner } else { inner };
        // A point just inside the wedge, on its bisector, tells the material there.
        let start = if hole { v } else { u };
        let len = (start[0].hypot(start[1])).max(f64::MIN_POSITIVE);
        let (s, co) = (angle / 2.0).sin_cos();
        let dir = [
            (start[0] * co - start[1] * s) / len,
            (start[0] * s + start[1] * co) / len,
        ];
        let eps = 1e-6 * section.diameter();
        let probe = [c[0] + eps * dir[0], c[1] + eps * dir[1]];
        let zone: Zone = classifier.zone(probe);
        let conductivity =
            zone.map(|z| section.materials[zone_material[z]].conductivity.effective());
        out.push(JumpCorner {
            at: c,
            boundaries: [b0, b1],
            temperatures: [t0, t1],
            angle,
            conductivity,
        });
    }
}

/// Every vertex of the outline and the holes where two fixed boundaries of different
/// temperatures meet, in ring order (outline first).
pub(super) fn jump_corners(
    section: &Section,
    classifier: &Classifier,
    zone_material: &[usize],
) -> Vec<JumpCorner> {
    let mut out = Vec::new();
    ring_corners(
        section,
        classifier,
        zone_material,
        &section.outline,
        false,
        &mut out,
    );
    for h in &section.holes {
        ring_corners(section, classifier, zone_material, h, true, &mut out);
    }
    out
}

/// The warning for a jump corner: where, the temperatures, and what it does to heat flows.
pub fn jump_corner_warning(section: &Section, c: &JumpCorner) -> String {
    let [a, b] = c.boundaries;
    let growth = match c.flow_growth_per_halving() {
        Some(g) => format!(" (here about {g:.3e} W/m per halving)"),
        None => String::new(),
    };
    format!(
        "fixed boundaries \"{}\" ({} °C) and \"{}\" ({} °C) meet at {} (section angle {:.1}°): the node there takes the mean temperature, and each boundary's heat flow grows like k·ΔT/α·ln(1/h) without bound as the mesh is refined{growth}; only the sum of their heat flows is meaningful",
        section.boundaries[a].name,
        c.temperatures[0],
        section.boundaries[b].name,
        c.temperatures[1],
        geom::format_point(c.at),
        c.angle.to_degrees()
    )
}

/// Shortest distance between two segments that do not cross, and the midpoint of the
/// shortest connection.
fn segment_distance(a: [Point; 2], b: [Point; 2]) -> (f64, Point) {
    let mut best = (f64::INFINITY, a[0]);
    for (s, t) in [(a, b), (b, a)] {
        for p in t {
            let (u, d) = geom::project(s[0], s[1], p);
            if d < best.0 {
                best = (d, geom::lerp(p, geom::lerp(s[0], s[1], u), 0.5));
            }
        }
    }
    best
}

/// Places where two pieces sharing no vertex come closer than `limit`: the closest pair of
/// each piece with a later one, the thinnest first (ties in piece order), nearby reports
/// merged.
pub(super) fn thin_features(vertices: &[Point], pieces: &[Piece], limit: f64) -> Vec<ThinFeature> {
    let seg = |p: &Piece| [vertices[p.v[0]], vertices[p.v[1]]];
    let index = BoxIndex::new(pieces.iter().map(|p| {
        let [a, b] = seg(p);
        segment_bbox(a, b)
    }));
    let mut near = Vec::new();
    let mut found = Vec::new();
    for (i, p) in pieces.iter().enumerate() {
        let [a, b] = seg(p);
        index.meeting(inflate(segment_bbox(a, b), limit), &mut near);
        for &j in near.iter().filter(|&&j| j > i) {
            let q = &pieces[j];
            if p.v.iter().any(|v| q.v.contains(v)) {
                continue;
            }
            let (d, at) = segment_distance([a, b], seg(q));
            if d < limit {
                found.push(ThinFeature { at, thickness: d });
            }
        }
    }
    found.sort_by(|x, y| x.thickness.total_cmp(&y.thickness));
    let mut out: Vec<ThinFeature> = Vec::new();
    for f in found {
        if !out
            .iter()
            .any(|o| geom::distance(o.at, f.at) <= 10.0 * limit)
        {
            out.push(f);
        }
    }
    out
}

/// The warning for thin features: the thinnest places and what they do to the mesh.
pub fn thin_feature_warning(features: &[ThinFeature], limit: f64) -> String {
    let places: Vec<String> = features
        .iter()
        .take(THIN_REPORTED)
        .map(|f| {
            format!(
                "{:.3e} m thick at {}",
                f.thickness,
                geom::format_point(f.at)
            )
        })
        .collect();
    let more = if features.len() > THIN_REPORTED {
        format!(" and {} more", features.len() - THIN_REPORTED)
    } else {
        String::new()
    };
    format!(
        "features thinner than the resolution ({limit:.3e} m, {THIN_FEATURE_FACTOR:e} × the section's diagonal): {}{more}; the mesh there has slivers below the angle limit (or very many triangles) whatever the input angles; widen or remove these features",
        places.join(", ")
    )
}
