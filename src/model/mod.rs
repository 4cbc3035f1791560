//! Model stage: the validated types — a [`Section`] of rings with named boundary segments,
//! materials with ids, a boundary table, probes, lines and load cases. A `Section` is built only by
//! [`validate`], which turns a [`ModelFile`] (the serde mirror of the TOML, in `file`) into one
//! or a precise error naming the offending item.

use serde::Serialize;

mod cases;
mod conductivity;
mod contacts;
mod cuts;
mod echo;
mod environments;
mod field;
mod file;
mod import;
mod nonlinear;
mod point_sources;
mod ring;
mod schema;
mod shapes;
mod suggest;
pub mod templates;
mod units;
mod validate;

#[cfg(test)]
mod tests;

pub use cases::{
    Case, CaseBoundary, CaseBoundaryFile, CaseFile, CaseMaterial, CaseMaterialFile, MAX_CASES,
    RESERVED_CASE_NAMES,
};
pub use conductivity::{ConductivityFile, ConductivityLaw, MAX_ABS_ORIENTATION_DEG};
pub use contacts::{Contact, ContactFile, MAX_CONTACT_RESISTANCE};
pub use cuts::{Cut, CutFile};
pub use environments::{
    Environment, Environments, EnvironmentsFile, F_RSI_MIN_KEY, MAX_ENVIRONMENTS, MAX_REFERENCE_U,
    Psi, PsiFile, ReferenceFile,
};
pub use field::{Field, FieldFile, LinearField, MAX_ABS_GRADIENT, Profile, field_key};
pub use file::{
    ArcFile, BoundaryFile, CircleFile, LineFile, MaterialFile, MeshFile, ModelFile, PointEntry,
    ProbeFile, RectangleFile, RingFile, load, parse,
};
pub use import::{
    DrawingFile, GeojsonFile, Imported, LayerFile, MAX_IMPORT_FILE_BYTES, resolve_imports,
};
pub use nonlinear::{ConductivityTable, MAX_TABLE_POINTS, Nonlinear, Radiation, STEFAN_BOLTZMANN};
pub use point_sources::{
    MAX_ABS_POINT_POWER, MAX_POINT_SOURCES, POINT_SOURCE_CLEARANCE, PointSource, PointSourceFile,
};
pub use ring::{circle_segments, ring_circle_segments};
pub use schema::{MODEL_SCHEMA_ID, model_schema, schema_settings, without_null};
pub use shapes::{ARC_RADIUS_TOLERANCE, Arc};
pub use suggest::suggest;
pub use units::{LENGTH_UNITS, in_metres, looks_like_kelvin, scale_lengths, unit_factor};
pub use validate::validate;

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
/// Largest temperature magnitude accepted (fixed temperatures and ambients), °C.
pub const MAX_ABS_TEMPERATURE_C: f64 = 1.0e4;
/// Smallest conductivity accepted, W/(m·K) (still-air gaps are about 0.025; aerogels 0.01).
pub const MIN_CONDUCTIVITY: f64 = 1.0e-6;
/// Largest conductivity accepted, W/(m·K) (copper is about 400; the margin allows contrasts).
pub const MAX_CONDUCTIVITY: f64 = 1.0e7;
/// Largest film coefficient accepted, W/(m²·K); above it use a fixed temperature.
pub const MAX_FILM_COEFFICIENT: f64 = 1.0e10;
/// Largest imposed flux magnitude accepted, W/m².
pub const MAX_ABS_FLUX: f64 = 1.0e9;
/// Largest heat source magnitude accepted, W/m³.
pub const MAX_ABS_HEAT_SOURCE: f64 = 1.0e10;
/// Largest model file accepted, bytes (64 MiB), checked before the file is read.
pub const MAX_MODEL_FILE_BYTES: u64 = 64 * 1024 * 1024;
/// Longest name (material, boundary, probe, line), characters.
pub const MAX_NAME_CHARS: usize = 64;
/// Longest title, characters.
pub const MAX_TITLE_CHARS: usize = 200;
/// Most samples of all lines together.
pub const MAX_LINE_SAMPLES: usize = 1_000_000;

/// Boundary condition of a named boundary.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum BoundaryKind {
    /// Fixed temperature, °C.
    Fixed {
        /// °C
        temperature: f64,
    },
    /// Zero normal flux.
    Insulated,
    /// Imposed normal flux, W/m², positive into the section.
    Flux {
        /// W/m², positive into the section.
        flux: f64,
    },
    /// Film coefficient h, W/(m²·K), to an ambient temperature, °C.
    Convection {
        /// Film coefficient, W/(m²·K).
        h: f64,
        /// Ambient temperature, °C.
        ambient: f64,
    },
    /// Surface radiation to surroundings, `q = ε·σ·(T_s⁴ − T⁴)` (kelvin) into the section.
    Radiation {
        /// Emissivity, 0 < ε ≤ 1.
        emissivity: f64,
        /// Temperature of the surroundings, °C.
        surroundings: f64,
    },
}

impl BoundaryKind {
    /// The kind as written in the model file: `fixed`, `insulated`, `flux`, `convection`,
    /// `radiation`.
    pub fn name(&self) -> &'static str {
        match self {
            BoundaryKind::Fixed { .. } => "fixed",
            BoundaryKind::Insulated => "insulated",
            BoundaryKind::Flux { .. } => "flux",
            BoundaryKind::Convection { .. } => "convection",
            BoundaryKind::Radiation { .. } => "radiation",
        }
    }
}

/// A named boundary with its condition.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Boundary {
    /// Name as in `[boundaries.NAME]`.
    pub name: String,
    /// The condition.
    #[serde(flatten)]
    pub kind: BoundaryKind,
    /// Target mesh edge length along the boundary, m.
    pub size: Option<f64>,
    /// Surface resistance R_s, m²·K/W, when a convection boundary was given by `resistance`
    /// instead of `h` (its `h` is then 1/R_s).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resistance: Option<f64>,
    /// The imposed temperature (fixed) or ambient (convection) when it varies with position;
    /// the kind's number is then the field's value at its reference point or profile start.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub field: Option<Field>,
}

impl Boundary {
    /// The imposed temperature (fixed) or ambient (convection) at point `p` of the boundary;
    /// `None` for other kinds.
    pub fn value_at(&self, p: [f64; 2]) -> Option<f64> {
        let constant = match self.kind {
            BoundaryKind::Fixed { temperature } => temperature,
            BoundaryKind::Convection { ambient, .. } => ambient,
            _ => return None,
        };
        Some(self.field.as_ref().map_or(constant, |f| f.value_at(p)))
    }
}

/// A material with its id.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Material {
    /// Material id = index in `Section::materials` (alphabetical order of name).
    pub id: usize,
    /// Name as in `[materials.NAME]`.
    pub name: String,
    /// The conductivity law (isotropic or anisotropic), W/(m·K); for a material with a
    /// conductivity table, isotropic with k at the middle of the table's temperature range (the
    /// table itself is [`Section::conductivity_table`]).
    pub conductivity: ConductivityLaw,
    /// W/m³ (for a linear source: its value at the field's `at`).
    pub heat_source: f64,
    /// A heat source linear in position (W/m³, W/m⁴), when written so.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub source_field: Option<LinearField>,
    /// Largest triangle in this material, m² (`None`: the mesh's `max_area`).
    pub max_area: Option<f64>,
}

/// The circle a ring was made from, kept for the boundary discretisation error (sagitta).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Circle {
    /// Centre, m.
    pub center: [f64; 2],
    /// Radius, m.
    pub radius: f64,
    /// Segment count of the inscribed polygon.
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
    /// Corner points, m, counter-clockwise.
    pub points: Vec<[f64; 2]>,
    /// Boundary id of segment i → i+1 (last closes the ring); `None` = unnamed (insulated).
    pub edge_boundary: Vec<Option<usize>>,
    /// Index of segment i as the user wrote it (before dropping repeats and reorienting).
    pub written_segment: Vec<usize>,
    /// The circle the ring was made from, if any.
    pub circle: Option<Circle>,
    /// The arcs written in its `points`, each split into chords.
    pub arcs: Vec<Arc>,
}

impl Ring {
    /// Number of points (= segments).
    pub fn len(&self) -> usize {
        self.points.len()
    }
    /// True for a ring without points.
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }
    /// Segment i as a pair of points.
    pub fn segment(&self, i: usize) -> ([f64; 2], [f64; 2]) {
        (self.points[i], self.points[(i + 1) % self.points.len()])
    }
}

/// A region: a ring of another material inside the outline.
#[derive(Debug, Clone, PartialEq)]
pub struct Region {
    /// The region's ring.
    pub ring: Ring,
    /// Material id inside the ring.
    pub material: usize,
}

/// A point where the temperature is reported.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Probe {
    /// Probe name.
    pub name: String,
    /// Position, m.
    pub at: [f64; 2],
}

/// A straight line sampled at equal steps.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Line {
    /// Line name.
    pub name: String,
    /// Start point, m.
    pub from: [f64; 2],
    /// End point, m.
    pub to: [f64; 2],
    /// Number of samples, at least 2.
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

/// A validated cross-section, ready for the geometry stage. Only [`validate`] builds one (the
/// private field), so every `Section` has passed validation; its fields stay readable.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    /// Title (default "untitled").
    pub title: String,
    /// Mesh controls.
    pub mesh: MeshSettings,
    /// Sorted by name; `materials[i].id == i`.
    pub materials: Vec<Material>,
    /// Material id of the outline's interior.
    pub outline_material: usize,
    /// The outer ring.
    pub outline: Ring,
    /// In file order: a later region wins where regions overlap.
    pub regions: Vec<Region>,
    /// Rings holding no material.
    pub holes: Vec<Ring>,
    /// Sorted by name; boundary id = index.
    pub boundaries: Vec<Boundary>,
    /// Probes in file order.
    pub probes: Vec<Probe>,
    /// Lines in file order.
    pub lines: Vec<Line>,
    /// Point sources in file order (`[[point_sources]]`).
    pub point_sources: Vec<PointSource>,
    /// Load cases in file order (`[[cases]]`); [`Section::case_section`] gives the section of
    /// one.
    pub cases: Vec<Case>,
    /// Cuts in file order (`[[cuts]]`).
    pub cuts: Vec<Cut>,
    /// Contact resistances in file order (`[[contacts]]`).
    pub contacts: Vec<Contact>,
    /// Environments and ψ declarations (`[environments]`, `[[psi]]`).
    pub environments: Environments,
    /// Conductivity tables and radiating boundaries (empty tables for a linear model).
    pub nonlinear: Nonlinear,
    /// `[geojson]` as written (its rings are in `outline`, `regions` and `holes`).
    pub geojson: Option<GeojsonFile>,
    /// `[drawing]` as written (its rings are in `outline`, `regions` and `holes`).
    pub drawing: Option<DrawingFile>,
    /// Warnings found while validating (unnamed segments, dropped points, ...).
    pub warnings: Vec<String>,
    /// Proof of validation: only this module can fill it in.
    validated: Validated,
}

/// Zero-sized marker that only the model module can create.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Validated;

impl Section {
    /// Whether any material has a heat source or any point source a power other than zero
    /// (then the maximum principle does not bound the field by its boundary values).
    pub fn has_source(&self) -> bool {
        self.materials
            .iter()
            .any(|m| m.heat_source != 0.0 || m.source_field.is_some())
            || self.point_sources.iter().any(|s| s.power != 0.0)
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
