//! The result set of `xsheat solve`: every file of a solved model, in memory.

use crate::error::Result;
use crate::output::{self, OutputSet, VtkOptions};
use crate::run::Solved;

/// Choices of `solve` about its files.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SolveFileOptions {
    /// How field.vtu is encoded (`--vtk-compress`).
    pub vtk: VtkOptions,
    /// Write nodes.csv (false with `--no-nodes-csv`; field.vtu holds the same points).
    pub nodes_csv: bool,
    /// Write a field.vtu into each load case's directory too (`--case-fields`).
    pub case_fields: bool,
    /// Draw field.svg and field.png (`--plot`); they come with the isotherm files.
    pub plot: Option<output::plot::PlotOptions>,
    /// Write isotherms.geojson and isotherms.dxf (`--isotherms`; implied by `plot`).
    pub isotherms: bool,
}

impl Default for SolveFileOptions {
    fn default() -> Self {
        SolveFileOptions {
            vtk: VtkOptions::default(),
            nodes_csv: true,
            case_fields: false,
            plot: None,
            isotherms: false,
        }
    }
}

/// The conductivity tensor of each triangle, K = R·diag(k_major, k_minor)·Rᵀ, as three cell
/// arrays `[K_xx, K_yy, K_xy]`, W/(m·K) (K_xx = K_yy = k, K_xy = 0 when isotropic; for a
/// material with a conductivity table, k at the triangle's mean temperature of the solution).
fn cell_conductivity(sv: &Solved) -> [Vec<f64>; 3] {
    let mut out = [Vec::new(), Vec::new(), Vec::new()];
    for t in 0..sv.mesh.triangles.len() {
        let d = sv.system.triangle_conductivity(&sv.mesh, t).tensor;
        out[0].push(d[(0, 0)]);
        out[1].push(d[(1, 1)]);
        out[2].push(d[(0, 1)]);
    }
    out
}

/// field.vtu of a solve: the field, the error indicator, the per-cell conductivity tensor, the
/// load cases' temperatures and the material names, encoded with `vtk`.
pub fn solve_field_vtu(sv: &Solved, vtk: &VtkOptions) -> Result<Vec<u8>> {
    let s = sv.section();
    let case_arrays = output::case_point_arrays(sv);
    let case_points: Vec<(&str, &[f64])> =
        case_arrays.iter().map(|(n, v)| (n.as_str(), *v)).collect();
    let material_names: Vec<&str> = s.materials.iter().map(|m| m.name.as_str()).collect();
    let [kxx, kyy, kxy] = cell_conductivity(sv);
    output::field_vtu_named(
        &sv.mesh,
        &sv.results,
        &material_names,
        &[
            ("error_indicator", &sv.error_estimate.indicator),
            ("conductivity_xx_w_per_m_k", &kxx),
            ("conductivity_yy_w_per_m_k", &kyy),
            ("conductivity_xy_w_per_m_k", &kxy),
        ],
        &case_points,
        vtk,
    )
}

/// All files of a solve, in memory, ready to be committed atomically to a directory.
pub fn solve_files(sv: &Solved) -> Result<OutputSet> {
    solve_files_with(sv, &SolveFileOptions::default())
}

/// [`solve_files`] with the file choices `options`.
pub fn solve_files_with(sv: &Solved, options: &SolveFileOptions) -> Result<OutputSet> {
    let started = std::time::Instant::now();
    let s = sv.section();
    let mut set = OutputSet::new();
    // The three large files are encoded side by side (each one's bytes depend on it alone).
    let (field, (boundary, nodes)) = rayon::join(
        || solve_field_vtu(sv, &options.vtk),
        || {
            rayon::join(
                || output::boundary_vtp(s, &sv.mesh, &sv.results, &options.vtk),
                || {
                    options
                        .nodes_csv
                        .then(|| output::nodes_csv(&sv.mesh, &sv.results))
                        .transpose()
                },
            )
        },
    );
    set.add("field.vtu", field?);
    set.add("boundary.vtp", boundary?);
    if let Some(nodes) = nodes? {
        set.add("nodes.csv", nodes);
    }
    set.add("probes.csv", output::probes_csv(&sv.results)?);
    set.add("boundaries.csv", output::boundaries_csv(&sv.results)?);
    set.add("items.csv", output::items_csv(&sv.results)?);
    set.add("materials.csv", output::materials_csv(&sv.results)?);
    if !s.cuts.is_empty() {
        set.add("cuts.csv", output::cuts_csv(&sv.results)?);
    }
    for l in &sv.results.lines {
        set.add(format!("line-{}.csv", l.name), output::line_csv(l)?);
    }
    output::add_case_files(&mut set, sv, options)?;
    let (pictures, svg) = output::picture_files(sv, options.plot.as_ref(), options.isotherms)?;
    for (name, bytes) in pictures {
        set.add(name, bytes);
    }
    finish_solve_set(set, sv, svg.as_deref(), started)
}

/// Adds report.html (with `picture` inline) and summary.json (the manifest of every file) to
/// the files of a solve; `started` is when encoding began (the `write_s` timing).
pub(crate) fn finish_solve_set(
    mut set: OutputSet,
    sv: &Solved,
    picture: Option<&str>,
    started: std::time::Instant,
) -> Result<OutputSet> {
    let s = sv.section();
    let mut listed: Vec<String> = set.names().map(str::to_string).collect();
    listed.push(output::REPORT_FILE.to_string());
    listed.push(output::SUMMARY_FILE.to_string());
    listed.sort();
    set.add(
        output::REPORT_FILE,
        output::report_html(sv, picture, &listed),
    );
    let model = s.resolved_json();
    let files = set.manifest();
    let timings = sv.timings.with_write(started.elapsed().as_secs_f64());
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
                timings: &timings,
                model: &model,
                coupling: sv.coupling.as_ref(),
                nonlinear: sv.nonlinear.as_ref(),
                solver: sv.solver.as_ref(),
                mesh_files: sv.mesh_files.as_ref(),
            },
            &files,
        )?,
    );
    Ok(set)
}
