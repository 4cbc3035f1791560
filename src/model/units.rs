//! `length_unit`: the one conversion step from the model file's length unit to metres, applied
//! to the parsed model before validation ([`in_metres`]), and the plausibility warnings on the
//! converted section (its size, temperatures that look like kelvin).
//!
//! Every key that holds a length (or an area) is converted here, in [`scale_lengths`] and
//! nowhere else: a new length key is added there. Physical properties (conductivity, h, flux,
//! heat source, reference U) and gradients stay SI; limits apply after conversion.

use super::{Boundary, BoundaryKind, ModelFile, PointEntry, Ring};
use crate::error::{Error, Result, printable};

/// The accepted units and how many of them make a metre (lengths are divided by it, so that
/// 700 mm is exactly the double nearest 0.7 m).
pub const LENGTH_UNITS: [(&str, f64); 3] = [("m", 1.0), ("cm", 100.0), ("mm", 1000.0)];

/// A section larger than this (bounding-box diagonal, m) draws a warning.
pub const LARGE_SECTION_M: f64 = 1.0e4;
/// A section smaller than this (bounding-box diagonal, m) draws a warning.
pub const SMALL_SECTION_M: f64 = 1.0e-3;

/// Units of `length_unit` per metre (default "m"), or an error naming the key.
pub fn unit_factor(unit: Option<&str>) -> Result<f64> {
    let u = unit.unwrap_or("m");
    LENGTH_UNITS
        .iter()
        .find(|(name, _)| *name == u)
        .map(|(_, f)| *f)
        .ok_or_else(|| {
            Error::input(format!(
                "length_unit = \"{}\": not one of \"m\", \"cm\", \"mm\"",
                printable(u)
            ))
        })
}

/// The model with every length in metres (and `length_unit` cleared).
pub fn in_metres(file: &ModelFile) -> Result<ModelFile> {
    let f = unit_factor(file.length_unit.as_deref())?;
    let mut m = file.clone();
    m.length_unit = None;
    if f != 1.0 {
        map_lengths(&mut m, &|x| x / f);
    }
    Ok(m)
}

/// Multiply every length of the model by `f` and every area by `f²`. The one place where
/// length keys are converted: coordinates (ring points, arc centres and ends, circle centres,
/// rectangle corners), radii, rectangle sizes, probe, line and cut points, boundary `size`,
/// ψ reference lengths, and `max_area` of the mesh and of materials (unit²). Rings read from a
/// `[geojson]` or `[drawing]` file (those with a `label`) are in metres already and keep their
/// coordinates: a drawing's own `length_unit` was applied when it was read.
pub fn scale_lengths(m: &mut ModelFile, f: f64) {
    map_lengths(m, &|x| x * f);
}

/// Apply `g` to every length of the model and twice to every area (see [`scale_lengths`]).
fn map_lengths(m: &mut ModelFile, g: &dyn Fn(f64) -> f64) {
    let p = |q: &mut [f64; 2]| {
        q[0] = g(q[0]);
        q[1] = g(q[1]);
    };
    m.mesh.max_area = m.mesh.max_area.map(|a| g(g(a)));
    for mat in m.materials.values_mut() {
        mat.max_area = mat.max_area.map(|a| g(g(a)));
    }
    let rings = m
        .outline
        .iter_mut()
        .chain(&mut m.regions)
        .chain(&mut m.holes)
        .filter(|r| r.label.is_none());
    for r in rings {
        for e in r.points.iter_mut().flatten() {
            match e {
                PointEntry::Point(q) => p(q),
                PointEntry::Arc { arc } => {
                    p(&mut arc.center);
                    p(&mut arc.to);
                }
            }
        }
        if let Some(c) = &mut r.circle {
            p(&mut c.center);
            c.radius = g(c.radius);
        }
        if let Some(rect) = &mut r.rectangle {
            p(&mut rect.corner);
            rect.width = g(rect.width);
            rect.height = g(rect.height);
        }
    }
    // fields: `at` and a profile's arc length s are lengths; values and gradients (K/m, W/m⁴)
    // stay SI
    let field = |f: &mut Option<super::FieldFile>| match f {
        Some(super::FieldFile::Linear(l)) => {
            l.at[0] = g(l.at[0]);
            l.at[1] = g(l.at[1]);
        }
        Some(super::FieldFile::Profile(pr)) => pr.iter_mut().for_each(|q| q[0] = g(q[0])),
        _ => {}
    };
    for b in m.boundaries.values_mut() {
        b.size = b.size.map(g);
        field(&mut b.temperature);
        field(&mut b.ambient);
    }
    for mat in m.materials.values_mut() {
        field(&mut mat.heat_source);
    }
    for pr in &mut m.probes {
        p(&mut pr.at);
    }
    for l in &mut m.lines {
        p(&mut l.from);
        p(&mut l.to);
    }
    for s in &mut m.point_sources {
        p(&mut s.at);
    }
    for c in &mut m.cuts {
        c.points.iter_mut().for_each(p);
    }
    for psi in &mut m.psi {
        for r in &mut psi.reference {
            r.length = g(r.length);
        }
    }
}

/// Warnings on a section that looks mistyped: a bounding-box diagonal above
/// [`LARGE_SECTION_M`] or below [`SMALL_SECTION_M`] (a unit slip), and a fixed, ambient or
/// radiation surroundings temperature above 200 °C within 0.5 K of a kelvin value of a usual temperature (−40 to
/// 60 °C in steps of 5 K: 233.15, …, 273.15, …, 333.15).
pub(super) fn plausibility(
    outline: &Ring,
    boundaries: &[Boundary],
    unit: Option<&str>,
    warnings: &mut Vec<String>,
) {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for q in &outline.points {
        for k in 0..2 {
            lo[k] = lo[k].min(q[k]);
            hi[k] = hi[k].max(q[k]);
        }
    }
    let d = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
    let unit = unit.unwrap_or("m");
    if d > LARGE_SECTION_M {
        warnings.push(format!(
            "the section is {d:.0} m across (bounding-box diagonal), above {LARGE_SECTION_M:.0} m: are the coordinates in another unit than length_unit = \"{unit}\"?"
        ));
    } else if d < SMALL_SECTION_M {
        warnings.push(format!(
            "the section is {d:e} m across (bounding-box diagonal), below 1 mm: are the coordinates in another unit than length_unit = \"{unit}\"?"
        ));
    }
    for b in boundaries {
        let temps: Vec<(&str, f64)> = match b.kind {
            BoundaryKind::Fixed { temperature } => vec![("temperature", temperature)],
            BoundaryKind::Convection { ambient, .. } => vec![("ambient", ambient)],
            BoundaryKind::Radiation { surroundings, .. } => vec![("surroundings", surroundings)],
            _ => Vec::new(),
        };
        for (key, t) in temps {
            if looks_like_kelvin(t) {
                warnings.push(format!(
                    "boundaries.{}: {key} = {t} °C is {} °C in kelvin: did you type kelvin? (temperatures are in °C)",
                    b.name,
                    crate::text::format_f64(t - 273.15)
                ));
            }
        }
    }
}

/// Above 200 °C and within 0.5 K of T + 273.15 for a usual T (−40 to 60 °C, steps of 5 K).
pub fn looks_like_kelvin(t: f64) -> bool {
    t > 200.0 && (-8..=12).any(|i| (t - (273.15 + 5.0 * f64::from(i))).abs() <= 0.5)
}
