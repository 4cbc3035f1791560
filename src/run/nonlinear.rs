//! The pipeline of a nonlinear model (a conductivity table or a radiating boundary): the
//! linear part assembled once, a starting field from a linear solve, the Picard or Newton
//! iteration (`solve::nonlinear`), post-processing on the final secant system (so reactions,
//! fluxes and flows use the same k(T̄_e) and radiation quadrature as the iteration), and the
//! self-checks of a nonlinear run: energy balance to round-off once the iteration's remainder
//! is accounted for, the final residual of the nonlinear system, the maximum principle.

use super::*;
use crate::fem::nonlinear::NonlinearSystem;
use crate::solve::nonlinear as iteration;

/// Mean of the fixed, ambient and surroundings temperatures of the used boundaries (°C), the
/// temperature at which table materials start.
fn reference_temperature(section: &Section, used: &[usize]) -> f64 {
    let mut values = Vec::new();
    for &b in used {
        match section.boundaries[b].kind {
            BoundaryKind::Fixed { temperature } => values.push(temperature),
            BoundaryKind::Convection { ambient, .. } => values.push(ambient),
            _ => {}
        }
        if let Some(r) = section.radiation(b) {
            values.push(r.surroundings);
        }
    }
    if values.is_empty() {
        0.0
    } else {
        values.iter().sum::<f64>() / values.len() as f64
    }
}

/// Solves a nonlinear model on `mesh` with `method`; see the module doc. The iteration's
/// failure (no convergence after the cap) is an error with the history (exit 1).
pub fn solve_nonlinear(prepared: Prepared, mesh: Mesh, mesh_s: f64) -> Result<Solved> {
    let section = &prepared.section;
    let t1 = Instant::now();
    let sys = NonlinearSystem::new(section, &mesh)?;
    let used = checks::used_boundaries(&mesh);
    let t2 = Instant::now();
    let start = solve::solve_system(&sys.start_system(reference_temperature(section, &used)))?;
    let outcome = iteration::iterate(&sys, start.temperature, prepared.nonlinear)?;
    let system = sys.secant_system(&mesh, &outcome.temperature);
    let solution = Solution {
        residual_relative: free_relative_residual(&system, &outcome.temperature)?,
        temperature: outcome.temperature.clone(),
    };
    let t3 = Instant::now();
    let results = post::postprocess(section, &mesh, &system, &solution)?;
    let error_estimate = estimate::zz_estimate(section, &mesh, &system, &results)?;
    let t4 = Instant::now();
    let mut warnings = prepared.warnings();
    if prepared.solver == solve::SolverChoice::Amg {
        warnings.push(
            "--solver amg applies to linear models; this nonlinear model is solved by its own factorisations (--nonlinear)".into(),
        );
    }
    warnings.extend(crate::mesh::contact::unmet_warnings(
        &prepared.section,
        &mesh,
    ));
    for w in results
        .warnings
        .iter()
        .chain(&table_warnings(section, &mesh, &solution.temperature))
    {
        if !warnings.contains(w) {
            warnings.push(w.clone());
        }
    }
    let checks = nonlinear_checks(section, &mesh, &system, &results)?;
    for c in &checks {
        if c.status() == CheckStatus::Warning {
            warnings.push(format!("self-check {}: {}", c.name, c.detail));
        }
    }
    Ok(Solved {
        mesh,
        system,
        solution,
        results,
        error_estimate,
        adaptivity: Vec::new(),
        cases: Vec::new(),
        coupling: None,
        checks,
        warnings,
        timings: Timings {
            mesh_s,
            assemble_s: (t2 - t1).as_secs_f64(),
            solve_s: (t3 - t2).as_secs_f64(),
            post_s: (t4 - t3).as_secs_f64(),
            ..Timings::default()
        },
        nonlinear: Some(outcome),
        solver: None,
        mesh_files: None,
        prepared,
    })
}

/// `‖R_f‖₂ / ‖f_f‖₂` of the free rows of the secant system (0 when the load is zero).
fn free_relative_residual(system: &System, t: &[f64]) -> Result<f64> {
    let r = system.residual(t)?;
    let (mut rr, mut ff) = (0.0, 0.0);
    for (i, f) in system.fixed.iter().enumerate() {
        if f.is_none() {
            rr += r[i] * r[i];
            ff += system.load[i] * system.load[i];
        }
    }
    Ok(if ff > 0.0 { (rr / ff).sqrt() } else { 0.0 })
}

/// A warning per table material whose field leaves its table (k held at the end value), with
/// the range reached.
fn table_warnings(section: &Section, mesh: &Mesh, t: &[f64]) -> Vec<String> {
    let n = section.materials.len();
    let mut lo = vec![f64::INFINITY; n];
    let mut hi = vec![f64::NEG_INFINITY; n];
    for (tri, ids) in mesh.triangles.iter().enumerate() {
        let m = mesh.material[tri];
        for &v in ids {
            lo[m] = lo[m].min(t[v]);
            hi[m] = hi[m].max(t[v]);
        }
    }
    let mut out = Vec::new();
    for (m, mat) in section.materials.iter().enumerate() {
        let Some(table) = section.conductivity_table(m) else {
            continue;
        };
        let (a, b) = table.range();
        if lo[m] < a || hi[m] > b {
            out.push(format!(
                "materials.{}: the field reaches {} … {} °C, beyond its conductivity table [{a}, {b}] °C; k is held at the end value outside the table",
                mat.name,
                crate::text::fixed(lo[m], 3),
                crate::text::fixed(hi[m], 3)
            ));
        }
    }
    out
}

/// Self-checks of a nonlinear run: energy balance, final residual, maximum principle.
fn nonlinear_checks(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    r: &Results,
) -> Result<Vec<Check>> {
    let residual = system.residual(&r.temperature)?;
    let free: Vec<usize> = (0..system.node_count())
        .filter(|&i| system.fixed[i].is_none())
        .collect();
    let (lo, hi) = (r.t_min.value, r.t_max.value);
    let range = (hi - lo).max(1.0);
    let mut checks = vec![
        balance_check(system, r, &residual, &free)?,
        residual_check(system, &residual, &free, range, &r.temperature),
    ];
    let used = checks::used_boundaries(mesh);
    let has_source = section.has_source();
    let has_flux = used
        .iter()
        .any(|&b| matches!(section.boundaries[b].kind, BoundaryKind::Flux { flux } if flux != 0.0));
    if !has_source && !has_flux {
        checks.push(checks::maximum_principle(section, mesh, &used, r));
    }
    Ok(checks)
}

/// The energy balance of the post-processed flows against the iteration's remainder: Σ
/// boundary heat flows + source equals −Σ_free R_i identically, so the difference is
/// round-off (tolerance as for a linear run, [`BALANCE_ROUNDOFF_FACTOR`]·ε·S / D); the
/// remainder itself is bounded by the `nonlinear_residual` check.
fn balance_check(system: &System, r: &Results, residual: &[f64], free: &[usize]) -> Result<Check> {
    let remainder: f64 = -free.iter().map(|&i| residual[i]).sum::<f64>();
    let floor = post::flows::balance_floor(system, &r.temperature);
    let scale = post::flows::balance_scale(&r.boundaries, r.heat_source, floor);
    let mut roundoff: f64 = system.cell_source.iter().map(|q| q.abs()).sum::<f64>()
        + system
            .point_source
            .iter()
            .map(|p| p.power.abs())
            .sum::<f64>();
    for (row, f) in system.matrix.outer_iterator().zip(&system.load) {
        roundoff += f.abs();
        for (j, v) in row.iter() {
            roundoff += (v * r.temperature[j]).abs();
        }
    }
    let value = post::flows::relative_to(r.energy_imbalance - remainder, scale);
    let tolerance = BALANCE_ROUNDOFF_FACTOR * f64::EPSILON * roundoff / scale;
    let passed = value.is_finite() && value <= tolerance;
    Ok(Check {
        name: "energy_balance".into(),
        value,
        tolerance,
        passed,
        severity: Severity::Error,
        detail: format!(
            "sum of boundary heat flows (radiation included) + heat source = {:.3e} W/m; the nonlinear system's remainder −Σ_free R = {:.3e} W/m; difference relative {:.3e} to {:.3e} W/m (heat flowing); round-off allows {:.3e}",
            r.energy_imbalance, remainder, value, scale, tolerance
        ),
    })
}

/// The final residual of the nonlinear system, row-wise: `max_i |R_i| / (Σ_j |S_ij|·ΔT_ref +
/// |b_i|)` over free nodes, with S, b the secant system and ΔT_ref = max(temperature range,
/// 1 K). The iteration stops when its update is at most 1e-8·ΔT_ref, which leaves a residual
/// of that order relative to the row's conductance; the tolerance is that plus the round-off
/// of a linear solve ([`RESIDUAL_ROUNDOFF_FACTOR`]·ε·√n_F·‖T‖∞/ΔT_ref).
fn residual_check(
    system: &System,
    residual: &[f64],
    free: &[usize],
    range: f64,
    temperature: &[f64],
) -> Check {
    let mut value = 0.0f64;
    let mut largest = 0.0f64;
    for &i in free {
        let row = system.matrix.outer_view(i);
        let sum: f64 = row.map_or(0.0, |row| row.iter().map(|(_, v)| v.abs()).sum());
        let d = sum * range + system.load[i].abs();
        largest = largest.max(residual[i].abs());
        value = value.max(post::flows::relative_to(residual[i].abs(), d));
    }
    let t_norm = temperature.iter().fold(0.0f64, |m, t| m.max(t.abs()));
    let tolerance = iteration::UPDATE_TOLERANCE
        + RESIDUAL_ROUNDOFF_FACTOR
            * f64::EPSILON
            * (free.len().max(1) as f64).sqrt()
            * (t_norm / range).max(1.0);
    Check {
        name: "nonlinear_residual".into(),
        value,
        tolerance,
        passed: value.is_finite() && value <= tolerance,
        severity: Severity::Error,
        detail: format!(
            "final residual of the nonlinear system max |R_i| / (Σ_j|S_ij|·max(ΔT, 1 K) + |b_i|) = {value:.3e} over {} free nodes (largest residual {largest:.3e} W/m)",
            free.len()
        ),
    }
}
