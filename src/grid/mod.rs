//! Grid model: an independent 5-point finite-difference model of a section on a uniform,
//! vertex-centred grid, for cross-checking the element model.
//!
//! The grid has spacing h and its origin at the minimum corner of the outline's bounding box;
//! grid point (i, j) sits at `origin + (i·h, j·h)`.
//!
//! * **Nodes** are the grid points inside the section or within a tolerance (1e-9·h) of its
//!   boundary (outline and holes). A node on a fixed segment is a fixed node; where several
//!   fixed boundaries meet (a corner), it takes the arithmetic mean of their temperatures.
//! * **Cells** (the squares between grid points) carry the material found at their centre.
//! * **Control volumes.** Each node owns the rectangle reaching half-way along each of its four
//!   arms. An arm is *regular* (length h, to the neighbouring node), *cut* (length θ·h, ending
//!   where it meets a fixed off-grid boundary — the Shortley–Weller unequal arm), or *absent*
//!   (it leaves the section at once: the node is on a grid-aligned edge). The four quarters of
//!   the control volume take the material of their cell. The conductance of the face an arm
//!   crosses is Σ k·(half face length) / (arm length) over the two quarters beside it: the mean
//!   of the two cells' k for an interior link, half a cell's k along a grid-aligned edge. With
//!   uniform k and no cut arm the row is the plain 5-point stencil; with cut arms it is exactly
//!   the Shortley–Weller unequal-arm difference (Shortley & Weller 1938, J. Appl. Phys. 9, 334)
//!   multiplied by the control-volume area.
//! * **Sources** add q·(quarter area) per in-section quarter.
//! * **Edges.** Half an arm that lies along a boundary segment is that boundary's share of the
//!   node: flux q·(share), convection h_c·(share)·(T∞ − T). Insulated edges add nothing.
//!   Only fixed edges may lie off the grid lines; every other edge (including unnamed segments,
//!   which are insulated) must run along grid lines between grid points, or the model is refused.
//!
//! The Shortley–Weller rows are not symmetric, so the system is solved by sparse LU.

mod build;
mod sample;
mod solve;

pub use build::{build, refuse_contacts};
pub use solve::solve;

use crate::model::BoundaryKind;
use std::collections::BTreeMap;

/// Largest number of grid points (over the outline's bounding box) accepted.
pub const MAX_GRID_POINTS: usize = 4_000_000;

/// Relative solver residual above which the solve fails.
pub const RESIDUAL_TOLERANCE: f64 = 1e-9;

const NONE: u32 = u32::MAX;
/// East, west, north, south.
const DIRS: [(i64, i64); 4] = [(1, 0), (-1, 0), (0, 1), (0, -1)];
const E: usize = 0;
const W: usize = 1;
const N: usize = 2;
const S: usize = 3;

/// What a grid node is.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub enum NodeKind {
    /// Strictly inside the section.
    Interior,
    /// On a grid-aligned insulated, flux or convection edge (or an unnamed one).
    Edge,
    /// On a fixed edge: the temperature is imposed.
    Fixed {
        /// Imposed temperature, °C.
        temperature: f64,
    },
}

/// One node of the grid model.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridNode {
    /// Grid column.
    pub i: usize,
    /// Grid row.
    pub j: usize,
    /// m
    pub x: f64,
    /// m
    pub y: f64,
    /// What the node is.
    pub kind: NodeKind,
}

/// A half arm that lies along the section boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
struct EdgeShare {
    /// Boundary id; `None` = unnamed segment (insulated).
    boundary: Option<usize>,
    /// m
    length: f64,
}

/// An arm cut by a fixed boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Cut {
    boundary: usize,
    temperature: f64,
    /// Fraction of h at which the arm meets the boundary.
    theta: f64,
}

/// The finite-difference model of a section.
#[derive(Debug, Clone)]
pub struct GridModel {
    /// Grid spacing h, m.
    pub spacing: f64,
    /// Position of grid point (0, 0), m: the minimum corner of the outline's bounding box.
    pub origin: [f64; 2],
    /// Number of grid points along x.
    pub nx: usize,
    /// Number of grid points along y.
    pub ny: usize,
    /// The nodes, ordered by (j, i).
    pub nodes: Vec<GridNode>,
    /// Nodes with at least one Shortley–Weller (cut) arm among the unknowns.
    pub shortley_weller_nodes: usize,
    /// Notes on the approximation (region interfaces off the grid lines, ...).
    pub warnings: Vec<String>,
    /// Boundary names and conditions, by boundary id.
    boundaries: Vec<(String, BoundaryKind)>,
    /// Node index of each grid point (index j·nx + i), `NONE` outside.
    node_at: Vec<u32>,
    /// Whether each cell (index j·(nx−1) + i) has its centre inside the section.
    pub(crate) cell_inside: Vec<bool>,
    /// Face conductance of each node's four arms, W/(m·K); 0 = absent.
    conductance: Vec<[f64; 4]>,
    /// Cut arms, by (node, direction).
    cuts: BTreeMap<(usize, usize), Cut>,
    /// Heat source of each node's control volume, W/m.
    source: Vec<f64>,
    /// Boundary shares of nodes on the boundary.
    edges: BTreeMap<usize, Vec<EdgeShare>>,
    /// For fixed nodes: the fixed boundaries they lie on (distinct ids, ascending).
    fixed_on: BTreeMap<usize, Vec<usize>>,
}

/// The solved grid model.
#[derive(Debug, Clone)]
pub struct GridSolution {
    /// °C, one per node of the model.
    pub temperature: Vec<f64>,
    /// Heat flow into the section through each named boundary, W/m, by boundary id (names in
    /// the section's order). Convection and flux boundaries: the imposed terms. Fixed
    /// boundaries: the residual of the control-volume balance of the boundary layer — fixed
    /// nodes and Shortley–Weller nodes — with each flow to a regular node taken as that node's
    /// (conservative) row sees it. This is conservative even though the Shortley–Weller rows
    /// are not.
    pub heat_flow: Vec<(String, f64)>,
    /// Total heat source, W/m.
    pub source: f64,
    /// Σ heat_flow + source, W/m: round-off for a solved system (a check of the bookkeeping).
    pub imbalance: f64,
    /// ‖A·T − b‖∞ / (‖A‖∞·‖T‖∞ + ‖b‖∞) of the solved system.
    pub residual_relative: f64,
    spacing: f64,
    origin: [f64; 2],
    nx: usize,
    ny: usize,
    node_at: Vec<u32>,
    cell_inside: Vec<bool>,
}

impl GridModel {
    /// Node index of grid point (i, j), if it is a node.
    pub fn node_index(&self, i: usize, j: usize) -> Option<usize> {
        if i >= self.nx || j >= self.ny {
            return None;
        }
        let n = self.node_at[j * self.nx + i];
        (n != NONE).then_some(n as usize)
    }

    /// The node at the next grid point from node n in direction d, if any.
    fn grid_neighbour(&self, n: usize, d: usize) -> Option<usize> {
        let node = &self.nodes[n];
        let (i, j) = (node.i as i64 + DIRS[d].0, node.j as i64 + DIRS[d].1);
        if i < 0 || j < 0 {
            return None;
        }
        self.node_index(i as usize, j as usize)
    }

    /// Neighbour node of node n in direction d, if the arm there is regular.
    fn neighbour(&self, n: usize, d: usize) -> Option<usize> {
        if self.conductance[n][d] == 0.0 || self.cuts.contains_key(&(n, d)) {
            return None;
        }
        self.grid_neighbour(n, d)
    }

    /// Conductance of the face node n's arm in direction d crosses, W/(m·K); 0 = no arm.
    pub fn arm_conductance(&self, n: usize, d: usize) -> f64 {
        self.conductance[n][d]
    }

    /// Heat source of node n's control volume, W/m.
    pub fn node_source(&self, n: usize) -> f64 {
        self.source[n]
    }

    /// Imposed boundary terms of node n at temperature t: Σ (boundary, inflow W/m).
    fn imposed(&self, n: usize, t: f64, mut f: impl FnMut(usize, f64)) {
        if let Some(shares) = self.edges.get(&n) {
            for s in shares {
                if let Some(b) = s.boundary {
                    match self.boundaries[b].1 {
                        BoundaryKind::Convection { h, ambient } => {
                            f(b, h * s.length * (ambient - t))
                        }
                        BoundaryKind::Flux { flux } => f(b, flux * s.length),
                        BoundaryKind::Insulated
                        | BoundaryKind::Fixed { .. }
                        | BoundaryKind::Radiation { .. } => {}
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests;
