//! Cuts (`[[cuts]]`): polylines across which the heat flow is reported. This file owns their
//! serde mirror, their validation into [`Cut`]s and their echo.
//!
//! A cut is open, or closed when its last point repeats its first (the GeoJSON convention).
//! Its geometry against the section (clipping to the material, crossings with mesh edges) is
//! the post stage's business.

use super::validate::{check_case_unique, check_name, finite_point};
use super::{MAX_RING_POINTS, ModelFile};
use crate::error::{Error, Result, printable};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// `[[cuts]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CutFile {
    /// Cut name.
    pub name: String,
    /// The polyline's points `[x, y]`, each coordinate a length in the model's length_unit (default m); closed when the last
    /// point repeats the first.
    #[serde(deserialize_with = "super::file::points_list")]
    pub points: Vec<[f64; 2]>,
}

/// A validated cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cut {
    /// Cut name.
    pub name: String,
    /// The polyline's points, m, as written (a closed cut repeats its first point last).
    pub points: Vec<[f64; 2]>,
    /// True when the last point repeats the first.
    pub closed: bool,
}

impl Cut {
    /// Number of segments of the polyline.
    pub fn segments(&self) -> usize {
        self.points.len().saturating_sub(1)
    }

    /// Segment `i` as a pair of points.
    pub fn segment(&self, i: usize) -> ([f64; 2], [f64; 2]) {
        (self.points[i], self.points[i + 1])
    }

    /// Length of the polyline, m.
    pub fn length(&self) -> f64 {
        self.points
            .windows(2)
            .map(|w| crate::geom::distance(w[0], w[1]))
            .sum()
    }
}

/// Cuts in file order: unique names (case ignored), at least two points, finite coordinates in
/// range, no segment of zero length; a closed cut needs at least three distinct corners.
pub(super) fn validate_cuts(file: &ModelFile) -> Result<Vec<Cut>> {
    let mut seen = BTreeMap::new();
    let mut cuts = Vec::with_capacity(file.cuts.len());
    for (i, c) in file.cuts.iter().enumerate() {
        let label = format!("cuts[{i}] \"{}\"", printable(&c.name));
        check_name(&label, &c.name, "cut")?;
        check_case_unique(&label, &c.name, "cut", &mut seen)?;
        let n = c.points.len();
        if n < 2 {
            return Err(Error::input(format!(
                "{label}: points has {n} point(s); a cut needs at least 2"
            )));
        }
        if n > MAX_RING_POINTS {
            return Err(Error::input(format!(
                "{label}: points has {n} points, above the limit of {MAX_RING_POINTS}"
            )));
        }
        for (j, p) in c.points.iter().enumerate() {
            finite_point(*p, &format!("{label}: points[{j}]"))?;
        }
        for (j, w) in c.points.windows(2).enumerate() {
            if w[0] == w[1] {
                return Err(Error::input(format!(
                    "{label}: points[{j}] and points[{}] are the same point (a segment of zero length)",
                    j + 1
                )));
            }
        }
        let closed = n >= 3 && c.points[0] == c.points[n - 1];
        if closed && n < 4 {
            return Err(Error::input(format!(
                "{label}: a closed cut (last point = first) needs at least 3 distinct corners, got {}",
                n - 1
            )));
        }
        cuts.push(Cut {
            name: c.name.clone(),
            points: c.points.clone(),
            closed,
        });
    }
    Ok(cuts)
}

/// The cuts as written back in the model file's keys.
pub(super) fn cut_files(cuts: &[Cut]) -> Vec<CutFile> {
    cuts.iter()
        .map(|c| CutFile {
            name: c.name.clone(),
            points: c.points.clone(),
        })
        .collect()
}
