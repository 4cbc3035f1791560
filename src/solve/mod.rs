//! Solve stage: nodal temperatures from an assembled [`System`].
//!
//! The Dirichlet values are lifted out: with free nodes `f` and fixed nodes `c`, the reduced
//! symmetric positive definite system `K_ff·T_f = f_f − K_fc·T_c` is solved by a
//! [`LinearSolver`] — a sparse Cholesky factorisation (faer) by default, or a Jacobi
//! preconditioned conjugate gradient. [`Factorized`] keeps the factorisation so further load
//! vectors or Dirichlet value sets (same fixed nodes) are solved without refactoring.
//!
//! Everything runs sequentially (`faer::Par::Seq`) in a fixed order, so repeated runs give
//! byte-identical temperatures. After every solve the relative residual of the reduced system
//! is recomputed as a self-check.

use crate::error::{Error, Result};
use crate::fem::{System, mat_vec};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::sparse::linalg::cholesky::{
    CholeskySymbolicParams, LltRef, SymbolicCholesky, SymmetricOrdering,
    factorize_symbolic_cholesky,
};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{Conj, MatMut, Par, Side, Spec};
use sprs::CsMat;

/// Nodal temperatures and the solver's self-check.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// °C per node.
    pub temperature: Vec<f64>,
    /// `‖K_ff·T_f − rhs‖₂ / ‖rhs‖₂` of the reduced system (0 when rhs = 0).
    pub residual_relative: f64,
}

/// A solver for a fixed symmetric positive definite matrix.
pub trait LinearSolver {
    /// Short name for reports.
    fn name(&self) -> &'static str;
    /// Order of the matrix.
    fn dim(&self) -> usize;
    /// Overwrites `rhs` (length [`dim`](LinearSolver::dim)) with the solution of `A·x = rhs`.
    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()>;
}

/// Sparse Cholesky factorisation `A = L·Lᵀ` (faer, AMD ordering), sequential.
#[derive(Debug)]
pub struct SparseCholesky {
    symbolic: SymbolicCholesky<usize>,
    values: Vec<f64>,
}

impl SparseCholesky {
    /// Factorises a symmetric matrix stored with both triangles (CSR or CSC with sorted
    /// indices); only its lower triangle is read.
    pub fn factorize(a: &CsMat<f64>) -> Result<Self> {
        let n = a.rows();
        if a.cols() != n {
            return Err(Error::run(
                "internal error: Cholesky of a non-square matrix",
            ));
        }
        // A symmetric matrix's CSR arrays are its CSC arrays.
        let indptr = a.indptr();
        let col_ptr = indptr.to_proper();
        let row_idx = a.indices();
        let fail = |what: &str| {
            Error::run(format!(
                "sparse Cholesky factorisation failed ({what}); the reduced conduction matrix of order {n} is not numerically positive definite — check for extreme conductivity or film coefficient ratios"
            ))
        };
        let symbolic_view = SymbolicSparseColMatRef::new_checked(n, n, &col_ptr, None, row_idx);
        let symbolic = factorize_symbolic_cholesky(
            symbolic_view,
            Side::Lower,
            SymmetricOrdering::Amd,
            CholeskySymbolicParams::default(),
        )
        .map_err(|e| fail(&format!("symbolic analysis: {e:?}")))?;
        let mut values = Vec::new();
        values
            .try_reserve_exact(symbolic.len_val())
            .map_err(|_| fail("out of memory for the factor"))?;
        values.resize(symbolic.len_val(), 0.0);
        let matrix = SparseColMatRef::new(symbolic_view, a.data());
        let params: Spec<LltParams, f64> = Default::default();
        let mut buffer =
            MemBuffer::try_new(symbolic.factorize_numeric_llt_scratch::<f64>(Par::Seq, params))
                .map_err(|_| fail("out of memory for the workspace"))?;
        symbolic
            .factorize_numeric_llt(
                &mut values,
                matrix,
                Side::Lower,
                Default::default(),
                Par::Seq,
                MemStack::new(&mut buffer),
                params,
            )
            .map_err(|e| fail(&format!("{e:?}")))?;
        Ok(SparseCholesky { symbolic, values })
    }
}

impl LinearSolver for SparseCholesky {
    fn name(&self) -> &'static str {
        "sparse Cholesky"
    }

    fn dim(&self) -> usize {
        self.symbolic.nrows()
    }

    fn solve_in_place(&self, rhs: &mut [f64]) -> Result<()> {
        let n = self.dim();
        if rhs.len() != n {
            return Err(Error::run(
                "internal error: right-hand side of the wrong length",
            ));
        }
        let mut buffer =
            MemBuffer::try_new(self.symbolic.solve_in_place_scratch::<f64>(1, Par::Seq))
                .map_err(|_| Error::run("out of memory for the Cholesky solve workspace"))?;
        let llt = LltRef::new(&self.symbolic, &self.values);
        let x = MatMut::from_column_major_slice_mut(rhs, n, 1);
        llt.solve_in_place_with_conj(Conj::No, x, Par::Seq, MemStack::new(&mut buffer));
        Ok(())
    }
}

/// Conjugate gradient with a Jacobi (diagonal) preconditioner. An alternative to the direct
/// solver for very large systems, and an independent cross-check of it.
#[derive(Debug, Clone)]
pub struct ConjugateGradient {
    matrix: CsMat<f64>,
    inverse_diagonal: Vec<f64>,
    /// Stop when `‖r‖₂ ≤ relative_tolerance · ‖b‖₂`.
    pub relative_tolerance: f64,
    pub max_iterations: usize,
}

impl ConjugateGradient {
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
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
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
            return Err(Error::run(
                "internal error: right-hand side of the wrong length",
            ));
        }
        let b_norm = norm(rhs);
        let mut x = vec![0.0; n];
        if b_norm == 0.0 {
            rhs.copy_from_slice(&x);
            return Ok(());
        }
        let mut r = rhs.to_vec();
        let mut z: Vec<f64> = r
            .iter()
            .zip(&self.inverse_diagonal)
            .map(|(a, b)| a * b)
            .collect();
        let mut p = z.clone();
        let mut rz = dot(&r, &z);
        for _ in 0..self.max_iterations {
            if norm(&r) <= self.relative_tolerance * b_norm {
                rhs.copy_from_slice(&x);
                return Ok(());
            }
            let ap = mat_vec(&self.matrix, &p);
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
            for i in 0..n {
                z[i] = r[i] * self.inverse_diagonal[i];
            }
            let rz_new = dot(&r, &z);
            let beta = rz_new / rz;
            rz = rz_new;
            for i in 0..n {
                p[i] = z[i] + beta * p[i];
            }
        }
        if norm(&r) <= self.relative_tolerance * b_norm {
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

/// The reduced system of a [`System`] with its solver ready: solves any load vector and any
/// Dirichlet value set on the same fixed nodes without refactoring.
#[derive(Debug)]
pub struct Factorized<S: LinearSolver = SparseCholesky> {
    /// Reduced index of each node, `None` for a fixed node.
    reduced: Vec<Option<usize>>,
    free: Vec<usize>,
    fixed_nodes: Vec<usize>,
    /// Free–free block, CSR, both triangles.
    k_ff: CsMat<f64>,
    /// Free–fixed block, CSR, rows = free nodes, columns = fixed nodes.
    k_fc: CsMat<f64>,
    /// `None` when every node is fixed.
    solver: Option<S>,
}

impl Factorized<SparseCholesky> {
    /// Splits the system and factorises `K_ff` by sparse Cholesky.
    pub fn new(system: &System) -> Result<Self> {
        Self::with_solver(system, SparseCholesky::factorize)
    }
}

impl<S: LinearSolver> Factorized<S> {
    /// Splits the system and prepares `K_ff` with the given solver constructor.
    pub fn with_solver(
        system: &System,
        build: impl FnOnce(&CsMat<f64>) -> Result<S>,
    ) -> Result<Self> {
        let n = system.node_count();
        let a = &system.matrix;
        if a.rows() != n || a.cols() != n || system.fixed.len() != n || !a.is_csr() {
            return Err(Error::run(
                "internal error: system matrix, load and fixed values disagree in size",
            ));
        }
        let mut reduced = vec![None; n];
        let mut fixed_index = vec![usize::MAX; n];
        let mut free = Vec::new();
        let mut fixed_nodes = Vec::new();
        for (i, f) in system.fixed.iter().enumerate() {
            match f {
                None => {
                    reduced[i] = Some(free.len());
                    free.push(i);
                }
                Some(_) => {
                    fixed_index[i] = fixed_nodes.len();
                    fixed_nodes.push(i);
                }
            }
        }
        // Row-wise split; both index maps are increasing, so column order stays sorted.
        let (mut ff_ptr, mut ff_idx, mut ff_val) = (vec![0usize], Vec::new(), Vec::new());
        let (mut fc_ptr, mut fc_idx, mut fc_val) = (vec![0usize], Vec::new(), Vec::new());
        for (i, row) in a.outer_iterator().enumerate() {
            if reduced[i].is_none() {
                continue;
            }
            for (j, &v) in row.iter() {
                match reduced[j] {
                    Some(rj) => {
                        ff_idx.push(rj);
                        ff_val.push(v);
                    }
                    None => {
                        fc_idx.push(fixed_index[j]);
                        fc_val.push(v);
                    }
                }
            }
            ff_ptr.push(ff_idx.len());
            fc_ptr.push(fc_idx.len());
        }
        let nf = free.len();
        let k_ff = CsMat::try_new((nf, nf), ff_ptr, ff_idx, ff_val)
            .map_err(|e| Error::run(format!("internal error: reduced matrix: {}", e.3)))?;
        let k_fc = CsMat::try_new((nf, fixed_nodes.len()), fc_ptr, fc_idx, fc_val)
            .map_err(|e| Error::run(format!("internal error: coupling matrix: {}", e.3)))?;
        let solver = if nf > 0 { Some(build(&k_ff)?) } else { None };
        Ok(Factorized {
            reduced,
            free,
            fixed_nodes,
            k_ff,
            k_fc,
            solver,
        })
    }

    /// Free nodes in reduced order.
    pub fn free_nodes(&self) -> &[usize] {
        &self.free
    }

    /// Fixed nodes in increasing order.
    pub fn fixed_nodes(&self) -> &[usize] {
        &self.fixed_nodes
    }

    /// Solves for a full load vector and Dirichlet values; `fixed` must mark exactly the fixed
    /// nodes of the factorised system.
    pub fn solve(&self, load: &[f64], fixed: &[Option<f64>]) -> Result<Solution> {
        let n = self.reduced.len();
        if load.len() != n || fixed.len() != n {
            return Err(Error::run(format!(
                "internal error: load case with {} loads and {} fixed values for {n} nodes",
                load.len(),
                fixed.len()
            )));
        }
        let mut tc = Vec::with_capacity(self.fixed_nodes.len());
        for (i, f) in fixed.iter().enumerate() {
            match (f, self.reduced[i]) {
                (Some(v), None) => tc.push(*v),
                (None, Some(_)) => {}
                _ => {
                    return Err(Error::run(format!(
                        "internal error: node {i} is fixed in one load case and free in the other"
                    )));
                }
            }
        }
        let mut temperature = vec![0.0; n];
        for (&i, &v) in self.fixed_nodes.iter().zip(&tc) {
            temperature[i] = v;
        }
        let Some(solver) = &self.solver else {
            return Ok(Solution {
                temperature,
                residual_relative: 0.0,
            });
        };
        let lift = mat_vec(&self.k_fc, &tc);
        let rhs: Vec<f64> = self
            .free
            .iter()
            .zip(&lift)
            .map(|(&i, l)| load[i] - l)
            .collect();
        let mut tf = rhs.clone();
        solver.solve_in_place(&mut tf)?;
        if let Some(k) = tf.iter().position(|v| !v.is_finite()) {
            return Err(Error::run(format!(
                "{} produced a non-finite temperature at node {}",
                solver.name(),
                self.free[k]
            )));
        }
        let check = mat_vec(&self.k_ff, &tf);
        let diff: Vec<f64> = check.iter().zip(&rhs).map(|(a, b)| a - b).collect();
        let rhs_norm = norm(&rhs);
        let residual_relative = if rhs_norm == 0.0 {
            0.0
        } else {
            norm(&diff) / rhs_norm
        };
        for (&i, v) in self.free.iter().zip(&tf) {
            temperature[i] = *v;
        }
        Ok(Solution {
            temperature,
            residual_relative,
        })
    }
}

/// Solves the system's own load case by sparse Cholesky.
pub fn solve(system: &System) -> Result<Solution> {
    Factorized::new(system)?.solve(&system.load, &system.fixed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::testutil::{rectangle_mesh, rectangle_section};
    use crate::fem::{LoadCase, assemble, assemble_load};
    use crate::model::{BoundaryKind, Section};

    fn plate(n: usize) -> (Section, crate::mesh::Mesh) {
        let tags = [Some(0), Some(1), Some(2), Some(1)];
        let section = rectangle_section(
            1.0,
            0.8,
            &[("a", 1.4, 2000.0), ("b", 35.0, 0.0)],
            &[
                (
                    "air",
                    BoundaryKind::Convection {
                        h: 12.0,
                        ambient: -3.0,
                    },
                ),
                ("side", BoundaryKind::Insulated),
                ("top", BoundaryKind::Fixed { temperature: 40.0 }),
            ],
            tags,
        );
        let mesh = rectangle_mesh(1.0, 0.8, n, n, tags, |c| usize::from(c[0] > 0.4));
        (section, mesh)
    }

    #[test]
    fn repeated_runs_are_bit_identical() {
        let (section, mesh) = plate(80);
        let a = solve(&assemble(&section, &mesh).unwrap()).unwrap();
        let b = solve(&assemble(&section, &mesh).unwrap()).unwrap();
        let bits = |s: &Solution| {
            s.temperature
                .iter()
                .map(|v| v.to_bits())
                .collect::<Vec<_>>()
        };
        assert_eq!(bits(&a), bits(&b));
        assert_eq!(a.residual_relative.to_bits(), b.residual_relative.to_bits());
        assert!(a.residual_relative < 1e-12);
    }

    #[test]
    fn factorisation_is_reused_for_new_boundary_values() {
        let (mut section, mesh) = plate(12);
        let system = assemble(&section, &mesh).unwrap();
        let factorized = Factorized::new(&system).unwrap();
        let mut case = LoadCase::from_section(&section);
        case.boundary_value[2] = 75.0;
        case.boundary_value[0] = 10.0;
        case.heat_source[0] = -500.0;
        let load = assemble_load(&section, &mesh, &case).unwrap();
        let reused = factorized.solve(&load.vector, &load.fixed).unwrap();
        section.boundaries[2].kind = BoundaryKind::Fixed { temperature: 75.0 };
        section.boundaries[0].kind = BoundaryKind::Convection {
            h: 12.0,
            ambient: 10.0,
        };
        section.materials[0].heat_source = -500.0;
        let fresh = solve(&assemble(&section, &mesh).unwrap()).unwrap();
        for (a, b) in reused.temperature.iter().zip(&fresh.temperature) {
            assert!((a - b).abs() < 1e-12 * 75.0);
        }
        // A different set of fixed nodes is refused.
        let mut fixed = load.fixed.clone();
        fixed[0] = Some(1.0);
        assert!(matches!(
            factorized.solve(&load.vector, &fixed),
            Err(Error::Run(_))
        ));
    }

    #[test]
    fn conjugate_gradient_agrees_with_cholesky() {
        let (section, mesh) = plate(20);
        let system = assemble(&section, &mesh).unwrap();
        let direct = solve(&system).unwrap();
        let cg = Factorized::with_solver(&system, |a| ConjugateGradient::new(a, 1e-13, 10_000))
            .unwrap()
            .solve(&system.load, &system.fixed)
            .unwrap();
        let scale = direct
            .temperature
            .iter()
            .fold(0.0f64, |m, v| m.max(v.abs()));
        for (a, b) in direct.temperature.iter().zip(&cg.temperature) {
            assert!((a - b).abs() < 1e-9 * scale);
        }
        assert!(cg.residual_relative < 1e-12);
    }

    #[test]
    fn all_nodes_fixed_needs_no_factorisation() {
        let tags = [Some(0); 4];
        let section = rectangle_section(
            1.0,
            1.0,
            &[("m", 1.0, 0.0)],
            &[("t", BoundaryKind::Fixed { temperature: 7.0 })],
            tags,
        );
        let mesh = rectangle_mesh(1.0, 1.0, 1, 1, tags, |_| 0);
        let s = solve(&assemble(&section, &mesh).unwrap()).unwrap();
        assert_eq!(s.temperature, vec![7.0; 4]);
        assert_eq!(s.residual_relative, 0.0);
    }

    #[test]
    fn indefinite_matrix_fails_with_a_run_error() {
        let a = sprs::TriMat::from_triplets(
            (2, 2),
            vec![0, 0, 1, 1],
            vec![0, 1, 0, 1],
            vec![1.0, 2.0, 2.0, 1.0],
        )
        .to_csr();
        let err = SparseCholesky::factorize(&a).unwrap_err();
        assert!(matches!(&err, Error::Run(m) if m.contains("not numerically positive definite")));
    }
}
