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
use crate::io::{OutputSet, format_f64};
use crate::mesh::MeshOptions;
use crate::post::{Locator, Placement};
use crate::run::{self, Prepared, Solved};
use std::fmt::Write as _;
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
    pub nodes: usize,
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
    pub name: String,
    pub kind: String,
    pub grid: f64,
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
    pub grid_nodes: usize,
    pub shortley_weller_nodes: usize,
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
    pub element: ElementMeshInfo,
    pub levels: Vec<GridLevel>,
    /// Every node of the finest grid, in grid order.
    pub finest_points: Vec<PointDiff>,
    pub finest_model: GridModel,
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
    pub points: Vec<UserPoint>,
}

/// A point of the user's file that lies outside the section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OutsidePoint {
    pub line: u64,
    pub x: f64,
    pub y: f64,
    /// Distance to the discretised section's boundary, m.
    pub distance: f64,
}

/// The comparison of a user's grid results with the element field.
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    pub source: String,
    pub element: ElementMeshInfo,
    /// The points inside the section, in file order.
    pub points: Vec<PointDiff>,
    pub stats: DiffStats,
    /// Points just outside the discretised section (within the probe snap tolerance),
    /// evaluated at the nearest boundary point; they are among `points`.
    pub snapped: usize,
    /// Points outside the section, skipped, in file order.
    pub outside: Vec<OutsidePoint>,
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
// Grid check
// ---------------------------------------------------------------------------------------------

/// The spacings of a check, coarsest first: the given ones (each positive and finite, no two
/// equal), or with `levels = Some(n)` the single given spacing halved n − 1 times.
pub fn spacings(given: &[f64], levels: Option<usize>) -> Result<Vec<f64>> {
    if given.is_empty() {
        return Err(Error::input(
            "--spacing: give at least one grid spacing (m)",
        ));
    }
    for &h in given {
        if !h.is_finite() || h <= 0.0 {
            return Err(Error::input(format!(
                "--spacing = {h} m: the grid spacing must be a positive finite number"
            )));
        }
    }
    let mut hs: Vec<f64> = match levels {
        None => given.to_vec(),
        Some(n) => {
            if given.len() != 1 {
                return Err(Error::input(format!(
                    "--levels needs exactly one --spacing (the coarsest), {} were given",
                    given.len()
                )));
            }
            if n == 0 || n > MAX_LEVELS {
                return Err(Error::input(format!(
                    "--levels = {n}: must lie between 1 and {MAX_LEVELS}"
                )));
            }
            (0..n)
                .map(|k| given[0] / f64::powi(2.0, k as i32))
                .collect()
        }
    };
    if hs.len() > MAX_LEVELS {
        return Err(Error::input(format!(
            "--spacing given {} times: at most {MAX_LEVELS} spacings per check",
            hs.len()
        )));
    }
    hs.sort_by(|a, b| b.total_cmp(a));
    if let Some(w) = hs.windows(2).find(|w| w[0] == w[1]) {
        return Err(Error::input(format!(
            "--spacing = {} m given twice: the spacings of a check must differ",
            w[0]
        )));
    }
    Ok(hs)
}

/// Observed order between two levels: log(e₁/e₂) / log(h₁/h₂); `None` when an error is zero
/// or not finite.
pub fn observed_order(e1: f64, e2: f64, h1: f64, h2: f64) -> Option<f64> {
    let ok = |v: f64| v.is_finite() && v > 0.0;
    if !(ok(e1) && ok(e2) && ok(h1) && ok(h2)) || h1 == h2 {
        return None;
    }
    Some((e1 / e2).ln() / (h1 / h2).ln())
}

/// Solve the grid models at `spacings` (validated by [`spacings`]; any order) and the element
/// model, and compare them. The grid models are built first, finest first, so refused
/// spacings fail before any solve.
pub fn grid_check(
    prepared: Prepared,
    opts: &MeshOptions,
    fe_max_area: Option<f64>,
    spacings: &[f64],
) -> Result<GridCheck> {
    check_fe_max_area(fe_max_area)?;
    let mut hs = spacings.to_vec();
    hs.sort_by(|a, b| a.total_cmp(b));
    let mut models = Vec::with_capacity(hs.len());
    for &h in &hs {
        models.push(grid::build(&prepared.section, h)?);
    }
    models.reverse();
    let solved = solve_element(prepared, opts, fe_max_area)?;
    compare_grids(&solved, models, fe_max_area.is_some())
}

/// Compare already-built grid models (solved here, in the order given; give them coarsest
/// first for meaningful orders) with a solved element model of the same section.
pub fn compare_grids(
    solved: &Solved,
    models: Vec<GridModel>,
    fe_overridden: bool,
) -> Result<GridCheck> {
    if models.is_empty() {
        return Err(Error::input("grid check: no grid spacing given"));
    }
    let field = ElementField::new(solved);
    let mut warnings = solved.warnings.clone();
    let mut levels: Vec<GridLevel> = Vec::with_capacity(models.len());
    let mut finest = None;
    let count = models.len();
    for (k, model) in models.into_iter().enumerate() {
        let sol = grid::solve(&model)?;
        for w in &model.warnings {
            let w = format!("{w} (h = {} m)", model.spacing);
            if !warnings.contains(&w) {
                warnings.push(w);
            }
        }
        let mut points = Vec::with_capacity(model.nodes.len());
        for (n, node) in model.nodes.iter().enumerate() {
            let p = [node.x, node.y];
            let placement = field.place(p, 1e-6 * model.spacing);
            let Some(t_fe) = field.temperature(&placement) else {
                return Err(Error::run(format!(
                    "grid check: grid node ({}, {}) of spacing {} m lies outside the element \
                     mesh of the same section",
                    node.x, node.y, model.spacing
                )));
            };
            let t = sol.temperature[n];
            points.push(PointDiff {
                x: node.x,
                y: node.y,
                t_other: t,
                t_fe,
                diff: t - t_fe,
            });
        }
        let stats = DiffStats::of(&points);
        let flows = flow_diffs(solved, &sol);
        let (order_max, order_rms) = match levels.last() {
            Some(prev) => (
                observed_order(
                    prev.stats.max_abs,
                    stats.max_abs,
                    prev.spacing,
                    model.spacing,
                ),
                observed_order(prev.stats.rms, stats.rms, prev.spacing, model.spacing),
            ),
            None => (None, None),
        };
        levels.push(GridLevel {
            spacing: model.spacing,
            grid_nodes: model.nodes.len(),
            shortley_weller_nodes: model.shortley_weller_nodes,
            stats,
            flows,
            order_max,
            order_rms,
        });
        if k + 1 == count {
            finest = Some((points, model, sol));
        }
    }
    let Some((finest_points, finest_model, finest_solution)) = finest else {
        return Err(Error::run("grid check: no level was solved"));
    };
    Ok(GridCheck {
        element: element_info(solved, fe_overridden),
        levels,
        finest_points,
        finest_model,
        finest_solution,
        warnings,
    })
}

fn flow_diffs(solved: &Solved, sol: &GridSolution) -> Vec<FlowDiff> {
    let named: Vec<_> = solved
        .results
        .boundaries
        .iter()
        .filter(|b| solved.section().boundaries.iter().any(|s| s.name == b.name))
        .collect();
    let scale = named.iter().map(|b| b.heat_flow.abs()).fold(0.0, f64::max);
    named
        .into_iter()
        .map(|b| {
            let grid = sol
                .heat_flow
                .iter()
                .find(|(n, _)| *n == b.name)
                .map_or(0.0, |(_, f)| *f);
            let diff = grid - b.heat_flow;
            FlowDiff {
                name: b.name.clone(),
                kind: b.kind.clone(),
                grid,
                fe: b.heat_flow,
                diff,
                relative: (b.heat_flow.abs() > 1e-12 * scale && b.heat_flow != 0.0)
                    .then(|| diff / b.heat_flow.abs()),
            }
        })
        .collect()
}

// ---------------------------------------------------------------------------------------------
// User grid results
// ---------------------------------------------------------------------------------------------

/// Read a user's grid results from a file (see [`parse_user_grid`]).
pub fn read_user_grid(path: &Path) -> Result<UserGrid> {
    let text = std::fs::read_to_string(path).map_err(|e| {
        Error::input(format!(
            "cannot read grid results file {}: {e}",
            path.display()
        ))
    })?;
    parse_user_grid(&text, &path.display().to_string())
}

/// Parse grid results: CSV whose header starts exactly `x,y,temperature` (m, m, °C); further
/// columns are ignored; every value of the first three columns must be a finite number. Blank
/// lines are skipped. `source` names the file in messages.
pub fn parse_user_grid(text: &str, source: &str) -> Result<UserGrid> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let expected = USER_HEADER.join(",");
    let mut points = Vec::new();
    let mut header_seen = false;
    for record in reader.records() {
        let record = record.map_err(|e| {
            let at = e.position().map_or(String::new(), |p| {
                format!(" line {}:", line_of(text, p.byte()))
            });
            Error::input(format!("{source}:{at} cannot read CSV: {e}"))
        })?;
        let line = record.position().map_or(0, |p| line_of(text, p.byte()));
        if record.len() == 1 && record[0].trim().is_empty() {
            continue;
        }
        if !header_seen {
            let found: Vec<&str> = record.iter().collect();
            if found.len() < 3 || found[..3] != USER_HEADER {
                return Err(Error::input(format!(
                    "{source}: line {line}: header {:?} is not the expected {expected:?} (the first \
                     three columns must be named exactly x, y, temperature: m, m, °C; further \
                     columns are ignored)",
                    found.join(",")
                )));
            }
            header_seen = true;
            continue;
        }
        if record.len() < 3 {
            return Err(Error::input(format!(
                "{source}: line {line}: expected at least 3 values (x, y, temperature), found {}",
                record.len()
            )));
        }
        let mut v = [0.0; 3];
        for (k, name) in USER_HEADER.iter().enumerate() {
            let raw = record[k].trim();
            let x: f64 = raw.parse().map_err(|_| {
                Error::input(format!(
                    "{source}: line {line}, column {name}: {raw:?} is not a number"
                ))
            })?;
            if !x.is_finite() {
                return Err(Error::input(format!(
                    "{source}: line {line}, column {name}: {raw:?} is not a finite number"
                )));
            }
            v[k] = x;
        }
        points.push(UserPoint {
            line,
            x: v[0],
            y: v[1],
            temperature: v[2],
        });
    }
    if !header_seen {
        return Err(Error::input(format!(
            "{source}: the file is empty; expected the header {expected:?} and one point per line"
        )));
    }
    if points.is_empty() {
        return Err(Error::input(format!(
            "{source}: no points after the header {expected:?}"
        )));
    }
    Ok(UserGrid {
        source: source.to_string(),
        points,
    })
}

/// Line number (1-based) of the first content at byte offset `byte`, counted from the text
/// itself: the reader may report a record as starting at the line ending before it (CRLF).
fn line_of(text: &str, byte: u64) -> u64 {
    let b = text.as_bytes();
    let mut at = (byte as usize).min(b.len());
    while at < b.len() && (b[at] == b'\r' || b[at] == b'\n') {
        at += 1;
    }
    1 + b[..at].iter().filter(|&&c| c == b'\n').count() as u64
}

/// Compare a user's grid results with a solved element model. Points outside the section are
/// skipped and listed; a file with no point inside is an input error.
pub fn compare(solved: &Solved, user: &UserGrid, fe_overridden: bool) -> Result<Comparison> {
    let field = ElementField::new(solved);
    let mut points = Vec::with_capacity(user.points.len());
    let mut outside = Vec::new();
    let mut snapped = 0;
    for u in &user.points {
        let placement = field.place([u.x, u.y], 0.0);
        match (field.temperature(&placement), placement) {
            (Some(t_fe), pl) => {
                if matches!(pl, Placement::Snapped(_)) {
                    snapped += 1;
                }
                points.push(PointDiff {
                    x: u.x,
                    y: u.y,
                    t_other: u.temperature,
                    t_fe,
                    diff: u.temperature - t_fe,
                });
            }
            (None, pl) => outside.push(OutsidePoint {
                line: u.line,
                x: u.x,
                y: u.y,
                distance: match pl {
                    Placement::Outside { distance } => distance,
                    _ => f64::NAN,
                },
            }),
        }
    }
    if points.is_empty() {
        let Some(&first) = outside.first() else {
            return Err(Error::input(format!(
                "{}: no points to compare",
                user.source
            )));
        };
        return Err(Error::input(format!(
            "{}: none of the {} points lies inside the section (e.g. line {} at ({}, {}), {:.6e} m \
             from its boundary); are the coordinates in m and in the model's frame?",
            user.source,
            user.points.len(),
            first.line,
            first.x,
            first.y,
            first.distance
        )));
    }
    Ok(Comparison {
        source: user.source.clone(),
        element: element_info(solved, fe_overridden),
        stats: DiffStats::of(&points),
        points,
        snapped,
        outside,
        warnings: solved.warnings.clone(),
    })
}

// ---------------------------------------------------------------------------------------------
// Files
// ---------------------------------------------------------------------------------------------

fn point_rows(points: &[PointDiff]) -> Vec<Vec<String>> {
    points
        .iter()
        .map(|p| {
            vec![
                format_f64(p.x),
                format_f64(p.y),
                format_f64(p.t_other),
                format_f64(p.t_fe),
                format_f64(p.diff),
            ]
        })
        .collect()
}

fn strings(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn opt(v: Option<f64>) -> String {
    v.map_or(String::new(), format_f64)
}

/// `x_m,y_m,t_grid_c,t_fe_c,diff_k`: every node of the finest grid.
pub fn gridcheck_csv(check: &GridCheck) -> Result<Vec<u8>> {
    crate::io::csv_bytes(
        strings(&["x_m", "y_m", "t_grid_c", "t_fe_c", "diff_k"]),
        point_rows(&check.finest_points),
    )
}

/// `spacing_m,grid_nodes,max_abs_diff_k,max_at_x_m,max_at_y_m,rms_diff_k,mean_diff_k,
/// observed_order_max,observed_order_rms`, then per boundary `grid_heat_flow_NAME_w_per_m`,
/// `fe_heat_flow_NAME_w_per_m` and `heat_flow_diff_NAME_w_per_m`; one row per spacing,
/// coarsest first; orders are empty on the first row (and where an error is zero).
pub fn gridcheck_levels_csv(check: &GridCheck) -> Result<Vec<u8>> {
    let mut header = strings(&[
        "spacing_m",
        "grid_nodes",
        "max_abs_diff_k",
        "max_at_x_m",
        "max_at_y_m",
        "rms_diff_k",
        "mean_diff_k",
        "observed_order_max",
        "observed_order_rms",
    ]);
    let names: Vec<String> = check
        .levels
        .first()
        .map(|l| l.flows.iter().map(|f| f.name.clone()).collect())
        .unwrap_or_default();
    for n in &names {
        header.push(format!("grid_heat_flow_{n}_w_per_m"));
        header.push(format!("fe_heat_flow_{n}_w_per_m"));
        header.push(format!("heat_flow_diff_{n}_w_per_m"));
    }
    let rows: Vec<Vec<String>> = check
        .levels
        .iter()
        .map(|l| {
            let mut r = vec![
                format_f64(l.spacing),
                l.grid_nodes.to_string(),
                format_f64(l.stats.max_abs),
                format_f64(l.stats.max_at[0]),
                format_f64(l.stats.max_at[1]),
                format_f64(l.stats.rms),
                format_f64(l.stats.mean),
                opt(l.order_max),
                opt(l.order_rms),
            ];
            for f in &l.flows {
                r.push(format_f64(f.grid));
                r.push(format_f64(f.fe));
                r.push(format_f64(f.diff));
            }
            r
        })
        .collect();
    crate::io::csv_bytes(&header, &rows)
}

/// `x_m,y_m,t_user_c,t_fe_c,diff_k`: the user's points inside the section, in file order.
pub fn compare_csv(c: &Comparison) -> Result<Vec<u8>> {
    crate::io::csv_bytes(
        strings(&["x_m", "y_m", "t_user_c", "t_fe_c", "diff_k"]),
        point_rows(&c.points),
    )
}

/// `gridcheck.csv` and `grid.vtu` (finest spacing), and `gridcheck-levels.csv` when more than
/// one spacing was checked.
pub fn gridcheck_outputs(check: &GridCheck) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("gridcheck.csv", gridcheck_csv(check)?);
    set.add(
        "grid.vtu",
        grid::grid_vtu(&check.finest_model, &check.finest_solution)?,
    );
    if check.levels.len() > 1 {
        set.add("gridcheck-levels.csv", gridcheck_levels_csv(check)?);
    }
    Ok(set)
}

/// `compare.csv`.
pub fn compare_outputs(c: &Comparison) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("compare.csv", compare_csv(c)?);
    Ok(set)
}

// ---------------------------------------------------------------------------------------------
// Reports
// ---------------------------------------------------------------------------------------------

fn element_line(e: &ElementMeshInfo) -> String {
    format!(
        "element model: {} nodes, {} triangles; max_area {:.4e} m² ({}), largest triangle {:.4e} m² \
         (edge ≈ {:.4e} m)",
        e.nodes,
        e.triangles,
        e.max_area_setting,
        if e.overridden {
            "--fe-max-area"
        } else {
            "the model's mesh settings"
        },
        e.largest_triangle,
        e.edge
    )
}

fn stats_lines(o: &mut String, what: &str, s: &DiffStats) {
    let _ = writeln!(o, "temperature difference {what} over {} points:", s.count);
    let _ = writeln!(
        o,
        "  max |diff| = {:.4e} K at ({}, {})",
        s.max_abs, s.max_at[0], s.max_at[1]
    );
    let _ = writeln!(o, "  RMS diff   = {:.4e} K", s.rms);
    let _ = writeln!(o, "  mean diff  = {:.4e} K", s.mean);
}

fn pct(r: Option<f64>) -> String {
    r.map_or("-".to_string(), |r| format!("{:+.4}%", 100.0 * r))
}

/// The text `gridcheck` prints.
pub fn gridcheck_report(check: &GridCheck) -> String {
    let mut o = String::new();
    let Some(fin) = check.levels.last() else {
        return o;
    };
    let _ = writeln!(o, "{}", element_line(&check.element));
    if check.element.edge > fin.spacing / FINE_RATIO {
        let suggest = 3f64.sqrt() / 4.0 * (fin.spacing / (2.0 * FINE_RATIO)).powi(2);
        let _ = writeln!(
            o,
            "note: the element mesh (edge ≈ {:.3e} m) is not much finer than the grid (h = {} m): \
             the difference includes the element model's own error; a finer reference: \
             --fe-max-area {:.3e}",
            check.element.edge, fin.spacing, suggest
        );
    }
    if check.levels.len() > 1 {
        let _ = writeln!(o, "difference grid − element against spacing:");
        let _ = writeln!(
            o,
            "  {:>12} {:>9} {:>14} {:>7} {:>14} {:>7}",
            "h (m)", "nodes", "max|diff| (K)", "order", "RMS diff (K)", "order"
        );
        let ord = |v: Option<f64>| v.map_or("-".to_string(), |v| format!("{v:.3}"));
        for l in &check.levels {
            let _ = writeln!(
                o,
                "  {:>12} {:>9} {:>14.4e} {:>7} {:>14.4e} {:>7}",
                l.spacing,
                l.grid_nodes,
                l.stats.max_abs,
                ord(l.order_max),
                l.stats.rms,
                ord(l.order_rms)
            );
        }
        let _ = writeln!(
            o,
            "heat-flow difference grid − element per boundary (W/m; relative to the element flow):"
        );
        for l in &check.levels {
            let cells: Vec<String> = l
                .flows
                .iter()
                .map(|f| format!("{} {:+.4e} ({})", f.name, f.diff, pct(f.relative)))
                .collect();
            let _ = writeln!(o, "  h = {} m: {}", l.spacing, cells.join(", "));
        }
        let _ = writeln!(o, "finest spacing:");
    }
    let _ = writeln!(
        o,
        "grid model: h = {} m, {} nodes ({} with Shortley–Weller arms)",
        fin.spacing, fin.grid_nodes, fin.shortley_weller_nodes
    );
    stats_lines(&mut o, "grid − element", &fin.stats);
    let _ = writeln!(
        o,
        "heat flow per boundary (W/m, positive into the section):"
    );
    let _ = writeln!(
        o,
        "  {:<16} {:<11} {:>14} {:>14} {:>14} {:>11}",
        "boundary", "kind", "grid", "element", "grid−element", "relative"
    );
    for f in &fin.flows {
        let _ = writeln!(
            o,
            "  {:<16} {:<11} {:>14.6} {:>14.6} {:>14.4e} {:>11}",
            f.name,
            f.kind,
            f.grid,
            f.fe,
            f.diff,
            pct(f.relative)
        );
    }
    o
}

/// The text `compare` prints.
pub fn compare_report(c: &Comparison) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}", element_line(&c.element));
    let _ = writeln!(
        o,
        "{}: {} points read, {} inside the section{}",
        c.source,
        c.points.len() + c.outside.len(),
        c.points.len(),
        if c.snapped > 0 {
            format!(
                " ({} just outside the discretised boundary, taken at the nearest boundary point)",
                c.snapped
            )
        } else {
            String::new()
        }
    );
    if !c.outside.is_empty() {
        let n = c.outside.len();
        let plural = if n == 1 { "" } else { "s" };
        let _ = writeln!(o, "{n} point{plural} outside the section skipped:");
        for p in c.outside.iter().take(OUTSIDE_LISTED) {
            let _ = writeln!(
                o,
                "  line {}: ({}, {}), {:.4e} m outside",
                p.line, p.x, p.y, p.distance
            );
        }
        if c.outside.len() > OUTSIDE_LISTED {
            let _ = writeln!(o, "  … and {} more", c.outside.len() - OUTSIDE_LISTED);
        }
    }
    stats_lines(&mut o, "user − element", &c.stats);
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spacings_are_sorted_halved_and_checked() {
        assert_eq!(spacings(&[0.1], Some(3)).unwrap(), [0.1, 0.05, 0.025]);
        assert_eq!(spacings(&[0.05, 0.1], None).unwrap(), [0.1, 0.05]);
        assert!(matches!(spacings(&[], None), Err(Error::Input(_))));
        assert!(matches!(spacings(&[0.1], Some(0)), Err(Error::Input(_))));
        assert!(matches!(spacings(&[0.1], Some(13)), Err(Error::Input(_))));
        assert!(matches!(spacings(&[f64::NAN], None), Err(Error::Input(_))));
    }

    #[test]
    fn observed_order_of_a_quadratic_error_is_two() {
        let o = observed_order(4e-3, 1e-3, 0.2, 0.1).unwrap();
        assert!((o - 2.0).abs() < 1e-12);
        assert_eq!(observed_order(0.0, 1e-3, 0.2, 0.1), None);
        assert_eq!(observed_order(1e-3, 1e-3, 0.1, 0.1), None);
    }

    #[test]
    fn user_grid_accepts_bom_crlf_blank_lines_and_extra_columns() {
        let g = parse_user_grid(
            "\u{feff}x,y,temperature,id\r\n0.5, 0.25 ,12.5,a\r\n\r\n1,2,3,b\r\n",
            "t.csv",
        )
        .unwrap();
        assert_eq!(g.points.len(), 2);
        assert_eq!(
            g.points[0],
            UserPoint {
                line: 2,
                x: 0.5,
                y: 0.25,
                temperature: 12.5
            }
        );
        assert_eq!(g.points[1].line, 4);
        let e = parse_user_grid("x, y, temperature\n1,2,3\n", "t.csv").unwrap_err();
        assert!(e.message().contains("\"x, y, temperature\""), "{e}");
    }

    #[test]
    fn stats_take_the_first_largest_difference() {
        let p = |x: f64, d: f64| PointDiff {
            x,
            y: 0.0,
            t_other: d,
            t_fe: 0.0,
            diff: d,
        };
        let s = DiffStats::of(&[p(0.0, 1.0), p(1.0, -3.0), p(2.0, 3.0)]);
        assert_eq!(s.max_abs, 3.0);
        assert_eq!(s.max_at, [1.0, 0.0]);
        assert!((s.mean - 1.0 / 3.0).abs() < 1e-15);
        assert!((s.rms - (19.0f64 / 3.0).sqrt()).abs() < 1e-15);
    }
}
