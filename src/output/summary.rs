//! The run summary (summary.json): typed records of every part, written in a fixed key order.

use super::json::{ErrorEstimateOut, OrderedMap, json_bytes, unit_legend};
use super::manifest::ManifestEntry;
use crate::CAUTION;
use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::model::{Boundary, BoundaryKind, Field, Section};
use crate::post::Results;
use crate::post::estimate::ErrorEstimate;
use crate::run::{Check, Cycle, Timings};
use serde::Serialize;
use serde_json::Value;
use std::collections::BTreeSet;

/// Summary schema; raised when a key changes meaning or disappears.
pub const SUMMARY_SCHEMA: &str = "xsheat.summary/2";

/// Everything the summary is built from; the caller fills it.
#[derive(Debug, Clone, Copy)]
pub struct SummaryInputs<'a> {
    /// The validated section.
    pub section: &'a Section,
    /// The mesh the results live on.
    pub mesh: &'a Mesh,
    /// The post-processed results.
    pub results: &'a Results,
    /// All warnings of the run (model, mesh, post), in the order they should be shown.
    pub warnings: &'a [String],
    /// Numerical self-checks of the run.
    pub checks: &'a [Check],
    /// The Zienkiewicz–Zhu error estimate of the field.
    pub error_estimate: &'a ErrorEstimate,
    /// Adaptive refinement history (empty for a plain solve: then no `adaptivity` key).
    pub adaptivity: &'a [Cycle],
    /// Wall-clock time per stage: the only part expected to vary run to run.
    pub timings: &'a Timings,
    /// The model as resolved, with its defaults filled in, in the model file's own key names.
    pub model: &'a Value,
    /// Coupling coefficients, ψ and temperature factors (`None` without environments: then
    /// no such keys).
    pub coupling: Option<&'a crate::run::coupling::Coupling>,
    /// The nonlinear iteration (method, factorisation, tolerance, history; `None` for a linear
    /// model: then no `nonlinear` key).
    pub nonlinear: Option<&'a crate::solve::nonlinear::Outcome>,
    /// How a linear model's reduced system was solved (`None` for a nonlinear model: then no
    /// `solver` key).
    pub solver: Option<&'a crate::solve::SolverRecord>,
    /// The mesh file and boundary file of `solve --mesh` as given (`None` when the model was
    /// meshed here: then no `mesh_file` key).
    pub mesh_files: Option<&'a (String, Option<String>)>,
}

#[derive(Serialize)]
struct MaterialOut<'a> {
    id: usize,
    name: &'a str,
    #[serde(flatten)]
    conductivity: super::json::ConductivityOut,
    /// The conductivity table `[[T °C, k W/(m·K)], …]` of a temperature-dependent material
    /// (then `conductivity_w_per_m_k` is k at the middle of its range).
    #[serde(skip_serializing_if = "Option::is_none")]
    conductivity_table_c_w_per_m_k: Option<&'a [[f64; 2]]>,
    heat_source_w_per_m3: f64,
    /// A heat source linear in position: `heat_source_w_per_m3` at this point, m.
    #[serde(skip_serializing_if = "Option::is_none")]
    heat_source_at_m: Option<[f64; 2]>,
    /// A heat source linear in position: its gradient, W/m⁴.
    #[serde(skip_serializing_if = "Option::is_none")]
    heat_source_gradient_w_per_m4: Option<[f64; 2]>,
    /// Meshed area (null when the material has no triangle on the mesh).
    area_m2: Option<f64>,
    heat_generated_w_per_m: Option<f64>,
    mean_temperature_c: Option<f64>,
    min_temperature_c: Option<f64>,
    max_temperature_c: Option<f64>,
}

#[derive(Serialize)]
struct CutOut<'a> {
    name: &'a str,
    closed: bool,
    length_m: f64,
    inside_length_m: f64,
    skipped_length_m: f64,
    heat_flow_w_per_m: f64,
    crossed_edges: usize,
}

#[derive(Serialize)]
struct ItemOut<'a> {
    item: &'a str,
    ring: &'a str,
    segments: &'a str,
    boundary: &'a str,
    kind: &'a str,
    length_m: f64,
    heat_flow_w_per_m: f64,
    mean_temperature_c: f64,
    min_temperature_c: f64,
    max_temperature_c: f64,
}

#[derive(Serialize)]
struct TemperatureOut {
    min_c: f64,
    max_c: f64,
    min_at_m: [f64; 2],
    max_at_m: [f64; 2],
    min_node: usize,
    max_node: usize,
}

/// A boundary condition with unit-suffixed keys.
#[derive(Serialize)]
#[serde(tag = "kind", rename_all = "lowercase")]
enum ConditionOut {
    Fixed {
        temperature_c: f64,
        /// The temperature's variation with position, when it varies.
        #[serde(skip_serializing_if = "Option::is_none")]
        varying: Option<VaryingOut>,
    },
    Insulated,
    Flux {
        flux_w_per_m2: f64,
    },
    Convection {
        h_w_per_m2_k: f64,
        /// The surface resistance R_s = 1/h when the boundary was given by it.
        #[serde(skip_serializing_if = "Option::is_none")]
        resistance_m2_k_per_w: Option<f64>,
        ambient_c: f64,
        /// The ambient's variation with position, when it varies.
        #[serde(skip_serializing_if = "Option::is_none")]
        varying: Option<VaryingOut>,
        /// Emissivity when the convective surface also radiates.
        #[serde(skip_serializing_if = "Option::is_none")]
        emissivity: Option<f64>,
        /// Surroundings when the convective surface also radiates, °C.
        #[serde(skip_serializing_if = "Option::is_none")]
        surroundings_c: Option<f64>,
    },
    Radiation {
        emissivity: f64,
        surroundings_c: f64,
    },
}

/// A temperature that varies with position: its form (metres, °C, K/m) and the lowest and
/// highest value imposed along the boundary.
#[derive(Serialize)]
struct VaryingOut {
    description: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    at_m: Option<[f64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    value_c: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    gradient_k_per_m: Option<[f64; 2]>,
    /// `[s_m, temperature_c]` points of a profile.
    #[serde(skip_serializing_if = "Option::is_none")]
    profile_s_m_temperature_c: Option<Vec<[f64; 2]>>,
    imposed_min_c: f64,
    imposed_max_c: f64,
}

impl VaryingOut {
    fn of(section: &Section, id: usize) -> Option<Self> {
        let f = section.boundaries[id].field.as_ref()?;
        let (lo, hi) = section.imposed_range(id)?;
        let (at_m, value_c, gradient_k_per_m, profile) = match f {
            Field::Linear(l) => (Some(l.at), Some(l.value), Some(l.gradient), None),
            Field::Profile(p) => (None, None, None, Some(p.points.clone())),
        };
        Some(VaryingOut {
            description: f.describe("°C"),
            at_m,
            value_c,
            gradient_k_per_m,
            profile_s_m_temperature_c: profile,
            imposed_min_c: lo,
            imposed_max_c: hi,
        })
    }
}

impl ConditionOut {
    /// The condition of boundary `id` of `section`, radiation included.
    fn of(section: &Section, id: usize) -> Self {
        let mut c = Self::from(&section.boundaries[id]);
        if let Self::Fixed { varying, .. } | Self::Convection { varying, .. } = &mut c {
            *varying = VaryingOut::of(section, id);
        }
        if let (
            Self::Convection {
                emissivity,
                surroundings_c,
                ..
            },
            Some(r),
        ) = (&mut c, section.radiation(id))
        {
            *emissivity = Some(r.emissivity);
            *surroundings_c = Some(r.surroundings);
        }
        c
    }
}

impl From<&Boundary> for ConditionOut {
    fn from(b: &Boundary) -> Self {
        match b.kind {
            BoundaryKind::Fixed { temperature } => Self::Fixed {
                temperature_c: temperature,
                varying: None,
            },
            BoundaryKind::Insulated => Self::Insulated,
            BoundaryKind::Flux { flux } => Self::Flux {
                flux_w_per_m2: flux,
            },
            BoundaryKind::Convection { h, ambient } => Self::Convection {
                h_w_per_m2_k: h,
                resistance_m2_k_per_w: b.resistance,
                ambient_c: ambient,
                varying: None,
                emissivity: None,
                surroundings_c: None,
            },
            BoundaryKind::Radiation {
                emissivity,
                surroundings,
            } => Self::Radiation {
                emissivity,
                surroundings_c: surroundings,
            },
        }
    }
}

#[derive(Serialize)]
struct BoundaryOut<'a> {
    name: &'a str,
    kind: &'a str,
    length_m: f64,
    heat_flow_w_per_m: f64,
    mean_temperature_c: f64,
    min_temperature_c: f64,
    max_temperature_c: f64,
    /// Mean linearised radiation coefficient over the boundary (radiating boundaries only).
    #[serde(skip_serializing_if = "Option::is_none")]
    radiation_coefficient_w_per_m2_k: Option<f64>,
    /// The boundary condition as given (null for unnamed segments).
    condition: Option<ConditionOut>,
}

#[derive(Serialize)]
struct ProbeOut<'a> {
    name: &'a str,
    x_m: f64,
    y_m: f64,
    temperature_c: f64,
    requested_at_m: [f64; 2],
    snapped: bool,
}

#[derive(Serialize)]
struct SkippedOut {
    index: usize,
    x_m: f64,
    y_m: f64,
}

#[derive(Serialize)]
struct LineOut<'a> {
    name: &'a str,
    /// Number of samples evaluated (rows of the line's CSV).
    samples: usize,
    skipped: Vec<SkippedOut>,
}

#[derive(Serialize)]
struct CycleOut {
    cycle: usize,
    triangles: usize,
    nodes: usize,
    relative: f64,
    energy_norm_sqrt_w_k_per_m: f64,
}

#[derive(Serialize)]
struct CheckOut<'a> {
    name: &'a str,
    value: f64,
    tolerance: f64,
    passed: bool,
    severity: crate::run::Severity,
    detail: &'a str,
}

#[derive(Serialize)]
struct TimingsOut {
    parse_s: f64,
    mesh_s: f64,
    assemble_s: f64,
    solve_s: f64,
    post_s: f64,
    cases_s: f64,
    write_s: f64,
    total_s: f64,
}

#[derive(Serialize)]
struct RunOut {
    timings_s: TimingsOut,
    peak_rss_mib: Option<f64>,
    note: &'static str,
}

/// The files of `solve --mesh` as given on the command line.
#[derive(Serialize)]
struct MeshFileOut<'a> {
    mesh: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    boundary: Option<&'a str>,
}

#[derive(Serialize)]
struct Summary<'a> {
    schema: &'static str,
    version: &'static str,
    title: &'a str,
    caution: &'static str,
    units: OrderedMap<&'static str, &'static str>,
    /// `solve --mesh`: the mesh made elsewhere that the results live on.
    #[serde(skip_serializing_if = "Option::is_none")]
    mesh_file: Option<MeshFileOut<'a>>,
    nodes: usize,
    triangles: usize,
    min_angle_deg: f64,
    max_triangle_area_m2: f64,
    section_area_m2: f64,
    materials: Vec<MaterialOut<'a>>,
    temperature: TemperatureOut,
    heat_flow_w_per_m: OrderedMap<&'a str, f64>,
    boundaries: Vec<BoundaryOut<'a>>,
    heat_source_w_per_m: f64,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    point_sources: Vec<PointSourceOut<'a>>,
    energy_imbalance_w_per_m: f64,
    energy_imbalance_relative: f64,
    probes: Vec<ProbeOut<'a>>,
    lines: Vec<LineOut<'a>>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    cuts: Vec<CutOut<'a>>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    contacts: Vec<crate::post::contacts::ContactFlow>,
    items: Vec<ItemOut<'a>>,
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    coupling: Option<super::coupling::CouplingOut<'a>>,
    error_estimate: ErrorEstimateOut,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    adaptivity: Vec<CycleOut>,
    #[serde(skip_serializing_if = "Option::is_none")]
    solver: Option<&'a crate::solve::SolverRecord>,
    #[serde(skip_serializing_if = "Option::is_none")]
    nonlinear: Option<&'a crate::solve::nonlinear::Outcome>,
    warnings: &'a [String],
    checks: Vec<CheckOut<'a>>,
    model: &'a Value,
    /// The manifest: every other file of the result set (absent from a bare summary).
    #[serde(skip_serializing_if = "Option::is_none")]
    files: Option<&'a [ManifestEntry]>,
    run: RunOut,
}

/// A point source with the temperature of its node.
#[derive(Serialize)]
struct PointSourceOut<'a> {
    name: &'a str,
    at_m: [f64; 2],
    power_w_per_m: f64,
    node: usize,
    temperature_c: f64,
    note: &'static str,
}

/// What the temperature at a point source means.
const POINT_SOURCE_NOTE: &str = "temperature_c is the temperature of the mesh node at the source: it depends on the mesh (the exact field is logarithmic, infinite at the line); read temperatures at probes standing off the source";

fn point_sources(r: &Results) -> Vec<PointSourceOut<'_>> {
    r.point_sources
        .iter()
        .map(|p| PointSourceOut {
            name: &p.name,
            at_m: p.at,
            power_w_per_m: p.power,
            node: p.node,
            temperature_c: p.temperature,
            note: POINT_SOURCE_NOTE,
        })
        .collect()
}

/// Step 1: every boundary name appears once (the heat-flow object is keyed by name).
fn check_unique_boundaries(r: &Results) -> Result<()> {
    let mut names = BTreeSet::new();
    for b in &r.boundaries {
        if !names.insert(b.name.as_str()) {
            return Err(Error::run(format!(
                "internal: boundary {:?} appears twice in the results",
                b.name
            )));
        }
    }
    Ok(())
}

fn materials<'a>(section: &'a Section, r: &'a Results) -> Vec<MaterialOut<'a>> {
    section
        .materials
        .iter()
        .map(|m| {
            let res = r.materials.iter().find(|x| x.id == m.id);
            MaterialOut {
                id: m.id,
                name: &m.name,
                conductivity: (&m.conductivity).into(),
                conductivity_table_c_w_per_m_k: section
                    .conductivity_table(m.id)
                    .map(|t| t.points.as_slice()),
                heat_source_w_per_m3: m.heat_source,
                heat_source_at_m: m.source_field.map(|f| f.at),
                heat_source_gradient_w_per_m4: m.source_field.map(|f| f.gradient),
                area_m2: res.map(|x| x.area),
                heat_generated_w_per_m: res.map(|x| x.heat_generated),
                mean_temperature_c: res.map(|x| x.mean_temperature),
                min_temperature_c: res.map(|x| x.min_temperature),
                max_temperature_c: res.map(|x| x.max_temperature),
            }
        })
        .collect()
}

fn cuts(r: &Results) -> Vec<CutOut<'_>> {
    r.cuts
        .iter()
        .map(|c| CutOut {
            name: &c.name,
            closed: c.closed,
            length_m: c.length,
            inside_length_m: c.inside_length,
            skipped_length_m: c.skipped_length(),
            heat_flow_w_per_m: c.heat_flow,
            crossed_edges: c.crossed_edges,
        })
        .collect()
}

fn items(r: &Results) -> Vec<ItemOut<'_>> {
    r.items
        .iter()
        .map(|i| ItemOut {
            item: &i.item,
            ring: &i.ring,
            segments: &i.segments,
            boundary: &i.result.name,
            kind: i.result.kind.as_str(),
            length_m: i.result.length,
            heat_flow_w_per_m: i.result.heat_flow,
            mean_temperature_c: i.result.mean_temperature,
            min_temperature_c: i.result.min_temperature,
            max_temperature_c: i.result.max_temperature,
        })
        .collect()
}

fn boundaries<'a>(section: &'a Section, r: &'a Results) -> Vec<BoundaryOut<'a>> {
    r.boundaries
        .iter()
        .map(|b| BoundaryOut {
            name: &b.name,
            kind: b.kind.as_str(),
            length_m: b.length,
            heat_flow_w_per_m: b.heat_flow,
            mean_temperature_c: b.mean_temperature,
            min_temperature_c: b.min_temperature,
            max_temperature_c: b.max_temperature,
            radiation_coefficient_w_per_m2_k: b.radiation_coefficient,
            condition: section
                .boundaries
                .iter()
                .position(|s| s.name == b.name)
                .map(|id| ConditionOut::of(section, id)),
        })
        .collect()
}

fn probes(r: &Results) -> Vec<ProbeOut<'_>> {
    r.probes
        .iter()
        .map(|p| ProbeOut {
            name: &p.name,
            x_m: p.x,
            y_m: p.y,
            temperature_c: p.temperature,
            requested_at_m: p.at,
            snapped: p.snapped,
        })
        .collect()
}

fn lines(r: &Results) -> Vec<LineOut<'_>> {
    r.lines
        .iter()
        .map(|l| LineOut {
            name: &l.name,
            samples: l.samples.len(),
            skipped: l
                .skipped
                .iter()
                .map(|&(index, [x, y])| SkippedOut {
                    index,
                    x_m: x,
                    y_m: y,
                })
                .collect(),
        })
        .collect()
}

fn cycles(c: &[Cycle]) -> Vec<CycleOut> {
    c.iter()
        .map(|c| CycleOut {
            cycle: c.cycle,
            triangles: c.triangles,
            nodes: c.nodes,
            relative: c.relative_error,
            energy_norm_sqrt_w_k_per_m: c.energy_norm_error,
        })
        .collect()
}

fn checks(c: &[Check]) -> Vec<CheckOut<'_>> {
    c.iter()
        .map(|c| CheckOut {
            name: &c.name,
            value: c.value,
            tolerance: c.tolerance,
            passed: c.passed,
            severity: c.severity,
            detail: &c.detail,
        })
        .collect()
}

fn run_out(t: &Timings) -> RunOut {
    RunOut {
        timings_s: TimingsOut {
            parse_s: t.parse_s,
            mesh_s: t.mesh_s,
            assemble_s: t.assemble_s,
            solve_s: t.solve_s,
            post_s: t.post_s,
            cases_s: t.cases_s,
            write_s: t.write_s,
            total_s: t.total_s,
        },
        peak_rss_mib: t.peak_rss_mib,
        note: "the only part of this file that may change from run to run",
    }
}

/// The run summary as pretty-printed JSON with a trailing newline. Keys appear in a fixed
/// order (identification, unit legend, mesh, materials, results, error estimate, adaptivity,
/// warnings, checks, model, files, run); per-boundary, probe and line entries keep the order of
/// `results`.
pub fn summary_json(inputs: &SummaryInputs<'_>) -> Result<Vec<u8>> {
    summary_bytes(inputs, None)
}

/// [`summary_json`] with the result set's manifest: a top-level `files` array (before `run`)
/// of `{ "path", "bytes", "sha256" }` for every other file of the set, as
/// [`OutputSet::manifest`](super::OutputSet::manifest) gives them.
pub fn summary_json_with_files(
    inputs: &SummaryInputs<'_>,
    files: &[ManifestEntry],
) -> Result<Vec<u8>> {
    summary_bytes(inputs, Some(files))
}

fn summary_bytes(inputs: &SummaryInputs<'_>, files: Option<&[ManifestEntry]>) -> Result<Vec<u8>> {
    let SummaryInputs {
        section,
        mesh,
        results: r,
        ..
    } = *inputs;
    check_unique_boundaries(r)?;
    let summary = Summary {
        schema: SUMMARY_SCHEMA,
        version: crate::VERSION,
        title: &section.title,
        caution: CAUTION,
        units: unit_legend(),
        mesh_file: inputs.mesh_files.map(|(m, b)| MeshFileOut {
            mesh: m,
            boundary: b.as_deref(),
        }),
        nodes: mesh.nodes.len(),
        triangles: mesh.triangles.len(),
        min_angle_deg: mesh.stats.min_angle_deg,
        max_triangle_area_m2: mesh.stats.max_area,
        section_area_m2: mesh.stats.area,
        materials: materials(section, r),
        temperature: TemperatureOut {
            min_c: r.t_min.value,
            max_c: r.t_max.value,
            min_at_m: r.t_min.at,
            max_at_m: r.t_max.at,
            min_node: r.t_min.node,
            max_node: r.t_max.node,
        },
        heat_flow_w_per_m: OrderedMap(
            r.boundaries
                .iter()
                .map(|b| (b.name.as_str(), b.heat_flow))
                .collect(),
        ),
        boundaries: boundaries(section, r),
        heat_source_w_per_m: r.heat_source,
        point_sources: point_sources(r),
        energy_imbalance_w_per_m: r.energy_imbalance,
        energy_imbalance_relative: r.energy_imbalance_relative,
        probes: probes(r),
        lines: lines(r),
        cuts: cuts(r),
        contacts: crate::post::contacts::contact_flows(section, mesh, &r.temperature),
        items: items(r),
        coupling: inputs
            .coupling
            .map(|c| super::coupling::coupling_out(section, c)),
        error_estimate: ErrorEstimateOut::from(inputs.error_estimate),
        adaptivity: cycles(inputs.adaptivity),
        solver: inputs.solver,
        nonlinear: inputs.nonlinear,
        warnings: inputs.warnings,
        checks: checks(inputs.checks),
        model: inputs.model,
        files,
        run: run_out(inputs.timings),
    };
    json_bytes(&summary, "summary JSON")
}
