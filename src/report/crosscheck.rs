//! Console text of the grid cross-checks.

use crate::study::crosscheck::*;
use std::fmt::Write as _;

fn element_line(e: &ElementMeshInfo) -> String {
    format!(
        "element model: {} nodes, {} triangles; max_area {:.4e} m² ({}), largest triangle {:.4e} m² \
         (edge ≈ {:.4e} m)",
        e.nodes,
        e.triangles,
        e.max_area_setting,
        if e.overridden {
            "--fe-max-area"
        } else {
            "the model's mesh settings"
        },
        e.largest_triangle,
        e.edge
    )
}

fn stats_lines(o: &mut String, what: &str, s: &DiffStats) {
    let _ = writeln!(o, "temperature difference {what} over {} points:", s.count);
    let _ = writeln!(
        o,
        "  max |diff| = {:.4e} K at ({}, {})",
        s.max_abs, s.max_at[0], s.max_at[1]
    );
    let _ = writeln!(o, "  RMS diff   = {:.4e} K", s.rms);
    let _ = writeln!(o, "  mean diff  = {:.4e} K", s.mean);
}

fn pct(r: Option<f64>) -> String {
    r.map_or("-".to_string(), |r| format!("{:+.4}%", 100.0 * r))
}

/// The text `gridcheck` prints.
pub fn gridcheck_report(check: &GridCheck) -> String {
    let mut o = String::new();
    let Some(fin) = check.levels.last() else {
        return o;
    };
    let _ = writeln!(o, "{}", element_line(&check.element));
    if check.element.edge > fin.spacing / FINE_RATIO {
        let suggest = 3f64.sqrt() / 4.0 * (fin.spacing / (2.0 * FINE_RATIO)).powi(2);
        let _ = writeln!(
            o,
            "note: the element mesh (edge ≈ {:.3e} m) is not much finer than the grid (h = {} m): \
             the difference includes the element model's own error; a finer reference: \
             --fe-max-area {:.3e}",
            check.element.edge, fin.spacing, suggest
        );
    }
    if check.levels.len() > 1 {
        let _ = writeln!(o, "difference grid − element against spacing:");
        let _ = writeln!(
            o,
            "  {:>12} {:>9} {:>14} {:>7} {:>14} {:>7}",
            "h (m)", "nodes", "max|diff| (K)", "order", "RMS diff (K)", "order"
        );
        let ord = |v: Option<f64>| v.map_or("-".to_string(), |v| format!("{v:.3}"));
        for l in &check.levels {
            let _ = writeln!(
                o,
                "  {:>12} {:>9} {:>14.4e} {:>7} {:>14.4e} {:>7}",
                l.spacing,
                l.grid_nodes,
                l.stats.max_abs,
                ord(l.order_max),
                l.stats.rms,
                ord(l.order_rms)
            );
        }
        let _ = writeln!(
            o,
            "heat-flow difference grid − element per boundary (W/m; relative to the element flow):"
        );
        for l in &check.levels {
            let cells: Vec<String> = l
                .flows
                .iter()
                .map(|f| format!("{} {:+.4e} ({})", f.name, f.diff, pct(f.relative)))
                .collect();
            let _ = writeln!(o, "  h = {} m: {}", l.spacing, cells.join(", "));
        }
        let _ = writeln!(o, "finest spacing:");
    }
    let _ = writeln!(
        o,
        "grid model: h = {} m, {} nodes ({} with Shortley–Weller arms)",
        fin.spacing, fin.grid_nodes, fin.shortley_weller_nodes
    );
    stats_lines(&mut o, "grid − element", &fin.stats);
    let _ = writeln!(
        o,
        "heat flow per boundary (W/m, positive into the section):"
    );
    let _ = writeln!(
        o,
        "  {:<16} {:<11} {:>14} {:>14} {:>14} {:>11}",
        "boundary", "kind", "grid", "element", "grid−element", "relative"
    );
    for f in &fin.flows {
        let _ = writeln!(
            o,
            "  {:<16} {:<11} {:>14.6} {:>14.6} {:>14.4e} {:>11}",
            f.name,
            f.kind,
            f.grid,
            f.fe,
            f.diff,
            pct(f.relative)
        );
    }
    o
}

/// The text `compare` prints.
pub fn compare_report(c: &Comparison) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}", element_line(&c.element));
    let _ = writeln!(
        o,
        "{}: {} points read, {} inside the section{}",
        c.source,
        c.points.len() + c.outside.len(),
        c.points.len(),
        if c.snapped > 0 {
            format!(
                " ({} just outside the discretised boundary, taken at the nearest boundary point)",
                c.snapped
            )
        } else {
            String::new()
        }
    );
    if !c.outside.is_empty() {
        let n = c.outside.len();
        let plural = if n == 1 { "" } else { "s" };
        let _ = writeln!(o, "{n} point{plural} outside the section skipped:");
        for p in c.outside.iter().take(OUTSIDE_LISTED) {
            let _ = writeln!(
                o,
                "  line {}: ({}, {}), {:.4e} m outside",
                p.line, p.x, p.y, p.distance
            );
        }
        if c.outside.len() > OUTSIDE_LISTED {
            let _ = writeln!(o, "  … and {} more", c.outside.len() - OUTSIDE_LISTED);
        }
    }
    stats_lines(&mut o, "user − element", &c.stats);
    o
}
