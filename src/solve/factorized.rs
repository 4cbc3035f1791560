//! The reduced system of a [`System`]: the Dirichlet values lifted out, the free–free block
//! prepared by a [`LinearSolver`] once and reused for any load vector and Dirichlet value set
//! on the same fixed nodes. Load cases other than the model file's own are built only by the
//! tests today; a later change gives them a command-line interface.

use super::amg::AmgSolver;
use super::cholesky::{Ordering, SparseCholesky};
use super::{LinearSolver, PipelineSolver, Solution, SolverChoice, norm};
use crate::error::{Error, Result};
use crate::fem::{System, mat_vec};
use sprs::CsMat;

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
    /// Splits the system and factorises `K_ff` by sparse Cholesky (AMD ordering).
    pub fn new(system: &System) -> Result<Self> {
        Self::with_solver(system, SparseCholesky::factorize)
    }

    /// Splits the system and factorises `K_ff` by sparse Cholesky in a geometric nested
    /// dissection order of the mesh nodes `nodes` (coordinates per node of the system; see
    /// [`super::ordering`]). The pipeline's factorisation.
    pub fn with_coordinates(system: &System, nodes: &[[f64; 2]]) -> Result<Self> {
        let free = free_coordinates(system, nodes)?;
        Self::with_solver(system, |a| {
            SparseCholesky::factorize_with(a, Ordering::Geometric(&free))
        })
    }
}

/// The coordinates of the free nodes of `system`, in reduced order.
fn free_coordinates(system: &System, nodes: &[[f64; 2]]) -> Result<Vec<[f64; 2]>> {
    if nodes.len() != system.node_count() {
        return Err(Error::run(format!(
            "internal error: {} node coordinates for a system of {} nodes",
            nodes.len(),
            system.node_count()
        )));
    }
    Ok(system
        .fixed
        .iter()
        .zip(nodes)
        .filter(|(f, _)| f.is_none())
        .map(|(_, p)| *p)
        .collect())
}

impl Factorized<PipelineSolver> {
    /// The pipeline's preparation: splits the system and prepares `K_ff` by the solver `choice`
    /// resolves to for its size — sparse Cholesky in the geometric nested dissection order of
    /// the mesh nodes `nodes` (as [`Factorized::with_coordinates`]) or the smoothed
    /// aggregation AMG ([`AmgSolver`]).
    pub fn for_mesh(system: &System, nodes: &[[f64; 2]], choice: SolverChoice) -> Result<Self> {
        let free = free_coordinates(system, nodes)?;
        Self::with_solver(system, |a| match choice.resolve(a.rows()) {
            SolverChoice::Amg => Ok(PipelineSolver::Amg(AmgSolver::new(a)?)),
            _ => Ok(PipelineSolver::Cholesky(SparseCholesky::factorize_with(
                a,
                Ordering::Geometric(&free),
            )?)),
        })
    }

    /// The solver used (`cholesky` when every node is fixed and nothing was solved) and the
    /// conjugate gradient iterations of the last solve (1 for Cholesky, 0 without a solve).
    pub fn used(&self) -> (SolverChoice, usize) {
        self.solver
            .as_ref()
            .map_or((SolverChoice::Cholesky, 0), |s| {
                (s.choice(), s.last_iterations())
            })
    }

    /// Unknowns of the reduced system.
    pub fn unknowns(&self) -> usize {
        self.free.len()
    }
}

/// The node numbering of the reduced system: free nodes in order, fixed nodes in order.
struct Partition {
    reduced: Vec<Option<usize>>,
    fixed_index: Vec<usize>,
    free: Vec<usize>,
    fixed_nodes: Vec<usize>,
}

impl Partition {
    fn of(fixed: &[Option<f64>]) -> Self {
        let n = fixed.len();
        let mut p = Partition {
            reduced: vec![None; n],
            fixed_index: vec![usize::MAX; n],
            free: Vec::new(),
            fixed_nodes: Vec::new(),
        };
        for (i, f) in fixed.iter().enumerate() {
            if f.is_none() {
                p.reduced[i] = Some(p.free.len());
                p.free.push(i);
            } else {
                p.fixed_index[i] = p.fixed_nodes.len();
                p.fixed_nodes.push(i);
            }
        }
        p
    }

    /// Row-wise split of the CSR matrix `a` into the free–free and free–fixed blocks; both
    /// index maps are increasing, so the column order stays sorted.
    fn split(&self, a: &CsMat<f64>) -> Result<(CsMat<f64>, CsMat<f64>)> {
        let (mut ff_ptr, mut ff_idx, mut ff_val) = (vec![0usize], Vec::new(), Vec::new());
        let (mut fc_ptr, mut fc_idx, mut fc_val) = (vec![0usize], Vec::new(), Vec::new());
        for (i, row) in a.outer_iterator().enumerate() {
            if self.reduced[i].is_none() {
                continue;
            }
            for (j, &v) in row.iter() {
                match self.reduced[j] {
                    Some(rj) => {
                        ff_idx.push(rj);
                        ff_val.push(v);
                    }
                    None => {
                        fc_idx.push(self.fixed_index[j]);
                        fc_val.push(v);
                    }
                }
            }
            ff_ptr.push(ff_idx.len());
            fc_ptr.push(fc_idx.len());
        }
        let nf = self.free.len();
        let k_ff = CsMat::try_new((nf, nf), ff_ptr, ff_idx, ff_val)
            .map_err(|e| Error::run(format!("internal error: reduced matrix: {}", e.3)))?;
        let k_fc = CsMat::try_new((nf, self.fixed_nodes.len()), fc_ptr, fc_idx, fc_val)
            .map_err(|e| Error::run(format!("internal error: coupling matrix: {}", e.3)))?;
        Ok((k_ff, k_fc))
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
        let partition = Partition::of(&system.fixed);
        let (k_ff, k_fc) = partition.split(a)?;
        let solver = if partition.free.is_empty() {
            None
        } else {
            Some(build(&k_ff)?)
        };
        Ok(Factorized {
            reduced: partition.reduced,
            free: partition.free,
            fixed_nodes: partition.fixed_nodes,
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

    /// The Dirichlet values in fixed-node order, after checking that `fixed` marks exactly the
    /// fixed nodes of the factorised system.
    fn fixed_values(&self, fixed: &[Option<f64>]) -> Result<Vec<f64>> {
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
        Ok(tc)
    }

    /// Solves for a full load vector and Dirichlet values; `fixed` must mark exactly the fixed
    /// nodes of the factorised system. Steps: Dirichlet values, lifted right-hand side
    /// `f_f − K_fc·T_c`, solve, self-check of the reduced residual.
    pub fn solve(&self, load: &[f64], fixed: &[Option<f64>]) -> Result<Solution> {
        let n = self.reduced.len();
        if load.len() != n || fixed.len() != n {
            return Err(Error::run(format!(
                "internal error: load case with {} loads and {} fixed values for {n} nodes",
                load.len(),
                fixed.len()
            )));
        }
        let tc = self.fixed_values(fixed)?;
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
        let lift = mat_vec(&self.k_fc, &tc)?;
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
        let residual_relative = self.relative_residual(&tf, &rhs)?;
        for (&i, v) in self.free.iter().zip(&tf) {
            temperature[i] = *v;
        }
        Ok(Solution {
            temperature,
            residual_relative,
        })
    }

    /// `‖K_ff·T_f − rhs‖₂ / ‖rhs‖₂` (0 when rhs = 0).
    fn relative_residual(&self, tf: &[f64], rhs: &[f64]) -> Result<f64> {
        let check = mat_vec(&self.k_ff, tf)?;
        let diff: Vec<f64> = check.iter().zip(rhs).map(|(a, b)| a - b).collect();
        let rhs_norm = norm(rhs);
        Ok(if rhs_norm == 0.0 {
            0.0
        } else {
            norm(&diff) / rhs_norm
        })
    }
}

/// The reduced system of `system` as [`Factorized::solve`] builds it, without a solver: the
/// free nodes in reduced order, `K_ff` (CSR, both triangles) and the lifted right-hand side
/// `f_f − K_fc·T_c` of the system's own load and Dirichlet values (for `solve --export-matrix`).
pub fn reduced_system(system: &System) -> Result<(Vec<usize>, CsMat<f64>, Vec<f64>)> {
    let partition = Partition::of(&system.fixed);
    let (k_ff, k_fc) = partition.split(&system.matrix)?;
    let tc: Vec<f64> = partition
        .fixed_nodes
        .iter()
        .filter_map(|&i| system.fixed[i])
        .collect();
    let lift = mat_vec(&k_fc, &tc)?;
    let rhs = partition
        .free
        .iter()
        .zip(&lift)
        .map(|(&i, l)| system.load[i] - l)
        .collect();
    Ok((partition.free, k_ff, rhs))
}
