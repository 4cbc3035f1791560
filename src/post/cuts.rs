//! Heat flow across cuts (`[[cuts]]`), computed from the discrete field so that it is
//! conservative: the flow across a cut is the sum, over the mesh edges the cut crosses, of
//! the conduction coupling of the edge's two nodes,
//!
//! ```text
//! Q = Σ_e Σ_(i,j) s_ij · K^e_ij · (T_i − T_j)
//! ```
//!
//! over every triangle `e` and its edges (i, j), with `s_ij` the net number of times the cut
//! crosses edge i → j from left to right (+1), right to left (−1) or not at all (0), and
//! `K^e` the element conduction matrix. For a cut that divides the section into two parts
//! this is exactly the heat entering the part on the cut's left through the element
//! couplings — the nodal balance of that part — so a cut through a one-dimensional wall gives
//! the boundary heat flow, and a closed cut around a pipe gives the pipe's heat flow, to
//! round-off. Sign: positive when heat crosses from the right of the direction of travel to its
//! left (so a closed counter-clockwise cut gives the heat flowing into the area it encloses).
//! A mesh node exactly on the cut counts as lying on its left. Exact orientation predicates
//! decide every side.
//!
//! The length of the cut inside the section (material, not holes) is measured on the
//! section's rings; parts outside carry no flow and are reported as skipped length.

use crate::fem::{Conductivity, TriangleGeometry};
use crate::geom::{self, Point};
use crate::mesh::Mesh;
use crate::model::{Cut, Section};
use serde::Serialize;

/// The heat flow across one cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CutResult {
    /// Cut name.
    pub name: String,
    /// True for a closed cut (last point = first).
    pub closed: bool,
    /// Length of the polyline, m.
    pub length: f64,
    /// Length of the polyline inside the section's material, m.
    pub inside_length: f64,
    /// W per metre of depth, positive from the right of the direction of travel to the left.
    pub heat_flow: f64,
    /// Number of mesh edges the cut crosses.
    pub crossed_edges: usize,
}

impl CutResult {
    /// Length of the polyline outside the section or inside holes, m.
    pub fn skipped_length(&self) -> f64 {
        (self.length - self.inside_length).max(0.0)
    }
}

/// The flows across every cut of the section, in file order; warnings for cuts that lie
/// outside the section or end inside its material (the flow then counts only the edges
/// crossed, not a division of the section).
pub fn cut_flows(
    section: &Section,
    mesh: &Mesh,
    conductivity: &impl Fn(usize) -> Conductivity,
    temperature: &[f64],
    warnings: &mut Vec<String>,
) -> Vec<CutResult> {
    section
        .cuts
        .iter()
        .map(|cut| {
            let (heat_flow, crossed_edges) = flow_across(cut, mesh, conductivity, temperature);
            let inside_length = inside_length(section, cut);
            let result = CutResult {
                name: cut.name.clone(),
                closed: cut.closed,
                length: cut.length(),
                inside_length,
                heat_flow,
                crossed_edges,
            };
            cut_warnings(section, cut, &result, warnings);
            result
        })
        .collect()
}

/// Warnings about a cut: entirely outside the material, or an open cut ending inside it.
fn cut_warnings(section: &Section, cut: &Cut, r: &CutResult, warnings: &mut Vec<String>) {
    if r.inside_length == 0.0 || r.crossed_edges == 0 {
        warnings.push(format!(
            "cut \"{}\" crosses no part of the meshed section; its heat flow is 0",
            cut.name
        ));
        return;
    }
    if cut.closed {
        return;
    }
    let last = cut.points.len() - 1;
    for (which, p) in [("starts", cut.points[0]), ("ends", cut.points[last])] {
        if in_material(section, p) {
            warnings.push(format!(
                "cut \"{}\" {which} inside the material at {}: it does not divide the section, so its heat flow counts only the mesh edges it crosses (extend it to the boundary or close it)",
                cut.name,
                geom::format_point(p)
            ));
        }
    }
}

/// True when `p` lies strictly inside the outline and outside every hole.
fn in_material(section: &Section, p: Point) -> bool {
    geom::point_in_ring(&section.outline.points, p)
        && !section
            .holes
            .iter()
            .any(|h| geom::point_in_ring(&h.points, p))
}

/// Σ s_ij K^e_ij (T_i − T_j) over the triangles near the cut, and the number of edges crossed
/// (interior edges counted once).
fn flow_across(
    cut: &Cut,
    mesh: &Mesh,
    conductivity: &impl Fn(usize) -> Conductivity,
    temperature: &[f64],
) -> (f64, usize) {
    let bb = geom::bbox(cut.points.iter().copied());
    let mut flow = 0.0;
    let mut crossed = Vec::new();
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let p = ids.map(|i| mesh.nodes[i]);
        if !overlaps(bb, geom::bbox(p)) {
            continue;
        }
        let mut ke = None;
        for (a, b) in [(0, 1), (1, 2), (2, 0)] {
            let s = net_crossings(cut, p[a], p[b]);
            if s == 0 {
                continue;
            }
            crossed.push((ids[a].min(ids[b]), ids[a].max(ids[b])));
            let k = ke
                .get_or_insert_with(|| TriangleGeometry::of(mesh, t).conduction(&conductivity(t)));
            flow += f64::from(s) * k[(a, b)] * (temperature[ids[a]] - temperature[ids[b]]);
        }
    }
    // An interior edge is seen from both of its triangles.
    crossed.sort_unstable();
    crossed.dedup();
    (flow, crossed.len())
}

/// True when two bounding boxes `[x_min, y_min, x_max, y_max]` overlap (touching counts).
fn overlaps(a: [f64; 4], b: [f64; 4]) -> bool {
    a[0] <= b[2] && b[0] <= a[2] && a[1] <= b[3] && b[1] <= a[3]
}

/// Net signed number of crossings of the cut by the segment p → q: +1 for each cut segment
/// that p lies left of (or on) and q strictly right of, −1 for the reverse, counted only where
/// the segment's line separates the cut segment's ends (half-open at the end that lies on it,
/// so a crossing at a cut vertex counts once).
fn net_crossings(cut: &Cut, p: Point, q: Point) -> i32 {
    let mut s = 0;
    for i in 0..cut.segments() {
        let (a, b) = cut.segment(i);
        let p_left = geom::orient(a, b, p) >= 0.0;
        let q_left = geom::orient(a, b, q) >= 0.0;
        if p_left == q_left {
            continue;
        }
        if (geom::orient(p, q, a) > 0.0) != (geom::orient(p, q, b) > 0.0) {
            s += if p_left { 1 } else { -1 };
        }
    }
    s
}

/// Length of the cut inside the section's material, m: each cut segment is split where it
/// crosses a ring segment, and each piece counts when its midpoint lies in the material.
fn inside_length(section: &Section, cut: &Cut) -> f64 {
    let rings = std::iter::once(&section.outline).chain(&section.holes);
    let ring_segments: Vec<(Point, Point)> = rings
        .flat_map(|r| (0..r.len()).map(move |i| r.segment(i)))
        .collect();
    let mut total = 0.0;
    for i in 0..cut.segments() {
        let (a, b) = cut.segment(i);
        let mut ts = vec![0.0, 1.0];
        for &(c, d) in &ring_segments {
            if let Some(t) = crossing_parameter(a, b, c, d) {
                ts.push(t);
            }
        }
        ts.sort_by(f64::total_cmp);
        let len = geom::distance(a, b);
        for w in ts.windows(2) {
            if w[1] > w[0] && in_material(section, geom::lerp(a, b, 0.5 * (w[0] + w[1]))) {
                total += (w[1] - w[0]) * len;
            }
        }
    }
    total
}

/// The parameter t ∈ [0, 1] along a → b where it meets segment c → d, if they meet at one
/// point.
fn crossing_parameter(a: Point, b: Point, c: Point, d: Point) -> Option<f64> {
    let r = [b[0] - a[0], b[1] - a[1]];
    let s = [d[0] - c[0], d[1] - c[1]];
    let den = r[0] * s[1] - r[1] * s[0];
    if den == 0.0 {
        return None;
    }
    let w = [c[0] - a[0], c[1] - a[1]];
    let t = (w[0] * s[1] - w[1] * s[0]) / den;
    let u = (w[0] * r[1] - w[1] * r[0]) / den;
    ((0.0..=1.0).contains(&t) && (0.0..=1.0).contains(&u)).then_some(t)
}
