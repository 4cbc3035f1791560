//! Validation: a parsed [`ModelFile`] becomes a [`Section`] through a fixed sequence of named
//! steps (lengths to metres, materials, boundaries, mesh settings, rings, naming warnings, probes, lines, load
//! cases, cuts, environments), or an
//! error naming the offending item.

use super::cases::validate_cases;
use super::ring::ring_circle_segments;
use super::ring::{RingContext, build_ring, raw_area};
use super::suggest::{did_you_mean, known_list, suggest};
use super::{
    ABSOLUTE_ZERO_C, Boundary, BoundaryFile, BoundaryKind, ConductivityFile, DEFAULT_MIN_ANGLE,
    Field, Line, MAX_ABS_FLUX, MAX_ABS_HEAT_SOURCE, MAX_ABS_TEMPERATURE_C, MAX_CIRCLE_SEGMENTS,
    MAX_CONDUCTIVITY, MAX_COORD, MAX_FILM_COEFFICIENT, MAX_LINE_SAMPLES, MAX_MIN_ANGLE,
    MAX_NAME_CHARS, MAX_RING_POINTS, MAX_TITLE_CHARS, MIN_CONDUCTIVITY, Material, MeshSettings,
    ModelFile, Probe, Region, Ring, RingFile, Section, Validated,
};
use crate::error::{Error, Result, printable};
use std::collections::BTreeMap;

/// Turn a parsed model file into a validated [`Section`]. Geometric checks that need more than
/// one ring (holes inside the outline, crossings, probes inside) belong to the geometry stage.
pub fn validate(file: &ModelFile) -> Result<Section> {
    let mut warnings = super::import::import_warnings(file)?;
    let unit = file.length_unit.clone();
    let converted = super::units::in_metres(file)?;
    let file = &converted;
    let title = validate_title(file)?;
    let (materials, material_ids, tables) = validate_materials(file)?;
    let (boundaries, boundary_ids, radiation) = validate_boundaries(file)?;
    let nonlinear = super::Nonlinear { tables, radiation };
    super::nonlinear::check_linear_only(file, &nonlinear)?;
    let outline_file = file.outline.as_ref().ok_or_else(|| {
        Error::input("outline: missing [outline] table (the section's outer ring)")
    })?;
    let outline_label = outline_file.label.as_deref().unwrap_or("outline");
    let outline_material = material_of(file, &material_ids, outline_label, &outline_file.material)?;
    check_holes_hold_no_material(file)?;
    let mesh = mesh_settings(file, outline_file)?;
    check_written_points(file, mesh.max_area)?;
    let probes = validate_probes(file)?;
    let lines = validate_lines(file)?;
    let point_sources = super::point_sources::validate_point_sources(file)?;
    let cases = validate_cases(file, &materials, &boundaries)?;
    let cuts = super::cuts::validate_cuts(file)?;
    let contacts = super::contacts::validate_contacts(file, &materials)?;
    let environments =
        super::environments::validate_environments(file, &boundaries, &boundary_ids)?;
    let ctx = RingContext {
        boundaries: &file.boundaries,
        boundary_ids: &boundary_ids,
        max_area: mesh.max_area,
        tol: 1e-9 * outline_extent(outline_file).max(1e-6),
        allow_names: true,
    };
    let outline = build_ring(outline_label, outline_file, &ctx, &mut warnings)?;
    let holes = build_holes(file, &ctx, &mut warnings)?;
    let regions = build_regions(file, &material_ids, &ctx, &mut warnings)?;
    let mut boundaries = boundaries;
    let rings: Vec<&Ring> = std::iter::once(&outline).chain(&holes).collect();
    super::field::attach_profiles(&mut boundaries, &rings, &mut warnings)?;
    naming_warnings(&outline, &holes, &boundaries, &mut warnings);
    super::units::plausibility(&outline, &boundaries, unit.as_deref(), &mut warnings);
    Ok(Section {
        title,
        mesh,
        materials,
        outline_material,
        outline,
        regions,
        holes,
        boundaries,
        probes,
        lines,
        point_sources,
        cases,
        cuts,
        contacts,
        environments,
        nonlinear,
        geojson: file.geojson.clone(),
        drawing: file.drawing.clone(),
        warnings,
        validated: Validated,
    })
}

/// A name of 1 to [`MAX_NAME_CHARS`] letters, digits, '_' and '-' (so no control characters,
/// and safe as a file name); `label` names the item in the error.
pub(super) fn check_name(label: &str, name: &str, what: &str) -> Result<()> {
    if name.is_empty() {
        return Err(Error::input(format!(
            "{label}: a {what} name may not be empty"
        )));
    }
    let n = name.chars().count();
    if n > MAX_NAME_CHARS {
        return Err(Error::input(format!(
            "{label}: the {what} name has {n} characters, above the limit of {MAX_NAME_CHARS}"
        )));
    }
    if !name
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(Error::input(format!(
            "{label}: a {what} name may hold only letters, digits, '_' and '-'"
        )));
    }
    Ok(())
}

/// Names of one table must differ ignoring case (line names become file names, and a
/// case-insensitive file system would make `mid` and `MID` one file). `seen` maps the
/// lower-case name to the label of its first use.
pub(super) fn check_case_unique(
    label: &str,
    name: &str,
    what: &str,
    seen: &mut BTreeMap<String, String>,
) -> Result<()> {
    if let Some(first) = seen.get(&name.to_ascii_lowercase()) {
        return Err(Error::input(format!(
            "{label}: duplicate {what} name: equals {first} ignoring case (names of one kind must differ in more than case)"
        )));
    }
    seen.insert(name.to_ascii_lowercase(), label.to_string());
    Ok(())
}

/// The title (default "untitled"): at most [`MAX_TITLE_CHARS`] characters, no control
/// characters.
fn validate_title(file: &ModelFile) -> Result<String> {
    let Some(t) = &file.title else {
        return Ok("untitled".to_string());
    };
    let n = t.chars().count();
    if n > MAX_TITLE_CHARS {
        return Err(Error::input(format!(
            "title: {n} characters, above the limit of {MAX_TITLE_CHARS}"
        )));
    }
    if t.chars().any(char::is_control) {
        return Err(Error::input(format!(
            "title \"{}\": control characters (newline, tab, ESC, ...) are not allowed",
            printable(t)
        )));
    }
    Ok(t.clone())
}

/// A finite number with |v| at most `max`; `what` names the key and its unit.
pub(super) fn check_bounded(v: f64, max: f64, what: &str, unit: &str) -> Result<()> {
    if !v.is_finite() {
        return Err(Error::input(format!("{what} = {v} is not a finite number")));
    }
    if v.abs() > max {
        return Err(Error::input(format!(
            "{what} = {v:e} {unit} is outside the accepted range |{}| <= {max:e} {unit}",
            what.rsplit(' ').next().unwrap_or(what)
        )));
    }
    Ok(())
}

/// A conductivity, W/(m·K), finite in [[`MIN_CONDUCTIVITY`], [`MAX_CONDUCTIVITY`]]; `label`
/// names the material.
pub(super) fn check_conductivity(label: &str, k: f64) -> Result<()> {
    if !k.is_finite() || !(MIN_CONDUCTIVITY..=MAX_CONDUCTIVITY).contains(&k) {
        return Err(Error::input(format!(
            "{label}: conductivity = {k:e} W/(m·K) must be a finite number in [{MIN_CONDUCTIVITY:e}, {MAX_CONDUCTIVITY:e}]"
        )));
    }
    Ok(())
}

/// A film coefficient, W/(m²·K): positive, finite, at most [`MAX_FILM_COEFFICIENT`]; `label`
/// names the boundary.
pub(super) fn check_film_coefficient(label: &str, h: f64) -> Result<()> {
    if !h.is_finite() || h <= 0.0 || h > MAX_FILM_COEFFICIENT {
        return Err(Error::input(format!(
            "{label}: h = {h} W/(m²·K) must be a positive finite number, at most {MAX_FILM_COEFFICIENT:e} (for a larger one, fix the temperature)"
        )));
    }
    Ok(())
}

/// The film coefficient of a convection boundary given by exactly one of `h` (W/(m²·K)) and
/// `resistance` (R_s, m²·K/W, h = 1/R_s); `label` names the boundary (or the case's boundary).
pub(super) fn film_or_resistance(label: &str, h: Option<f64>, r: Option<f64>) -> Result<f64> {
    match (h, r) {
        (Some(_), Some(_)) => Err(Error::input(format!(
            "{label}: give either `h` or `resistance` (R_s = 1/h), not both"
        ))),
        (None, None) => Err(Error::input(format!(
            "{label}: kind \"convection\" needs `h` (W/(m²·K)) or `resistance` (m²·K/W)"
        ))),
        (Some(h), None) => {
            check_film_coefficient(label, h)?;
            Ok(h)
        }
        (None, Some(r)) => {
            let min = 1.0 / MAX_FILM_COEFFICIENT;
            if !r.is_finite() || r < min {
                return Err(Error::input(format!(
                    "{label}: resistance = {r} m²·K/W must be a finite number of at least {min:e} (h = 1/R_s at most {MAX_FILM_COEFFICIENT:e} W/(m²·K); for a smaller one, fix the temperature)"
                )));
            }
            Ok(1.0 / r)
        }
    }
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

/// A finite temperature not below absolute zero and at most [`MAX_ABS_TEMPERATURE_C`].
pub(super) fn check_temperature(v: f64, what: &str) -> Result<()> {
    check_bounded(v, MAX_ABS_TEMPERATURE_C, what, "°C")?;
    if v < ABSOLUTE_ZERO_C {
        return Err(Error::input(format!(
            "{what} = {v} °C is below absolute zero ({ABSOLUTE_ZERO_C} °C)"
        )));
    }
    Ok(())
}

/// Materials sorted by name (BTreeMap order), id = index, with the name → id table and the
/// conductivity table of each material that has one.
fn validate_materials(file: &ModelFile) -> Result<MaterialTables> {
    if file.materials.is_empty() {
        return Err(Error::input(
            "materials: no material defined; add e.g. [materials.concrete] with conductivity = 1.7",
        ));
    }
    let mut materials = Vec::new();
    let mut ids = BTreeMap::new();
    let mut seen = BTreeMap::new();
    let mut tables = Vec::new();
    for (i, (name, m)) in file.materials.iter().enumerate() {
        let label = format!("materials.{}", printable(name));
        check_name(&label, name, "material")?;
        check_case_unique(&label, name, "material", &mut seen)?;
        let label = format!("materials.{name}");
        let (conductivity, table) = match &m.conductivity {
            ConductivityFile::Table { table } => {
                if let Some(o) = m.orientation {
                    return Err(Error::input(format!(
                        "{label}: orientation = {o} needs a pair conductivity = [k_major, k_minor]; a conductivity table is isotropic (an anisotropic k(T) is not supported)"
                    )));
                }
                let t = super::nonlinear::validate_table(&label, table)?;
                (super::ConductivityLaw::Isotropic { k: t.middle() }, Some(t))
            }
            written => (
                super::conductivity::conductivity_law(&label, written, m.orientation)?,
                None,
            ),
        };
        tables.push(table);
        let written = m.heat_source.clone().unwrap_or(0.0.into());
        let (q, source_field) = super::field::validate_field(
            &format!("materials.{name}.heat_source"),
            &written,
            false,
            &|v, what| check_bounded(v, MAX_ABS_HEAT_SOURCE, what, "W/m³"),
        )?;
        let source_field = source_field.map(|f| match f {
            super::Field::Linear(l) => l,
            super::Field::Profile(_) => unreachable!("profiles refused above"),
        });
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
            conductivity,
            heat_source: q,
            source_field,
            max_area: m.max_area,
        });
    }
    Ok((materials, ids, tables))
}

/// Materials, the name → id table and the conductivity table per material id.
type MaterialTables = (
    Vec<Material>,
    BTreeMap<String, usize>,
    Vec<Option<super::ConductivityTable>>,
);

/// Boundaries, the name → id table and the radiation per boundary id.
type BoundaryTables = (
    Vec<Boundary>,
    BTreeMap<String, usize>,
    Vec<Option<super::Radiation>>,
);

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
            "{label}: material \"{}\" is not defined under [materials] (defined: {}){}",
            printable(name),
            known_list(file.materials.keys()),
            did_you_mean(name, file.materials.keys())
        ))
    })
}

/// Boundaries sorted by name, id = index, with the name → id table and the radiation of each.
fn validate_boundaries(file: &ModelFile) -> Result<BoundaryTables> {
    let mut radiation = Vec::new();
    let mut boundaries = Vec::new();
    let mut ids = BTreeMap::new();
    let mut seen = BTreeMap::new();
    for (i, (name, b)) in file.boundaries.iter().enumerate() {
        let label = format!("boundaries.{}", printable(name));
        check_name(&label, name, "boundary")?;
        check_case_unique(&label, name, "boundary", &mut seen)?;
        let (kind, field) = validate_boundary(name, b)?;
        radiation.push(super::nonlinear::boundary_radiation(name, b, &kind)?);
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
            resistance: b.resistance,
            field,
        });
    }
    Ok((boundaries, ids, radiation))
}

/// A key given that the boundary's kind does not take is an error naming it.
fn check_kind_keys(name: &str, b: &BoundaryFile, allowed: &[&str]) -> Result<()> {
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

/// The condition of one written boundary (its name already checked).
fn validate_boundary(name: &str, b: &BoundaryFile) -> Result<(BoundaryKind, Option<Field>)> {
    let mut field = None;
    let kind = match b.kind.as_str() {
        "fixed" => {
            check_kind_keys(name, b, &["temperature"])?;
            let t = require_field(name, "temperature", &b.temperature, "fixed")?;
            let (t, f) = super::field::validate_field(
                &format!("boundaries.{name}.temperature"),
                t,
                true,
                &check_temperature,
            )?;
            field = f;
            BoundaryKind::Fixed { temperature: t }
        }
        "insulated" => {
            check_kind_keys(name, b, &[])?;
            BoundaryKind::Insulated
        }
        "flux" => {
            check_kind_keys(name, b, &["flux"])?;
            let q = require(name, "flux", b.flux, "flux")?;
            check_bounded(q, MAX_ABS_FLUX, &format!("boundaries.{name}: flux"), "W/m²")?;
            BoundaryKind::Flux { flux: q }
        }
        "convection" => {
            check_kind_keys(name, b, &["h", "resistance", "ambient"])?;
            let h = film_or_resistance(&format!("boundaries.{name}"), b.h, b.resistance)?;
            let a = require_field(name, "ambient", &b.ambient, "convection")?;
            let (a, f) = super::field::validate_field(
                &format!("boundaries.{name}.ambient"),
                a,
                true,
                &check_temperature,
            )?;
            field = f;
            BoundaryKind::Convection { h, ambient: a }
        }
        "radiation" => {
            check_kind_keys(name, b, &[])?;
            let r = super::nonlinear::radiation_keys(name, b, None, true)?;
            let r = r.ok_or_else(|| {
                Error::input(format!(
                    "boundaries.{name}: kind \"radiation\" needs `emissivity`"
                ))
            })?;
            BoundaryKind::Radiation {
                emissivity: r.emissivity,
                surroundings: r.surroundings,
            }
        }
        other => {
            let hint = suggest(
                other,
                ["fixed", "insulated", "flux", "convection", "radiation"].into_iter(),
            )
            .map(|s| format!("; did you mean \"{s}\"?"))
            .unwrap_or_default();
            return Err(Error::input(format!(
                "boundaries.{name}: unknown kind \"{}\" (one of: fixed, insulated, flux, convection, radiation){hint}",
                printable(other)
            )));
        }
    };
    Ok((kind, field))
}

/// The written field of a key the kind needs.
fn require_field<'a>(
    name: &str,
    key: &str,
    v: &'a Option<super::FieldFile>,
    kind: &str,
) -> Result<&'a super::FieldFile> {
    v.as_ref()
        .ok_or_else(|| Error::input(format!("boundaries.{name}: kind \"{kind}\" needs `{key}`")))
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
    let pts = super::shapes::sketch(r);
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in &pts {
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

/// How messages name a ring: its source (e.g. `ground.geojson features[2]`) for a ring read
/// from a file, else `KIND[i]` as in the model file.
fn ring_label(r: &RingFile, kind: &str, i: usize) -> String {
    r.label.clone().unwrap_or_else(|| format!("{kind}[{i}]"))
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
        .map(|(i, h)| build_ring(&ring_label(h, "holes", i), h, ctx, warnings))
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
        let label = ring_label(r, "regions", i);
        let material = material_of(file, material_ids, &label, &r.material)?;
        let ring = build_ring(&label, r, &ctx, warnings)?;
        regions.push(Region { ring, material });
    }
    Ok(regions)
}

/// All rings together hold at most [`MAX_RING_POINTS`] points, counted as written (a circle
/// by its segment count) before any ring is built.
fn check_written_points(file: &ModelFile, max_area: f64) -> Result<()> {
    let total = file
        .outline
        .iter()
        .chain(&file.holes)
        .chain(&file.regions)
        .map(|r| match &r.circle {
            None => super::shapes::written_point_count(r, max_area),
            Some(_) => ring_circle_segments(r, &file.boundaries, max_area)
                .unwrap_or(0)
                .min(MAX_CIRCLE_SEGMENTS + 1),
        })
        .fold(0usize, usize::saturating_add);
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

/// A probe or line name: valid characters, not too long, and not used twice (case ignored).
fn check_unique_name(
    label: &str,
    name: &str,
    what: &str,
    seen: &mut BTreeMap<String, String>,
) -> Result<()> {
    check_name(label, name, what)?;
    check_case_unique(label, name, what, seen)
}

/// Probes in file order: unique names, finite positions.
fn validate_probes(file: &ModelFile) -> Result<Vec<Probe>> {
    let mut seen = BTreeMap::new();
    let mut probes = Vec::new();
    for (i, p) in file.probes.iter().enumerate() {
        let label = format!("probes[{i}] \"{}\"", printable(&p.name));
        check_unique_name(&label, &p.name, "probe", &mut seen)?;
        finite_point(p.at, &format!("{label}: at"))?;
        probes.push(Probe {
            name: p.name.clone(),
            at: p.at,
        });
    }
    Ok(probes)
}

/// Lines in file order: unique names, finite distinct end points, at least 2 samples each and
/// at most [`MAX_LINE_SAMPLES`] over all lines together.
fn validate_lines(file: &ModelFile) -> Result<Vec<Line>> {
    let mut seen = BTreeMap::new();
    let mut lines = Vec::new();
    let mut total = 0usize;
    for (i, l) in file.lines.iter().enumerate() {
        let label = format!("lines[{i}] \"{}\"", printable(&l.name));
        check_unique_name(&label, &l.name, "line", &mut seen)?;
        finite_point(l.from, &format!("{label}: from"))?;
        finite_point(l.to, &format!("{label}: to"))?;
        if l.samples < 2 {
            return Err(Error::input(format!(
                "{label}: samples = {} must be at least 2",
                l.samples
            )));
        }
        total = total.saturating_add(l.samples);
        if total > MAX_LINE_SAMPLES {
            return Err(Error::input(format!(
                "{label}: samples = {}: the lines would have {total} samples together, above the limit of {MAX_LINE_SAMPLES} over all lines",
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
