//! Validation: a parsed [`ModelFile`] becomes a [`Section`] through a fixed sequence of named
//! steps (materials, boundaries, mesh settings, rings, naming warnings, probes, lines), or an
//! error naming the offending item.

use super::ring::{RingContext, build_ring, raw_area};
use super::suggest::{did_you_mean, known_list, suggest};
use super::{
    ABSOLUTE_ZERO_C, Boundary, BoundaryFile, BoundaryKind, DEFAULT_MIN_ANGLE, Line, MAX_COORD,
    MAX_MIN_ANGLE, MAX_RING_POINTS, Material, MeshSettings, ModelFile, Probe, Region, Ring,
    RingFile, Section, Validated,
};
use crate::error::{Error, Result};
use std::collections::{BTreeMap, BTreeSet};

/// Turn a parsed model file into a validated [`Section`]. Geometric checks that need more than
/// one ring (holes inside the outline, crossings, probes inside) belong to the geometry stage.
pub fn validate(file: &ModelFile) -> Result<Section> {
    let mut warnings = Vec::new();
    let (materials, material_ids) = validate_materials(file)?;
    let (boundaries, boundary_ids) = validate_boundaries(file)?;
    let outline_file = file.outline.as_ref().ok_or_else(|| {
        Error::input("outline: missing [outline] table (the section's outer ring)")
    })?;
    let outline_material = material_of(file, &material_ids, "outline", &outline_file.material)?;
    check_holes_hold_no_material(file)?;
    let mesh = mesh_settings(file, outline_file)?;
    let ctx = RingContext {
        boundaries: &file.boundaries,
        boundary_ids: &boundary_ids,
        max_area: mesh.max_area,
        tol: 1e-9 * outline_extent(outline_file).max(1e-6),
        allow_names: true,
    };
    let outline = build_ring("outline", outline_file, &ctx, &mut warnings)?;
    let holes = build_holes(file, &ctx, &mut warnings)?;
    let regions = build_regions(file, &material_ids, &ctx, &mut warnings)?;
    check_total_points(&outline, &holes, &regions)?;
    naming_warnings(&outline, &holes, &boundaries, &mut warnings);
    Ok(Section {
        title: file.title.clone().unwrap_or_else(|| "untitled".to_string()),
        mesh,
        materials,
        outline_material,
        outline,
        regions,
        holes,
        boundaries,
        probes: validate_probes(file)?,
        lines: validate_lines(file)?,
        warnings,
        validated: Validated,
    })
}

/// True for a name of letters, digits, '_' and '-'.
fn valid_name(name: &str) -> bool {
    !name.is_empty()
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
}

/// A point with finite coordinates inside ±[`MAX_COORD`].
pub(super) fn finite_point(p: [f64; 2], what: &str) -> Result<()> {
    if !p[0].is_finite() || !p[1].is_finite() {
        return Err(Error::input(format!(
            "{what}: coordinate ({}, {}) is not a finite number",
            p[0], p[1]
        )));
    }
    if p[0].abs() > MAX_COORD || p[1].abs() > MAX_COORD {
        return Err(Error::input(format!(
            "{what}: coordinate ({}, {}) is outside the accepted range |x|, |y| <= {MAX_COORD:e} m",
            p[0], p[1]
        )));
    }
    Ok(())
}

/// A finite temperature not below absolute zero.
fn check_temperature(v: f64, what: &str) -> Result<()> {
    if !v.is_finite() {
        return Err(Error::input(format!("{what} = {v} is not a finite number")));
    }
    if v < ABSOLUTE_ZERO_C {
        return Err(Error::input(format!(
            "{what} = {v} °C is below absolute zero ({ABSOLUTE_ZERO_C} °C)"
        )));
    }
    Ok(())
}

/// Materials sorted by name (BTreeMap order), id = index, with the name → id table.
fn validate_materials(file: &ModelFile) -> Result<(Vec<Material>, BTreeMap<String, usize>)> {
    if file.materials.is_empty() {
        return Err(Error::input(
            "materials: no material defined; add e.g. [materials.concrete] with conductivity = 1.7",
        ));
    }
    let mut materials = Vec::new();
    let mut ids = BTreeMap::new();
    for (i, (name, m)) in file.materials.iter().enumerate() {
        if !valid_name(name) {
            return Err(Error::input(format!(
                "materials.{name}: a material name may hold only letters, digits, '_' and '-'"
            )));
        }
        if !m.conductivity.is_finite() || m.conductivity <= 0.0 {
            return Err(Error::input(format!(
                "materials.{name}: conductivity = {} W/(m·K) must be a positive finite number",
                m.conductivity
            )));
        }
        let q = m.heat_source.unwrap_or(0.0);
        if !q.is_finite() {
            return Err(Error::input(format!(
                "materials.{name}: heat_source = {q} W/m³ is not a finite number"
            )));
        }
        if let Some(a) = m.max_area
            && (!a.is_finite() || a <= 0.0)
        {
            return Err(Error::input(format!(
                "materials.{name}: max_area = {a} m² must be a positive finite number"
            )));
        }
        ids.insert(name.clone(), i);
        materials.push(Material {
            id: i,
            name: name.clone(),
            conductivity: m.conductivity,
            heat_source: q,
            max_area: m.max_area,
        });
    }
    Ok((materials, ids))
}

/// Material id named by a ring's `material`, or an error listing the defined ones.
fn material_of(
    file: &ModelFile,
    ids: &BTreeMap<String, usize>,
    label: &str,
    m: &Option<String>,
) -> Result<usize> {
    let name = m
        .as_ref()
        .ok_or_else(|| Error::input(format!("{label}: missing `material`")))?;
    ids.get(name).copied().ok_or_else(|| {
        Error::input(format!(
            "{label}: material \"{name}\" is not defined under [materials] (defined: {}){}",
            known_list(file.materials.keys()),
            did_you_mean(name, file.materials.keys())
        ))
    })
}

/// Boundaries sorted by name, id = index, with the name → id table.
fn validate_boundaries(file: &ModelFile) -> Result<(Vec<Boundary>, BTreeMap<String, usize>)> {
    let mut boundaries = Vec::new();
    let mut ids = BTreeMap::new();
    for (i, (name, b)) in file.boundaries.iter().enumerate() {
        let kind = validate_boundary(name, b)?;
        if let Some(h) = b.size
            && (!h.is_finite() || h <= 0.0)
        {
            return Err(Error::input(format!(
                "boundaries.{name}: size = {h} m must be a positive finite number"
            )));
        }
        ids.insert(name.clone(), i);
        boundaries.push(Boundary {
            name: name.clone(),
            kind,
            size: b.size,
        });
    }
    Ok((boundaries, ids))
}

/// A key given that the boundary's kind does not take is an error naming it.
fn check_kind_keys(name: &str, b: &BoundaryFile, allowed: &[&str]) -> Result<()> {
    let present = [
        ("temperature", b.temperature.is_some()),
        ("h", b.h.is_some()),
        ("ambient", b.ambient.is_some()),
        ("flux", b.flux.is_some()),
    ];
    for (key, is) in present {
        if is && !allowed.contains(&key) {
            return Err(Error::input(format!(
                "boundaries.{name}: key `{key}` does not apply to kind \"{}\"{}",
                b.kind,
                if allowed.is_empty() {
                    " (it takes no values)".to_string()
                } else {
                    format!(" (it takes: {})", allowed.join(", "))
                }
            )));
        }
    }
    Ok(())
}

/// The value of a key the kind needs.
fn require(name: &str, key: &str, v: Option<f64>, kind: &str) -> Result<f64> {
    v.ok_or_else(|| Error::input(format!("boundaries.{name}: kind \"{kind}\" needs `{key}`")))
}

/// The condition of one written boundary.
fn validate_boundary(name: &str, b: &BoundaryFile) -> Result<BoundaryKind> {
    if !valid_name(name) {
        return Err(Error::input(format!(
            "boundaries.{name}: a boundary name may hold only letters, digits, '_' and '-'"
        )));
    }
    let kind = match b.kind.as_str() {
        "fixed" => {
            check_kind_keys(name, b, &["temperature"])?;
            let t = require(name, "temperature", b.temperature, "fixed")?;
            check_temperature(t, &format!("boundaries.{name}: temperature"))?;
            BoundaryKind::Fixed { temperature: t }
        }
        "insulated" => {
            check_kind_keys(name, b, &[])?;
            BoundaryKind::Insulated
        }
        "flux" => {
            check_kind_keys(name, b, &["flux"])?;
            let q = require(name, "flux", b.flux, "flux")?;
            if !q.is_finite() {
                return Err(Error::input(format!(
                    "boundaries.{name}: flux = {q} is not a finite number"
                )));
            }
            BoundaryKind::Flux { flux: q }
        }
        "convection" => {
            check_kind_keys(name, b, &["h", "ambient"])?;
            let h = require(name, "h", b.h, "convection")?;
            let a = require(name, "ambient", b.ambient, "convection")?;
            if !h.is_finite() || h <= 0.0 {
                return Err(Error::input(format!(
                    "boundaries.{name}: h = {h} W/(m²·K) must be a positive finite number"
                )));
            }
            check_temperature(a, &format!("boundaries.{name}: ambient"))?;
            BoundaryKind::Convection { h, ambient: a }
        }
        other => {
            let hint = suggest(
                other,
                ["fixed", "insulated", "flux", "convection"].into_iter(),
            )
            .map(|s| format!("; did you mean \"{s}\"?"))
            .unwrap_or_default();
            return Err(Error::input(format!(
                "boundaries.{name}: unknown kind \"{other}\" (one of: fixed, insulated, flux, convection){hint}"
            )));
        }
    };
    Ok(kind)
}

/// A hole holds no material: `material` on a hole is an error.
fn check_holes_hold_no_material(file: &ModelFile) -> Result<()> {
    for (i, h) in file.holes.iter().enumerate() {
        if h.material.is_some() {
            return Err(Error::input(format!(
                "holes[{i}]: `material` is not allowed on a hole (a hole holds no material)"
            )));
        }
    }
    Ok(())
}

/// Mesh controls with defaults: min_angle 28°, max_area = raw section area / 4000.
fn mesh_settings(file: &ModelFile, outline: &RingFile) -> Result<MeshSettings> {
    let min_angle = file.mesh.min_angle.unwrap_or(DEFAULT_MIN_ANGLE);
    if !min_angle.is_finite() || min_angle <= 0.0 || min_angle > MAX_MIN_ANGLE {
        return Err(Error::input(format!(
            "mesh: min_angle = {min_angle}° must lie in (0, {MAX_MIN_ANGLE}]: above {MAX_MIN_ANGLE}° Delaunay refinement may not terminate"
        )));
    }
    let raw_section_area = raw_area(outline) - file.holes.iter().map(raw_area).sum::<f64>();
    let (max_area, max_area_is_default) = match file.mesh.max_area {
        Some(a) => {
            if !a.is_finite() || a <= 0.0 {
                return Err(Error::input(format!(
                    "mesh: max_area = {a} m² must be a positive finite number"
                )));
            }
            (a, false)
        }
        None => {
            if !(raw_section_area.is_finite() && raw_section_area > 0.0) {
                return Err(Error::input(
                    "mesh: cannot derive the default max_area: the section has no area (holes cover the outline?)",
                ));
            }
            (raw_section_area / 4000.0, true)
        }
    };
    Ok(MeshSettings {
        max_area,
        max_area_is_default,
        min_angle,
    })
}

/// Diagonal of the outline's bounding box as written (1 m when undefined), for the tolerance.
fn outline_extent(r: &RingFile) -> f64 {
    if let Some(c) = &r.circle {
        if c.radius.is_finite() {
            return 2.0 * c.radius.abs();
        }
        return 1.0;
    }
    let pts = r.points.as_deref().unwrap_or(&[]);
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in pts {
        if p[0].is_finite() && p[1].is_finite() {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
    }
    let d = ((hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2)).sqrt();
    if d.is_finite() && d > 0.0 { d } else { 1.0 }
}

/// The holes, in file order.
fn build_holes(
    file: &ModelFile,
    ctx: &RingContext,
    warnings: &mut Vec<String>,
) -> Result<Vec<Ring>> {
    file.holes
        .iter()
        .enumerate()
        .map(|(i, h)| build_ring(&format!("holes[{i}]"), h, ctx, warnings))
        .collect()
}

/// The regions, in file order, each with its material; regions may not name boundaries.
fn build_regions(
    file: &ModelFile,
    material_ids: &BTreeMap<String, usize>,
    ctx: &RingContext,
    warnings: &mut Vec<String>,
) -> Result<Vec<Region>> {
    let ctx = RingContext {
        allow_names: false,
        ..*ctx
    };
    let mut regions = Vec::new();
    for (i, r) in file.regions.iter().enumerate() {
        let label = format!("regions[{i}]");
        let material = material_of(file, material_ids, &label, &r.material)?;
        let ring = build_ring(&label, r, &ctx, warnings)?;
        regions.push(Region { ring, material });
    }
    Ok(regions)
}

/// All rings together hold at most [`MAX_RING_POINTS`] points.
fn check_total_points(outline: &Ring, holes: &[Ring], regions: &[Region]) -> Result<()> {
    let total: usize = std::iter::once(outline)
        .chain(holes.iter())
        .chain(regions.iter().map(|r| &r.ring))
        .map(|r| r.len())
        .sum();
    if total > MAX_RING_POINTS {
        return Err(Error::input(format!(
            "the rings hold {total} points in total, above the limit of {MAX_RING_POINTS}; give circles fewer `segments`, or raise max_area or the boundaries' size"
        )));
    }
    Ok(())
}

/// Warnings for unnamed segments (insulated) and for boundaries no segment uses.
fn naming_warnings(
    outline: &Ring,
    holes: &[Ring],
    boundaries: &[Boundary],
    warnings: &mut Vec<String>,
) {
    let mut used = vec![false; boundaries.len()];
    for ring in std::iter::once(outline).chain(holes.iter()) {
        let mut unnamed: Vec<usize> = Vec::new();
        for (j, b) in ring.edge_boundary.iter().enumerate() {
            match b {
                Some(id) => used[*id] = true,
                None => unnamed.push(ring.written_segment[j]),
            }
        }
        if !unnamed.is_empty() {
            unnamed.sort_unstable();
            let list: Vec<String> = unnamed.iter().map(|s| s.to_string()).collect();
            warnings.push(format!(
                "{}: {} without a boundary name (insulated): {}",
                ring.label,
                if unnamed.len() == 1 {
                    "segment"
                } else {
                    "segments"
                },
                if ring.circle.is_some() {
                    "the whole circle".to_string()
                } else {
                    list.join(", ")
                }
            ));
        }
    }
    for (b, u) in boundaries.iter().zip(&used) {
        if !u {
            warnings.push(format!(
                "boundaries.{}: defined but no segment uses it",
                b.name
            ));
        }
    }
}

/// A probe or line name: valid characters and not used twice.
fn check_unique_name(
    label: &str,
    name: &str,
    what: &str,
    seen: &mut BTreeSet<String>,
) -> Result<()> {
    if !valid_name(name) {
        return Err(Error::input(format!(
            "{label}: a {what} name may hold only letters, digits, '_' and '-'"
        )));
    }
    if !seen.insert(name.to_string()) {
        return Err(Error::input(format!("{label}: duplicate {what} name")));
    }
    Ok(())
}

/// Probes in file order: unique names, finite positions.
fn validate_probes(file: &ModelFile) -> Result<Vec<Probe>> {
    let mut seen = BTreeSet::new();
    let mut probes = Vec::new();
    for (i, p) in file.probes.iter().enumerate() {
        let label = format!("probes[{i}] \"{}\"", p.name);
        check_unique_name(&label, &p.name, "probe", &mut seen)?;
        finite_point(p.at, &format!("{label}: at"))?;
        probes.push(Probe {
            name: p.name.clone(),
            at: p.at,
        });
    }
    Ok(probes)
}

/// Lines in file order: unique names, finite distinct end points, 2..=10⁶ samples.
fn validate_lines(file: &ModelFile) -> Result<Vec<Line>> {
    let mut seen = BTreeSet::new();
    let mut lines = Vec::new();
    for (i, l) in file.lines.iter().enumerate() {
        let label = format!("lines[{i}] \"{}\"", l.name);
        check_unique_name(&label, &l.name, "line", &mut seen)?;
        finite_point(l.from, &format!("{label}: from"))?;
        finite_point(l.to, &format!("{label}: to"))?;
        if l.samples < 2 {
            return Err(Error::input(format!(
                "{label}: samples = {} must be at least 2",
                l.samples
            )));
        }
        if l.samples > 1_000_000 {
            return Err(Error::input(format!(
                "{label}: samples = {} exceeds the limit of 1000000",
                l.samples
            )));
        }
        if l.from == l.to {
            return Err(Error::input(format!(
                "{label}: `from` and `to` are the same point"
            )));
        }
        lines.push(Line {
            name: l.name.clone(),
            from: l.from,
            to: l.to,
            samples: l.samples,
        });
    }
    Ok(lines)
}
