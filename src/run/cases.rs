//! Load cases of a solved model: after the base case, each `[[cases]]` entry on the same mesh.
//! A case that changes only the load (fixed temperatures, ambients, fluxes, sources) reuses the
//! base factorisation; one that changes a film coefficient or a conductivity assembles and
//! factorises its own matrix. Per case only what its files hold is computed: heat flows per
//! boundary, the energy balance, probes and lines, and the self-checks.

use super::{Check, CheckStatus, self_checks};
use crate::error::Result;
use crate::fem::{self, LoadCase, System};
use crate::mesh::Mesh;
use crate::model::Section;
use crate::post::{self, Results};
use crate::solve::{self, Factorized, PipelineSolver, Solution};
use rayon::prelude::*;
use serde::Serialize;

/// How a case's system was solved.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Factorisation {
    /// The base case's factorisation, with the case's load and Dirichlet values.
    Reused,
    /// A matrix and factorisation of its own (a film coefficient or conductivity changed).
    Refactorised,
}

impl Factorisation {
    /// `reused` or `refactorised`, as written in the files.
    pub fn as_str(self) -> &'static str {
        match self {
            Factorisation::Reused => "reused",
            Factorisation::Refactorised => "refactorised",
        }
    }
}

/// One solved load case.
#[derive(Debug, Clone)]
pub struct CaseSolved {
    /// Case name.
    pub name: String,
    /// Whether the base factorisation was reused.
    pub factorisation: Factorisation,
    /// The section with the case's values ([`Section::case_section`]).
    pub section: Section,
    /// Nodal temperatures.
    pub solution: Solution,
    /// Heat flows, balance, probes and lines (and the gradients the lines sample).
    pub results: Results,
    /// Energy balance, solver residual (and the maximum principle where it applies).
    pub checks: Vec<Check>,
    /// Warnings of this case's post-processing and self-checks of severity warning.
    pub warnings: Vec<String>,
}

impl CaseSolved {
    /// True when no check failed.
    pub fn checks_passed(&self) -> bool {
        self.checks
            .iter()
            .all(|c| c.status() != CheckStatus::Failed)
    }
}

/// Solves every load case of `section` on `mesh`, in file order. `base` is the base case's
/// system and `factor` its factorisation.
pub fn solve_cases(
    section: &Section,
    mesh: &Mesh,
    base: &System,
    factor: &Factorized<PipelineSolver>,
) -> Result<Vec<CaseSolved>> {
    let locator = post::Locator::new(mesh);
    // Cases that reuse the base factorisation are independent solves with it: they run side by
    // side on the thread pool (each result depends on its case alone, so the files do not
    // depend on the thread count). Cases that refactorise run one at a time, so that at most
    // one further factor is held. Results and the first error are taken in file order.
    let n = section.cases.len();
    let reused: Vec<usize> = (0..n)
        .filter(|&i| !section.case_changes_matrix(i))
        .collect();
    let mut solved: Vec<Option<Result<CaseSolved>>> = (0..n).map(|_| None).collect();
    let parallel: Vec<(usize, Result<CaseSolved>)> = reused
        .par_iter()
        .map(|&i| {
            (
                i,
                solve_case_located(section, mesh, base, factor, i, &locator),
            )
        })
        .collect();
    for (i, r) in parallel {
        solved[i] = Some(r);
    }
    (0..n)
        .map(|i| match solved[i].take() {
            Some(r) => r,
            None => solve_case_located(section, mesh, base, factor, i, &locator),
        })
        .collect()
}

/// Solves case `i` of `section` (see [`solve_cases`]).
pub fn solve_case(
    section: &Section,
    mesh: &Mesh,
    base: &System,
    factor: &Factorized<PipelineSolver>,
    i: usize,
) -> Result<CaseSolved> {
    solve_case_located(section, mesh, base, factor, i, &post::Locator::new(mesh))
}

/// [`solve_case`] with a point locator of `mesh` shared by the cases.
fn solve_case_located(
    section: &Section,
    mesh: &Mesh,
    base: &System,
    factor: &Factorized<PipelineSolver>,
    i: usize,
    locator: &post::Locator,
) -> Result<CaseSolved> {
    let Some(cs) = section.case_section(i) else {
        return Err(crate::error::Error::run(format!(
            "internal error: load case {i} of {}",
            section.cases.len()
        )));
    };
    let (factorisation, system, solution) = if section.case_changes_matrix(i) {
        let system = fem::assemble(&cs, mesh)?;
        let solution = solve::Factorized::for_mesh(&system, &mesh.nodes, factor.used().0)?
            .solve(&system.load, &system.fixed)?;
        (Factorisation::Refactorised, system, solution)
    } else {
        let load = fem::assemble_load(&cs, mesh, &LoadCase::from_section(&cs))?;
        let system = System {
            matrix: std::sync::Arc::clone(&base.matrix),
            load: load.vector,
            fixed: load.fixed,
            cell_source: load.cell_source,
            point_source: load.point_source,
            conductivity: base.conductivity.clone(),
            cell_conductivity: None,
        };
        let solution = factor.solve(&system.load, &system.fixed)?;
        (Factorisation::Reused, system, solution)
    };
    let results = post::postprocess_located(&cs, mesh, &system, &solution, locator)?;
    let checks = self_checks(&cs, mesh, &system, &results)?;
    let mut warnings = results.warnings.clone();
    for c in &checks {
        if c.status() == CheckStatus::Warning {
            warnings.push(format!("self-check {}: {}", c.name, c.detail));
        }
    }
    Ok(CaseSolved {
        name: section.cases[i].name.clone(),
        factorisation,
        section: cs,
        solution,
        results,
        checks,
        warnings,
    })
}
