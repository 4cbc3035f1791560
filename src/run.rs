//! Pipeline driver: strings the stages together (model → geometry → mesh → fem → solve → post)
//! and runs the numerical self-checks. The command-line tool and the examples call this; each
//! function is a few stage calls so a program can stop at any stage or replace one.

use crate::accuracy::{self, ErrorEstimate};
use crate::error::{Error, Result};
use crate::fem::{self, System};
use crate::geometry::{self, Pslg};
use crate::mesh::{self, Mesh, MeshOptions, SizeField};
use crate::model::{self, BoundaryKind, ModelFile, Section};
use crate::post::{self, Results};
use crate::solve::{self, Solution};
use serde::Serialize;
use std::path::Path;
use std::time::Instant;

/// The short caution printed with every solve and written into summary.json.
pub const CAUTION: &str = crate::io::CAUTION;

/// Relative energy imbalance above which the self-check fails.
pub const BALANCE_TOLERANCE: f64 = 1e-9;
/// Relative solver residual above which the self-check fails.
pub const RESIDUAL_TOLERANCE: f64 = 1e-9;
/// Excursion beyond the range of fixed and ambient temperatures, relative to that range, above
/// which the maximum-principle check warns (the consistent convection matrix may undershoot
/// slightly on coarse meshes).
pub const MAX_PRINCIPLE_TOLERANCE: f64 = 1e-6;

/// A validated model with its segment set.
#[derive(Debug, Clone)]
pub struct Prepared {
    pub model: ModelFile,
    pub section: Section,
    pub pslg: Pslg,
}

impl Prepared {
    /// Warnings from validation and geometry, each once, in order.
    pub fn warnings(&self) -> Vec<String> {
        let mut w = self.section.warnings.clone();
        for x in &self.pslg.warnings {
            if !w.contains(x) {
                w.push(x.clone());
            }
        }
        w
    }
}

/// Read a model file, validate it and build its segment set.
pub fn prepare(path: &Path) -> Result<Prepared> {
    let (model, section) = model::load(path)?;
    let pslg = geometry::build(&section)?;
    Ok(Prepared {
        model,
        section,
        pslg,
    })
}

/// Validate an in-memory model and build its segment set.
pub fn prepare_model(model: ModelFile) -> Result<Prepared> {
    let section = model::validate(&model)?;
    let pslg = geometry::build(&section)?;
    Ok(Prepared {
        model,
        section,
        pslg,
    })
}

/// One numerical self-check.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    pub name: String,
    pub value: f64,
    pub tolerance: f64,
    pub passed: bool,
    /// "error": a failed check fails the run; "warning": reported only.
    pub severity: String,
    pub detail: String,
}

/// Wall-clock time per stage, seconds.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Timings {
    pub mesh_s: f64,
    pub assemble_s: f64,
    pub solve_s: f64,
    pub post_s: f64,
}

/// A solved section with everything derived from it.
#[derive(Debug, Clone)]
pub struct Solved {
    pub prepared: Prepared,
    pub mesh: Mesh,
    pub system: System,
    pub solution: Solution,
    pub results: Results,
    /// Zienkiewicz–Zhu error estimate of the field.
    pub error_estimate: ErrorEstimate,
    /// Adaptive refinement history (empty for a plain solve).
    pub adaptivity: Vec<Cycle>,
    pub checks: Vec<Check>,
    pub warnings: Vec<String>,
    pub timings: Timings,
}

impl Solved {
    pub fn section(&self) -> &Section {
        &self.prepared.section
    }
    /// True when every check of severity "error" passed.
    pub fn checks_passed(&self) -> bool {
        self.checks
            .iter()
            .all(|c| c.passed || c.severity != "error")
    }
}

/// Mesh a prepared model.
pub fn mesh(prepared: &Prepared, opts: &MeshOptions) -> Result<Mesh> {
    mesh::build(&prepared.section, &prepared.pslg, opts)
}

/// Mesh, assemble, solve and post-process a prepared model, and run the self-checks.
pub fn solve(prepared: Prepared, opts: &MeshOptions) -> Result<Solved> {
    solve_with(prepared, opts, None)
}

/// [`solve`] on a mesh graded by a size field.
pub fn solve_with(
    prepared: Prepared,
    opts: &MeshOptions,
    field: Option<&dyn SizeField>,
) -> Result<Solved> {
    let t0 = Instant::now();
    let mesh = mesh::build_with(&prepared.section, &prepared.pslg, opts, field)?;
    let mesh_s = t0.elapsed().as_secs_f64();
    solve_mesh(prepared, mesh, mesh_s)
}

/// Assemble, solve and post-process a prepared model on a given mesh of it, and run the
/// self-checks. `mesh_s` is the meshing time to report.
pub fn solve_mesh(prepared: Prepared, mesh: Mesh, mesh_s: f64) -> Result<Solved> {
    let t1 = Instant::now();
    let system = fem::assemble(&prepared.section, &mesh)?;
    let t2 = Instant::now();
    let solution = solve::solve(&system)?;
    let t3 = Instant::now();
    let results = post::postprocess(&prepared.section, &mesh, &system, &solution)?;
    let error_estimate = accuracy::zz_estimate(&prepared.section, &mesh, &system, &results)?;
    let t4 = Instant::now();
    let mut warnings = prepared.warnings();
    for w in &results.warnings {
        if !warnings.contains(w) {
            warnings.push(w.clone());
        }
    }
    let checks = self_checks(&prepared.section, &mesh, &solution, &results);
    for c in &checks {
        if !c.passed && c.severity == "warning" {
            warnings.push(format!("self-check {}: {}", c.name, c.detail));
        }
    }
    Ok(Solved {
        prepared,
        mesh,
        system,
        solution,
        results,
        error_estimate,
        adaptivity: Vec::new(),
        checks,
        warnings,
        timings: Timings {
            mesh_s,
            assemble_s: (t2 - t1).as_secs_f64(),
            solve_s: (t3 - t2).as_secs_f64(),
            post_s: (t4 - t3).as_secs_f64(),
        },
    })
}

/// Energy balance, solver residual and (without sources and flux edges) the maximum principle.
pub fn self_checks(section: &Section, mesh: &Mesh, solution: &Solution, r: &Results) -> Vec<Check> {
    let mut checks = vec![
        Check {
            name: "energy_balance".into(),
            value: r.energy_imbalance_relative,
            tolerance: BALANCE_TOLERANCE,
            passed: r.energy_imbalance_relative <= BALANCE_TOLERANCE,
            severity: "error".into(),
            detail: format!(
                "sum of boundary heat flows + heat source = {:.3e} W/m, relative {:.3e}",
                r.energy_imbalance, r.energy_imbalance_relative
            ),
        },
        Check {
            name: "solver_residual".into(),
            value: solution.residual_relative,
            tolerance: RESIDUAL_TOLERANCE,
            passed: solution.residual_relative <= RESIDUAL_TOLERANCE,
            severity: "error".into(),
            detail: format!(
                "relative residual of the reduced system {:.3e}",
                solution.residual_relative
            ),
        },
    ];
    let has_source = section.materials.iter().any(|m| m.heat_source != 0.0);
    let used: Vec<usize> = {
        let mut u: Vec<usize> = mesh
            .boundary_edges
            .iter()
            .filter_map(|e| e.boundary)
            .collect();
        u.sort_unstable();
        u.dedup();
        u
    };
    let has_flux = used
        .iter()
        .any(|&b| matches!(section.boundaries[b].kind, BoundaryKind::Flux { flux } if flux != 0.0));
    if !has_source && !has_flux {
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for &b in &used {
            match section.boundaries[b].kind {
                BoundaryKind::Fixed { temperature } => {
                    lo = lo.min(temperature);
                    hi = hi.max(temperature);
                }
                BoundaryKind::Convection { ambient, .. } => {
                    lo = lo.min(ambient);
                    hi = hi.max(ambient);
                }
                _ => {}
            }
        }
        let range = (hi - lo).max(1e-300);
        let tol = MAX_PRINCIPLE_TOLERANCE * range.max(1.0);
        let below = lo - r.t_min.value;
        let above = r.t_max.value - hi;
        let excursion = below.max(above).max(0.0);
        let (which, at) = if below >= above {
            ("minimum", r.t_min.at)
        } else {
            ("maximum", r.t_max.at)
        };
        checks.push(Check {
            name: "maximum_principle".into(),
            value: excursion,
            tolerance: tol,
            passed: excursion <= tol,
            severity: "warning".into(),
            detail: if excursion > 0.0 {
                format!(
                    "temperatures must lie within the fixed and ambient range [{lo}, {hi}] °C; the {which} lies {excursion:.3e} K outside it at ({:.6}, {:.6})",
                    at[0], at[1]
                )
            } else {
                format!("all temperatures lie within the fixed and ambient range [{lo}, {hi}] °C")
            },
        });
    }
    checks
}

/// Error for a failed self-check (exit code 1).
pub fn failed_checks_error(solved: &Solved) -> Option<Error> {
    let failed: Vec<String> = solved
        .checks
        .iter()
        .filter(|c| !c.passed && c.severity == "error")
        .map(|c| format!("{}: {}", c.name, c.detail))
        .collect();
    if failed.is_empty() {
        None
    } else {
        Some(Error::run(format!(
            "self-check failed, no results written: {}",
            failed.join("; ")
        )))
    }
}

/// All files of a solve, in memory, ready to be committed atomically to a directory.
pub fn output_files(sv: &Solved) -> Result<crate::io::OutputSet> {
    use crate::io;
    let s = sv.section();
    let mut set = io::OutputSet::new();
    set.add(
        "field.vtu",
        io::field_vtu_with(
            &sv.mesh,
            &sv.results,
            &[("error_indicator", &sv.error_estimate.indicator)],
        )?,
    );
    set.add("nodes.csv", io::nodes_csv(&sv.mesh, &sv.results)?);
    set.add("probes.csv", io::probes_csv(&sv.results)?);
    set.add("boundaries.csv", io::boundaries_csv(&sv.results)?);
    for l in &sv.results.lines {
        set.add(format!("line-{}.csv", l.name), io::line_csv(l)?);
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
        io::summary_json(&io::SummaryInputs {
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

/// One cycle of adaptive refinement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cycle {
    pub cycle: usize,
    pub triangles: usize,
    pub nodes: usize,
    /// Relative energy-norm error estimate (Zienkiewicz–Zhu).
    pub relative_error: f64,
    pub energy_norm_error: f64,
}

/// Fraction of the squared error estimate the marked triangles must carry (Dörfler marking).
pub const DORFLER_FRACTION: f64 = 0.5;
/// Largest number of adaptive cycles.
pub const MAX_CYCLES: usize = 30;

/// Adaptive refinement: solve, estimate the error, refine where the indicator carries half the
/// squared estimate (Dörfler marking), until the relative energy-norm estimate is at most
/// `target` or the next mesh would exceed `opts.max_triangles`.
pub fn solve_adaptive(prepared: Prepared, opts: &MeshOptions, target: f64) -> Result<Solved> {
    if !(target.is_finite() && target > 0.0 && target < 1.0) {
        return Err(Error::input(format!(
            "--target-error = {target}: give a fraction between 0 and 1 (0.05 = 5 %)"
        )));
    }
    let mut history = Vec::new();
    let mut mesher = mesh::Mesher::new(&prepared.section, &prepared.pslg, opts)?;
    let t0 = Instant::now();
    mesher.refine(None, &[])?;
    let mut current = solve_mesh(prepared.clone(), mesher.mesh()?, t0.elapsed().as_secs_f64())?;
    loop {
        let e = &current.error_estimate;
        history.push(Cycle {
            cycle: history.len(),
            triangles: current.mesh.triangles.len(),
            nodes: current.mesh.nodes.len(),
            relative_error: e.relative,
            energy_norm_error: e.energy_norm,
        });
        if e.relative <= target {
            break;
        }
        if history.len() >= MAX_CYCLES {
            current.warnings.push(format!(
                "adaptive refinement stopped after {MAX_CYCLES} cycles at a relative error estimate of {:.3e} (target {target})",
                e.relative
            ));
            break;
        }
        // Dörfler marking, largest indicators first (ties: lower triangle index); a point at
        // the centroid of each marked triangle, then refinement restores the quality bounds.
        let eta = &e.indicator;
        let mut order: Vec<usize> = (0..eta.len()).collect();
        order.sort_by(|&a, &b| eta[b].total_cmp(&eta[a]).then(a.cmp(&b)));
        let total: f64 = eta.iter().map(|x| x * x).sum();
        let mut acc = 0.0;
        let mut points = Vec::new();
        for &t in &order {
            if acc >= DORFLER_FRACTION * total {
                break;
            }
            acc += eta[t] * eta[t];
            let [a, b, c] = current.mesh.triangles[t];
            let (pa, pb, pc) = (
                current.mesh.nodes[a],
                current.mesh.nodes[b],
                current.mesh.nodes[c],
            );
            points.push([(pa[0] + pb[0] + pc[0]) / 3.0, (pa[1] + pb[1] + pc[1]) / 3.0]);
        }
        // Each marked triangle becomes about three, before refinement adds its share.
        if current.mesh.triangles.len() + 3 * points.len() > opts.max_triangles {
            current.warnings.push(format!(
                "adaptive refinement stopped at {} triangles (--max-triangles {}) with a relative error estimate of {:.3e}, above the target {target}",
                current.mesh.triangles.len(),
                opts.max_triangles,
                e.relative
            ));
            break;
        }
        let t0 = Instant::now();
        mesher.refine(None, &points)?;
        current = solve_mesh(prepared.clone(), mesher.mesh()?, t0.elapsed().as_secs_f64())?;
    }
    current.adaptivity = history;
    Ok(current)
}
