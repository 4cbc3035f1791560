//! Cross-checks of the element model against grid models of the same section.
//!
//! Two checks, each a library call returning a plain struct; the command-line tool only
//! formats them:
//!
//! * [`grid_check`] solves the built-in finite-difference grid model ([`crate::grid`]) at one
//!   or more spacings h and the element model of the same section, and compares them at every
//!   grid node (the element field interpolated in its triangle) and boundary by boundary (heat
//!   flows). Both discretise the same boundary-value problem, so on a fine element mesh the
//!   difference measures the grid model's discretisation error; over halved spacings it shows
//!   the observed order, log(e₁/e₂)/log(h₁/h₂).
//! * [`compare`] reads a user's own grid results (CSV `x,y,temperature`, m and °C) and
//!   compares them with the element field at each point.
//!
//! The element model uses the model file's own mesh settings unless `fe_max_area` replaces the
//! global `[mesh] max_area` (materials' `max_area` and boundaries' `size` still apply). For the
//! difference to measure the grid's error, the element mesh must be much finer than the grid;
//! the reports print the element mesh size next to the grid spacing and say when it is not.
//!
//! Differences are always *other − element* (grid − element, user − element), in K.

use crate::error::{Error, Result};
use crate::grid::{self, GridModel, GridSolution};
use crate::mesh::MeshOptions;
use crate::post::{Locator, Placement};
use crate::run::{self, Prepared, Solved};
use std::path::Path;

/// Most spacings accepted by one grid check (`--levels` or repeated `--spacing`).
pub const MAX_LEVELS: usize = 12;
/// Header a user's grid-results file must start with (m, m, °C).
pub const USER_HEADER: [&str; 3] = ["x", "y", "temperature"];
/// Points outside the section listed by name in the report (the rest are counted).
pub const OUTSIDE_LISTED: usize = 5;
/// The element mesh counts as "much finer" than a grid of spacing h when its longest
/// equilateral-equivalent edge is at most h / `FINE_RATIO`.
pub const FINE_RATIO: f64 = 4.0;

/// The element mesh that served as the reference.
#[derive(Debug, Clone, PartialEq)]
pub struct ElementMeshInfo {
    /// Nodes of the element mesh.
    pub nodes: usize,
    /// Triangles of the element mesh.
    pub triangles: usize,
    /// Global area limit used, m² (the model's, or `fe_max_area`).
    pub max_area_setting: f64,
    /// True when `fe_max_area` replaced the model's setting.
    pub overridden: bool,
    /// Area of the largest triangle, m².
    pub largest_triangle: f64,
    /// Side of the equilateral triangle of area `largest_triangle`, m: the mesh size quoted.
    pub edge: f64,
}

/// The element temperature and another value at one point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PointDiff {
    /// m
    pub x: f64,
    /// m
    pub y: f64,
    /// The grid model's or the user's temperature, °C.
    pub t_other: f64,
    /// The element model's temperature, °C.
    pub t_fe: f64,
    /// t_other − t_fe, K.
    pub diff: f64,
}

/// Statistics of a set of differences.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DiffStats {
    /// Number of points compared.
    pub count: usize,
    /// max |diff|, K.
    pub max_abs: f64,
    /// Where max |diff| occurs (first such point), m.
    pub max_at: [f64; 2],
    /// (Σ diff² / n)^½, K.
    pub rms: f64,
    /// Σ diff / n, K.
    pub mean: f64,
}

impl DiffStats {
    /// Statistics of `points` (all zero for an empty set).
    pub fn of(points: &[PointDiff]) -> DiffStats {
        let mut s = DiffStats {
            count: points.len(),
            max_abs: 0.0,
            max_at: [f64::NAN, f64::NAN],
            rms: 0.0,
            mean: 0.0,
        };
        let (mut sq, mut sum) = (0.0, 0.0);
        for (k, p) in points.iter().enumerate() {
            let a = p.diff.abs();
            if k == 0 || a > s.max_abs {
                s.max_abs = a;
                s.max_at = [p.x, p.y];
            }
            sq += p.diff * p.diff;
            sum += p.diff;
        }
        if !points.is_empty() {
            let n = points.len() as f64;
            s.rms = (sq / n).sqrt();
            s.mean = sum / n;
        }
        s
    }
}

/// One boundary's heat flow in both models, W/m (positive into the section).
#[derive(Debug, Clone, PartialEq)]
pub struct FlowDiff {
    /// Boundary name.
    pub name: String,
    /// Boundary condition kind.
    pub kind: crate::post::ConditionKind,
    /// Heat flow of the grid model, W/m.
    pub grid: f64,
    /// Heat flow of the element model, W/m.
    pub fe: f64,
    /// grid − fe, W/m.
    pub diff: f64,
    /// diff / |fe|; `None` when the element flow is zero (to 1e-12 of the largest flow).
    pub relative: Option<f64>,
}

/// The comparison at one grid spacing.
#[derive(Debug, Clone, PartialEq)]
pub struct GridLevel {
    /// m
    pub spacing: f64,
    /// Grid nodes (inside the section or on its boundary).
    pub grid_nodes: usize,
    /// Nodes with a shortened (Shortley–Weller) arm at an off-grid fixed edge.
    pub shortley_weller_nodes: usize,
    /// Differences at the grid nodes.
    pub stats: DiffStats,
    /// Boundaries that occur on the element mesh (unnamed segments left out), in id order.
    pub flows: Vec<FlowDiff>,
    /// Observed order of max |diff| against the previous (coarser) level.
    pub order_max: Option<f64>,
    /// Observed order of the RMS difference against the previous level.
    pub order_rms: Option<f64>,
}

/// A grid check: one level per spacing, coarsest first; the finest level's field in full.
#[derive(Debug, Clone)]
pub struct GridCheck {
    /// The element mesh used as the reference.
    pub element: ElementMeshInfo,
    /// One comparison per spacing, coarsest first.
    pub levels: Vec<GridLevel>,
    /// Every node of the finest grid, in grid order.
    pub finest_points: Vec<PointDiff>,
    /// The finest grid model.
    pub finest_model: GridModel,
    /// The finest grid model's solution.
    pub finest_solution: GridSolution,
    /// Element-model warnings, then grid-model warnings (each once).
    pub warnings: Vec<String>,
}

/// One point of a user's grid results.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UserPoint {
    /// Line in the file (1 = header).
    pub line: u64,
    /// m
    pub x: f64,
    /// m
    pub y: f64,
    /// °C
    pub temperature: f64,
}

/// A user's grid results as read.
#[derive(Debug, Clone, PartialEq)]
pub struct UserGrid {
    /// Where they came from (file name), for messages.
    pub source: String,
    /// The points in file order.
    pub points: Vec<UserPoint>,
}

/// A point of the user's file that lies outside the section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OutsidePoint {
    /// Line in the file (1 = header).
    pub line: u64,
    /// x, m.
    pub x: f64,
    /// y, m.
    pub y: f64,
    /// Distance to the discretised section's boundary, m.
    pub distance: f64,
}

/// The comparison of a user's grid results with the element field.
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    /// Where the points came from (file name).
    pub source: String,
    /// The element mesh used.
    pub element: ElementMeshInfo,
    /// The points inside the section, in file order.
    pub points: Vec<PointDiff>,
    /// Differences at the points inside.
    pub stats: DiffStats,
    /// Points just outside the discretised section (within the probe snap tolerance),
    /// evaluated at the nearest boundary point; they are among `points`.
    pub snapped: usize,
    /// Points outside the section, skipped, in file order.
    pub outside: Vec<OutsidePoint>,
    /// Warnings of the element model and of reading the file.
    pub warnings: Vec<String>,
}

// ---------------------------------------------------------------------------------------------
// Element model
// ---------------------------------------------------------------------------------------------

/// Mesh and solve the element model, with the global `max_area` replaced by `fe_max_area` if
/// given. A failed self-check is a run error.
pub fn solve_element(
    mut prepared: Prepared,
    opts: &MeshOptions,
    fe_max_area: Option<f64>,
) -> Result<Solved> {
    check_fe_max_area(fe_max_area)?;
    crate::grid::refuse_contacts(&prepared.section)?;
    if let Some(a) = fe_max_area {
        prepared.section.mesh.max_area = a;
        prepared.section.mesh.max_area_is_default = false;
        prepared.model.mesh.max_area = Some(a);
    }
    let solved = run::solve(prepared, opts)?;
    if let Some(e) = run::failed_checks_error(&solved) {
        return Err(e);
    }
    Ok(solved)
}

/// Refuse an `fe_max_area` that is not a positive finite number.
pub fn check_fe_max_area(fe_max_area: Option<f64>) -> Result<()> {
    match fe_max_area {
        Some(a) if !a.is_finite() || a <= 0.0 => Err(Error::input(format!(
            "--fe-max-area = {a} m² must be a positive finite number"
        ))),
        _ => Ok(()),
    }
}

fn element_info(solved: &Solved, overridden: bool) -> ElementMeshInfo {
    let largest = solved.mesh.stats.max_area;
    ElementMeshInfo {
        nodes: solved.mesh.nodes.len(),
        triangles: solved.mesh.triangles.len(),
        max_area_setting: solved.section().mesh.max_area,
        overridden,
        largest_triangle: largest,
        edge: (4.0 * largest / 3f64.sqrt()).sqrt(),
    }
}

/// The element temperature field as a function of position.
pub struct ElementField<'a> {
    solved: &'a Solved,
    locator: Locator<'a>,
    values: Vec<[f64; 1]>,
}

impl<'a> ElementField<'a> {
    /// The element field of a solved model, ready for point queries.
    pub fn new(solved: &'a Solved) -> Self {
        ElementField {
            solved,
            locator: Locator::new(&solved.mesh),
            values: solved.results.temperature.iter().map(|&t| [t]).collect(),
        }
    }

    /// Where p lies: the probe rule of [`Locator::place`], widened by `extra` (m): a point
    /// outside by at most `extra` is taken at the nearest boundary point.
    pub fn place(&self, p: [f64; 2], extra: f64) -> Placement {
        match self.locator.place(self.solved.section(), p) {
            Placement::Outside { distance } if distance <= extra => {
                match self.locator.nearest_boundary_point(p) {
                    Some(q) => Placement::Snapped(q),
                    None => Placement::Outside { distance },
                }
            }
            other => other,
        }
    }

    /// Temperature at a placement, °C (`None` outside).
    pub fn temperature(&self, placement: &Placement) -> Option<f64> {
        self.locator
            .interpolate(placement, &self.values)
            .map(|v| v[0])
    }
}

// ---------------------------------------------------------------------------------------------

mod compare;
mod gridcheck;
#[cfg(test)]
mod tests;
mod user_grid;

pub use compare::*;
pub use gridcheck::*;
pub use user_grid::*;
