//! Heat flow per boundary, per item (hole or run of ring segments with one name) and per
//! material, and the energy balance. Flux and convection edges are integrated
//! exactly from their data and the solved trace; fixed edges take the nodal reactions
//! `K·T − f`, split between fixed boundaries meeting at a node in proportion to the lengths of
//! its adjacent fixed edges of each.

use super::{BoundaryResult, ConditionKind};
use crate::error::Result;
use crate::fem::System;
use crate::mesh::{BoundaryEdge, Mesh, RingRef};
use crate::model::{BoundaryKind, Ring, Section};
use serde::Serialize;

/// Length, heat flow and trace statistics of one boundary, summed edge by edge.
#[derive(Debug, Clone)]
struct BoundaryAccumulator {
    present: bool,
    length: f64,
    heat_flow: f64,
    temperature_integral: f64,
    min: f64,
    max: f64,
    /// ∫ h_r ds over radiating edges, W/(m·K), and their length, m.
    radiation_coefficient_integral: f64,
    radiating_length: f64,
}

impl BoundaryAccumulator {
    fn new() -> Self {
        BoundaryAccumulator {
            present: false,
            length: 0.0,
            heat_flow: 0.0,
            temperature_integral: 0.0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            radiation_coefficient_integral: 0.0,
            radiating_length: 0.0,
        }
    }

    fn add_edge(&mut self, length: f64, ta: f64, tb: f64) {
        self.present = true;
        self.length += length;
        self.temperature_integral += 0.5 * length * (ta + tb);
        self.min = self.min.min(ta).min(tb);
        self.max = self.max.max(ta).max(tb);
    }

    fn result(&self, name: &str, kind: ConditionKind) -> BoundaryResult {
        BoundaryResult {
            name: name.to_string(),
            kind,
            length: self.length,
            heat_flow: self.heat_flow,
            mean_temperature: if self.length > 0.0 {
                self.temperature_integral / self.length
            } else {
                0.5 * (self.min + self.max)
            },
            min_temperature: self.min,
            max_temperature: self.max,
            radiation_coefficient: (self.radiating_length > 0.0)
                .then(|| self.radiation_coefficient_integral / self.radiating_length),
        }
    }
}

/// One end of a fixed edge: (node, group, edge length).
type FixedEnd = (usize, usize, f64);

/// Heat flow through each boundary edge set, positive into the section, W/m, in the order of
/// [`Results::boundaries`](super::Results::boundaries). The mesh must have been checked;
/// `residual` is `K·T − f` of the full system ([`System::residual`]).
pub fn boundary_results(
    section: &Section,
    mesh: &Mesh,
    residual: &[f64],
    temperature: &[f64],
) -> Result<Vec<BoundaryResult>> {
    let unnamed_group = section.boundaries.len();
    let acc = accumulate(
        section,
        mesh,
        residual,
        temperature,
        unnamed_group + 1,
        |e| e.boundary.unwrap_or(unnamed_group),
    );
    let mut out: Vec<BoundaryResult> = acc
        .iter()
        .zip(&section.boundaries)
        .filter(|(a, _)| a.present)
        .map(|(a, b)| a.result(&b.name, ConditionKind::from(&b.kind)))
        .collect();
    if acc[unnamed_group].present {
        out.push(acc[unnamed_group].result(UNNAMED, ConditionKind::Insulated));
    }
    Ok(out)
}

/// The name under which unnamed (insulated) boundary segments are reported.
pub const UNNAMED: &str = "(unnamed)";

/// Length, heat flow and trace statistics per group of boundary edges (`group_of` gives the
/// group of an edge, below `groups`): flux and convection edges integrated exactly, fixed
/// edges taking the nodal reactions, split at a node between the groups of its fixed edges in
/// proportion to their lengths.
fn accumulate(
    section: &Section,
    mesh: &Mesh,
    residual: &[f64],
    temperature: &[f64],
    groups: usize,
    group_of: impl Fn(&BoundaryEdge) -> usize,
) -> Vec<BoundaryAccumulator> {
    let mut acc = vec![BoundaryAccumulator::new(); groups];
    let mut fixed_ends: Vec<FixedEnd> = Vec::new();
    for e in &mesh.boundary_edges {
        let g = group_of(e);
        let l = mesh.edge_length(e);
        let [a, b] = e.nodes;
        let (ta, tb) = (temperature[a], temperature[b]);
        acc[g].add_edge(l, ta, tb);
        let Some(id) = e.boundary else {
            continue;
        };
        if let Some(r) = section.radiation(id) {
            let q = crate::fem::nonlinear::radiation_edge(&r, ta, tb);
            acc[g].heat_flow += q.mean_flux * l;
            acc[g].radiation_coefficient_integral += q.mean_coefficient * l;
            acc[g].radiating_length += l;
        }
        match section.boundaries[id].kind {
            BoundaryKind::Fixed { .. } => {
                fixed_ends.push((a, g, l));
                fixed_ends.push((b, g, l));
            }
            BoundaryKind::Insulated | BoundaryKind::Radiation { .. } => {}
            BoundaryKind::Flux { flux } => acc[g].heat_flow += flux * l,
            BoundaryKind::Convection { h, ambient } => match &section.boundaries[id].field {
                None => acc[g].heat_flow += h * l * (ambient - 0.5 * (ta + tb)),
                Some(f) => {
                    // T∞ and T both linear along the edge: the exact integral of h·(T∞ − T).
                    let (aa, ab) = (f.value_at(mesh.nodes[a]), f.value_at(mesh.nodes[b]));
                    acc[g].heat_flow += h * l * (0.5 * (aa + ab) - 0.5 * (ta + tb));
                }
            },
        }
    }
    add_reactions(fixed_ends, residual, &mut acc);
    acc
}

/// Adds the reaction of every fixed node to the groups of the fixed edges meeting there, split
/// in proportion to the lengths of the node's adjacent fixed edges of each.
fn add_reactions(mut fixed_ends: Vec<FixedEnd>, residual: &[f64], acc: &mut [BoundaryAccumulator]) {
    fixed_ends.sort_by_key(|x| (x.0, x.1));
    for node_ends in fixed_ends.chunk_by(|x, y| x.0 == y.0) {
        let r = residual[node_ends[0].0];
        let total = node_ends.iter().fold(0.0, |s, x| s + x.2);
        let single = node_ends.iter().all(|x| x.1 == node_ends[0].1);
        for group_ends in node_ends.chunk_by(|x, y| x.1 == y.1) {
            let l = group_ends.iter().fold(0.0, |s, x| s + x.2);
            acc[group_ends[0].1].heat_flow += if single { r } else { r * l / total };
        }
    }
}

/// Heat flow and surface temperatures of one item: a hole, or a run of consecutive segments
/// of one ring with one boundary name.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ItemResult {
    /// `holes[1]` for a whole ring, `outline:0-2` for a run of its segments (indices as
    /// written in the model file).
    pub item: String,
    /// The ring's label: `outline` or `holes[i]`.
    pub ring: String,
    /// Written segment indices of the run, e.g. `0-2` or `0-1 7-8` (a run across the ring's
    /// end); every segment for a whole ring.
    pub segments: String,
    /// The run's boundary, with its condition, flow and trace statistics.
    #[serde(flatten)]
    pub result: BoundaryResult,
}

/// One run of segments of a ring: (ring, validated segment indices, boundary id).
#[derive(Debug, Clone)]
struct Run {
    ring: RingRef,
    segments: Vec<usize>,
    boundary: Option<usize>,
    whole: bool,
}

/// Heat flow per item (each hole, each run of outline or hole segments with one boundary
/// name), in ring order (outline, then holes) and by first written segment within a ring.
/// Items with no edge on the mesh are left out.
pub fn item_results(
    section: &Section,
    mesh: &Mesh,
    residual: &[f64],
    temperature: &[f64],
) -> Vec<ItemResult> {
    let rings: Vec<(RingRef, &Ring)> = std::iter::once((RingRef::Outline, &section.outline))
        .chain(
            section
                .holes
                .iter()
                .enumerate()
                .map(|(i, h)| (RingRef::Hole(i), h)),
        )
        .collect();
    let mut runs = Vec::new();
    let mut first_run = Vec::with_capacity(rings.len());
    let mut run_of_segment: Vec<Vec<usize>> = Vec::with_capacity(rings.len());
    for (r, ring) in &rings {
        first_run.push(runs.len());
        let ring_runs = ring_runs(*r, ring);
        let mut of = vec![0usize; ring.len()];
        for (k, run) in ring_runs.iter().enumerate() {
            for &s in &run.segments {
                of[s] = runs.len() + k;
            }
        }
        run_of_segment.push(of);
        runs.extend(ring_runs);
    }
    let ring_index = |r: RingRef| match r {
        RingRef::Outline => 0,
        RingRef::Hole(h) => h + 1,
    };
    let acc = accumulate(section, mesh, residual, temperature, runs.len(), |e| {
        run_of_segment[ring_index(e.ring)][e.segment]
    });
    runs.iter()
        .zip(&acc)
        .filter(|(_, a)| a.present)
        .map(|(run, a)| {
            let ring = rings[ring_index(run.ring)].1;
            let (name, kind) = match run.boundary {
                Some(id) => (
                    section.boundaries[id].name.as_str(),
                    ConditionKind::from(&section.boundaries[id].kind),
                ),
                None => (UNNAMED, ConditionKind::Insulated),
            };
            let segments = written_ranges(ring, &run.segments);
            ItemResult {
                item: if run.whole {
                    ring.label.clone()
                } else {
                    format!("{}:{segments}", ring.label)
                },
                ring: ring.label.clone(),
                segments,
                result: a.result(name, kind),
            }
        })
        .collect()
}

/// The maximal runs of consecutive segments of one ring with one boundary, ordered by their
/// smallest written segment index. A ring with one boundary all round is one whole run.
fn ring_runs(r: RingRef, ring: &Ring) -> Vec<Run> {
    let n = ring.len();
    let b = &ring.edge_boundary;
    let Some(start) = (0..n).find(|&i| b[i] != b[(i + n - 1) % n]) else {
        return vec![Run {
            ring: r,
            segments: (0..n).collect(),
            boundary: b.first().copied().flatten(),
            whole: true,
        }];
    };
    let mut runs: Vec<Run> = Vec::new();
    for k in 0..n {
        let i = (start + k) % n;
        match runs.last_mut() {
            Some(run) if run.boundary == b[i] && k > 0 => run.segments.push(i),
            _ => runs.push(Run {
                ring: r,
                segments: vec![i],
                boundary: b[i],
                whole: false,
            }),
        }
    }
    runs.sort_by_key(|run| {
        run.segments
            .iter()
            .map(|&s| ring.written_segment[s])
            .min()
            .unwrap_or(0)
    });
    runs
}

/// Written indices of validated segments as sorted ranges: `3`, `0-2`, `0-1 7-8`.
fn written_ranges(ring: &Ring, segments: &[usize]) -> String {
    let mut w: Vec<usize> = segments.iter().map(|&s| ring.written_segment[s]).collect();
    w.sort_unstable();
    w.dedup();
    let mut parts: Vec<String> = Vec::new();
    let mut i = 0;
    while i < w.len() {
        let mut j = i;
        while j + 1 < w.len() && w[j + 1] == w[j] + 1 {
            j += 1;
        }
        parts.push(if i == j {
            w[i].to_string()
        } else {
            format!("{}-{}", w[i], w[j])
        });
        i = j + 1;
    }
    parts.join(" ")
}

/// Heat generated and temperatures per material.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MaterialResult {
    /// Material id.
    pub id: usize,
    /// Material name.
    pub name: String,
    /// Meshed area of the material, m².
    pub area: f64,
    /// Heat generated in it, W per metre of depth.
    pub heat_generated: f64,
    /// Area-weighted mean temperature, °C (exact for the P1 field).
    pub mean_temperature: f64,
    /// Lowest nodal temperature of its triangles, °C.
    pub min_temperature: f64,
    /// Highest nodal temperature of its triangles, °C.
    pub max_temperature: f64,
}

/// Area, generated heat and temperatures of every material with triangles on the mesh, in
/// material-id order.
pub fn material_results(
    section: &Section,
    mesh: &Mesh,
    cell_source: &[f64],
    temperature: &[f64],
) -> Vec<MaterialResult> {
    let n = section.materials.len();
    let mut area = vec![0.0; n];
    let mut heat = vec![0.0; n];
    let mut integral = vec![0.0; n];
    let mut lo = vec![f64::INFINITY; n];
    let mut hi = vec![f64::NEG_INFINITY; n];
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let m = mesh.material[t];
        let a = mesh.triangle_area(t);
        area[m] += a;
        heat[m] += cell_source[t];
        let ts = ids.map(|i| temperature[i]);
        integral[m] += a * (ts[0] + ts[1] + ts[2]) / 3.0;
        for v in ts {
            lo[m] = lo[m].min(v);
            hi[m] = hi[m].max(v);
        }
    }
    section
        .materials
        .iter()
        .filter(|m| area[m.id] > 0.0)
        .map(|m| MaterialResult {
            id: m.id,
            name: m.name.clone(),
            area: area[m.id],
            heat_generated: heat[m.id],
            mean_temperature: integral[m.id] / area[m.id],
            min_temperature: lo[m.id],
            max_temperature: hi[m.id],
        })
        .collect()
}

/// The energy balance of a solved field: boundary heat flows against the generated heat.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnergyBalance {
    /// Total heat generated by sources (volumetric sources and point sources), W/m.
    pub heat_source: f64,
    /// Σ boundary heat flows + heat source, W/m (zero to round-off).
    pub imbalance: f64,
    /// |imbalance| / [`balance_scale`], never a division by zero; NaN when a sum overflowed.
    pub imbalance_relative: f64,
}

impl EnergyBalance {
    /// The balance of the given boundary flows, per-triangle generated heat and point source
    /// powers (W/m), relative to [`balance_scale`] with the given floor (W/m).
    pub fn of(
        boundaries: &[BoundaryResult],
        cell_source: &[f64],
        point_power: &[f64],
        floor: f64,
    ) -> Self {
        let heat_source: f64 = cell_source.iter().sum::<f64>() + point_power.iter().sum::<f64>();
        let flow_sum: f64 = boundaries.iter().map(|b| b.heat_flow).sum();
        let imbalance = flow_sum + heat_source;
        let scale = balance_scale(boundaries, heat_source, floor);
        EnergyBalance {
            heat_source,
            imbalance,
            imbalance_relative: relative_to(imbalance, scale),
        }
    }
}

/// `|value| / scale`, NaN unless both are finite and the scale positive (an overflowed sum
/// must never read as a closed balance).
pub fn relative_to(value: f64, scale: f64) -> f64 {
    if value.is_finite() && scale.is_finite() && scale > 0.0 {
        value.abs() / scale
    } else {
        f64::NAN
    }
}

/// The heat flowing through a solved model, W/m, against which its imbalance is measured:
/// Σ|boundary heat flows| + |heat source|, but at least `floor` (see [`balance_floor`]), so
/// that a model through which nothing flows (every edge at one temperature) is never measured
/// against round-off.
pub fn balance_scale(boundaries: &[BoundaryResult], heat_source: f64, floor: f64) -> f64 {
    let flow_abs: f64 = boundaries.iter().map(|b| b.heat_flow.abs()).sum();
    (flow_abs + heat_source.abs()).max(floor)
}

/// The floor of [`balance_scale`], W/m: `k_max · max(T_max − T_min, 1 K)`, with `k_max` the
/// largest principal conductivity of the system's materials and `T_max − T_min` the range of
/// the solved nodal temperatures — the heat that flows through a square of the most conductive
/// material across the field's temperature range (or 1 K). Positive for every valid model.
pub fn balance_floor(system: &System, temperature: &[f64]) -> f64 {
    let k_max = system
        .conductivity
        .iter()
        .map(|c| {
            let d = c.tensor;
            let mean = 0.5 * (d[(0, 0)] + d[(1, 1)]);
            let half = 0.5 * (d[(0, 0)] - d[(1, 1)]);
            mean + half.hypot(d[(0, 1)])
        })
        .fold(0.0, f64::max);
    let (lo, hi) = temperature
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &t| {
            (lo.min(t), hi.max(t))
        });
    let range = if hi >= lo { hi - lo } else { 0.0 };
    k_max * range.max(1.0)
}
