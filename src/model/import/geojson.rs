//! `[geojson]`: Polygon and MultiPolygon features of an RFC 7946 file as written rings.
//! Coordinates are metres in a local plane (x east, y up the section), never longitude and
//! latitude: no map projection is applied. Properties of a feature: `material` (required except
//! on holes), `role` (`"outline"`, `"region"` — the default — or `"hole"`), and optionally
//! `boundary` (one name, or one per ring: exterior first, then the interior rings) or `edges`
//! (the names of the segments of the one ring, or one list per ring). The outline is the
//! feature with `role = "outline"`, else the polygon with the largest exterior ring; its
//! interior rings are holes. Altitudes are ignored with one warning.

use super::{Imported, ImportedRings, RingFile, open_ring};
use crate::error::{Error, Result, printable};
use crate::geom::polygon_area;
use geojson::{GeoJson, GeometryValue, JsonObject, JsonValue, PolygonType};

/// A feature's role in the section.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Role {
    Outline,
    Region,
    Hole,
}

/// How a feature names the segments of one ring.
#[derive(Debug, Clone)]
enum Names {
    None,
    Uniform(String),
    Edges(Vec<String>),
}

/// One polygon of a feature: its rings (exterior first) with their labels and names.
struct Polygon {
    label: String,
    role: Role,
    material: Option<String>,
    rings: Vec<(String, Vec<[f64; 2]>, Names)>,
}

/// The rings of a GeoJSON text; `prefix` starts every message (the file's name),
/// `inline_outline` says the model has its own `[outline]`.
pub(super) fn rings(
    text: &str,
    prefix: &str,
    inline_outline: bool,
    imported: &mut Imported,
) -> Result<ImportedRings> {
    let gj: GeoJson = text
        .parse()
        .map_err(|e| Error::input(format!("{prefix}: not valid GeoJSON: {e}")))?;
    let features = match gj {
        GeoJson::FeatureCollection(c) => c.features,
        GeoJson::Feature(f) => vec![f],
        GeoJson::Geometry(_) => {
            return Err(Error::input(format!(
                "{prefix}: a bare geometry has no properties; give a Feature or FeatureCollection whose features name their `material`"
            )));
        }
    };
    if features.is_empty() {
        return Err(Error::input(format!("{prefix}: no features")));
    }
    let mut altitudes = 0;
    let mut polygons = Vec::new();
    for (i, f) in features.iter().enumerate() {
        let label = format!("{prefix} features[{i}]");
        let props = f.properties.clone().unwrap_or_default();
        let role = role(&label, &props)?;
        let material = material(&label, &props, role)?;
        let geometry = f.geometry.as_ref().ok_or_else(|| {
            Error::input(format!("{label}: no geometry (a Polygon or MultiPolygon)"))
        })?;
        let parts: Vec<&PolygonType> = match &geometry.value {
            GeometryValue::Polygon { coordinates } => vec![coordinates],
            GeometryValue::MultiPolygon { coordinates } => coordinates.iter().collect(),
            other => {
                return Err(Error::input(format!(
                    "{label}: geometry is a {}; only Polygon and MultiPolygon features describe rings",
                    other.type_name()
                )));
            }
        };
        let ring_count: usize = parts.iter().map(|p| p.len()).sum();
        let mut names = names(&label, &props, ring_count)?.into_iter();
        for (j, part) in parts.iter().enumerate() {
            let plabel = if parts.len() > 1 {
                format!("{label} polygon {j}")
            } else {
                label.clone()
            };
            let mut rings = Vec::new();
            for (k, ring) in part.iter().enumerate() {
                let rlabel = if k == 0 {
                    plabel.clone()
                } else {
                    format!("{plabel} interior ring {k}")
                };
                let pts = points(&rlabel, ring, &mut altitudes)?;
                rings.push((rlabel, pts, names.next().unwrap_or(Names::None)));
            }
            if rings.is_empty() {
                return Err(Error::input(format!("{plabel}: a polygon without rings")));
            }
            polygons.push(Polygon {
                label: plabel,
                role,
                material: material.clone(),
                rings,
            });
        }
    }
    if altitudes > 0 {
        imported.warnings.push(format!(
            "{prefix}: {altitudes} positions carry an altitude (a third coordinate); ignored, the section lies in the plane of x and y"
        ));
    }
    assemble(prefix, polygons, inline_outline)
}

/// Sort polygons into outline, regions and holes.
fn assemble(prefix: &str, polygons: Vec<Polygon>, inline_outline: bool) -> Result<ImportedRings> {
    let marked: Vec<usize> = (0..polygons.len())
        .filter(|&i| polygons[i].role == Role::Outline)
        .collect();
    let outline = match marked.as_slice() {
        [] if inline_outline => None,
        [] => largest(&polygons),
        [i] if !inline_outline => Some(*i),
        [i] => {
            return Err(Error::input(format!(
                "{}: role \"outline\", but the model has its own [outline]; give the outline once",
                polygons[*i].label
            )));
        }
        [a, b, ..] => {
            return Err(Error::input(format!(
                "{} and {}: more than one outline (role \"outline\" on a MultiPolygon of several polygons, or on several features)",
                polygons[*a].label, polygons[*b].label
            )));
        }
    };
    if outline.is_none() && !inline_outline {
        return Err(Error::input(format!(
            "{prefix}: no polygon with a `material` to be the outline"
        )));
    }
    let mut out = ImportedRings::default();
    for (i, p) in polygons.into_iter().enumerate() {
        let is_outline = Some(i) == outline;
        let mut rings = p.rings.into_iter();
        let Some((label, pts, names)) = rings.next() else {
            continue;
        };
        let exterior = ring_file(label, pts, names, p.material.clone());
        for (label, pts, names) in rings {
            if !is_outline {
                return Err(Error::input(format!(
                    "{label}: interior rings are holes of the outline only; draw what lies inside this {} as a feature of its own after it (a later feature wins where features overlap)",
                    if p.role == Role::Hole {
                        "hole"
                    } else {
                        "region"
                    }
                )));
            }
            out.holes.push(ring_file(label, pts, names, None));
        }
        match (is_outline, p.role) {
            (true, _) => out.outline = Some(exterior),
            (false, Role::Hole) => out.holes.push(exterior),
            (false, _) => out.regions.push(exterior),
        }
    }
    Ok(out)
}

/// The material polygon with the largest exterior ring (the first of equal ones).
fn largest(polygons: &[Polygon]) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (i, p) in polygons.iter().enumerate() {
        if p.role == Role::Hole {
            continue;
        }
        let a = polygon_area(&p.rings[0].1).abs();
        if best.is_none_or(|(_, b)| a > b) {
            best = Some((i, a));
        }
    }
    best.map(|(i, _)| i)
}

/// A written ring from imported points and names.
fn ring_file(
    label: String,
    points: Vec<[f64; 2]>,
    names: Names,
    material: Option<String>,
) -> RingFile {
    let (boundary, edges) = match names {
        Names::None => (None, None),
        Names::Uniform(b) => (Some(b), None),
        Names::Edges(e) => (None, Some(e)),
    };
    RingFile {
        material,
        points: Some(super::super::PointEntry::list(&points)),
        edges,
        boundary,
        label: Some(label),
        ..RingFile::default()
    }
}

/// The feature's `role` property (default region).
fn role(label: &str, props: &JsonObject) -> Result<Role> {
    match props.get("role") {
        None => Ok(Role::Region),
        Some(JsonValue::String(s)) => match s.as_str() {
            "outline" => Ok(Role::Outline),
            "region" => Ok(Role::Region),
            "hole" => Ok(Role::Hole),
            other => Err(Error::input(format!(
                "{label}: property `role` = \"{}\" is not one of \"outline\", \"region\", \"hole\"",
                printable(other)
            ))),
        },
        Some(v) => Err(Error::input(format!(
            "{label}: property `role` must be a string (\"outline\", \"region\" or \"hole\"), found {v}"
        ))),
    }
}

/// The feature's `material` property: required except on holes, refused on holes.
fn material(label: &str, props: &JsonObject, role: Role) -> Result<Option<String>> {
    match (props.get("material"), role) {
        (None, Role::Hole) => Ok(None),
        (None, _) => Err(Error::input(format!(
            "{label}: no property `material` (every feature but a hole names its material)"
        ))),
        (Some(_), Role::Hole) => Err(Error::input(format!(
            "{label}: property `material` on a feature with role \"hole\" (a hole holds no material)"
        ))),
        (Some(JsonValue::String(s)), _) => Ok(Some(s.clone())),
        (Some(v), _) => Err(Error::input(format!(
            "{label}: property `material` must be a string naming a material, found {v}"
        ))),
    }
}

/// A JSON string, or an error naming `what`.
fn string(label: &str, what: &str, v: &JsonValue) -> Result<String> {
    v.as_str()
        .map(str::to_string)
        .ok_or_else(|| Error::input(format!("{label}: {what} must be a string, found {v}")))
}

/// Names of each ring of a feature, from `boundary` or `edges` (`n` rings in all).
fn names(label: &str, props: &JsonObject, n: usize) -> Result<Vec<Names>> {
    let per_ring = |what: &str, len: usize| {
        Error::input(format!(
            "{label}: property `{what}` has {len} entries but the feature has {n} rings (exterior first, then interior rings)"
        ))
    };
    match (props.get("boundary"), props.get("edges")) {
        (Some(_), Some(_)) => Err(Error::input(format!(
            "{label}: give either property `boundary` or `edges`, not both"
        ))),
        (None, None) => Ok(vec![Names::None; n]),
        (Some(JsonValue::String(b)), None) => Ok(vec![Names::Uniform(b.clone()); n]),
        (Some(JsonValue::Array(a)), None) => {
            if a.len() != n {
                return Err(per_ring("boundary", a.len()));
            }
            a.iter()
                .enumerate()
                .map(|(k, v)| {
                    let s = string(label, &format!("property `boundary`[{k}]"), v)?;
                    Ok(if s.is_empty() {
                        Names::None
                    } else {
                        Names::Uniform(s)
                    })
                })
                .collect()
        }
        (Some(v), None) => Err(Error::input(format!(
            "{label}: property `boundary` must be a string or an array of strings (one per ring), found {v}"
        ))),
        (None, Some(JsonValue::Array(a))) => {
            if a.iter().all(JsonValue::is_string) {
                if n != 1 {
                    return Err(Error::input(format!(
                        "{label}: property `edges` as one list of names needs a feature with one ring; this one has {n} (give one list per ring)"
                    )));
                }
                let e = a.iter().map(|v| v.as_str().unwrap_or("").to_string());
                return Ok(vec![Names::Edges(e.collect())]);
            }
            if a.len() != n {
                return Err(per_ring("edges", a.len()));
            }
            a.iter()
                .enumerate()
                .map(|(k, v)| {
                    let list = v.as_array().ok_or_else(|| {
                        Error::input(format!(
                            "{label}: property `edges`[{k}] must be an array of names, found {v}"
                        ))
                    })?;
                    let e = list
                        .iter()
                        .enumerate()
                        .map(|(s, x)| string(label, &format!("property `edges`[{k}][{s}]"), x))
                        .collect::<Result<Vec<_>>>()?;
                    Ok(Names::Edges(e))
                })
                .collect()
        }
        (None, Some(v)) => Err(Error::input(format!(
            "{label}: property `edges` must be an array of names, found {v}"
        ))),
    }
}

/// A ring's positions as points, m, without the closing position; altitudes counted.
fn points(label: &str, ring: &[geojson::Position], altitudes: &mut usize) -> Result<Vec<[f64; 2]>> {
    let mut pts = Vec::with_capacity(ring.len());
    for (i, p) in ring.iter().enumerate() {
        let c = p.as_slice();
        if c.len() < 2 {
            return Err(Error::input(format!(
                "{label}: position {i} has {} coordinates, needs x and y",
                c.len()
            )));
        }
        if c.len() > 2 {
            *altitudes += 1;
        }
        if !c[0].is_finite() || !c[1].is_finite() {
            return Err(Error::input(format!(
                "{label}: position {i} ({}, {}) is not a finite number",
                c[0], c[1]
            )));
        }
        pts.push([c[0], c[1]]);
    }
    Ok(open_ring(pts))
}
