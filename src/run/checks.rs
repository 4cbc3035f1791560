//! Numerical self-checks of a solved model: energy balance, solver residual, maximum principle.

use super::*;

/// What a failed check means.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// A failed check fails the run (serialised as "error").
    Error,
    /// A failed check is reported only (serialised as "warning").
    Warning,
}

/// Outcome of a check: passed, or failed with its severity's consequence.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum CheckStatus {
    /// Within tolerance.
    Passed,
    /// Outside tolerance, severity warning: reported only.
    Warning,
    /// Outside tolerance, severity error: the run fails.
    Failed,
}

/// One numerical self-check.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    /// `energy_balance`, `solver_residual`, `maximum_principle`.
    pub name: String,
    /// The checked quantity.
    pub value: f64,
    /// Largest accepted value.
    pub tolerance: f64,
    /// `value <= tolerance`.
    pub passed: bool,
    /// What a failure means.
    pub severity: Severity,
    /// One line for the report.
    pub detail: String,
}

impl Check {
    /// Passed, warning (failed, severity warning) or failed (failed, severity error).
    pub fn status(&self) -> CheckStatus {
        match (self.passed, self.severity) {
            (true, _) => CheckStatus::Passed,
            (false, Severity::Warning) => CheckStatus::Warning,
            (false, Severity::Error) => CheckStatus::Failed,
        }
    }
}

/// Energy balance, solver residual and (without sources and flux edges) the maximum principle.
pub fn self_checks(section: &Section, mesh: &Mesh, solution: &Solution, r: &Results) -> Vec<Check> {
    let mut checks = vec![energy_balance(r), solver_residual(solution)];
    let used = used_boundaries(mesh);
    let has_source = section.materials.iter().any(|m| m.heat_source != 0.0);
    let has_flux = used
        .iter()
        .any(|&b| matches!(section.boundaries[b].kind, BoundaryKind::Flux { flux } if flux != 0.0));
    if !has_source && !has_flux {
        checks.push(maximum_principle(section, &used, r));
    }
    checks
}

/// Sum of boundary heat flows and heat source, relative to the heat flowing.
fn energy_balance(r: &Results) -> Check {
    Check {
        name: "energy_balance".into(),
        value: r.energy_imbalance_relative,
        tolerance: BALANCE_TOLERANCE,
        passed: r.energy_imbalance_relative <= BALANCE_TOLERANCE,
        severity: Severity::Error,
        detail: format!(
            "sum of boundary heat flows + heat source = {:.3e} W/m, relative {:.3e}",
            r.energy_imbalance, r.energy_imbalance_relative
        ),
    }
}

/// Relative residual of the reduced linear system.
fn solver_residual(solution: &Solution) -> Check {
    Check {
        name: "solver_residual".into(),
        value: solution.residual_relative,
        tolerance: RESIDUAL_TOLERANCE,
        passed: solution.residual_relative <= RESIDUAL_TOLERANCE,
        severity: Severity::Error,
        detail: format!(
            "relative residual of the reduced system {:.3e}",
            solution.residual_relative
        ),
    }
}

/// Ids of the boundaries some mesh edge carries, sorted.
fn used_boundaries(mesh: &Mesh) -> Vec<usize> {
    let mut u: Vec<usize> = mesh
        .boundary_edges
        .iter()
        .filter_map(|e| e.boundary)
        .collect();
    u.sort_unstable();
    u.dedup();
    u
}

/// Range of the fixed and ambient temperatures of the used boundaries, °C.
fn imposed_range(section: &Section, used: &[usize]) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for &b in used {
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
    (lo, hi)
}

/// Without sources and imposed fluxes, temperatures lie within the imposed range (warning).
fn maximum_principle(section: &Section, used: &[usize], r: &Results) -> Check {
    let (lo, hi) = imposed_range(section, used);
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
    Check {
        name: "maximum_principle".into(),
        value: excursion,
        tolerance: tol,
        passed: excursion <= tol,
        severity: Severity::Warning,
        detail: if excursion > 0.0 {
            format!(
                "temperatures must lie within the fixed and ambient range [{lo}, {hi}] °C; the {which} lies {excursion:.3e} K outside it at ({:.6}, {:.6})",
                at[0], at[1]
            )
        } else {
            format!("all temperatures lie within the fixed and ambient range [{lo}, {hi}] °C")
        },
    }
}

/// Error for a failed self-check (exit code 1).
pub fn failed_checks_error(solved: &Solved) -> Option<Error> {
    let failed: Vec<String> = solved
        .checks
        .iter()
        .filter(|c| c.status() == CheckStatus::Failed)
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
