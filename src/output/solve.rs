//! The result set of `xsheat solve`: every file of a solved model, in memory.

use crate::error::Result;
use crate::output::{self, OutputSet};
use crate::run::Solved;

/// All files of a solve, in memory, ready to be committed atomically to a directory.
pub fn solve_files(sv: &Solved) -> Result<OutputSet> {
    let s = sv.section();
    let mut set = OutputSet::new();
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
    let model = s.resolved_json();
    let files = set.manifest();
    set.add_manifest_file(
        output::SUMMARY_FILE,
        output::summary_json_with_files(
            &output::SummaryInputs {
                section: s,
                mesh: &sv.mesh,
                results: &sv.results,
                warnings: &sv.warnings,
                checks: &sv.checks,
                error_estimate: &sv.error_estimate,
                adaptivity: &sv.adaptivity,
                timings: &sv.timings,
                model: &model,
            },
            &files,
        )?,
    );
    Ok(set)
}
