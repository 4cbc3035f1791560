//! The solved field per triangle and per node: constant gradients and heat fluxes of each
//! triangle, their area-weighted recovery at the nodes, and the temperature extremes.

use super::Extreme;
use crate::fem::{Conductivity, TriangleGeometry};
use crate::mesh::Mesh;
use nalgebra::{Vector2, Vector3};
use rayon::prelude::*;

/// Least number of triangles one parallel task of the post-processing takes. Each triangle's
/// values are computed alone and every sum over triangles is formed afterwards in triangle
/// order, so the split changes no bit of any result (see DEVELOPERS.md, determinism).
pub const CELL_CHUNK: usize = 4_096;

/// Gradients and heat fluxes of a solved field.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    /// K/m per triangle.
    pub cell_gradient: Vec<[f64; 2]>,
    /// W/m² per triangle, q = −k∇T.
    pub cell_flux: Vec<[f64; 2]>,
    /// Recovered per node (area-weighted average of the adjacent triangles), K/m.
    pub nodal_gradient: Vec<[f64; 2]>,
    /// Recovered per node, W/m².
    pub nodal_flux: Vec<[f64; 2]>,
}

/// Gradient and flux of every triangle, recovered per node by area weighting. The mesh must
/// have been checked ([`crate::fem::check_mesh`]) and `conductivity` must hold every material
/// id of the mesh.
pub fn gradients_and_fluxes(
    mesh: &Mesh,
    conductivity: &[Conductivity],
    temperature: &[f64],
) -> Field {
    gradients_and_fluxes_with(mesh, &|t| conductivity[mesh.material[t]], temperature)
}

/// [`gradients_and_fluxes`] with the conductivity of each triangle given by `conductivity`
/// (triangle index → tensor), for a conductivity that varies with temperature.
pub fn gradients_and_fluxes_with(
    mesh: &Mesh,
    conductivity: &(impl Fn(usize) -> Conductivity + Sync),
    temperature: &[f64],
) -> Field {
    let (n, nt) = (mesh.nodes.len(), mesh.triangles.len());
    // Per triangle (independent, so computed in parallel): ∇T and q.
    let mut cell_gradient = vec![[0.0; 2]; nt];
    let mut cell_flux = vec![[0.0; 2]; nt];
    cell_gradient
        .par_iter_mut()
        .zip(cell_flux.par_iter_mut())
        .enumerate()
        .with_min_len(CELL_CHUNK)
        .for_each(|(t, (g_out, q_out))| {
            let g = TriangleGeometry::of(mesh, t);
            let grad = g.gradient(Vector3::from(mesh.triangles[t].map(|v| temperature[v])));
            *g_out = grad.into();
            *q_out = conductivity(t).flux(grad).into();
        });
    // Per node: Σ A·∇T, Σ A·q, Σ A, summed in triangle order (the same sums whatever the
    // thread count).
    let mut sum_gradient = vec![Vector2::zeros(); n];
    let mut sum_flux = vec![Vector2::zeros(); n];
    let mut weight = vec![0.0f64; n];
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let area = TriangleGeometry::of(mesh, t).area;
        let (grad, q) = (Vector2::from(cell_gradient[t]), Vector2::from(cell_flux[t]));
        for &v in ids {
            sum_gradient[v] += grad * area;
            sum_flux[v] += q * area;
            weight[v] += area;
        }
    }
    let mut nodal_gradient = Vec::with_capacity(n);
    let mut nodal_flux = Vec::with_capacity(n);
    for ((sg, sq), &w) in sum_gradient.iter().zip(&sum_flux).zip(&weight) {
        let w = if w > 0.0 { 1.0 / w } else { 0.0 };
        nodal_gradient.push((sg * w).into());
        nodal_flux.push((sq * w).into());
    }
    Field {
        cell_gradient,
        cell_flux,
        nodal_gradient,
        nodal_flux,
    }
}

/// Lowest and highest nodal temperature, each at the first node where it occurs. The mesh and
/// the field must be non-empty and of the same length.
pub fn extremes(mesh: &Mesh, temperature: &[f64]) -> (Extreme, Extreme) {
    (
        extreme(mesh, temperature, |v, best| v < best),
        extreme(mesh, temperature, |v, best| v > best),
    )
}

fn extreme(mesh: &Mesh, t: &[f64], better: impl Fn(f64, f64) -> bool) -> Extreme {
    let mut node = 0;
    for (i, &v) in t.iter().enumerate() {
        if better(v, t[node]) {
            node = i;
        }
    }
    Extreme {
        value: t[node],
        node,
        at: mesh.nodes[node],
    }
}
