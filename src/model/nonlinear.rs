//! The nonlinear parts of a model: temperature-dependent conductivity tables
//! (`conductivity = { table = [[T, k], …] }`) and surface radiation (`kind = "radiation"`, or
//! `emissivity`/`surroundings` on a convection boundary). Owns their validation (the table's
//! serde form is a variant of [`super::ConductivityFile`]), their echo, and the refusal of the linear-only
//! features (`[[cases]]`, `[environments]`, `[[psi]]`) in a nonlinear model.

use super::validate::{check_conductivity, check_temperature};
use super::{BoundaryFile, BoundaryKind, ModelFile, Section};
use crate::error::{Error, Result};
use serde::Serialize;

/// Stefan–Boltzmann constant, W/(m²·K⁴) (CODATA 2018, exact in the 2019 SI).
pub const STEFAN_BOLTZMANN: f64 = 5.670374419e-8;
/// Most points of one conductivity table.
pub const MAX_TABLE_POINTS: usize = 1000;

/// A validated conductivity table: k(T) piecewise linear between the points, constant beyond
/// the ends.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConductivityTable {
    /// (°C, W/(m·K)), T strictly increasing, at least two points.
    pub points: Vec<[f64; 2]>,
}

impl ConductivityTable {
    /// Conductivity at `t` °C, W/(m·K), and its slope dk/dT, W/(m·K²) (0 beyond the ends; the
    /// slope of the segment on the right at an inner point).
    pub fn eval(&self, t: f64) -> (f64, f64) {
        let p = &self.points;
        let last = p.len() - 1;
        if t <= p[0][0] {
            return (p[0][1], 0.0);
        }
        if t >= p[last][0] {
            return (p[last][1], 0.0);
        }
        // First point with T > t; 1 ≤ j ≤ last.
        let j = p.partition_point(|q| q[0] <= t);
        let (a, b) = (p[j - 1], p[j]);
        let slope = (b[1] - a[1]) / (b[0] - a[0]);
        (a[1] + slope * (t - a[0]), slope)
    }

    /// Lowest and highest temperature of the table, °C.
    pub fn range(&self) -> (f64, f64) {
        (self.points[0][0], self.points[self.points.len() - 1][0])
    }

    /// The representative constant conductivity kept in [`super::Material::conductivity`]: k at
    /// the middle of the table's temperature range, W/(m·K).
    pub fn middle(&self) -> f64 {
        let (lo, hi) = self.range();
        self.eval(0.5 * (lo + hi)).0
    }
}

/// Surface radiation of a boundary: `q = ε·σ·(T_s⁴ − T⁴)` into the section, T in kelvin.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Radiation {
    /// Emissivity, 0 < ε ≤ 1.
    pub emissivity: f64,
    /// Temperature of the surroundings, °C.
    pub surroundings: f64,
}

/// The nonlinear data of a section, indexed by material and boundary id.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Nonlinear {
    /// Per material id: its conductivity table, if it has one.
    pub tables: Vec<Option<ConductivityTable>>,
    /// Per boundary id: its radiation (kind `radiation`, or a convection boundary with
    /// `emissivity`).
    pub radiation: Vec<Option<Radiation>>,
}

impl Nonlinear {
    /// True when some material has a table or some boundary radiates.
    pub fn is_nonlinear(&self) -> bool {
        self.tables.iter().any(Option::is_some) || self.radiation.iter().any(Option::is_some)
    }
}

/// Validates one table: at least two and at most [`MAX_TABLE_POINTS`] points, finite
/// temperatures not below absolute zero and strictly increasing, conductivities within the
/// limits of a constant conductivity. `label` names the material.
pub(super) fn validate_table(label: &str, table: &[[f64; 2]]) -> Result<ConductivityTable> {
    if table.len() < 2 || table.len() > MAX_TABLE_POINTS {
        return Err(Error::input(format!(
            "{label}: conductivity table has {} points; give between 2 and {MAX_TABLE_POINTS} points [T, k]",
            table.len()
        )));
    }
    for (i, p) in table.iter().enumerate() {
        check_temperature(p[0], &format!("{label}: conductivity table point {i}: T"))?;
        check_conductivity(&format!("{label}: conductivity table point {i}"), p[1])?;
        if i > 0 && p[0] <= table[i - 1][0] {
            return Err(Error::input(format!(
                "{label}: conductivity table point {i}: T = {} °C must be greater than T = {} °C of point {} (temperatures strictly increasing)",
                p[0],
                table[i - 1][0],
                i - 1
            )));
        }
    }
    Ok(ConductivityTable {
        points: table.to_vec(),
    })
}

/// The emissivity and surroundings keys of one boundary: for kind `radiation` both required
/// (`required`), for kind `convection` optional (emissivity makes the edge radiate;
/// surroundings default to `default_surroundings`, the ambient).
pub(super) fn radiation_keys(
    name: &str,
    b: &BoundaryFile,
    default_surroundings: Option<f64>,
    required: bool,
) -> Result<Option<Radiation>> {
    let label = format!("boundaries.{name}");
    let Some(e) = b.emissivity else {
        if required {
            return Err(Error::input(format!(
                "{label}: kind \"radiation\" needs `emissivity`"
            )));
        }
        if b.surroundings.is_some() {
            return Err(Error::input(format!(
                "{label}: `surroundings` without `emissivity`: give the surface's emissivity (0 < ε ≤ 1) for it to radiate"
            )));
        }
        return Ok(None);
    };
    if !(e.is_finite() && e > 0.0 && e <= 1.0) {
        return Err(Error::input(format!(
            "{label}: emissivity = {e} must be a number in (0, 1]"
        )));
    }
    let s = match (b.surroundings, default_surroundings) {
        (Some(s), _) => s,
        (None, Some(a)) => a,
        (None, None) => {
            return Err(Error::input(format!(
                "{label}: kind \"radiation\" needs `surroundings` (°C)"
            )));
        }
    };
    check_temperature(s, &format!("{label}: surroundings"))?;
    Ok(Some(Radiation {
        emissivity: e,
        surroundings: s,
    }))
}

/// The radiation of one validated boundary: the kind's own for kind `radiation`, the optional
/// `emissivity`/`surroundings` of kind `convection`; the keys are refused on other kinds.
pub(super) fn boundary_radiation(
    name: &str,
    b: &BoundaryFile,
    kind: &BoundaryKind,
) -> Result<Option<Radiation>> {
    match *kind {
        BoundaryKind::Radiation {
            emissivity,
            surroundings,
        } => Ok(Some(Radiation {
            emissivity,
            surroundings,
        })),
        BoundaryKind::Convection { ambient, .. } => radiation_keys(name, b, Some(ambient), false),
        _ => {
            for (key, given) in [
                ("emissivity", b.emissivity.is_some()),
                ("surroundings", b.surroundings.is_some()),
            ] {
                if given {
                    return Err(Error::input(format!(
                        "boundaries.{name}: key `{key}` does not apply to kind \"{}\" (radiation is set on kind \"radiation\" or \"convection\")",
                        b.kind
                    )));
                }
            }
            Ok(None)
        }
    }
}

/// The linear-only features are refused in a nonlinear model: load cases (one matrix, many
/// right-hand sides) and environments/ψ (unit solves superposed) rest on superposition.
pub(super) fn check_linear_only(file: &ModelFile, nonlinear: &Nonlinear) -> Result<()> {
    if !nonlinear.is_nonlinear() {
        return Ok(());
    }
    let why =
        "a nonlinear model (a conductivity table or a radiating boundary) has no superposition";
    if !file.cases.is_empty() {
        return Err(Error::input(format!(
            "cases: load cases are not available in {why}; solve each case as a model file of its own (or a sweep)"
        )));
    }
    if !file.environments.is_empty() || !file.psi.is_empty() {
        return Err(Error::input(format!(
            "environments: coupling coefficients, psi and f_Rsi are not available in {why} (they superpose unit solves)"
        )));
    }
    for (name, b) in &file.boundaries {
        for (key, v) in [("temperature", &b.temperature), ("ambient", &b.ambient)] {
            if v.as_ref().is_some_and(|f| f.constant().is_none()) {
                return Err(Error::input(format!(
                    "boundaries.{name}.{key}: a temperature that varies with position is not available in a nonlinear model (a conductivity table or a radiating boundary); give a number"
                )));
            }
        }
    }
    for (name, m) in &file.materials {
        if m.heat_source
            .as_ref()
            .is_some_and(|f| f.constant().is_none())
        {
            return Err(Error::input(format!(
                "materials.{name}.heat_source: a heat source that varies with position is not available in a nonlinear model (a conductivity table or a radiating boundary); give a number"
            )));
        }
    }
    Ok(())
}

impl Section {
    /// The radiation of boundary `id`, if it radiates.
    pub fn radiation(&self, id: usize) -> Option<Radiation> {
        self.nonlinear.radiation.get(id).copied().flatten()
    }

    /// The conductivity table of material `id`, if it has one.
    pub fn conductivity_table(&self, id: usize) -> Option<&ConductivityTable> {
        self.nonlinear.tables.get(id).and_then(Option::as_ref)
    }

    /// True when the model is nonlinear (a conductivity table or a radiating boundary).
    pub fn is_nonlinear(&self) -> bool {
        self.nonlinear.is_nonlinear()
    }

    /// The `conductivity` and `orientation` of material `id` as written back (the table for a
    /// table material).
    pub(super) fn conductivity_file(&self, id: usize) -> (super::ConductivityFile, Option<f64>) {
        match self.conductivity_table(id) {
            Some(t) => (
                super::ConductivityFile::Table {
                    table: t.points.clone(),
                },
                None,
            ),
            None => self.materials[id].conductivity.to_file(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_is_piecewise_linear_and_constant_beyond_the_ends() {
        let t = ConductivityTable {
            points: vec![[0.0, 1.0], [100.0, 2.0], [200.0, 2.0]],
        };
        assert_eq!(t.eval(-5.0), (1.0, 0.0));
        assert_eq!(t.eval(250.0), (2.0, 0.0));
        let (k, s) = t.eval(50.0);
        assert!((k - 1.5).abs() < 1e-15 && (s - 0.01).abs() < 1e-15);
        assert_eq!(t.eval(100.0), (2.0, 0.0));
        assert_eq!(t.eval(0.0), (1.0, 0.0));
        assert!((t.middle() - 2.0).abs() < 1e-15);
    }
}
