//! Files of the flow results beyond the per-boundary table: `cuts.csv`, `items.csv`,
//! `materials.csv`, and `boundary.vtp` (the boundary edges as VTK PolyData lines).

use super::csv::csv_bytes;
use super::vtk::{VtkArray, VtkOptions, VtkValues, VtpLines, encode_vtp_lines, id_values};
use crate::error::{Error, Result};
use crate::mesh::{Mesh, RingRef};
use crate::model::{BoundaryKind, Section};
use crate::post::Results;
use crate::text::format_f64;

/// `name,length_m,inside_length_m,heat_flow_w_per_m` — one row per cut in file order; heat
/// flow per metre of depth, positive from the right of the cut's direction of travel to its
/// left.
pub fn cuts_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        ["name", "length_m", "inside_length_m", "heat_flow_w_per_m"],
        results.cuts.iter().map(|c| {
            [
                c.name.clone(),
                format_f64(c.length),
                format_f64(c.inside_length),
                format_f64(c.heat_flow),
            ]
        }),
    )
}

/// `item,ring,segments,boundary,kind,length_m,heat_flow_w_per_m,mean_temperature_c,
/// min_temperature_c,max_temperature_c` — one row per hole and per run of ring segments with
/// one boundary name; heat flow positive into the section.
pub fn items_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "item",
            "ring",
            "segments",
            "boundary",
            "kind",
            "length_m",
            "heat_flow_w_per_m",
            "mean_temperature_c",
            "min_temperature_c",
            "max_temperature_c",
        ],
        results.items.iter().map(|i| {
            let b = &i.result;
            [
                i.item.clone(),
                i.ring.clone(),
                i.segments.clone(),
                b.name.clone(),
                b.kind.to_string(),
                format_f64(b.length),
                format_f64(b.heat_flow),
                format_f64(b.mean_temperature),
                format_f64(b.min_temperature),
                format_f64(b.max_temperature),
            ]
        }),
    )
}

/// `material,id,area_m2,heat_generated_w_per_m,mean_temperature_c,min_temperature_c,
/// max_temperature_c` — one row per material on the mesh, in id order.
pub fn materials_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "material",
            "id",
            "area_m2",
            "heat_generated_w_per_m",
            "mean_temperature_c",
            "min_temperature_c",
            "max_temperature_c",
        ],
        results.materials.iter().map(|m| {
            [
                m.name.clone(),
                m.id.to_string(),
                format_f64(m.area),
                format_f64(m.heat_generated),
                format_f64(m.mean_temperature),
                format_f64(m.min_temperature),
                format_f64(m.max_temperature),
            ]
        }),
    )
}

/// The normal heat flux into the section through boundary edge `e`, W/m²: the condition's own
/// value on flux, convection (h·(T_ambient − mean edge temperature)) and insulated edges; on
/// fixed edges the flux of the adjacent triangle, q·n with n the inward normal.
fn edge_normal_flux(section: &Section, mesh: &Mesh, results: &Results, e: usize) -> f64 {
    let edge = &mesh.boundary_edges[e];
    let [a, b] = edge.nodes;
    let (ta, tb) = (results.temperature[a], results.temperature[b]);
    let mean = 0.5 * (ta + tb);
    let radiated = edge
        .boundary
        .and_then(|id| section.radiation(id))
        .map_or(0.0, |r| {
            crate::fem::nonlinear::radiation_edge(&r, ta, tb).mean_flux
        });
    match edge.boundary.map(|id| section.boundaries[id].kind) {
        None | Some(BoundaryKind::Insulated) => 0.0,
        Some(BoundaryKind::Flux { flux }) => flux,
        Some(BoundaryKind::Radiation { .. }) => radiated,
        Some(BoundaryKind::Convection { h, ambient }) => h * (ambient - mean) + radiated,
        Some(BoundaryKind::Fixed { .. }) => {
            let (pa, pb) = (mesh.nodes[a], mesh.nodes[b]);
            let l = crate::geom::distance(pa, pb);
            // The section lies to the left of a → b: the inward normal is the left normal.
            let n = [-(pb[1] - pa[1]) / l, (pb[0] - pa[0]) / l];
            let q = results.cell_flux[edge.triangle];
            q[0] * n[0] + q[1] * n[1]
        }
    }
}

/// The boundary edges as VTK XML PolyData (`boundary.vtp`): points are the boundary nodes
/// (x, y, 0) in order of first use, one line cell per boundary edge in mesh order, oriented
/// with the section on its left. Point data `temperature_c`. Cell data `boundary_id` (Int32,
/// the boundary's id, −1 for unnamed segments), `ring_id` (Int32, 0 outline, i + 1 for
/// `holes[i]`), `segment` (Int32, the ring segment as written), `heat_flux_normal_w_per_m2`
/// (into the section, see `edge_normal_flux`), `temperature_c` (mean of the edge's two
/// nodes) and `length_m`. Field data: one Int32 array per boundary name holding its id, and
/// `(unnamed)` holding −1 when unnamed segments exist.
pub fn boundary_vtp(
    section: &Section,
    mesh: &Mesh,
    results: &Results,
    options: &VtkOptions,
) -> Result<Vec<u8>> {
    mesh.check_consistency()?;
    results.check_lengths(mesh)?;
    let mut local = vec![usize::MAX; mesh.nodes.len()];
    let mut points = Vec::new();
    let mut point_t = Vec::new();
    let mut connectivity = Vec::with_capacity(2 * mesh.boundary_edges.len());
    for e in &mesh.boundary_edges {
        for v in e.nodes {
            if local[v] == usize::MAX {
                local[v] = point_t.len();
                let p = mesh.nodes[v];
                points.extend_from_slice(&[p[0], p[1], 0.0]);
                point_t.push(results.temperature[v]);
            }
            connectivity.push(local[v] as i64);
        }
    }
    let n = mesh.boundary_edges.len();
    let as_i32 = |v: usize, what: &str| {
        i32::try_from(v).map_err(|_| Error::run(format!("internal: {what} {v} does not fit Int32")))
    };
    let mut boundary_id = Vec::with_capacity(n);
    let mut ring_id = Vec::with_capacity(n);
    let mut segment = Vec::with_capacity(n);
    for e in &mesh.boundary_edges {
        boundary_id.push(match e.boundary {
            Some(b) => as_i32(b, "boundary id")?,
            None => -1,
        });
        ring_id.push(match e.ring {
            RingRef::Outline => 0,
            RingRef::Hole(h) => as_i32(h + 1, "ring id")?,
        });
        let ring = match e.ring {
            RingRef::Outline => &section.outline,
            RingRef::Hole(h) => &section.holes[h],
        };
        let written = ring
            .written_segment
            .get(e.segment)
            .copied()
            .unwrap_or(e.segment);
        segment.push(as_i32(written, "segment")?);
    }
    let flux: Vec<f64> = (0..n)
        .map(|e| edge_normal_flux(section, mesh, results, e))
        .collect();
    let edge_t: Vec<f64> = mesh
        .boundary_edges
        .iter()
        .map(|e| 0.5 * (results.temperature[e.nodes[0]] + results.temperature[e.nodes[1]]))
        .collect();
    let length: Vec<f64> = mesh
        .boundary_edges
        .iter()
        .map(|e| mesh.edge_length(e))
        .collect();
    let ids = id_values(section.boundaries.len())?;
    let unnamed = [-1i32];
    let mut field: Vec<VtkArray> = section
        .boundaries
        .iter()
        .zip(&ids)
        .map(|(b, id)| VtkArray {
            name: &b.name,
            components: 1,
            values: VtkValues::I32(std::slice::from_ref(id)),
        })
        .collect();
    if boundary_id.contains(&-1) {
        field.push(VtkArray {
            name: crate::post::flows::UNNAMED,
            components: 1,
            values: VtkValues::I32(&unnamed),
        });
    }
    encode_vtp_lines(
        &VtpLines {
            points: &points,
            connectivity: &connectivity,
            point_data: vec![VtkArray::scalars("temperature_c", &point_t)],
            cell_data: vec![
                int_array("boundary_id", &boundary_id),
                int_array("ring_id", &ring_id),
                int_array("segment", &segment),
                VtkArray::scalars("heat_flux_normal_w_per_m2", &flux),
                VtkArray::scalars("temperature_c", &edge_t),
                VtkArray::scalars("length_m", &length),
            ],
            field_data: field,
        },
        options,
    )
}

/// A scalar Int32 array.
fn int_array<'a>(name: &'a str, values: &'a [i32]) -> VtkArray<'a> {
    VtkArray {
        name,
        components: 1,
        values: VtkValues::I32(values),
    }
}
