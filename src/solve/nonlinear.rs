//! The iteration of a nonlinear model ([`NonlinearSystem`]): from a starting field, solve
//! `A(Tⁿ)·ΔT = −R(Tⁿ)` on the free nodes and update, until `‖ΔT‖∞ ≤ 1e-8 · max(temperature
//! range of the field, 1 K)` or [`MAX_ITERATIONS`] updates (then an error with the history,
//! exit 1).
//!
//! - Picard ([`Method::Picard`]): `A` is conduction at the lagged k(T̄_e) plus the radiation
//!   tangent (Newton on the edge term) — symmetric positive definite, so the sparse Cholesky
//!   symbolic analysis (AMD ordering, elimination tree) is done once and only the numeric
//!   factorisation is repeated;
//! - Newton ([`Method::Newton`]): `A` is the full Jacobian; with a conductivity table it is
//!   not symmetric and is factorised by faer's sparse LU (symbolic analysis once, numeric per
//!   iteration). faer reads compressed columns; the CSR arrays of `A` are those of `Aᵀ` in
//!   CSC, so `Aᵀ` is factorised and the transposed solve gives `A⁻¹`.
//!
//! Everything runs sequentially (`Par::Seq`), so iterates are byte-identical run to run.

use crate::error::{Error, Result};
use crate::fem::nonlinear::{MatrixKind, NonlinearSystem};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::sparse::linalg::cholesky::{
    CholeskySymbolicParams, LltRef, SymbolicCholesky, SymmetricOrdering,
    factorize_symbolic_cholesky,
};
use faer::sparse::linalg::lu::{LuRef, NumericLu, SymbolicLu, factorize_symbolic_lu};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMat, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side, Spec};
use serde::Serialize;

/// Most updates before the iteration is declared not converged.
pub const MAX_ITERATIONS: usize = 100;
/// The update tolerance relative to max(temperature range, 1 K).
pub const UPDATE_TOLERANCE: f64 = 1e-8;

/// How the nonlinear system is iterated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Method {
    /// Lagged conductivity, radiation by its tangent: symmetric, sparse Cholesky.
    #[default]
    Picard,
    /// Full Jacobian: sparse LU when a conductivity table is present.
    Newton,
}

impl Method {
    /// `picard` or `newton`.
    pub fn name(self) -> &'static str {
        match self {
            Method::Picard => "picard",
            Method::Newton => "newton",
        }
    }

    /// The method named `s` (`picard`, `newton`); the error lists both.
    pub fn parse(s: &str) -> Result<Self> {
        match s {
            "picard" => Ok(Method::Picard),
            "newton" => Ok(Method::Newton),
            other => Err(Error::input(format!(
                "--nonlinear {}: one of picard, newton",
                crate::error::printable(other)
            ))),
        }
    }
}

/// One update of the iteration.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Iteration {
    /// 1 = the first update.
    pub iteration: usize,
    /// ‖ΔT‖∞ of this update, K.
    pub update_k: f64,
    /// Largest |R_i| over the free nodes after the update, W/m.
    pub residual_w_per_m: f64,
    /// Energy balance after the update: Σ boundary heat flows + heat source = −Σ_free R_i,
    /// W/m.
    pub imbalance_w_per_m: f64,
}

/// The converged field and how it was reached.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// Method used.
    pub method: Method,
    /// Factorisation used: `cholesky` or `lu`.
    pub factorisation: &'static str,
    /// The stopping tolerance on ‖ΔT‖∞ reached, K.
    pub tolerance_k: f64,
    /// The updates, in order.
    pub history: Vec<Iteration>,
    /// °C per node.
    #[serde(skip)]
    pub temperature: Vec<f64>,
}

/// The history as text lines (for the console and for the error of a failed iteration).
pub fn history_lines(history: &[Iteration]) -> Vec<String> {
    history
        .iter()
        .map(|h| {
            format!(
                "  {:>3}  |ΔT|max {:.3e} K  max |R| {:.3e} W/m  balance {:.3e} W/m",
                h.iteration, h.update_k, h.residual_w_per_m, h.imbalance_w_per_m
            )
        })
        .collect()
}

/// The free–free block of a pattern: reduced CSR arrays and, per reduced entry, its position
/// in the full value array.
struct Reduced {
    free: Vec<usize>,
    indptr: Vec<usize>,
    indices: Vec<usize>,
    source: Vec<usize>,
}

impl Reduced {
    fn of(pattern: (&[usize], &[usize]), fixed: &[Option<f64>]) -> Self {
        let (ptr, idx) = pattern;
        let mut reduced = vec![usize::MAX; fixed.len()];
        let mut free = Vec::new();
        for (i, f) in fixed.iter().enumerate() {
            if f.is_none() {
                reduced[i] = free.len();
                free.push(i);
            }
        }
        let (mut indptr, mut indices, mut source) = (vec![0], Vec::new(), Vec::new());
        for &i in &free {
            for (p, &j) in idx.iter().enumerate().take(ptr[i + 1]).skip(ptr[i]) {
                if reduced[j] != usize::MAX {
                    indices.push(reduced[j]);
                    source.push(p);
                }
            }
            indptr.push(indices.len());
        }
        Reduced {
            free,
            indptr,
            indices,
            source,
        }
    }

    fn symbolic(&self) -> Result<SymbolicSparseColMat<usize>> {
        let n = self.free.len();
        Ok(SymbolicSparseColMat::new_checked(
            n,
            n,
            self.indptr.clone(),
            None,
            self.indices.clone(),
        ))
    }
}

/// The linear solver of the iteration: symbolic analysis once, numeric per matrix.
enum Factor {
    Cholesky {
        symbolic: SymbolicCholesky<usize>,
        values: Vec<f64>,
    },
    Lu {
        symbolic: SymbolicLu<usize>,
        numeric: NumericLu<usize, f64>,
    },
}

fn fail(what: &str) -> Error {
    Error::run(format!(
        "nonlinear iteration: the linear solve failed ({what}); the model's conductivities or film coefficients may be extreme"
    ))
}

impl Factor {
    fn new(pattern: SymbolicSparseColMatRef<'_, usize>, symmetric: bool) -> Result<Self> {
        if symmetric {
            let symbolic = factorize_symbolic_cholesky(
                pattern,
                Side::Lower,
                SymmetricOrdering::Amd,
                CholeskySymbolicParams::default(),
            )
            .map_err(|e| fail(&format!("symbolic Cholesky: {e:?}")))?;
            let values = vec![0.0; symbolic.len_val()];
            Ok(Factor::Cholesky { symbolic, values })
        } else {
            let symbolic = factorize_symbolic_lu(pattern, Default::default())
                .map_err(|e| fail(&format!("symbolic LU: {e:?}")))?;
            Ok(Factor::Lu {
                symbolic,
                numeric: NumericLu::new(),
            })
        }
    }

    fn name(&self) -> &'static str {
        match self {
            Factor::Cholesky { .. } => "cholesky",
            Factor::Lu { .. } => "lu",
        }
    }

    /// Factorises the matrix with values `a` on the pattern and solves `A·x = rhs` in place
    /// (for LU: the CSC matrix is `Aᵀ`, so the transposed solve).
    fn solve(&mut self, a: SparseColMatRef<'_, usize, f64>, rhs: &mut [f64]) -> Result<()> {
        let n = rhs.len();
        let x = MatMut::from_column_major_slice_mut(rhs, n, 1);
        match self {
            Factor::Cholesky { symbolic, values } => {
                let params: Spec<LltParams, f64> = Default::default();
                let mut buf = MemBuffer::try_new(
                    symbolic.factorize_numeric_llt_scratch::<f64>(Par::Seq, params),
                )
                .map_err(|_| fail("out of memory"))?;
                symbolic
                    .factorize_numeric_llt(
                        values,
                        a,
                        Side::Lower,
                        Default::default(),
                        Par::Seq,
                        MemStack::new(&mut buf),
                        params,
                    )
                    .map_err(|e| fail(&format!("{e:?}")))?;
                let mut buf =
                    MemBuffer::try_new(symbolic.solve_in_place_scratch::<f64>(1, Par::Seq))
                        .map_err(|_| fail("out of memory"))?;
                LltRef::new(symbolic, values).solve_in_place_with_conj(
                    Conj::No,
                    x,
                    Par::Seq,
                    MemStack::new(&mut buf),
                );
            }
            Factor::Lu { symbolic, numeric } => {
                let mut buf = MemBuffer::try_new(
                    symbolic.factorize_numeric_lu_scratch::<f64>(Par::Seq, Default::default()),
                )
                .map_err(|_| fail("out of memory"))?;
                let lu: LuRef<'_, usize, f64> = symbolic
                    .factorize_numeric_lu(
                        numeric,
                        a,
                        Par::Seq,
                        MemStack::new(&mut buf),
                        Default::default(),
                    )
                    .map_err(|e| fail(&format!("{e:?}")))?;
                let mut buf = MemBuffer::try_new(
                    symbolic.solve_transpose_in_place_scratch::<f64>(1, Par::Seq),
                )
                .map_err(|_| fail("out of memory"))?;
                lu.solve_transpose_in_place_with_conj(
                    Conj::No,
                    x,
                    Par::Seq,
                    MemStack::new(&mut buf),
                );
            }
        }
        Ok(())
    }
}

/// Free-node statistics of a residual: (max |R_i|, −Σ R_i).
fn residual_stats(free: &[usize], r: &[f64]) -> (f64, f64) {
    let max = free.iter().fold(0.0f64, |m, &i| m.max(r[i].abs()));
    let sum: f64 = free.iter().map(|&i| r[i]).sum();
    (max, -sum)
}

/// Iterates from `start` (Dirichlet values already in place) until the update criterion holds;
/// an error (exit 1) with the history after [`MAX_ITERATIONS`] updates or a non-finite
/// iterate.
pub fn iterate(sys: &NonlinearSystem, start: Vec<f64>, method: Method) -> Result<Outcome> {
    iterate_capped(sys, start, method, MAX_ITERATIONS)
}

/// [`iterate`] with another cap on the number of updates (`cap` ≥ 1).
pub fn iterate_capped(
    sys: &NonlinearSystem,
    start: Vec<f64>,
    method: Method,
    cap: usize,
) -> Result<Outcome> {
    let reduced = Reduced::of(sys.pattern(), sys.fixed());
    let symbolic = reduced.symbolic()?;
    let symmetric = method == Method::Picard || !sys.has_tables();
    let kind = match method {
        Method::Picard => MatrixKind::Picard,
        Method::Newton => MatrixKind::Newton,
    };
    let mut factor = Factor::new(symbolic.as_ref(), symmetric)?;
    let mut t = start;
    let mut history = Vec::new();
    let mut tolerance_k = UPDATE_TOLERANCE;
    if reduced.free.is_empty() {
        return Ok(Outcome {
            method,
            factorisation: factor.name(),
            tolerance_k,
            history,
            temperature: t,
        });
    }
    let mut r = sys.residual(&t);
    for iteration in 1..=cap.max(1) {
        let full = sys.matrix(&t, kind);
        let values: Vec<f64> = reduced.source.iter().map(|&p| full[p]).collect();
        let a = SparseColMatRef::new(symbolic.as_ref(), &values);
        let mut dt: Vec<f64> = reduced.free.iter().map(|&i| -r[i]).collect();
        factor.solve(a, &mut dt)?;
        let mut update = 0.0f64;
        for (&i, d) in reduced.free.iter().zip(&dt) {
            t[i] += d;
            update = update.max(d.abs());
        }
        r = sys.residual(&t);
        let (residual, imbalance) = residual_stats(&reduced.free, &r);
        history.push(Iteration {
            iteration,
            update_k: update,
            residual_w_per_m: residual,
            imbalance_w_per_m: imbalance,
        });
        if !(update.is_finite() && residual.is_finite()) {
            return Err(not_converged(
                method,
                &history,
                "the iterate is no longer finite",
            ));
        }
        let (lo, hi) = t
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
                (l.min(v), h.max(v))
            });
        tolerance_k = UPDATE_TOLERANCE * (hi - lo).max(1.0);
        if update <= tolerance_k {
            return Ok(Outcome {
                method,
                factorisation: factor.name(),
                tolerance_k,
                history,
                temperature: t,
            });
        }
    }
    Err(not_converged(
        method,
        &history,
        &format!("no convergence in {} iterations", cap.max(1)),
    ))
}

/// The error of an iteration that did not converge, with its history.
fn not_converged(method: Method, history: &[Iteration], why: &str) -> Error {
    let other = match method {
        Method::Picard => "newton",
        Method::Newton => "picard",
    };
    Error::run(format!(
        "nonlinear iteration ({}): {why} (stop when |ΔT|max <= {UPDATE_TOLERANCE:e} · max(temperature range, 1 K)); no results written; try --nonlinear {other}. History:\n{}",
        method.name(),
        history_lines(history).join("\n")
    ))
}
