//! Pipeline driver: strings the stages together (model → geometry → mesh → fem → solve → post)
//! and runs the numerical self-checks. The command-line tool and the examples call this; each
//! function is a few stage calls so a program can stop at any stage or replace one.

use crate::error::{Error, Result};
use crate::fem::{self, System};
use crate::geometry::{self, Pslg};
use crate::mesh::{self, Mesh, MeshOptions};
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
    let t0 = Instant::now();
    let mesh = mesh(&prepared, opts)?;
    let t1 = Instant::now();
    let system = fem::assemble(&prepared.section, &mesh)?;
    let t2 = Instant::now();
    let solution = solve::solve(&system)?;
    let t3 = Instant::now();
    let results = post::postprocess(&prepared.section, &mesh, &system, &solution)?;
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
        checks,
        warnings,
        timings: Timings {
            mesh_s: (t1 - t0).as_secs_f64(),
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
    set.add("field.vtu", io::field_vtu(&sv.mesh, &sv.results)?);
    set.add("nodes.csv", io::nodes_csv(&sv.mesh, &sv.results)?);
    set.add("probes.csv", io::probes_csv(&sv.results)?);
    set.add("boundaries.csv", io::boundaries_csv(&sv.results)?);
    for l in &sv.results.lines {
        set.add(format!("line-{}.csv", l.name), io::line_csv(l)?);
    }
    let checks = serde_json::to_value(&sv.checks).map_err(|e| Error::run(e.to_string()))?;
    let model = s.resolved_json();
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
        })?,
    );
    Ok(set)
}
