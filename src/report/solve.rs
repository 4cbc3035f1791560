//! Console text of `xsheat solve`: mesh, temperatures, heat flows, probes, lines (cuts, items,
//! materials and coupling results from `results.rs`), the
//! Zienkiewicz–Zhu estimate, adaptive cycles, self-checks and warnings.

use super::{fixed, mesh_report, point, push_table, sci, sig3, table};
use crate::output::ERROR_ESTIMATE_METHOD;
use crate::post::Results;
use crate::run::{Check, CheckStatus, Cycle, Solved};
use std::fmt::Write;

fn temperature_line(o: &mut String, r: &Results) {
    let _ = writeln!(
        o,
        "temperature: min {} °C at {}, max {} °C at {}",
        fixed(r.t_min.value, 4),
        point(r.t_min.at, 6),
        fixed(r.t_max.value, 4),
        point(r.t_max.at, 6)
    );
}

fn boundaries_table(o: &mut String, r: &Results) {
    let _ = writeln!(
        o,
        "heat flow per boundary (W per metre of depth, positive into the section):"
    );
    let mut t = table(
        &[
            "boundary",
            "kind",
            "length m",
            "heat flow W/m",
            "mean °C",
            "min °C",
            "max °C",
        ],
        "llrrrrr",
    );
    for b in &r.boundaries {
        t.add_row(vec![
            b.name.clone(),
            b.kind.as_str().to_string(),
            fixed(b.length, 6),
            fixed(b.heat_flow, 6),
            fixed(b.mean_temperature, 4),
            fixed(b.min_temperature, 4),
            fixed(b.max_temperature, 4),
        ]);
    }
    t.add_row(vec![
        if r.point_sources.is_empty() {
            "heat source".to_string()
        } else {
            "heat source (incl. point sources)".to_string()
        },
        String::new(),
        String::new(),
        fixed(r.heat_source, 6),
    ]);
    push_table(o, &t, 1);
    let _ = writeln!(
        o,
        "energy imbalance {} W/m (relative {})",
        sci(r.energy_imbalance, 3),
        sci(r.energy_imbalance_relative, 3)
    );
}

fn point_sources_table(o: &mut String, r: &Results) {
    if r.point_sources.is_empty() {
        return;
    }
    let _ = writeln!(
        o,
        "point sources (the temperature at a source's node depends on the mesh; use probes off it):"
    );
    let mut t = table(
        &["point source", "x m", "y m", "power W/m", "node °C"],
        "lrrrr",
    );
    for p in &r.point_sources {
        t.add_row(vec![
            p.name.clone(),
            fixed(p.at[0], 6),
            fixed(p.at[1], 6),
            fixed(p.power, 6),
            fixed(p.temperature, 4),
        ]);
    }
    push_table(o, &t, 1);
}

/// One row per `[[contacts]]` entry: interface length, resistance, mean jump, heat flow.
fn contacts_table(o: &mut String, sv: &Solved) {
    let s = sv.section();
    if s.contacts.is_empty() {
        return;
    }
    let flows = crate::post::contacts::contact_flows(s, &sv.mesh, &sv.results.temperature);
    let _ = writeln!(
        o,
        "contacts (zero-thickness interfaces; jump = T_a − T_b, flow from a to b):"
    );
    let mut t = table(
        &[
            "contact a/b",
            "length m",
            "R m²·K/W",
            "mean jump K",
            "heat flow W/m",
        ],
        "lrrrr",
    );
    for c in &flows {
        t.add_row(vec![
            format!("{}/{}", c.between[0], c.between[1]),
            fixed(c.interface_length_m, 6),
            sci(c.resistance_m2k_per_w, 4),
            fixed(c.mean_temperature_jump_k, 4),
            fixed(c.heat_flow_a_to_b_w_per_m, 6),
        ]);
    }
    push_table(o, &t, 1);
}

fn probes_and_lines(o: &mut String, r: &Results) {
    point_sources_table(o, r);
    if !r.probes.is_empty() {
        let _ = writeln!(o, "probes:");
        let mut t = table(&["probe", "x m", "y m", "temperature °C", ""], "lrrrl");
        for p in &r.probes {
            t.add_row(vec![
                p.name.clone(),
                fixed(p.x, 6),
                fixed(p.y, 6),
                fixed(p.temperature, 6),
                if p.snapped {
                    "taken at the nearest boundary point".to_string()
                } else {
                    String::new()
                },
            ]);
        }
        push_table(o, &t, 1);
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
}

fn adaptivity_table(o: &mut String, cycles: &[Cycle]) {
    if cycles.is_empty() {
        return;
    }
    let _ = writeln!(o, "adaptive refinement:");
    let estimate = format!("{ERROR_ESTIMATE_METHOD} estimate");
    let mut t = table(&["cycle", "triangles", "nodes", &estimate], "rrrr");
    for c in cycles {
        t.add_row(vec![
            c.cycle.to_string(),
            c.triangles.to_string(),
            c.nodes.to_string(),
            sig3(c.relative_error),
        ]);
    }
    push_table(o, &t, 1);
}

fn checks_table(o: &mut String, checks: &[Check]) {
    let _ = writeln!(o, "self-checks:");
    let mut t = table(&["check", "result", "detail"], "lll");
    for c in checks {
        let result = match c.status() {
            CheckStatus::Passed => "pass",
            CheckStatus::Failed => "FAIL",
            CheckStatus::Warning => "WARN",
        };
        t.add_row(vec![c.name.clone(), result.to_string(), c.detail.clone()]);
    }
    push_table(o, &t, 1);
}

/// The nonlinear iteration: method, factorisation, stopping tolerance and one line per update.
fn nonlinear_lines(o: &mut String, n: &crate::solve::nonlinear::Outcome) {
    let _ = writeln!(
        o,
        "nonlinear iteration ({}, sparse {}): {} updates, stopped at |ΔT|max <= {} K",
        n.method.name(),
        if n.factorisation == "lu" {
            "LU"
        } else {
            "Cholesky"
        },
        n.history.len(),
        sci(n.tolerance_k, 3)
    );
    for line in crate::solve::nonlinear::history_lines(&n.history) {
        let _ = writeln!(o, "{line}");
    }
}

/// The solve summary: what `xsheat solve` prints (results only; the caller prints the caution).
pub fn solve_report(sv: &Solved) -> String {
    let s = sv.section();
    let r = &sv.results;
    let mut o = String::new();
    let _ = writeln!(o, "xsheat {} — {}", crate::VERSION, s.title);
    o.push_str(&mesh_report(s, &sv.mesh));
    temperature_line(&mut o, r);
    boundaries_table(&mut o, r);
    probes_and_lines(&mut o, r);
    super::results::flows_tables(&mut o, r);
    contacts_table(&mut o, sv);
    if let Some(c) = &sv.coupling {
        super::results::coupling_tables(&mut o, c);
    }
    let _ = writeln!(
        o,
        "{ERROR_ESTIMATE_METHOD} estimate: {} (estimated error {} (W·K/m)^½)",
        sig3(sv.error_estimate.relative),
        sci(sv.error_estimate.energy_norm, 3)
    );
    adaptivity_table(&mut o, &sv.adaptivity);
    if let Some(n) = &sv.nonlinear {
        nonlinear_lines(&mut o, n);
    }
    if let Some(v) = sv
        .solver
        .filter(|v| v.used == crate::solve::SolverChoice::Amg)
    {
        let _ = writeln!(
            o,
            "solver: smoothed aggregation AMG preconditioned conjugate gradient, {} unknowns, {} iterations",
            v.unknowns, v.iterations
        );
    }
    checks_table(&mut o, &sv.checks);
    o
}
