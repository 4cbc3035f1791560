//! Fem stage: turns a meshed section into the linear system of the P1 (linear triangle) finite
//! element method for steady conduction, `K·T = f`.
//!
//! This module owns
//! - the element integrals: conduction `A·Bᵀ·D·B` for each triangle (D = conductivity tensor,
//!   isotropic today), convection `h·L/6·[[2,1],[1,2]]` for each convective boundary edge, and
//!   the loads: uniform source `Q·A/3` per triangle node, imposed flux `q·L/2` and convection
//!   `h·T∞·L/2` per edge node (positive into the section);
//! - the Dirichlet values of nodes on fixed edges (see [`assemble`] for the rule at nodes shared by
//!   two fixed boundaries);
//! - the consistency checks of the mesh against the section and the refusal of singular models.
//!
//! The matrix part (which depends on boundary kinds, conductivities and film coefficients) is
//! built by [`assemble_matrix`]; the load part (fixed temperatures, fluxes, ambient
//! temperatures, sources) by [`assemble_load`] from a [`LoadCase`]. One matrix can thus serve
//! many load cases. Assembly is a single pass over triangles and edges (triplets, summed in a
//! fixed order), so results are deterministic.

use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::model::{BoundaryKind, Section};
use sprs::{CsMat, TriMat};

/// Message of the error returned for a model whose temperature level is undetermined.
pub const SINGULAR_MODEL_MESSAGE: &str = "singular model: no boundary segment is fixed or convective, so the temperature level is undetermined; give at least one boundary kind = \"fixed\" or \"convection\"";

/// Conductivity tensor `[[kxx, kxy], [kxy, kyy]]`, W/(m·K). Isotropic materials have
/// `kxx = kyy = k`, `kxy = 0`; the general form is kept so anisotropy needs no new assembly.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conductivity {
    pub kxx: f64,
    pub kxy: f64,
    pub kyy: f64,
}

impl Conductivity {
    pub fn isotropic(k: f64) -> Self {
        Conductivity {
            kxx: k,
            kxy: 0.0,
            kyy: k,
        }
    }

    /// `D·g` for a vector g.
    pub fn apply(&self, g: [f64; 2]) -> [f64; 2] {
        [
            self.kxx * g[0] + self.kxy * g[1],
            self.kxy * g[0] + self.kyy * g[1],
        ]
    }

    /// Heat flux `q = −D·∇T`, W/m².
    pub fn flux(&self, gradient: [f64; 2]) -> [f64; 2] {
        let d = self.apply(gradient);
        [-d[0], -d[1]]
    }
}

/// Geometry of one linear triangle: area and the (unscaled) shape-function gradients.
/// `∇N_i = (b_i, c_i) / (2A)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TriangleGeometry {
    /// Signed area, m² (positive for a counter-clockwise triangle).
    pub area: f64,
    pub b: [f64; 3],
    pub c: [f64; 3],
}

impl TriangleGeometry {
    pub fn of(mesh: &Mesh, t: usize) -> Self {
        let ids = mesh.triangles[t];
        let p = [mesh.nodes[ids[0]], mesh.nodes[ids[1]], mesh.nodes[ids[2]]];
        let mut b = [0.0; 3];
        let mut c = [0.0; 3];
        for i in 0..3 {
            let j = (i + 1) % 3;
            let k = (i + 2) % 3;
            b[i] = p[j][1] - p[k][1];
            c[i] = p[k][0] - p[j][0];
        }
        let area = 0.5 * (b[0] * c[1] - b[1] * c[0]);
        TriangleGeometry { area, b, c }
    }

    /// Gradient of the linear field with the given nodal values, per metre.
    pub fn gradient(&self, values: [f64; 3]) -> [f64; 2] {
        let s = 0.5 / self.area;
        [
            s * (self.b[0] * values[0] + self.b[1] * values[1] + self.b[2] * values[2]),
            s * (self.c[0] * values[0] + self.c[1] * values[1] + self.c[2] * values[2]),
        ]
    }

    /// Element conduction matrix `A·Bᵀ·D·B`, W/K per metre of depth.
    pub fn conduction(&self, d: &Conductivity) -> [[f64; 3]; 3] {
        let s = 0.25 / self.area;
        let mut k = [[0.0; 3]; 3];
        for (i, row) in k.iter_mut().enumerate() {
            let di = d.apply([self.b[i], self.c[i]]);
            for (j, kij) in row.iter_mut().enumerate() {
                *kij = s * (di[0] * self.b[j] + di[1] * self.c[j]);
            }
        }
        k
    }
}

/// The values of one load case. Boundary kinds and film coefficients belong to the matrix and
/// are taken from the section; a load case only supplies the numbers that enter the right-hand
/// side.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadCase {
    /// Per boundary id: the fixed temperature (°C) for a fixed boundary, the imposed flux (W/m²,
    /// positive into the section) for a flux boundary, the ambient temperature (°C) for a
    /// convection boundary; ignored for an insulated boundary.
    pub boundary_value: Vec<f64>,
    /// Per material id, W/m³.
    pub heat_source: Vec<f64>,
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
            })
            .collect();
        let heat_source = section.materials.iter().map(|m| m.heat_source).collect();
        LoadCase {
            boundary_value,
            heat_source,
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
}

/// The assembled finite element system of a section.
#[derive(Debug, Clone, PartialEq)]
pub struct System {
    /// Full n×n matrix (conduction + convection), CSR, symmetric, W/K per metre of depth.
    pub matrix: CsMat<f64>,
    /// Full load vector, W/m.
    pub load: Vec<f64>,
    /// Dirichlet value per node, °C; `None` for a free node.
    pub fixed: Vec<Option<f64>>,
    /// Heat generated in each triangle, `Q·A`, W/m.
    pub cell_source: Vec<f64>,
    /// Conductivity per material id.
    pub conductivity: Vec<Conductivity>,
}

impl System {
    pub fn node_count(&self) -> usize {
        self.load.len()
    }

    /// Nodal residual `R = K·T − f` of the full system: at a fixed node, the heat entering the
    /// section through the Dirichlet condition there (W/m); at a free node, round-off.
    pub fn residual(&self, temperature: &[f64]) -> Result<Vec<f64>> {
        let n = self.node_count();
        if temperature.len() != n || self.matrix.rows() != n || self.matrix.cols() != n {
            return Err(Error::run(format!(
                "internal error: residual of a system with {n} nodes asked for {} temperatures",
                temperature.len()
            )));
        }
        let mut r = mat_vec(&self.matrix, temperature);
        for (ri, fi) in r.iter_mut().zip(&self.load) {
            *ri -= fi;
        }
        Ok(r)
    }
}

/// `A·x` for a CSR matrix, rows in order, entries of a row in stored order.
pub(crate) fn mat_vec(a: &CsMat<f64>, x: &[f64]) -> Vec<f64> {
    let mut y = vec![0.0; a.rows()];
    if a.is_csr() {
        for (i, row) in a.outer_iterator().enumerate() {
            let mut s = 0.0;
            for (j, v) in row.iter() {
                s += v * x[j];
            }
            y[i] = s;
        }
    } else {
        for (j, col) in a.outer_iterator().enumerate() {
            for (i, v) in col.iter() {
                y[i] += v * x[j];
            }
        }
    }
    y
}

/// Conductivity tensor of every material, after checking the values.
pub fn material_conductivity(section: &Section) -> Result<Vec<Conductivity>> {
    section
        .materials
        .iter()
        .map(|m| {
            if !(m.conductivity.is_finite() && m.conductivity > 0.0) {
                return Err(Error::input(format!(
                    "materials.{}: conductivity = {} W/(m·K) must be positive and finite",
                    m.name, m.conductivity
                )));
            }
            Ok(Conductivity::isotropic(m.conductivity))
        })
        .collect()
}

/// Checks that the mesh refers only to existing nodes, materials, boundaries and triangles,
/// that coordinates are finite, that every triangle is counter-clockwise with positive area and
/// that every node belongs to a triangle. A failure is an internal error of the mesh stage.
pub fn check_mesh(section: &Section, mesh: &Mesh) -> Result<()> {
    let n = mesh.nodes.len();
    let bad = |what: String| Err(Error::run(format!("internal mesh inconsistency: {what}")));
    if n == 0 || mesh.triangles.is_empty() {
        return bad("the mesh has no triangles".into());
    }
    if mesh.material.len() != mesh.triangles.len() {
        return bad(format!(
            "{} material ids for {} triangles",
            mesh.material.len(),
            mesh.triangles.len()
        ));
    }
    if let Some(i) = mesh
        .nodes
        .iter()
        .position(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return bad(format!("node {i} has a non-finite coordinate"));
    }
    let mut used = vec![false; n];
    for (t, tri) in mesh.triangles.iter().enumerate() {
        if tri.iter().any(|&v| v >= n) {
            return bad(format!("triangle {t} refers to a node that does not exist"));
        }
        if mesh.material[t] >= section.materials.len() {
            return bad(format!("triangle {t} has an unknown material id"));
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
        let [a, b] = edge.nodes;
        if a >= n || b >= n || a == b {
            return bad(format!("boundary edge {e} has invalid nodes"));
        }
        if edge.triangle >= mesh.triangles.len() {
            return bad(format!(
                "boundary edge {e} refers to a triangle that does not exist"
            ));
        }
        if edge
            .boundary
            .is_some_and(|id| id >= section.boundaries.len())
        {
            return bad(format!("boundary edge {e} has an unknown boundary id"));
        }
    }
    Ok(())
}

fn check_boundaries(section: &Section) -> Result<()> {
    for b in &section.boundaries {
        let ok = match b.kind {
            BoundaryKind::Fixed { temperature } => temperature.is_finite(),
            BoundaryKind::Insulated => true,
            BoundaryKind::Flux { flux } => flux.is_finite(),
            BoundaryKind::Convection { h, ambient } => {
                if !(h.is_finite() && h > 0.0) {
                    return Err(Error::input(format!(
                        "boundaries.{}: h = {h} W/(m²·K) must be positive and finite",
                        b.name
                    )));
                }
                ambient.is_finite()
            }
        };
        if !ok {
            return Err(Error::input(format!(
                "boundaries.{}: the {} value must be finite",
                b.name,
                b.kind.name()
            )));
        }
    }
    Ok(())
}

/// Refuses a model in which some connected part of the mesh touches no fixed or convective
/// edge: its temperature level would be undetermined and the matrix singular.
fn check_determined(section: &Section, mesh: &Mesh) -> Result<()> {
    let anchors = |kind: &BoundaryKind| {
        matches!(
            kind,
            BoundaryKind::Fixed { .. } | BoundaryKind::Convection { .. }
        )
    };
    let anchored_edge = |e: &crate::mesh::BoundaryEdge| {
        e.boundary
            .is_some_and(|id| anchors(&section.boundaries[id].kind))
    };
    if !mesh.boundary_edges.iter().any(anchored_edge) {
        return Err(Error::input(SINGULAR_MODEL_MESSAGE));
    }
    // Connected parts of the mesh (union–find over triangle nodes).
    let n = mesh.nodes.len();
    let mut parent: Vec<usize> = (0..n).collect();
    fn find(parent: &mut [usize], mut i: usize) -> usize {
        while parent[i] != i {
            parent[i] = parent[parent[i]];
            i = parent[i];
        }
        i
    }
    for tri in &mesh.triangles {
        for k in 1..3 {
            let (a, b) = (find(&mut parent, tri[0]), find(&mut parent, tri[k]));
            if a != b {
                let (lo, hi) = if a < b { (a, b) } else { (b, a) };
                parent[hi] = lo;
            }
        }
    }
    let mut anchored = vec![false; n];
    for e in mesh.boundary_edges.iter().filter(|e| anchored_edge(e)) {
        let r = find(&mut parent, e.nodes[0]);
        anchored[r] = true;
    }
    for i in 0..n {
        let r = find(&mut parent, i);
        if !anchored[r] {
            let p = mesh.nodes[i];
            return Err(Error::input(format!(
                "singular model: the part of the section containing the point ({}, {}) touches no fixed or convective boundary segment, so its temperature level is undetermined; give it at least one boundary kind = \"fixed\" or \"convection\"",
                p[0], p[1]
            )));
        }
    }
    Ok(())
}

/// Assembles the full matrix: conduction of every triangle and the film term of every
/// convection edge. Depends on the mesh, conductivities, boundary kinds and film coefficients
/// only.
pub fn assemble_matrix(section: &Section, mesh: &Mesh) -> Result<CsMat<f64>> {
    check_mesh(section, mesh)?;
    check_boundaries(section)?;
    let conductivity = material_conductivity(section)?;
    let n = mesh.nodes.len();
    let mut tri = TriMat::with_capacity(
        (n, n),
        9 * mesh.triangles.len() + 4 * mesh.boundary_edges.len(),
    );
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let g = TriangleGeometry::of(mesh, t);
        let ke = g.conduction(&conductivity[mesh.material[t]]);
        for i in 0..3 {
            for j in 0..3 {
                tri.add_triplet(ids[i], ids[j], ke[i][j]);
            }
        }
    }
    for e in &mesh.boundary_edges {
        let Some(id) = e.boundary else { continue };
        if let BoundaryKind::Convection { h, .. } = section.boundaries[id].kind {
            let l = mesh.edge_length(e);
            let d = h * l / 3.0;
            let o = h * l / 6.0;
            let [a, b] = e.nodes;
            tri.add_triplet(a, a, d);
            tri.add_triplet(b, b, d);
            tri.add_triplet(a, b, o);
            tri.add_triplet(b, a, o);
        }
    }
    Ok(tri.to_csr())
}

/// Assembles the load vector and the Dirichlet values of one load case.
///
/// A node on fixed edges of two or more different fixed boundaries takes the arithmetic mean
/// of those boundaries' temperatures (each boundary counted once).
pub fn assemble_load(section: &Section, mesh: &Mesh, case: &LoadCase) -> Result<Load> {
    check_mesh(section, mesh)?;
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
    for (m, q) in section.materials.iter().zip(&case.heat_source) {
        if !q.is_finite() {
            return Err(Error::input(format!(
                "materials.{}: heat_source = {q} W/m³ must be finite",
                m.name
            )));
        }
    }

    let n = mesh.nodes.len();
    let mut vector = vec![0.0; n];
    let mut cell_source = vec![0.0; mesh.triangles.len()];
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let q = case.heat_source[mesh.material[t]];
        if q != 0.0 {
            let total = q * TriangleGeometry::of(mesh, t).area;
            cell_source[t] = total;
            for &v in ids {
                vector[v] += total / 3.0;
            }
        }
    }
    let mut fixed_pairs: Vec<(usize, usize)> = Vec::new();
    for e in &mesh.boundary_edges {
        let Some(id) = e.boundary else { continue };
        let value = case.boundary_value[id];
        let l = mesh.edge_length(e);
        match section.boundaries[id].kind {
            BoundaryKind::Fixed { .. } => {
                fixed_pairs.push((e.nodes[0], id));
                fixed_pairs.push((e.nodes[1], id));
            }
            BoundaryKind::Insulated => {}
            BoundaryKind::Flux { .. } => {
                for &v in &e.nodes {
                    vector[v] += value * l / 2.0;
                }
            }
            BoundaryKind::Convection { h, .. } => {
                for &v in &e.nodes {
                    vector[v] += h * value * l / 2.0;
                }
            }
        }
    }
    fixed_pairs.sort_unstable();
    fixed_pairs.dedup();
    let mut fixed = vec![None; n];
    let mut k = 0;
    while k < fixed_pairs.len() {
        let node = fixed_pairs[k].0;
        let mut sum = 0.0;
        let mut count = 0usize;
        while k < fixed_pairs.len() && fixed_pairs[k].0 == node {
            sum += case.boundary_value[fixed_pairs[k].1];
            count += 1;
            k += 1;
        }
        fixed[node] = Some(sum / count as f64);
    }
    Ok(Load {
        vector,
        fixed,
        cell_source,
    })
}

/// Assembles the system of the section's own load case.
///
/// Rules the user sees:
/// - boundary edges without a boundary name are insulated;
/// - a node on fixed edges of two or more different fixed boundaries takes the arithmetic mean
///   of those boundaries' temperatures;
/// - a model with no fixed and no convection edge on the mesh is refused as singular
///   ([`SINGULAR_MODEL_MESSAGE`]), as is any disconnected part of the mesh without one.
pub fn assemble(section: &Section, mesh: &Mesh) -> Result<System> {
    let matrix = assemble_matrix(section, mesh)?;
    check_determined(section, mesh)?;
    let load = assemble_load(section, mesh, &LoadCase::from_section(section))?;
    Ok(System {
        matrix,
        load: load.vector,
        fixed: load.fixed,
        cell_source: load.cell_source,
        conductivity: material_conductivity(section)?,
    })
}

/// Hand-built meshes and sections for the tests of the fem, solve and post stages.
#[cfg(test)]
pub(crate) mod testutil {
    use crate::mesh::{BoundaryEdge, Mesh, MeshStats, RingRef};
    use crate::model::{self, BoundaryKind, Section};

    /// Structured triangulation of `[0, w] × [0, h]` with `nx × ny` cells, each split along
    /// its rising diagonal. Boundary edges are tagged `tags = [bottom, right, top, left]`;
    /// `material_of` gives the material id of a triangle from its centroid.
    pub fn rectangle_mesh(
        w: f64,
        h: f64,
        nx: usize,
        ny: usize,
        tags: [Option<usize>; 4],
        material_of: impl Fn([f64; 2]) -> usize,
    ) -> Mesh {
        let id = |i: usize, j: usize| j * (nx + 1) + i;
        let mut nodes = Vec::with_capacity((nx + 1) * (ny + 1));
        for j in 0..=ny {
            for i in 0..=nx {
                nodes.push([w * i as f64 / nx as f64, h * j as f64 / ny as f64]);
            }
        }
        let mut triangles = Vec::with_capacity(2 * nx * ny);
        for j in 0..ny {
            for i in 0..nx {
                triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
                triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
            }
        }
        let material = triangles
            .iter()
            .map(|t| {
                let c = t.iter().fold([0.0, 0.0], |a, &v| {
                    [a[0] + nodes[v][0] / 3.0, a[1] + nodes[v][1] / 3.0]
                });
                material_of(c)
            })
            .collect();
        let cell = |i: usize, j: usize| 2 * (j * nx + i);
        let mut boundary_edges = Vec::new();
        let edge = |nodes: [usize; 2], boundary, triangle| BoundaryEdge {
            nodes,
            boundary,
            triangle,
            ring: RingRef::Outline,
        };
        for i in 0..nx {
            boundary_edges.push(edge([id(i, 0), id(i + 1, 0)], tags[0], cell(i, 0)));
        }
        for j in 0..ny {
            boundary_edges.push(edge([id(nx, j), id(nx, j + 1)], tags[1], cell(nx - 1, j)));
        }
        for i in (0..nx).rev() {
            boundary_edges.push(edge(
                [id(i + 1, ny), id(i, ny)],
                tags[2],
                cell(i, ny - 1) + 1,
            ));
        }
        for j in (0..ny).rev() {
            boundary_edges.push(edge([id(0, j + 1), id(0, j)], tags[3], cell(0, j) + 1));
        }
        let (dx, dy) = (w / nx as f64, h / ny as f64);
        let min_angle = dy.atan2(dx).min(dx.atan2(dy)).to_degrees();
        let stats = MeshStats {
            nodes: nodes.len(),
            triangles: triangles.len(),
            boundary_edges: boundary_edges.len(),
            min_angle_deg: min_angle,
            min_angle_away_from_small_input_angles_deg: min_angle,
            max_area: 0.5 * dx * dy,
            min_area: 0.5 * dx * dy,
            worst_triangle: 0,
            worst_triangle_centroid: [2.0 * dx / 3.0, dy / 3.0],
            small_input_angles: Vec::new(),
            area: w * h,
        };
        Mesh {
            nodes,
            triangles,
            material,
            boundary_edges,
            stats,
        }
    }

    /// Section of the rectangle `[0, w] × [0, h]`: materials `(name, k, Q)` and boundaries
    /// `(name, kind)` are given in id order (names must be sorted); the outline's four sides
    /// carry `tags = [bottom, right, top, left]`.
    pub fn rectangle_section(
        w: f64,
        h: f64,
        materials: &[(&str, f64, f64)],
        boundaries: &[(&str, BoundaryKind)],
        tags: [Option<usize>; 4],
    ) -> Section {
        let mut text = String::new();
        for (name, k, q) in materials {
            text += &format!("[materials.{name}]\nconductivity = {k:?}\nheat_source = {q:?}\n");
        }
        let edge = |t: Option<usize>| format!("\"{}\"", t.map_or("", |id| boundaries[id].0));
        let edges: Vec<String> = tags.into_iter().map(edge).collect();
        text += &format!(
            "[outline]\nmaterial = \"{}\"\npoints = [[0.0, 0.0], [{w:?}, 0.0], [{w:?}, {h:?}], [0.0, {h:?}]]\nedges = [{}]\n",
            materials[0].0,
            edges.join(", ")
        );
        for (name, kind) in boundaries {
            text += &format!("[boundaries.{name}]\nkind = \"{}\"\n", kind.name());
            match kind {
                BoundaryKind::Fixed { temperature } => {
                    text += &format!("temperature = {temperature:?}\n")
                }
                BoundaryKind::Insulated => {}
                BoundaryKind::Flux { flux } => text += &format!("flux = {flux:?}\n"),
                BoundaryKind::Convection { h, ambient } => {
                    text += &format!("h = {h:?}\nambient = {ambient:?}\n")
                }
            }
        }
        let section = model::validate(&model::parse(&text).expect("test model parses"))
            .expect("test model is valid");
        assert_eq!(section.outline.edge_boundary, tags, "sides keep their tags");
        section
    }
}

#[cfg(test)]
mod tests {
    use super::testutil::{rectangle_mesh, rectangle_section};
    use super::*;

    #[test]
    fn model_without_fixed_or_convective_edge_is_refused() {
        let tags = [Some(0), Some(1), Some(0), Some(0)];
        let section = rectangle_section(
            1.0,
            1.0,
            &[("m", 1.0, 5.0)],
            &[
                ("heater", BoundaryKind::Flux { flux: 10.0 }),
                ("wall", BoundaryKind::Insulated),
            ],
            tags,
        );
        let mesh = rectangle_mesh(1.0, 1.0, 3, 3, tags, |_| 0);
        assert_eq!(
            assemble(&section, &mesh),
            Err(Error::input(SINGULAR_MODEL_MESSAGE))
        );
    }

    #[test]
    fn disconnected_part_without_anchor_is_refused() {
        let tags = [Some(0), None, None, None];
        let section = rectangle_section(
            1.0,
            1.0,
            &[("m", 1.0, 0.0)],
            &[("base", BoundaryKind::Fixed { temperature: 0.0 })],
            tags,
        );
        let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
        let other = rectangle_mesh(1.0, 1.0, 2, 2, [None; 4], |_| 0);
        let (n0, t0) = (mesh.nodes.len(), mesh.triangles.len());
        mesh.nodes
            .extend(other.nodes.iter().map(|p| [p[0] + 5.0, p[1]]));
        mesh.triangles
            .extend(other.triangles.iter().map(|t| t.map(|v| v + n0)));
        mesh.material.extend(&other.material);
        mesh.boundary_edges
            .extend(other.boundary_edges.iter().map(|e| {
                let mut e = *e;
                e.nodes = e.nodes.map(|v| v + n0);
                e.triangle += t0;
                e
            }));
        let err = assemble(&section, &mesh).unwrap_err();
        assert!(
            matches!(&err, Error::Input(m) if m.contains("(5, 0)")),
            "{err:?}"
        );
    }

    #[test]
    fn inconsistent_mesh_is_a_run_error_not_a_panic() {
        let tags = [Some(0); 4];
        let section = rectangle_section(
            1.0,
            1.0,
            &[("m", 1.0, 0.0)],
            &[("t", BoundaryKind::Fixed { temperature: 0.0 })],
            tags,
        );
        let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
        mesh.triangles[3].swap(0, 1);
        assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
        let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
        mesh.boundary_edges[0].boundary = Some(7);
        assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
        let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
        mesh.nodes.push([0.5, 0.5]);
        assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
    }

    #[test]
    fn matrix_is_symmetric_and_conduction_conserves_heat() {
        let tags = [Some(0), Some(1), Some(2), None];
        let section = rectangle_section(
            1.5,
            0.7,
            &[("a", 2.0, 100.0), ("b", 0.3, 0.0)],
            &[
                (
                    "air",
                    BoundaryKind::Convection {
                        h: 8.0,
                        ambient: 15.0,
                    },
                ),
                ("base", BoundaryKind::Fixed { temperature: 60.0 }),
                ("sun", BoundaryKind::Flux { flux: 300.0 }),
            ],
            tags,
        );
        let mesh = rectangle_mesh(1.5, 0.7, 6, 5, tags, |c| usize::from(c[1] > 0.35));
        let system = assemble(&section, &mesh).unwrap();
        let k = &system.matrix;
        for (i, row) in k.outer_iterator().enumerate() {
            for (j, v) in row.iter() {
                assert_eq!(Some(v), k.get(j, i));
            }
        }
        // A uniform field conducts no heat: K·1 is the film term only, Σ h·L over the
        // convective (bottom) side = 8 · 1.5.
        let ones = vec![1.0; mesh.nodes.len()];
        let k1: f64 = mat_vec(k, &ones).iter().sum();
        assert!((k1 - 8.0 * 1.5).abs() < 1e-12);
        // Σ f = Σ Q·A + Σ q·L + Σ h·T∞·L (material a fills y < 0.35).
        let f: f64 = system.load.iter().sum();
        let expected = 100.0 * 1.5 * 0.35 + 300.0 * 1.5 + 8.0 * 15.0 * 1.5;
        assert!((f - expected).abs() < 1e-11 * expected);
        let base: Vec<usize> = (0..mesh.nodes.len())
            .filter(|&i| mesh.nodes[i][0] == 1.5)
            .collect();
        assert_eq!(base.len(), 6);
        assert!(base.iter().all(|&i| system.fixed[i] == Some(60.0)));
        assert_eq!(system.fixed.iter().filter(|f| f.is_some()).count(), 6);
    }
}
