//! The model file: serde types that mirror the TOML one to one, reading ([`parse`], [`load`])
//! with errors that name the line, column and offending key.

use super::MAX_MODEL_FILE_BYTES;
use super::Section;
use super::suggest::suggest;
use crate::error::{Error, MAX_QUOTED_CHARS, Result, printable};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The whole model file as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ModelFile {
    /// Title shown in reports (default "untitled").
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub title: Option<String>,
    /// Unit of every length and area of the geometry and the mesh settings: "m" (default),
    /// "cm" or "mm" (areas in unit²). Physical properties stay SI; outputs are in m.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schemars(extend("enum" = ["m", "cm", "mm"]))]
    pub length_unit: Option<String>,
    /// `[mesh]`: global mesh controls.
    #[serde(default)]
    pub mesh: MeshFile,
    /// `[materials.NAME]`: the materials, by name.
    #[serde(default)]
    pub materials: BTreeMap<String, MaterialFile>,
    /// `[outline]`: the section's outer ring.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outline: Option<RingFile>,
    /// `[[regions]]`: rings of another material inside the outline.
    #[serde(default)]
    pub regions: Vec<RingFile>,
    /// `[[holes]]`: rings holding no material.
    #[serde(default)]
    pub holes: Vec<RingFile>,
    /// `[boundaries.NAME]`: boundary conditions.
    #[serde(default)]
    pub boundaries: BTreeMap<String, BoundaryFile>,
    /// `[[probes]]`: points where the temperature is reported.
    #[serde(default)]
    pub probes: Vec<ProbeFile>,
    /// `[[lines]]`: sampled lines.
    #[serde(default)]
    pub lines: Vec<LineFile>,
    /// `[[point_sources]]`: line sources along the depth (cables, small pipes), W/m.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub point_sources: Vec<super::PointSourceFile>,
    /// `[[cases]]`: load cases, each overriding values of the base model.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub cases: Vec<super::CaseFile>,
    /// `[[cuts]]`: polylines across which the heat flow is reported.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub cuts: Vec<super::CutFile>,
    /// `[[contacts]]`: contact resistances where two materials meet.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub contacts: Vec<super::ContactFile>,
    /// `[environments]`: groups of convection boundaries sharing one ambient, for coupling
    /// coefficients and temperature factors.
    #[serde(default, skip_serializing_if = "super::EnvironmentsFile::is_empty")]
    pub environments: super::EnvironmentsFile,
    /// `[[psi]]`: linear thermal transmittances against declared reference transmittances.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub psi: Vec<super::PsiFile>,
    /// `[geojson]`: outline, regions and holes read from a GeoJSON file.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub geojson: Option<super::GeojsonFile>,
    /// `[drawing]`: outline, regions and holes read from a DXF drawing.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub drawing: Option<super::DrawingFile>,
    /// What [`super::resolve_imports`] read from the files named above (never written in a
    /// model file; `None` until resolved).
    #[serde(skip)]
    pub imported: Option<super::Imported>,
}

/// `[mesh]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct MeshFile {
    /// Largest triangle of the mesh, area in the model's length_unit squared (default m²).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_area: Option<f64>,
    /// Smallest angle of the quality mesh, degrees.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub min_angle: Option<f64>,
}

/// `[materials.NAME]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct MaterialFile {
    /// Conductivity, W/(m·K): a number, `[k_major, k_minor]` with `orientation`, or
    /// `{ table = [[T, k], …] }` (°C, W/(m·K)).
    pub conductivity: super::ConductivityFile,
    /// Degrees from the x axis to the major direction (with a pair conductivity only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub orientation: Option<f64>,
    /// Heat source per volume, W/m³ (default 0): a number or a linear field (W/m³ at `at`,
    /// gradient W/m⁴).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub heat_source: Option<super::FieldFile>,
    /// Largest triangle in this material (local size control), area in the model's length_unit squared (default m²); default: the mesh's.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_area: Option<f64>,
}

/// A ring (outline, region or hole) as written: `points`, `circle`, `rectangle` or
/// `points_file`, named by `edges` (one name per segment) or `boundary` (one name for all).
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct RingFile {
    /// Material inside the ring (outline and regions): a name of `[materials]`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub material: Option<String>,
    /// Corner points `[x, y]`, each coordinate a length in the model's length_unit (default m), and arcs
    /// `{ arc = { center, to, direction } }`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<Vec<PointEntry>>,
    /// A circle instead of points.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub circle: Option<CircleFile>,
    /// An axis-parallel rectangle instead of points.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rectangle: Option<RectangleFile>,
    /// Path of a CSV file of the ring's points (columns `x,y` in the model's `length_unit` or
    /// `x_m,y_m` in metres, optional `edge`), relative to the model file, instead of `points`;
    /// read into `points` (and `edges`) when the model is loaded.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points_file: Option<String>,
    /// Boundary name of each segment ("" = unnamed): names of `[boundaries]`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub edges: Option<Vec<String>>,
    /// One boundary name for every segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub boundary: Option<String>,
    /// How messages name a ring read from a file (e.g. `ground.geojson features[2]`); never
    /// written in a model file. A ring with a label is in metres whatever the model's
    /// `length_unit` (the importer converted it).
    #[serde(skip)]
    pub label: Option<String>,
}

/// A circle as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CircleFile {
    /// Centre `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_center")]
    pub center: [f64; 2],
    /// Radius, length in the model's length_unit (default m).
    pub radius: f64,
    /// Segment count of the inscribed polygon, a whole number (default: from max_area or the
    /// boundary's size).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub segments: Option<usize>,
}

/// An axis-parallel rectangle as written: its four segments run from `corner` along +x, then
/// +y, then −x, then −y (bottom, right, top, left for positive sizes).
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct RectangleFile {
    /// The corner `[x, y]` with the smallest x and y, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_corner")]
    pub corner: [f64; 2],
    /// Size along x, length in the model's length_unit (default m), > 0.
    pub width: f64,
    /// Size along y, length in the model's length_unit (default m), > 0.
    pub height: f64,
}

/// One entry of a ring's `points`: a corner `[x, y]`, or an arc from the previous point (the
/// last one for the first entry) to `to` around `center`.
#[derive(Debug, Clone, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(untagged)]
#[schemars(deny_unknown_fields)]
pub enum PointEntry {
    /// A corner point `[x, y]`, each coordinate a length in the model's length_unit (default m).
    Point([f64; 2]),
    /// `{ arc = { ... } }`: an arc ending at its `to` point.
    Arc {
        /// The arc.
        arc: ArcFile,
    },
}

impl From<[f64; 2]> for PointEntry {
    fn from(p: [f64; 2]) -> Self {
        PointEntry::Point(p)
    }
}

impl PointEntry {
    /// Corner points as `points` entries.
    pub fn list(points: &[[f64; 2]]) -> Vec<PointEntry> {
        points.iter().map(|&p| PointEntry::Point(p)).collect()
    }
    /// The vertex this entry puts on the ring: the point, or the arc's end `to`.
    pub fn vertex(&self) -> [f64; 2] {
        match self {
            PointEntry::Point(p) => *p,
            PointEntry::Arc { arc } => arc.to,
        }
    }
}

/// An arc of a ring as written: from the previous point to `to` around `center`.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ArcFile {
    /// Centre `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_center")]
    pub center: [f64; 2],
    /// End point `[x, y]`, each coordinate a length in the model's length_unit (default m) (the start is the previous point of the
    /// ring).
    #[serde(deserialize_with = "point_to")]
    pub to: [f64; 2],
    /// `"ccw"` (counter-clockwise) or `"cw"` (clockwise) from the start to `to`.
    #[schemars(extend("enum" = ["ccw", "cw"]))]
    pub direction: String,
    /// Chord count, a whole number (default: the circle rule for the arc's share of a full
    /// turn).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub segments: Option<usize>,
}

/// Reads one `points` entry: a point of two numbers or a table `{ arc = {...} }`.
struct EntryVisitor;

impl<'de> serde::de::Visitor<'de> for EntryVisitor {
    type Value = PointEntry;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(
            f,
            "`points`: a point [x, y] or an arc {{ arc = {{ center = [x, y], to = [x, y], direction = \"ccw\" }} }}"
        )
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(
        self,
        seq: A,
    ) -> std::result::Result<PointEntry, A::Error> {
        PointVisitor("points")
            .visit_seq(seq)
            .map(|p| PointEntry::Point(p.0))
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(
        self,
        map: A,
    ) -> std::result::Result<PointEntry, A::Error> {
        /// The table around an arc.
        #[derive(Deserialize)]
        #[serde(deny_unknown_fields)]
        struct ArcEntry {
            arc: ArcFile,
        }
        let e = ArcEntry::deserialize(serde::de::value::MapAccessDeserializer::new(map))?;
        Ok(PointEntry::Arc { arc: e.arc })
    }
}

impl<'de> Deserialize<'de> for PointEntry {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        d.deserialize_any(EntryVisitor)
    }
}

/// A boundary condition as written. Kept flat so that a key that does not belong to the kind
/// can be named in the error message.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct BoundaryFile {
    /// `fixed`, `insulated`, `flux`, `convection` or `radiation`.
    #[schemars(extend("enum" = ["fixed", "insulated", "flux", "convection", "radiation"]))]
    pub kind: String,
    /// Fixed temperature, °C: a number, a linear field or a profile along the boundary.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature: Option<super::FieldFile>,
    /// Film coefficient, W/(m²·K).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub h: Option<f64>,
    /// Surface resistance R_s = 1/h, m²·K/W (convection, instead of `h`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resistance: Option<f64>,
    /// Ambient temperature, °C: a number, a linear field or a profile along the boundary.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ambient: Option<super::FieldFile>,
    /// Imposed flux, W/m², positive into the section.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub flux: Option<f64>,
    /// Target edge length of the mesh along this boundary (local size control), length in the model's length_unit (default m).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub size: Option<f64>,
    /// Emissivity of a radiating surface, dimensionless, 0 to 1 (kind `radiation`, or
    /// `convection` with radiation).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub emissivity: Option<f64>,
    /// Temperature of the radiating surroundings, °C (default for `convection`: the ambient).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub surroundings: Option<f64>,
}

/// `[[probes]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ProbeFile {
    /// Probe name.
    pub name: String,
    /// Position `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_at")]
    pub at: [f64; 2],
}

/// `[[lines]]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct LineFile {
    /// Line name.
    pub name: String,
    /// Start point `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_from")]
    pub from: [f64; 2],
    /// End point `[x, y]`, each coordinate a length in the model's length_unit (default m).
    #[serde(deserialize_with = "point_to")]
    pub to: [f64; 2],
    /// Number of sample points, a whole number, at least 2.
    pub samples: usize,
}

/// A point as written: exactly two numbers `[x, y]` (serde's `[f64; 2]` would ignore extra
/// elements). The error names the key.
pub(super) struct Point2(pub(super) [f64; 2]);

/// Reads one point for the key `key`.
struct PointVisitor(&'static str);

impl<'de> serde::de::Visitor<'de> for PointVisitor {
    type Value = Point2;
    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        write!(f, "`{}`: a point of exactly two numbers [x, y]", self.0)
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(
        self,
        mut seq: A,
    ) -> std::result::Result<Point2, A::Error> {
        let mut p = [0.0; 2];
        for (i, v) in p.iter_mut().enumerate() {
            *v = seq
                .next_element::<f64>()?
                .ok_or_else(|| serde::de::Error::invalid_length(i, &self))?;
        }
        let mut n = 2;
        while seq.next_element::<serde::de::IgnoredAny>()?.is_some() {
            n += 1;
        }
        if n != 2 {
            return Err(serde::de::Error::invalid_length(n, &self));
        }
        Ok(Point2(p))
    }
}

impl<'de> Deserialize<'de> for Point2 {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        d.deserialize_seq(PointVisitor("points"))
    }
}

/// Deserializes the point of key `at`, exactly two numbers.
pub(super) fn point_at<'de, D: serde::Deserializer<'de>>(
    d: D,
) -> std::result::Result<[f64; 2], D::Error> {
    d.deserialize_seq(PointVisitor("at")).map(|p| p.0)
}

/// Deserializes the point of key `from`, exactly two numbers.
fn point_from<'de, D: serde::Deserializer<'de>>(d: D) -> std::result::Result<[f64; 2], D::Error> {
    d.deserialize_seq(PointVisitor("from")).map(|p| p.0)
}

/// Deserializes the point of key `to`, exactly two numbers.
fn point_to<'de, D: serde::Deserializer<'de>>(d: D) -> std::result::Result<[f64; 2], D::Error> {
    d.deserialize_seq(PointVisitor("to")).map(|p| p.0)
}

/// Deserializes the point of key `center`, exactly two numbers.
fn point_center<'de, D: serde::Deserializer<'de>>(d: D) -> std::result::Result<[f64; 2], D::Error> {
    d.deserialize_seq(PointVisitor("center")).map(|p| p.0)
}

/// Deserializes the point of key `corner`, exactly two numbers.
fn point_corner<'de, D: serde::Deserializer<'de>>(d: D) -> std::result::Result<[f64; 2], D::Error> {
    d.deserialize_seq(PointVisitor("corner")).map(|p| p.0)
}

/// Deserializes a list of points, each exactly two numbers.
pub(super) fn points_list<'de, D: serde::Deserializer<'de>>(
    d: D,
) -> std::result::Result<Vec<[f64; 2]>, D::Error> {
    let v: Vec<Point2> = Vec::deserialize(d)?;
    Ok(v.into_iter().map(|p| p.0).collect())
}

/// Parse the TOML text of a model file. Syntax errors, unknown keys and wrong types are
/// reported with the line and column, the offending line, and for a misspelt key the nearest
/// valid one.
pub fn parse(text: &str) -> Result<ModelFile> {
    toml::from_str::<ModelFile>(text).map_err(|e| {
        let mut msg = e.message().trim_end().to_string();
        if let Some(hint) = unknown_key_hint(&msg) {
            // The hint goes before serde's list of expected keys, which may be long enough to
            // be cut when printed.
            msg = match msg.find(", expected") {
                Some(i) => format!(
                    "{}{hint} Expected{}",
                    &msg[..i],
                    &msg[i + ", expected".len()..]
                ),
                None => msg + &hint,
            };
        }
        match e.span() {
            Some(span) => located_error(text, span.start, &msg),
            None => Error::input(format!("model file: {}", printable_message(&msg))),
        }
    })
}

/// An input error at byte `start` of `text`: line, column and the offending line.
fn located_error(text: &str, start: usize, msg: &str) -> Error {
    let start = start.min(text.len());
    let line = text[..start].matches('\n').count() + 1;
    let line_start = text[..start].rfind('\n').map_or(0, |i| i + 1);
    let column = text[line_start..start].chars().count() + 1;
    let line_text = text[line_start..].lines().next().unwrap_or("").trim_end();
    Error::input(format!(
        "model file, line {line}, column {column}: {}\n  {line} | {}",
        printable_message(msg),
        quoted_line(line_text, column)
    ))
}

/// A parser message made safe to print: each line through [`printable`] (control characters
/// escaped, long text cut), at most a few lines.
fn printable_message(msg: &str) -> String {
    let lines: Vec<String> = msg.lines().take(4).map(printable).collect();
    lines.join("\n")
}

/// The offending line as quoted in a message: at most [`MAX_QUOTED_CHARS`] characters,
/// centred on the column when the line is longer (cut ends shown as "…"), control characters
/// escaped.
fn quoted_line(line: &str, column: usize) -> String {
    let n = line.chars().count();
    if n <= MAX_QUOTED_CHARS {
        return printable(line);
    }
    let start = column
        .saturating_sub(MAX_QUOTED_CHARS / 2)
        .min(n - MAX_QUOTED_CHARS);
    let cut: String = line.chars().skip(start).take(MAX_QUOTED_CHARS).collect();
    let head = if start > 0 { "…" } else { "" };
    let tail = if start + MAX_QUOTED_CHARS < n {
        "…"
    } else {
        ""
    };
    format!("{head}{}{tail}", printable(&cut))
}

/// For serde's "unknown field `x`, expected one of `a`, `b`" message: "; did you mean `a`?".
fn unknown_key_hint(msg: &str) -> Option<String> {
    let rest = msg.strip_prefix("unknown field `")?;
    let end = rest.find('`')?;
    let key = &rest[..end];
    let expected: Vec<&str> = rest[end + 1..].split('`').skip(1).step_by(2).collect();
    suggest(key, expected.iter().copied()).map(|s| format!("; did you mean `{s}`?"))
}

/// Read, parse and validate a model file.
pub fn load(path: &std::path::Path) -> Result<(ModelFile, Section)> {
    let text = read_model_text(path)?;
    let mut file = parse(&text)?;
    super::resolve_imports(&mut file, path.parent().unwrap_or(std::path::Path::new("")))?;
    let section = super::validate(&file)?;
    Ok((file, section))
}

/// The model file's text, refused above [`MAX_MODEL_FILE_BYTES`] before it is read (by its
/// size on disk, and by a read that stops one byte past the limit, for files whose size the
/// metadata does not tell, such as pipes).
fn read_model_text(path: &std::path::Path) -> Result<String> {
    use std::io::Read;
    let cannot =
        |e: std::io::Error| Error::input(format!("cannot read model file {}: {e}", path.display()));
    let too_big = || {
        Error::input(format!(
            "model file {}: larger than the limit of {MAX_MODEL_FILE_BYTES} bytes (64 MiB)",
            path.display()
        ))
    };
    let f = std::fs::File::open(path).map_err(cannot)?;
    if f.metadata().map_err(cannot)?.len() > MAX_MODEL_FILE_BYTES {
        return Err(too_big());
    }
    let mut bytes = Vec::new();
    f.take(MAX_MODEL_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_MODEL_FILE_BYTES {
        return Err(too_big());
    }
    String::from_utf8(bytes).map_err(|e| {
        Error::input(format!(
            "model file {}: not UTF-8 text (invalid byte at offset {})",
            path.display(),
            e.utf8_error().valid_up_to()
        ))
    })
}
