//! Solve stage: nodal temperatures from an assembled [`System`].
//!
//! The Dirichlet values are lifted out: with free nodes `f` and fixed nodes `c`, the reduced
//! symmetric positive definite system `K_ff·T_f = f_f − K_fc·T_c` is solved by a
//! [`LinearSolver`] — a sparse Cholesky factorisation (faer, [`cholesky`]) by default, or a
//! Jacobi preconditioned conjugate gradient ([`cg`]). [`Factorized`] ([`factorized`]) keeps
//! the factorisation so further load vectors or Dirichlet value sets (same fixed nodes) are
//! solved without refactoring. Matrices stay in sprs storage throughout; the one conversion
//! into faer's is [`to_faer`], at the factorisation.
//!
//! [`LinearSolver`], [`ConjugateGradient`] and [`Factorized`] are used only by the tests today
//! (the pipeline calls [`solve_system`]); they are kept for load cases, which a later change
//! gives a command-line interface.
//!
//! The pipeline orders the factorisation by a geometric nested dissection of the mesh
//! ([`ordering`], [`Factorized::with_coordinates`]); without coordinates faer's AMD is used.
//! The numeric factorisation runs sequentially (`faer::Par::Seq`) in a fixed order and the
//! ordering does not depend on the thread count, so repeated runs give byte-identical
//! temperatures. After every solve the relative residual of the reduced system
//! is recomputed as a self-check.

pub mod amg;
pub mod cg;
pub mod cholesky;
pub mod factorized;
pub mod nonlinear;
pub mod ordering;
#[cfg(test)]
mod tests;

pub use amg::AmgSolver;
pub use cg::ConjugateGradient;
pub use cholesky::{Ordering, SparseCholesky, to_faer};
pub use factorized::Factorized;

use crate::error::Result;
use crate::fem::System;

/// Nodal temperatures and the solver's self-check.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// °C per node.
    pub temperature: Vec<f64>,
    /// `‖K_ff·T_f − rhs‖₂ / ‖rhs‖₂` of the reduced system (0 when rhs = 0).
    pub residual_relative: f64,
}

/// A solver for a fixed symmetric positive definite matrix. Chosen explicitly only by the
/// tests today ([`Factorized::with_solver`]); the pipeline uses [`SparseCholesky`].
pub trait LinearSolver {
    /// Short name for reports.
    fn name(&self) -> &'static str;
    /// Order of the matrix.
    fn dim(&self) -> usize;
    /// Overwrites `rhs` (length [`dim`](LinearSolver::dim)) with the solution of `A·x = rhs`.
    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()>;
}

/// Solves the system's own load case by sparse Cholesky.
pub fn solve_system(system: &System) -> Result<Solution> {
    Factorized::new(system)?.solve(&system.load, &system.fixed)
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
}
