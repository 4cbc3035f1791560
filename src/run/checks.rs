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

/// Energy balance, solver residual and (without sources and flux edges) the maximum principle
/// of the temperatures in `r` (`r.temperature`, recomputed from the system, so a changed field
/// is checked as it is). `r` must be the post-processing of `r.temperature` on `mesh`.
pub fn self_checks(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    r: &Results,
) -> Result<Vec<Check>> {
    let rows = RowTerms::of(system, &r.temperature)?;
    let mut checks = vec![
        energy_balance(system, r, &rows),
        solver_residual(system, &r.temperature, &rows),
    ];
    let used = used_boundaries(mesh);
    let has_source = section.has_source();
    let has_flux = used
        .iter()
        .any(|&b| matches!(section.boundaries[b].kind, BoundaryKind::Flux { flux } if flux != 0.0));
    if !has_source && !has_flux {
        checks.push(maximum_principle(section, mesh, &used, r));
    }
    Ok(checks)
}

/// Per node `i` of the full system `K·T = f`: the residual `(K·T − f)_i` and the magnitude of
/// the terms it sums, `Σ_j |K_ij|·|T_j| + |f_i|` (the scale of its round-off).
struct RowTerms {
    residual: Vec<f64>,
    magnitude: Vec<f64>,
    /// `Σ_j |K_ij|` per row.
    row_sum: Vec<f64>,
}

impl RowTerms {
    fn of(system: &System, temperature: &[f64]) -> Result<Self> {
        let n = system.node_count();
        let k = &system.matrix;
        if temperature.len() != n || k.rows() != n || k.cols() != n || !k.is_csr() {
            return Err(Error::run(format!(
                "internal error: self-check of {} temperatures against a system of {n} nodes",
                temperature.len()
            )));
        }
        let mut rows = RowTerms {
            residual: Vec::with_capacity(n),
            magnitude: Vec::with_capacity(n),
            row_sum: Vec::with_capacity(n),
        };
        for (row, &f) in k.outer_iterator().zip(&system.load) {
            let (mut kt, mut mag, mut sum) = (0.0, f.abs(), 0.0);
            for (j, &v) in row.iter() {
                kt += v * temperature[j];
                mag += (v * temperature[j]).abs();
                sum += v.abs();
            }
            rows.residual.push(kt - f);
            rows.magnitude.push(mag);
            rows.row_sum.push(sum);
        }
        Ok(rows)
    }
}

/// True when `value` and `tolerance` are finite and `value <= tolerance`.
fn within(value: f64, tolerance: f64) -> bool {
    value.is_finite() && tolerance.is_finite() && value <= tolerance
}

/// Σ boundary heat flows + heat source against the round-off of the terms it sums.
///
/// The value is |imbalance| / D with D = max(Σ|boundary flows| + |source|, k_max·max(ΔT, 1 K))
/// ([`post::flows::balance_scale`]). The imbalance is a sum of nodal residuals and edge
/// integrals, so floating point closes it only to about ε·S with
/// S = Σ_i (Σ_j |K_ij|·|T_j| + |f_i|) + Σ|cell source| (W/m): the tolerance is
/// [`BALANCE_ROUNDOFF_FACTOR`]·ε·S / D. For ordinary models S/D is 10²…10⁶ (tolerance
/// 10⁻¹²…10⁻⁸); a large film coefficient or conductivity contrast raises it as far as
/// floating point forces.
fn energy_balance(system: &System, r: &Results, rows: &RowTerms) -> Check {
    let floor = post::flows::balance_floor(system, &r.temperature);
    let scale = post::flows::balance_scale(&r.boundaries, r.heat_source, floor);
    let roundoff: f64 = rows.magnitude.iter().sum::<f64>()
        + system.cell_source.iter().map(|q| q.abs()).sum::<f64>()
        + system
            .point_source
            .iter()
            .map(|p| p.power.abs())
            .sum::<f64>();
    let value = post::flows::relative_to(r.energy_imbalance, scale);
    let tolerance = BALANCE_ROUNDOFF_FACTOR * f64::EPSILON * roundoff / scale;
    let passed = within(value, tolerance);
    Check {
        name: "energy_balance".into(),
        value,
        tolerance,
        passed,
        severity: Severity::Error,
        detail: if value.is_finite() {
            format!(
                "sum of boundary heat flows + heat source = {:.3e} W/m, relative {:.3e} to {:.3e} W/m (heat flowing, at least k_max·max(ΔT, 1 K)); round-off allows {:.3e}",
                r.energy_imbalance, value, scale, tolerance
            )
        } else {
            format!(
                "sum of boundary heat flows + heat source = {:e} W/m against {scale:e} W/m: not finite (a heat flow or the source overflowed)",
                r.energy_imbalance
            )
        },
    }
}

/// Row-wise backward error of the free rows of `K·T = f` (the rows the solver solved):
/// `max_i |r_i| / (Σ_j |K_ij|·‖T‖∞ + |f_i|)` over the free nodes `i`, with `r = K·T − f`. Each
/// row is measured against its own coefficients, so an error in a poorly conducting material
/// is not hidden by a well conducting one. A backward stable solve gives a few ε whatever the
/// film coefficients and conductivity contrast; the tolerance is
/// [`RESIDUAL_ROUNDOFF_FACTOR`]·ε·√n_F.
fn solver_residual(system: &System, temperature: &[f64], rows: &RowTerms) -> Check {
    let free: Vec<usize> = (0..system.node_count())
        .filter(|&i| system.fixed[i].is_none())
        .collect();
    let t_norm = temperature.iter().fold(0.0f64, |m, t| m.max(t.abs()));
    let (mut value, mut r_norm) = (0.0f64, 0.0f64);
    for &i in &free {
        let r = rows.residual[i].abs();
        r_norm = r_norm.max(r);
        let denominator = rows.row_sum[i] * t_norm + system.load[i].abs();
        if r > 0.0 || !denominator.is_finite() {
            value = value.max(post::flows::relative_to(r, denominator));
        }
        if value.is_nan() {
            break;
        }
    }
    let tolerance = RESIDUAL_ROUNDOFF_FACTOR * f64::EPSILON * (free.len().max(1) as f64).sqrt();
    Check {
        name: "solver_residual".into(),
        value,
        tolerance,
        passed: within(value, tolerance),
        severity: Severity::Error,
        detail: format!(
            "row-wise backward error of the solved rows max |K·T − f|_i / (Σ_j|K_ij|·‖T‖∞ + |f_i|) = {value:.3e} over {} free nodes (largest residual {r_norm:.3e} W/m)",
            free.len()
        ),
    }
}

/// Ids of the boundaries some mesh edge carries, sorted.
pub(super) fn used_boundaries(mesh: &Mesh) -> Vec<usize> {
    let mut u: Vec<usize> = mesh
        .boundary_edges
        .iter()
        .filter_map(|e| e.boundary)
        .collect();
    u.sort_unstable();
    u.dedup();
    u
}

/// Range of the fixed, ambient and radiation surroundings temperatures of the used
/// boundaries, °C; a temperature that varies with position enters by its values at the
/// boundary's nodes (its extremes, being linear along each edge).
fn imposed_range(section: &Section, mesh: &Mesh, used: &[usize]) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for e in &mesh.boundary_edges {
        let Some(id) = e.boundary else { continue };
        let b = &section.boundaries[id];
        if b.field.is_none() {
            continue;
        }
        for &v in &e.nodes {
            if let Some(t) = b.value_at(mesh.nodes[v]) {
                lo = lo.min(t);
                hi = hi.max(t);
            }
        }
    }
    for &b in used {
        if section.boundaries[b].field.is_some() {
            continue;
        }
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
        if let Some(r) = section.radiation(b) {
            lo = lo.min(r.surroundings);
            hi = hi.max(r.surroundings);
        }
    }
    (lo, hi)
}

/// Without sources and imposed fluxes, temperatures lie within the imposed range (warning).
pub(super) fn maximum_principle(
    section: &Section,
    mesh: &Mesh,
    used: &[usize],
    r: &Results,
) -> Check {
    let (lo, hi) = imposed_range(section, mesh, used);
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
        detail: if excursion > tol {
            format!(
                "temperatures must lie within the fixed, ambient and surroundings range [{lo}, {hi}] °C; the {which} lies {excursion:.3e} K outside it at ({:.6}, {:.6})",
                at[0], at[1]
            )
        } else if excursion > 0.0 {
            format!(
                "all temperatures lie within the fixed and ambient range [{lo}, {hi}] °C to round-off (the {which} by {excursion:.3e} K outside)"
            )
        } else {
            format!("all temperatures lie within the fixed and ambient range [{lo}, {hi}] °C")
        },
    }
}

/// Error for a failed self-check of the base case or a load case (exit code 1).
pub fn failed_checks_error(solved: &Solved) -> Option<Error> {
    let base = solved.checks.iter().map(|c| (None, c));
    let cases = solved
        .cases
        .iter()
        .flat_map(|k| k.checks.iter().map(move |c| (Some(&k.name), c)));
    let failed: Vec<String> = base
        .chain(cases)
        .filter(|(_, c)| c.status() == CheckStatus::Failed)
        .map(|(case, c)| match case {
            Some(name) => format!("case {name}: {}: {}", c.name, c.detail),
            None => format!("{}: {}", c.name, c.detail),
        })
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
