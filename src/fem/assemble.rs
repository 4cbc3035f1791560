//! Assembly of the global system in sprs storage: the matrix (conduction of every triangle,
//! film term of every convection edge), the load vector and Dirichlet values of a
//! [`LoadCase`], and the sparse product used for residuals.
//!
//! The matrix is assembled straight into CSR (`pattern.rs`): sums in triangle order, then
//! boundary-edge order, whatever the thread count, and symmetric bit for bit.

use super::checks::{check_load_case, check_mesh};
use super::element::{Conductivity, TriangleGeometry};
use crate::error::{Error, Result};
use crate::mesh::{BoundaryEdge, Mesh};
use crate::model::{BoundaryKind, ConductivityLaw, Field, LinearField, Section};
use sprs::CsMat;

/// The values of one load case. Boundary kinds and film coefficients belong to the matrix and
/// are taken from the section; a load case only supplies the numbers that enter the right-hand
/// side.
///
/// Today only the tests build load cases other than the model file's own; a later change gives
/// them a command-line interface.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadCase {
    /// Per boundary id: the fixed temperature (°C) for a fixed boundary, the imposed flux (W/m²,
    /// positive into the section) for a flux boundary, the ambient temperature (°C) for a
    /// convection boundary; ignored for an insulated boundary.
    pub boundary_value: Vec<f64>,
    /// Per material id, W/m³.
    pub heat_source: Vec<f64>,
    /// Per boundary id: the fixed temperature or ambient when it varies with position (it then
    /// replaces `boundary_value`).
    pub boundary_field: Vec<Option<Field>>,
    /// Per material id: the heat source when it is linear in position (it then replaces
    /// `heat_source`).
    pub source_field: Vec<Option<LinearField>>,
    /// Per point source (`Section::point_sources` order), W/m.
    pub point_power: Vec<f64>,
}

/// A point source's load: its power at the mesh node that lies exactly at its position.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PointLoad {
    /// The node at the source's position.
    pub node: usize,
    /// Heat released, W per metre of depth (negative: a sink).
    pub power: f64,
}

impl LoadCase {
    /// The load case written in the model file.
    pub fn from_section(section: &Section) -> Self {
        let boundary_value = section
            .boundaries
            .iter()
            .map(|b| match b.kind {
                BoundaryKind::Fixed { temperature } => temperature,
                BoundaryKind::Insulated => 0.0,
                BoundaryKind::Flux { flux } => flux,
                BoundaryKind::Convection { ambient, .. } => ambient,
                BoundaryKind::Radiation { .. } => 0.0,
            })
            .collect();
        let heat_source = section.materials.iter().map(|m| m.heat_source).collect();
        LoadCase {
            boundary_value,
            heat_source,
            boundary_field: section.boundaries.iter().map(|b| b.field.clone()).collect(),
            source_field: section.materials.iter().map(|m| m.source_field).collect(),
            point_power: section.point_sources.iter().map(|s| s.power).collect(),
        }
    }

    /// The value of boundary `id` at point `p` (the field's where it varies).
    pub fn boundary_value_at(&self, id: usize, p: [f64; 2]) -> f64 {
        match self.boundary_field.get(id).and_then(|f| f.as_ref()) {
            Some(f) => f.value_at(p),
            None => self.boundary_value[id],
        }
    }

    /// The heat source of material `m` at point `p`, W/m³.
    pub fn source_at(&self, m: usize, p: [f64; 2]) -> f64 {
        match self.source_field.get(m).and_then(|f| f.as_ref()) {
            Some(f) => f.value_at(p),
            None => self.heat_source[m],
        }
    }
}

/// The right-hand side of one load case.
#[derive(Debug, Clone, PartialEq)]
pub struct Load {
    /// Full load vector (all nodes, fixed ones included), W/m.
    pub vector: Vec<f64>,
    /// Dirichlet value per node, °C; `None` for a free node.
    pub fixed: Vec<Option<f64>>,
    /// Heat generated in each triangle, `Q·A`, W/m.
    pub cell_source: Vec<f64>,
    /// The point sources' loads, in `Section::point_sources` order.
    pub point_source: Vec<PointLoad>,
}

/// Conductivity tensor of every material, in material-id order. The values were validated by
/// the model stage (positive and finite).
pub fn material_conductivity(section: &Section) -> Vec<Conductivity> {
    section
        .materials
        .iter()
        .map(|m| match m.conductivity {
            ConductivityLaw::Isotropic { k } => Conductivity::isotropic(k),
            ConductivityLaw::Anisotropic {
                k_major,
                k_minor,
                orientation_deg,
            } => Conductivity::principal(k_major, k_minor, orientation_deg.to_radians()),
        })
        .collect()
}

/// Assembles the full matrix: conduction of every triangle and the film term of every
/// convection edge. Depends on the mesh, conductivities, boundary kinds and film coefficients
/// only. The mesh is checked first ([`check_mesh`]).
pub fn assemble_matrix(section: &Section, mesh: &Mesh) -> Result<CsMat<f64>> {
    check_mesh(section, mesh)?;
    Ok(matrix(section, mesh, &material_conductivity(section)))
}

/// Assembles the load vector and the Dirichlet values of one load case, after checking the
/// mesh and the load case.
///
/// A node on fixed edges of two or more different fixed boundaries takes the arithmetic mean
/// of those boundaries' temperatures (each boundary counted once). Used only by the tests today
/// (with [`crate::solve::Factorized`]); a later change gives load cases a command-line
/// interface.
pub fn assemble_load(section: &Section, mesh: &Mesh, case: &LoadCase) -> Result<Load> {
    check_mesh(section, mesh)?;
    check_load_case(section, case)?;
    load(section, mesh, case)
}

/// The matrix of a checked mesh: triangle conduction, then edge film terms `h·L/6·[[2, 1],
/// [1, 2]]` of every convection edge, assembled straight into CSR ([`super::pattern`]).
pub(crate) fn matrix(section: &Section, mesh: &Mesh, conductivity: &[Conductivity]) -> CsMat<f64> {
    let films: Vec<([usize; 2], f64, f64)> = convection_edges(section, mesh)
        .map(|(e, h)| {
            let l = mesh.edge_length(e);
            (e.nodes, h * l / 3.0, h * l / 6.0)
        })
        .collect();
    super::pattern::assemble_csr(mesh, conductivity, &films)
}

/// The boundary edges of convection boundaries with their film coefficient, W/(m²·K).
fn convection_edges<'m>(
    section: &'m Section,
    mesh: &'m Mesh,
) -> impl Iterator<Item = (&'m BoundaryEdge, f64)> + 'm {
    mesh.boundary_edges
        .iter()
        .filter_map(|e| match section.boundaries[e.boundary?].kind {
            BoundaryKind::Convection { h, .. } => Some((e, h)),
            _ => None,
        })
}

/// The load of a checked mesh and load case: sources per triangle, fluxes and ambient terms
/// per edge, point sources at their nodes, Dirichlet values per fixed node.
pub(crate) fn load(section: &Section, mesh: &Mesh, case: &LoadCase) -> Result<Load> {
    let n = mesh.nodes.len();
    let mut vector = vec![0.0; n];
    let cell_source = add_sources(&mut vector, mesh, case);
    add_edge_loads(&mut vector, section, mesh, case);
    let point_source: Vec<PointLoad> = point_source_nodes(section, mesh)?
        .into_iter()
        .zip(&case.point_power)
        .map(|(node, &power)| PointLoad { node, power })
        .collect();
    for p in &point_source {
        vector[p.node] += p.power;
    }
    Ok(Load {
        vector,
        fixed: fixed_values(section, mesh, case),
        cell_source,
        point_source,
    })
}

/// The mesh node at each point source's position (exactly: the mesher inserted it there), in
/// `Section::point_sources` order; a missing node is an internal error.
pub fn point_source_nodes(section: &Section, mesh: &Mesh) -> Result<Vec<usize>> {
    if section.point_sources.is_empty() {
        return Ok(Vec::new());
    }
    // +0.0 turns −0.0 into +0.0, so equal coordinates give equal bits.
    let key = |p: [f64; 2]| ((p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits());
    let wanted: std::collections::BTreeMap<(u64, u64), usize> = section
        .point_sources
        .iter()
        .enumerate()
        .map(|(i, s)| (key(s.at), i))
        .collect();
    let mut node = vec![usize::MAX; section.point_sources.len()];
    for (n, p) in mesh.nodes.iter().enumerate() {
        if let Some(&i) = wanted.get(&key(*p)) {
            node[i] = node[i].min(n);
        }
    }
    match node.iter().position(|&n| n == usize::MAX) {
        Some(i) => Err(Error::run(format!(
            "internal: no mesh node at point_sources[{i}] \"{}\" {}",
            section.point_sources[i].name,
            crate::geom::format_point(section.point_sources[i].at)
        ))),
        None => Ok(node),
    }
}

/// Source per triangle node, exact for a source linear in position: with the nodal values
/// Q_j, `∫ Q·N_i dA = A/12·(2·Q_i + Q_j + Q_k)` (the P1 mass matrix `A/12·[2 1 1; 1 2 1; 1 1 2]`,
/// common practice), `Q·A/3` for a uniform source; returns `∫ Q dA = A·(Q_1 + Q_2 + Q_3)/3` per
/// triangle.
fn add_sources(vector: &mut [f64], mesh: &Mesh, case: &LoadCase) -> Vec<f64> {
    let mut cell_source = vec![0.0; mesh.triangles.len()];
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let m = mesh.material[t];
        if case.source_field.get(m).is_none_or(|f| f.is_none()) {
            let q = case.heat_source[m];
            if q != 0.0 {
                let total = q * TriangleGeometry::of(mesh, t).area;
                cell_source[t] = total;
                for &v in ids {
                    vector[v] += total / 3.0;
                }
            }
            continue;
        }
        let q = ids.map(|v| case.source_at(m, mesh.nodes[v]));
        if q.iter().any(|&x| x != 0.0) {
            let a = TriangleGeometry::of(mesh, t).area;
            let sum = q[0] + q[1] + q[2];
            cell_source[t] = a * sum / 3.0;
            for (i, &v) in ids.iter().enumerate() {
                vector[v] += a / 12.0 * (q[i] + sum);
            }
        }
    }
    cell_source
}

/// Imposed flux `q·L/2` per edge node and convection `∫ h·T∞·N_i ds` with T∞ linear along the
/// edge between its values at the two nodes, `h·L/6·(2·T∞_i + T∞_j)` (exact for a linear
/// ambient; `h·T∞·L/2` for a constant one) — positive into the section.
fn add_edge_loads(vector: &mut [f64], section: &Section, mesh: &Mesh, case: &LoadCase) {
    for e in &mesh.boundary_edges {
        let Some(id) = e.boundary else { continue };
        let l = mesh.edge_length(e);
        let [a, b] = e.nodes;
        match section.boundaries[id].kind {
            BoundaryKind::Flux { .. } => {
                let per_node = case.boundary_value[id] * l / 2.0;
                vector[a] += per_node;
                vector[b] += per_node;
            }
            BoundaryKind::Convection { h, .. } if case.boundary_field[id].is_none() => {
                let per_node = h * case.boundary_value[id] * l / 2.0;
                vector[a] += per_node;
                vector[b] += per_node;
            }
            BoundaryKind::Convection { h, .. } => {
                let ta = case.boundary_value_at(id, mesh.nodes[a]);
                let tb = case.boundary_value_at(id, mesh.nodes[b]);
                vector[a] += h * l / 6.0 * (2.0 * ta + tb);
                vector[b] += h * l / 6.0 * (ta + 2.0 * tb);
            }
            BoundaryKind::Fixed { .. }
            | BoundaryKind::Insulated
            | BoundaryKind::Radiation { .. } => {}
        }
    }
}

/// Dirichlet value per node: the mean of the temperatures (at the node, for a temperature that
/// varies with position) of the distinct fixed boundaries whose edges touch it.
fn fixed_values(section: &Section, mesh: &Mesh, case: &LoadCase) -> Vec<Option<f64>> {
    let mut fixed_pairs: Vec<(usize, usize)> = Vec::new();
    for e in &mesh.boundary_edges {
        let Some(id) = e.boundary else { continue };
        if let BoundaryKind::Fixed { .. } = section.boundaries[id].kind {
            fixed_pairs.push((e.nodes[0], id));
            fixed_pairs.push((e.nodes[1], id));
        }
    }
    fixed_pairs.sort_unstable();
    fixed_pairs.dedup();
    let mut fixed = vec![None; mesh.nodes.len()];
    for group in fixed_pairs.chunk_by(|a, b| a.0 == b.0) {
        let sum = group.iter().fold(0.0, |s, &(node, id)| {
            s + case.boundary_value_at(id, mesh.nodes[node])
        });
        fixed[group[0].0] = Some(sum / group.len() as f64);
    }
    fixed
}

/// `A·x` for a CSR matrix (sprs' product: rows in order, entries of a row in stored order).
pub(crate) fn mat_vec(a: &CsMat<f64>, x: &[f64]) -> Result<Vec<f64>> {
    if !a.is_csr() || a.cols() != x.len() {
        return Err(Error::run(format!(
            "internal error: product of a {}×{} {} matrix with a vector of length {}",
            a.rows(),
            a.cols(),
            if a.is_csr() { "CSR" } else { "CSC" },
            x.len()
        )));
    }
    let mut y = vec![0.0; a.rows()];
    sprs::prod::mul_acc_mat_vec_csr(a.view(), x, &mut y[..]);
    Ok(y)
}
