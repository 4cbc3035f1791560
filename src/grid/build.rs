//! Building the grid model: the grid over the outline's bounding box, the boundary segments
//! (checked to lie on grid lines unless fixed), the cells' materials, the nodes, and each
//! node's arms, control-volume conductances, sources and boundary shares.

use super::{
    Cut, DIRS, E, EdgeShare, GridModel, GridNode, MAX_GRID_POINTS, N, NONE, NodeKind, S, W,
};
use crate::error::{Error, Result};
use crate::geom::index::{BoxIndex, inflate, segment_bbox};
use crate::geom::{self, Point};
use crate::geometry::{self, Classifier};
use crate::model::{BoundaryKind, Ring, Section};
use std::collections::BTreeMap;

/// A boundary segment (outline or hole) with its owner.
#[derive(Debug, Clone, Copy)]
struct BSeg {
    a: Point,
    b: Point,
    boundary: Option<usize>,
}

/// The grid's placement: spacing, origin, size and the on-line tolerance.
#[derive(Debug, Clone, Copy)]
struct Frame {
    h: f64,
    origin: Point,
    nx: usize,
    ny: usize,
    /// Distance within which a point counts as on a line or boundary, m.
    tol: f64,
}

impl Frame {
    /// Grid point (i, j).
    fn point(&self, i: usize, j: usize) -> Point {
        [
            self.origin[0] + i as f64 * self.h,
            self.origin[1] + j as f64 * self.h,
        ]
    }

    /// Whether `p` lies on a grid point.
    fn on_grid(&self, p: Point) -> bool {
        (0..2).all(|k| {
            let g = ((p[k] - self.origin[k]) / self.h).round() * self.h + self.origin[k];
            (g - p[k]).abs() <= self.tol
        })
    }

    /// Whether the segment a b runs along a grid line between grid points.
    fn aligned(&self, a: Point, b: Point) -> bool {
        self.on_grid(a)
            && self.on_grid(b)
            && ((a[0] - b[0]).abs() <= self.tol || (a[1] - b[1]).abs() <= self.tol)
    }
}

/// The grid over the outline's bounding box at spacing h, refused when too fine or too coarse.
fn frame(section: &Section, h: f64) -> Result<Frame> {
    let b = geom::bbox(section.outline.points.iter().copied());
    let (lo, hi) = ([b[0], b[1]], [b[2], b[3]]);
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
    let scale = lo[0]
        .abs()
        .max(lo[1].abs())
        .max(hi[0].abs())
        .max(hi[1].abs());
    Ok(Frame {
        h,
        origin: lo,
        nx,
        ny,
        tol: (1e-9 * h).max(16.0 * f64::EPSILON * scale),
    })
}

/// The error for a non-fixed boundary segment off the grid lines.
fn off_grid_error(f: &Frame, ring: &Ring, k: usize, what: String) -> Error {
    let (a, b) = ring.segment(k);
    Error::input(format!(
        "grid model: {what} does not lie on grid lines; only fixed edges may be off-grid \
         (segment {} from {} to {}; grid spacing {} m, origin {})",
        ring.written_segment[k],
        geom::format_point(a),
        geom::format_point(b),
        f.h,
        geom::format_point(f.origin)
    ))
}

/// Everything the node and arm steps read.
struct Builder<'a> {
    section: &'a Section,
    f: Frame,
    boundaries: Vec<(String, BoundaryKind)>,
    segs: Vec<BSeg>,
    index: BoxIndex,
    classifier: Classifier<'a>,
    /// Material of each cell (index j·(nx−1) + i), `None` outside.
    cell_material: Vec<Option<usize>>,
}

impl<'a> Builder<'a> {
    /// Temperature of a fixed boundary, `None` for any other (or none).
    fn fixed_temp(&self, b: Option<usize>) -> Option<f64> {
        match b.map(|id| self.boundaries[id].1) {
            Some(BoundaryKind::Fixed { temperature }) => Some(temperature),
            _ => None,
        }
    }

    /// Boundary segments of outline and holes; every non-fixed one must run along a grid
    /// line between grid points.
    fn boundary_segments(&self) -> Result<Vec<BSeg>> {
        let section = self.section;
        let mut segs = Vec::new();
        for ring in std::iter::once(&section.outline).chain(section.holes.iter()) {
            for k in 0..ring.len() {
                let (a, b) = ring.segment(k);
                let boundary = ring.edge_boundary[k];
                if self.fixed_temp(boundary).is_none() && !self.f.aligned(a, b) {
                    let what = match boundary {
                        Some(id) => {
                            format!("boundary \"{}\" on {}", self.boundaries[id].0, ring.label)
                        }
                        None => format!(
                            "unnamed (insulated) segment {} of {}",
                            ring.written_segment[k], ring.label
                        ),
                    };
                    return Err(off_grid_error(&self.f, ring, k, what));
                }
                segs.push(BSeg { a, b, boundary });
            }
        }
        Ok(segs)
    }

    /// Warnings for regions whose interfaces leave the grid lines.
    fn region_warnings(&self) -> Vec<String> {
        self.section
            .regions
            .iter()
            .filter(|r| {
                !(0..r.ring.len()).all(|k| {
                    let (a, b) = r.ring.segment(k);
                    self.f.aligned(a, b)
                })
            })
            .map(|r| {
                format!(
                    "grid model: {} does not lie on grid lines; its material is taken cell by cell \
                     (at cell centres), a first-order approximation of the interface",
                    r.ring.label
                )
            })
            .collect()
    }

    /// Material at a point, `None` in the void.
    fn material_at(&self, p: Point) -> Option<usize> {
        self.classifier.zone(p).map(|z| {
            if z == 0 {
                self.section.outline_material
            } else {
                self.section.regions[z - 1].material
            }
        })
    }

    /// Material of each cell, at its centre.
    fn cell_materials(&self) -> Vec<Option<usize>> {
        let (f, h) = (&self.f, self.f.h);
        let mut out = Vec::with_capacity((f.nx - 1) * (f.ny - 1));
        for j in 0..f.ny - 1 {
            for i in 0..f.nx - 1 {
                let c = f.point(i, j);
                out.push(self.material_at([c[0] + 0.5 * h, c[1] + 0.5 * h]));
            }
        }
        out
    }

    /// Material of cell (ci, cj), `None` outside the grid or the section.
    fn cell(&self, ci: i64, cj: i64) -> Option<usize> {
        let (nx, ny) = (self.f.nx as i64, self.f.ny as i64);
        if ci < 0 || cj < 0 || ci >= nx - 1 || cj >= ny - 1 {
            None
        } else {
            self.cell_material[cj as usize * (self.f.nx - 1) + ci as usize]
        }
    }

    /// Segments whose boxes come within the tolerance of the box `lo`–`hi`, ascending.
    fn near(&self, lo: Point, hi: Point, out: &mut Vec<usize>) {
        self.index
            .meeting(inflate([lo[0], lo[1], hi[0], hi[1]], self.f.tol), out);
    }

    /// Segments passing within the tolerance of `p`, ascending.
    fn segments_through(&self, p: Point, out: &mut Vec<usize>) {
        self.near(p, p, out);
        out.retain(|&s| geom::project(self.segs[s].a, self.segs[s].b, p).1 <= self.f.tol);
    }
}

/// The grid nodes, their index by grid point, and the fixed boundaries of fixed nodes.
struct Nodes {
    nodes: Vec<GridNode>,
    node_at: Vec<u32>,
    fixed_on: BTreeMap<usize, Vec<usize>>,
}

/// What grid point p is: fixed (with its fixed boundaries), edge, interior, or `None` outside.
fn node_kind(b: &Builder, p: Point, near: &mut Vec<usize>) -> Option<(NodeKind, Vec<usize>)> {
    b.segments_through(p, near);
    let on_boundary = !near.is_empty();
    let mut fixed: Vec<usize> = near
        .iter()
        .filter_map(|&s| {
            let sg = &b.segs[s];
            sg.boundary.filter(|_| b.fixed_temp(sg.boundary).is_some())
        })
        .collect();
    if !fixed.is_empty() {
        fixed.sort_unstable();
        fixed.dedup();
        let t = fixed
            .iter()
            .map(|&id| b.fixed_temp(Some(id)).unwrap_or(0.0))
            .sum::<f64>()
            / fixed.len() as f64;
        Some((NodeKind::Fixed { temperature: t }, fixed))
    } else if on_boundary {
        Some((NodeKind::Edge, fixed))
    } else if b.classifier.zone(p).is_some() {
        Some((NodeKind::Interior, fixed))
    } else {
        None
    }
}

/// The grid points inside the section or on its boundary, ordered by (j, i).
fn nodes(b: &Builder) -> Result<Nodes> {
    let f = &b.f;
    let mut near = Vec::new();
    let mut out = Nodes {
        nodes: Vec::new(),
        node_at: vec![NONE; f.nx * f.ny],
        fixed_on: BTreeMap::new(),
    };
    for j in 0..f.ny {
        for i in 0..f.nx {
            let p = f.point(i, j);
            let Some((kind, fixed)) = node_kind(b, p, &mut near) else {
                continue;
            };
            if !fixed.is_empty() {
                out.fixed_on.insert(out.nodes.len(), fixed);
            }
            out.node_at[j * f.nx + i] = out.nodes.len() as u32;
            out.nodes.push(GridNode {
                i,
                j,
                x: p[0],
                y: p[1],
                kind,
            });
        }
    }
    if out.nodes.is_empty() {
        return Err(Error::input(format!(
            "grid model: spacing h = {} m leaves no grid point inside the section",
            f.h
        )));
    }
    Ok(out)
}

/// Parameter t ∈ (0, 1) along the axis-parallel arm p → p + h·d at which segment s crosses it,
/// or `None` (no crossing, or s parallel to the arm).
fn arm_crossing(p: Point, d: (i64, i64), h: f64, s: &BSeg) -> Option<f64> {
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

/// The node's four arms: length (0 = absent) and the cut, if a fixed boundary cuts it.
struct Arms {
    len: [f64; 4],
    cut: [Option<Cut>; 4],
}

/// The first boundary segment the arm from p in direction `dir` crosses strictly between grid
/// points: (t, segment). At a shared vertex a fixed segment wins, then the lower index.
fn first_crossing(
    b: &Builder,
    p: Point,
    dir: (i64, i64),
    near: &mut Vec<usize>,
) -> Option<(f64, usize)> {
    let (h, tau) = (b.f.h, b.f.tol / b.f.h);
    let q = [p[0] + dir.0 as f64 * h, p[1] + dir.1 as f64 * h];
    b.near(
        [p[0].min(q[0]), p[1].min(q[1])],
        [p[0].max(q[0]), p[1].max(q[1])],
        near,
    );
    let mut first: Option<(f64, usize)> = None;
    for &s in near.iter() {
        if let Some(t) = arm_crossing(p, dir, h, &b.segs[s])
            && t > tau
            && t < 1.0 - tau
        {
            let better = match first {
                None => true,
                Some((ft, fs)) => {
                    t < ft - tau
                        || ((t - ft).abs() <= tau
                            && b.fixed_temp(b.segs[fs].boundary).is_none()
                            && b.fixed_temp(b.segs[s].boundary).is_some())
                }
            };
            if better {
                first = Some((t, s));
            }
        }
    }
    first
}

/// Lengths and cuts of the four arms of `node`.
fn arms(b: &Builder, node: &GridNode, node_at: &[u32], near: &mut Vec<usize>) -> Result<Arms> {
    let (f, h) = (&b.f, b.f.h);
    let p = [node.x, node.y];
    let interior = node.kind == NodeKind::Interior;
    let is_fixed = matches!(node.kind, NodeKind::Fixed { .. });
    let mut arms = Arms {
        len: [0.0; 4],
        cut: [None; 4],
    };
    for (d, &dir) in DIRS.iter().enumerate() {
        let q = [p[0] + dir.0 as f64 * h, p[1] + dir.1 as f64 * h];
        let (qi, qj) = (node.i as i64 + dir.0, node.j as i64 + dir.1);
        let q_node = qi >= 0
            && qj >= 0
            && (qi as usize) < f.nx
            && (qj as usize) < f.ny
            && node_at[qj as usize * f.nx + qi as usize] != NONE;
        if let Some((t, s)) = first_crossing(b, p, dir, near) {
            if !interior && b.material_at(geom::lerp(p, q, 0.5 * t)).is_none() {
                continue; // the arm leaves the section at once
            }
            match (b.segs[s].boundary, b.fixed_temp(b.segs[s].boundary)) {
                (Some(boundary), Some(temperature)) => {
                    arms.len[d] = t * h;
                    arms.cut[d] = Some(Cut {
                        boundary,
                        temperature,
                        theta: t,
                    });
                }
                _ if is_fixed => {}
                _ => {
                    return Err(Error::run(format!(
                        "grid model: internal: the arm from node {} crosses a non-fixed \
                         boundary segment between grid points",
                        geom::format_point(p)
                    )));
                }
            }
        } else if q_node {
            arms.len[d] = h;
        } else if interior {
            return Err(Error::run(format!(
                "grid model: internal: the arm from interior node {} leaves the section \
                 without meeting its boundary",
                geom::format_point(p)
            )));
        }
    }
    Ok(arms)
}

/// (k, q) of the control-volume quarter between x arm `dx` and y arm `dy`: its cell's
/// material, else the material beside the node in that quarter, else (interior nodes) the
/// node's own; (0, 0) for an absent quarter.
fn quarter(b: &Builder, node: &GridNode, len: &[f64; 4], dx: usize, dy: usize) -> (f64, f64) {
    let (ax, ay) = (len[dx], len[dy]);
    if ax == 0.0 || ay == 0.0 {
        return (0.0, 0.0);
    }
    let p = [node.x, node.y];
    let (sx, sy) = (DIRS[dx].0, DIRS[dy].1);
    let ci = node.i as i64 + if sx > 0 { 0 } else { -1 };
    let cj = node.j as i64 + if sy > 0 { 0 } else { -1 };
    let m = b
        .cell(ci, cj)
        .or_else(|| b.material_at([p[0] + sx as f64 * 0.25 * ax, p[1] + sy as f64 * 0.25 * ay]))
        .or_else(|| {
            if node.kind == NodeKind::Interior {
                b.material_at(p)
            } else {
                None
            }
        });
    match m {
        Some(m) => (
            // `build` refuses anisotropic materials, so this is the isotropic k.
            b.section.materials[m].conductivity.max(),
            b.section.materials[m].heat_source,
        ),
        None => (0.0, 0.0),
    }
}

/// Face conductances of the four arms and the control volume's source.
fn conductances(b: &Builder, node: &GridNode, len: &[f64; 4]) -> ([f64; 4], f64) {
    let ne = quarter(b, node, len, E, N);
    let nw = quarter(b, node, len, W, N);
    let se = quarter(b, node, len, E, S);
    let sw = quarter(b, node, len, W, S);
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
    (g, q)
}

/// The halves of the node's arms that lie along a boundary segment (through the node and the
/// arm's quarter point).
fn edge_shares(
    b: &Builder,
    node: &GridNode,
    len: &[f64; 4],
    g: &[f64; 4],
    near: &mut Vec<usize>,
) -> Vec<EdgeShare> {
    let p = [node.x, node.y];
    let mut shares = Vec::new();
    for (d, &dir) in DIRS.iter().enumerate() {
        if len[d] == 0.0 || g[d] == 0.0 {
            continue;
        }
        let m = [
            p[0] + dir.0 as f64 * 0.25 * len[d],
            p[1] + dir.1 as f64 * 0.25 * len[d],
        ];
        b.segments_through(m, near);
        if let Some(&s) = near
            .iter()
            .find(|&&s| geom::project(b.segs[s].a, b.segs[s].b, p).1 <= b.f.tol)
        {
            shares.push(EdgeShare {
                boundary: b.segs[s].boundary,
                length: 0.5 * len[d],
            });
        }
    }
    shares
}

/// Per-node arms, conductances, sources, cuts and edge shares.
struct Links {
    conductance: Vec<[f64; 4]>,
    source: Vec<f64>,
    cuts: BTreeMap<(usize, usize), Cut>,
    edges: BTreeMap<usize, Vec<EdgeShare>>,
    shortley_weller_nodes: usize,
}

/// Arms, control volumes, conductances, sources and edge shares of every node.
fn links(b: &Builder, nodes: &Nodes) -> Result<Links> {
    let mut out = Links {
        conductance: Vec::with_capacity(nodes.nodes.len()),
        source: Vec::with_capacity(nodes.nodes.len()),
        cuts: BTreeMap::new(),
        edges: BTreeMap::new(),
        shortley_weller_nodes: 0,
    };
    let mut near = Vec::new();
    for (n, node) in nodes.nodes.iter().enumerate() {
        let arms = arms(b, node, &nodes.node_at, &mut near)?;
        let (g, q) = conductances(b, node, &arms.len);
        let mut any_cut = false;
        for (d, (cut, &gd)) in arms.cut.iter().zip(&g).enumerate() {
            if let Some(c) = *cut
                && gd > 0.0
            {
                out.cuts.insert((n, d), c);
                any_cut = true;
            }
        }
        if any_cut && !matches!(node.kind, NodeKind::Fixed { .. }) {
            out.shortley_weller_nodes += 1;
        }
        if node.kind != NodeKind::Interior {
            let shares = edge_shares(b, node, &arms.len, &g, &mut near);
            if !shares.is_empty() {
                out.edges.insert(n, shares);
            }
        }
        out.conductance.push(g);
        out.source.push(q);
    }
    Ok(out)
}

/// Build the grid model of a section at spacing h (m).
pub fn build(section: &Section, spacing: f64) -> Result<GridModel> {
    let h = spacing;
    if !h.is_finite() || h <= 0.0 {
        return Err(Error::input(format!(
            "grid model: spacing h = {h} m must be a positive finite number"
        )));
    }
    if section.is_nonlinear() {
        return Err(Error::input(
            "grid model: not available for a nonlinear model (a conductivity table or a radiating boundary); the grid check is linear — use `converge` to check the element model's discretisation",
        ));
    }
    refuse_contacts(section)?;
    if let Some(m) = section
        .materials
        .iter()
        .find(|m| m.conductivity.isotropic().is_none())
    {
        return Err(Error::input(format!(
            "materials.{}: the grid model (5-point stencil) takes isotropic conductivities only; conductivity = {} is anisotropic",
            m.name, m.conductivity
        )));
    }
    if let Some(b) = section.boundaries.iter().find(|b| b.field.is_some()) {
        return Err(Error::input(format!(
            "boundaries.{}.{}: the grid model takes constant boundary temperatures only; this one varies with position (use `converge` to check the element model's discretisation)",
            b.name,
            crate::model::field_key(b)
        )));
    }
    if let Some(m) = section.materials.iter().find(|m| m.source_field.is_some()) {
        return Err(Error::input(format!(
            "materials.{}.heat_source: the grid model takes constant heat sources only; this one varies with position (use `converge` to check the element model's discretisation)",
            m.name
        )));
    }
    if let Some(s) = section.point_sources.first() {
        return Err(Error::input(format!(
            "point_sources[0] \"{}\": the grid model takes no point sources (its nodes do not hold them); compare the element model with `converge` instead",
            s.name
        )));
    }
    // Ring checks (crossings, holes inside the outline, ...) are those of the element model.
    geometry::build(section)?;
    let mut b = Builder {
        section,
        f: frame(section, h)?,
        boundaries: section
            .boundaries
            .iter()
            .map(|b| (b.name.clone(), b.kind))
            .collect(),
        segs: Vec::new(),
        index: BoxIndex::new([]),
        classifier: Classifier::new(section),
        cell_material: Vec::new(),
    };
    b.segs = b.boundary_segments()?;
    b.index = BoxIndex::new(b.segs.iter().map(|s| segment_bbox(s.a, s.b)));
    let warnings = b.region_warnings();
    b.cell_material = b.cell_materials();
    let nodes = nodes(&b)?;
    let links = links(&b, &nodes)?;
    Ok(GridModel {
        spacing: h,
        origin: b.f.origin,
        nx: b.f.nx,
        ny: b.f.ny,
        nodes: nodes.nodes,
        shortley_weller_nodes: links.shortley_weller_nodes,
        warnings,
        cell_inside: b.cell_material.iter().map(|m| m.is_some()).collect(),
        boundaries: b.boundaries,
        node_at: nodes.node_at,
        conductance: links.conductance,
        cuts: links.cuts,
        source: links.source,
        edges: links.edges,
        fixed_on: nodes.fixed_on,
    })
}

/// The grid model has no contact resistance: a model with `[[contacts]]` is refused by the grid
/// check and by `compare`, naming the first contact.
pub fn refuse_contacts(section: &Section) -> Result<()> {
    match section.contacts.first() {
        Some(c) => Err(Error::input(format!(
            "contacts[0] ({}): the grid model and the cross-checks (gridcheck, compare) have no contact resistance; remove the [[contacts]] entries to cross-check the rest, or use `converge` to check the element model's discretisation",
            c.label(&section.materials)
        ))),
        None => Ok(()),
    }
}
