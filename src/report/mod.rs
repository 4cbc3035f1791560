//! Text reports printed by the command-line tool: what a model holds (`check`), mesh quality
//! (`mesh`) and the solve summary table with the engineering caution (`solve`).

use crate::CAUTION;
use crate::mesh::{self, Mesh};
use crate::model::{BoundaryKind, Ring, Section};
use crate::run::{CheckStatus, Prepared, Solved};
use std::fmt::Write;

fn ring_line(r: &Ring) -> String {
    match &r.circle {
        Some(c) => format!(
            "circle centre ({}, {}) radius {} m as {} segments (sagitta {:.3e} m)",
            c.center[0],
            c.center[1],
            c.radius,
            c.segments,
            c.sagitta()
        ),
        None => format!("polygon of {} points", r.len()),
    }
}

fn kind_line(k: &BoundaryKind) -> String {
    match k {
        BoundaryKind::Fixed { temperature } => format!("fixed, T = {temperature} °C"),
        BoundaryKind::Insulated => "insulated".to_string(),
        BoundaryKind::Flux { flux } => format!("flux, q = {flux} W/m² (into the section)"),
        BoundaryKind::Convection { h, ambient } => {
            format!("convection, h = {h} W/(m²·K), ambient {ambient} °C")
        }
    }
}

fn seg_len(r: &Ring, i: usize) -> f64 {
    let (a, b) = r.segment(i);
    ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt()
}

/// What a validated model holds.
pub fn check_report(p: &Prepared, mesh: &Mesh) -> String {
    let s = &p.section;
    let mut o = String::new();
    let _ = writeln!(o, "model: {}", s.title);
    let area = mesh::section_area(s);
    let _ = writeln!(
        o,
        "section: area {area:.6} m², bounding-box diagonal {:.6} m",
        s.diameter()
    );
    let _ = writeln!(
        o,
        "mesh settings: max_area {:.6e} m²{}, min_angle {}°, about {:.0} triangles expected",
        s.mesh.max_area,
        if s.mesh.max_area_is_default {
            " (default: section area / 4000)"
        } else {
            ""
        },
        s.mesh.min_angle,
        mesh::estimate_triangles(area, s.mesh.max_area)
    );
    let _ = writeln!(
        o,
        "materials (id, name, conductivity W/(m·K), heat source W/m³):"
    );
    for m in &s.materials {
        let _ = writeln!(
            o,
            "  {:>3}  {:<20} {:>10}  {}",
            m.id, m.name, m.conductivity, m.heat_source
        );
    }
    let _ = writeln!(
        o,
        "outline: {} ({}), material {}",
        ring_line(&s.outline),
        s.outline.label,
        s.materials[s.outline_material].name
    );
    for r in &s.regions {
        let _ = writeln!(
            o,
            "{}: {}, material {}",
            r.ring.label,
            ring_line(&r.ring),
            s.materials[r.material].name
        );
    }
    for h in &s.holes {
        let _ = writeln!(o, "{}: {}", h.label, ring_line(h));
    }
    let _ = writeln!(
        o,
        "boundaries (name, condition, length on the rings as written):"
    );
    for (id, b) in s.boundaries.iter().enumerate() {
        let len: f64 = std::iter::once(&s.outline)
            .chain(s.holes.iter())
            .map(|r| {
                (0..r.len())
                    .filter(|&i| r.edge_boundary[i] == Some(id))
                    .map(|i| seg_len(r, i))
                    .sum::<f64>()
            })
            .sum();
        let _ = writeln!(o, "  {:<20} {:<55} {len:.6} m", b.name, kind_line(&b.kind));
    }
    for pr in &s.probes {
        let _ = writeln!(o, "probe {}: ({}, {})", pr.name, pr.at[0], pr.at[1]);
    }
    for l in &s.lines {
        let _ = writeln!(
            o,
            "line {}: ({}, {}) → ({}, {}), {} samples",
            l.name, l.from[0], l.from[1], l.to[0], l.to[1], l.samples
        );
    }
    let _ = writeln!(
        o,
        "segment set: {} vertices, {} constraint segments; unrefined triangulation has {} triangles",
        p.pslg.vertices.len(),
        p.pslg.pieces.len(),
        mesh.stats.triangles
    );
    o
}

/// Mesh counts and quality.
pub fn mesh_report(s: &Section, m: &Mesh) -> String {
    let st = &m.stats;
    let mut o = String::new();
    let _ = writeln!(
        o,
        "mesh: {} nodes, {} triangles, {} boundary edges",
        st.nodes, st.triangles, st.boundary_edges
    );
    let _ = writeln!(
        o,
        "min angle {:.3}° (limit {}°), worst triangle {} at ({:.6}, {:.6})",
        st.min_angle_deg,
        s.mesh.min_angle,
        st.worst_triangle,
        st.worst_triangle_centroid[0],
        st.worst_triangle_centroid[1]
    );
    let _ = writeln!(
        o,
        "triangle area {:.6e} .. {:.6e} m² (limit {:.6e} m²{}), meshed area {:.6} m²",
        st.min_area,
        st.max_area,
        s.mesh.max_area,
        if s.mesh.max_area_is_default {
            ", default"
        } else {
            ""
        },
        st.area
    );
    if !st.small_input_angles.is_empty() {
        let _ = writeln!(
            o,
            "input angles below {}° (2 × min_angle; the angle limit may not hold next to them): {}",
            crate::mesh::SMALL_INPUT_ANGLE_FACTOR * s.mesh.min_angle,
            st.small_input_angles.len()
        );
        for a in &st.small_input_angles {
            let _ = writeln!(
                o,
                "  {:.3}° at ({:.6}, {:.6}), triangles within {:.4e} m count as next to it",
                a.angle_deg, a.at[0], a.at[1], a.radius
            );
        }
        let _ = writeln!(
            o,
            "min angle away from them {:.3}°",
            st.min_angle_away_from_small_input_angles_deg
        );
    }
    o
}

/// Warnings block.
pub fn warnings_report(w: &[String]) -> String {
    let mut o = String::new();
    if !w.is_empty() {
        let _ = writeln!(o, "warnings:");
        for x in w {
            let _ = writeln!(o, "  - {x}");
        }
    }
    o
}

/// The solve summary table.
pub fn solve_report(sv: &Solved) -> String {
    let s = sv.section();
    let r = &sv.results;
    let mut o = String::new();
    let _ = writeln!(o, "xsheat {} — {}", crate::VERSION, s.title);
    o.push_str(&mesh_report(s, &sv.mesh));
    let _ = writeln!(
        o,
        "temperature: min {:.4} °C at ({:.6}, {:.6}), max {:.4} °C at ({:.6}, {:.6})",
        r.t_min.value, r.t_min.at[0], r.t_min.at[1], r.t_max.value, r.t_max.at[0], r.t_max.at[1]
    );
    let _ = writeln!(
        o,
        "heat flow per boundary (W per metre of depth, positive into the section):"
    );
    let _ = writeln!(
        o,
        "  {:<20} {:<11} {:>12} {:>16} {:>10} {:>10} {:>10}",
        "boundary", "kind", "length_m", "heat_flow_w_per_m", "mean_c", "min_c", "max_c"
    );
    for b in &r.boundaries {
        let _ = writeln!(
            o,
            "  {:<20} {:<11} {:>12.6} {:>16.6} {:>10.4} {:>10.4} {:>10.4}",
            b.name,
            b.kind,
            b.length,
            b.heat_flow,
            b.mean_temperature,
            b.min_temperature,
            b.max_temperature
        );
    }
    let _ = writeln!(
        o,
        "  {:<20} {:<11} {:>12} {:>16.6}",
        "heat source", "", "", r.heat_source
    );
    let _ = writeln!(
        o,
        "  energy imbalance {:.3e} W/m (relative {:.3e})",
        r.energy_imbalance, r.energy_imbalance_relative
    );
    if !r.probes.is_empty() {
        let _ = writeln!(o, "probes:");
        for p in &r.probes {
            let _ = writeln!(
                o,
                "  {:<20} ({:.6}, {:.6}) {:>12.6} °C{}",
                p.name,
                p.x,
                p.y,
                p.temperature,
                if p.snapped {
                    "  (taken at the nearest boundary point)"
                } else {
                    ""
                }
            );
        }
    }
    for l in &r.lines {
        let _ = writeln!(
            o,
            "line {}: {} samples inside, {} skipped",
            l.name,
            l.samples.len(),
            l.skipped.len()
        );
    }
    let e = &sv.error_estimate;
    let _ = writeln!(
        o,
        "error estimate (Zienkiewicz–Zhu, energy norm): {:.3e} (W·K/m)^½, relative {:.3} %",
        e.energy_norm,
        100.0 * e.relative
    );
    if !sv.adaptivity.is_empty() {
        let _ = writeln!(o, "adaptive refinement:");
        let _ = writeln!(
            o,
            "  {:>5} {:>10} {:>10} {:>16}",
            "cycle", "triangles", "nodes", "relative_error_%"
        );
        for c in &sv.adaptivity {
            let _ = writeln!(
                o,
                "  {:>5} {:>10} {:>10} {:>16.4}",
                c.cycle,
                c.triangles,
                c.nodes,
                100.0 * c.relative_error
            );
        }
    }
    let _ = writeln!(o, "self-checks:");
    for c in &sv.checks {
        let _ = writeln!(
            o,
            "  {:<18} {} ({})",
            c.name,
            match c.status() {
                CheckStatus::Passed => "pass",
                CheckStatus::Failed => "FAIL",
                CheckStatus::Warning => "WARN",
            },
            c.detail
        );
    }
    let _ = writeln!(o, "CAUTION: {CAUTION}");
    o
}

mod converge;
pub use converge::*;
mod crosscheck;
pub use crosscheck::*;
mod verify;
pub use verify::*;
