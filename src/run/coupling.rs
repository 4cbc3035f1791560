//! Thermal coupling coefficients between declared environments, linear thermal
//! transmittances ψ and temperature factors f_Rsi — the building-physics results of a solved
//! section, in the terms of ISO 10211 (L2D, ψ) and ISO 13788 (f_Rsi).
//!
//! - **Coupling coefficients.** For each environment k one *unit solve* on the base
//!   factorisation: the boundaries of k at ambient 1 °C, every other convection boundary and
//!   every fixed boundary at 0 °C, fluxes and heat sources zero
//!   ([`Section::unit_environment_section`]). The heat entering through the boundaries of
//!   environment j in the unit solve of k is −L_kj (W/(m·K)): L_kj is the heat flow from k to
//!   j per kelvin of difference between them. The discrete system is symmetric, so L_kj = L_jk
//!   to round-off; both are computed and their difference is a self-check.
//! - **ψ** = L2D − Σ U·l over the declared one-dimensional reference (ISO 10211).
//! - **Temperature factor** (exactly two environments): for every boundary of either, the
//!   critical surface temperature of the solved base field — the lowest when the boundary's
//!   own environment is the warmer, the highest when it is the colder, so always the one
//!   giving the smallest factor — its place, and f_Rsi = (θ_si − θ_e)/(θ_i − θ_e), with θ_i
//!   the boundary's own environment's ambient and θ_e the other's (ISO 13788; for the warm
//!   side's surfaces this is the standard's θ_si,min).

use super::{Check, Severity};
use crate::error::{Error, Result};
use crate::fem::{self, LoadCase, System};
use crate::mesh::Mesh;
use crate::model::Section;
use crate::post::Results;
use crate::post::flows::boundary_results;
use crate::solve::{Factorized, PipelineSolver};
use serde::Serialize;

/// Largest accepted relative difference between L_kj and L_jk.
pub const RECIPROCITY_TOLERANCE: f64 = 1e-8;

/// The coupling coefficient between two environments.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CouplingPair {
    /// The two environments, in declaration (name) order.
    pub between: [String; 2],
    /// L2D, W/(m·K), from the unit solve of the first.
    pub value: f64,
    /// The same from the unit solve of the second (equal to round-off), W/(m·K).
    pub reciprocal: f64,
}

/// One ψ value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PsiResult {
    /// Junction name.
    pub name: String,
    /// The environments whose coupling is taken.
    pub coupling: [String; 2],
    /// L2D between them, W/(m·K).
    pub l2d: f64,
    /// Σ U·l of the reference, W/(m·K).
    pub reference: f64,
    /// ψ = L2D − Σ U·l, W/(m·K).
    pub psi: f64,
}

/// The temperature factor of one boundary.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TemperatureFactor {
    /// Boundary name.
    pub boundary: String,
    /// Its environment.
    pub environment: String,
    /// The other environment.
    pub other: String,
    /// The critical nodal temperature on the boundary (lowest when the boundary's own
    /// environment is the warmer, highest when the colder), °C.
    pub surface_temperature: f64,
    /// True when `surface_temperature` is the highest (own environment the colder).
    pub highest: bool,
    /// Where it occurs (the lowest-numbered such node), m.
    pub at: [f64; 2],
    /// θ_i: the boundary's own environment's ambient, °C.
    pub ambient_own: f64,
    /// θ_e: the other environment's ambient, °C.
    pub ambient_other: f64,
    /// f_Rsi; `None` when the two ambients are equal (undefined).
    pub f_rsi: Option<f64>,
    /// True when f_Rsi lies below the declared `f_rsi_min`.
    pub below_minimum: bool,
}

/// Everything computed from the declared environments.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Coupling {
    /// Environment names, in name order.
    pub environments: Vec<String>,
    /// L_kj for every pair k < j.
    pub pairs: Vec<CouplingPair>,
    /// ψ per `[[psi]]` entry.
    pub psi: Vec<PsiResult>,
    /// Temperature factors (exactly two environments only; else empty).
    pub temperature_factors: Vec<TemperatureFactor>,
    /// The declared lowest acceptable f_Rsi.
    pub f_rsi_min: Option<f64>,
}

impl Coupling {
    /// L2D between environments `a` and `b` (indices), W/(m·K).
    pub fn l2d(&self, a: usize, b: usize) -> Option<f64> {
        let (lo, hi) = (a.min(b), a.max(b));
        let names = [&self.environments[lo], &self.environments[hi]];
        self.pairs
            .iter()
            .find(|p| [&p.between[0], &p.between[1]] == names)
            .map(|p| p.value)
    }
}

/// The coupling results of a solved base case, or `None` without environments; also the
/// reciprocity self-check and the warnings (undefined or low temperature factors).
pub fn coupling(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    factor: &Factorized<PipelineSolver>,
    base: &Results,
) -> Result<Option<(Coupling, Check, Vec<String>)>> {
    let envs = &section.environments;
    if envs.is_empty() {
        return Ok(None);
    }
    let n = envs.list.len();
    // inflow[k][j]: heat entering through the boundaries of j in the unit solve of k, W/m.
    let mut inflow = vec![vec![0.0; n]; n];
    for (k, row) in inflow.iter_mut().enumerate() {
        let unit = section
            .unit_environment_section(k)
            .ok_or_else(|| Error::run(format!("internal: environment {k} of {n}")))?;
        let load = fem::assemble_load(&unit, mesh, &LoadCase::from_section(&unit))?;
        let solution = factor.solve(&load.vector, &load.fixed)?;
        let residual = system.residual_with_load(&load.vector, &solution.temperature)?;
        let flows = boundary_results(&unit, mesh, &residual, &solution.temperature)?;
        for (j, env) in envs.list.iter().enumerate() {
            row[j] = flows
                .iter()
                .filter(|f| {
                    env.boundaries
                        .iter()
                        .any(|&b| section.boundaries[b].name == f.name)
                })
                .map(|f| f.heat_flow)
                .sum();
        }
    }
    let names: Vec<String> = envs.list.iter().map(|e| e.name.clone()).collect();
    let mut pairs = Vec::new();
    let mut worst: f64 = 0.0;
    for a in 0..n {
        for b in a + 1..n {
            let value = -inflow[a][b];
            let reciprocal = -inflow[b][a];
            let scale = value.abs().max(reciprocal.abs());
            if scale > 0.0 {
                worst = worst.max((value - reciprocal).abs() / scale);
            }
            pairs.push(CouplingPair {
                between: [names[a].clone(), names[b].clone()],
                value,
                reciprocal,
            });
        }
    }
    let check = Check {
        name: "coupling_reciprocity".to_string(),
        value: worst,
        tolerance: RECIPROCITY_TOLERANCE,
        passed: worst <= RECIPROCITY_TOLERANCE,
        severity: Severity::Error,
        detail: format!(
            "largest relative difference between L_kj and L_jk of the unit solves {worst:.3e} (the discrete system is symmetric, so they agree to round-off)"
        ),
    };
    let mut out = Coupling {
        environments: names,
        pairs,
        psi: Vec::new(),
        temperature_factors: Vec::new(),
        f_rsi_min: envs.f_rsi_min,
    };
    out.psi = envs
        .psi
        .iter()
        .map(|p| {
            let [a, b] = p.coupling;
            let l2d = out.l2d(a, b).unwrap_or(f64::NAN);
            let reference = p.reference_coupling();
            PsiResult {
                name: p.name.clone(),
                coupling: [out.environments[a].clone(), out.environments[b].clone()],
                l2d,
                reference,
                psi: l2d - reference,
            }
        })
        .collect();
    let mut warnings = Vec::new();
    if n == 2 {
        out.temperature_factors = temperature_factors(section, mesh, base, &mut warnings);
    }
    Ok(Some((out, check, warnings)))
}

/// f_Rsi of every boundary of the two environments, from the base field.
fn temperature_factors(
    section: &Section,
    mesh: &Mesh,
    base: &Results,
    warnings: &mut Vec<String>,
) -> Vec<TemperatureFactor> {
    let envs = &section.environments;
    let mut out = Vec::new();
    for (k, env) in envs.list.iter().enumerate() {
        let other = &envs.list[1 - k];
        for &b in &env.boundaries {
            let (ti, te) = (env.ambient, other.ambient);
            let highest = ti < te;
            let Some((t_min, node)) = surface_extreme(mesh, base, b, highest) else {
                continue;
            };
            let name = &section.boundaries[b].name;
            let f_rsi = (ti != te).then(|| (t_min - te) / (ti - te));
            let below_minimum = matches!((f_rsi, envs.f_rsi_min), (Some(f), Some(m)) if f < m);
            match f_rsi {
                None => warnings.push(format!(
                    "temperature factor of boundary \"{name}\" is undefined: environments \"{}\" and \"{}\" have the same ambient {ti} °C",
                    env.name, other.name
                )),
                Some(f) if below_minimum => warnings.push(format!(
                    "temperature factor of boundary \"{name}\": f_Rsi = {f:.3} is below f_rsi_min = {} ({} surface temperature {t_min:.2} °C at {})",
                    envs.f_rsi_min.unwrap_or(0.0),
                    if highest { "highest" } else { "lowest" },
                    crate::geom::format_point(mesh.nodes[node])
                )),
                Some(_) => {}
            }
            out.push(TemperatureFactor {
                boundary: name.clone(),
                environment: env.name.clone(),
                other: other.name.clone(),
                surface_temperature: t_min,
                highest,
                at: mesh.nodes[node],
                ambient_own: ti,
                ambient_other: te,
                f_rsi,
                below_minimum,
            });
        }
    }
    out
}

/// The lowest (or with `highest` the highest) nodal temperature on the edges of boundary `b`
/// and its node (the lowest node number among equal extremes); `None` when the boundary has
/// no edge on the mesh.
fn surface_extreme(mesh: &Mesh, base: &Results, b: usize, highest: bool) -> Option<(f64, usize)> {
    let sign = if highest { -1.0 } else { 1.0 };
    let mut best: Option<(f64, usize)> = None;
    for e in mesh.boundary_edges.iter().filter(|e| e.boundary == Some(b)) {
        for v in e.nodes {
            let t = sign * base.temperature[v];
            best = match best {
                Some((bt, bv)) if bt < t || (bt == t && bv <= v) => Some((bt, bv)),
                _ => Some((t, v)),
            };
        }
    }
    best.map(|(t, v)| (sign * t, v))
}
