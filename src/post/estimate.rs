//! The Zienkiewicz–Zhu (ZZ) a posteriori error estimate of a solved field.
//!
//! The gradient is recovered per node by area-weighted averaging of the constant triangle
//! gradients, separately for each material meeting at the node ([`recover_gradient`]); the
//! indicator of triangle T is η_T² = ∫_T (G* − ∇T_h)·k·(G* − ∇T_h) dA with G* the linear
//! interpolant of the recovered corner values, integrated exactly by the 3-point edge-midpoint
//! rule (the integrand is quadratic). Reference: O. C. Zienkiewicz and J. Z. Zhu, "A simple
//! error estimator and adaptive procedure for practical engineering analysis", Int. J. Numer.
//! Methods Eng. 24 (1987) 337–357.
//!
//! Norms. The energy norm used throughout is the conduction energy (semi)norm
//! ‖v‖_E = (Σ_T ∫_T ∇v·k·∇v dA)^½, in (W·K/m)^½ per metre of section depth; the film term of
//! convection edges is not included (it would make the norm depend on the temperature level).
//! The relative estimate is η / (‖T_h‖_E² + η²)^½, i.e. the estimated error relative to the
//! estimated energy norm of the exact solution (‖T‖_E² ≈ ‖T_h‖_E² + ‖e‖_E² holds exactly for
//! the Galerkin solution of a problem with fixed temperatures only; it is the definition used by
//! Zienkiewicz and Zhu).
//!
//! Point sources. The exact field of a line source is logarithmic, T ~ −P/(2πk)·ln r, so its
//! conduction energy is infinite near the line and no mesh makes the error there small: the
//! triangles touching a point source's node would carry the whole estimate and adaptive
//! refinement would spend every cycle on them. They are left out: their indicator is 0 and
//! they count neither in η nor in ‖T_h‖_E, so the estimate (and the marking) measures the
//! field away from the sources.

use crate::error::{Error, Result};
use crate::fem::{Conductivity, System, TriangleGeometry};
use crate::mesh::Mesh;
use crate::model::Section;
use crate::post::Results;
use crate::post::field::CELL_CHUNK;
use nalgebra::Vector2;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;

/// The ZZ error estimate of one solved field.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ErrorEstimate {
    /// η_T per triangle, (W·K/m)^½, in mesh triangle order (for the `error_indicator` cell
    /// array). Not serialised: it has one value per triangle.
    #[serde(skip)]
    pub indicator: Vec<f64>,
    /// Estimated error in the energy norm, η = (Σ η_T²)^½, (W·K/m)^½.
    pub energy_norm: f64,
    /// Energy norm of the finite element solution, ‖T_h‖_E, (W·K/m)^½.
    pub solution_energy_norm: f64,
    /// η / (‖T_h‖_E² + η²)^½ (0 when both vanish).
    pub relative: f64,
}

/// Recovered gradient at the three corners of every triangle, K/m.
///
/// At each node the constant gradients of the adjacent triangles are averaged with their areas
/// as weights, separately for each material: a triangle sees the average over the triangles of
/// its own material around the node. Within one material the conductivity is uniform, so this is
/// the same as recovering the heat flux; across a material interface the normal gradient jumps
/// and is not smeared.
pub fn recover_gradient(mesh: &Mesh, cell_gradient: &[[f64; 2]]) -> Result<Vec<[[f64; 2]; 3]>> {
    let nt = mesh.triangles.len();
    if cell_gradient.len() != nt || mesh.material.len() != nt {
        return Err(Error::run(format!(
            "internal error: gradient recovery got {} gradients and {} material ids for {nt} triangles",
            cell_gradient.len(),
            mesh.material.len()
        )));
    }
    let n = mesh.nodes.len();
    if let Some((t, v)) = mesh
        .triangles
        .iter()
        .enumerate()
        .find_map(|(t, ids)| ids.iter().find(|&&v| v >= n).map(|&v| (t, v)))
    {
        return Err(Error::run(format!(
            "internal error: triangle {t} refers to node {v} of {n}"
        )));
    }
    // Per node: the first material met (in triangle order) and its Σ A·g, Σ A in flat arrays;
    // further materials (nodes on an interface, a few per cent) in a side table in order of
    // first appearance. Every sum is formed in triangle order.
    const NONE: usize = usize::MAX;
    let mut first: Vec<(usize, Vector2<f64>, f64)> = vec![(NONE, Vector2::zeros(), 0.0); n];
    let mut more: BTreeMap<usize, Vec<(usize, Vector2<f64>, f64)>> = BTreeMap::new();
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let a = mesh.triangle_area(t).abs();
        let g = Vector2::from(cell_gradient[t]);
        let m = mesh.material[t];
        for &v in ids {
            let e = &mut first[v];
            if e.0 == NONE || e.0 == m {
                e.0 = m;
                e.1 += g * a;
                e.2 += a;
                continue;
            }
            let list = more.entry(v).or_default();
            match list.iter_mut().find(|e| e.0 == m) {
                Some(e) => {
                    e.1 += g * a;
                    e.2 += a;
                }
                None => list.push((m, g * a, a)),
            }
        }
    }
    // Corner values per triangle: independent, so in parallel.
    Ok((0..mesh.triangles.len())
        .into_par_iter()
        .with_min_len(CELL_CHUNK)
        .map(|t| {
            let m = mesh.material[t];
            // The triangle itself contributed, so the entry exists and its weight is positive
            // unless the triangle is degenerate; then fall back to the triangle's own value.
            let corner = |v: usize| {
                let e = if first[v].0 == m {
                    Some(&first[v])
                } else {
                    more.get(&v).and_then(|l| l.iter().find(|e| e.0 == m))
                };
                match e {
                    Some(e) if e.2 > 0.0 => (e.1 / e.2).into(),
                    _ => cell_gradient[t],
                }
            };
            mesh.triangles[t].map(corner)
        })
        .collect())
}

/// Zienkiewicz–Zhu estimate of the energy-norm error of a solved field (see the module doc for
/// the recovery, the norm and the relative measure).
pub fn zz_estimate(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    results: &Results,
) -> Result<ErrorEstimate> {
    let nt = mesh.triangles.len();
    if results.cell_gradient.len() != nt {
        return Err(Error::run(format!(
            "internal error: error estimate got {} triangle gradients for {nt} triangles",
            results.cell_gradient.len()
        )));
    }
    if system.conductivity.len() < section.materials.len() {
        return Err(Error::run(
            "internal error: error estimate: system and section disagree on materials",
        ));
    }
    let recovered = recover_gradient(mesh, &results.cell_gradient)?;
    let mut at_source = vec![false; mesh.nodes.len()];
    for p in &system.point_source {
        if let Some(s) = at_source.get_mut(p.node) {
            *s = true;
        }
    }
    if let Some(t) = (0..nt).find(|&t| system.conductivity.get(mesh.material[t]).is_none()) {
        return Err(Error::run(format!(
            "internal error: triangle {t} has material id {} without a conductivity",
            mesh.material[t]
        )));
    }
    // (η_T², energy of T) per triangle in parallel; the sums in triangle order.
    let parts: Vec<(f64, f64)> = (0..nt)
        .into_par_iter()
        .with_min_len(CELL_CHUNK)
        .map(|t| {
            if mesh.triangles[t].iter().any(|&v| at_source[v]) {
                return (0.0, 0.0);
            }
            let k = system.triangle_conductivity(mesh, t);
            let area = TriangleGeometry::of(mesh, t).area.abs();
            let g = Vector2::from(results.cell_gradient[t]);
            (
                indicator_squared(k, &recovered[t], g, area),
                area * k.energy_density(g),
            )
        })
        .collect();
    let mut indicator = Vec::with_capacity(nt);
    let mut eta2 = 0.0;
    let mut norm2 = 0.0;
    for &(et2, energy) in &parts {
        norm2 += energy;
        eta2 += et2;
        indicator.push(et2.sqrt());
    }
    let denom = (norm2 + eta2).sqrt();
    Ok(ErrorEstimate {
        indicator,
        energy_norm: eta2.sqrt(),
        solution_energy_norm: norm2.max(0.0).sqrt(),
        relative: if denom > 0.0 {
            eta2.sqrt() / denom
        } else {
            0.0
        },
    })
}

/// η_T² = ∫_T (G* − ∇T_h)·k·(G* − ∇T_h) dA for one triangle of the given area, with G* the
/// linear interpolant of the recovered corner gradients and `g` = ∇T_h; the edge-midpoint rule
/// (weights A/3) is exact for the quadratic integrand. Never negative.
fn indicator_squared(k: &Conductivity, corners: &[[f64; 2]; 3], g: Vector2<f64>, area: f64) -> f64 {
    let mut s = 0.0;
    for i in 0..3 {
        let j = (i + 1) % 3;
        let midpoint = (Vector2::from(corners[i]) + Vector2::from(corners[j])) * 0.5;
        s += k.energy_density(midpoint - g);
    }
    (s * area / 3.0).max(0.0)
}
