//! Heat flow across contact interfaces: per `[[contacts]]` entry, the interface length, the
//! mean temperature jump and the heat flow, from the same interface elements the matrix holds
//! (`fem::pattern::interface_matrix`), so the flow is exactly what the solved system carries.

use crate::mesh::Mesh;
use crate::model::Section;
use serde::Serialize;

/// The result of one contact.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ContactFlow {
    /// The two material names (first = the contact's a side).
    pub between: [String; 2],
    /// Contact resistance, m²·K/W.
    pub resistance_m2k_per_w: f64,
    /// Total length of the edges where the materials meet, m (0: they never meet).
    pub interface_length_m: f64,
    /// Length-weighted mean of T_a − T_b over the interface, K (0 without interface).
    pub mean_temperature_jump_k: f64,
    /// Heat flow from the a side to the b side, W/m: Σ over edges of (L/R)·(j₀ + j₁)/2, j the
    /// nodal jumps T_a − T_b (the row sums of the interface elements' a rows).
    pub heat_flow_a_to_b_w_per_m: f64,
}

/// One result per contact of `section`, in file order, from nodal temperatures `t`.
pub fn contact_flows(section: &Section, mesh: &Mesh, t: &[f64]) -> Vec<ContactFlow> {
    section
        .contacts
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let (mut length, mut jump_integral, mut flow) = (0.0, 0.0, 0.0);
            for e in mesh.interfaces.iter().filter(|e| e.contact == i) {
                let j0 = t[e.a[0]] - t[e.b[0]];
                let j1 = t[e.a[1]] - t[e.b[1]];
                length += e.length;
                jump_integral += e.length * 0.5 * (j0 + j1);
                flow += e.conductance * e.length * 0.5 * (j0 + j1);
            }
            ContactFlow {
                between: [
                    section.materials[c.a].name.clone(),
                    section.materials[c.b].name.clone(),
                ],
                resistance_m2k_per_w: c.resistance,
                interface_length_m: length,
                mean_temperature_jump_k: if length > 0.0 {
                    jump_integral / length
                } else {
                    0.0
                },
                heat_flow_a_to_b_w_per_m: flow,
            }
        })
        .collect()
}
