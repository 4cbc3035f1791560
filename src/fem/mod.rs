//! Fem stage: turns a meshed section into the linear system of the P1 (linear triangle) finite
//! element method for steady conduction, `K·T = f`.
//!
//! - [`element`]: the conductivity tensor and the geometry of one triangle (conduction
//!   `A·Bᵀ·D·B`, with D the conductivity tensor of the material's law, isotropic or rotated principal values);
//! - [`assemble`](mod@assemble): the global matrix (conduction, convection
//!   `h·L/6·[[2,1],[1,2]]` per convective edge) and loads (uniform source `Q·A/3` per triangle
//!   node, imposed flux `q·L/2` and convection `h·T∞·L/2` per edge node, positive into the
//!   section, a point source's power P at its node), the Dirichlet values of nodes on fixed edges;
//! - [`pattern`]: the CSR sparsity pattern from the triangles and the parallel, deterministic
//!   scatter of element matrices into it;
//! - [`checks`]: the consistency of the mesh against the section and the refusal of singular
//!   models.
//!
//! The matrix part (which depends on boundary kinds, conductivities and film coefficients) is
//! built by [`assemble_matrix`]; the load part (fixed temperatures, fluxes, ambient
//! temperatures, sources) by [`assemble_load`] from a [`LoadCase`]. One matrix can thus serve
//! many load cases. [`assemble`](fn@assemble) builds both for the model file's own load case.

pub mod assemble;
pub mod checks;
pub mod element;
pub mod nonlinear;
pub mod pattern;
#[cfg(test)]
mod tests;
#[cfg(test)]
pub(crate) mod testutil;

pub(crate) use assemble::mat_vec;
pub use assemble::{
    Load, LoadCase, PointLoad, assemble_load, assemble_matrix, material_conductivity,
    point_source_nodes,
};
pub use checks::{SINGULAR_MODEL_MESSAGE, check_mesh};
pub use element::{Conductivity, TriangleGeometry};

use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::model::Section;
use sprs::CsMat;
use std::sync::Arc;

/// The assembled finite element system of a section.
#[derive(Debug, Clone, PartialEq)]
pub struct System {
    /// Full n×n matrix (conduction + convection), CSR, symmetric, W/K per metre of depth;
    /// shared (not copied) by the load cases that reuse it.
    pub matrix: Arc<CsMat<f64>>,
    /// Full load vector, W/m.
    pub load: Vec<f64>,
    /// Dirichlet value per node, °C; `None` for a free node.
    pub fixed: Vec<Option<f64>>,
    /// Heat generated in each triangle, `Q·A`, W/m.
    pub cell_source: Vec<f64>,
    /// The point sources' loads (node and power, W/m), in `Section::point_sources` order.
    pub point_source: Vec<PointLoad>,
    /// Conductivity per material id.
    pub conductivity: Vec<Conductivity>,
    /// Conductivity per triangle where it depends on the temperature (a nonlinear model: each
    /// triangle's k at its mean temperature, `fem::nonlinear`); `None`: per material.
    pub cell_conductivity: Option<Vec<Conductivity>>,
}

impl System {
    /// The conductivity of triangle `t` of `mesh` (the mesh this system was assembled on).
    pub fn triangle_conductivity(&self, mesh: &Mesh, t: usize) -> &Conductivity {
        match &self.cell_conductivity {
            Some(c) => &c[t],
            None => &self.conductivity[mesh.material[t]],
        }
    }

    /// Number of nodes (order of the matrix).
    pub fn node_count(&self) -> usize {
        self.load.len()
    }

    /// Nodal residual `R = K·T − f` of the full system: at a fixed node, the heat entering the
    /// section through the Dirichlet condition there (W/m); at a free node, round-off.
    pub fn residual(&self, temperature: &[f64]) -> Result<Vec<f64>> {
        self.residual_with_load(&self.load, temperature)
    }

    /// Nodal residual `K·T − f` of this system's matrix with another load vector `f` (a load
    /// case on the same matrix), W/m.
    pub fn residual_with_load(&self, load: &[f64], temperature: &[f64]) -> Result<Vec<f64>> {
        let n = self.node_count();
        if load.len() != n {
            return Err(Error::run(format!(
                "internal error: residual of a system with {n} nodes asked for {} loads",
                load.len()
            )));
        }
        if temperature.len() != n || self.matrix.rows() != n || self.matrix.cols() != n {
            return Err(Error::run(format!(
                "internal error: residual of a system with {n} nodes asked for {} temperatures",
                temperature.len()
            )));
        }
        let mut r = mat_vec(&self.matrix, temperature)?;
        for (ri, fi) in r.iter_mut().zip(load) {
            *ri -= fi;
        }
        Ok(r)
    }
}

/// Assembles the system of the section's own load case.
///
/// Steps: check the mesh once ([`check_mesh`]), refuse a singular model, build the matrix and
/// the load. Rules the user sees:
/// - boundary edges without a boundary name are insulated;
/// - a node on fixed edges of two or more different fixed boundaries takes the arithmetic mean
///   of those boundaries' temperatures;
/// - a model with no fixed and no convection edge on the mesh is refused as singular
///   ([`SINGULAR_MODEL_MESSAGE`]), as is any disconnected part of the mesh without one.
pub fn assemble(section: &Section, mesh: &Mesh) -> Result<System> {
    check_mesh(section, mesh)?;
    checks::check_determined(section, mesh)?;
    let conductivity = material_conductivity(section);
    let matrix = assemble::matrix(section, mesh, &conductivity);
    let load = assemble::load(section, mesh, &LoadCase::from_section(section))?;
    Ok(System {
        matrix: Arc::new(matrix),
        load: load.vector,
        fixed: load.fixed,
        cell_source: load.cell_source,
        point_source: load.point_source,
        conductivity,
        cell_conductivity: None,
    })
}
