//! The coupling results in summary.json (`environments`, `coupling_w_per_m_k`, `psi`,
//! `temperature_factors`, `f_rsi_min`): typed records with unit-suffixed keys.

use crate::model::Section;
use crate::run::coupling::Coupling;
use serde::Serialize;

#[derive(Serialize)]
struct EnvironmentOut<'a> {
    name: &'a str,
    ambient_c: f64,
    boundaries: Vec<&'a str>,
}

#[derive(Serialize)]
struct PairOut<'a> {
    between: [&'a str; 2],
    /// L2D from the unit solve of the first environment.
    value: f64,
    /// The same from the unit solve of the second.
    reciprocal: f64,
}

#[derive(Serialize)]
struct PsiOut<'a> {
    name: &'a str,
    coupling: [&'a str; 2],
    l2d_w_per_m_k: f64,
    reference_w_per_m_k: f64,
    psi_w_per_m_k: f64,
}

#[derive(Serialize)]
struct FactorOut<'a> {
    boundary: &'a str,
    environment: &'a str,
    other: &'a str,
    /// Lowest surface temperature (highest when the own environment is the colder).
    critical_surface_temperature_c: f64,
    /// "lowest" or "highest".
    critical: &'static str,
    at_m: [f64; 2],
    ambient_own_c: f64,
    ambient_other_c: f64,
    f_rsi: Option<f64>,
    below_minimum: bool,
}

/// The coupling part of summary.json, flattened into its top level.
#[derive(Serialize)]
pub(crate) struct CouplingOut<'a> {
    environments: Vec<EnvironmentOut<'a>>,
    coupling_w_per_m_k: Vec<PairOut<'a>>,
    psi: Vec<PsiOut<'a>>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    temperature_factors: Vec<FactorOut<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    f_rsi_min: Option<f64>,
}

/// The records of `c` (the coupling results of `section`).
pub(crate) fn coupling_out<'a>(section: &'a Section, c: &'a Coupling) -> CouplingOut<'a> {
    CouplingOut {
        environments: section
            .environments
            .list
            .iter()
            .map(|e| EnvironmentOut {
                name: &e.name,
                ambient_c: e.ambient,
                boundaries: e
                    .boundaries
                    .iter()
                    .map(|&b| section.boundaries[b].name.as_str())
                    .collect(),
            })
            .collect(),
        coupling_w_per_m_k: c
            .pairs
            .iter()
            .map(|p| PairOut {
                between: [&p.between[0], &p.between[1]],
                value: p.value,
                reciprocal: p.reciprocal,
            })
            .collect(),
        psi: c
            .psi
            .iter()
            .map(|p| PsiOut {
                name: &p.name,
                coupling: [&p.coupling[0], &p.coupling[1]],
                l2d_w_per_m_k: p.l2d,
                reference_w_per_m_k: p.reference,
                psi_w_per_m_k: p.psi,
            })
            .collect(),
        temperature_factors: c
            .temperature_factors
            .iter()
            .map(|f| FactorOut {
                boundary: &f.boundary,
                environment: &f.environment,
                other: &f.other,
                critical_surface_temperature_c: f.surface_temperature,
                critical: if f.highest { "highest" } else { "lowest" },
                at_m: f.at,
                ambient_own_c: f.ambient_own,
                ambient_other_c: f.ambient_other,
                f_rsi: f.f_rsi,
                below_minimum: f.below_minimum,
            })
            .collect(),
        f_rsi_min: c.f_rsi_min,
    }
}
