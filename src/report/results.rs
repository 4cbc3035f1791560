//! Console tables of `xsheat solve` beyond the per-boundary flows: heat flow across cuts, per
//! item (when boundary names are shared), per material, and the coupling coefficients, ψ and
//! temperature factors of declared environments.

use super::{fixed, point, push_table, table};
use crate::post::Results;
use crate::run::coupling::Coupling;
use std::fmt::Write;

/// Cuts, items and materials.
pub(super) fn flows_tables(o: &mut String, r: &Results) {
    if !r.cuts.is_empty() {
        let _ = writeln!(
            o,
            "heat flow across cuts (W/m, positive from the right of the direction of travel to the left):"
        );
        let mut t = table(
            &["cut", "length m", "inside m", "skipped m", "heat flow W/m"],
            "lrrrr",
        );
        for c in &r.cuts {
            t.add_row(vec![
                c.name.clone(),
                fixed(c.length, 6),
                fixed(c.inside_length, 6),
                fixed(c.skipped_length(), 6),
                fixed(c.heat_flow, 6),
            ]);
        }
        push_table(o, &t, 1);
    }
    let shared = r
        .items
        .iter()
        .enumerate()
        .any(|(i, a)| r.items[..i].iter().any(|b| b.result.name == a.result.name));
    if shared {
        let _ = writeln!(
            o,
            "heat flow per item (boundary names shared by several holes or runs of edges):"
        );
        let mut t = table(&["item", "boundary", "length m", "heat flow W/m"], "llrr");
        for i in &r.items {
            t.add_row(vec![
                i.item.clone(),
                i.result.name.clone(),
                fixed(i.result.length, 6),
                fixed(i.result.heat_flow, 6),
            ]);
        }
        push_table(o, &t, 1);
    }
    if r.materials.len() > 1 || r.materials.iter().any(|m| m.heat_generated != 0.0) {
        let _ = writeln!(o, "materials:");
        let mut t = table(
            &[
                "material",
                "area m²",
                "generated W/m",
                "mean °C",
                "min °C",
                "max °C",
            ],
            "lrrrrr",
        );
        for m in &r.materials {
            t.add_row(vec![
                m.name.clone(),
                fixed(m.area, 6),
                fixed(m.heat_generated, 6),
                fixed(m.mean_temperature, 4),
                fixed(m.min_temperature, 4),
                fixed(m.max_temperature, 4),
            ]);
        }
        push_table(o, &t, 1);
    }
}

/// Coupling coefficients, ψ and temperature factors.
pub(super) fn coupling_tables(o: &mut String, c: &Coupling) {
    let _ = writeln!(
        o,
        "thermal coupling coefficients L2D (W/(m·K), ISO 10211; from unit solves):"
    );
    let mut t = table(&["between", "and", "L2D W/(m·K)", "reciprocal"], "llrr");
    for p in &c.pairs {
        t.add_row(vec![
            p.between[0].clone(),
            p.between[1].clone(),
            fixed(p.value, 6),
            fixed(p.reciprocal, 6),
        ]);
    }
    push_table(o, &t, 1);
    if !c.psi.is_empty() {
        let _ = writeln!(
            o,
            "linear thermal transmittance ψ = L2D − Σ U·l (W/(m·K), ISO 10211):"
        );
        let mut t = table(
            &["junction", "coupling", "L2D", "Σ U·l", "ψ W/(m·K)"],
            "llrrr",
        );
        for p in &c.psi {
            t.add_row(vec![
                p.name.clone(),
                format!("{} – {}", p.coupling[0], p.coupling[1]),
                fixed(p.l2d, 6),
                fixed(p.reference, 6),
                fixed(p.psi, 6),
            ]);
        }
        push_table(o, &t, 1);
    }
    if !c.temperature_factors.is_empty() {
        let limit = c
            .f_rsi_min
            .map(|m| format!(", lowest acceptable {}", fixed(m, 3)))
            .unwrap_or_default();
        let _ = writeln!(
            o,
            "temperature factors f_Rsi = (θ_s − θ_e)/(θ_i − θ_e) (ISO 13788{limit}):"
        );
        let mut t = table(
            &[
                "boundary",
                "environment",
                "critical θ_s °C",
                "at",
                "f_Rsi",
                "",
            ],
            "llrlrl",
        );
        for f in &c.temperature_factors {
            let which = if f.highest { "highest" } else { "lowest" };
            t.add_row(vec![
                f.boundary.clone(),
                f.environment.clone(),
                format!("{} ({which})", fixed(f.surface_temperature, 4)),
                point(f.at, 4),
                f.f_rsi.map_or("undefined".to_string(), |x| fixed(x, 4)),
                if f.below_minimum {
                    "BELOW LIMIT".to_string()
                } else {
                    String::new()
                },
            ]);
        }
        push_table(o, &t, 1);
    }
}
