//! Console text of the grid cross-checks: `xsheat gridcheck` (grid model against the element
//! model) and `xsheat compare` (a user's own results against the element model).

use super::{fixed, push_table, sci, signed, table};
use crate::study::crosscheck::*;
use std::fmt::Write as _;

fn element_line(e: &ElementMeshInfo) -> String {
    format!(
        "element model: {} nodes, {} triangles; max_area {} m² ({}), largest triangle {} m² \
         (edge ≈ {} m)",
        e.nodes,
        e.triangles,
        sci(e.max_area_setting, 4),
        if e.overridden {
            "--fe-max-area"
        } else {
            "the model's mesh settings"
        },
        sci(e.largest_triangle, 4),
        sci(e.edge, 4)
    )
}

fn stats_lines(o: &mut String, what: &str, s: &DiffStats) {
    let _ = writeln!(o, "temperature difference {what} over {} points:", s.count);
    let _ = writeln!(
        o,
        "  max |diff| = {} K at ({}, {})",
        sci(s.max_abs, 4),
        s.max_at[0],
        s.max_at[1]
    );
    let _ = writeln!(o, "  RMS diff   = {} K", sci(s.rms, 4));
    let _ = writeln!(o, "  mean diff  = {} K", sci(s.mean, 4));
}

/// A relative difference as a signed percentage (`+0.1234 %`), `-` when not defined.
fn pct(r: Option<f64>) -> String {
    r.map_or("-".to_string(), |r| format!("{} %", signed(100.0 * r, 4)))
}

fn coarse_reference_note(o: &mut String, check: &GridCheck, fin: &GridLevel) {
    if check.element.edge > fin.spacing / FINE_RATIO {
        let suggest = 3f64.sqrt() / 4.0 * (fin.spacing / (2.0 * FINE_RATIO)).powi(2);
        let _ = writeln!(
            o,
            "note: the element mesh (edge ≈ {} m) is not much finer than the grid (h = {} m): \
             the difference includes the element model's own error; a finer reference: \
             --fe-max-area {}",
            sci(check.element.edge, 3),
            fin.spacing,
            sci(suggest, 3)
        );
    }
}

fn levels_tables(o: &mut String, check: &GridCheck) {
    let _ = writeln!(o, "difference grid − element against spacing:");
    let mut t = table(
        &[
            "h m",
            "nodes",
            "max |diff| K",
            "order",
            "RMS diff K",
            "order",
        ],
        "rrrrrr",
    );
    let ord = |v: Option<f64>| v.map_or("-".to_string(), |v| fixed(v, 3));
    for l in &check.levels {
        t.add_row(vec![
            l.spacing.to_string(),
            l.grid_nodes.to_string(),
            sci(l.stats.max_abs, 4),
            ord(l.order_max),
            sci(l.stats.rms, 4),
            ord(l.order_rms),
        ]);
    }
    push_table(o, &t, 1);
    let _ = writeln!(
        o,
        "heat-flow difference grid − element per boundary (W/m; relative to the element flow):"
    );
    for l in &check.levels {
        let cells: Vec<String> = l
            .flows
            .iter()
            .map(|f| format!("{} {} ({})", f.name, sci(f.diff, 4), pct(f.relative)))
            .collect();
        let _ = writeln!(o, "  h = {} m: {}", l.spacing, cells.join(", "));
    }
    let _ = writeln!(o, "finest spacing:");
}

fn flows_table(o: &mut String, fin: &GridLevel) {
    let _ = writeln!(
        o,
        "heat flow per boundary (W/m, positive into the section):"
    );
    let mut t = table(
        &[
            "boundary",
            "kind",
            "grid",
            "element",
            "grid − element",
            "relative",
        ],
        "llrrrr",
    );
    for f in &fin.flows {
        t.add_row(vec![
            f.name.clone(),
            f.kind.as_str().to_string(),
            fixed(f.grid, 6),
            fixed(f.fe, 6),
            sci(f.diff, 4),
            pct(f.relative),
        ]);
    }
    push_table(o, &t, 1);
}

/// The text `xsheat gridcheck` prints.
pub fn gridcheck_report(check: &GridCheck) -> String {
    let mut o = String::new();
    let Some(fin) = check.levels.last() else {
        return o;
    };
    let _ = writeln!(o, "{}", element_line(&check.element));
    coarse_reference_note(&mut o, check, fin);
    if check.levels.len() > 1 {
        levels_tables(&mut o, check);
    }
    let _ = writeln!(
        o,
        "grid model: h = {} m, {} nodes ({} with Shortley–Weller arms)",
        fin.spacing, fin.grid_nodes, fin.shortley_weller_nodes
    );
    stats_lines(&mut o, "grid − element", &fin.stats);
    flows_table(&mut o, fin);
    o
}

/// The text `xsheat compare` prints.
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
                "  line {}: ({}, {}), {} m outside",
                p.line,
                p.x,
                p.y,
                sci(p.distance, 4)
            );
        }
        if c.outside.len() > OUTSIDE_LISTED {
            let _ = writeln!(o, "  … and {} more", c.outside.len() - OUTSIDE_LISTED);
        }
    }
    stats_lines(&mut o, "user − element", &c.stats);
    o
}
