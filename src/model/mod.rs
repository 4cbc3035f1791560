//! Model stage: the serde types that mirror the TOML model file one to one (`ModelFile`), and the
//! validation that turns them into a [`Section`] — rings with named boundary segments, materials
//! with ids, a boundary table, probes and lines — or a precise error naming the offending item.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Largest accepted coordinate magnitude, m. Sections are at most kilometres across; this keeps
/// geometric predicates far from overflow and catches unit slips (mm typed as m).
pub const MAX_COORD: f64 = 1.0e6;
/// Default minimum angle of the quality mesh, degrees.
pub const DEFAULT_MIN_ANGLE: f64 = 28.0;
/// Largest minimum angle accepted: beyond it Delaunay refinement may not terminate.
pub const MAX_MIN_ANGLE: f64 = 33.0;
/// Default triangle limit (change with `--max-triangles`).
pub const DEFAULT_MAX_TRIANGLES: usize = 5_000_000;
/// Most points all rings together may hold (circles included): beyond it the section is not a
/// cross-section an engineer draws, and the geometry checks would take minutes.
pub const MAX_RING_POINTS: usize = 1_000_000;
/// Most segments of one circle. Points on a circle are a near-degenerate case for Delaunay
/// triangulation (every four of them almost cocircular): the time to triangulate a circular hole
/// grows with the square of its segment count, a few seconds at this limit.
pub const MAX_CIRCLE_SEGMENTS: usize = 20_000;
/// Absolute zero, °C.
pub const ABSOLUTE_ZERO_C: f64 = -273.15;

// ---------------------------------------------------------------------------------------------
// File types (serde mirrors of the TOML)
// ---------------------------------------------------------------------------------------------

#[derive(Debug, Clone, Deserialize, Serialize, Default)]
#[serde(deny_unknown_fields)]
pub struct ModelFile {
    #[serde(default)]
    pub title: Option<String>,
    #[serde(default)]
    pub mesh: MeshFile,
    #[serde(default)]
    pub materials: BTreeMap<String, MaterialFile>,
    #[serde(default)]
    pub outline: Option<RingFile>,
    #[serde(default)]
    pub regions: Vec<RingFile>,
    #[serde(default)]
    pub holes: Vec<RingFile>,
    #[serde(default)]
    pub boundaries: BTreeMap<String, BoundaryFile>,
    #[serde(default)]
    pub probes: Vec<ProbeFile>,
    #[serde(default)]
    pub lines: Vec<LineFile>,
}

#[derive(Debug, Clone, Deserialize, Serialize, Default)]
#[serde(deny_unknown_fields)]
pub struct MeshFile {
    /// m²
    pub max_area: Option<f64>,
    /// degrees
    pub min_angle: Option<f64>,
}

#[derive(Debug, Clone, Deserialize, Serialize, Default)]
#[serde(deny_unknown_fields)]
pub struct MaterialFile {
    /// W/(m·K)
    pub conductivity: f64,
    /// W/m³
    #[serde(default)]
    pub heat_source: Option<f64>,
    /// m²: largest triangle in this material (local size control); default: the mesh's.
    #[serde(default)]
    pub max_area: Option<f64>,
}

#[derive(Debug, Clone, Deserialize, Serialize, Default)]
#[serde(deny_unknown_fields)]
pub struct RingFile {
    pub material: Option<String>,
    pub points: Option<Vec<[f64; 2]>>,
    pub circle: Option<CircleFile>,
    pub edges: Option<Vec<String>>,
    pub boundary: Option<String>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CircleFile {
    pub center: [f64; 2],
    pub radius: f64,
    pub segments: Option<usize>,
}

/// A boundary condition as written. Kept flat so that a key that does not belong to the kind
/// can be named in the error message.
#[derive(Debug, Clone, Deserialize, Serialize, Default)]
#[serde(deny_unknown_fields)]
pub struct BoundaryFile {
    pub kind: String,
    pub temperature: Option<f64>,
    pub h: Option<f64>,
    pub ambient: Option<f64>,
    pub flux: Option<f64>,
    /// m: target edge length of the mesh along this boundary (local size control).
    pub size: Option<f64>,
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct ProbeFile {
    pub name: String,
    pub at: [f64; 2],
}

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct LineFile {
    pub name: String,
    pub from: [f64; 2],
    pub to: [f64; 2],
    pub samples: usize,
}

// ---------------------------------------------------------------------------------------------
// Validated section
// ---------------------------------------------------------------------------------------------

/// Boundary condition of a named boundary.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum BoundaryKind {
    /// Fixed temperature, °C.
    Fixed { temperature: f64 },
    /// Zero normal flux.
    Insulated,
    /// Imposed normal flux, W/m², positive into the section.
    Flux { flux: f64 },
    /// Film coefficient h, W/(m²·K), to an ambient temperature, °C.
    Convection { h: f64, ambient: f64 },
}

impl BoundaryKind {
    pub fn name(&self) -> &'static str {
        match self {
            BoundaryKind::Fixed { .. } => "fixed",
            BoundaryKind::Insulated => "insulated",
            BoundaryKind::Flux { .. } => "flux",
            BoundaryKind::Convection { .. } => "convection",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Boundary {
    pub name: String,
    #[serde(flatten)]
    pub kind: BoundaryKind,
    /// Target mesh edge length along the boundary, m.
    pub size: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Material {
    /// Material id = index in `Section::materials` (alphabetical order of name).
    pub id: usize,
    pub name: String,
    /// W/(m·K)
    pub conductivity: f64,
    /// W/m³
    pub heat_source: f64,
    /// Largest triangle in this material, m² (`None`: the mesh's `max_area`).
    pub max_area: Option<f64>,
}

/// The circle a ring was made from, kept for the boundary discretisation error (sagitta).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Circle {
    pub center: [f64; 2],
    pub radius: f64,
    pub segments: usize,
}

impl Circle {
    /// Largest distance between the true circle and its inscribed polygon, m.
    pub fn sagitta(&self) -> f64 {
        self.radius * (1.0 - (std::f64::consts::PI / self.segments as f64).cos())
    }
}

/// A closed polygon, counter-clockwise, without repeated points.
#[derive(Debug, Clone, PartialEq)]
pub struct Ring {
    /// How the user refers to it: `outline`, `regions[2]`, `holes[0]`.
    pub label: String,
    pub points: Vec<[f64; 2]>,
    /// Boundary id of segment i → i+1 (last closes the ring); `None` = unnamed (insulated).
    pub edge_boundary: Vec<Option<usize>>,
    /// Index of segment i as the user wrote it (before dropping repeats and reorienting).
    pub written_segment: Vec<usize>,
    pub circle: Option<Circle>,
}

impl Ring {
    pub fn len(&self) -> usize {
        self.points.len()
    }
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }
    /// Segment i as a pair of points.
    pub fn segment(&self, i: usize) -> ([f64; 2], [f64; 2]) {
        (self.points[i], self.points[(i + 1) % self.points.len()])
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct Region {
    pub ring: Ring,
    pub material: usize,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Probe {
    pub name: String,
    pub at: [f64; 2],
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Line {
    pub name: String,
    pub from: [f64; 2],
    pub to: [f64; 2],
    pub samples: usize,
}

/// Mesh controls as resolved (defaults filled in).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MeshSettings {
    /// m²
    pub max_area: f64,
    /// true when `max_area` was not given and the default (section area / 4000) is used.
    pub max_area_is_default: bool,
    /// degrees
    pub min_angle: f64,
}

/// A validated cross-section, ready for the geometry stage.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    pub title: String,
    pub mesh: MeshSettings,
    /// Sorted by name; `materials[i].id == i`.
    pub materials: Vec<Material>,
    /// Material id of the outline's interior.
    pub outline_material: usize,
    pub outline: Ring,
    /// In file order: a later region wins where regions overlap.
    pub regions: Vec<Region>,
    pub holes: Vec<Ring>,
    /// Sorted by name; boundary id = index.
    pub boundaries: Vec<Boundary>,
    pub probes: Vec<Probe>,
    pub lines: Vec<Line>,
    /// Warnings found while validating (unnamed segments, dropped points, ...).
    pub warnings: Vec<String>,
}

// ---------------------------------------------------------------------------------------------
// Parsing and validation
// ---------------------------------------------------------------------------------------------

/// Parse the TOML text of a model file. Syntax errors, unknown keys and wrong types are
/// reported with the line and column, the offending line, and for a misspelt key the nearest
/// valid one.
pub fn parse(text: &str) -> Result<ModelFile> {
    toml::from_str::<ModelFile>(text).map_err(|e| {
        let mut msg = e.message().trim_end().to_string();
        if let Some(hint) = unknown_key_hint(&msg) {
            msg.push_str(&hint);
        }
        match e.span() {
            Some(span) => {
                let start = span.start.min(text.len());
                let line = text[..start].matches('\n').count() + 1;
                let line_start = text[..start].rfind('\n').map_or(0, |i| i + 1);
                let column = text[line_start..start].chars().count() + 1;
                let line_text = text[line_start..].lines().next().unwrap_or("").trim_end();
                Error::input(format!(
                    "model file, line {line}, column {column}: {msg}\n  {line} | {line_text}"
                ))
            }
            None => Error::input(format!("model file: {msg}")),
        }
    })
}

/// For serde's "unknown field `x`, expected one of `a`, `b`" message: "; did you mean `a`?".
fn unknown_key_hint(msg: &str) -> Option<String> {
    let rest = msg.strip_prefix("unknown field `")?;
    let end = rest.find('`')?;
    let key = &rest[..end];
    let expected: Vec<&str> = rest[end + 1..].split('`').skip(1).step_by(2).collect();
    suggest(key, expected.iter().copied()).map(|s| format!("; did you mean `{s}`?"))
}

/// Levenshtein distance (for suggestions).
fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for i in 1..=a.len() {
        let mut cur = vec![i; b.len() + 1];
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            cur[j] = (prev[j] + 1).min(cur[j - 1] + 1).min(prev[j - 1] + cost);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The candidate nearest to `name`, if it is near enough to be a likely misspelling.
pub fn suggest<'a>(name: &str, candidates: impl Iterator<Item = &'a str>) -> Option<&'a str> {
    let limit = (name.chars().count().div_ceil(3)).max(2);
    candidates
        .map(|c| (edit_distance(&name.to_lowercase(), &c.to_lowercase()), c))
        .filter(|(d, _)| *d <= limit)
        .min_by(|x, y| x.0.cmp(&y.0).then(x.1.cmp(y.1)))
        .map(|(_, c)| c)
}

fn did_you_mean<'a>(name: &str, candidates: impl Iterator<Item = &'a String>) -> String {
    suggest(name, candidates.map(|s| s.as_str()))
        .map(|s| format!("; did you mean \"{s}\"?"))
        .unwrap_or_default()
}

/// Read, parse and validate a model file.
pub fn load(path: &std::path::Path) -> Result<(ModelFile, Section)> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Error::input(format!("cannot read model file {}: {e}", path.display())))?;
    let file = parse(&text)?;
    let section = validate(&file)?;
    Ok((file, section))
}

fn valid_name(name: &str) -> bool {
    !name.is_empty()
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
}

fn finite_point(p: [f64; 2], what: &str) -> Result<()> {
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

fn signed_area(points: &[[f64; 2]]) -> f64 {
    let n = points.len();
    let mut s = 0.0;
    for i in 0..n {
        let (p, q) = (points[i], points[(i + 1) % n]);
        s += p[0] * q[1] - q[0] * p[1];
    }
    0.5 * s
}

fn known_list<'a>(names: impl Iterator<Item = &'a String>) -> String {
    let v: Vec<String> = names.map(|s| format!("\"{s}\"")).collect();
    if v.is_empty() {
        "none defined".to_string()
    } else {
        v.join(", ")
    }
}

/// Number of segments of a circle: N = max(24, ⌈2πr/ℓ⌉), ℓ = (4·max_area/√3)^½ (the side of
/// an equilateral triangle of area `max_area`), unless given.
pub fn circle_segments(radius: f64, max_area: f64, given: Option<usize>) -> usize {
    if let Some(n) = given {
        return n;
    }
    let l = (4.0 * max_area / 3f64.sqrt()).sqrt();
    let n = (2.0 * std::f64::consts::PI * radius / l).ceil();
    if n.is_finite() && n > 24.0 {
        n.min(1.0e7) as usize
    } else {
        24
    }
}

/// Segment count of a ring written as a circle (`None` for a polygon): `segments` if given,
/// else [`circle_segments`] raised to ⌈2πr/size⌉ when the circle's boundary has a `size`.
pub fn ring_circle_segments(
    r: &RingFile,
    boundaries: &BTreeMap<String, BoundaryFile>,
    max_area: f64,
) -> Option<usize> {
    let c = r.circle.as_ref()?;
    let mut n = circle_segments(c.radius, max_area, c.segments);
    let size = r
        .boundary
        .as_ref()
        .and_then(|b| boundaries.get(b))
        .and_then(|b| b.size)
        .filter(|s| s.is_finite() && *s > 0.0);
    if let (Some(s), None) = (size, c.segments) {
        let k = (2.0 * std::f64::consts::PI * c.radius / s).ceil();
        if k.is_finite() && k as usize > n {
            n = (k as usize).min(1_000_000);
        }
    }
    Some(n)
}

/// Raw area of a ring as written (|shoelace| of the points, or πr²), for the default size.
fn raw_area(r: &RingFile) -> f64 {
    if let Some(c) = &r.circle {
        std::f64::consts::PI * c.radius * c.radius
    } else if let Some(p) = &r.points {
        signed_area(p).abs()
    } else {
        0.0
    }
}

struct RingContext<'a> {
    boundaries: &'a BTreeMap<String, BoundaryFile>,
    boundary_ids: &'a BTreeMap<String, usize>,
    max_area: f64,
    /// Distance below which two points are the same point, m.
    tol: f64,
    allow_names: bool,
}

fn build_ring(
    label: &str,
    r: &RingFile,
    ctx: &RingContext,
    warnings: &mut Vec<String>,
) -> Result<Ring> {
    match (&r.points, &r.circle) {
        (Some(_), Some(_)) => {
            return Err(Error::input(format!(
                "{label}: give either `points` or `circle`, not both"
            )));
        }
        (None, None) => {
            return Err(Error::input(format!(
                "{label}: missing `points` or `circle`"
            )));
        }
        _ => {}
    }
    if r.edges.is_some() && r.boundary.is_some() {
        return Err(Error::input(format!(
            "{label}: give either `edges` or `boundary`, not both"
        )));
    }
    if !ctx.allow_names && (r.edges.is_some() || r.boundary.is_some()) {
        return Err(Error::input(format!(
            "{label}: `edges`/`boundary` are not allowed on a region: region edges are material \
             interfaces; name boundary segments on the outline or on holes"
        )));
    }
    let lookup = |name: &str, what: String| -> Result<Option<usize>> {
        if name.is_empty() {
            return Ok(None);
        }
        match ctx.boundary_ids.get(name) {
            Some(&id) => Ok(Some(id)),
            None => Err(Error::input(format!(
                "{what} names boundary \"{name}\", which is not defined under [boundaries] (defined: {}){}",
                known_list(ctx.boundaries.keys()),
                did_you_mean(name, ctx.boundaries.keys())
            ))),
        }
    };
    let uniform = match &r.boundary {
        Some(b) => lookup(b, format!("{label}: boundary"))?,
        None => None,
    };

    let (written, circle): (Vec<[f64; 2]>, Option<Circle>) = if let Some(c) = &r.circle {
        finite_point(c.center, &format!("{label}: circle center"))?;
        if !c.radius.is_finite() || c.radius <= 0.0 {
            return Err(Error::input(format!(
                "{label}: circle radius {} must be a positive finite number (m)",
                c.radius
            )));
        }
        if c.radius > MAX_COORD {
            return Err(Error::input(format!(
                "{label}: circle radius {} m is outside the accepted range (<= {MAX_COORD:e} m)",
                c.radius
            )));
        }
        if let Some(n) = c.segments
            && !(3..=MAX_CIRCLE_SEGMENTS).contains(&n)
        {
            return Err(Error::input(format!(
                "{label}: circle segments = {n} must lie in 3..={MAX_CIRCLE_SEGMENTS}"
            )));
        }
        if r.edges.is_some() {
            return Err(Error::input(format!(
                "{label}: `edges` needs `points`; name a circle's boundary with `boundary = \"...\"`"
            )));
        }
        let n = ring_circle_segments(r, ctx.boundaries, ctx.max_area).unwrap_or(24);
        if n > MAX_CIRCLE_SEGMENTS {
            return Err(Error::input(format!(
                "{label}: the circle would have {n} segments (from max_area or the boundary's size), above the limit of {MAX_CIRCLE_SEGMENTS}; give `segments`, or raise max_area or the boundary's size"
            )));
        }
        let pts = (0..n)
            .map(|k| {
                let a = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
                [
                    c.center[0] + c.radius * a.cos(),
                    c.center[1] + c.radius * a.sin(),
                ]
            })
            .collect();
        (
            pts,
            Some(Circle {
                center: c.center,
                radius: c.radius,
                segments: n,
            }),
        )
    } else {
        let pts = r.points.clone().unwrap_or_default();
        for (i, p) in pts.iter().enumerate() {
            finite_point(*p, &format!("{label}: points[{i}]"))?;
        }
        (pts, None)
    };
    let n = written.len();
    // Names per written segment.
    let names: Vec<Option<usize>> = match &r.edges {
        Some(edges) => {
            if edges.len() != n {
                return Err(Error::input(format!(
                    "{label}: `edges` has {} names but the ring has {n} segments (one per point, the last closing the ring)",
                    edges.len()
                )));
            }
            edges
                .iter()
                .enumerate()
                .map(|(i, e)| lookup(e, format!("{label}: edges[{i}]")))
                .collect::<Result<_>>()?
        }
        None => vec![uniform; n],
    };
    // Drop zero-length segments (a point repeated consecutively).
    let same = |a: [f64; 2], b: [f64; 2]| {
        ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt() <= ctx.tol
    };
    let mut points = Vec::new();
    let mut edge_boundary = Vec::new();
    let mut written_segment = Vec::new();
    for i in 0..n {
        let (p, q) = (written[i], written[(i + 1) % n]);
        if n > 1 && same(p, q) {
            let name = r
                .edges
                .as_ref()
                .map(|e| e[i].clone())
                .filter(|s| !s.is_empty());
            warnings.push(format!(
                "{label}: point {} repeats point {i} at ({}, {}); dropped with its zero-length segment {i}{}",
                (i + 1) % n,
                q[0],
                q[1],
                name.map(|s| format!(" (named \"{s}\")")).unwrap_or_default()
            ));
            continue;
        }
        points.push(p);
        edge_boundary.push(names[i]);
        written_segment.push(i);
    }
    if points.len() < 3 {
        return Err(Error::input(format!(
            "{label}: a ring needs at least 3 distinct points, found {}",
            points.len()
        )));
    }
    // A vertex repeated non-consecutively makes the ring touch itself.
    {
        let mut order: Vec<usize> = (0..points.len()).collect();
        order.sort_by(|&a, &b| {
            points[a][0]
                .total_cmp(&points[b][0])
                .then(points[a][1].total_cmp(&points[b][1]))
        });
        for w in 0..order.len() {
            let a = order[w];
            for &b in order.iter().skip(w + 1) {
                if points[b][0] - points[a][0] > ctx.tol {
                    break;
                }
                if same(points[a], points[b]) {
                    let (i, j) = (a.min(b), a.max(b));
                    return Err(Error::input(format!(
                        "{label}: point {} repeats point {} at ({}, {}) (a ring may not touch itself)",
                        written_segment[j], written_segment[i], points[i][0], points[i][1]
                    )));
                }
            }
        }
    }
    let area = signed_area(&points);
    // All points on one line: no area. (A zero net area with points off the line is a ring
    // that crosses itself; the geometry stage names the crossing segments.)
    let far = points
        .iter()
        .copied()
        .max_by(|a, b| {
            let da = (a[0] - points[0][0]).hypot(a[1] - points[0][1]);
            let db = (b[0] - points[0][0]).hypot(b[1] - points[0][1]);
            da.total_cmp(&db)
        })
        .unwrap_or(points[0]);
    let base = (far[0] - points[0][0]).hypot(far[1] - points[0][1]);
    let off_line = points.iter().any(|p| {
        let cross = (far[0] - points[0][0]) * (p[1] - points[0][1])
            - (far[1] - points[0][1]) * (p[0] - points[0][0]);
        cross.abs() / base > ctx.tol
    });
    if !off_line {
        return Err(Error::input(format!(
            "{label}: ring has no area (its points are collinear)"
        )));
    }
    if area < 0.0 {
        let m = points.len();
        points.reverse();
        let eb = edge_boundary.clone();
        let ws = written_segment.clone();
        for j in 0..m {
            let k = (2 * m - 2 - j) % m;
            edge_boundary[j] = eb[k];
            written_segment[j] = ws[k];
        }
    }
    Ok(Ring {
        label: label.to_string(),
        points,
        edge_boundary,
        written_segment,
        circle,
    })
}

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

fn require(name: &str, key: &str, v: Option<f64>, kind: &str) -> Result<f64> {
    v.ok_or_else(|| Error::input(format!("boundaries.{name}: kind \"{kind}\" needs `{key}`")))
}

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

/// Turn a parsed model file into a validated [`Section`]. Geometric checks that need more than
/// one ring (holes inside the outline, crossings, probes inside) belong to the geometry stage.
pub fn validate(file: &ModelFile) -> Result<Section> {
    let mut warnings = Vec::new();
    // Materials, sorted by name (BTreeMap order): id = index.
    if file.materials.is_empty() {
        return Err(Error::input(
            "materials: no material defined; add e.g. [materials.concrete] with conductivity = 1.7",
        ));
    }
    let mut materials = Vec::new();
    let mut material_ids = BTreeMap::new();
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
        material_ids.insert(name.clone(), i);
        materials.push(Material {
            id: i,
            name: name.clone(),
            conductivity: m.conductivity,
            heat_source: q,
            max_area: m.max_area,
        });
    }
    let material_of = |label: &str, m: &Option<String>| -> Result<usize> {
        let name = m
            .as_ref()
            .ok_or_else(|| Error::input(format!("{label}: missing `material`")))?;
        material_ids.get(name).copied().ok_or_else(|| {
            Error::input(format!(
                "{label}: material \"{name}\" is not defined under [materials] (defined: {}){}",
                known_list(file.materials.keys()),
                did_you_mean(name, file.materials.keys())
            ))
        })
    };

    // Boundaries, sorted by name.
    let mut boundaries = Vec::new();
    let mut boundary_ids = BTreeMap::new();
    for (i, (name, b)) in file.boundaries.iter().enumerate() {
        let kind = validate_boundary(name, b)?;
        if let Some(h) = b.size
            && (!h.is_finite() || h <= 0.0)
        {
            return Err(Error::input(format!(
                "boundaries.{name}: size = {h} m must be a positive finite number"
            )));
        }
        boundary_ids.insert(name.clone(), i);
        boundaries.push(Boundary {
            name: name.clone(),
            kind,
            size: b.size,
        });
    }

    let outline_file = file.outline.as_ref().ok_or_else(|| {
        Error::input("outline: missing [outline] table (the section's outer ring)")
    })?;
    let outline_material = material_of("outline", &outline_file.material)?;
    for (i, h) in file.holes.iter().enumerate() {
        if h.material.is_some() {
            return Err(Error::input(format!(
                "holes[{i}]: `material` is not allowed on a hole (a hole holds no material)"
            )));
        }
    }

    // Mesh settings.
    let min_angle = file.mesh.min_angle.unwrap_or(DEFAULT_MIN_ANGLE);
    if !min_angle.is_finite() || min_angle <= 0.0 || min_angle > MAX_MIN_ANGLE {
        return Err(Error::input(format!(
            "mesh: min_angle = {min_angle}° must lie in (0, {MAX_MIN_ANGLE}]: above {MAX_MIN_ANGLE}° Delaunay refinement may not terminate"
        )));
    }
    let raw_section_area = raw_area(outline_file) - file.holes.iter().map(raw_area).sum::<f64>();
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

    // Tolerance: 1e-9 × the outline's extent.
    let extent = outline_extent(outline_file);
    let tol = 1e-9 * extent.max(1e-6);
    let ctx = RingContext {
        boundaries: &file.boundaries,
        boundary_ids: &boundary_ids,
        max_area,
        tol,
        allow_names: true,
    };
    let outline = build_ring("outline", outline_file, &ctx, &mut warnings)?;
    let mut holes = Vec::new();
    for (i, h) in file.holes.iter().enumerate() {
        holes.push(build_ring(&format!("holes[{i}]"), h, &ctx, &mut warnings)?);
    }
    let region_ctx = RingContext {
        allow_names: false,
        ..ctx
    };
    let mut regions = Vec::new();
    for (i, r) in file.regions.iter().enumerate() {
        let label = format!("regions[{i}]");
        let material = material_of(&label, &r.material)?;
        let ring = build_ring(&label, r, &region_ctx, &mut warnings)?;
        regions.push(Region { ring, material });
    }

    let total: usize = std::iter::once(&outline)
        .chain(holes.iter())
        .chain(regions.iter().map(|r| &r.ring))
        .map(|r| r.len())
        .sum();
    if total > MAX_RING_POINTS {
        return Err(Error::input(format!(
            "the rings hold {total} points in total, above the limit of {MAX_RING_POINTS}; give circles fewer `segments`, or raise max_area or the boundaries' size"
        )));
    }

    // Unnamed segments and unused boundaries.
    let mut used = vec![false; boundaries.len()];
    for ring in std::iter::once(&outline).chain(holes.iter()) {
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

    // Probes and lines.
    let mut probes = Vec::new();
    let mut seen = std::collections::BTreeSet::new();
    for (i, p) in file.probes.iter().enumerate() {
        let label = format!("probes[{i}] \"{}\"", p.name);
        if !valid_name(&p.name) {
            return Err(Error::input(format!(
                "{label}: a probe name may hold only letters, digits, '_' and '-'"
            )));
        }
        if !seen.insert(p.name.clone()) {
            return Err(Error::input(format!("{label}: duplicate probe name")));
        }
        finite_point(p.at, &format!("{label}: at"))?;
        probes.push(Probe {
            name: p.name.clone(),
            at: p.at,
        });
    }
    let mut lines = Vec::new();
    let mut seen = std::collections::BTreeSet::new();
    for (i, l) in file.lines.iter().enumerate() {
        let label = format!("lines[{i}] \"{}\"", l.name);
        if !valid_name(&l.name) {
            return Err(Error::input(format!(
                "{label}: a line name may hold only letters, digits, '_' and '-'"
            )));
        }
        if !seen.insert(l.name.clone()) {
            return Err(Error::input(format!("{label}: duplicate line name")));
        }
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

    Ok(Section {
        title: file.title.clone().unwrap_or_else(|| "untitled".to_string()),
        mesh: MeshSettings {
            max_area,
            max_area_is_default,
            min_angle,
        },
        materials,
        outline_material,
        outline,
        regions,
        holes,
        boundaries,
        probes,
        lines,
        warnings,
    })
}

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

impl Section {
    /// The model as resolved with its defaults, for summary.json.
    pub fn resolved_json(&self) -> serde_json::Value {
        let ring = |r: &Ring| {
            serde_json::json!({
                "label": r.label,
                "points": r.points,
                "edge_boundary": r.edge_boundary.iter().map(|b| b.map(|id| self.boundaries[id].name.clone())).collect::<Vec<_>>(),
                "circle": r.circle,
            })
        };
        serde_json::json!({
            "title": self.title,
            "mesh": self.mesh,
            "materials": self.materials,
            "outline": { "material": self.materials[self.outline_material].name, "ring": ring(&self.outline) },
            "regions": self.regions.iter().map(|r| serde_json::json!({"material": self.materials[r.material].name, "ring": ring(&r.ring)})).collect::<Vec<_>>(),
            "holes": self.holes.iter().map(ring).collect::<Vec<_>>(),
            "boundaries": self.boundaries,
            "probes": self.probes,
            "lines": self.lines,
        })
    }

    /// Diagonal of the outline's bounding box, m.
    pub fn diameter(&self) -> f64 {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for p in &self.outline.points {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
        ((hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2)).sqrt()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggestions_for_misspellings() {
        let keys = [
            "title",
            "mesh",
            "materials",
            "outline",
            "boundaries",
            "probes",
        ];
        assert_eq!(suggest("boundary", keys.into_iter()), Some("boundaries"));
        assert_eq!(suggest("materail", keys.into_iter()), Some("materials"));
        assert_eq!(suggest("Outline", keys.into_iter()), Some("outline"));
        assert_eq!(suggest("xyzzy", keys.into_iter()), None);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
    }

    #[test]
    fn unknown_top_level_table_names_line_and_suggests() {
        let e = parse("title = \"x\"\n[boundary.a]\nkind = \"fixed\"\n").unwrap_err();
        let m = e.message();
        assert!(m.contains("line 2"), "{m}");
        assert!(m.contains("did you mean `boundaries`"), "{m}");
        assert_eq!(e.exit_code(), 2);
    }

    #[test]
    fn circle_segment_rule() {
        // N = max(24, ⌈2πr/ℓ⌉), ℓ = (4·A/√3)^½: for A = 0.01, ℓ = 0.15197 m, r = 1 → 42.
        assert_eq!(circle_segments(1.0, 0.01, None), 42);
        assert_eq!(circle_segments(0.1, 0.01, None), 24);
        assert_eq!(circle_segments(1.0, 0.01, Some(7)), 7);
    }

    #[test]
    fn clockwise_rings_are_reoriented_with_their_names() {
        let text = r#"
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [0.0, 1.0], [1.0, 1.0], [1.0, 0.0]]
edges = ["left", "top", "right", "bottom"]
[boundaries.left]
kind = "fixed"
temperature = 0.0
[boundaries.top]
kind = "insulated"
[boundaries.right]
kind = "insulated"
[boundaries.bottom]
kind = "insulated"
"#;
        let s = validate(&parse(text).unwrap()).unwrap();
        let r = &s.outline;
        assert!(signed_area(&r.points) > 0.0);
        // Each segment keeps its name: find the segment from (0,1) to (0,0) (left, reversed).
        let name = |i: usize| r.edge_boundary[i].map(|b| s.boundaries[b].name.clone());
        for i in 0..4 {
            let (a, b) = r.segment(i);
            let expected = match (a, b) {
                ([0.0, 1.0], [0.0, 0.0]) => "left",
                ([1.0, 1.0], [0.0, 1.0]) => "top",
                ([1.0, 0.0], [1.0, 1.0]) => "right",
                ([0.0, 0.0], [1.0, 0.0]) => "bottom",
                _ => panic!("unexpected segment {a:?} → {b:?}"),
            };
            assert_eq!(name(i).as_deref(), Some(expected));
        }
    }

    #[test]
    fn repeated_points_are_dropped_with_a_warning() {
        let text = r#"
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]
edges = ["b", "", "b", "b", "b", "gone"]
[boundaries.b]
kind = "fixed"
temperature = 0.0
[boundaries.gone]
kind = "insulated"
"#;
        let s = validate(&parse(text).unwrap()).unwrap();
        assert_eq!(s.outline.len(), 4);
        assert!(s.outline.edge_boundary.iter().all(|b| b.is_some()));
        assert!(s.warnings.iter().any(|w| w.contains("repeats point 1")));
        assert!(s.warnings.iter().any(|w| w.contains("\"gone\"")));
    }
}
