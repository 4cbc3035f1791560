//! `xsheat gridcheck`: the built-in grid model against the element model at one or more spacings.

use super::*;

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
                    "grid check: grid node {} of spacing {} m lies outside the element \
                     mesh of the same section",
                    crate::geom::format_point(p),
                    model.spacing
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
                kind: b.kind,
                grid,
                fe: b.heat_flow,
                diff,
                relative: (b.heat_flow.abs() > 1e-12 * scale && b.heat_flow != 0.0)
                    .then(|| diff / b.heat_flow.abs()),
            }
        })
        .collect()
}
