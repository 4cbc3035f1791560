//! The multigrid solver: conjugate gradient preconditioned by one V-cycle of smoothed
//! aggregation algebraic multigrid (Vaněk, Mandel, Brezina 1996, "Algebraic multigrid by
//! smoothed aggregation for second and fourth order elliptic problems", Computing 56).
//!
//! Setup, level by level until at most [`COARSEST_UNKNOWNS`] unknowns remain:
//! - strength of connection, symmetric: `j` is strongly connected to `i` when
//!   `|a_ij| ≥ θ_l·√(a_ii·a_jj)`, with `θ_l = 0.08·(1/2)^l` on level `l` (the paper's choice,
//!   common practice);
//! - greedy aggregation in node order (the paper's three passes: whole untouched strong
//!   neighbourhoods, then the rest joined to the aggregate of their strongest aggregated
//!   neighbour, then leftovers aggregated among themselves) — deterministic;
//! - a piecewise constant tentative prolongator `P₀` (the near null space of the scalar
//!   conduction operator is the constants), smoothed by one damped Jacobi step
//!   `P = (I − ω·D⁻¹A)·P₀`, `ω = 4/(3ρ)`, `ρ` the spectral radius of `D⁻¹A` estimated by
//!   [`POWER_ITERATIONS`] power iterations from a fixed start vector;
//! - the Galerkin coarse operator `Pᵀ·A·P` (our own sparse products, symmetrised exactly).
//!
//! The coarsest level is factorised by [`SparseCholesky`] (AMD). The V-cycle smooths by one
//! forward Gauss–Seidel sweep before the coarse correction and one backward sweep after, so
//! the preconditioner is symmetric positive definite as conjugate gradient needs. A system of
//! at most [`COARSEST_UNKNOWNS`] unknowns has no levels: the preconditioner is the Cholesky
//! solve and one iteration ends it.
//!
//! Conjugate gradient stops on the row-wise backward error the pipeline's `solver_residual`
//! self-check measures, `max_i |r_i| / (Σ_j|a_ij|·‖x‖∞ + |b_i|)`, at
//! [`BACKWARD_ERROR_FACTOR`]·ε·√n (the check allows 64·ε·√n on the full system, whose
//! denominators are no smaller); the stop is confirmed on the true residual `b − A·x`.
//!
//! Everything runs sequentially in a fixed order: the same bits whatever the thread count.

use super::{LinearSolver, SparseCholesky, dot};
use crate::error::{Error, Result};
use sprs::CsMat;
use std::sync::atomic::{AtomicUsize, Ordering as AtomicOrdering};

/// Levels are added until a level has at most this many unknowns, which is then factorised.
pub const COARSEST_UNKNOWNS: usize = 2000;
/// Strength threshold θ on the finest level; halved on each coarser one.
pub const STRENGTH_THRESHOLD: f64 = 0.08;
/// Power iterations estimating the spectral radius of `D⁻¹A`.
pub const POWER_ITERATIONS: usize = 15;
/// Conjugate gradient stops at a row-wise backward error of this many ε times √n.
pub const BACKWARD_ERROR_FACTOR: f64 = 16.0;
/// Levels at most (coarsening by aggregation divides the unknowns by about 5–9 per level).
const MAX_LEVELS: usize = 25;

/// Compressed sparse rows with sorted column indices.
#[derive(Debug, Clone)]
struct Csr {
    rows: usize,
    cols: usize,
    ptr: Vec<usize>,
    /// Column indices (u32: a quarter less memory and bandwidth than usize).
    idx: Vec<u32>,
    val: Vec<f64>,
}

impl Csr {
    fn from_sprs(a: &CsMat<f64>) -> Self {
        let a = if a.is_csr() {
            a.view()
        } else {
            a.transpose_view()
        };
        // A CSC matrix viewed transposed is the CSR of the transpose; the matrices here are
        // symmetric, so that is the matrix itself.
        Csr {
            rows: a.rows(),
            cols: a.cols(),
            ptr: a.indptr().to_proper().into_owned(),
            idx: a.indices().iter().map(|&j| j as u32).collect(),
            val: a.data().to_vec(),
        }
    }

    fn to_sprs(&self) -> Result<CsMat<f64>> {
        CsMat::try_new(
            (self.rows, self.cols),
            self.ptr.clone(),
            self.idx.iter().map(|&j| j as usize).collect(),
            self.val.clone(),
        )
        .map_err(|e| Error::run(format!("internal error: multigrid level matrix: {}", e.3)))
    }

    fn row(&self, i: usize) -> (&[u32], &[f64]) {
        let r = self.ptr[i]..self.ptr[i + 1];
        (&self.idx[r.clone()], &self.val[r])
    }

    fn nnz(&self) -> usize {
        self.val.len()
    }

    fn diagonal(&self) -> Vec<f64> {
        (0..self.rows)
            .map(|i| {
                let (c, v) = self.row(i);
                c.binary_search(&(i as u32)).map_or(0.0, |k| v[k])
            })
            .collect()
    }

    /// `y = A·x`.
    fn mul_vec(&self, x: &[f64], y: &mut [f64]) {
        for (i, yi) in y.iter_mut().enumerate() {
            let (c, v) = self.row(i);
            *yi = c.iter().zip(v).map(|(&j, a)| a * x[j as usize]).sum();
        }
    }

    /// `y += A·x`.
    fn mul_vec_add(&self, x: &[f64], y: &mut [f64]) {
        for (i, yi) in y.iter_mut().enumerate() {
            let (c, v) = self.row(i);
            *yi += c
                .iter()
                .zip(v)
                .map(|(&j, a)| a * x[j as usize])
                .sum::<f64>();
        }
    }

    /// `r = b − A·x`.
    fn residual(&self, b: &[f64], x: &[f64], r: &mut [f64]) {
        for (i, ri) in r.iter_mut().enumerate() {
            let (c, v) = self.row(i);
            *ri = b[i]
                - c.iter()
                    .zip(v)
                    .map(|(&j, a)| a * x[j as usize])
                    .sum::<f64>();
        }
    }

    fn transpose(&self) -> Csr {
        let mut count = vec![0usize; self.cols + 1];
        for &j in &self.idx {
            count[j as usize + 1] += 1;
        }
        for j in 0..self.cols {
            count[j + 1] += count[j];
        }
        let ptr = count.clone();
        let mut next = count;
        let mut idx = vec![0u32; self.nnz()];
        let mut val = vec![0.0; self.nnz()];
        for i in 0..self.rows {
            let (c, v) = self.row(i);
            for (&j, &a) in c.iter().zip(v) {
                let j = j as usize;
                idx[next[j]] = i as u32;
                val[next[j]] = a;
                next[j] += 1;
            }
        }
        Csr {
            rows: self.cols,
            cols: self.rows,
            ptr,
            idx,
            val,
        }
    }

    /// `A·B` (Gustavson's row-by-row product with a dense accumulator; each entry summed in
    /// the order of the rows of `B` it comes from, columns sorted per row).
    fn mul(&self, b: &Csr) -> Csr {
        let mut slot = vec![usize::MAX; b.cols];
        let mut ptr = Vec::with_capacity(self.rows + 1);
        ptr.push(0);
        let (mut idx, mut val) = (Vec::new(), Vec::new());
        let mut cols: Vec<usize> = Vec::new();
        let mut acc: Vec<f64> = Vec::new();
        let mut order: Vec<usize> = Vec::new();
        for i in 0..self.rows {
            cols.clear();
            acc.clear();
            let (ca, va) = self.row(i);
            for (&k, &a) in ca.iter().zip(va) {
                let (cb, vb) = b.row(k as usize);
                for (&j, &bv) in cb.iter().zip(vb) {
                    let j = j as usize;
                    if slot[j] == usize::MAX {
                        slot[j] = cols.len();
                        cols.push(j);
                        acc.push(a * bv);
                    } else {
                        acc[slot[j]] += a * bv;
                    }
                }
            }
            order.clear();
            order.extend(0..cols.len());
            order.sort_unstable_by_key(|&k| cols[k]);
            for &k in &order {
                idx.push(cols[k] as u32);
                val.push(acc[k]);
                slot[cols[k]] = usize::MAX;
            }
            ptr.push(idx.len());
        }
        Csr {
            rows: self.rows,
            cols: b.cols,
            ptr,
            idx,
            val,
        }
    }
}

/// A deterministic start vector in (0.5, 1.5) (a fixed-seed xorshift sequence).
fn start_vector(n: usize) -> Vec<f64> {
    let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
    (0..n)
        .map(|_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            0.5 + (s >> 11) as f64 / (1u64 << 53) as f64
        })
        .collect()
}

/// Spectral radius of `D⁻¹A` by power iterations on the similar symmetric matrix
/// `D^{-1/2}·A·D^{-1/2}` (Rayleigh quotient of the last iterate).
fn spectral_radius(a: &Csr, inverse_sqrt_diagonal: &[f64]) -> f64 {
    let n = a.rows;
    let mut v = start_vector(n);
    let mut w = vec![0.0; n];
    let mut u = vec![0.0; n];
    let mut rho = 0.0;
    for _ in 0..POWER_ITERATIONS {
        let nv = dot(&v, &v).sqrt();
        for x in v.iter_mut() {
            *x /= nv;
        }
        for ((ui, vi), s) in u.iter_mut().zip(&v).zip(inverse_sqrt_diagonal) {
            *ui = vi * s;
        }
        a.mul_vec(&u, &mut w);
        for (wi, s) in w.iter_mut().zip(inverse_sqrt_diagonal) {
            *wi *= s;
        }
        rho = dot(&v, &w);
        std::mem::swap(&mut v, &mut w);
    }
    rho
}

/// Aggregate of each node (Vaněk–Mandel–Brezina's three passes, in node order) and the number
/// of aggregates. `strong(i, j, a_ij)` tells a strong connection.
fn aggregate(a: &Csr, diagonal: &[f64], theta: f64) -> (Vec<usize>, usize) {
    const NONE: usize = usize::MAX;
    let n = a.rows;
    let theta2 = theta * theta;
    let strong = |i: usize, j: usize, v: f64| j != i && v * v >= theta2 * diagonal[i] * diagonal[j];
    let row = |i: usize| {
        let (c, v) = a.row(i);
        c.iter().map(|&j| j as usize).zip(v.iter().copied())
    };
    let mut agg = vec![NONE; n];
    let mut count = 0;
    // 1: every node whose strong neighbourhood is untouched starts an aggregate of it.
    for i in 0..n {
        if agg[i] != NONE {
            continue;
        }
        if row(i).any(|(j, x)| strong(i, j, x) && agg[j] != NONE) {
            continue;
        }
        agg[i] = count;
        for (j, x) in row(i) {
            if strong(i, j, x) {
                agg[j] = count;
            }
        }
        count += 1;
    }
    // 2: the rest join the first-pass aggregate of their strongest aggregated neighbour.
    let first = agg.clone();
    for i in 0..n {
        if agg[i] != NONE {
            continue;
        }
        let mut best: Option<(f64, usize)> = None;
        for (j, x) in row(i) {
            if strong(i, j, x) && first[j] != NONE {
                let s = x.abs() / (diagonal[i] * diagonal[j]).sqrt();
                if best.is_none_or(|(b, _)| s > b) {
                    best = Some((s, first[j]));
                }
            }
        }
        if let Some((_, k)) = best {
            agg[i] = k;
        }
    }
    // 3: leftovers form aggregates with their untouched strong neighbours.
    for i in 0..n {
        if agg[i] != NONE {
            continue;
        }
        agg[i] = count;
        for (j, x) in row(i) {
            if strong(i, j, x) && agg[j] == NONE {
                agg[j] = count;
            }
        }
        count += 1;
    }
    (agg, count)
}

/// The smoothed prolongator `P = (I − ω·D⁻¹A)·P₀` of the aggregates `agg` (`P₀` = 1 at
/// (i, agg(i))).
fn smoothed_prolongator(a: &Csr, diagonal: &[f64], agg: &[usize], aggregates: usize) -> Csr {
    let inverse_sqrt: Vec<f64> = diagonal.iter().map(|d| 1.0 / d.sqrt()).collect();
    let omega = 4.0 / (3.0 * spectral_radius(a, &inverse_sqrt));
    let mut slot = vec![usize::MAX; aggregates];
    let mut ptr = Vec::with_capacity(a.rows + 1);
    ptr.push(0);
    let (mut idx, mut val) = (Vec::new(), Vec::new());
    let (mut cols, mut acc, mut order) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..a.rows {
        cols.clear();
        acc.clear();
        let scale = -omega / diagonal[i];
        let (c, v) = a.row(i);
        for (&j, &x) in c.iter().zip(v) {
            let k = agg[j as usize];
            if slot[k] == usize::MAX {
                slot[k] = cols.len();
                cols.push(k);
                acc.push(scale * x);
            } else {
                acc[slot[k]] += scale * x;
            }
        }
        let k = agg[i];
        if slot[k] == usize::MAX {
            slot[k] = cols.len();
            cols.push(k);
            acc.push(1.0);
        } else {
            acc[slot[k]] += 1.0;
        }
        order.clear();
        order.extend(0..cols.len());
        order.sort_unstable_by_key(|&m| cols[m]);
        for &m in &order {
            idx.push(cols[m] as u32);
            val.push(acc[m]);
            slot[cols[m]] = usize::MAX;
        }
        ptr.push(idx.len());
    }
    Csr {
        rows: a.rows,
        cols: aggregates,
        ptr,
        idx,
        val,
    }
}

/// `(A + Aᵀ)/2` of a structurally symmetric `A` (as the Galerkin product is): removes the
/// round-off asymmetry of the product so each coarse matrix is exactly symmetric.
fn symmetrised(a: Csr) -> Csr {
    let t = a.transpose();
    debug_assert_eq!(t.idx, a.idx);
    let val = a
        .val
        .iter()
        .zip(&t.val)
        .map(|(x, y)| 0.5 * (x + y))
        .collect();
    Csr { val, ..a }
}

/// One level above the coarsest: its matrix, inverse diagonal and transfer operators.
#[derive(Debug)]
struct Level {
    a: Csr,
    inverse_diagonal: Vec<f64>,
    /// Prolongator to this level from the next coarser one; restriction is its transpose,
    /// applied by scattering (not stored).
    p: Csr,
}

/// The V-cycle's vectors per level (right-hand side, correction).
struct Work {
    b: Vec<Vec<f64>>,
    x: Vec<Vec<f64>>,
}

/// Conjugate gradient preconditioned by a smoothed aggregation AMG V-cycle.
#[derive(Debug)]
pub struct AmgSolver {
    levels: Vec<Level>,
    /// The finest matrix when there are no levels (else `levels[0].a`).
    fine: Option<Csr>,
    coarse: SparseCholesky,
    coarse_dim: usize,
    /// `Σ_j |a_ij|` per row of the finest matrix (the backward error's scale).
    row_abs: Vec<f64>,
    /// Stop at a row-wise backward error of this value.
    pub backward_error_tolerance: f64,
    /// Give up (with an error) after this many iterations.
    pub max_iterations: usize,
    iterations: AtomicUsize,
}

impl AmgSolver {
    /// Builds the hierarchy for the symmetric positive definite matrix `a` (both triangles
    /// stored, CSR or CSC with sorted indices); refuses a diagonal entry that is not positive.
    pub fn new(a: &CsMat<f64>) -> Result<Self> {
        let n = a.rows();
        if a.cols() != n {
            return Err(Error::run(format!(
                "internal error: multigrid for a non-square {n}×{} matrix",
                a.cols()
            )));
        }
        let mut current = Csr::from_sprs(a);
        let row_abs = (0..n)
            .map(|i| current.row(i).1.iter().map(|v| v.abs()).sum())
            .collect();
        let mut levels = Vec::new();
        let mut theta = STRENGTH_THRESHOLD;
        while current.rows > COARSEST_UNKNOWNS && levels.len() < MAX_LEVELS {
            let diagonal = current.diagonal();
            if let Some(i) = diagonal.iter().position(|d| !(d.is_finite() && *d > 0.0)) {
                return Err(Error::run(format!(
                    "multigrid: diagonal entry {i} of the level-{} matrix is {}, not positive",
                    levels.len(),
                    diagonal[i]
                )));
            }
            let (agg, count) = aggregate(&current, &diagonal, theta);
            if count as f64 > 0.8 * current.rows as f64 {
                break; // coarsening stalled: factorise this level
            }
            let p = smoothed_prolongator(&current, &diagonal, &agg, count);
            let coarse = symmetrised(p.transpose().mul(&current.mul(&p)));
            let inverse_diagonal = diagonal.iter().map(|d| 1.0 / d).collect();
            levels.push(Level {
                a: std::mem::replace(&mut current, coarse),
                inverse_diagonal,
                p,
            });
            theta *= 0.5;
        }
        let coarse_dim = current.rows;
        let coarse = SparseCholesky::factorize(&current.to_sprs()?)?;
        let fine = levels.is_empty().then_some(current);
        Ok(AmgSolver {
            levels,
            fine,
            coarse,
            coarse_dim,
            row_abs,
            backward_error_tolerance: BACKWARD_ERROR_FACTOR
                * f64::EPSILON
                * (n.max(1) as f64).sqrt(),
            max_iterations: 500,
            iterations: AtomicUsize::new(0),
        })
    }

    /// Unknowns per level, finest first, the factorised coarsest last.
    pub fn level_sizes(&self) -> Vec<usize> {
        let mut s: Vec<usize> = self.levels.iter().map(|l| l.a.rows).collect();
        s.push(self.coarse_dim);
        s
    }

    /// Stored entries of all level matrices and transfer operators (operator and grid
    /// complexity are read off this and [`level_sizes`](Self::level_sizes)).
    pub fn stored_entries(&self) -> usize {
        self.levels
            .iter()
            .map(|l| l.a.nnz() + l.p.nnz())
            .sum::<usize>()
            + self.fine.as_ref().map_or(0, Csr::nnz)
            + self.coarse.factor_entries()
    }

    /// Conjugate gradient iterations of the last solve.
    pub fn last_iterations(&self) -> usize {
        self.iterations.load(AtomicOrdering::Relaxed)
    }

    fn fine_matrix(&self) -> Result<&Csr> {
        self.levels
            .first()
            .map(|l| &l.a)
            .or(self.fine.as_ref())
            .ok_or_else(|| Error::run("internal error: multigrid without its finest matrix"))
    }

    fn work(&self) -> Work {
        let sizes = self.level_sizes();
        let zeros = || sizes.iter().map(|&n| vec![0.0; n]).collect();
        Work {
            b: zeros(),
            x: zeros(),
        }
    }

    /// `z = M⁻¹·r`: one V-cycle from a zero start.
    fn precondition(&self, r: &[f64], z: &mut [f64], w: &mut Work) -> Result<()> {
        w.b[0].copy_from_slice(r);
        self.cycle(0, w)?;
        z.copy_from_slice(&w.x[0]);
        Ok(())
    }

    /// V-cycle on level `l` for `w.b[l]`, result in `w.x[l]`.
    fn cycle(&self, l: usize, w: &mut Work) -> Result<()> {
        let Some(level) = self.levels.get(l) else {
            w.x[l].copy_from_slice(&w.b[l]);
            return self.coarse.solve_in_place(&mut w.x[l]);
        };
        let a = &level.a;
        let (b, x) = (&w.b[l], &mut w.x[l]);
        x.fill(0.0);
        // Forward Gauss–Seidel.
        for i in 0..a.rows {
            let (c, v) = a.row(i);
            let ax: f64 = c.iter().zip(v).map(|(&j, y)| y * x[j as usize]).sum();
            x[i] += (b[i] - ax) * level.inverse_diagonal[i];
        }
        // Residual, restricted by Pᵀ as it is formed (scattered in row order).
        let (head, tail) = w.b.split_at_mut(l + 1);
        let (b, coarse_b) = (&head[l], &mut tail[0]);
        coarse_b.fill(0.0);
        for (i, bi) in b.iter().enumerate() {
            let (c, v) = a.row(i);
            let ri = bi
                - c.iter()
                    .zip(v)
                    .map(|(&j, y)| y * x[j as usize])
                    .sum::<f64>();
            let (pc, pv) = level.p.row(i);
            for (&k, &p) in pc.iter().zip(pv) {
                coarse_b[k as usize] += p * ri;
            }
        }
        self.cycle(l + 1, w)?;
        let (head, tail) = w.x.split_at_mut(l + 1);
        let x = &mut head[l];
        level.p.mul_vec_add(&tail[0], x);
        // Backward Gauss–Seidel.
        let b = &w.b[l];
        for i in (0..a.rows).rev() {
            let (c, v) = a.row(i);
            let ax: f64 = c.iter().zip(v).map(|(&j, y)| y * x[j as usize]).sum();
            x[i] += (b[i] - ax) * level.inverse_diagonal[i];
        }
        Ok(())
    }

    /// `max_i |r_i| / (Σ_j|a_ij|·‖x‖∞ + |b_i|)`.
    fn backward_error(&self, r: &[f64], x: &[f64], b: &[f64]) -> f64 {
        let x_norm = x.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        r.iter()
            .zip(&self.row_abs)
            .zip(b)
            .fold(0.0f64, |m, ((ri, s), bi)| {
                let d = s * x_norm + bi.abs();
                if *ri == 0.0 { m } else { m.max(ri.abs() / d) }
            })
    }
}

impl LinearSolver for AmgSolver {
    fn name(&self) -> &'static str {
        "smoothed aggregation AMG preconditioned conjugate gradient"
    }

    fn dim(&self) -> usize {
        self.row_abs.len()
    }

    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()> {
        let n = self.dim();
        if rhs.len() != n {
            return Err(Error::run(format!(
                "internal error: right-hand side of length {} for a matrix of order {n}",
                rhs.len()
            )));
        }
        self.iterations.store(0, AtomicOrdering::Relaxed);
        if rhs.iter().all(|&v| v == 0.0) {
            return Ok(());
        }
        let a = self.fine_matrix()?;
        let b = rhs.to_vec();
        let mut w = self.work();
        let mut x = vec![0.0; n];
        let mut r = b.clone();
        let mut z = vec![0.0; n];
        let mut q = vec![0.0; n];
        self.precondition(&r, &mut z, &mut w)?;
        let mut p = z.clone();
        let mut rz = dot(&r, &z);
        let mut reached = f64::INFINITY;
        for k in 1..=self.max_iterations {
            a.mul_vec(&p, &mut q);
            let pq = dot(&p, &q);
            if !(pq.is_finite() && pq > 0.0) {
                return Err(Error::run(
                    "multigrid conjugate gradient broke down: the reduced matrix is not positive definite",
                ));
            }
            let alpha = rz / pq;
            for i in 0..n {
                x[i] += alpha * p[i];
                r[i] -= alpha * q[i];
            }
            let mut restart = false;
            if self.backward_error(&r, &x, &b) <= self.backward_error_tolerance {
                // Confirm on the true residual; go on from it when the recurrence drifted.
                a.residual(&b, &x, &mut r);
                reached = self.backward_error(&r, &x, &b);
                if reached <= self.backward_error_tolerance {
                    self.iterations.store(k, AtomicOrdering::Relaxed);
                    rhs.copy_from_slice(&x);
                    return Ok(());
                }
                restart = true;
            }
            self.precondition(&r, &mut z, &mut w)?;
            let rz_new = dot(&r, &z);
            let beta = if restart { 0.0 } else { rz_new / rz };
            rz = rz_new;
            for (pi, zi) in p.iter_mut().zip(&z) {
                *pi = zi + beta * *pi;
            }
        }
        Err(Error::run(format!(
            "multigrid conjugate gradient did not reach the backward error {:.3e} in {} iterations (last confirmed {reached:.3e})",
            self.backward_error_tolerance, self.max_iterations
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::assemble;
    use crate::fem::testutil::{rectangle_mesh, rectangle_section};
    use crate::model::BoundaryKind;
    use crate::solve::factorized::reduced_system;

    /// The reduced system of a 1 × 0.8 m plate of two materials (k = 1.4 and 35 W/(m·K)),
    /// fixed on top, convection below, on an `n × n` grid of right triangles.
    fn plate(n: usize) -> (CsMat<f64>, Vec<f64>) {
        plate_with(n, [1.4, 35.0], 12.0)
    }

    /// [`plate`] with conductivities `k` and film coefficient `h`.
    fn plate_with(n: usize, k: [f64; 2], h: f64) -> (CsMat<f64>, Vec<f64>) {
        let tags = [Some(0), Some(1), Some(2), Some(1)];
        let section = rectangle_section(
            1.0,
            0.8,
            &[("a", k[0], 2000.0), ("b", k[1], 0.0)],
            &[
                ("air", BoundaryKind::Convection { h, ambient: -3.0 }),
                ("side", BoundaryKind::Insulated),
                ("top", BoundaryKind::Fixed { temperature: 40.0 }),
            ],
            tags,
        );
        let mesh = rectangle_mesh(1.0, 0.8, n, n, tags, |c| usize::from(c[0] > 0.4));
        let system = assemble(&section, &mesh).unwrap();
        let (_, k, f) = reduced_system(&system).unwrap();
        (k, f)
    }

    fn cholesky(k: &CsMat<f64>, f: &[f64]) -> Vec<f64> {
        let mut x = f.to_vec();
        SparseCholesky::factorize(k)
            .unwrap()
            .solve_in_place(&mut x)
            .unwrap();
        x
    }

    fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
        let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y).powi(2)).sum();
        (d / dot(b, b)).sqrt()
    }

    #[test]
    fn equals_cholesky_on_a_plate() {
        // Reference: the direct solve of the same system; conjugate gradient stopped at a
        // backward error of 16·ε·√n leaves a forward error of at most κ times that.
        let (k, f) = plate(120);
        let amg = AmgSolver::new(&k).unwrap();
        assert!(amg.level_sizes().len() >= 2, "{:?}", amg.level_sizes());
        let mut x = f.clone();
        amg.solve_in_place(&mut x).unwrap();
        assert!(relative_difference(&x, &cholesky(&k, &f)) < 1e-9);
        let mut r = vec![0.0; f.len()];
        amg.fine_matrix().unwrap().residual(&f, &x, &mut r);
        assert!(amg.backward_error(&r, &x, &f) <= amg.backward_error_tolerance);
    }

    #[test]
    fn high_contrast_and_stiff_films_converge_to_the_cholesky_solution() {
        // Insulation against steel (k 0.03 and 50 W/(m·K)) and a film of 10⁶ W/(m²·K): the
        // aggregates follow the strong couplings; iterations stay moderate (common practice).
        for (k, h) in [([0.03, 50.0], 12.0), ([1.4, 35.0], 1e6), ([1e-3, 1e3], 1e4)] {
            let (kk, f) = plate_with(120, k, h);
            let amg = AmgSolver::new(&kk).unwrap();
            let mut x = f.clone();
            amg.solve_in_place(&mut x).unwrap();
            assert!(
                amg.last_iterations() < 60,
                "{k:?} {h}: {}",
                amg.last_iterations()
            );
            let d = relative_difference(&x, &cholesky(&kk, &f));
            assert!(d < 1e-9, "{k:?} {h}: {d:e}");
        }
    }

    #[test]
    fn small_systems_are_solved_by_the_coarse_factorisation() {
        let (k, f) = plate(20);
        let amg = AmgSolver::new(&k).unwrap();
        assert_eq!(amg.level_sizes(), vec![k.rows()]);
        let mut x = f.clone();
        amg.solve_in_place(&mut x).unwrap();
        assert_eq!(amg.last_iterations(), 1);
        assert!(relative_difference(&x, &cholesky(&k, &f)) < 1e-12);
    }

    #[test]
    fn v_cycle_is_symmetric() {
        // ⟨M⁻¹x, y⟩ = ⟨x, M⁻¹y⟩: needed by conjugate gradient (common practice).
        let (k, _) = plate(100);
        let amg = AmgSolver::new(&k).unwrap();
        let n = k.rows();
        let x = start_vector(n);
        let y: Vec<f64> = start_vector(2 * n)[n..].to_vec();
        let mut w = amg.work();
        let (mut mx, mut my) = (vec![0.0; n], vec![0.0; n]);
        amg.precondition(&x, &mut mx, &mut w).unwrap();
        amg.precondition(&y, &mut my, &mut w).unwrap();
        let (a, b) = (dot(&mx, &y), dot(&x, &my));
        assert!((a - b).abs() <= 1e-12 * a.abs(), "{a} {b}");
        assert!(dot(&mx, &x) > 0.0 && dot(&my, &y) > 0.0);
    }

    #[test]
    fn iterations_do_not_grow_with_the_mesh() {
        // Multigrid's defining property (Vaněk–Mandel–Brezina 1996): iterations bounded
        // independently of h. Four times the unknowns may cost a few more iterations, not 2×
        // (Jacobi-preconditioned CG would double them).
        let mut its = Vec::new();
        for n in [80, 160] {
            let (k, f) = plate(n);
            let amg = AmgSolver::new(&k).unwrap();
            let mut x = f.clone();
            amg.solve_in_place(&mut x).unwrap();
            its.push(amg.last_iterations());
        }
        assert!(its[0] <= 30 && its[1] <= its[0] + 4, "{its:?}");
    }

    #[test]
    fn aggregation_covers_every_node_in_order() {
        let (k, _) = plate(40);
        let a = Csr::from_sprs(&k);
        let d = a.diagonal();
        let (agg, count) = aggregate(&a, &d, STRENGTH_THRESHOLD);
        assert!(agg.iter().all(|&g| g < count));
        assert_eq!(agg[0], 0);
        // Every aggregate is used; a 5-or-more-point neighbourhood shrinks the level well.
        let mut used = vec![false; count];
        for &g in &agg {
            used[g] = true;
        }
        assert!(used.iter().all(|&u| u));
        assert!(count * 3 < a.rows, "{count} aggregates of {}", a.rows);
    }

    #[test]
    fn galerkin_product_matches_dense() {
        let (k, _) = plate(12);
        let a = Csr::from_sprs(&k);
        let d = a.diagonal();
        let (agg, count) = aggregate(&a, &d, STRENGTH_THRESHOLD);
        let p = smoothed_prolongator(&a, &d, &agg, count);
        let c = symmetrised(p.transpose().mul(&a.mul(&p)));
        let dense = |m: &Csr| {
            let mut out = vec![vec![0.0; m.cols]; m.rows];
            for (i, row) in out.iter_mut().enumerate() {
                let (cc, v) = m.row(i);
                for (&j, &x) in cc.iter().zip(v) {
                    row[j as usize] = x;
                }
            }
            out
        };
        let (da, dp, dc) = (dense(&a), dense(&p), dense(&c));
        for i in 0..count {
            for j in 0..count {
                let mut s = 0.0;
                for (u, row) in da.iter().enumerate() {
                    for (v, &x) in row.iter().enumerate() {
                        s += dp[u][i] * x * dp[v][j];
                    }
                }
                assert!((s - dc[i][j]).abs() <= 1e-12 * dc[i][i].abs(), "{i} {j}");
                assert_eq!(dc[i][j].to_bits(), dc[j][i].to_bits());
            }
        }
    }
}
