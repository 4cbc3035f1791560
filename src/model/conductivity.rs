//! A material's conductivity: the `conductivity` key as written ([`ConductivityFile`]: a number
//! for an isotropic material, a pair `[k_major, k_minor]` with `orientation` for an
//! anisotropic one, `{ table = [[T, k], …] }` for an isotropic conductivity that depends on
//! temperature), its validation into a [`ConductivityLaw`] and its echo. A table is validated
//! by [`super::nonlinear`] and kept beside the law (the law then holds k at the middle of the
//! table's range).

use super::validate::check_conductivity;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// The `conductivity` key as written: a number (W/(m·K)), a pair `[k_major, k_minor]`, or
/// `{ table = [[T, k], …] }` (°C, W/(m·K)).
#[derive(Debug, Clone, PartialEq, Serialize, schemars::JsonSchema)]
#[serde(untagged)]
#[schemars(deny_unknown_fields)]
pub enum ConductivityFile {
    /// One value, W/(m·K): isotropic.
    Scalar(f64),
    /// Principal values `[k_major, k_minor]`, W/(m·K), with the material's `orientation`.
    Principal([f64; 2]),
    /// A piecewise-linear table of (temperature °C, conductivity W/(m·K)); isotropic.
    Table {
        /// `[[T, k], …]`: temperature T, °C, and conductivity k, W/(m·K), at least two rows.
        table: Vec<[f64; 2]>,
    },
}

impl Default for ConductivityFile {
    fn default() -> Self {
        ConductivityFile::Scalar(0.0)
    }
}

impl From<f64> for ConductivityFile {
    /// An isotropic conductivity, W/(m·K).
    fn from(k: f64) -> Self {
        ConductivityFile::Scalar(k)
    }
}

/// Reads a number, a list of exactly two numbers or a table with the one key `table`; other
/// forms are an error naming the key.
struct ConductivityVisitor;

impl<'de> serde::de::Visitor<'de> for ConductivityVisitor {
    type Value = ConductivityFile;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(
            f,
            "`conductivity`: a number (W/(m·K)), a pair of numbers [k_major, k_minor], or a table {{ table = [[T, k], …] }} (°C, W/(m·K))"
        )
    }
    fn visit_f64<E: serde::de::Error>(self, v: f64) -> std::result::Result<Self::Value, E> {
        Ok(ConductivityFile::Scalar(v))
    }
    fn visit_i64<E: serde::de::Error>(self, v: i64) -> std::result::Result<Self::Value, E> {
        Ok(ConductivityFile::Scalar(v as f64))
    }
    fn visit_u64<E: serde::de::Error>(self, v: u64) -> std::result::Result<Self::Value, E> {
        Ok(ConductivityFile::Scalar(v as f64))
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(
        self,
        mut seq: A,
    ) -> std::result::Result<Self::Value, A::Error> {
        let mut p = [0.0; 2];
        for (i, v) in p.iter_mut().enumerate() {
            *v = seq
                .next_element::<f64>()?
                .ok_or_else(|| serde::de::Error::invalid_length(i, &self))?;
        }
        let mut n = 2;
        while seq.next_element::<serde::de::IgnoredAny>()?.is_some() {
            n += 1;
        }
        if n != 2 {
            return Err(serde::de::Error::invalid_length(n, &self));
        }
        Ok(ConductivityFile::Principal(p))
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(
        self,
        mut map: A,
    ) -> std::result::Result<Self::Value, A::Error> {
        let mut table: Option<Vec<super::file::Point2>> = None;
        while let Some(key) = map.next_key::<String>()? {
            if key != "table" {
                return Err(serde::de::Error::unknown_field(&key, &["table"]));
            }
            if table.is_some() {
                return Err(serde::de::Error::duplicate_field("table"));
            }
            table = Some(map.next_value()?);
        }
        let table = table.ok_or_else(|| serde::de::Error::missing_field("table"))?;
        Ok(ConductivityFile::Table {
            table: table.into_iter().map(|p| p.0).collect(),
        })
    }
}

impl<'de> Deserialize<'de> for ConductivityFile {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        d.deserialize_any(ConductivityVisitor)
    }
}

/// A material's validated conductivity law.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "law", rename_all = "lowercase")]
pub enum ConductivityLaw {
    /// Isotropic, constant k, W/(m·K).
    Isotropic {
        /// W/(m·K)
        k: f64,
    },
    /// Anisotropic, constant: principal values along and across the major direction, which
    /// lies `orientation_deg` degrees counter-clockwise from the x axis. The tensor is
    /// K = R·diag(k_major, k_minor)·Rᵀ, R the rotation by the orientation.
    Anisotropic {
        /// W/(m·K), along the major direction.
        k_major: f64,
        /// W/(m·K), across it.
        k_minor: f64,
        /// Degrees from the x axis to the major direction, counter-clockwise.
        orientation_deg: f64,
    },
}

impl ConductivityLaw {
    /// Largest principal conductivity, W/(m·K).
    pub fn max(&self) -> f64 {
        match *self {
            ConductivityLaw::Isotropic { k } => k,
            ConductivityLaw::Anisotropic {
                k_major, k_minor, ..
            } => k_major.max(k_minor),
        }
    }

    /// Effective isotropic conductivity √(det K), W/(m·K): the value that governs the
    /// logarithmic field around a point (for an isotropic material, k itself).
    pub fn effective(&self) -> f64 {
        match *self {
            ConductivityLaw::Isotropic { k } => k,
            ConductivityLaw::Anisotropic {
                k_major, k_minor, ..
            } => (k_major * k_minor).sqrt(),
        }
    }

    /// The isotropic value, `None` for an anisotropic material.
    pub fn isotropic(&self) -> Option<f64> {
        match *self {
            ConductivityLaw::Isotropic { k } => Some(k),
            ConductivityLaw::Anisotropic { .. } => None,
        }
    }

    /// The law as written: the `conductivity` value and the `orientation` (anisotropic only).
    pub fn to_file(&self) -> (ConductivityFile, Option<f64>) {
        match *self {
            ConductivityLaw::Isotropic { k } => (ConductivityFile::Scalar(k), None),
            ConductivityLaw::Anisotropic {
                k_major,
                k_minor,
                orientation_deg,
            } => (
                ConductivityFile::Principal([k_major, k_minor]),
                Some(orientation_deg),
            ),
        }
    }
}

impl std::fmt::Display for ConductivityLaw {
    /// `1.7` for an isotropic material; `[2.8, 1.4] at 30°` for an anisotropic one.
    fn fmt(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        match *self {
            ConductivityLaw::Isotropic { k } => write!(f, "{k}"),
            ConductivityLaw::Anisotropic {
                k_major,
                k_minor,
                orientation_deg,
            } => write!(f, "[{k_major}, {k_minor}] at {orientation_deg}°"),
        }
    }
}

/// Largest orientation magnitude accepted, degrees (any angle is meaningful modulo 180°; the
/// bound only catches values that are not angles).
pub const MAX_ABS_ORIENTATION_DEG: f64 = 3600.0;

/// The conductivity law of `conductivity` and `orientation` as written; `label` names the
/// material (or the case's material) in errors. Each principal value has the limits of a
/// scalar conductivity; the orientation is finite, within ±[`MAX_ABS_ORIENTATION_DEG`], and
/// only given with a pair. A table is not a constant law: the caller validates it (a material's
/// table by [`super::nonlinear::validate_table`]); here it is refused (e.g. in a load case).
pub(super) fn conductivity_law(
    label: &str,
    written: &ConductivityFile,
    orientation: Option<f64>,
) -> Result<ConductivityLaw> {
    match *written {
        ConductivityFile::Table { .. } => Err(Error::input(format!(
            "{label}: a conductivity table is only allowed on a material of the model itself (not in a load case)"
        ))),
        ConductivityFile::Scalar(k) => {
            if let Some(o) = orientation {
                return Err(Error::input(format!(
                    "{label}: orientation = {o} needs a pair conductivity = [k_major, k_minor] (an isotropic conductivity has no direction)"
                )));
            }
            check_conductivity(label, k)?;
            Ok(ConductivityLaw::Isotropic { k })
        }
        ConductivityFile::Principal([k_major, k_minor]) => {
            check_conductivity(&format!("{label}: conductivity[0] (k_major)"), k_major)?;
            check_conductivity(&format!("{label}: conductivity[1] (k_minor)"), k_minor)?;
            let o = orientation.unwrap_or(0.0);
            if !o.is_finite() || o.abs() > MAX_ABS_ORIENTATION_DEG {
                return Err(Error::input(format!(
                    "{label}: orientation = {o}° must be a finite angle in degrees, |orientation| <= {MAX_ABS_ORIENTATION_DEG}"
                )));
            }
            Ok(ConductivityLaw::Anisotropic {
                k_major,
                k_minor,
                orientation_deg: o,
            })
        }
    }
}
