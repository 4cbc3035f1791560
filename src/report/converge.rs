//! Console text of `xsheat converge`: the levels, every quantity with its GCI result, the
//! circles and the notes of a convergence study.

use super::{fixed, push_table, sci, sig3, table};
use crate::output::ERROR_ESTIMATE_METHOD;
use crate::study::converge::ConvergenceStudy;
use std::fmt::Write;

fn or_dash(x: Option<f64>, f: impl Fn(f64) -> String) -> String {
    x.map_or_else(|| "-".to_string(), f)
}

fn levels_table(o: &mut String, study: &ConvergenceStudy) {
    let estimate = format!("{ERROR_ESTIMATE_METHOD} estimate");
    let mut t = table(
        &[
            "level",
            "max_area m²",
            "triangles",
            "nodes",
            "h m",
            &estimate,
        ],
        "rrrrrr",
    );
    for l in &study.levels {
        t.add_row(vec![
            l.level.to_string(),
            sci(l.max_area, 4),
            l.triangles.to_string(),
            l.nodes.to_string(),
            sci(l.h, 4),
            sig3(l.error_estimate.relative),
        ]);
    }
    push_table(o, &t, 0);
}

fn quantities_table(o: &mut String, study: &ConvergenceStudy) {
    let mut header: Vec<String> = vec!["quantity".into(), "unit".into()];
    header.extend(study.levels.iter().map(|l| format!("level {}", l.level)));
    header.extend(["order", "extrapolated", "gci_fine", "gci %", "status"].map(String::from));
    let names: Vec<&str> = header.iter().map(String::as_str).collect();
    let align = format!("ll{}rrrrl", "r".repeat(study.levels.len()));
    let mut t = table(&names, &align);
    for q in &study.quantities {
        let mut row = vec![q.quantity.clone(), q.unit.clone()];
        row.extend(q.values.iter().map(|&v| fixed(v, 8)));
        row.push(or_dash(q.gci.observed_order, |v| fixed(v, 3)));
        row.push(or_dash(q.gci.extrapolated, |v| fixed(v, 8)));
        row.push(or_dash(q.gci.gci_fine, |v| sci(v, 3)));
        row.push(or_dash(q.gci.gci_fine_percent, |v| fixed(v, 4)));
        row.push(q.gci.status.as_str().to_string());
        t.add_row(row);
    }
    push_table(o, &t, 0);
}

/// The tables `xsheat converge` prints (results only; the caller prints the caution).
pub fn convergence_report(study: &ConvergenceStudy) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "convergence study: {}", study.title);
    levels_table(&mut o, study);
    let _ = writeln!(o);
    quantities_table(&mut o, study);
    if !study.circles.is_empty() {
        let _ = writeln!(o);
        for c in &study.circles {
            let _ = writeln!(
                o,
                "circle {}: r = {} m, {} segments at every level{}, sagitta {} m",
                c.ring,
                c.radius,
                c.segments,
                if c.segments_from_model {
                    " (from the model)"
                } else {
                    " (the finest level's)"
                },
                sci(c.sagitta, 3)
            );
        }
    }
    if !study.notes.is_empty() {
        let _ = writeln!(o);
    }
    for n in &study.notes {
        let _ = writeln!(o, "note: {n}");
    }
    o
}
