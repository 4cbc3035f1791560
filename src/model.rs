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

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MaterialFile {
    /// W/(m·K)
    pub conductivity: f64,
    /// W/m³
    #[serde(default)]
    pub heat_source: Option<f64>,
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
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct BoundaryFile {
    pub kind: String,
    pub temperature: Option<f64>,
    pub h: Option<f64>,
    pub ambient: Option<f64>,
    pub flux: Option<f64>,
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
