//! Point sources (`[[point_sources]]`): a line source running along the section's depth (a
//! cable, a small heating pipe), given by its position and its power per metre of depth. This
//! file owns their serde mirror, their validation into [`PointSource`]s and their echo.
//!
//! Their place against the rings (inside the material, off every ring segment) is checked by
//! the geometry stage, which also hands their positions to the mesher as vertices.

use super::ModelFile;
use super::validate::{check_bounded, check_case_unique, check_name, finite_point};
use crate::error::{Error, Result, printable};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Largest point source power accepted, |P| in W per metre of depth (a power cable gives some
/// 10–100 W/m, a heating pipe some 100 W/m; 10⁸ W/m is no conduction problem any more).
pub const MAX_ABS_POINT_POWER: f64 = 1.0e8;
/// Most point sources of one model.
pub const MAX_POINT_SOURCES: usize = 10_000;
/// Smallest distance between a point source and a ring segment or another point source, as a
/// fraction of the section's diameter (the diagonal of the outline's bounding box).
pub const POINT_SOURCE_CLEARANCE: f64 = 1.0e-6;

/// `[[point_sources]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PointSourceFile {
    /// Point source name.
    pub name: String,
    /// Position `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "super::file::point_at")]
    pub at: [f64; 2],
    /// Heat released per metre of depth, W/m (negative: a sink).
    pub power: f64,
}

/// A validated point source.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointSource {
    /// Point source name.
    pub name: String,
    /// Position, m (a mesh node lies exactly there).
    pub at: [f64; 2],
    /// Heat released per metre of depth, W/m (negative: a sink).
    pub power: f64,
}

/// Point sources in file order: unique names (case ignored), finite positions in range, power
/// finite with |P| ≤ [`MAX_ABS_POINT_POWER`], at most [`MAX_POINT_SOURCES`]. Two sources at
/// one place are refused by the geometry stage (it knows the section's size).
pub(super) fn validate_point_sources(file: &ModelFile) -> Result<Vec<PointSource>> {
    if file.point_sources.len() > MAX_POINT_SOURCES {
        return Err(Error::input(format!(
            "point_sources: {} point sources, above the limit of {MAX_POINT_SOURCES}",
            file.point_sources.len()
        )));
    }
    let mut seen = BTreeMap::new();
    let mut out = Vec::with_capacity(file.point_sources.len());
    for (i, s) in file.point_sources.iter().enumerate() {
        let label = format!("point_sources[{i}] \"{}\"", printable(&s.name));
        check_name(&label, &s.name, "point source")?;
        check_case_unique(&label, &s.name, "point source", &mut seen)?;
        finite_point(s.at, &format!("{label}: at"))?;
        check_power(&label, s.power)?;
        out.push(PointSource {
            name: s.name.clone(),
            at: s.at,
            power: s.power,
        });
    }
    Ok(out)
}

/// A point source power: finite, |P| ≤ [`MAX_ABS_POINT_POWER`] W/m.
pub(super) fn check_power(label: &str, power: f64) -> Result<()> {
    check_bounded(
        power,
        MAX_ABS_POINT_POWER,
        &format!("{label}: power"),
        "W/m",
    )
}

/// The point sources as written back by the echo.
pub(super) fn point_source_files(sources: &[PointSource]) -> Vec<PointSourceFile> {
    sources
        .iter()
        .map(|s| PointSourceFile {
            name: s.name.clone(),
            at: s.at,
            power: s.power,
        })
        .collect()
}
