//! The result set of `xsheat solve --export-matrix DIR`: the reduced system `K_ff·T_f = f_f −
//! K_fc·T_c` (the Dirichlet values lifted out, free nodes in increasing node order) as Matrix
//! Market files for external solvers.
//!
//! * `K.mtx` — `coordinate real symmetric`, one triangle (the one the Cholesky factorisation
//!   reads, see [`symmetric_mtx`]) as row ≥ column, 1-based indices,
//!   W/(m·K) per metre of depth; values in the shortest decimal that reads back to the same
//!   `f64` ([`format_f64`](super::format_f64)).
//! * `f.mtx` — `array real general`, one column: the reduced right-hand side, W/m.
//! * `free_nodes.csv` — `row,node,x_m,y_m`: row `r` (0-based) of the system is Matrix Market
//!   index `r + 1` and mesh node `node` (0-based, as in nodes.csv and field.vtu).
//!
//! The set carries a `manifest.json` like every result set.

use super::csv::{push_f64, push_usize};
use super::fs::OutputSet;
use crate::error::{Error, Result};
use crate::fem::System;
use crate::mesh::Mesh;
use sprs::CsMat;

/// The Matrix Market text (`coordinate real symmetric`) of the symmetric CSR matrix `k`, the
/// triangle the Cholesky factorisation reads: for each row `j`, the entries `k(j, i)` with
/// `i ≥ j`, written as lower-triangle entries `(i + 1, j + 1)`. Assembly makes `k(i, j)` and
/// `k(j, i)` equal bit for bit, so either triangle is the matrix; re-factorising the file gives
/// the same temperatures bit for bit.
pub fn symmetric_mtx(k: &CsMat<f64>, comment: &str) -> Result<Vec<u8>> {
    let n = k.rows();
    if k.cols() != n || !k.is_csr() {
        return Err(Error::run("internal: K_ff is not a square CSR matrix"));
    }
    let upper = k
        .outer_iterator()
        .enumerate()
        .map(|(j, row)| row.iter().filter(|(i, _)| *i >= j).count())
        .sum::<usize>();
    let mut out = Vec::with_capacity(64 + 40 * upper);
    out.extend_from_slice(b"%%MatrixMarket matrix coordinate real symmetric\n");
    for line in comment.lines() {
        out.extend_from_slice(b"% ");
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
    }
    for (v, end) in [(n, b' '), (n, b' '), (upper, b'\n')] {
        push_usize(&mut out, v);
        out.push(end);
    }
    for (j, row) in k.outer_iterator().enumerate() {
        for (i, &v) in row.iter().filter(|(i, _)| *i >= j) {
            push_usize(&mut out, i + 1);
            out.push(b' ');
            push_usize(&mut out, j + 1);
            out.push(b' ');
            push_f64(&mut out, v);
            out.push(b'\n');
        }
    }
    Ok(out)
}

/// The Matrix Market text of the column vector `f` (`array real general`).
pub fn vector_mtx(f: &[f64], comment: &str) -> Vec<u8> {
    let mut out = Vec::with_capacity(64 + 24 * f.len());
    out.extend_from_slice(b"%%MatrixMarket matrix array real general\n");
    for line in comment.lines() {
        out.extend_from_slice(b"% ");
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
    }
    push_usize(&mut out, f.len());
    out.extend_from_slice(b" 1\n");
    for &v in f {
        push_f64(&mut out, v);
        out.push(b'\n');
    }
    out
}

/// `row,node,x_m,y_m` — one row per free node in reduced order.
fn free_nodes_csv(mesh: &Mesh, free: &[usize]) -> Result<Vec<u8>> {
    let mut out = Vec::with_capacity(32 + 48 * free.len());
    out.extend_from_slice(b"row,node,x_m,y_m\n");
    for (r, &i) in free.iter().enumerate() {
        let p = mesh.nodes.get(i).ok_or_else(|| {
            Error::run(format!(
                "internal: free node {i} of {} nodes",
                mesh.nodes.len()
            ))
        })?;
        push_usize(&mut out, r);
        out.push(b',');
        push_usize(&mut out, i);
        for v in p {
            out.push(b',');
            push_f64(&mut out, *v);
        }
        out.push(b'\n');
    }
    Ok(out)
}

/// The files of `--export-matrix`: `K.mtx`, `f.mtx`, `free_nodes.csv` (see the module
/// documentation) of the system solved on `mesh`.
pub fn matrix_files(system: &System, mesh: &Mesh) -> Result<OutputSet> {
    let (free, k_ff, rhs) = crate::solve::factorized::reduced_system(system)?;
    let mut set = OutputSet::new();
    set.add(
        "K.mtx",
        symmetric_mtx(
            &k_ff,
            "xsheat reduced conduction matrix K_ff, W/(m K) per metre of depth\n\
             row r is free_nodes.csv row r-1 (fixed-temperature nodes lifted out)",
        )?,
    );
    set.add(
        "f.mtx",
        vector_mtx(
            &rhs,
            "xsheat reduced right-hand side f_f - K_fc T_c, W/m per metre of depth",
        ),
    );
    set.add("free_nodes.csv", free_nodes_csv(mesh, &free)?);
    Ok(set)
}
