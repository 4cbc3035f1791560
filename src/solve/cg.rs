//! The iterative solver: conjugate gradient with a Jacobi (diagonal) preconditioner on the
//! sprs matrix. Used only by the tests today, as an independent cross-check of the direct
//! solver; kept for very large systems.

use super::{LinearSolver, dot, norm};
use crate::error::{Error, Result};
use crate::fem::mat_vec;
use sprs::CsMat;

/// Conjugate gradient with a Jacobi (diagonal) preconditioner. An alternative to the direct
/// solver for very large systems, and an independent cross-check of it.
#[derive(Debug, Clone)]
pub struct ConjugateGradient {
    matrix: CsMat<f64>,
    inverse_diagonal: Vec<f64>,
    /// Stop when `‖r‖₂ ≤ relative_tolerance · ‖b‖₂`.
    pub relative_tolerance: f64,
    /// Give up (with an error) after this many iterations.
    pub max_iterations: usize,
}

impl ConjugateGradient {
    /// Prepares the solver for the symmetric positive definite matrix `a` (stored CSR or
    /// CSC); refuses a matrix with a diagonal entry that is not positive.
    pub fn new(a: &CsMat<f64>, relative_tolerance: f64, max_iterations: usize) -> Result<Self> {
        let n = a.rows();
        let a = if a.is_csr() { a.clone() } else { a.to_csr() };
        let mut inverse_diagonal = vec![0.0; n];
        for (i, row) in a.outer_iterator().enumerate() {
            let d = row.get(i).copied().unwrap_or(0.0);
            if !(d.is_finite() && d > 0.0) {
                return Err(Error::run(format!(
                    "conjugate gradient: diagonal entry {i} of the reduced matrix is {d}, not positive"
                )));
            }
            inverse_diagonal[i] = 1.0 / d;
        }
        Ok(ConjugateGradient {
            matrix: a,
            inverse_diagonal,
            relative_tolerance,
            max_iterations,
        })
    }

    /// `z = M⁻¹·r` for the Jacobi preconditioner `M = diag(A)`.
    fn precondition(&self, r: &[f64], z: &mut [f64]) {
        for ((zi, ri), di) in z.iter_mut().zip(r).zip(&self.inverse_diagonal) {
            *zi = ri * di;
        }
    }

    fn converged(&self, r: &[f64], b_norm: f64) -> bool {
        norm(r) <= self.relative_tolerance * b_norm
    }
}

impl LinearSolver for ConjugateGradient {
    fn name(&self) -> &'static str {
        "Jacobi preconditioned conjugate gradient"
    }

    fn dim(&self) -> usize {
        self.matrix.rows()
    }

    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()> {
        let n = self.dim();
        if rhs.len() != n {
            return Err(Error::run(format!(
                "internal error: right-hand side of length {} for a matrix of order {n}",
                rhs.len()
            )));
        }
        let b_norm = norm(rhs);
        let mut x = vec![0.0; n];
        if b_norm == 0.0 {
            rhs.copy_from_slice(&x);
            return Ok(());
        }
        let mut r = rhs.to_vec();
        let mut z = vec![0.0; n];
        self.precondition(&r, &mut z);
        let mut p = z.clone();
        let mut rz = dot(&r, &z);
        for _ in 0..self.max_iterations {
            if self.converged(&r, b_norm) {
                rhs.copy_from_slice(&x);
                return Ok(());
            }
            let ap = mat_vec(&self.matrix, &p)?;
            let pap = dot(&p, &ap);
            if !(pap.is_finite() && pap > 0.0) {
                return Err(Error::run(
                    "conjugate gradient broke down: the reduced matrix is not positive definite",
                ));
            }
            let alpha = rz / pap;
            for i in 0..n {
                x[i] += alpha * p[i];
                r[i] -= alpha * ap[i];
            }
            self.precondition(&r, &mut z);
            let rz_new = dot(&r, &z);
            let beta = rz_new / rz;
            rz = rz_new;
            for (pi, zi) in p.iter_mut().zip(&z) {
                *pi = zi + beta * *pi;
            }
        }
        if self.converged(&r, b_norm) {
            rhs.copy_from_slice(&x);
            return Ok(());
        }
        Err(Error::run(format!(
            "conjugate gradient did not reach the relative residual {:e} in {} iterations (reached {:e})",
            self.relative_tolerance,
            self.max_iterations,
            norm(&r) / b_norm
        )))
    }
}
