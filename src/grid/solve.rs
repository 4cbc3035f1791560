//! Solving the grid model: numbering the unknowns, assembling the rows, checking that every
//! connected part is anchored, the sparse LU solve with its residual check, and the heat flow
//! through each boundary from the control-volume balance of the boundary layer.

use super::{GridModel, GridSolution, NodeKind, RESIDUAL_TOLERANCE};
use crate::error::{Error, Result};
use crate::geom;
use crate::model::BoundaryKind;
use faer::sparse::Triplet;

/// Marks rows without an unknown.
const FIXED: usize = usize::MAX;

/// The unknown of each node (`FIXED` for fixed nodes), the fixed temperatures, and the count.
fn number_unknowns(model: &GridModel) -> (Vec<usize>, Vec<f64>, usize) {
    let nn = model.nodes.len();
    let mut unknown = vec![FIXED; nn];
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
    (unknown, temperature, count)
}

/// The assembled rows of the unknowns.
struct Rows {
    triplets: Vec<Triplet<usize, usize, f64>>,
    rhs: Vec<f64>,
    /// Whether each row reaches a fixed temperature or a convection term directly.
    anchored: Vec<bool>,
    /// Σ |a_ij| of each row.
    row_norm: Vec<f64>,
}

/// Adds the convection and flux terms of node n to its row's diagonal and right-hand side;
/// whether a convection term anchors the row.
fn boundary_terms(model: &GridModel, n: usize, diag: &mut f64, b: &mut f64) -> bool {
    let mut anchored = false;
    for s in model.edges.get(&n).into_iter().flatten() {
        if let Some(bid) = s.boundary {
            match model.boundaries[bid].1 {
                BoundaryKind::Convection { h, ambient } => {
                    *diag += h * s.length;
                    *b += h * s.length * ambient;
                    anchored = true;
                }
                BoundaryKind::Flux { flux } => *b += flux * s.length,
                _ => {}
            }
        }
    }
    anchored
}

/// Rows: Σ G (T_Q − T_P) + Σ G_cut (T_b − T_P) + h_c·L (T∞ − T_P) + q·L + S = 0.
fn assemble(
    model: &GridModel,
    unknown: &[usize],
    temperature: &[f64],
    count: usize,
) -> Result<Rows> {
    let mut rows = Rows {
        triplets: Vec::with_capacity(5 * count),
        rhs: vec![0.0; count],
        anchored: vec![false; count],
        row_norm: vec![0.0; count],
    };
    for (n, node) in model.nodes.iter().enumerate() {
        let r = unknown[n];
        if r == FIXED {
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
                rows.anchored[r] = true;
            } else if let Some(q) = model.neighbour(n, d) {
                if unknown[q] == FIXED {
                    b += g * temperature[q];
                    rows.anchored[r] = true;
                } else {
                    rows.triplets.push(Triplet::new(r, unknown[q], -g));
                    rows.row_norm[r] += g;
                }
            }
        }
        if boundary_terms(model, n, &mut diag, &mut b) {
            rows.anchored[r] = true;
        }
        if diag <= 0.0 {
            return Err(Error::input(format!(
                "grid model: node at {} has no link to the rest of the section at spacing h = {} m; \
                 use a finer spacing",
                geom::format_point([node.x, node.y]),
                model.spacing
            )));
        }
        rows.triplets.push(Triplet::new(r, r, diag));
        rows.row_norm[r] += diag;
        rows.rhs[r] = b;
    }
    Ok(rows)
}

/// Every connected part of the unknowns needs a fixed or convection anchor.
fn check_anchored(
    model: &GridModel,
    unknown: &[usize],
    anchored: &[bool],
    count: usize,
) -> Result<()> {
    let mut seen = vec![false; count];
    let mut stack = Vec::new();
    for start in 0..model.nodes.len() {
        let rs = unknown[start];
        if rs == FIXED || seen[rs] {
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
                    if rq != FIXED && !seen[rq] {
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
                geom::format_point([p.x, p.y])
            )));
        }
    }
    Ok(())
}

/// ‖A x − b‖∞ relative to ‖A‖∞‖x‖∞ + ‖b‖∞.
fn relative_residual(rows: &Rows, sol: &[f64]) -> f64 {
    let mut ax = vec![0.0; sol.len()];
    for t in &rows.triplets {
        ax[t.row] += t.val * sol[t.col];
    }
    let rmax = ax
        .iter()
        .zip(&rows.rhs)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    let anorm = rows.row_norm.iter().cloned().fold(0.0, f64::max);
    let xnorm = sol.iter().map(|v| v.abs()).fold(0.0, f64::max);
    let bnorm = rows.rhs.iter().map(|v| v.abs()).fold(0.0, f64::max);
    let denom = anorm * xnorm + bnorm;
    if denom > 0.0 { rmax / denom } else { rmax }
}

/// Sparse LU solve of the rows; the solution and its relative residual (checked).
fn solve_rows(rows: &Rows, count: usize) -> Result<(Vec<f64>, f64)> {
    use faer::linalg::solvers::Solve;
    let a = faer::sparse::SparseColMat::<usize, f64>::try_new_from_triplets(
        count,
        count,
        &rows.triplets,
    )
    .map_err(|e| Error::run(format!("grid model: cannot build the sparse matrix: {e:?}")))?;
    let lu = a
        .sp_lu()
        .map_err(|e| Error::run(format!("grid model: sparse LU failed: {e:?}")))?;
    let mut x = faer::Mat::<f64>::from_fn(count, 1, |i, _| rows.rhs[i]);
    lu.solve_in_place(x.as_mut());
    let sol: Vec<f64> = (0..count).map(|i| x[(i, 0)]).collect();
    if let Some(i) = sol.iter().position(|v| !v.is_finite()) {
        return Err(Error::run(format!(
            "grid model: the solve produced a non-finite temperature (unknown {i}); the system \
             is singular"
        )));
    }
    let residual = relative_residual(rows, &sol);
    if residual.is_nan() || residual > RESIDUAL_TOLERANCE {
        return Err(Error::run(format!(
            "grid model: solver residual {residual:.3e} exceeds {RESIDUAL_TOLERANCE:e}"
        )));
    }
    Ok((sol, residual))
}

/// Net conduction into layer node n from its grid neighbours: to a regular neighbour as that
/// neighbour's row sees it, to another layer node through the mean of the two conductances.
fn layer_links(model: &GridModel, layer: &[bool], temperature: &[f64], n: usize) -> f64 {
    let tp = temperature[n];
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
    links
}

/// Weights by which a layer node's boundary inflow is shared among its own fixed boundaries:
/// for a fixed node the boundary length along each (equal shares if none), for a
/// Shortley–Weller node the conductance of the arms cut by each.
fn inflow_shares(model: &GridModel, n: usize) -> Vec<(usize, f64)> {
    let mut shares: Vec<(usize, f64)> = Vec::new();
    let mut add = |b: usize, w: f64| match shares.iter_mut().find(|(x, _)| *x == b) {
        Some(s) => s.1 += w,
        None => shares.push((b, w)),
    };
    if let NodeKind::Fixed { .. } = model.nodes[n].kind {
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
    } else {
        for d in 0..4 {
            if let Some(c) = model.cuts.get(&(n, d)) {
                add(c.boundary, model.conductance[n][d]);
            }
        }
    }
    shares
}

/// Heat flow per boundary. Regular unknowns (no cut arm) have conservative rows with
/// symmetric links. The rest — fixed nodes and Shortley–Weller nodes — form the boundary
/// layer; each layer node's inflow from the boundary is the residual of its balance, with
/// the flow to a regular neighbour as that neighbour's row sees it and the flow to another
/// layer node through the mean of the two conductances. The flows then close exactly.
fn boundary_flows(model: &GridModel, temperature: &[f64]) -> Vec<f64> {
    let mut layer: Vec<bool> = model
        .nodes
        .iter()
        .map(|node| matches!(node.kind, NodeKind::Fixed { .. }))
        .collect();
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
        let links = layer_links(model, &layer, temperature, n);
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
        let shares = inflow_shares(model, n);
        let total: f64 = shares.iter().map(|s| s.1).sum();
        let count = shares.len() as f64;
        for (b, w) in shares {
            flow[b] += own * if total > 0.0 { w / total } else { 1.0 / count };
        }
    }
    flow
}

/// Solve the grid model (sparse LU, sequential).
pub fn solve(model: &GridModel) -> Result<GridSolution> {
    faer::set_global_parallelism(faer::Par::Seq);
    let (unknown, mut temperature, count) = number_unknowns(model);
    let rows = assemble(model, &unknown, &temperature, count)?;
    let mut residual_relative = 0.0;
    if count > 0 {
        check_anchored(model, &unknown, &rows.anchored, count)?;
        let (sol, residual) = solve_rows(&rows, count)?;
        residual_relative = residual;
        for (n, &r) in unknown.iter().enumerate() {
            if r != FIXED {
                temperature[n] = sol[r];
            }
        }
    }
    let flow = boundary_flows(model, &temperature);
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
