//! Console text of `xsheat check` (what a validated model holds) and `xsheat mesh` (mesh counts
//! and quality).

use super::{fixed, push_table, sci, table};
use crate::mesh::{self, Mesh};
use crate::model::{BoundaryKind, Ring, Section};
use crate::run::{ModelCheck, Prepared};
use std::fmt::Write;

fn ring_line(r: &Ring) -> String {
    match &r.circle {
        Some(c) => format!(
            "circle centre ({}, {}) radius {} m as {} segments (sagitta {} m)",
            c.center[0],
            c.center[1],
            c.radius,
            c.segments,
            sci(c.sagitta(), 3)
        ),
        None => {
            let mut line = format!("polygon of {} points", r.len());
            for a in &r.arcs {
                let _ = write!(
                    line,
                    "; arc (segment {}) centre ({}, {}) radius {} m over {}° as {} chords (sagitta {} m)",
                    a.written_segment,
                    a.center[0],
                    a.center[1],
                    a.radius,
                    fixed(a.angle_deg, 3),
                    a.segments,
                    sci(a.sagitta(), 3)
                );
            }
            line
        }
    }
}

fn kind_line(k: &BoundaryKind, resistance: Option<f64>) -> String {
    if let (BoundaryKind::Convection { h, ambient }, Some(r)) = (k, resistance) {
        return format!(
            "convection, R_s = {r} m²·K/W (h = {} W/(m²·K)), ambient {ambient} °C",
            crate::text::sig3(*h)
        );
    }
    match k {
        BoundaryKind::Fixed { temperature } => format!("fixed, T = {temperature} °C"),
        BoundaryKind::Insulated => "insulated".to_string(),
        BoundaryKind::Flux { flux } => format!("flux, q = {flux} W/m² (into the section)"),
        BoundaryKind::Convection { h, ambient } => {
            format!("convection, h = {h} W/(m²·K), ambient {ambient} °C")
        }
        BoundaryKind::Radiation {
            emissivity,
            surroundings,
        } => format!("radiation, emissivity {emissivity}, surroundings {surroundings} °C"),
    }
}

/// [`kind_line`] of boundary `id` with its radiation when a convective surface also radiates.
fn boundary_line(s: &Section, id: usize) -> String {
    let b = &s.boundaries[id];
    match (b.kind, s.radiation(id)) {
        (BoundaryKind::Convection { .. }, Some(r)) => format!(
            "{}; radiation, emissivity {}, surroundings {} °C",
            kind_line(&b.kind, b.resistance),
            r.emissivity,
            r.surroundings
        ),
        _ => match &b.field {
            // the number in the kind is the field's value at its reference; say it varies
            Some(f) => format!(
                "{} (varies: {})",
                kind_line(&b.kind, b.resistance),
                f.describe("°C")
            ),
            None => kind_line(&b.kind, b.resistance),
        },
    }
}

fn seg_len(r: &Ring, i: usize) -> f64 {
    let (a, b) = r.segment(i);
    crate::geom::distance(a, b)
}

/// Length of boundary `id` on the outline and the holes, as written.
fn boundary_length(s: &Section, id: usize) -> f64 {
    std::iter::once(&s.outline)
        .chain(s.holes.iter())
        .map(|r| {
            (0..r.len())
                .filter(|&i| r.edge_boundary[i] == Some(id))
                .map(|i| seg_len(r, i))
                .sum::<f64>()
        })
        .sum()
}

fn section_lines(o: &mut String, p: &Prepared, estimated_triangles: f64) {
    let s = &p.section;
    let area = mesh::section_area(s);
    let _ = writeln!(
        o,
        "section: area {} m², bounding-box diagonal {} m{}",
        fixed(area, 6),
        fixed(s.diameter(), 6),
        match p.model.length_unit.as_deref() {
            Some(u) if u != "m" => format!(" (model lengths in {u}, converted to m)"),
            _ => String::new(),
        }
    );
    let _ = writeln!(
        o,
        "mesh settings: max_area {} m²{}, min_angle {}°, about {:.0} triangles expected (area limits, ring points and boundary sizes)",
        sci(s.mesh.max_area, 6),
        if s.mesh.max_area_is_default {
            " (default: section area / 4000)"
        } else {
            ""
        },
        s.mesh.min_angle,
        estimated_triangles
    );
}

fn materials_table(o: &mut String, s: &Section) {
    let _ = writeln!(o, "materials:");
    let mut t = table(
        &["id", "name", "conductivity W/(m·K)", "heat source W/m³"],
        "rlrr",
    );
    for m in &s.materials {
        t.add_row(vec![
            m.id.to_string(),
            m.name.clone(),
            match s.conductivity_table(m.id) {
                Some(t) => format!(
                    "table (°C → k): {}",
                    t.points
                        .iter()
                        .map(|p| format!("{} → {}", p[0], p[1]))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                None => m.conductivity.to_string(),
            },
            match m.source_field {
                Some(f) => crate::model::Field::Linear(f).describe("W/m³"),
                None => m.heat_source.to_string(),
            },
        ]);
    }
    push_table(o, &t, 1);
}

fn rings_lines(o: &mut String, s: &Section) {
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
}

fn boundaries_table(o: &mut String, s: &Section) {
    let _ = writeln!(o, "boundaries (length on the rings as written):");
    let mut t = table(&["name", "condition", "length m"], "llr");
    for (id, b) in s.boundaries.iter().enumerate() {
        t.add_row(vec![
            b.name.clone(),
            boundary_line(s, id),
            fixed(boundary_length(s, id), 6),
        ]);
    }
    push_table(o, &t, 1);
}

/// What a validated model holds: section, mesh settings, materials, rings, boundaries, probes,
/// lines and the segment set (`checked.coarse` is the unrefined triangulation).
pub fn check_report(p: &Prepared, checked: &ModelCheck) -> String {
    let s = &p.section;
    let mesh = &checked.coarse;
    let mut o = String::new();
    let _ = writeln!(o, "model: {}", s.title);
    section_lines(&mut o, p, checked.estimated_triangles);
    materials_table(&mut o, s);
    rings_lines(&mut o, s);
    boundaries_table(&mut o, s);
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
    for c in &s.contacts {
        let _ = writeln!(
            o,
            "contact {}: resistance {} m²·K/W on every edge where the two materials meet",
            c.label(&s.materials),
            sci(c.resistance, 4)
        );
    }
    cases_lines(&mut o, s);
    let _ = writeln!(
        o,
        "segment set: {} vertices, {} constraint segments; unrefined triangulation has {} triangles",
        p.pslg.vertices.len(),
        p.pslg.pieces.len(),
        mesh.stats.triangles
    );
    o
}

/// One line per load case: the values it sets and whether it reuses the base factorisation.
fn cases_lines(o: &mut String, s: &Section) {
    for (i, c) in s.cases.iter().enumerate() {
        let mut parts: Vec<String> = c
            .boundaries
            .iter()
            .map(|b| {
                format!(
                    "{}: {}",
                    s.boundaries[b.id].name,
                    kind_line(&b.kind, b.resistance)
                )
            })
            .collect();
        parts.extend(c.materials.iter().map(|m| {
            format!(
                "{}: k = {} W/(m·K), Q = {} W/m³",
                s.materials[m.id].name, m.conductivity, m.heat_source
            )
        }));
        let how = if s.case_changes_matrix(i) {
            "refactorises (h or a conductivity changes)"
        } else {
            "reuses the base factorisation"
        };
        let what = if parts.is_empty() {
            "no changes".to_string()
        } else {
            parts.join("; ")
        };
        let _ = writeln!(o, "case {}: {what}; {how}", c.name);
    }
}

fn small_angle_lines(o: &mut String, s: &Section, m: &Mesh) {
    let st = &m.stats;
    if st.small_input_angles.is_empty() {
        return;
    }
    let _ = writeln!(
        o,
        "input angles below {}° (2 × min_angle; the angle limit may not hold next to them): {}",
        crate::mesh::SMALL_INPUT_ANGLE_FACTOR * s.mesh.min_angle,
        st.small_input_angles.len()
    );
    for a in &st.small_input_angles {
        let _ = writeln!(
            o,
            "  {}° at {}, triangles within {} m count as next to it",
            fixed(a.angle_deg, 3),
            super::point(a.at, 6),
            sci(a.radius, 4)
        );
    }
    let _ = writeln!(
        o,
        "min angle away from them {}°",
        fixed(st.min_angle_away_from_small_input_angles_deg, 3)
    );
}

/// Mesh counts and quality: nodes, triangles, smallest angle and where, triangle areas, and
/// the small input angles the angle limit cannot hold next to.
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
        "min angle {}° (limit {}°), worst triangle {} at {}",
        fixed(st.min_angle_deg, 3),
        s.mesh.min_angle,
        st.worst_triangle,
        super::point(st.worst_triangle_centroid, 6)
    );
    let _ = writeln!(
        o,
        "triangle area {} .. {} m² (limit {} m²{}), meshed area {} m²",
        sci(st.min_area, 6),
        sci(st.max_area, 6),
        sci(s.mesh.max_area, 6),
        if s.mesh.max_area_is_default {
            ", default"
        } else {
            ""
        },
        fixed(st.area, 6)
    );
    small_angle_lines(&mut o, s, m);
    o
}
