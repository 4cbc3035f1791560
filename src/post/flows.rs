//! Heat flow per boundary and the energy balance. Flux and convection edges are integrated
//! exactly from their data and the solved trace; fixed edges take the nodal reactions
//! `K·T − f`, split between fixed boundaries meeting at a node in proportion to the lengths of
//! its adjacent fixed edges of each.

use super::{BoundaryResult, ConditionKind};
use crate::error::Result;
use crate::fem::System;
use crate::mesh::Mesh;
use crate::model::{BoundaryKind, Section};

/// Length, heat flow and trace statistics of one boundary, summed edge by edge.
#[derive(Debug, Clone)]
struct BoundaryAccumulator {
    present: bool,
    length: f64,
    heat_flow: f64,
    temperature_integral: f64,
    min: f64,
    max: f64,
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
        }
    }
}

/// One end of a fixed edge: (node, boundary id, edge length).
type FixedEnd = (usize, usize, f64);

/// Heat flow through each boundary edge set, positive into the section, W/m, in the order of
/// [`Results::boundaries`](super::Results::boundaries). The mesh must have been checked.
pub fn boundary_results(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    temperature: &[f64],
) -> Result<Vec<BoundaryResult>> {
    let residual = system.residual(temperature)?;
    let mut acc = vec![BoundaryAccumulator::new(); section.boundaries.len()];
    let mut unnamed = BoundaryAccumulator::new();
    let fixed_ends = add_edges(section, mesh, temperature, &mut acc, &mut unnamed);
    add_reactions(fixed_ends, &residual, &mut acc);
    let mut out: Vec<BoundaryResult> = acc
        .iter()
        .zip(&section.boundaries)
        .filter(|(a, _)| a.present)
        .map(|(a, b)| a.result(&b.name, ConditionKind::from(&b.kind)))
        .collect();
    if unnamed.present {
        out.push(unnamed.result("(unnamed)", ConditionKind::Insulated));
    }
    Ok(out)
}

/// Adds every boundary edge to its accumulator, with the exact heat flow of flux and
/// convection edges; returns both ends of every fixed edge.
fn add_edges(
    section: &Section,
    mesh: &Mesh,
    temperature: &[f64],
    acc: &mut [BoundaryAccumulator],
    unnamed: &mut BoundaryAccumulator,
) -> Vec<FixedEnd> {
    let mut fixed_ends = Vec::new();
    for e in &mesh.boundary_edges {
        let l = mesh.edge_length(e);
        let [a, b] = e.nodes;
        let (ta, tb) = (temperature[a], temperature[b]);
        let Some(id) = e.boundary else {
            unnamed.add_edge(l, ta, tb);
            continue;
        };
        acc[id].add_edge(l, ta, tb);
        match section.boundaries[id].kind {
            BoundaryKind::Fixed { .. } => {
                fixed_ends.push((a, id, l));
                fixed_ends.push((b, id, l));
            }
            BoundaryKind::Insulated => {}
            BoundaryKind::Flux { flux } => acc[id].heat_flow += flux * l,
            BoundaryKind::Convection { h, ambient } => {
                acc[id].heat_flow += h * l * (ambient - 0.5 * (ta + tb));
            }
        }
    }
    fixed_ends
}

/// Adds the reaction of every fixed node to the fixed boundaries meeting there, split in
/// proportion to the lengths of the node's adjacent fixed edges of each.
fn add_reactions(mut fixed_ends: Vec<FixedEnd>, residual: &[f64], acc: &mut [BoundaryAccumulator]) {
    fixed_ends.sort_by_key(|x| (x.0, x.1));
    for node_ends in fixed_ends.chunk_by(|x, y| x.0 == y.0) {
        let r = residual[node_ends[0].0];
        let total = node_ends.iter().fold(0.0, |s, x| s + x.2);
        let single = node_ends.iter().all(|x| x.1 == node_ends[0].1);
        for boundary_ends in node_ends.chunk_by(|x, y| x.1 == y.1) {
            let l = boundary_ends.iter().fold(0.0, |s, x| s + x.2);
            acc[boundary_ends[0].1].heat_flow += if single { r } else { r * l / total };
        }
    }
}

/// The energy balance of a solved field: boundary heat flows against the generated heat.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EnergyBalance {
    /// Total heat generated by sources, W/m.
    pub heat_source: f64,
    /// Σ boundary heat flows + heat source, W/m (zero to round-off).
    pub imbalance: f64,
    /// |imbalance| / [`balance_scale`], never a division by zero; NaN when a sum overflowed.
    pub imbalance_relative: f64,
}

impl EnergyBalance {
    /// The balance of the given boundary flows and per-triangle generated heat (W/m),
    /// relative to [`balance_scale`] with the given floor (W/m).
    pub fn of(boundaries: &[BoundaryResult], cell_source: &[f64], floor: f64) -> Self {
        let heat_source: f64 = cell_source.iter().sum();
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
