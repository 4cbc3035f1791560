//! The direct solver: sparse Cholesky factorisation by faer (supernodal; its dense kernels on
//! the rayon pool for large matrices; AMD or a nested dissection of our own as the
//! fill-reducing [`Ordering`]), and
//! the one conversion of a matrix from sprs storage into faer's ([`to_faer`]).

use super::LinearSolver;
use crate::error::{Error, Result};
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::LltParams;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    CholeskySymbolicParams, LltRef, SymbolicCholesky, SymmetricOrdering,
    factorize_symbolic_cholesky,
};
use faer::sparse::{SparseColMat, SymbolicSparseColMat};
use faer::{Conj, MatMut, Par, Side, Spec};
use sprs::CsMat;

/// The matrix `a` (square, symmetric, both triangles stored, CSR or CSC) in faer's
/// compressed-column storage. For a symmetric matrix the CSR arrays are the CSC arrays, so
/// this is a copy of sprs' three arrays; sprs guarantees what faer checks (monotone pointers,
/// sorted in-range indices).
pub fn to_faer(a: &CsMat<f64>) -> Result<SparseColMat<usize, f64>> {
    let n = a.rows();
    if a.cols() != n {
        return Err(Error::run(format!(
            "internal error: Cholesky of a non-square {n}×{} matrix",
            a.cols()
        )));
    }
    let col_ptr = a.indptr().to_proper().into_owned();
    let symbolic = SymbolicSparseColMat::new_checked(n, n, col_ptr, None, a.indices().to_vec());
    Ok(SparseColMat::new(symbolic, a.data().to_vec()))
}

/// Sparse Cholesky factorisation `A = L·Lᵀ` (faer, supernodal; numeric phase on the rayon
/// pool from [`PARALLEL_FACTOR_FROM`] unknowns, bit-identical to the sequential one).
#[derive(Debug)]
pub struct SparseCholesky {
    symbolic: SymbolicCholesky<usize>,
    values: Vec<f64>,
}

impl SparseCholesky {
    /// Factorises a symmetric matrix stored with both triangles (CSR or CSC with sorted
    /// indices); only its lower triangle is read. Steps: convert ([`to_faer`]), symbolic
    /// analysis, numeric factorisation.
    pub fn factorize(a: &CsMat<f64>) -> Result<Self> {
        Self::factorize_with(a, Ordering::default())
    }

    /// As [`factorize`](Self::factorize) with a chosen fill-reducing ordering.
    pub fn factorize_with(a: &CsMat<f64>, ordering: Ordering<'_>) -> Result<Self> {
        let n = a.rows();
        let matrix = to_faer(a)?;
        let fail = |what: &str| {
            Error::run(format!(
                "sparse Cholesky factorisation failed ({what}); the reduced conduction matrix of order {n} is not numerically positive definite — check for extreme conductivity or film coefficient ratios"
            ))
        };
        let custom = match ordering {
            Ordering::Amd => None,
            Ordering::NestedDissection => {
                let order =
                    super::ordering::nested_dissection(a.indptr().raw_storage(), a.indices())?;
                let mut inverse = vec![0usize; n];
                for (k, &v) in order.iter().enumerate() {
                    inverse[v] = k;
                }
                Some((order, inverse))
            }
            Ordering::Geometric(xy) => {
                let order = super::ordering::nested_dissection_geometric(
                    a.indptr().raw_storage(),
                    a.indices(),
                    xy,
                )?;
                let mut inverse = vec![0usize; n];
                for (k, &v) in order.iter().enumerate() {
                    inverse[v] = k;
                }
                Some((order, inverse))
            }
        };
        let symmetric_ordering = match &custom {
            None => SymmetricOrdering::Amd,
            Some((order, inverse)) => {
                SymmetricOrdering::Custom(PermRef::new_checked(order, inverse, n))
            }
        };
        let symbolic = factorize_symbolic_cholesky(
            matrix.symbolic(),
            Side::Lower,
            symmetric_ordering,
            CholeskySymbolicParams::default(),
        )
        .map_err(|e| fail(&format!("symbolic analysis: {e:?}")))?;
        let mut values = Vec::new();
        values
            .try_reserve_exact(symbolic.len_val())
            .map_err(|_| fail("out of memory for the factor"))?;
        values.resize(symbolic.len_val(), 0.0);
        let params: Spec<LltParams, f64> = Default::default();
        let par = numeric_parallelism(n);
        let mut buffer =
            MemBuffer::try_new(symbolic.factorize_numeric_llt_scratch::<f64>(par, params))
                .map_err(|_| fail("out of memory for the workspace"))?;
        symbolic
            .factorize_numeric_llt(
                &mut values,
                matrix.as_ref(),
                Side::Lower,
                Default::default(),
                par,
                MemStack::new(&mut buffer),
                params,
            )
            .map_err(|e| fail(&format!("{e:?}")))?;
        Ok(SparseCholesky { symbolic, values })
    }

    /// Stored entries of the factor L (its fill, the measure an ordering minimises).
    pub fn factor_entries(&self) -> usize {
        self.values.len()
    }
}

/// Unknowns from which the numeric factorisation uses the threads of the current rayon pool.
pub const PARALLEL_FACTOR_FROM: usize = 50_000;

/// The parallelism of faer's numeric factorisation for a matrix of order `n`: the threads of
/// the current rayon pool (`--threads`, `RAYON_NUM_THREADS`) from [`PARALLEL_FACTOR_FROM`]
/// unknowns on, else sequential. faer splits only the dense kernels of each supernode across
/// threads, by blocks of the output, so every entry of the factor is formed by the same
/// operations in the same order whatever the thread count: the factor is bit for bit the same
/// (tested in `solve::tests` and by whole result sets in `tests/threads.rs`).
fn numeric_parallelism(n: usize) -> Par {
    let threads = rayon::current_num_threads();
    if n >= PARALLEL_FACTOR_FROM && threads > 1 {
        Par::rayon(threads)
    } else {
        Par::Seq
    }
}

/// The fill-reducing ordering of the factorisation.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum Ordering<'a> {
    /// faer's approximate minimum degree.
    #[default]
    Amd,
    /// Nested dissection by level-structure separators ([`super::ordering`]).
    NestedDissection,
    /// Nested dissection by recursive coordinate bisection, with the coordinates of each
    /// matrix index ([`super::ordering::nested_dissection_geometric`]).
    Geometric(&'a [[f64; 2]]),
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
            return Err(Error::run(format!(
                "internal error: right-hand side of length {} for a matrix of order {n}",
                rhs.len()
            )));
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
