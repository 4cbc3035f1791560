//! Adaptive refinement driven by the Zienkiewicz–Zhu indicator (Dörfler marking).

use crate::error::{Error, Result};
use crate::mesh::{self, MeshOptions};
use crate::run::{Cycle, Prepared, Solved, solve_mesh};
use std::time::Instant;

/// Fraction of the squared error estimate the marked triangles must carry (Dörfler marking).
pub const DORFLER_FRACTION: f64 = 0.5;
/// Largest number of adaptive cycles.
pub const MAX_CYCLES: usize = 30;

/// Accept a target relative error (`--target-error`): a fraction strictly between 0 and 1.
pub fn check_target_error(target: f64) -> Result<()> {
    if !(target.is_finite() && target > 0.0 && target < 1.0) {
        return Err(Error::input(format!(
            "--target-error = {target}: give a fraction between 0 and 1 (e.g. 0.05)"
        )));
    }
    Ok(())
}

/// Adaptive refinement: solve, estimate the error, refine where the indicator carries half the
/// squared estimate (Dörfler marking), until the relative energy-norm estimate is at most
/// `target` or the next mesh would exceed `opts.max_triangles`.
pub fn solve_adaptive(prepared: Prepared, opts: &MeshOptions, target: f64) -> Result<Solved> {
    check_target_error(target)?;
    let mut history = Vec::new();
    let mut mesher = mesh::Mesher::new(&prepared.section, &prepared.pslg, opts)?;
    let t0 = Instant::now();
    mesher.refine(None, &[])?;
    let mut current = solve_mesh(prepared.clone(), mesher.mesh()?, t0.elapsed().as_secs_f64())?;
    loop {
        let e = &current.error_estimate;
        history.push(Cycle {
            cycle: history.len(),
            triangles: current.mesh.triangles.len(),
            nodes: current.mesh.nodes.len(),
            relative_error: e.relative,
            energy_norm_error: e.energy_norm,
        });
        if e.relative <= target {
            break;
        }
        if history.len() >= MAX_CYCLES {
            current.warnings.push(format!(
                "adaptive refinement stopped after {MAX_CYCLES} cycles at a relative error estimate of {:.3e} (target {target})",
                e.relative
            ));
            break;
        }
        // Dörfler marking, largest indicators first (ties: lower triangle index); a point at
        // the centroid of each marked triangle, then refinement restores the quality bounds.
        let eta = &e.indicator;
        let mut order: Vec<usize> = (0..eta.len()).collect();
        order.sort_by(|&a, &b| eta[b].total_cmp(&eta[a]).then(a.cmp(&b)));
        let total: f64 = eta.iter().map(|x| x * x).sum();
        let mut acc = 0.0;
        let mut points = Vec::new();
        for &t in &order {
            if acc >= DORFLER_FRACTION * total {
                break;
            }
            acc += eta[t] * eta[t];
            let [a, b, c] = current.mesh.triangles[t];
            let (pa, pb, pc) = (
                current.mesh.nodes[a],
                current.mesh.nodes[b],
                current.mesh.nodes[c],
            );
            points.push([(pa[0] + pb[0] + pc[0]) / 3.0, (pa[1] + pb[1] + pc[1]) / 3.0]);
        }
        // Each marked triangle becomes about three, before refinement adds its share.
        if current.mesh.triangles.len() + 3 * points.len() > opts.max_triangles {
            current.warnings.push(format!(
                "adaptive refinement stopped at {} triangles (--max-triangles {}) with a relative error estimate of {:.3e}, above the target {target}",
                current.mesh.triangles.len(),
                opts.max_triangles,
                e.relative
            ));
            break;
        }
        let t0 = Instant::now();
        mesher.refine(None, &points)?;
        current = solve_mesh(prepared.clone(), mesher.mesh()?, t0.elapsed().as_secs_f64())?;
    }
    current.adaptivity = history;
    Ok(current)
}
