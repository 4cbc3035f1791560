//! Shared pieces of every JSON file: the pretty encoder, the unit-suffix legend and the typed
//! records that more than one file carries (the error estimate).

use crate::error::{Error, Result};
use crate::post::estimate::ErrorEstimate;
use serde::Serialize;
use serde::ser::SerializeMap;

/// Name of the error-estimate method, as written into every file and report.
pub const ERROR_ESTIMATE_METHOD: &str = "Zienkiewicz–Zhu";

/// Unit suffixes of keys, CSV columns and VTK arrays, and the unit each stands for. A key
/// without a suffix is a count, an id, a name, a ratio or a fraction.
pub const UNIT_SUFFIXES: [(&str, &str); 15] = [
    ("_m", "m"),
    ("_m2", "m²"),
    ("_deg", "degrees"),
    ("_s", "s"),
    ("_mib", "MiB"),
    ("_c", "°C"),
    ("_k", "K (a temperature difference)"),
    ("_k_per_m", "K/m"),
    ("_w_per_m", "W/m (per metre of section depth)"),
    ("_w_per_m2", "W/m²"),
    ("_w_per_m3", "W/m³"),
    ("_w_per_m_k", "W/(m·K)"),
    ("_w_per_m2_k", "W/(m²·K)"),
    ("_m2_k_per_w", "m²·K/W"),
    (
        "_sqrt_w_k_per_m",
        "(W·K/m)^½ (energy norm, per metre of section depth)",
    ),
];

/// A JSON object whose keys keep the given order (a `serde_json::Value` object would sort
/// them, as the `preserve_order` feature is not enabled).
#[derive(Debug, Clone)]
pub(crate) struct OrderedMap<K, V>(pub Vec<(K, V)>);

impl<K: Serialize, V: Serialize> Serialize for OrderedMap<K, V> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// The unit legend as an ordered JSON object.
pub(crate) fn unit_legend() -> OrderedMap<&'static str, &'static str> {
    OrderedMap(UNIT_SUFFIXES.to_vec())
}

/// The error estimate of one solved field, as written into summary.json and convergence.json.
#[derive(Debug, Clone, Serialize)]
pub(crate) struct ErrorEstimateOut {
    method: &'static str,
    /// Estimated error relative to the estimated energy norm of the exact solution (fraction).
    relative: f64,
    energy_norm_sqrt_w_k_per_m: f64,
    solution_energy_norm_sqrt_w_k_per_m: f64,
}

impl From<&ErrorEstimate> for ErrorEstimateOut {
    fn from(e: &ErrorEstimate) -> Self {
        Self {
            method: ERROR_ESTIMATE_METHOD,
            relative: e.relative,
            energy_norm_sqrt_w_k_per_m: e.energy_norm,
            solution_energy_norm_sqrt_w_k_per_m: e.solution_energy_norm,
        }
    }
}

/// Pretty-printed JSON with a trailing newline; `what` names the file in the error.
pub(crate) fn json_bytes<T: Serialize>(value: &T, what: &str) -> Result<Vec<u8>> {
    let mut out = serde_json::to_vec_pretty(value)
        .map_err(|e| Error::run(format!("cannot encode {what}: {e}")))?;
    out.push(b'\n');
    Ok(out)
}

/// A material's conductivity with unit-suffixed keys, flattened into a material record:
/// `conductivity_w_per_m_k` for an isotropic material; the principal values, the orientation
/// and the tensor components K = R·diag(k_major, k_minor)·Rᵀ for an anisotropic one.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub(crate) enum ConductivityOut {
    /// Isotropic k.
    Isotropic {
        /// W/(m·K)
        conductivity_w_per_m_k: f64,
    },
    /// Anisotropic, constant.
    Anisotropic {
        /// W/(m·K), along the major direction.
        conductivity_major_w_per_m_k: f64,
        /// W/(m·K), across it.
        conductivity_minor_w_per_m_k: f64,
        /// Degrees from the x axis to the major direction.
        orientation_deg: f64,
        /// K_xx, W/(m·K).
        conductivity_xx_w_per_m_k: f64,
        /// K_yy, W/(m·K).
        conductivity_yy_w_per_m_k: f64,
        /// K_xy, W/(m·K).
        conductivity_xy_w_per_m_k: f64,
    },
}

impl From<&crate::model::ConductivityLaw> for ConductivityOut {
    fn from(law: &crate::model::ConductivityLaw) -> Self {
        use crate::model::ConductivityLaw;
        match *law {
            ConductivityLaw::Isotropic { k } => Self::Isotropic {
                conductivity_w_per_m_k: k,
            },
            ConductivityLaw::Anisotropic {
                k_major,
                k_minor,
                orientation_deg,
            } => {
                let d = crate::fem::Conductivity::principal(
                    k_major,
                    k_minor,
                    orientation_deg.to_radians(),
                )
                .tensor;
                Self::Anisotropic {
                    conductivity_major_w_per_m_k: k_major,
                    conductivity_minor_w_per_m_k: k_minor,
                    orientation_deg,
                    conductivity_xx_w_per_m_k: d[(0, 0)],
                    conductivity_yy_w_per_m_k: d[(1, 1)],
                    conductivity_xy_w_per_m_k: d[(0, 1)],
                }
            }
        }
    }
}
