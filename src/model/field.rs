//! Values that vary with position: the written form of a fixed `temperature`, a convection
//! `ambient` or a material's `heat_source` ([`FieldFile`]: a number, a linear field
//! `{ at, value, gradient }` or, for boundary temperatures, a profile `{ profile = [[s, T], …] }`
//! along the boundary by arc length), their validation into a [`Field`] and the arc-length
//! path of a profile boundary ([`attach_profiles`], after the rings are built).
//!
//! Arc length s (m) of a profile runs along the boundary's one chain of segments in the ring's
//! counter-clockwise order (every ring is counter-clockwise after validation), from the start of
//! the chain's first segment; a boundary whose segments are not one connected chain on one ring
//! is refused. A boundary that covers a whole ring starts at the ring's first segment.

use super::validate::check_temperature;
use super::{Boundary, Ring};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// A value as written: a number, a linear field or a profile along a boundary.
#[derive(Debug, Clone, PartialEq)]
pub enum FieldFile {
    /// A constant.
    Value(f64),
    /// `{ at = [x, y], value = v, gradient = [gx, gy] }`.
    Linear(LinearField),
    /// `{ profile = [[s, v], …] }`.
    Profile(Vec<[f64; 2]>),
}

impl From<f64> for FieldFile {
    fn from(v: f64) -> Self {
        FieldFile::Value(v)
    }
}

impl FieldFile {
    /// The constant, if the form is a number.
    pub fn constant(&self) -> Option<f64> {
        match self {
            FieldFile::Value(v) => Some(*v),
            _ => None,
        }
    }
}

impl Serialize for FieldFile {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        match self {
            FieldFile::Value(v) => s.serialize_f64(*v),
            FieldFile::Linear(l) => l.serialize(s),
            FieldFile::Profile(p) => {
                let mut m = s.serialize_map(Some(1))?;
                m.serialize_entry("profile", p)?;
                m.end()
            }
        }
    }
}

const FIELD_KEYS: [&str; 4] = ["at", "value", "gradient", "profile"];

struct FieldVisitor;

impl<'de> serde::de::Visitor<'de> for FieldVisitor {
    type Value = FieldFile;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(
            f,
            "a number, a linear field {{ at = [x, y], value = v, gradient = [gx, gy] }} or a profile {{ profile = [[s, v], …] }}"
        )
    }
    fn visit_f64<E: serde::de::Error>(self, v: f64) -> std::result::Result<Self::Value, E> {
        Ok(FieldFile::Value(v))
    }
    fn visit_i64<E: serde::de::Error>(self, v: i64) -> std::result::Result<Self::Value, E> {
        Ok(FieldFile::Value(v as f64))
    }
    fn visit_u64<E: serde::de::Error>(self, v: u64) -> std::result::Result<Self::Value, E> {
        Ok(FieldFile::Value(v as f64))
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(
        self,
        mut map: A,
    ) -> std::result::Result<Self::Value, A::Error> {
        use serde::de::Error as _;
        let (mut at, mut value, mut gradient, mut profile) = (None, None, None, None);
        while let Some(key) = map.next_key::<String>()? {
            match key.as_str() {
                "at" => at = Some(map.next_value::<super::file::Point2>()?.0),
                "value" => value = Some(map.next_value::<f64>()?),
                "gradient" => gradient = Some(map.next_value::<super::file::Point2>()?.0),
                "profile" => {
                    let p: Vec<super::file::Point2> = map.next_value()?;
                    profile = Some(p.into_iter().map(|q| q.0).collect::<Vec<_>>());
                }
                other => return Err(A::Error::unknown_field(other, &FIELD_KEYS)),
            }
        }
        match (at, value, gradient, profile) {
            (None, None, None, Some(p)) => Ok(FieldFile::Profile(p)),
            (Some(at), Some(value), Some(gradient), None) => Ok(FieldFile::Linear(LinearField {
                at,
                value,
                gradient,
            })),
            (_, _, _, Some(_)) => Err(A::Error::custom(
                "`profile` stands alone (no `at`, `value` or `gradient` beside it)",
            )),
            (at, value, _, None) => Err(A::Error::missing_field(if at.is_none() {
                "at"
            } else if value.is_none() {
                "value"
            } else {
                "gradient"
            })),
        }
    }
}

impl schemars::JsonSchema for FieldFile {
    fn schema_name() -> std::borrow::Cow<'static, str> {
        "FieldFile".into()
    }
    fn json_schema(_: &mut schemars::SchemaGenerator) -> schemars::Schema {
        let pair = schemars::json_schema!({
            "type": "array",
            "items": { "type": "number" },
            "minItems": 2,
            "maxItems": 2
        });
        schemars::json_schema!({
            "description": "A number, a linear field { at, value, gradient } (at: point in the model's length_unit (default m); gradient: per metre, e.g. K/m or W/m⁴) or, for a fixed temperature or an ambient, a profile { profile = [[s, value], …] } along the boundary by arc length s in the model's length_unit (default m).",
            "oneOf": [
                { "type": "number" },
                {
                    "type": "object",
                    "properties": {
                        "at": { "description": "Reference point, in the model's length_unit (default m).", "type": "array", "items": { "type": "number" }, "minItems": 2, "maxItems": 2 },
                        "value": { "description": "Value at `at`: °C for a temperature, W/m³ for a heat source.", "type": "number" },
                        "gradient": { "description": "Change per metre along x and y: K/m for a temperature, W/m⁴ for a heat source (per metre whatever the length_unit).", "type": "array", "items": { "type": "number" }, "minItems": 2, "maxItems": 2 }
                    },
                    "required": ["at", "value", "gradient"],
                    "additionalProperties": false
                },
                {
                    "type": "object",
                    "properties": { "profile": { "description": "[[s, value], …]: arc length s along the boundary in the model's length_unit (default m), strictly increasing, and the value there (°C).", "type": "array", "items": pair } },
                    "required": ["profile"],
                    "additionalProperties": false
                }
            ]
        })
    }
}

impl<'de> Deserialize<'de> for FieldFile {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        d.deserialize_any(FieldVisitor)
    }
}

/// A linear field v(x) = value + gradient · (x − at): `at` in m, `value` in the quantity's unit
/// (°C, W/m³), `gradient` in that unit per metre (K/m, W/m⁴).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LinearField {
    /// Reference point, m.
    pub at: [f64; 2],
    /// Value at `at`.
    pub value: f64,
    /// Gradient, per metre.
    pub gradient: [f64; 2],
}

impl LinearField {
    /// The value at point `p`.
    pub fn value_at(&self, p: [f64; 2]) -> f64 {
        self.value + self.gradient[0] * (p[0] - self.at[0]) + self.gradient[1] * (p[1] - self.at[1])
    }
}

/// Largest gradient magnitude accepted per component (K/m or W/m⁴).
pub const MAX_ABS_GRADIENT: f64 = 1.0e12;

/// One segment of a profile's path: start, end (m) and the arc length at its start (m).
pub type PathSegment = ([f64; 2], [f64; 2], f64);

/// A piecewise-linear profile along a boundary by arc length, with the boundary's path.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Profile {
    /// `[s, value]`, s in m strictly increasing.
    pub points: Vec<[f64; 2]>,
    /// The boundary's chain: segments (start, end) with the arc length at their start, m.
    #[serde(skip)]
    pub path: Vec<PathSegment>,
}

impl Profile {
    /// The value at arc length `s` (constant beyond the ends).
    pub fn value_at_s(&self, s: f64) -> f64 {
        let p = &self.points;
        if s <= p[0][0] {
            return p[0][1];
        }
        for w in p.windows(2) {
            if s <= w[1][0] {
                let t = (s - w[0][0]) / (w[1][0] - w[0][0]);
                return w[0][1] + t * (w[1][1] - w[0][1]);
            }
        }
        p[p.len() - 1][1]
    }

    /// Arc length of the point of the path nearest to `q`, m.
    pub fn arc_length(&self, q: [f64; 2]) -> f64 {
        let mut best = (f64::INFINITY, 0.0);
        for &(a, b, s0) in &self.path {
            let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
            let len2 = dx * dx + dy * dy;
            let t = if len2 > 0.0 {
                (((q[0] - a[0]) * dx + (q[1] - a[1]) * dy) / len2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let (px, py) = (a[0] + t * dx - q[0], a[1] + t * dy - q[1]);
            let d = px * px + py * py;
            if d < best.0 {
                best = (d, s0 + t * len2.sqrt());
            }
        }
        best.1
    }
}

/// A value that varies with position.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum Field {
    /// Linear in position.
    Linear(LinearField),
    /// Piecewise linear along the boundary by arc length.
    Profile(Profile),
}

impl Field {
    /// The value at point `p` (for a profile, `p` on the boundary).
    pub fn value_at(&self, p: [f64; 2]) -> f64 {
        match self {
            Field::Linear(l) => l.value_at(p),
            Field::Profile(pr) => pr.value_at_s(pr.arc_length(p)),
        }
    }

    /// The field as written in the model file.
    pub fn file(&self) -> FieldFile {
        match self {
            Field::Linear(l) => FieldFile::Linear(*l),
            Field::Profile(p) => FieldFile::Profile(p.points.clone()),
        }
    }

    /// One line describing the field, for reports.
    pub fn describe(&self, unit: &str) -> String {
        use crate::text::format_f64 as f;
        match self {
            Field::Linear(l) => format!(
                "{} {unit} at ({}, {}) m, gradient ({}, {}) {unit}/m",
                f(l.value),
                f(l.at[0]),
                f(l.at[1]),
                f(l.gradient[0]),
                f(l.gradient[1])
            ),
            Field::Profile(p) => format!(
                "profile of {} points along the boundary, s from {} to {} m",
                p.points.len(),
                f(p.points[0][0]),
                f(p.points[p.points.len() - 1][0])
            ),
        }
    }
}

fn finite(v: f64, label: &str, what: &str) -> Result<()> {
    if v.is_finite() {
        Ok(())
    } else {
        Err(Error::input(format!(
            "{label}: {what} = {v} must be a finite number"
        )))
    }
}

/// Validate a written value: a constant (checked by `check`) or a field (`at` finite, `value`
/// checked by `check`, gradient finite and at most [`MAX_ABS_GRADIENT`]; a profile with at least
/// 2 points, s finite, ≥ 0 and strictly increasing, values checked by `check`).
/// `allow_profile` false refuses a profile. Returns the constant (for a field: its value at
/// `at` or at the profile's start) and the field.
pub(super) fn validate_field(
    label: &str,
    f: &FieldFile,
    allow_profile: bool,
    check: &dyn Fn(f64, &str) -> Result<()>,
) -> Result<(f64, Option<Field>)> {
    match f {
        FieldFile::Value(v) => {
            check(*v, label)?;
            Ok((*v, None))
        }
        FieldFile::Linear(l) => {
            finite(l.at[0], label, "at[0]")?;
            finite(l.at[1], label, "at[1]")?;
            check(l.value, &format!("{label}: value"))?;
            for (i, g) in l.gradient.iter().enumerate() {
                if !g.is_finite() || g.abs() > MAX_ABS_GRADIENT {
                    return Err(Error::input(format!(
                        "{label}: gradient[{i}] = {g} per m must be a finite number of magnitude at most {MAX_ABS_GRADIENT:e}"
                    )));
                }
            }
            Ok((l.value, Some(Field::Linear(*l))))
        }
        FieldFile::Profile(p) => {
            if !allow_profile {
                return Err(Error::input(format!(
                    "{label}: a profile {{ profile = … }} is not accepted here (a number or a linear field {{ at, value, gradient }})"
                )));
            }
            if p.len() < 2 {
                return Err(Error::input(format!(
                    "{label}: profile has {} point(s); it needs at least 2 points [s, value]",
                    p.len()
                )));
            }
            for (i, q) in p.iter().enumerate() {
                if !q[0].is_finite() || q[0] < 0.0 {
                    return Err(Error::input(format!(
                        "{label}: profile point {i}: s = {} m must be a finite number ≥ 0",
                        q[0]
                    )));
                }
                check(q[1], &format!("{label}: profile point {i}"))?;
                if i > 0 && q[0] <= p[i - 1][0] {
                    return Err(Error::input(format!(
                        "{label}: profile point {i}: s = {} m must be greater than s = {} m of point {} (s strictly increasing)",
                        q[0],
                        p[i - 1][0],
                        i - 1
                    )));
                }
            }
            Ok((
                p[0][1],
                Some(Field::Profile(Profile {
                    points: p.clone(),
                    path: Vec::new(),
                })),
            ))
        }
    }
}

/// The boundary's key that holds its field: `temperature` (fixed) or `ambient` (convection).
pub fn field_key(b: &Boundary) -> &'static str {
    match b.kind {
        super::BoundaryKind::Convection { .. } => "ambient",
        _ => "temperature",
    }
}

/// After the rings are built: give every profile its path (refusing a boundary that is not one
/// chain), warn when the boundary is longer than its profile, and check every field's
/// temperature at the boundary's vertices (linear along each segment, so its extremes).
pub(super) fn attach_profiles(
    boundaries: &mut [Boundary],
    rings: &[&Ring],
    warnings: &mut Vec<String>,
) -> Result<()> {
    for (id, b) in boundaries.iter_mut().enumerate() {
        let key = field_key(b);
        let label = format!("boundaries.{}.{key}", b.name);
        let Some(field) = &mut b.field else { continue };
        if let Field::Profile(p) = field {
            p.path = chain(id, rings, &label)?;
            let total = p
                .path
                .last()
                .map(|&(a, e, s0)| s0 + dist(a, e))
                .unwrap_or(0.0);
            let end = p.points[p.points.len() - 1][0];
            if total > end * (1.0 + 1e-9) + 1e-12 {
                warnings.push(format!(
                    "{label}: the boundary is {} m long but the profile ends at s = {} m; the last value holds beyond it",
                    crate::text::format_f64(total),
                    crate::text::format_f64(end)
                ));
            }
        }
        for r in rings {
            for (i, e) in r.edge_boundary.iter().enumerate() {
                if *e == Some(id) {
                    let (a, z) = r.segment(i);
                    for q in [a, z] {
                        let v = field.value_at(q);
                        check_temperature(
                            v,
                            &format!(
                                "{label}: value at ({}, {}) m",
                                crate::text::format_f64(q[0]),
                                crate::text::format_f64(q[1])
                            ),
                        )?;
                    }
                }
            }
        }
    }
    Ok(())
}

fn dist(a: [f64; 2], b: [f64; 2]) -> f64 {
    ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt()
}

/// The segments of boundary `id` as one chain with arc lengths, or an error.
fn chain(id: usize, rings: &[&Ring], label: &str) -> Result<Vec<PathSegment>> {
    let on: Vec<(usize, Vec<bool>)> = rings
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let f: Vec<bool> = r.edge_boundary.iter().map(|e| *e == Some(id)).collect();
            (k, f)
        })
        .filter(|(_, f)| f.iter().any(|&x| x))
        .collect();
    let refuse = || {
        Error::input(format!(
            "{label}: a profile needs a boundary whose segments form one connected chain on one ring (this one has several pieces); split the boundary into names of one chain each"
        ))
    };
    let [(k, flags)] = on.as_slice() else {
        return Err(refuse());
    };
    let n = flags.len();
    let start = if flags.iter().all(|&x| x) {
        0
    } else {
        // the first segment carrying the name whose predecessor does not
        let starts: Vec<usize> = (0..n)
            .filter(|&i| flags[i] && !flags[(i + n - 1) % n])
            .collect();
        if starts.len() != 1 {
            return Err(refuse());
        }
        starts[0]
    };
    let r = rings[*k];
    let mut path = Vec::new();
    let mut s = 0.0;
    for j in 0..n {
        let i = (start + j) % n;
        if !flags[i] {
            break;
        }
        let (a, b) = r.segment(i);
        path.push((a, b, s));
        s += dist(a, b);
    }
    Ok(path)
}

impl super::Section {
    /// Lowest and highest imposed temperature (°C) of boundary `id` when it varies with
    /// position: the field at the boundary's ring vertices and, for a profile, at its points
    /// within the boundary's length (the extremes, the field being linear in between).
    pub fn imposed_range(&self, id: usize) -> Option<(f64, f64)> {
        let b = self.boundaries.get(id)?;
        let f = b.field.as_ref()?;
        let mut values = Vec::new();
        for r in std::iter::once(&self.outline).chain(&self.holes) {
            for (i, e) in r.edge_boundary.iter().enumerate() {
                if *e == Some(id) {
                    let (a, z) = r.segment(i);
                    values.push(f.value_at(a));
                    values.push(f.value_at(z));
                }
            }
        }
        if let Field::Profile(p) = f {
            let total = p
                .path
                .last()
                .map(|&(a, e, s0)| s0 + dist(a, e))
                .unwrap_or(0.0);
            values.extend(p.points.iter().filter(|q| q[0] <= total).map(|q| q[1]));
        }
        let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        (lo <= hi).then_some((lo, hi))
    }
}
