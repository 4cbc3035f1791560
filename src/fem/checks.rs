//! The checks the fem stage makes before assembling: the mesh against the section (and the
//! finite element method's own needs), the refusal of singular models, and the values of a
//! hand-made [`LoadCase`]. Material and boundary values read from a model file are validated
//! by the model stage and not checked again here.

use super::LoadCase;
use super::element::TriangleGeometry;
use crate::error::{Error, Result};
use crate::mesh::{BoundaryEdge, Mesh};
use crate::model::{BoundaryKind, Section};

/// Message of the error returned for a model whose temperature level is undetermined.
pub const SINGULAR_MODEL_MESSAGE: &str = "singular model: no boundary segment is fixed or convective, so the temperature level is undetermined; give at least one boundary kind = \"fixed\" or \"convection\"";

/// Checks that the mesh is internally consistent ([`Mesh::check_consistency`]), refers only to
/// materials and boundaries of the section, has finite coordinates, only counter-clockwise
/// triangles of positive area and no node outside every triangle. A failure is an internal
/// error of the mesh stage.
pub fn check_mesh(section: &Section, mesh: &Mesh) -> Result<()> {
    mesh.check_consistency()?;
    let bad = |what: String| Err(Error::run(format!("internal mesh inconsistency: {what}")));
    if mesh.nodes.is_empty() || mesh.triangles.is_empty() {
        return bad("the mesh has no triangles".into());
    }
    if let Some(i) = mesh
        .nodes
        .iter()
        .position(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return bad(format!("node {i} has a non-finite coordinate"));
    }
    let mut used = vec![false; mesh.nodes.len()];
    for (t, tri) in mesh.triangles.iter().enumerate() {
        if mesh.material[t] >= section.materials.len() {
            return bad(format!(
                "triangle {t} has material id {}, but the section has {} materials",
                mesh.material[t],
                section.materials.len()
            ));
        }
        let a = TriangleGeometry::of(mesh, t).area;
        if !(a.is_finite() && a > 0.0) {
            return bad(format!(
                "triangle {t} has area {a:e} m² (must be positive: counter-clockwise and not degenerate)"
            ));
        }
        for &v in tri {
            used[v] = true;
        }
    }
    if let Some(i) = used.iter().position(|u| !u) {
        return bad(format!("node {i} belongs to no triangle"));
    }
    for (e, edge) in mesh.boundary_edges.iter().enumerate() {
        if let Some(id) = edge.boundary.filter(|&id| id >= section.boundaries.len()) {
            return bad(format!(
                "boundary edge {e} has boundary id {id}, but the section has {} boundaries",
                section.boundaries.len()
            ));
        }
    }
    Ok(())
}

/// Refuses a model in which some connected part of the mesh touches no fixed or convective
/// edge: its temperature level would be undetermined and the matrix singular. The mesh must
/// have passed [`check_mesh`]. Any mesh of the section gives the same answer (refinement keeps
/// the connected parts and the boundaries present), so `check` runs it on its coarse mesh.
pub fn check_determined(section: &Section, mesh: &Mesh) -> Result<()> {
    let anchored_edge = |e: &BoundaryEdge| {
        e.boundary.is_some_and(|id| {
            matches!(
                section.boundaries[id].kind,
                BoundaryKind::Fixed { .. }
                    | BoundaryKind::Convection { .. }
                    | BoundaryKind::Radiation { .. }
            )
        })
    };
    if !mesh.boundary_edges.iter().any(anchored_edge) {
        return Err(Error::input(SINGULAR_MODEL_MESSAGE));
    }
    let mut parts = ConnectedParts::of(mesh);
    let mut anchored = vec![false; mesh.nodes.len()];
    for e in mesh.boundary_edges.iter().filter(|e| anchored_edge(e)) {
        anchored[parts.root(e.nodes[0])] = true;
    }
    for i in 0..mesh.nodes.len() {
        if !anchored[parts.root(i)] {
            let p = mesh.nodes[i];
            return Err(Error::input(format!(
                "singular model: the part of the section containing the point ({}, {}) touches no fixed or convective boundary segment, so its temperature level is undetermined; give it at least one boundary kind = \"fixed\" or \"convection\"",
                p[0], p[1]
            )));
        }
    }
    Ok(())
}

/// Connected parts of a mesh: union–find over the nodes of each triangle, the smaller root
/// kept (deterministic).
struct ConnectedParts {
    parent: Vec<usize>,
}

impl ConnectedParts {
    fn of(mesh: &Mesh) -> Self {
        let mut parts = ConnectedParts {
            parent: (0..mesh.nodes.len()).collect(),
        };
        for tri in &mesh.triangles {
            for k in 1..3 {
                let (a, b) = (parts.root(tri[0]), parts.root(tri[k]));
                if a != b {
                    parts.parent[a.max(b)] = a.min(b);
                }
            }
        }
        parts
    }

    /// Representative node of the part holding node `i` (with path halving).
    fn root(&mut self, mut i: usize) -> usize {
        while self.parent[i] != i {
            self.parent[i] = self.parent[self.parent[i]];
            i = self.parent[i];
        }
        i
    }
}

/// Checks a load case against the section: one value per boundary and per material, all
/// finite (the value of an insulated boundary is ignored).
pub(crate) fn check_load_case(section: &Section, case: &LoadCase) -> Result<()> {
    if case.boundary_value.len() != section.boundaries.len()
        || case.heat_source.len() != section.materials.len()
    {
        return Err(Error::input(format!(
            "load case has {} boundary values and {} sources for {} boundaries and {} materials",
            case.boundary_value.len(),
            case.heat_source.len(),
            section.boundaries.len(),
            section.materials.len()
        )));
    }
    for (b, v) in section.boundaries.iter().zip(&case.boundary_value) {
        if b.kind != BoundaryKind::Insulated && !v.is_finite() {
            return Err(Error::input(format!(
                "boundaries.{}: the {} value {v} must be finite",
                b.name,
                b.kind.name()
            )));
        }
    }
    if case.point_power.len() != section.point_sources.len() {
        return Err(Error::input(format!(
            "load case has {} point powers for {} point sources",
            case.point_power.len(),
            section.point_sources.len()
        )));
    }
    for (s, p) in section.point_sources.iter().zip(&case.point_power) {
        if !p.is_finite() {
            return Err(Error::input(format!(
                "point_sources.{}: power = {p} W/m must be finite",
                s.name
            )));
        }
    }
    for (m, q) in section.materials.iter().zip(&case.heat_source) {
        if !q.is_finite() {
            return Err(Error::input(format!(
                "materials.{}: heat_source = {q} W/m³ must be finite",
                m.name
            )));
        }
    }
    Ok(())
}
