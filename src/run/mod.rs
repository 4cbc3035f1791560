//! Pipeline driver: strings the stages together (model → geometry → mesh → fem → solve → post)
//! and runs the numerical self-checks. The command-line tool and the examples call this; each
//! function is a few stage calls so a program can stop at any stage or replace one.

use crate::error::{Error, Result};
use crate::fem::{self, System};
use crate::geometry::{self, Pslg};
use crate::mesh::{self, Mesh, MeshOptions, SizeField};
use crate::model::{self, BoundaryKind, ModelFile, Section};
use crate::post::estimate::{self, ErrorEstimate};
use crate::post::{self, Results};
use crate::solve::{self, Solution};
use serde::Serialize;
use std::path::Path;
use std::time::Instant;

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
    let solution = solve::solve_system(&system)?;
    let t3 = Instant::now();
    let results = post::postprocess(&prepared.section, &mesh, &system, &solution)?;
    let error_estimate = estimate::zz_estimate(&prepared.section, &mesh, &system, &results)?;
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

mod checks;
pub use checks::*;
