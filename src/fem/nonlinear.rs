//! The nonlinear terms of the P1 system and their derivatives, on the matrix pattern of the
//! linear assembly: conduction of materials with a conductivity table (each triangle's k at
//! its mean nodal temperature, k(T̄_e)) and surface radiation of edges
//! (`q = ε·σ·(T_s⁴ − T⁴)` in kelvin, integrated by 3-point Gauss–Legendre quadrature per
//! edge). [`NonlinearSystem`] evaluates, for a temperature field, the residual of the full
//! system, the Picard matrix (conduction at the lagged k, radiation by its tangent) or the
//! Newton matrix (the full Jacobian, not symmetric when a table is present), and the final
//! secant [`System`] handed to post-processing, whose `K·T − f` is the nonlinear residual
//! itself. [`radiation_edge`] is the one place the edge integral is computed: assembly and the
//! reported heat flows use it alike, so the energy balance closes to round-off.
//!
//! Why k(T̄_e): for a conductivity linear in T over a linear field, the mean of k over the
//! triangle equals k at the mean temperature, so k(T̄_e) is the exact element average there;
//! for a piecewise-linear table it is the midpoint rule of that average.

use super::element::{Conductivity, TriangleGeometry};
use super::pattern::{csr_pattern, position};
use super::{LoadCase, PointLoad, System, assemble, check_mesh, checks, material_conductivity};
use crate::error::Result;
use crate::mesh::Mesh;
use crate::model::{ABSOLUTE_ZERO_C, ConductivityTable, Radiation, STEFAN_BOLTZMANN, Section};
use nalgebra::Matrix3;
use sprs::CsMat;
use std::sync::Arc;

/// 3-point Gauss–Legendre rule on [0, 1]: (position, weight); exact for polynomials of degree
/// 5 (Abramowitz & Stegun 25.4.29, from memory: nodes 0, ±√(3/5) with weights 8/9, 5/9 on
/// [−1, 1]).
const GAUSS3: [(f64, f64); 3] = [
    (0.112_701_665_379_258_3, 5.0 / 18.0),
    (0.5, 8.0 / 18.0),
    (0.887_298_334_620_741_7, 5.0 / 18.0),
];

/// The radiation terms of one edge per metre of its length, from its end temperatures (°C).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RadiationEdge {
    /// Mean radiative flux into the section over the edge, W/m².
    pub mean_flux: f64,
    /// `∫ N_i q ds / L` per end node, W/m² (the nodal inflow per metre of edge).
    pub nodal_flux: [f64; 2],
    /// `∫ N_i N_j 4εσT³ ds / L`, W/(m²·K): the tangent of the outflow.
    pub tangent: [[f64; 2]; 2],
    /// `∫ N_i N_j h_r ds / L`, W/(m²·K): the secant matrix, `h_r = εσ(T² + T_s²)(T + T_s)`.
    pub secant: [[f64; 2]; 2],
    /// `∫ N_i h_r T_s ds / L` (T_s in °C), W/m²: the secant load.
    pub secant_load: [f64; 2],
    /// Mean linearised coefficient h_r over the edge, W/(m²·K).
    pub mean_coefficient: f64,
}

/// The radiation terms of an edge with end temperatures `ta`, `tb` (°C), by 3-point Gauss
/// quadrature of the exact (quartic) law along the linear trace. Temperatures below absolute
/// zero (possible only in an intermediate iterate) radiate nothing.
pub fn radiation_edge(r: &Radiation, ta: f64, tb: f64) -> RadiationEdge {
    let es = r.emissivity * STEFAN_BOLTZMANN;
    let ts = r.surroundings - ABSOLUTE_ZERO_C;
    let mut out = RadiationEdge {
        mean_flux: 0.0,
        nodal_flux: [0.0; 2],
        tangent: [[0.0; 2]; 2],
        secant: [[0.0; 2]; 2],
        secant_load: [0.0; 2],
        mean_coefficient: 0.0,
    };
    for (xi, w) in GAUSS3 {
        let n = [1.0 - xi, xi];
        let t = (n[0] * ta + n[1] * tb - ABSOLUTE_ZERO_C).max(0.0);
        let q = es * (ts.powi(4) - t.powi(4));
        let hr = es * (t * t + ts * ts) * (t + ts);
        let d = 4.0 * es * t.powi(3);
        out.mean_flux += w * q;
        out.mean_coefficient += w * hr;
        for i in 0..2 {
            out.nodal_flux[i] += w * n[i] * q;
            out.secant_load[i] += w * n[i] * hr * r.surroundings;
            for j in 0..2 {
                out.tangent[i][j] += w * n[i] * n[j] * d;
                out.secant[i][j] += w * n[i] * n[j] * hr;
            }
        }
    }
    out
}

/// A triangle of a table material: its nodes, unit-conductivity matrix and pattern positions.
#[derive(Debug, Clone)]
struct TableTriangle {
    triangle: usize,
    nodes: [usize; 3],
    material: usize,
    /// Conduction matrix for k = 1, W/K per metre of depth per W/(m·K).
    unit: Matrix3<f64>,
    /// Position of entry (i, j) in the pattern, row-major.
    at: [usize; 9],
}

/// A radiating boundary edge.
#[derive(Debug, Clone)]
struct RadiatingEdge {
    nodes: [usize; 2],
    length: f64,
    radiation: Radiation,
    /// Positions of (a, a), (a, b), (b, a), (b, b).
    at: [usize; 4],
}

/// Which matrix [`NonlinearSystem::matrix`] builds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MatrixKind {
    /// Conduction at the current k(T̄_e), radiation by its tangent: symmetric.
    Picard,
    /// The full Jacobian of the residual: Picard plus the k′(T̄_e) terms (not symmetric).
    Newton,
}

/// The system of a nonlinear model on one mesh: the linear part assembled once, the table
/// triangles and radiating edges evaluated per temperature field.
#[derive(Debug, Clone)]
pub struct NonlinearSystem {
    indptr: Vec<usize>,
    indices: Vec<usize>,
    /// Values of the linear part (conduction of constant materials, convection films).
    linear: Vec<f64>,
    /// The linear load (sources, fluxes, convection ambients), W/m.
    load: Vec<f64>,
    fixed: Vec<Option<f64>>,
    cell_source: Vec<f64>,
    point_source: Vec<PointLoad>,
    conductivity: Vec<Conductivity>,
    tables: Vec<Option<ConductivityTable>>,
    table_triangles: Vec<TableTriangle>,
    edges: Vec<RadiatingEdge>,
}

impl NonlinearSystem {
    /// Checks the mesh, refuses an undetermined model, and assembles the linear part.
    pub fn new(section: &Section, mesh: &Mesh) -> Result<Self> {
        check_mesh(section, mesh)?;
        checks::check_determined(section, mesh)?;
        let conductivity = material_conductivity(section);
        let tables = section.nonlinear.tables.clone();
        let mut linear_k = conductivity.clone();
        for (m, t) in tables.iter().enumerate() {
            if t.is_some() {
                linear_k[m] = Conductivity::isotropic(0.0);
            }
        }
        let linear = assemble::matrix(section, mesh, &linear_k);
        let load = assemble::load(section, mesh, &LoadCase::from_section(section))?;
        let (indptr, indices) = csr_pattern(mesh);
        let mut table_triangles = Vec::new();
        for (t, ids) in mesh.triangles.iter().enumerate() {
            let m = mesh.material[t];
            if tables[m].is_none() {
                continue;
            }
            let unit = TriangleGeometry::of(mesh, t).conduction(&Conductivity::isotropic(1.0));
            let mut at = [0; 9];
            for i in 0..3 {
                for j in 0..3 {
                    at[3 * i + j] = position(&indptr, &indices, ids[i], ids[j]);
                }
            }
            table_triangles.push(TableTriangle {
                triangle: t,
                nodes: *ids,
                material: m,
                unit,
                at,
            });
        }
        let edges = mesh
            .boundary_edges
            .iter()
            .filter_map(|e| {
                let radiation = section.radiation(e.boundary?)?;
                let [a, b] = e.nodes;
                let p = |i, j| position(&indptr, &indices, i, j);
                Some(RadiatingEdge {
                    nodes: e.nodes,
                    length: mesh.edge_length(e),
                    radiation,
                    at: [p(a, a), p(a, b), p(b, a), p(b, b)],
                })
            })
            .collect();
        Ok(NonlinearSystem {
            linear: linear.data().to_vec(),
            indptr,
            indices,
            load: load.vector,
            fixed: load.fixed,
            cell_source: load.cell_source,
            point_source: load.point_source,
            conductivity,
            tables,
            table_triangles,
            edges,
        })
    }

    /// Dirichlet value per node, °C; `None` for a free node.
    pub fn fixed(&self) -> &[Option<f64>] {
        &self.fixed
    }

    /// The linear load vector (sources, fluxes, convection ambients), W/m.
    pub fn linear_load(&self) -> &[f64] {
        &self.load
    }

    /// The matrix pattern (CSR row pointers, column indices) shared by every matrix built.
    pub fn pattern(&self) -> (&[usize], &[usize]) {
        (&self.indptr, &self.indices)
    }

    /// True when some material has a conductivity table (the Newton matrix is then not
    /// symmetric).
    pub fn has_tables(&self) -> bool {
        !self.table_triangles.is_empty()
    }

    /// k and dk/dT of a table triangle at its mean temperature.
    fn triangle_k(&self, tri: &TableTriangle, t: &[f64]) -> (f64, f64) {
        let mean = (t[tri.nodes[0]] + t[tri.nodes[1]] + t[tri.nodes[2]]) / 3.0;
        match &self.tables[tri.material] {
            Some(table) => table.eval(mean),
            None => (0.0, 0.0),
        }
    }

    /// The secant matrix values and load: `S(T)·T − b(T)` is the residual of the nonlinear
    /// system at `t` (conduction at k(T̄_e), radiation as `h_r·(T − T_s)` at each Gauss point).
    fn secant(&self, t: &[f64]) -> (Vec<f64>, Vec<f64>) {
        let mut data = self.linear.clone();
        let mut load = self.load.clone();
        for tri in &self.table_triangles {
            let (k, _) = self.triangle_k(tri, t);
            for (p, v) in tri.at.iter().zip(tri.unit.transpose().iter()) {
                data[*p] += k * v;
            }
        }
        for e in &self.edges {
            let r = radiation_edge(&e.radiation, t[e.nodes[0]], t[e.nodes[1]]);
            let s = r.secant;
            for (p, v) in e.at.iter().zip([s[0][0], s[0][1], s[1][0], s[1][1]]) {
                data[*p] += e.length * v;
            }
            for i in 0..2 {
                load[e.nodes[i]] += e.length * r.secant_load[i];
            }
        }
        (data, load)
    }

    /// The residual `R(T)` of every node, W/m: conduction + films − linear load + radiated
    /// outflow. At a free node it is what the iteration drives to zero; at a fixed node it is
    /// the heat entering there.
    pub fn residual(&self, t: &[f64]) -> Vec<f64> {
        let mut r: Vec<f64> = self.load.iter().map(|f| -f).collect();
        for (i, row) in self.indptr.windows(2).enumerate() {
            for p in row[0]..row[1] {
                r[i] += self.linear[p] * t[self.indices[p]];
            }
        }
        for tri in &self.table_triangles {
            let (k, _) = self.triangle_k(tri, t);
            let te = nalgebra::Vector3::from(tri.nodes.map(|v| t[v]));
            let flow = tri.unit * te * k;
            for i in 0..3 {
                r[tri.nodes[i]] += flow[i];
            }
        }
        for e in &self.edges {
            let q = radiation_edge(&e.radiation, t[e.nodes[0]], t[e.nodes[1]]);
            for i in 0..2 {
                r[e.nodes[i]] -= e.length * q.nodal_flux[i];
            }
        }
        r
    }

    /// The values (on [`pattern`](Self::pattern)) of the Picard or Newton matrix at `t`.
    pub fn matrix(&self, t: &[f64], kind: MatrixKind) -> Vec<f64> {
        let mut data = self.linear.clone();
        for tri in &self.table_triangles {
            let (k, dk) = self.triangle_k(tri, t);
            let te = nalgebra::Vector3::from(tri.nodes.map(|v| t[v]));
            let flow = tri.unit * te;
            for i in 0..3 {
                for j in 0..3 {
                    let mut v = k * tri.unit[(i, j)];
                    if kind == MatrixKind::Newton {
                        v += flow[i] * dk / 3.0;
                    }
                    data[tri.at[3 * i + j]] += v;
                }
            }
        }
        for e in &self.edges {
            let d = radiation_edge(&e.radiation, t[e.nodes[0]], t[e.nodes[1]]).tangent;
            for (p, v) in e.at.iter().zip([d[0][0], d[0][1], d[1][0], d[1][1]]) {
                data[*p] += e.length * v;
            }
        }
        data
    }

    /// Conductivity per triangle at `t`: k(T̄_e) for table materials, the material's own
    /// otherwise.
    pub fn cell_conductivity(&self, mesh: &Mesh, t: &[f64]) -> Vec<Conductivity> {
        let mut c: Vec<Conductivity> = mesh
            .material
            .iter()
            .map(|&m| self.conductivity[m])
            .collect();
        for tri in &self.table_triangles {
            c[tri.triangle] = Conductivity::isotropic(self.triangle_k(tri, t).0);
        }
        c
    }

    /// The secant system at the solved field `t`, for post-processing: `K·T − f` of it is the
    /// nonlinear residual (reactions at fixed nodes, round-off plus the iteration's remainder
    /// at free ones), the per-triangle conductivity is k(T̄_e).
    pub fn secant_system(&self, mesh: &Mesh, t: &[f64]) -> System {
        let (data, load) = self.secant(t);
        let n = self.fixed.len();
        System {
            matrix: Arc::new(CsMat::new(
                (n, n),
                self.indptr.clone(),
                self.indices.clone(),
                data,
            )),
            load,
            fixed: self.fixed.clone(),
            cell_source: self.cell_source.clone(),
            point_source: self.point_source.clone(),
            conductivity: self.conductivity.clone(),
            cell_conductivity: Some(self.cell_conductivity(mesh, t)),
        }
    }

    /// A starting field: the linear system with each table material at k of the table at
    /// `t_ref` and each radiating edge as a film `4εσT_s³` to its surroundings (the tangent at
    /// the surroundings), as a secant matrix and load to hand to a linear solve.
    pub fn start_system(&self, t_ref: f64) -> System {
        let mut data = self.linear.clone();
        let mut load = self.load.clone();
        for tri in &self.table_triangles {
            let k = self.tables[tri.material]
                .as_ref()
                .map_or(0.0, |x| x.eval(t_ref).0);
            for i in 0..3 {
                for j in 0..3 {
                    data[tri.at[3 * i + j]] += k * tri.unit[(i, j)];
                }
            }
        }
        for e in &self.edges {
            let ts = e.radiation.surroundings;
            let r = radiation_edge(&e.radiation, ts, ts);
            for (p, v) in e.at.iter().zip([
                r.tangent[0][0],
                r.tangent[0][1],
                r.tangent[1][0],
                r.tangent[1][1],
            ]) {
                data[*p] += e.length * v;
            }
            for i in 0..2 {
                let row_sum = r.tangent[i][0] + r.tangent[i][1];
                load[e.nodes[i]] += e.length * row_sum * ts;
            }
        }
        let n = self.fixed.len();
        System {
            matrix: Arc::new(CsMat::new(
                (n, n),
                self.indptr.clone(),
                self.indices.clone(),
                data,
            )),
            load,
            fixed: self.fixed.clone(),
            cell_source: self.cell_source.clone(),
            point_source: self.point_source.clone(),
            conductivity: self.conductivity.clone(),
            cell_conductivity: None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_rule_integrates_quintics_and_the_identity_holds() {
        // Σ w·ξ^p = 1/(p+1) for p ≤ 5 (exactness of the 3-point rule).
        for p in 0..=5 {
            let s: f64 = GAUSS3.iter().map(|(x, w)| w * x.powi(p)).sum();
            assert!((s - 1.0 / f64::from(p + 1)).abs() < 1e-15, "p = {p}");
        }
        // h_r·(T − T_s) = −q exactly in arithmetic: the secant form reproduces the flux.
        let r = Radiation {
            emissivity: 0.8,
            surroundings: 10.0,
        };
        let e = radiation_edge(&r, 60.0, 90.0);
        for i in 0..2 {
            let secant = e.secant[i][0] * 60.0 + e.secant[i][1] * 90.0 - e.secant_load[i];
            assert!((secant + e.nodal_flux[i]).abs() < 1e-11 * e.nodal_flux[i].abs());
        }
        // Uniform edge: the flux is ε·σ·(T_s⁴ − T⁴) (Stefan–Boltzmann law, CODATA 2018 σ).
        let u = radiation_edge(&r, 50.0, 50.0);
        let want = 0.8 * 5.670374419e-8 * (283.15f64.powi(4) - 323.15f64.powi(4));
        assert!((u.mean_flux - want).abs() < 1e-12 * want.abs());
    }
}
