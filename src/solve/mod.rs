//! Solve stage: nodal temperatures from an assembled [`System`].
//!
//! The Dirichlet values are lifted out: with free nodes `f` and fixed nodes `c`, the reduced
//! symmetric positive definite system `K_ff·T_f = f_f − K_fc·T_c` is solved by a
//! [`LinearSolver`] — a sparse Cholesky factorisation (faer, [`cholesky`]), conjugate gradient
//! preconditioned by smoothed aggregation algebraic multigrid ([`amg`]), or (tests only) a
//! Jacobi preconditioned conjugate gradient ([`cg`]). [`Factorized`] ([`factorized`]) keeps
//! the prepared solver so further load vectors or Dirichlet value sets (same fixed nodes) are
//! solved without refactoring (load cases, environments). Matrices stay in sprs storage
//! throughout; the one conversion into faer's is [`to_faer`], at the factorisation.
//!
//! The pipeline solves by [`PipelineSolver`] as [`SolverChoice`] says (`solve --solver`,
//! [`Factorized::for_mesh`]): sparse Cholesky, or from [`AMG_FROM_UNKNOWNS`] unknowns on
//! AMG-PCG, which needs a third of the factor's memory or less in about the same time.
//!
//! The pipeline orders the factorisation by a geometric nested dissection of the mesh
//! ([`ordering`], [`Factorized::with_coordinates`]); without coordinates faer's AMD is used.
//! The numeric factorisation of large matrices runs on the rayon pool (faer splits each
//! supernode's dense kernels by output blocks, so the factor is bit for bit the one of a
//! sequential run), the ordering does not depend on the thread count and the multigrid solver
//! runs sequentially, so repeated runs and runs on any number of threads give byte-identical
//! temperatures. After every solve the relative residual of the reduced system is recomputed
//! as a self-check.

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

use crate::error::{Error, Result};
use crate::fem::System;
use serde::Serialize;

/// Nodal temperatures and the solver's self-check.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// °C per node.
    pub temperature: Vec<f64>,
    /// `‖K_ff·T_f − rhs‖₂ / ‖rhs‖₂` of the reduced system (0 when rhs = 0).
    pub residual_relative: f64,
}

/// A solver for a fixed symmetric positive definite matrix ([`Factorized::with_solver`]); the
/// pipeline uses a [`PipelineSolver`].
pub trait LinearSolver {
    /// Short name for reports.
    fn name(&self) -> &'static str;
    /// Order of the matrix.
    fn dim(&self) -> usize;
    /// Overwrites `rhs` (length [`dim`](LinearSolver::dim)) with the solution of `A·x = rhs`.
    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()>;
}

/// The pipeline's solver of the reduced system (`solve --solver`): sparse Cholesky, smoothed
/// aggregation AMG preconditioned conjugate gradient ([`amg`]), or `auto`, which takes AMG from
/// [`AMG_FROM_UNKNOWNS`] unknowns on. Nonlinear models keep their own factorisations.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum SolverChoice {
    /// Cholesky below [`AMG_FROM_UNKNOWNS`] unknowns, AMG from there on (the pipeline keeps
    /// Cholesky for models with load cases or environments: many right-hand sides).
    #[default]
    Auto,
    /// Sparse Cholesky in geometric nested dissection order.
    Cholesky,
    /// Smoothed aggregation AMG preconditioned conjugate gradient.
    Amg,
}

/// `auto` solves reduced systems of at least this many unknowns (about twice as many
/// triangles) by AMG. Measured on the `amg` example's section (examples/amg.rs, README
/// "Performance"): AMG-PCG takes about the time of the Cholesky path (ordering, factorisation,
/// solve) from 1.5·10⁵ unknowns on and a third to a quarter of its memory at every size; below
/// this size the memory saved is small and the direct solve's round-off-level residual and
/// cheap re-solves (load cases, environments) are kept.
pub const AMG_FROM_UNKNOWNS: usize = 250_000;

impl SolverChoice {
    /// `auto`, `cholesky` or `amg`.
    pub fn parse(s: &str) -> Result<Self> {
        match s {
            "auto" => Ok(SolverChoice::Auto),
            "cholesky" => Ok(SolverChoice::Cholesky),
            "amg" => Ok(SolverChoice::Amg),
            other => Err(Error::input(format!(
                "--solver {}: one of auto, cholesky, amg",
                crate::error::printable(other)
            ))),
        }
    }

    /// The choice for a model that solves `many` right-hand sides on one prepared solver
    /// (load cases, environments): `auto` becomes Cholesky, whose re-solves cost a seventh of
    /// an AMG-PCG solve; an explicit choice stays.
    pub fn for_right_hand_sides(self, many: bool) -> SolverChoice {
        match self {
            SolverChoice::Auto if many => SolverChoice::Cholesky,
            other => other,
        }
    }

    /// The solver this choice takes for a reduced system of `unknowns` (never `Auto`).
    pub fn resolve(self, unknowns: usize) -> SolverChoice {
        match self {
            SolverChoice::Auto if unknowns >= AMG_FROM_UNKNOWNS => SolverChoice::Amg,
            SolverChoice::Auto => SolverChoice::Cholesky,
            other => other,
        }
    }
}

/// The solver the pipeline prepared for a reduced system ([`SolverChoice`] resolved).
#[derive(Debug)]
pub enum PipelineSolver {
    /// Sparse Cholesky in geometric nested dissection order.
    Cholesky(SparseCholesky),
    /// Smoothed aggregation AMG preconditioned conjugate gradient.
    Amg(AmgSolver),
}

impl PipelineSolver {
    /// [`SolverChoice::Cholesky`] or [`SolverChoice::Amg`].
    pub fn choice(&self) -> SolverChoice {
        match self {
            PipelineSolver::Cholesky(_) => SolverChoice::Cholesky,
            PipelineSolver::Amg(_) => SolverChoice::Amg,
        }
    }

    /// Conjugate gradient iterations of the last solve (1 for Cholesky).
    pub fn last_iterations(&self) -> usize {
        match self {
            PipelineSolver::Cholesky(_) => 1,
            PipelineSolver::Amg(s) => s.last_iterations(),
        }
    }
}

impl LinearSolver for PipelineSolver {
    fn name(&self) -> &'static str {
        match self {
            PipelineSolver::Cholesky(s) => s.name(),
            PipelineSolver::Amg(s) => s.name(),
        }
    }

    fn dim(&self) -> usize {
        match self {
            PipelineSolver::Cholesky(s) => s.dim(),
            PipelineSolver::Amg(s) => s.dim(),
        }
    }

    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()> {
        match self {
            PipelineSolver::Cholesky(s) => s.solve_in_place(rhs),
            PipelineSolver::Amg(s) => s.solve_in_place(rhs),
        }
    }
}

/// How the base case's reduced system was solved (summary.json `solver`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct SolverRecord {
    /// As asked for (`--solver`).
    pub requested: SolverChoice,
    /// As used: `cholesky` or `amg`.
    pub used: SolverChoice,
    /// Unknowns of the reduced system (free nodes).
    pub unknowns: usize,
    /// Conjugate gradient iterations of the base case (1 for Cholesky, 0 when every node is
    /// fixed).
    pub iterations: usize,
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
