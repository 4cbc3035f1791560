//! The mesh convergence study behind `xsheat converge`: the model solved on a sequence of
//! meshes (max_area divided by 4 each level), with the GCI of every probe, heat flow and extreme.

use crate::error::{Error, Result};
use crate::mesh::MeshOptions;
use crate::model;
use crate::post::Results;
use crate::post::estimate::ErrorEstimate;
use crate::run::{self, Prepared, Solved};
use crate::study::gci::{CONSTANT_RELATIVE_TOLERANCE, Gci, PLAUSIBLE_ORDER, gci};
use crate::text::format_f64;
use serde::Serialize;

// ---------------------------------------------------------------------------------------------
// Mesh convergence study
// ---------------------------------------------------------------------------------------------

/// One mesh of a convergence study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyLevel {
    /// 1 = coarsest (the model's own mesh settings).
    pub level: usize,
    /// m²
    pub max_area: f64,
    /// Nodes of the level's mesh.
    pub nodes: usize,
    /// Triangles of the level's mesh.
    pub triangles: usize,
    /// Representative size (A/N)^½, m.
    pub h: f64,
    /// Smallest angle of the level's mesh, degrees.
    pub min_angle_deg: f64,
    /// ZZ estimate of this level.
    pub error_estimate: ErrorEstimate,
}

/// One quantity over the levels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyQuantity {
    /// `probe:NAME`, `heat_flow:BOUNDARY`, `t_min`, `t_max`.
    pub quantity: String,
    /// `degC` or `W/m`.
    pub unit: String,
    /// Per level, coarsest first.
    pub values: Vec<f64>,
    /// Observed order, extrapolation and GCI from the finest three levels.
    pub gci: Gci,
}

/// How a circle is discretised at every level of the study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyCircle {
    /// `outline`, `regions[i]`, `holes[i]`.
    pub ring: String,
    /// Radius, m.
    pub radius: f64,
    /// Segment count at every level.
    pub segments: usize,
    /// r(1 − cos(π/N)), m: the polygon's largest distance from the circle.
    pub sagitta: f64,
    /// true when the model gives `segments`, false when derived from the finest level's
    /// max_area.
    pub segments_from_model: bool,
}

/// A mesh convergence study of one model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConvergenceStudy {
    /// The model's title.
    pub title: String,
    /// The meshes, coarsest first.
    pub levels: Vec<StudyLevel>,
    /// Every quantity over the levels.
    pub quantities: Vec<StudyQuantity>,
    /// Circles and their fixed discretisation.
    pub circles: Vec<StudyCircle>,
    /// How the study was done and how to read it.
    pub notes: Vec<String>,
    /// Warnings of every level (prefixed `level N:`), each once.
    pub warnings: Vec<String>,
}

/// Fix a circle ring's segment count at the finest level's value: (radius, segments, given).
fn fixed_circle_segments(
    ring: &mut model::RingFile,
    boundaries: &std::collections::BTreeMap<String, model::BoundaryFile>,
    max_area: f64,
) -> Option<(f64, usize, bool)> {
    let n = model::ring_circle_segments(ring, boundaries, max_area)?;
    let c = ring.circle.as_mut()?;
    let from_model = c.segments.is_some();
    c.segments = Some(n);
    Some((c.radius, n, from_model))
}

/// Accept a level count (`--levels`): a convergence study needs at least 3 levels.
pub fn check_levels(levels: usize) -> Result<()> {
    if levels < 3 {
        return Err(Error::input(format!(
            "--levels = {levels}: a convergence study needs at least 3 levels"
        )));
    }
    Ok(())
}

/// Solve a prepared model on `levels` meshes, level 1 with the model's own `max_area` and each
/// further level with `max_area` divided by 4, and run the GCI procedure on every probe
/// temperature, every boundary heat flow and the temperature extremes.
///
/// Circles keep the segment count of the finest level at every level (or the model's own
/// `segments`), so all levels mesh the same polygon. Materials' `max_area` and boundaries'
/// `size` are refined with the global limit (areas / 4, lengths / 2 per level).
pub fn convergence_study(
    prepared: &Prepared,
    levels: usize,
    opts: &MeshOptions,
) -> Result<ConvergenceStudy> {
    check_levels(levels)?;
    check_finest_level(prepared, levels, opts)?;
    let base = prepared.section.mesh.max_area;
    let (model, circles) = fixed_circles(prepared, levels);
    let (study_levels, solved_levels, warnings) = solve_levels(&model, base, levels, opts)?;
    let quantities = study_quantities(&study_levels, &solved_levels)?;
    Ok(ConvergenceStudy {
        title: prepared.section.title.clone(),
        levels: study_levels,
        notes: study_notes(base, !circles.is_empty()),
        quantities,
        circles,
        warnings,
    })
}

/// Refuse a study whose finest level is estimated above the triangle limit.
fn check_finest_level(prepared: &Prepared, levels: usize, opts: &MeshOptions) -> Result<()> {
    let base = prepared.section.mesh.max_area;
    let finest = base / 4f64.powi(levels as i32 - 1);
    let area = crate::mesh::section_area(&prepared.section);
    let estimate = crate::mesh::estimate_triangles(area, finest);
    if !(estimate.is_finite() && estimate <= opts.max_triangles as f64) {
        return Err(Error::input(format!(
            "--levels = {levels}: the finest level (max_area = {base:e} m² / 4^{}) would give about {estimate:.0} triangles, above the limit of {}; use fewer levels, a larger mesh.max_area or pass --max-triangles",
            levels - 1,
            opts.max_triangles
        )));
    }
    Ok(())
}

/// The model with circle segment counts fixed at the finest level's value, and those circles.
fn fixed_circles(prepared: &Prepared, levels: usize) -> (model::ModelFile, Vec<StudyCircle>) {
    let mut model = prepared.model.clone();
    let finest_scale = 4f64.powi(levels as i32 - 1);
    let finest = prepared.section.mesh.max_area / finest_scale;
    let mut boundaries = model.boundaries.clone();
    for b in boundaries.values_mut() {
        b.size = b.size.map(|h| h / finest_scale.sqrt());
    }
    let rings = model
        .outline
        .iter_mut()
        .map(|o| ("outline".to_string(), o))
        .chain(
            model
                .regions
                .iter_mut()
                .enumerate()
                .map(|(i, r)| (format!("regions[{i}]"), r)),
        )
        .chain(
            model
                .holes
                .iter_mut()
                .enumerate()
                .map(|(i, r)| (format!("holes[{i}]"), r)),
        );
    let mut circles = Vec::new();
    for (ring, r) in rings {
        if let Some((radius, segments, segments_from_model)) =
            fixed_circle_segments(r, &boundaries, finest)
        {
            let sagitta = model::Circle {
                center: [0.0, 0.0],
                radius,
                segments,
            }
            .sagitta();
            circles.push(StudyCircle {
                ring,
                radius,
                segments,
                sagitta,
                segments_from_model,
            });
        }
    }
    (model, circles)
}

/// Solve every level; failed self-checks fail the study, warnings are kept once each.
fn solve_levels(
    model: &model::ModelFile,
    base: f64,
    levels: usize,
    opts: &MeshOptions,
) -> Result<(Vec<StudyLevel>, Vec<Solved>, Vec<String>)> {
    let mut study_levels = Vec::with_capacity(levels);
    let mut solved_levels = Vec::with_capacity(levels);
    let mut warnings: Vec<String> = Vec::new();
    for level in 0..levels {
        let scale = 4f64.powi(level as i32);
        let max_area = base / scale;
        let mut m = model.clone();
        m.mesh.max_area = Some(max_area);
        // Local size controls refine with the global limit: areas / 4, lengths / 2 per level.
        for mat in m.materials.values_mut() {
            mat.max_area = mat.max_area.map(|a| a / scale);
        }
        for b in m.boundaries.values_mut() {
            b.size = b.size.map(|h| h / scale.sqrt());
        }
        let sv = run::solve(run::prepare_model(m)?, opts)?;
        if let Some(e) = run::failed_checks_error(&sv) {
            return Err(Error::run(format!("level {}: {e}", level + 1)));
        }
        for w in &sv.warnings {
            let w = format!("level {}: {w}", level + 1);
            if !warnings.contains(&w) {
                warnings.push(w);
            }
        }
        let nt = sv.mesh.triangles.len();
        study_levels.push(StudyLevel {
            level: level + 1,
            max_area,
            nodes: sv.mesh.nodes.len(),
            triangles: nt,
            h: (sv.mesh.stats.area.abs() / nt as f64).sqrt(),
            min_angle_deg: sv.mesh.stats.min_angle_deg,
            error_estimate: sv.error_estimate.clone(),
        });
        solved_levels.push(sv);
    }
    Ok((study_levels, solved_levels, warnings))
}

/// The quantities studied, in a fixed order: probes (model order), heat flows (boundary name
/// order), t_min, t_max; each with its unit and the scale its changes are judged against.
fn quantity_names(solved_levels: &[Solved]) -> Vec<(String, String, f64)> {
    let first = &solved_levels[0];
    let t_scale = solved_levels
        .iter()
        .map(|s| s.results.t_min.value.abs().max(s.results.t_max.value.abs()))
        .fold(0.0, f64::max);
    let q_scale = solved_levels
        .iter()
        .map(|s| {
            s.results
                .boundaries
                .iter()
                .map(|b| b.heat_flow.abs())
                .sum::<f64>()
                + s.results.heat_source.abs()
        })
        .fold(0.0, f64::max);
    let mut names: Vec<(String, String, f64)> = Vec::new();
    for p in &first.results.probes {
        names.push((format!("probe:{}", p.name), "degC".into(), t_scale));
    }
    for b in &first.results.boundaries {
        if b.name != "(unnamed)" {
            names.push((format!("heat_flow:{}", b.name), "W/m".into(), q_scale));
        }
    }
    names.push(("t_min".into(), "degC".into(), t_scale));
    names.push(("t_max".into(), "degC".into(), t_scale));
    names
}

/// The value of one quantity in one level's results.
fn quantity_value(r: &Results, quantity: &str) -> Option<f64> {
    if let Some(name) = quantity.strip_prefix("probe:") {
        r.probes
            .iter()
            .find(|p| p.name == name)
            .map(|p| p.temperature)
    } else if let Some(name) = quantity.strip_prefix("heat_flow:") {
        Some(
            r.boundaries
                .iter()
                .find(|b| b.name == name)
                .map_or(0.0, |b| b.heat_flow),
        )
    } else if quantity == "t_min" {
        Some(r.t_min.value)
    } else {
        Some(r.t_max.value)
    }
}

/// Every quantity over the levels with its GCI.
fn study_quantities(
    study_levels: &[StudyLevel],
    solved_levels: &[Solved],
) -> Result<Vec<StudyQuantity>> {
    let h: Vec<f64> = study_levels.iter().map(|l| l.h).collect();
    let names = quantity_names(solved_levels);
    let mut quantities = Vec::with_capacity(names.len());
    for (quantity, unit, scale) in names {
        let values = solved_levels
            .iter()
            .enumerate()
            .map(|(i, sv)| {
                quantity_value(&sv.results, &quantity)
                    .ok_or_else(|| Error::run(format!("level {}: no value of {quantity}", i + 1)))
            })
            .collect::<Result<Vec<f64>>>()?;
        let gci = gci(&h, &values, scale)?;
        quantities.push(StudyQuantity {
            quantity,
            unit,
            values,
            gci,
        });
    }
    Ok(quantities)
}

/// The notes written with the study: how the levels were built and how to read the GCI.
fn study_notes(base: f64, has_circles: bool) -> Vec<String> {
    let mut notes = vec![
        format!(
            "level 1 uses the model's max_area = {} m²; each further level divides it by 4. The levels are independent quality Delaunay meshes (not nested); h = (A/N)^½ from the meshed area A and the actual triangle count N, r = h_coarse/h_fine (Celik et al. 2008).",
            format_f64(base)
        ),
        "observed order, extrapolated value and GCI come from the finest three levels (Celik et al. 2008, J. Fluids Eng. 130, 078001; factor of safety 1.25, Roache 1998); with more levels, orders_by_triplet shows whether the order settles.".to_string(),
        format!(
            "status: constant = no change beyond {CONSTANT_RELATIVE_TOLERANCE:e} of the quantity's scale; oscillating (sign change of successive differences) and divergent (differences not shrinking) report no order; unreliable = order undetermined or outside [{}, {}], no GCI reported.",
            PLAUSIBLE_ORDER.0, PLAUSIBLE_ORDER.1
        ),
        "gci_fine is in the unit of the quantity; gci_fine_percent is relative to the finest value. For temperatures in degC the percentage depends on the origin of the scale: use the absolute value.".to_string(),
        "the GCI estimates the discretisation error of the mesh only; it does not cover model assumptions or input data.".to_string(),
    ];
    if has_circles {
        notes.push("circles keep one segment count at every level (the finest level's, or the model's own `segments`), so every level meshes the same polygon: the GCI covers the mesh error on that polygon, not the polygon-versus-circle difference, bounded by the sagitta listed per circle. A consequence: on coarse levels the mesh near a circle is already as fine as its fixed segments, so the local refinement ratio there is smaller than the global r = h2/h1 and orders of quantities dominated by a circle (its heat flow) may appear low.".to_string());
    }
    notes
}
