//! Grid model: an independent 5-point finite-difference model of a section on a uniform,
//! vertex-centred grid, for cross-checking the element model.
//!
//! The grid has spacing h and its origin at the minimum corner of the outline's bounding box;
//! grid point (i, j) sits at `origin + (i·h, j·h)`.
//!
//! * **Nodes** are the grid points inside the section or within a tolerance (1e-9·h) of its
//!   boundary (outline and holes). A node on a fixed segment is a fixed node; where several
//!   fixed boundaries meet (a corner), it takes the arithmetic mean of their temperatures.
//! * **Cells** (the squares between grid points) carry the material found at their centre.
//! * **Control volumes.** Each node owns the rectangle reaching half-way along each of its four
//!   arms. An arm is *regular* (length h, to the neighbouring node), *cut* (length θ·h, ending
//!   where it meets a fixed off-grid boundary — the Shortley–Weller unequal arm), or *absent*
//!   (it leaves the section at once: the node is on a grid-aligned edge). The four quarters of
//!   the control volume take the material of their cell. The conductance of the face an arm
//!   crosses is Σ k·(half face length) / (arm length) over the two quarters beside it: the mean
//!   of the two cells' k for an interior link, half a cell's k along a grid-aligned edge. With
//!   uniform k and no cut arm the row is the plain 5-point stencil; with cut arms it is exactly
//!   the Shortley–Weller unequal-arm difference (Shortley & Weller 1938, J. Appl. Phys. 9, 334)
//!   multiplied by the control-volume area.
//! * **Sources** add q·(quarter area) per in-section quarter.
//! * **Edges.** Half an arm that lies along a boundary segment is that boundary's share of the
//!   node: flux q·(share), convection h_c·(share)·(T∞ − T). Insulated edges add nothing.
//!   Only fixed edges may lie off the grid lines; every other edge (including unnamed segments,
//!   which are insulated) must run along grid lines between grid points, or the model is refused.
//!
//! The Shortley–Weller rows are not symmetric, so the system is solved by sparse LU.

use crate::error::{Error, Result};
use crate::geom;
use crate::geometry::{self, Classifier};
use crate::model::{BoundaryKind, Section};
use std::collections::BTreeMap;

/// Largest number of grid points (over the outline's bounding box) accepted.
pub const MAX_GRID_POINTS: usize = 4_000_000;

/// Relative solver residual above which the solve fails.
pub const RESIDUAL_TOLERANCE: f64 = 1e-9;

const NONE: u32 = u32::MAX;
/// East, west, north, south.
const DIRS: [(i64, i64); 4] = [(1, 0), (-1, 0), (0, 1), (0, -1)];
const E: usize = 0;
const W: usize = 1;
const N: usize = 2;
const S: usize = 3;

/// What a grid node is.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub enum NodeKind {
    /// Strictly inside the section.
    Interior,
    /// On a grid-aligned insulated, flux or convection edge (or an unnamed one).
    Edge,
    /// On a fixed edge: the temperature is imposed.
    Fixed { temperature: f64 },
}

/// One node of the grid model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridNode {
    pub i: usize,
    pub j: usize,
    /// m
    pub x: f64,
    /// m
    pub y: f64,
    pub kind: NodeKind,
}

/// A half arm that lies along the section boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
struct EdgeShare {
    /// Boundary id; `None` = unnamed segment (insulated).
    boundary: Option<usize>,
    /// m
    length: f64,
}

/// An arm cut by a fixed boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Cut {
    boundary: usize,
    temperature: f64,
    /// Fraction of h at which the arm meets the boundary.
    theta: f64,
}

/// The finite-difference model of a section.
#[derive(Debug, Clone)]
pub struct GridModel {
    /// Grid spacing h, m.
    pub spacing: f64,
    /// Position of grid point (0, 0), m: the minimum corner of the outline's bounding box.
    pub origin: [f64; 2],
    /// Number of grid points along x and y.
    pub nx: usize,
    pub ny: usize,
    /// The nodes, ordered by (j, i).
    pub nodes: Vec<GridNode>,
    /// Nodes with at least one Shortley–Weller (cut) arm among the unknowns.
    pub shortley_weller_nodes: usize,
    /// Notes on the approximation (region interfaces off the grid lines, ...).
    pub warnings: Vec<String>,
    /// Boundary names and conditions, by boundary id.
    boundaries: Vec<(String, BoundaryKind)>,
    /// Node index of each grid point (index j·nx + i), `NONE` outside.
    node_at: Vec<u32>,
    /// Whether each cell (index j·(nx−1) + i) has its centre inside the section.
    pub(crate) cell_inside: Vec<bool>,
    /// Face conductance of each node's four arms, W/(m·K); 0 = absent.
    conductance: Vec<[f64; 4]>,
    /// Cut arms, by (node, direction).
    cuts: BTreeMap<(usize, usize), Cut>,
    /// Heat source of each node's control volume, W/m.
    source: Vec<f64>,
    /// Boundary shares of nodes on the boundary.
    edges: BTreeMap<usize, Vec<EdgeShare>>,
    /// For fixed nodes: the fixed boundaries they lie on (distinct ids, ascending).
    fixed_on: BTreeMap<usize, Vec<usize>>,
}

/// The solved grid model.
#[derive(Debug, Clone)]
pub struct GridSolution {
    /// °C, one per node of the model.
    pub temperature: Vec<f64>,
    /// Heat flow into the section through each named boundary, W/m, by boundary id (names in
    /// the section's order). Convection and flux boundaries: the imposed terms. Fixed
    /// boundaries: the residual of the control-volume balance of the boundary layer — fixed
    /// nodes and Shortley–Weller nodes — with each flow to a regular node taken as that node's
    /// (conservative) row sees it. This is conservative even though the Shortley–Weller rows
    /// are not.
    pub heat_flow: Vec<(String, f64)>,
    /// Total heat source, W/m.
    pub source: f64,
    /// Σ heat_flow + source, W/m: round-off for a solved system (a check of the bookkeeping).
    pub imbalance: f64,
    /// ‖A·T − b‖∞ / (‖A‖∞·‖T‖∞ + ‖b‖∞) of the solved system.
    pub residual_relative: f64,
    spacing: f64,
    origin: [f64; 2],
    nx: usize,
    ny: usize,
    node_at: Vec<u32>,
    cell_inside: Vec<bool>,
}

/// A boundary segment (outline or hole) with its owner.
#[derive(Debug, Clone, Copy)]
struct BSeg {
    a: [f64; 2],
    b: [f64; 2],
    boundary: Option<usize>,
}

/// Boundary segments bucketed by grid cell for local queries.
struct Buckets {
    ox: f64,
    oy: f64,
    h: f64,
    nx: i64,
    ny: i64,
    /// (cell key, segment), sorted.
    pairs: Vec<(usize, u32)>,
}

impl Buckets {
    fn key(&self, ci: i64, cj: i64) -> usize {
        ((ci + 1) * (self.ny + 2) + (cj + 1)) as usize
    }
    fn range(&self, lo: f64, o: f64, hi: f64, n: i64) -> (i64, i64) {
        let a = ((lo - o) / self.h).floor().clamp(-1.0, n as f64) as i64;
        let b = ((hi - o) / self.h).floor().clamp(-1.0, n as f64) as i64;
        (a, b)
    }
    fn new(segs: &[BSeg], ox: f64, oy: f64, h: f64, nx: usize, ny: usize, tol: f64) -> Self {
        let mut b = Buckets {
            ox,
            oy,
            h,
            nx: nx as i64,
            ny: ny as i64,
            pairs: Vec::new(),
        };
        for (s, seg) in segs.iter().enumerate() {
            let len = dist(seg.a, seg.b);
            let pieces = ((len / h).ceil() as usize).clamp(1, 1 << 24);
            for k in 0..pieces {
                let t0 = k as f64 / pieces as f64;
                let t1 = (k + 1) as f64 / pieces as f64;
                let p = lerp(seg.a, seg.b, t0);
                let q = lerp(seg.a, seg.b, t1);
                let (i0, i1) = b.range(p[0].min(q[0]) - tol, ox, p[0].max(q[0]) + tol, b.nx);
                let (j0, j1) = b.range(p[1].min(q[1]) - tol, oy, p[1].max(q[1]) + tol, b.ny);
                for ci in i0..=i1 {
                    for cj in j0..=j1 {
                        let key = b.key(ci, cj);
                        b.pairs.push((key, s as u32));
                    }
                }
            }
        }
        b.pairs.sort_unstable();
        b.pairs.dedup();
        b
    }
    /// Segments registered in the cells overlapping [lo, hi] (ascending, distinct).
    fn query(&self, lo: [f64; 2], hi: [f64; 2], out: &mut Vec<u32>) {
        out.clear();
        let (i0, i1) = self.range(lo[0], self.ox, hi[0], self.nx);
        let (j0, j1) = self.range(lo[1], self.oy, hi[1], self.ny);
        for ci in i0..=i1 {
            for cj in j0..=j1 {
                let key = self.key(ci, cj);
                let start = self.pairs.partition_point(|&(k, _)| k < key);
                for &(k, s) in &self.pairs[start..] {
                    if k != key {
                        break;
                    }
                    out.push(s);
                }
            }
        }
        out.sort_unstable();
        out.dedup();
    }
}

#[inline]
fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
}

#[inline]
fn lerp(a: [f64; 2], b: [f64; 2], t: f64) -> [f64; 2] {
    [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]
}

fn fmt_pt(p: [f64; 2]) -> String {
    format!("({}, {})", p[0], p[1])
}

/// Parameter t ∈ (0, 1) along the axis-parallel arm p → p + h·d at which segment s crosses it,
/// or `None` (no crossing, or s parallel to the arm).
fn arm_crossing(p: [f64; 2], d: (i64, i64), h: f64, s: &BSeg) -> Option<f64> {
    // Work in coordinates where the arm runs along axis `u` at fixed `v`.
    let (u, v) = if d.0 != 0 { (0, 1) } else { (1, 0) };
    let sign = (d.0 + d.1) as f64;
    let (av, bv) = (s.a[v] - p[v], s.b[v] - p[v]);
    if av == bv {
        return None; // parallel (or collinear: the arm runs along the segment)
    }
    if (av > 0.0 && bv > 0.0) || (av < 0.0 && bv < 0.0) {
        return None;
    }
    let f = (av / (av - bv)).clamp(0.0, 1.0);
    let cu = s.a[u] + f * (s.b[u] - s.a[u]);
    Some((cu - p[u]) * sign / h)
}

/// Build the grid model of a section at spacing h (m).
pub fn build(section: &Section, spacing: f64) -> Result<GridModel> {
    let h = spacing;
    if !h.is_finite() || h <= 0.0 {
        return Err(Error::input(format!(
            "grid model: spacing h = {h} m must be a positive finite number"
        )));
    }
    // Ring checks (crossings, holes inside the outline, ...) are those of the element model.
    geometry::build(section)?;

    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in &section.outline.points {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let (wx, wy) = (hi[0] - lo[0], hi[1] - lo[1]);
    let fx = (wx / h + 1e-9).floor() + 1.0;
    let fy = (wy / h + 1e-9).floor() + 1.0;
    let estimate = fx * fy;
    if !estimate.is_finite() || estimate > MAX_GRID_POINTS as f64 {
        return Err(Error::input(format!(
            "grid model: spacing h = {h} m gives {fx:.0} × {fy:.0} ≈ {estimate:.3e} grid points over \
             the outline's bounding box ({wx} m × {wy} m), above the limit of {MAX_GRID_POINTS}; use a \
             larger spacing"
        )));
    }
    let (nx, ny) = (fx as usize, fy as usize);
    if nx < 3 || ny < 3 {
        return Err(Error::input(format!(
            "grid model: spacing h = {h} m is too coarse for the section ({wx} m × {wy} m): the grid \
             needs at least 3 points each way, it has {nx} × {ny}"
        )));
    }
    let origin = lo;
    let scale = lo[0]
        .abs()
        .max(lo[1].abs())
        .max(hi[0].abs())
        .max(hi[1].abs());
    let tol = (1e-9 * h).max(16.0 * f64::EPSILON * scale);
    let tau = tol / h;
    let grid_point = |i: usize, j: usize| [origin[0] + i as f64 * h, origin[1] + j as f64 * h];
    let boundaries: Vec<(String, BoundaryKind)> = section
        .boundaries
        .iter()
        .map(|b| (b.name.clone(), b.kind))
        .collect();
    let fixed_temp = |b: Option<usize>| match b.map(|id| boundaries[id].1) {
        Some(BoundaryKind::Fixed { temperature }) => Some(temperature),
        _ => None,
    };

    // Boundary segments; every non-fixed one must run along a grid line between grid points.
    let on_grid = |p: [f64; 2]| {
        (0..2).all(|k| {
            let g = ((p[k] - origin[k]) / h).round() * h + origin[k];
            (g - p[k]).abs() <= tol
        })
    };
    let mut segs = Vec::new();
    for ring in std::iter::once(&section.outline).chain(section.holes.iter()) {
        for k in 0..ring.len() {
            let (a, b) = ring.segment(k);
            let boundary = ring.edge_boundary[k];
            if fixed_temp(boundary).is_none() {
                let aligned = on_grid(a)
                    && on_grid(b)
                    && ((a[0] - b[0]).abs() <= tol || (a[1] - b[1]).abs() <= tol);
                if !aligned {
                    let what = match boundary {
                        Some(id) => format!("boundary \"{}\" on {}", boundaries[id].0, ring.label),
                        None => format!(
                            "unnamed (insulated) segment {} of {}",
                            ring.written_segment[k], ring.label
                        ),
                    };
                    return Err(Error::input(format!(
                        "grid model: {what} does not lie on grid lines; only fixed edges may be \
                         off-grid (segment {} from {} to {}; grid spacing {h} m, origin {})",
                        ring.written_segment[k],
                        fmt_pt(a),
                        fmt_pt(b),
                        fmt_pt(origin)
                    )));
                }
            }
            segs.push(BSeg { a, b, boundary });
        }
    }
    let mut warnings = Vec::new();
    for r in &section.regions {
        let aligned = (0..r.ring.len()).all(|k| {
            let (a, b) = r.ring.segment(k);
            on_grid(a) && on_grid(b) && ((a[0] - b[0]).abs() <= tol || (a[1] - b[1]).abs() <= tol)
        });
        if !aligned {
            warnings.push(format!(
                "grid model: {} does not lie on grid lines; its material is taken cell by cell \
                 (at cell centres), a first-order approximation of the interface",
                r.ring.label
            ));
        }
    }
    let buckets = Buckets::new(&segs, origin[0], origin[1], h, nx, ny, tol);
    let classifier = Classifier::new(section);
    let zone_material = |z: Option<usize>| {
        z.map(|z| {
            if z == 0 {
                section.outline_material
            } else {
                section.regions[z - 1].material
            }
        })
    };
    let material_at = |p: [f64; 2]| zone_material(classifier.zone(p));

    // Cells.
    let mut cell_material = Vec::with_capacity((nx - 1) * (ny - 1));
    for j in 0..ny - 1 {
        for i in 0..nx - 1 {
            let c = grid_point(i, j);
            cell_material.push(material_at([c[0] + 0.5 * h, c[1] + 0.5 * h]));
        }
    }
    let cell = |ci: i64, cj: i64| -> Option<usize> {
        if ci < 0 || cj < 0 || ci >= nx as i64 - 1 || cj >= ny as i64 - 1 {
            None
        } else {
            cell_material[cj as usize * (nx - 1) + ci as usize]
        }
    };

    // Nodes.
    let mut near = Vec::new();
    let mut nodes = Vec::new();
    let mut node_at = vec![NONE; nx * ny];
    let mut fixed_on = BTreeMap::new();
    for j in 0..ny {
        for i in 0..nx {
            let p = grid_point(i, j);
            buckets.query(
                [p[0] - tol, p[1] - tol],
                [p[0] + tol, p[1] + tol],
                &mut near,
            );
            let mut on_boundary = false;
            let mut fixed: Vec<usize> = Vec::new();
            for &s in &near {
                let sg = &segs[s as usize];
                if geom::project(sg.a, sg.b, p).1 <= tol {
                    on_boundary = true;
                    if let (Some(id), Some(_)) = (sg.boundary, fixed_temp(sg.boundary)) {
                        fixed.push(id);
                    }
                }
            }
            let kind = if !fixed.is_empty() {
                fixed.sort_unstable();
                fixed.dedup();
                let t = fixed
                    .iter()
                    .map(|&b| fixed_temp(Some(b)).unwrap_or(0.0))
                    .sum::<f64>()
                    / fixed.len() as f64;
                fixed_on.insert(nodes.len(), fixed);
                NodeKind::Fixed { temperature: t }
            } else if on_boundary {
                NodeKind::Edge
            } else if classifier.zone(p).is_some() {
                NodeKind::Interior
            } else {
                continue;
            };
            node_at[j * nx + i] = nodes.len() as u32;
            nodes.push(GridNode {
                i,
                j,
                x: p[0],
                y: p[1],
                kind,
            });
        }
    }
    if nodes.is_empty() {
        return Err(Error::input(format!(
            "grid model: spacing h = {h} m leaves no grid point inside the section"
        )));
    }

    // Arms, control volumes, conductances, sources and edge shares.
    let mut conductance = Vec::with_capacity(nodes.len());
    let mut source = Vec::with_capacity(nodes.len());
    let mut cuts = BTreeMap::new();
    let mut edges = BTreeMap::new();
    let mut shortley_weller_nodes = 0;
    for (n, node) in nodes.iter().enumerate() {
        let p = [node.x, node.y];
        let interior = node.kind == NodeKind::Interior;
        let is_fixed = matches!(node.kind, NodeKind::Fixed { .. });
        let mut len = [0.0f64; 4];
        let mut cut: [Option<Cut>; 4] = [None; 4];
        for (d, &dir) in DIRS.iter().enumerate() {
            let q = [p[0] + dir.0 as f64 * h, p[1] + dir.1 as f64 * h];
            buckets.query(
                [p[0].min(q[0]) - tol, p[1].min(q[1]) - tol],
                [p[0].max(q[0]) + tol, p[1].max(q[1]) + tol],
                &mut near,
            );
            let mut first: Option<(f64, usize)> = None;
            for &s in &near {
                let s = s as usize;
                if let Some(t) = arm_crossing(p, dir, h, &segs[s])
                    && t > tau
                    && t < 1.0 - tau
                {
                    let better = match first {
                        None => true,
                        // At a shared vertex prefer a fixed segment, then the lower index.
                        Some((ft, fs)) => {
                            t < ft - tau
                                || ((t - ft).abs() <= tau
                                    && fixed_temp(segs[fs].boundary).is_none()
                                    && fixed_temp(segs[s].boundary).is_some())
                        }
                    };
                    if better {
                        first = Some((t, s));
                    }
                }
            }
            let (qi, qj) = (node.i as i64 + dir.0, node.j as i64 + dir.1);
            let q_node = qi >= 0
                && qj >= 0
                && (qi as usize) < nx
                && (qj as usize) < ny
                && node_at[qj as usize * nx + qi as usize] != NONE;
            if let Some((t, s)) = first {
                if !interior && material_at(lerp(p, q, 0.5 * t)).is_none() {
                    continue; // the arm leaves the section at once
                }
                match (segs[s].boundary, fixed_temp(segs[s].boundary)) {
                    (Some(b), Some(temperature)) => {
                        len[d] = t * h;
                        cut[d] = Some(Cut {
                            boundary: b,
                            temperature,
                            theta: t,
                        });
                    }
                    _ if is_fixed => {}
                    _ => {
                        return Err(Error::run(format!(
                            "grid model: internal: the arm from node {} crosses a non-fixed \
                             boundary segment between grid points",
                            fmt_pt(p)
                        )));
                    }
                }
            } else if q_node {
                len[d] = h;
            } else if interior {
                return Err(Error::run(format!(
                    "grid model: internal: the arm from interior node {} leaves the section \
                     without meeting its boundary",
                    fmt_pt(p)
                )));
            }
        }
        // The four quarters of the control volume: (x arm, y arm) → (k, q).
        let quarter = |dx: usize, dy: usize| -> (f64, f64) {
            let (ax, ay) = (len[dx], len[dy]);
            if ax == 0.0 || ay == 0.0 {
                return (0.0, 0.0);
            }
            let (sx, sy) = (DIRS[dx].0, DIRS[dy].1);
            let ci = node.i as i64 + if sx > 0 { 0 } else { -1 };
            let cj = node.j as i64 + if sy > 0 { 0 } else { -1 };
            let m = cell(ci, cj)
                .or_else(|| {
                    material_at([p[0] + sx as f64 * 0.25 * ax, p[1] + sy as f64 * 0.25 * ay])
                })
                .or_else(|| if interior { material_at(p) } else { None });
            match m {
                Some(m) => (
                    section.materials[m].conductivity,
                    section.materials[m].heat_source,
                ),
                None => (0.0, 0.0),
            }
        };
        let ne = quarter(E, N);
        let nw = quarter(W, N);
        let se = quarter(E, S);
        let sw = quarter(W, S);
        let face = |arm: usize, k1: f64, half1: f64, k2: f64, half2: f64| {
            if len[arm] == 0.0 {
                0.0
            } else {
                (k1 * half1 + k2 * half2) / len[arm]
            }
        };
        let g = [
            face(E, ne.0, 0.5 * len[N], se.0, 0.5 * len[S]),
            face(W, nw.0, 0.5 * len[N], sw.0, 0.5 * len[S]),
            face(N, ne.0, 0.5 * len[E], nw.0, 0.5 * len[W]),
            face(S, se.0, 0.5 * len[E], sw.0, 0.5 * len[W]),
        ];
        let q = 0.25
            * (ne.1 * len[E] * len[N]
                + nw.1 * len[W] * len[N]
                + se.1 * len[E] * len[S]
                + sw.1 * len[W] * len[S]);
        let mut any_cut = false;
        for d in 0..4 {
            if let Some(c) = cut[d]
                && g[d] > 0.0
            {
                cuts.insert((n, d), c);
                any_cut = true;
            }
        }
        if any_cut && !is_fixed {
            shortley_weller_nodes += 1;
        }
        if !interior {
            let mut shares = Vec::new();
            for (d, &dir) in DIRS.iter().enumerate() {
                if len[d] == 0.0 || g[d] == 0.0 {
                    continue;
                }
                let m = [
                    p[0] + dir.0 as f64 * 0.25 * len[d],
                    p[1] + dir.1 as f64 * 0.25 * len[d],
                ];
                buckets.query(
                    [m[0] - tol, m[1] - tol],
                    [m[0] + tol, m[1] + tol],
                    &mut near,
                );
                if let Some(&s) = near.iter().find(|&&s| {
                    let sg = &segs[s as usize];
                    geom::project(sg.a, sg.b, m).1 <= tol && geom::project(sg.a, sg.b, p).1 <= tol
                }) {
                    shares.push(EdgeShare {
                        boundary: segs[s as usize].boundary,
                        length: 0.5 * len[d],
                    });
                }
            }
            if !shares.is_empty() {
                edges.insert(n, shares);
            }
        }
        conductance.push(g);
        source.push(q);
    }

    Ok(GridModel {
        spacing: h,
        origin,
        nx,
        ny,
        nodes,
        shortley_weller_nodes,
        warnings,
        boundaries,
        node_at,
        cell_inside: cell_material.iter().map(|m| m.is_some()).collect(),
        conductance,
        cuts,
        source,
        edges,
        fixed_on,
    })
}

impl GridModel {
    /// Node index of grid point (i, j), if it is a node.
    pub fn node_index(&self, i: usize, j: usize) -> Option<usize> {
        if i >= self.nx || j >= self.ny {
            return None;
        }
        let n = self.node_at[j * self.nx + i];
        (n != NONE).then_some(n as usize)
    }

    /// The node at the next grid point from node n in direction d, if any.
    fn grid_neighbour(&self, n: usize, d: usize) -> Option<usize> {
        let node = &self.nodes[n];
        let (i, j) = (node.i as i64 + DIRS[d].0, node.j as i64 + DIRS[d].1);
        if i < 0 || j < 0 {
            return None;
        }
        self.node_index(i as usize, j as usize)
    }

    /// Neighbour node of node n in direction d, if the arm there is regular.
    fn neighbour(&self, n: usize, d: usize) -> Option<usize> {
        if self.conductance[n][d] == 0.0 || self.cuts.contains_key(&(n, d)) {
            return None;
        }
        self.grid_neighbour(n, d)
    }

    /// Conductance of the face node n's arm in direction d crosses, W/(m·K); 0 = no arm.
    pub fn arm_conductance(&self, n: usize, d: usize) -> f64 {
        self.conductance[n][d]
    }

    /// Heat source of node n's control volume, W/m.
    pub fn node_source(&self, n: usize) -> f64 {
        self.source[n]
    }

    /// Imposed boundary terms of node n at temperature t: Σ (boundary, inflow W/m).
    fn imposed(&self, n: usize, t: f64, mut f: impl FnMut(usize, f64)) {
        if let Some(shares) = self.edges.get(&n) {
            for s in shares {
                if let Some(b) = s.boundary {
                    match self.boundaries[b].1 {
                        BoundaryKind::Convection { h, ambient } => {
                            f(b, h * s.length * (ambient - t))
                        }
                        BoundaryKind::Flux { flux } => f(b, flux * s.length),
                        BoundaryKind::Insulated | BoundaryKind::Fixed { .. } => {}
                    }
                }
            }
        }
    }
}

/// Solve the grid model (sparse LU, sequential).
pub fn solve(model: &GridModel) -> Result<GridSolution> {
    faer::set_global_parallelism(faer::Par::Seq);
    let nn = model.nodes.len();
    let mut unknown = vec![usize::MAX; nn];
    let mut temperature = vec![0.0; nn];
    let mut count = 0;
    for (n, node) in model.nodes.iter().enumerate() {
        match node.kind {
            NodeKind::Fixed { temperature: t } => temperature[n] = t,
            _ => {
                unknown[n] = count;
                count += 1;
            }
        }
    }

    // Rows: Σ G (T_Q − T_P) + Σ G_cut (T_b − T_P) + h_c·L (T∞ − T_P) + q·L + S = 0.
    let mut triplets = Vec::with_capacity(5 * count);
    let mut rhs = vec![0.0; count];
    let mut anchored = vec![false; count];
    let mut row_norm = vec![0.0f64; count];
    for (n, node) in model.nodes.iter().enumerate() {
        let r = unknown[n];
        if r == usize::MAX {
            continue;
        }
        let mut diag = 0.0;
        let mut b = model.source[n];
        for d in 0..4 {
            let g = model.conductance[n][d];
            if g == 0.0 {
                continue;
            }
            diag += g;
            if let Some(c) = model.cuts.get(&(n, d)) {
                b += g * c.temperature;
                anchored[r] = true;
            } else if let Some(q) = model.neighbour(n, d) {
                if unknown[q] == usize::MAX {
                    b += g * temperature[q];
                    anchored[r] = true;
                } else {
                    triplets.push(faer::sparse::Triplet::new(r, unknown[q], -g));
                    row_norm[r] += g;
                }
            }
        }
        if let Some(shares) = model.edges.get(&n) {
            for s in shares {
                if let Some(bid) = s.boundary {
                    match model.boundaries[bid].1 {
                        BoundaryKind::Convection { h, ambient } => {
                            diag += h * s.length;
                            b += h * s.length * ambient;
                            anchored[r] = true;
                        }
                        BoundaryKind::Flux { flux } => b += flux * s.length,
                        _ => {}
                    }
                }
            }
        }
        if diag <= 0.0 {
            return Err(Error::input(format!(
                "grid model: node at {} has no link to the rest of the section at spacing h = {} m; \
                 use a finer spacing",
                fmt_pt([node.x, node.y]),
                model.spacing
            )));
        }
        triplets.push(faer::sparse::Triplet::new(r, r, diag));
        row_norm[r] += diag;
        rhs[r] = b;
    }

    // Every connected part of the unknowns needs a fixed or convection anchor.
    if count > 0 {
        let mut seen = vec![false; count];
        let mut stack = Vec::new();
        for start in 0..nn {
            let rs = unknown[start];
            if rs == usize::MAX || seen[rs] {
                continue;
            }
            let mut ok = false;
            seen[rs] = true;
            stack.push(start);
            while let Some(n) = stack.pop() {
                ok |= anchored[unknown[n]];
                for d in 0..4 {
                    if let Some(q) = model.neighbour(n, d) {
                        let rq = unknown[q];
                        if rq != usize::MAX && !seen[rq] {
                            seen[rq] = true;
                            stack.push(q);
                        }
                    }
                }
            }
            if !ok {
                let p = &model.nodes[start];
                return Err(Error::input(format!(
                    "grid model: the part of the section around {} touches no fixed or convection \
                     edge: its temperature is not determined",
                    fmt_pt([p.x, p.y])
                )));
            }
        }
    }

    let mut residual_relative = 0.0;
    if count > 0 {
        use faer::linalg::solvers::Solve;
        let a = faer::sparse::SparseColMat::<usize, f64>::try_new_from_triplets(
            count, count, &triplets,
        )
        .map_err(|e| Error::run(format!("grid model: cannot build the sparse matrix: {e:?}")))?;
        let lu = a
            .sp_lu()
            .map_err(|e| Error::run(format!("grid model: sparse LU failed: {e:?}")))?;
        let mut x = faer::Mat::<f64>::from_fn(count, 1, |i, _| rhs[i]);
        lu.solve_in_place(x.as_mut());
        let sol: Vec<f64> = (0..count).map(|i| x[(i, 0)]).collect();
        if let Some(i) = sol.iter().position(|v| !v.is_finite()) {
            return Err(Error::run(format!(
                "grid model: the solve produced a non-finite temperature (unknown {i}); the system \
                 is singular"
            )));
        }
        // Residual ‖A x − b‖∞ relative to ‖A‖∞‖x‖∞ + ‖b‖∞.
        let mut ax = vec![0.0; count];
        for t in &triplets {
            ax[t.row] += t.val * sol[t.col];
        }
        let rmax = ax
            .iter()
            .zip(&rhs)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        let anorm = row_norm.iter().cloned().fold(0.0, f64::max);
        let xnorm = sol.iter().map(|v| v.abs()).fold(0.0, f64::max);
        let bnorm = rhs.iter().map(|v| v.abs()).fold(0.0, f64::max);
        let denom = anorm * xnorm + bnorm;
        residual_relative = if denom > 0.0 { rmax / denom } else { rmax };
        if residual_relative.is_nan() || residual_relative > RESIDUAL_TOLERANCE {
            return Err(Error::run(format!(
                "grid model: solver residual {residual_relative:.3e} exceeds {RESIDUAL_TOLERANCE:e}"
            )));
        }
        for (n, &r) in unknown.iter().enumerate() {
            if r != usize::MAX {
                temperature[n] = sol[r];
            }
        }
    }

    // Heat flow per boundary. Regular unknowns (no cut arm) have conservative rows with
    // symmetric links. The rest — fixed nodes and Shortley–Weller nodes — form the boundary
    // layer; each layer node's inflow from the boundary is the residual of its balance, with
    // the flow to a regular neighbour as that neighbour's row sees it and the flow to another
    // layer node through the mean of the two conductances. The flows then close exactly.
    let mut layer = vec![false; nn];
    for (n, node) in model.nodes.iter().enumerate() {
        layer[n] = matches!(node.kind, NodeKind::Fixed { .. });
    }
    for &(n, _) in model.cuts.keys() {
        layer[n] = true;
    }
    let mut flow = vec![0.0; model.boundaries.len()];
    for (n, node) in model.nodes.iter().enumerate() {
        let tp = temperature[n];
        let mut imposed = 0.0;
        model.imposed(n, tp, |b, v| {
            flow[b] += v;
            imposed += v;
        });
        if !layer[n] {
            continue;
        }
        let mut links = 0.0;
        for d in 0..4 {
            let Some(q) = model.grid_neighbour(n, d) else {
                continue;
            };
            if model.cuts.contains_key(&(n, d)) || model.cuts.contains_key(&(q, d ^ 1)) {
                continue;
            }
            let back = model.conductance[q][d ^ 1];
            let g = if layer[q] {
                0.5 * (model.conductance[n][d] + back)
            } else {
                back
            };
            links += g * (temperature[q] - tp);
        }
        let mut cut_in = 0.0;
        if let NodeKind::Fixed { .. } = node.kind {
            // A fixed node's cut arms reach another fixed boundary: conduction between them.
            for d in 0..4 {
                if let Some(c) = model.cuts.get(&(n, d)) {
                    let v = model.conductance[n][d] * (c.temperature - tp);
                    flow[c.boundary] += v;
                    cut_in += v;
                }
            }
        }
        let own = -(links + cut_in + model.source[n] + imposed);
        // Share the inflow among the node's own fixed boundaries: for a fixed node by the
        // boundary length along each (equal shares if none), for a Shortley–Weller node by
        // the conductance of the arms cut by each.
        let mut shares: Vec<(usize, f64)> = Vec::new();
        let mut add = |b: usize, w: f64| match shares.iter_mut().find(|(x, _)| *x == b) {
            Some(s) => s.1 += w,
            None => shares.push((b, w)),
        };
        match node.kind {
            NodeKind::Fixed { .. } => {
                for &b in model.fixed_on.get(&n).map(|v| v.as_slice()).unwrap_or(&[]) {
                    let along: f64 = model
                        .edges
                        .get(&n)
                        .map(|s| {
                            s.iter()
                                .filter(|e| e.boundary == Some(b))
                                .map(|e| e.length)
                                .sum()
                        })
                        .unwrap_or(0.0);
                    add(b, along);
                }
            }
            _ => {
                for d in 0..4 {
                    if let Some(c) = model.cuts.get(&(n, d)) {
                        add(c.boundary, model.conductance[n][d]);
                    }
                }
            }
        }
        let total: f64 = shares.iter().map(|s| s.1).sum();
        let count = shares.len() as f64;
        for (b, w) in shares {
            flow[b] += own * if total > 0.0 { w / total } else { 1.0 / count };
        }
    }
    let source: f64 = model.source.iter().sum();
    let imbalance = flow.iter().sum::<f64>() + source;
    Ok(GridSolution {
        temperature,
        heat_flow: model
            .boundaries
            .iter()
            .zip(flow)
            .map(|((name, _), f)| (name.clone(), f))
            .collect(),
        source,
        imbalance,
        residual_relative,
        spacing: model.spacing,
        origin: model.origin,
        nx: model.nx,
        ny: model.ny,
        node_at: model.node_at.clone(),
        cell_inside: model.cell_inside.clone(),
    })
}

impl GridSolution {
    fn node(&self, i: i64, j: i64) -> Option<usize> {
        if i < 0 || j < 0 || i as usize >= self.nx || j as usize >= self.ny {
            return None;
        }
        let n = self.node_at[j as usize * self.nx + i as usize];
        (n != NONE).then_some(n as usize)
    }

    /// Temperature at p, °C: bilinear within a grid cell whose centre is inside the section
    /// and whose four corners are nodes; else the nearest node within one spacing; else `None`.
    pub fn temperature_at(&self, p: [f64; 2]) -> Option<f64> {
        if !p[0].is_finite() || !p[1].is_finite() {
            return None;
        }
        let h = self.spacing;
        let fx = (p[0] - self.origin[0]) / h;
        let fy = (p[1] - self.origin[1]) / h;
        if fx < -1.0 || fy < -1.0 || fx > self.nx as f64 || fy > self.ny as f64 {
            return None;
        }
        let ci = (fx.floor() as i64).clamp(0, self.nx as i64 - 2);
        let cj = (fy.floor() as i64).clamp(0, self.ny as i64 - 2);
        let (u, v) = (fx - ci as f64, fy - cj as f64);
        if (0.0..=1.0).contains(&u) && (0.0..=1.0).contains(&v) {
            let corners = [
                self.node(ci, cj),
                self.node(ci + 1, cj),
                self.node(ci, cj + 1),
                self.node(ci + 1, cj + 1),
            ];
            let inside = self.cell_inside[cj as usize * (self.nx - 1) + ci as usize];
            if let (true, [Some(a), Some(b), Some(c), Some(d)]) = (inside, corners) {
                let t = &self.temperature;
                return Some(
                    (1.0 - u) * (1.0 - v) * t[a]
                        + u * (1.0 - v) * t[b]
                        + (1.0 - u) * v * t[c]
                        + u * v * t[d],
                );
            }
        }
        let (bi, bj) = (fx.round() as i64, fy.round() as i64);
        let mut best: Option<(f64, usize)> = None;
        for j in bj - 1..=bj + 1 {
            for i in bi - 1..=bi + 1 {
                if let Some(n) = self.node(i, j) {
                    let d = ((fx - i as f64).powi(2) + (fy - j as f64).powi(2)).sqrt() * h;
                    if d <= h && best.is_none_or(|(bd, _)| d < bd) {
                        best = Some((d, n));
                    }
                }
            }
        }
        best.map(|(_, n)| self.temperature[n])
    }
}

#[cfg(test)]
mod tests;
