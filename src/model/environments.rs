//! Environments (`[environments]`) and linear thermal transmittances (`[[psi]]`): the serde
//! mirrors, their validation into [`Environments`], and the unit-temperature sections of the
//! coupling solves ([`Section::unit_environment_section`]).
//!
//! An environment is a named group of convection boundaries that share one ambient temperature
//! (a room, the outside air). The thermal coupling coefficient L2D between two environments and
//! the linear thermal transmittance ψ are defined in ISO 10211; the temperature factor f_Rsi in
//! ISO 13788. The run stage computes them; this module only checks what the user declared.

use super::suggest::{did_you_mean, known_list};
use super::validate::{check_case_unique, check_name};
use super::{Boundary, BoundaryKind, ModelFile, Section};
use crate::error::{Error, Result, printable};
use serde::de::{MapAccess, Visitor};
use serde::ser::SerializeMap;
use serde::{Deserialize, Deserializer, Serialize, Serializer};
use std::collections::BTreeMap;

/// The key of `[environments]` that is not an environment: the lowest acceptable temperature
/// factor.
pub const F_RSI_MIN_KEY: &str = "f_rsi_min";
/// Largest reference thermal transmittance accepted, W/(m²·K).
pub const MAX_REFERENCE_U: f64 = 1.0e4;
/// Most environments in one model.
pub const MAX_ENVIRONMENTS: usize = 100;

/// `[environments]` as written: `NAME = ["boundary", …]` per environment and the optional
/// number `f_rsi_min`.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct EnvironmentsFile {
    /// Environment name → boundary names, in name order.
    pub groups: BTreeMap<String, Vec<String>>,
    /// Lowest acceptable temperature factor f_Rsi (flagged below it).
    pub f_rsi_min: Option<f64>,
}

impl EnvironmentsFile {
    /// True when nothing is declared (the table is then left out of the echo).
    pub fn is_empty(&self) -> bool {
        self.groups.is_empty() && self.f_rsi_min.is_none()
    }
}

/// One value of `[environments]`: an environment's boundary list or `f_rsi_min`.
#[derive(Deserialize)]
#[serde(untagged)]
enum EnvironmentValue {
    Names(Vec<String>),
    Number(f64),
}

struct EnvironmentsVisitor;

impl<'de> Visitor<'de> for EnvironmentsVisitor {
    type Value = EnvironmentsFile;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(
            f,
            "a table of environments, NAME = [\"boundary\", …], and optionally {F_RSI_MIN_KEY} = a number"
        )
    }
    fn visit_map<A: MapAccess<'de>>(
        self,
        mut map: A,
    ) -> std::result::Result<Self::Value, A::Error> {
        let mut out = EnvironmentsFile::default();
        while let Some(key) = map.next_key::<String>()? {
            let value: EnvironmentValue = map.next_value().map_err(|_| {
                serde::de::Error::custom(format!(
                    "environments.{}: expected a list of boundary names{}",
                    printable(&key),
                    if key == F_RSI_MIN_KEY {
                        " or, for f_rsi_min, a number"
                    } else {
                        ""
                    }
                ))
            })?;
            match (key.as_str(), value) {
                (F_RSI_MIN_KEY, EnvironmentValue::Number(x)) => out.f_rsi_min = Some(x),
                (F_RSI_MIN_KEY, EnvironmentValue::Names(_)) => {
                    return Err(serde::de::Error::custom(
                        "environments.f_rsi_min: expected a number (the lowest acceptable temperature factor); an environment may not be named f_rsi_min",
                    ));
                }
                (_, EnvironmentValue::Names(v)) => {
                    out.groups.insert(key, v);
                }
                (_, EnvironmentValue::Number(_)) => {
                    return Err(serde::de::Error::custom(format!(
                        "environments.{}: expected a list of boundary names, got a number (only {F_RSI_MIN_KEY} takes a number)",
                        printable(&key)
                    )));
                }
            }
        }
        Ok(out)
    }
}

impl<'de> Deserialize<'de> for EnvironmentsFile {
    fn deserialize<D: Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        d.deserialize_map(EnvironmentsVisitor)
    }
}

impl Serialize for EnvironmentsFile {
    fn serialize<S: Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.groups.len() + 1))?;
        for (k, v) in &self.groups {
            m.serialize_entry(k, v)?;
        }
        if let Some(x) = self.f_rsi_min {
            m.serialize_entry(F_RSI_MIN_KEY, &x)?;
        }
        m.end()
    }
}

/// The schema of `[environments]`, matching its hand-written reader: any key is an environment
/// (a list of boundary names) except `f_rsi_min` (a number).
impl schemars::JsonSchema for EnvironmentsFile {
    fn schema_name() -> std::borrow::Cow<'static, str> {
        "EnvironmentsFile".into()
    }
    fn json_schema(_: &mut schemars::SchemaGenerator) -> schemars::Schema {
        schemars::json_schema!({
            "description": "`[environments]`: NAME = [\"boundary\", …] per environment (a room, the outside air: convection boundaries sharing one ambient, °C), and optionally f_rsi_min.",
            "type": "object",
            "properties": {
                F_RSI_MIN_KEY: {
                    "description": "Lowest acceptable temperature factor f_Rsi, dimensionless (0 to 1); factors below it are flagged.",
                    "type": "number"
                }
            },
            "additionalProperties": {
                "description": "An environment: the names of its convection boundaries.",
                "type": "array",
                "items": { "type": "string" }
            }
        })
    }
}

/// `[[psi]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PsiFile {
    /// Name of the junction.
    pub name: String,
    /// The two environments whose coupling coefficient L2D is taken.
    pub coupling: Vec<String>,
    /// The one-dimensional reference: thermal transmittance and length of each flanking
    /// element.
    pub reference: Vec<ReferenceFile>,
}

/// One flanking element of a ψ reference as written.
#[derive(Debug, Clone, Copy, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ReferenceFile {
    /// Thermal transmittance, W/(m²·K).
    pub u: f64,
    /// Length over which it applies, length in the model's length_unit (default m).
    pub length: f64,
}

/// A validated environment.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Environment {
    /// Environment name.
    pub name: String,
    /// Boundary ids (convection boundaries), ascending.
    pub boundaries: Vec<usize>,
    /// The ambient temperature its boundaries share, °C.
    pub ambient: f64,
}

/// A validated ψ declaration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Psi {
    /// Junction name.
    pub name: String,
    /// Environment indices (into [`Environments::list`]), as written.
    pub coupling: [usize; 2],
    /// (U in W/(m²·K), length in m) per flanking element.
    pub reference: Vec<(f64, f64)>,
}

impl Psi {
    /// Σ U·l of the reference, W/(m·K).
    pub fn reference_coupling(&self) -> f64 {
        self.reference.iter().map(|(u, l)| u * l).sum()
    }
}

/// The validated `[environments]` and `[[psi]]` tables.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Environments {
    /// Environments in name order.
    pub list: Vec<Environment>,
    /// Lowest acceptable temperature factor, if declared.
    pub f_rsi_min: Option<f64>,
    /// ψ declarations in file order.
    pub psi: Vec<Psi>,
}

impl Environments {
    /// True when no environment is declared (no coupling results are computed).
    pub fn is_empty(&self) -> bool {
        self.list.is_empty()
    }
}

/// Validates `[environments]` and `[[psi]]` against the boundary table.
pub(super) fn validate_environments(
    file: &ModelFile,
    boundaries: &[Boundary],
    boundary_ids: &BTreeMap<String, usize>,
) -> Result<Environments> {
    let env = &file.environments;
    if env.groups.is_empty() {
        if env.f_rsi_min.is_some() {
            return Err(Error::input(
                "environments.f_rsi_min: no environment is declared (declare two, e.g. inside = [\"room\"], outside = [\"air\"])",
            ));
        }
        if let Some(p) = file.psi.first() {
            return Err(Error::input(format!(
                "psi[0] \"{}\": no [environments] are declared to take the coupling between",
                printable(&p.name)
            )));
        }
        return Ok(Environments::default());
    }
    if env.groups.len() < 2 {
        return Err(Error::input(format!(
            "environments: {} environment declared; coupling coefficients need at least 2",
            env.groups.len()
        )));
    }
    if env.groups.len() > MAX_ENVIRONMENTS {
        return Err(Error::input(format!(
            "environments: {} environments, above the limit of {MAX_ENVIRONMENTS}",
            env.groups.len()
        )));
    }
    let mut owner: BTreeMap<usize, String> = BTreeMap::new();
    let mut seen = BTreeMap::new();
    let mut list = Vec::with_capacity(env.groups.len());
    for (name, names) in &env.groups {
        let label = format!("environments.{}", printable(name));
        check_name(&label, name, "environment")?;
        check_case_unique(&label, name, "environment", &mut seen)?;
        list.push(environment(
            &label,
            name,
            names,
            boundaries,
            boundary_ids,
            &mut owner,
        )?);
    }
    let f_rsi_min = match env.f_rsi_min {
        None => None,
        Some(x) if x.is_finite() && x > 0.0 && x <= 1.0 => {
            if list.len() != 2 {
                return Err(Error::input(format!(
                    "environments.f_rsi_min: temperature factors need exactly 2 environments, {} are declared",
                    list.len()
                )));
            }
            Some(x)
        }
        Some(x) => {
            return Err(Error::input(format!(
                "environments.f_rsi_min = {x}: must lie in (0, 1] (a temperature factor)"
            )));
        }
    };
    let psi = validate_psi(file, &list)?;
    Ok(Environments {
        list,
        f_rsi_min,
        psi,
    })
}

/// One environment: at least one boundary, each an existing convection boundary in no other
/// environment, all with the same ambient.
fn environment(
    label: &str,
    name: &str,
    names: &[String],
    boundaries: &[Boundary],
    boundary_ids: &BTreeMap<String, usize>,
    owner: &mut BTreeMap<usize, String>,
) -> Result<Environment> {
    if names.is_empty() {
        return Err(Error::input(format!(
            "{label}: lists no boundary (give the convection boundaries that face this environment)"
        )));
    }
    let mut ids = Vec::with_capacity(names.len());
    let mut ambient: Option<(f64, &str)> = None;
    for b in names {
        let Some(&id) = boundary_ids.get(b) else {
            return Err(Error::input(format!(
                "{label}: unknown boundary \"{}\" (defined: {}){}",
                printable(b),
                known_list(boundary_ids.keys()),
                did_you_mean(b, boundary_ids.keys())
            )));
        };
        let BoundaryKind::Convection { ambient: a, .. } = boundaries[id].kind else {
            return Err(Error::input(format!(
                "{label}: boundary \"{b}\" is {}, but an environment groups convection boundaries (its surface film and ambient define the environment)",
                boundaries[id].kind.name()
            )));
        };
        if boundaries[id].field.is_some() {
            return Err(Error::input(format!(
                "{label}: boundary \"{b}\" has an ambient that varies with position (boundaries.{b}.ambient); an environment needs one ambient temperature (give a number)"
            )));
        }
        if let Some(first) = owner.get(&id) {
            return Err(Error::input(format!(
                "{label}: boundary \"{b}\" already belongs to environment \"{first}\""
            )));
        }
        owner.insert(id, name.to_string());
        match ambient {
            None => ambient = Some((a, b)),
            Some((a0, b0)) if a0 != a => {
                return Err(Error::input(format!(
                    "{label}: boundaries \"{b0}\" (ambient {a0} °C) and \"{b}\" (ambient {a} °C) differ; the boundaries of one environment share one ambient"
                )));
            }
            Some(_) => {}
        }
        ids.push(id);
    }
    ids.sort_unstable();
    Ok(Environment {
        name: name.to_string(),
        boundaries: ids,
        ambient: ambient.map_or(0.0, |a| a.0),
    })
}

/// `[[psi]]` in file order: unique names, two different declared environments, at least one
/// reference element with 0 < U ≤ [`MAX_REFERENCE_U`] and a positive length.
fn validate_psi(file: &ModelFile, list: &[Environment]) -> Result<Vec<Psi>> {
    let mut seen = BTreeMap::new();
    let mut out = Vec::with_capacity(file.psi.len());
    let names: Vec<&String> = list.iter().map(|e| &e.name).collect();
    for (i, p) in file.psi.iter().enumerate() {
        let label = format!("psi[{i}] \"{}\"", printable(&p.name));
        check_name(&label, &p.name, "psi")?;
        check_case_unique(&label, &p.name, "psi", &mut seen)?;
        if p.coupling.len() != 2 {
            return Err(Error::input(format!(
                "{label}: coupling lists {} environment(s); give exactly 2, e.g. [\"inside\", \"outside\"]",
                p.coupling.len()
            )));
        }
        let mut coupling = [0usize; 2];
        for (k, c) in p.coupling.iter().enumerate() {
            coupling[k] = list.iter().position(|e| &e.name == c).ok_or_else(|| {
                Error::input(format!(
                    "{label}: coupling names unknown environment \"{}\" (declared: {}){}",
                    printable(c),
                    known_list(names.iter().copied()),
                    did_you_mean(c, names.iter().copied())
                ))
            })?;
        }
        if coupling[0] == coupling[1] {
            return Err(Error::input(format!(
                "{label}: coupling names environment \"{}\" twice; give two different environments",
                p.coupling[0]
            )));
        }
        if p.reference.is_empty() {
            return Err(Error::input(format!(
                "{label}: reference is empty; give the flanking elements, e.g. [{{ u = 0.25, length = 1.2 }}]"
            )));
        }
        let mut reference = Vec::with_capacity(p.reference.len());
        for (j, r) in p.reference.iter().enumerate() {
            if !(r.u.is_finite() && r.u > 0.0 && r.u <= MAX_REFERENCE_U) {
                return Err(Error::input(format!(
                    "{label}: reference[{j}].u = {}: a thermal transmittance in (0, {MAX_REFERENCE_U}] W/(m²·K)",
                    r.u
                )));
            }
            if !(r.length.is_finite() && r.length > 0.0 && r.length <= super::MAX_COORD * 4.0) {
                return Err(Error::input(format!(
                    "{label}: reference[{j}].length = {}: a positive length in m",
                    r.length
                )));
            }
            reference.push((r.u, r.length));
        }
        out.push(Psi {
            name: p.name.clone(),
            coupling,
            reference,
        });
    }
    Ok(out)
}

/// The declarations as written back in the model file's keys.
pub(super) fn environment_files(section: &Section) -> (EnvironmentsFile, Vec<PsiFile>) {
    let e = &section.environments;
    let groups = e
        .list
        .iter()
        .map(|env| {
            let names = env
                .boundaries
                .iter()
                .map(|&b| section.boundaries[b].name.clone())
                .collect();
            (env.name.clone(), names)
        })
        .collect();
    let psi = e
        .psi
        .iter()
        .map(|p| PsiFile {
            name: p.name.clone(),
            coupling: p.coupling.iter().map(|&i| e.list[i].name.clone()).collect(),
            reference: p
                .reference
                .iter()
                .map(|&(u, length)| ReferenceFile { u, length })
                .collect(),
        })
        .collect();
    (
        EnvironmentsFile {
            groups,
            f_rsi_min: e.f_rsi_min,
        },
        psi,
    )
}

impl Section {
    /// The section of the unit solve of environment `k` (for the coupling coefficients): the
    /// boundaries of environment `k` at ambient 1 °C, every other convection boundary at 0 °C,
    /// every fixed boundary at 0 °C, fluxes, heat sources and point source powers zero; film coefficients,
    /// conductivities, geometry unchanged (so the base matrix and its factorisation apply).
    /// Load cases, cuts, probes and lines are kept; environments too.
    pub fn unit_environment_section(&self, k: usize) -> Option<Section> {
        let env = self.environments.list.get(k)?;
        let mut s = self.clone();
        s.cases.clear();
        for m in &mut s.materials {
            m.heat_source = 0.0;
            m.source_field = None;
        }
        for p in &mut s.point_sources {
            p.power = 0.0;
        }
        for (id, b) in s.boundaries.iter_mut().enumerate() {
            b.field = None;
            b.kind = match b.kind {
                BoundaryKind::Fixed { .. } => BoundaryKind::Fixed { temperature: 0.0 },
                BoundaryKind::Insulated => BoundaryKind::Insulated,
                // Refused in a model with environments (model/nonlinear.rs).
                BoundaryKind::Radiation { .. } => b.kind,
                BoundaryKind::Flux { .. } => BoundaryKind::Flux { flux: 0.0 },
                BoundaryKind::Convection { h, .. } => BoundaryKind::Convection {
                    h,
                    ambient: if env.boundaries.contains(&id) {
                        1.0
                    } else {
                        0.0
                    },
                },
            };
        }
        Some(s)
    }
}
