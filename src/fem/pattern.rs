//! Assembly straight into compressed sparse rows: the sparsity pattern from the mesh's
//! triangles (each row's columns sorted, the diagonal included), element matrices computed in
//! parallel in chunks of a fixed triangle count, and scattered into the pattern in triangle
//! order. No triplet list is built or sorted.
//!
//! Determinism and symmetry: every entry is a sum of element contributions taken in triangle
//! order, then film contributions in boundary-edge order, whatever the thread count (the
//! chunks only decide which thread computes an element matrix, not how sums are formed). Entry
//! (j, i) receives exactly the values of entry (i, j) in the same order (the element matrix's
//! upper triangle is used for both), so the matrix is symmetric bit for bit.

use super::element::{Conductivity, TriangleGeometry};
use crate::mesh::Mesh;
use rayon::prelude::*;
use sprs::CsMat;

/// Triangles whose element matrices one parallel task computes (fixed, so that the work split
/// never depends on the thread count).
pub const ELEMENT_CHUNK: usize = 16_384;

/// The four nodes (a side, then b side) of every contact interface edge of `mesh`.
fn interface_cliques(mesh: &Mesh) -> impl Iterator<Item = [usize; 4]> + '_ {
    mesh.interfaces
        .iter()
        .map(|e| [e.a[0], e.a[1], e.b[0], e.b[1]])
}

/// The pattern of the P1 matrix of `mesh`: CSR row pointers and sorted column indices, one
/// entry per pair of nodes that share a triangle or a contact interface edge, and one per node
/// on the diagonal.
pub fn csr_pattern(mesh: &Mesh) -> (Vec<usize>, Vec<usize>) {
    let n = mesh.nodes.len();
    // Upper bound of each row's length: 3 per incident triangle, 4 per incident interface
    // edge (with repeats).
    let mut start = vec![0usize; n + 1];
    for t in &mesh.triangles {
        for &v in t {
            start[v + 1] += 3;
        }
    }
    for q in interface_cliques(mesh) {
        for &v in &q {
            start[v + 1] += 4;
        }
    }
    for i in 0..n {
        start[i + 1] += start[i];
    }
    let mut fill = start.clone();
    let mut cols = vec![0usize; start[n]];
    for t in &mesh.triangles {
        for &v in t {
            let at = fill[v];
            cols[at..at + 3].copy_from_slice(t);
            fill[v] += 3;
        }
    }
    for q in interface_cliques(mesh) {
        for &v in &q {
            let at = fill[v];
            cols[at..at + 4].copy_from_slice(&q);
            fill[v] += 4;
        }
    }
    // Sort and deduplicate each row.
    let mut indptr = Vec::with_capacity(n + 1);
    indptr.push(0);
    let mut indices = Vec::with_capacity(start[n] / 2 + n);
    for i in 0..n {
        let row = &mut cols[start[i]..start[i + 1]];
        row.sort_unstable();
        let before = indices.len();
        for &c in row.iter() {
            if indices.len() == before || indices.last() != Some(&c) {
                indices.push(c);
            }
        }
        if row.is_empty() {
            // A node of no triangle keeps its diagonal, so the pattern stays square.
            indices.push(i);
        }
        indptr.push(indices.len());
    }
    indices.shrink_to_fit();
    (indptr, indices)
}

/// Position of column `col` in row `row` of the pattern (present by construction).
#[inline]
pub(crate) fn position(indptr: &[usize], indices: &[usize], row: usize, col: usize) -> usize {
    let lo = indptr[row];
    let slice = &indices[lo..indptr[row + 1]];
    match slice.iter().position(|&c| c == col) {
        Some(k) => lo + k,
        None => unreachable!("column {col} not in the pattern of row {row}"),
    }
}

/// The upper triangle `[k00, k01, k02, k11, k12, k22]` of triangle `t`'s conduction matrix.
fn element_upper(mesh: &Mesh, conductivity: &[Conductivity], t: usize) -> [f64; 6] {
    let ke = TriangleGeometry::of(mesh, t).conduction(&conductivity[mesh.material[t]]);
    [
        ke[(0, 0)],
        ke[(0, 1)],
        ke[(0, 2)],
        ke[(1, 1)],
        ke[(1, 2)],
        ke[(2, 2)],
    ]
}

/// Index into [`element_upper`]'s array of the entry (i, j), i, j in 0..3.
const UPPER: [[usize; 3]; 3] = [[0, 1, 2], [1, 3, 4], [2, 4, 5]];

/// The conduction matrix of every triangle plus the film terms `edges` (node pair, diagonal
/// and off-diagonal value), then the contact interface edges of the mesh
/// ([`interface_matrix`]), in CSR storage on the pattern of [`csr_pattern`].
pub fn assemble_csr(
    mesh: &Mesh,
    conductivity: &[Conductivity],
    edges: &[([usize; 2], f64, f64)],
) -> CsMat<f64> {
    let n = mesh.nodes.len();
    let (indptr, indices) = csr_pattern(mesh);
    let mut data = vec![0.0; indices.len()];
    let nt = mesh.triangles.len();
    let mut ke = vec![[0.0; 6]; ELEMENT_CHUNK.min(nt)];
    for first in (0..nt).step_by(ELEMENT_CHUNK) {
        let count = ELEMENT_CHUNK.min(nt - first);
        ke[..count]
            .par_iter_mut()
            .enumerate()
            .with_min_len(1024)
            .for_each(|(k, out)| *out = element_upper(mesh, conductivity, first + k));
        for (k, values) in ke[..count].iter().enumerate() {
            let ids = mesh.triangles[first + k];
            for i in 0..3 {
                for j in 0..3 {
                    let p = position(&indptr, &indices, ids[i], ids[j]);
                    data[p] += values[UPPER[i][j]];
                }
            }
        }
    }
    for &([a, b], d, o) in edges {
        data[position(&indptr, &indices, a, a)] += d;
        data[position(&indptr, &indices, b, b)] += d;
        data[position(&indptr, &indices, a, b)] += o;
        data[position(&indptr, &indices, b, a)] += o;
    }
    for e in &mesh.interfaces {
        let c = interface_matrix(e.conductance, e.length);
        let nodes = [e.a[0], e.a[1], e.b[0], e.b[1]];
        for i in 0..4 {
            for j in 0..4 {
                data[position(&indptr, &indices, nodes[i], nodes[j])] += c[i][j];
            }
        }
    }
    CsMat::new((n, n), indptr, indices, data)
}

/// The 4×4 matrix (nodes a0, a1, b0, b1) of a contact interface edge of length `length` and
/// conductance `g` = 1/R: the consistent P1 line element of ∫ g·(T_a − T_b)·(N_a − N_b) ds,
/// `[[C, −C], [−C, C]]` with `C = g·L/6·[[2, 1], [1, 2]]`. Its rows sum to zero: the interface
/// carries heat from one side to the other and creates none.
pub fn interface_matrix(g: f64, length: f64) -> [[f64; 4]; 4] {
    let d = g * length / 3.0;
    let o = g * length / 6.0;
    [
        [d, o, -d, -o],
        [o, d, -o, -d],
        [-d, -o, d, o],
        [-o, -d, o, d],
    ]
}
