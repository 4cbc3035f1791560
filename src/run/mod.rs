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

/// The energy-balance self-check fails above this many ε times the round-off scale of the
/// balance (Σ of the magnitudes of the terms it sums) relative to the heat flowing.
pub const BALANCE_ROUNDOFF_FACTOR: f64 = 64.0;
/// The solver-residual self-check fails above a backward error of this many ε times √(free
/// nodes).
pub const RESIDUAL_ROUNDOFF_FACTOR: f64 = 64.0;
/// Excursion beyond the range of fixed and ambient temperatures, relative to that range, above
/// which the maximum-principle check warns (the consistent convection matrix may undershoot
/// slightly on coarse meshes).
pub const MAX_PRINCIPLE_TOLERANCE: f64 = 1e-6;

/// A validated model with its segment set.
#[derive(Debug, Clone)]
pub struct Prepared {
    /// The model file as read.
    pub model: ModelFile,
    /// The validated section.
    pub section: Section,
    /// Its segment set (geometry stage).
    pub pslg: Pslg,
    /// How a nonlinear model is iterated (`solve --nonlinear`; ignored by a linear model).
    pub nonlinear: solve::nonlinear::Method,
    /// The solver of a linear model's reduced system (`solve --solver`; a nonlinear model
    /// keeps its own factorisations).
    pub solver: solve::SolverChoice,
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
        nonlinear: Default::default(),
        solver: Default::default(),
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
        nonlinear: Default::default(),
        solver: Default::default(),
    })
}

/// Wall-clock time per stage, seconds.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Timings {
    /// Reading and validating the model and building its segment set (set by the caller that
    /// read the file; 0 when the model came from memory).
    pub parse_s: f64,
    /// Meshing.
    pub mesh_s: f64,
    /// Assembly.
    pub assemble_s: f64,
    /// Linear solve.
    pub solve_s: f64,
    /// Post-processing and error estimate.
    pub post_s: f64,
    /// Load cases (assembly of loads or matrices, solves, post-processing, self-checks) and the
    /// unit solves of declared environments.
    pub cases_s: f64,
    /// Encoding of the result files other than summary.json (measured before summary.json
    /// itself is encoded; the files are flushed and switched in after it).
    pub write_s: f64,
    /// Sum of the stages above.
    pub total_s: f64,
    /// Peak resident set size of the process (VmHWM) when summary.json is encoded, MiB;
    /// `None` where unavailable.
    pub peak_rss_mib: Option<f64>,
}

impl Timings {
    /// These timings with the encoding time `write_s`, the total and the peak RSS filled in.
    pub fn with_write(&self, write_s: f64) -> Timings {
        let mut t = self.clone();
        t.write_s = write_s;
        t.total_s =
            t.parse_s + t.mesh_s + t.assemble_s + t.solve_s + t.post_s + t.cases_s + t.write_s;
        t.peak_rss_mib = peak_rss_mib();
        t
    }
}

/// Peak resident set size of this process (VmHWM of /proc/self/status), MiB; `None` where
/// the file or the line is missing (not Linux).
pub fn peak_rss_mib() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}

/// A solved section with everything derived from it.
#[derive(Debug, Clone)]
pub struct Solved {
    /// The model solved.
    pub prepared: Prepared,
    /// The mesh solved on.
    pub mesh: Mesh,
    /// The assembled system.
    pub system: System,
    /// Nodal temperatures.
    pub solution: Solution,
    /// Everything derived from them.
    pub results: Results,
    /// Zienkiewicz–Zhu error estimate of the field.
    pub error_estimate: ErrorEstimate,
    /// Adaptive refinement history (empty for a plain solve).
    pub adaptivity: Vec<Cycle>,
    /// The model's load cases, solved on the same mesh (empty without `[[cases]]`).
    pub cases: Vec<CaseSolved>,
    /// Coupling coefficients, ψ and temperature factors of the declared environments (`None`
    /// without `[environments]`).
    pub coupling: Option<coupling::Coupling>,
    /// Numerical self-checks.
    pub checks: Vec<Check>,
    /// Warnings of every stage and of self-checks of severity warning, each once.
    pub warnings: Vec<String>,
    /// Wall-clock time per stage.
    pub timings: Timings,
    /// The nonlinear iteration (method, history), `None` for a linear model.
    pub nonlinear: Option<solve::nonlinear::Outcome>,
    /// How the base case's reduced system was solved; `None` for a nonlinear model.
    pub solver: Option<solve::SolverRecord>,
    /// The files of a mesh made elsewhere (`solve --mesh`: the .vtu and the optional
    /// boundary .vtp) as given; `None` when the model was meshed here.
    pub mesh_files: Option<(String, Option<String>)>,
}

impl Solved {
    /// The validated section.
    pub fn section(&self) -> &Section {
        &self.prepared.section
    }
    /// True when no check failed, of the base case or of a load case (checks of severity
    /// warning only warn).
    pub fn checks_passed(&self) -> bool {
        self.checks
            .iter()
            .all(|c| c.status() != CheckStatus::Failed)
            && self.cases.iter().all(CaseSolved::checks_passed)
    }
}

/// Mesh a prepared model.
pub fn mesh(prepared: &Prepared, opts: &MeshOptions) -> Result<Mesh> {
    mesh::build(&prepared.section, &prepared.pslg, opts)
}

/// A mesh of a prepared model made elsewhere ([`mesh::import::read_mesh`]), refused above the
/// `opts` triangle limit; with the import's warnings.
pub fn read_mesh(
    prepared: &Prepared,
    file: &Path,
    boundary: Option<&Path>,
    opts: &MeshOptions,
) -> Result<(Mesh, Vec<String>)> {
    crate::progress::stage("reading the mesh");
    let (mesh, warnings) =
        mesh::import::read_mesh(&prepared.section, &prepared.pslg, file, boundary)?;
    if mesh.triangles.len() > opts.max_triangles {
        return Err(crate::error::Error::input(format!(
            "--mesh {}: {} triangles, above --max-triangles {}",
            file.display(),
            mesh.triangles.len(),
            opts.max_triangles
        )));
    }
    Ok((mesh, warnings))
}

/// What [`check_model`] found: the coarse mesh and the size estimate.
#[derive(Debug, Clone)]
pub struct ModelCheck {
    /// The coarse (unrefined) mesh: the segment set triangulated, classified by zone.
    pub coarse: Mesh,
    /// Triangles the size limits ask for, as checked against `--max-triangles`
    /// ([`mesh::Mesher::estimated_triangles`]).
    pub estimated_triangles: f64,
}

/// Runs every model-level validation that [`solve()`] runs, on the coarse (unrefined) mesh:
/// the mesh limits, the mesh against the section and the determinacy check (some fixed or
/// convective edge on every connected part). A model refused here is refused by `solve` with
/// the same error.
pub fn check_model(prepared: &Prepared, opts: &MeshOptions) -> Result<ModelCheck> {
    let mesher = mesh::Mesher::new(&prepared.section, &prepared.pslg, opts)?;
    let coarse = mesher.mesh()?;
    fem::check_mesh(&prepared.section, &coarse)?;
    fem::checks::check_determined(&prepared.section, &coarse)?;
    Ok(ModelCheck {
        estimated_triangles: mesher.estimated_triangles(),
        coarse,
    })
}

/// Mesh, assemble, solve and post-process a prepared model, and run the self-checks; then the
/// model's load cases ([`cases`]).
pub fn solve(prepared: Prepared, opts: &MeshOptions) -> Result<Solved> {
    solve_with(prepared, opts, None)
}

/// [`solve()`] on a mesh graded by a size field.
pub fn solve_with(
    prepared: Prepared,
    opts: &MeshOptions,
    field: Option<&dyn SizeField>,
) -> Result<Solved> {
    let t0 = Instant::now();
    crate::progress::stage("meshing");
    let mesh = mesh::build_with(&prepared.section, &prepared.pslg, opts, field)?;
    let mesh_s = t0.elapsed().as_secs_f64();
    solve_mesh(prepared, mesh, mesh_s)
}

/// Assemble, solve and post-process a prepared model on a given mesh of it, and run the
/// self-checks; then solve its load cases on the same mesh ([`cases::solve_cases`], reusing
/// the base factorisation where the matrix is unchanged). `mesh_s` is the meshing time to
/// report.
pub fn solve_mesh(prepared: Prepared, mesh: Mesh, mesh_s: f64) -> Result<Solved> {
    if prepared.section.is_nonlinear() {
        return nonlinear::solve_nonlinear(prepared, mesh, mesh_s);
    }
    let t1 = Instant::now();
    crate::progress::stage("assembling");
    let system = fem::assemble(&prepared.section, &mesh)?;
    let t2 = Instant::now();
    crate::progress::stage("solving");
    // Load cases and environments solve many right-hand sides on the one prepared solver: a
    // Cholesky re-solve costs a seventh of an AMG-PCG one (README "Performance"), so `auto`
    // keeps the factorisation for them.
    let choice = prepared.solver.for_right_hand_sides(
        !prepared.section.cases.is_empty() || !prepared.section.environments.is_empty(),
    );
    let (factor, solution, fallback) = solve_reduced(&system, &mesh, choice)?;
    let (used, iterations) = factor.used();
    let solver = solve::SolverRecord {
        requested: prepared.solver,
        used,
        unknowns: factor.unknowns(),
        iterations,
    };
    let t3 = Instant::now();
    crate::progress::stage("post-processing");
    let results = post::postprocess(&prepared.section, &mesh, &system, &solution)?;
    let error_estimate = estimate::zz_estimate(&prepared.section, &mesh, &system, &results)?;
    let t4 = Instant::now();
    let mut warnings = prepared.warnings();
    warnings.extend(fallback);
    warnings.extend(crate::mesh::contact::unmet_warnings(
        &prepared.section,
        &mesh,
    ));
    for w in &results.warnings {
        if !warnings.contains(w) {
            warnings.push(w.clone());
        }
    }
    let mut checks = self_checks(&prepared.section, &mesh, &system, &results)?;
    for c in &checks {
        if c.status() == CheckStatus::Warning {
            warnings.push(format!("self-check {}: {}", c.name, c.detail));
        }
    }
    let t5 = Instant::now();
    crate::progress::stage("coupling and load cases");
    let mut coupled = None;
    if let Some((c, check, notes)) =
        coupling::coupling(&prepared.section, &mesh, &system, &factor, &results)?
    {
        if check.status() == CheckStatus::Warning {
            warnings.push(format!("self-check {}: {}", check.name, check.detail));
        }
        checks.push(check);
        warnings.extend(notes);
        coupled = Some(c);
    }
    let cases = cases::solve_cases(&prepared.section, &mesh, &system, &factor)?;
    for c in &cases {
        warnings.extend(c.warnings.iter().map(|w| format!("case {}: {w}", c.name)));
    }
    Ok(Solved {
        prepared,
        mesh,
        system,
        solution,
        results,
        error_estimate,
        adaptivity: Vec::new(),
        cases,
        coupling: coupled,
        checks,
        warnings,
        timings: Timings {
            mesh_s,
            assemble_s: (t2 - t1).as_secs_f64(),
            solve_s: (t3 - t2).as_secs_f64(),
            post_s: (t4 - t3).as_secs_f64(),
            cases_s: t5.elapsed().as_secs_f64(),
            ..Timings::default()
        },
        nonlinear: None,
        solver: Some(solver),
        mesh_files: None,
    })
}

/// Prepares the reduced system of `system` by the solver `choice` resolves to and solves its
/// own load case. Under `auto`, a multigrid solve that fails (conjugate gradient not converging)
/// is repeated by Cholesky, with the warning returned.
fn solve_reduced(
    system: &System,
    mesh: &Mesh,
    choice: solve::SolverChoice,
) -> Result<(
    solve::Factorized<solve::PipelineSolver>,
    Solution,
    Option<String>,
)> {
    let factor = solve::Factorized::for_mesh(system, &mesh.nodes, choice)?;
    match factor.solve(&system.load, &system.fixed) {
        Ok(solution) => Ok((factor, solution, None)),
        Err(e)
            if choice == solve::SolverChoice::Auto
                && factor.used().0 == solve::SolverChoice::Amg =>
        {
            drop(factor);
            let factor =
                solve::Factorized::for_mesh(system, &mesh.nodes, solve::SolverChoice::Cholesky)?;
            let solution = factor.solve(&system.load, &system.fixed)?;
            Ok((
                factor,
                solution,
                Some(format!(
                    "solver: {e}; solved by sparse Cholesky instead (--solver cholesky skips the attempt)"
                )),
            ))
        }
        Err(e) => Err(e),
    }
}

/// One cycle of adaptive refinement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cycle {
    /// 0 = the first mesh.
    pub cycle: usize,
    /// Triangles of this cycle's mesh.
    pub triangles: usize,
    /// Nodes of this cycle's mesh.
    pub nodes: usize,
    /// Relative energy-norm error estimate (Zienkiewicz–Zhu).
    pub relative_error: f64,
    /// Energy-norm error estimate, absolute.
    pub energy_norm_error: f64,
}

pub mod cases;
mod checks;
pub mod coupling;
pub mod nonlinear;
pub use cases::{CaseSolved, Factorisation};
pub use checks::*;
