//! The console table of a convergence study.

use crate::study::converge::ConvergenceStudy;

fn short(x: Option<f64>, digits: usize) -> String {
    match x {
        Some(v) => format!("{v:.digits$}"),
        None => "-".to_string(),
    }
}

/// The table `xsheat converge` prints.
pub fn convergence_report(study: &ConvergenceStudy) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(s, "convergence study: {}", study.title);
    let _ = writeln!(
        s,
        "{:>5} {:>12} {:>10} {:>10} {:>12} {:>12}",
        "level", "max_area_m2", "triangles", "nodes", "h_m", "zz_rel_err"
    );
    for l in &study.levels {
        let _ = writeln!(
            s,
            "{:>5} {:>12.4e} {:>10} {:>10} {:>12.4e} {:>12.3e}",
            l.level, l.max_area, l.triangles, l.nodes, l.h, l.error_estimate.relative
        );
    }
    let _ = writeln!(s);
    let name_w = study
        .quantities
        .iter()
        .map(|q| q.quantity.chars().count())
        .max()
        .unwrap_or(8)
        .max(8);
    let _ = write!(s, "{:<name_w$} {:<5}", "quantity", "unit");
    for l in &study.levels {
        let _ = write!(s, " {:>14}", format!("level {}", l.level));
    }
    let _ = writeln!(
        s,
        " {:>7} {:>14} {:>11} {:>8} status",
        "order", "extrapolated", "gci_fine", "gci_%"
    );
    for q in &study.quantities {
        let _ = write!(s, "{:<name_w$} {:<5}", q.quantity, q.unit);
        for v in &q.values {
            let _ = write!(s, " {v:>14.8}");
        }
        let _ = writeln!(
            s,
            " {:>7} {:>14} {:>11} {:>8} {}",
            short(q.gci.observed_order, 3),
            short(q.gci.extrapolated, 8),
            q.gci.gci_fine.map_or("-".into(), |v| format!("{v:.3e}")),
            short(q.gci.gci_fine_percent, 4),
            q.gci.status.as_str()
        );
    }
    if !study.circles.is_empty() {
        let _ = writeln!(s);
        for c in &study.circles {
            let _ = writeln!(
                s,
                "circle {}: r = {} m, {} segments at every level{}, sagitta {:.3e} m",
                c.ring,
                c.radius,
                c.segments,
                if c.segments_from_model {
                    " (from the model)"
                } else {
                    " (the finest level's)"
                },
                c.sagitta
            );
        }
    }
    let _ = writeln!(s);
    for n in &study.notes {
        let _ = writeln!(s, "note: {n}");
    }
    let _ = writeln!(s, "{}", crate::CAUTION);
    s
}
