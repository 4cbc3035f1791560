//! The run summary (summary.json).

use crate::CAUTION;
use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::model::Section;
use crate::post::Results;
use serde::Serialize;
use serde::ser::SerializeMap;
use serde_json::Value;
use std::collections::BTreeSet;

// ---------------------------------------------------------------------------------------------
// Summary JSON
// ---------------------------------------------------------------------------------------------

/// Summary schema version; raised when a key changes meaning or disappears.
pub const SUMMARY_SCHEMA: u32 = 1;

/// Units of every quantity in the summary, in output order.
const UNITS: [(&str, &str); 10] = [
    ("length", "m"),
    ("temperature", "°C"),
    ("conductivity", "W/(m·K)"),
    ("heat_source", "W/m³"),
    ("film_coefficient", "W/(m²·K)"),
    ("heat_flux", "W/m²"),
    ("heat_flow", "W/m (per metre of section depth)"),
    ("area", "m²"),
    ("gradient", "K/m"),
    ("angle", "degrees"),
];

/// Everything the summary is built from; the caller fills it.
#[derive(Debug, Clone, Copy)]
pub struct SummaryInputs<'a> {
    pub section: &'a Section,
    pub mesh: &'a Mesh,
    pub results: &'a Results,
    /// All warnings of the run (model, mesh, post), in the order they should be shown.
    pub warnings: &'a [String],
    /// Self-checks (residual, energy balance, ...), as the caller reports them.
    pub checks: &'a Value,
    /// The model as resolved, with its defaults filled in.
    pub model: &'a Value,
    /// Run information (timings, host, ...): the only part expected to vary run to run.
    pub run: &'a Value,
    /// Further results keyed by name (e.g. `error_estimate`, `adaptivity`), written after
    /// `lines` in the given order.
    pub extra: &'a [(&'a str, Value)],
}

/// A JSON object whose keys keep the given order (a `serde_json::Value` object would sort
/// them, as the `preserve_order` feature is not enabled).
struct OrderedMap<K, V>(Vec<(K, V)>);

impl<K: Serialize, V: Serialize> Serialize for OrderedMap<K, V> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

#[derive(Serialize)]
struct MaterialOut<'a> {
    id: usize,
    name: &'a str,
    conductivity: f64,
    heat_source: f64,
}

#[derive(Serialize)]
struct TemperatureOut {
    min: f64,
    max: f64,
    min_at: [f64; 2],
    max_at: [f64; 2],
    min_node: usize,
    max_node: usize,
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
    /// The boundary condition as given (null for unnamed segments).
    condition: Option<&'a crate::model::BoundaryKind>,
}

#[derive(Serialize)]
struct ProbeOut<'a> {
    name: &'a str,
    x: f64,
    y: f64,
    temperature: f64,
    requested_at: [f64; 2],
    snapped: bool,
}

#[derive(Serialize)]
struct SkippedOut {
    index: usize,
    x: f64,
    y: f64,
}

#[derive(Serialize)]
struct LineOut<'a> {
    name: &'a str,
    /// Number of samples evaluated (rows of the line's CSV).
    samples: usize,
    skipped: Vec<SkippedOut>,
}

#[derive(Serialize)]
struct Summary<'a> {
    schema: u32,
    version: &'static str,
    title: &'a str,
    caution: &'static str,
    units: OrderedMap<&'static str, &'static str>,
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
    energy_imbalance_w_per_m: f64,
    energy_imbalance_relative: f64,
    probes: Vec<ProbeOut<'a>>,
    lines: Vec<LineOut<'a>>,
    #[serde(flatten)]
    extra: OrderedMap<&'a str, &'a Value>,
    warnings: &'a [String],
    checks: &'a Value,
    model: &'a Value,
    run: &'a Value,
}

/// The run summary as pretty-printed JSON with a trailing newline. Keys appear in a fixed
/// order (identification, units, mesh, materials, results, warnings, checks, model, run);
/// per-boundary, probe and line entries keep the order of `results`.
pub fn summary_json(inputs: &SummaryInputs<'_>) -> Result<Vec<u8>> {
    let SummaryInputs {
        section,
        mesh,
        results: r,
        ..
    } = *inputs;

    let mut names = BTreeSet::new();
    for b in &r.boundaries {
        if !names.insert(b.name.as_str()) {
            return Err(Error::run(format!(
                "internal: boundary {:?} appears twice in the results",
                b.name
            )));
        }
    }

    let summary = Summary {
        schema: SUMMARY_SCHEMA,
        version: crate::VERSION,
        title: &section.title,
        caution: CAUTION,
        units: OrderedMap(UNITS.to_vec()),
        nodes: mesh.nodes.len(),
        triangles: mesh.triangles.len(),
        min_angle_deg: mesh.stats.min_angle_deg,
        max_triangle_area_m2: mesh.stats.max_area,
        section_area_m2: mesh.stats.area,
        materials: section
            .materials
            .iter()
            .map(|m| MaterialOut {
                id: m.id,
                name: &m.name,
                conductivity: m.conductivity,
                heat_source: m.heat_source,
            })
            .collect(),
        temperature: TemperatureOut {
            min: r.t_min.value,
            max: r.t_max.value,
            min_at: r.t_min.at,
            max_at: r.t_max.at,
            min_node: r.t_min.node,
            max_node: r.t_max.node,
        },
        heat_flow_w_per_m: OrderedMap(
            r.boundaries
                .iter()
                .map(|b| (b.name.as_str(), b.heat_flow))
                .collect(),
        ),
        boundaries: r
            .boundaries
            .iter()
            .map(|b| BoundaryOut {
                name: &b.name,
                kind: b.kind.as_str(),
                length_m: b.length,
                heat_flow_w_per_m: b.heat_flow,
                mean_temperature_c: b.mean_temperature,
                min_temperature_c: b.min_temperature,
                max_temperature_c: b.max_temperature,
                condition: section
                    .boundaries
                    .iter()
                    .find(|s| s.name == b.name)
                    .map(|s| &s.kind),
            })
            .collect(),
        heat_source_w_per_m: r.heat_source,
        energy_imbalance_w_per_m: r.energy_imbalance,
        energy_imbalance_relative: r.energy_imbalance_relative,
        probes: r
            .probes
            .iter()
            .map(|p| ProbeOut {
                name: &p.name,
                x: p.x,
                y: p.y,
                temperature: p.temperature,
                requested_at: p.at,
                snapped: p.snapped,
            })
            .collect(),
        lines: r
            .lines
            .iter()
            .map(|l| LineOut {
                name: &l.name,
                samples: l.samples.len(),
                skipped: l
                    .skipped
                    .iter()
                    .map(|&(index, [x, y])| SkippedOut { index, x, y })
                    .collect(),
            })
            .collect(),
        extra: OrderedMap(inputs.extra.iter().map(|(k, v)| (*k, v)).collect()),
        warnings: inputs.warnings,
        checks: inputs.checks,
        model: inputs.model,
        run: inputs.run,
    };
    let mut out = serde_json::to_vec_pretty(&summary)
        .map_err(|e| Error::run(format!("cannot encode summary JSON: {e}")))?;
    out.push(b'\n');
    Ok(out)
}
