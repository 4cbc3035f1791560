//! The result set of `xsheat solve`: every file of a solved model, in memory.

use crate::error::{Error, Result};
use crate::run::Solved;
use serde::Serialize;

/// All files of a solve, in memory, ready to be committed atomically to a directory.
pub fn solve_files(sv: &Solved) -> Result<crate::output::OutputSet> {
    use crate::output;
    let s = sv.section();
    let mut set = output::OutputSet::new();
    set.add(
        "field.vtu",
        output::field_vtu_with(
            &sv.mesh,
            &sv.results,
            &[("error_indicator", &sv.error_estimate.indicator)],
        )?,
    );
    set.add("nodes.csv", output::nodes_csv(&sv.mesh, &sv.results)?);
    set.add("probes.csv", output::probes_csv(&sv.results)?);
    set.add("boundaries.csv", output::boundaries_csv(&sv.results)?);
    for l in &sv.results.lines {
        set.add(format!("line-{}.csv", l.name), output::line_csv(l)?);
    }
    let checks = serde_json::to_value(&sv.checks).map_err(|e| Error::run(e.to_string()))?;
    let model = s.resolved_json();
    let mut extra = vec![("error_estimate", json_value(&sv.error_estimate)?)];
    if !sv.adaptivity.is_empty() {
        extra.push(("adaptivity", json_value(&sv.adaptivity)?));
    }
    let run = serde_json::json!({
        "timings_s": sv.timings,
        "note": "the only part of this file that may change from run to run",
    });
    set.add(
        "summary.json",
        output::summary_json(&output::SummaryInputs {
            section: s,
            mesh: &sv.mesh,
            results: &sv.results,
            warnings: &sv.warnings,
            checks: &checks,
            model: &model,
            run: &run,
            extra: &extra,
        })?,
    );
    Ok(set)
}

fn json_value<T: Serialize>(v: &T) -> Result<serde_json::Value> {
    serde_json::to_value(v).map_err(|e| Error::run(format!("internal: {e}")))
}
