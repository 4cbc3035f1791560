//! Files of the grid cross-checks: gridcheck.csv, gridcheck-levels.csv, grid.vtu, compare.csv.

use crate::error::Result;
use crate::output::{OutputSet, format_f64};
use crate::study::crosscheck::*;

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
    crate::output::csv_bytes(
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
    crate::output::csv_bytes(&header, &rows)
}

/// `x_m,y_m,t_user_c,t_fe_c,diff_k`: the user's points inside the section, in file order.
pub fn compare_csv(c: &Comparison) -> Result<Vec<u8>> {
    crate::output::csv_bytes(
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
        crate::output::grid_vtu(&check.finest_model, &check.finest_solution)?,
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
