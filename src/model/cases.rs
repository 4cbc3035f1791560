//! Load cases (`[[cases]]`): the serde mirrors of the TOML, their validation into [`Case`]s and
//! the section of one case ([`Section::case_section`]).
//!
//! A case overrides values of existing boundaries (only the value keys of the boundary's own
//! kind) and materials (`heat_source`, `conductivity`); everything else is the base model's.

use super::conductivity::conductivity_law;
use super::suggest::{did_you_mean, known_list};
use super::validate::{
    check_bounded, check_case_unique, check_name, check_temperature, film_or_resistance,
};
use super::{
    Boundary, BoundaryKind, MAX_ABS_FLUX, MAX_ABS_HEAT_SOURCE, Material, ModelFile, Section,
};
use crate::error::{Error, Result, printable};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Most load cases in one model file.
pub const MAX_CASES: usize = 1000;

/// Stems of the files of a result set beside the case directories: a case may not take one
/// (ignoring case), so that `DIR/CASE/` never shares its name with the stem of a file of the
/// set (`cases.csv`, `field.vtu`, …). Line files (`line-NAME.csv`) are refused by their stem too.
pub const RESERVED_CASE_NAMES: [&str; 6] =
    ["boundaries", "cases", "field", "nodes", "probes", "summary"];

/// `[[cases]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CaseFile {
    /// Case name (a directory name of the result set).
    pub name: String,
    /// `[cases.boundaries.NAME]`: new values of existing boundaries.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub boundaries: BTreeMap<String, CaseBoundaryFile>,
    /// `[cases.materials.NAME]`: new values of existing materials.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub materials: BTreeMap<String, CaseMaterialFile>,
}

/// `[cases.boundaries.NAME]` as written: the value keys of the boundary kinds.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CaseBoundaryFile {
    /// Fixed temperature, °C (kind fixed); a number (a field is refused by name).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature: Option<super::FieldFile>,
    /// Film coefficient, W/(m²·K) (kind convection).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub h: Option<f64>,
    /// Surface resistance R_s = 1/h, m²·K/W (kind convection, instead of `h`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resistance: Option<f64>,
    /// Ambient temperature, °C (kind convection); a number (a field is refused by name).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ambient: Option<super::FieldFile>,
    /// Imposed flux, W/m², positive into the section (kind flux).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flux: Option<f64>,
}

/// `[cases.materials.NAME]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CaseMaterialFile {
    /// New conductivity, W/(m·K), written as the material's `conductivity` is.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub conductivity: Option<super::ConductivityFile>,
    /// Degrees from the x axis to the major direction (anisotropic materials only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orientation: Option<f64>,
    /// New heat source per volume, W/m³.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub heat_source: Option<super::FieldFile>,
}

/// A boundary's condition in one case (same kind as the base, values resolved).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CaseBoundary {
    /// Boundary id.
    pub id: usize,
    /// The condition in this case.
    pub kind: BoundaryKind,
    /// Surface resistance R_s, m²·K/W, when the film coefficient of this case was given (by
    /// the case, or by the base boundary the case leaves it to) as `resistance`.
    pub resistance: Option<f64>,
}

/// A material's values in one case (resolved: base values where the case gives none).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CaseMaterial {
    /// Material id.
    pub id: usize,
    /// The conductivity law in this case.
    pub conductivity: super::ConductivityLaw,
    /// W/m³
    pub heat_source: f64,
}

/// A validated load case.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Case {
    /// Case name.
    pub name: String,
    /// Overridden boundaries, by id.
    pub boundaries: Vec<CaseBoundary>,
    /// Overridden materials, by id.
    pub materials: Vec<CaseMaterial>,
}

impl Section {
    /// The section of case `i` of [`Section::cases`]: the base section with the case's values
    /// and no cases of its own. `None` when there is no such case.
    pub fn case_section(&self, i: usize) -> Option<Section> {
        let case = self.cases.get(i)?;
        let mut s = self.clone();
        s.cases.clear();
        for b in &case.boundaries {
            s.boundaries[b.id].kind = b.kind;
            s.boundaries[b.id].resistance = b.resistance;
        }
        for m in &case.materials {
            s.materials[m.id].conductivity = m.conductivity;
            s.materials[m.id].heat_source = m.heat_source;
        }
        Some(s)
    }

    /// True when case `i` changes the matrix (a film coefficient or a conductivity differs
    /// from the base), so that it needs a factorisation of its own; false when only its load
    /// differs (fixed temperatures, ambients, fluxes, sources).
    pub fn case_changes_matrix(&self, i: usize) -> bool {
        let Some(case) = self.cases.get(i) else {
            return false;
        };
        let h_changes = case.boundaries.iter().any(|b| {
            matches!(
                (b.kind, self.boundaries[b.id].kind),
                (BoundaryKind::Convection { h, .. }, BoundaryKind::Convection { h: h0, .. }) if h != h0
            )
        });
        let k_changes = case
            .materials
            .iter()
            .any(|m| m.conductivity != self.materials[m.id].conductivity);
        h_changes || k_changes
    }
}

/// The `[[cases]]` of a model file, validated against its boundaries and materials.
///
/// Check point for nonlinear models: once a boundary kind or material law makes the model
/// nonlinear (radiation, k(T)), load cases are refused here (exit 2) until they are solved
/// case by case; no nonlinear physics exists today.
pub(super) fn validate_cases(
    file: &ModelFile,
    materials: &[Material],
    boundaries: &[Boundary],
) -> Result<Vec<Case>> {
    if file.cases.len() > MAX_CASES {
        return Err(Error::input(format!(
            "cases: {} load cases, above the limit of {MAX_CASES}",
            file.cases.len()
        )));
    }
    let mut seen = BTreeMap::new();
    let mut cases = Vec::with_capacity(file.cases.len());
    for (i, c) in file.cases.iter().enumerate() {
        let label = format!("cases[{i}] \"{}\"", printable(&c.name));
        check_case_name(&label, &c.name, file, &mut seen)?;
        let boundaries = c
            .boundaries
            .iter()
            .map(|(name, b)| case_boundary(&label, name, b, boundaries))
            .collect::<Result<Vec<_>>>()?;
        let materials = c
            .materials
            .iter()
            .map(|(name, m)| case_material(&label, name, m, materials))
            .collect::<Result<Vec<_>>>()?;
        cases.push(Case {
            name: c.name.clone(),
            boundaries,
            materials,
        });
    }
    Ok(cases)
}

/// A case name: the rules of other names, unique ignoring case, and not the stem of a file of
/// the result set ([`RESERVED_CASE_NAMES`], `line-NAME` of the model's lines).
fn check_case_name(
    label: &str,
    name: &str,
    file: &ModelFile,
    seen: &mut BTreeMap<String, String>,
) -> Result<()> {
    check_name(label, name, "case")?;
    check_case_unique(label, name, "case", seen)?;
    let lower = name.to_ascii_lowercase();
    let line_stem = file
        .lines
        .iter()
        .any(|l| format!("line-{}", l.name).to_ascii_lowercase() == lower);
    if RESERVED_CASE_NAMES.contains(&lower.as_str()) || line_stem {
        return Err(Error::input(format!(
            "{label}: the case name is the stem of a file of the result set ({}.csv, .vtu, .json or line-NAME.csv); choose another name",
            printable(name)
        )));
    }
    Ok(())
}

/// One `[cases.boundaries.NAME]`: an existing boundary, only its kind's value keys, the ranges
/// of the base values.
fn case_boundary(
    label: &str,
    name: &str,
    b: &CaseBoundaryFile,
    boundaries: &[Boundary],
) -> Result<CaseBoundary> {
    let item = format!("{label}: boundaries.{}", printable(name));
    let Some(id) = boundaries.iter().position(|x| x.name == name) else {
        let names: Vec<String> = boundaries.iter().map(|x| x.name.clone()).collect();
        return Err(Error::input(format!(
            "{item}: no such boundary (a case changes values of the boundaries under [boundaries]; defined: {}){}",
            known_list(names.iter()),
            did_you_mean(name, names.iter())
        )));
    };
    let base = boundaries[id].kind;
    let allowed: &[&str] = match base {
        BoundaryKind::Fixed { .. } => &["temperature"],
        BoundaryKind::Insulated | BoundaryKind::Radiation { .. } => &[],
        BoundaryKind::Flux { .. } => &["flux"],
        BoundaryKind::Convection { .. } => &["h", "resistance", "ambient"],
    };
    let present = [
        ("temperature", b.temperature.is_some()),
        ("h", b.h.is_some()),
        ("resistance", b.resistance.is_some()),
        ("ambient", b.ambient.is_some()),
        ("flux", b.flux.is_some()),
    ];
    for (key, is) in present {
        if is && !allowed.contains(&key) {
            return Err(Error::input(format!(
                "{item}: key `{key}` does not apply to the boundary's kind \"{}\"{} (a case keeps the kind)",
                base.name(),
                if allowed.is_empty() {
                    " (it takes no values)".to_string()
                } else {
                    format!(" (it takes: {})", allowed.join(", "))
                }
            )));
        }
    }
    let mut resistance = None;
    let kind = match base {
        BoundaryKind::Fixed { temperature } => {
            let t = case_number(&item, "temperature", &b.temperature, &boundaries[id].field)?
                .unwrap_or(temperature);
            check_temperature(t, &format!("{item}: temperature"))?;
            BoundaryKind::Fixed { temperature: t }
        }
        BoundaryKind::Insulated => BoundaryKind::Insulated,
        BoundaryKind::Radiation { .. } => base,
        BoundaryKind::Flux { flux } => {
            let q = b.flux.unwrap_or(flux);
            check_bounded(q, MAX_ABS_FLUX, &format!("{item}: flux"), "W/m²")?;
            BoundaryKind::Flux { flux: q }
        }
        BoundaryKind::Convection { h, ambient } => {
            let h = if b.h.is_none() && b.resistance.is_none() {
                resistance = boundaries[id].resistance;
                h
            } else {
                resistance = b.resistance;
                film_or_resistance(&item, b.h, b.resistance)?
            };
            let a = case_number(&item, "ambient", &b.ambient, &boundaries[id].field)?
                .unwrap_or(ambient);
            check_temperature(a, &format!("{item}: ambient"))?;
            BoundaryKind::Convection { h, ambient: a }
        }
    };
    Ok(CaseBoundary {
        id,
        kind,
        resistance,
    })
}

/// A case's number for `key`: a field form is refused, and so is any value for a key whose
/// base value varies with position (a case overrides numbers only).
fn case_number(
    item: &str,
    key: &str,
    v: &Option<super::FieldFile>,
    base: &Option<super::Field>,
) -> Result<Option<f64>> {
    let Some(v) = v else { return Ok(None) };
    let Some(n) = v.constant() else {
        return Err(Error::input(format!(
            "{item}.{key}: a load case takes a number here; a value that varies with position belongs in the base model (or a model of its own)"
        )));
    };
    if base.is_some() {
        return Err(Error::input(format!(
            "{item}.{key}: the base model's {key} varies with position; a load case cannot override it (solve the case as a model of its own)"
        )));
    }
    Ok(Some(n))
}

/// One `[cases.materials.NAME]`: an existing material, the ranges of the base values.
fn case_material(
    label: &str,
    name: &str,
    m: &CaseMaterialFile,
    materials: &[Material],
) -> Result<CaseMaterial> {
    let item = format!("{label}: materials.{}", printable(name));
    let Some(base) = materials.iter().find(|x| x.name == name) else {
        let names: Vec<String> = materials.iter().map(|x| x.name.clone()).collect();
        return Err(Error::input(format!(
            "{item}: no such material (a case changes values of the materials under [materials]; defined: {}){}",
            known_list(names.iter()),
            did_you_mean(name, names.iter())
        )));
    };
    let conductivity = case_conductivity(&item, m, base.conductivity)?;
    let field = base.source_field.map(super::Field::Linear);
    let heat_source =
        case_number(&item, "heat_source", &m.heat_source, &field)?.unwrap_or(base.heat_source);
    check_bounded(
        heat_source,
        MAX_ABS_HEAT_SOURCE,
        &format!("{item}: heat_source"),
        "W/m³",
    )?;
    Ok(CaseMaterial {
        id: base.id,
        conductivity,
        heat_source,
    })
}

/// A case's conductivity law: the base's when the case gives neither `conductivity` nor
/// `orientation`; a pair given without `orientation` keeps the base's orientation (0 for an
/// isotropic base); `orientation` alone turns the base's principal axes.
fn case_conductivity(
    item: &str,
    m: &CaseMaterialFile,
    base: super::ConductivityLaw,
) -> Result<super::ConductivityLaw> {
    let (base_file, base_orientation) = base.to_file();
    match (&m.conductivity, m.orientation) {
        (None, None) => Ok(base),
        (None, Some(_)) if base_orientation.is_none() => Err(Error::input(format!(
            "{item}: orientation needs an anisotropic material (conductivity = [k_major, k_minor] in the base or in the case)"
        ))),
        (None, Some(o)) => conductivity_law(item, &base_file, Some(o)),
        (Some(c @ super::ConductivityFile::Principal(_)), o) => {
            conductivity_law(item, c, o.or(base_orientation))
        }
        (Some(c), o) => conductivity_law(item, c, o),
    }
}

/// The cases as written back in the echo: every value of an overridden boundary or material,
/// resolved.
pub(super) fn case_files(section: &Section) -> Vec<CaseFile> {
    section
        .cases
        .iter()
        .map(|c| CaseFile {
            name: c.name.clone(),
            boundaries: c
                .boundaries
                .iter()
                .map(|b| {
                    let mut f = CaseBoundaryFile::default();
                    // a base value that varies with position is never overridden
                    let number =
                        |v: f64| section.boundaries[b.id].field.is_none().then(|| v.into());
                    match b.kind {
                        BoundaryKind::Fixed { temperature } => f.temperature = number(temperature),
                        BoundaryKind::Insulated | BoundaryKind::Radiation { .. } => {}
                        BoundaryKind::Flux { flux } => f.flux = Some(flux),
                        BoundaryKind::Convection { h, ambient } => {
                            match b.resistance {
                                Some(r) => f.resistance = Some(r),
                                None => f.h = Some(h),
                            }
                            f.ambient = number(ambient);
                        }
                    }
                    (section.boundaries[b.id].name.clone(), f)
                })
                .collect(),
            materials: c
                .materials
                .iter()
                .map(|m| {
                    let (conductivity, orientation) = m.conductivity.to_file();
                    let f = CaseMaterialFile {
                        conductivity: Some(conductivity),
                        orientation,
                        heat_source: section.materials[m.id]
                            .source_field
                            .is_none()
                            .then(|| m.heat_source.into()),
                    };
                    (section.materials[m.id].name.clone(), f)
                })
                .collect(),
        })
        .collect()
}
