//! Console text of the command-line tool: every line a command prints as its result.
//!
//! One file per command: [`check`](check_report) and [`mesh`](mesh_report) in `check.rs`,
//! [`solve`](solve_report) in `solve.rs`, [`converge`](convergence_report) in `converge.rs`,
//! [`gridcheck`](gridcheck_report) and [`compare`](compare_report) in `crosscheck.rs`,
//! [`verify`](verify_report) in `verify.rs`. The functions return the results only; the
//! engineering caution ([`crate::CAUTION`]) is printed by the caller, and warnings come from
//! [`warnings_report`]. Tables are laid out by `comfy-table`; numbers go through the helpers
//! here, which never print a negative zero (`-0.0000`).

use comfy_table::{CellAlignment, Table, presets};
use std::fmt::Write;

mod check;
mod converge;
mod crosscheck;
mod results;
mod solve;
mod sweep;
mod verify;

pub use check::*;
pub use converge::*;
pub use crosscheck::*;
pub use solve::*;
pub use sweep::*;
pub use verify::*;

/// Warnings block: `warnings:` and one `  - …` line each (empty when there are none).
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

pub(crate) use crate::text::{fixed, point, sci, sig3, signed};

/// A plain table (no borders) with the given header; `align` has one letter per column,
/// `l` left or `r` right.
pub(crate) fn table(header: &[&str], align: &str) -> Table {
    let mut t = Table::new();
    t.load_preset(presets::NOTHING).set_header(header.to_vec());
    for (i, a) in align.chars().enumerate() {
        if let Some(c) = t.column_mut(i) {
            c.set_cell_alignment(if a == 'r' {
                CellAlignment::Right
            } else {
                CellAlignment::Left
            });
        }
    }
    t
}

/// Appends a table, each line indented by `indent` spaces, without trailing blanks.
pub(crate) fn push_table(o: &mut String, t: &Table, indent: usize) {
    for line in t.lines() {
        let _ = writeln!(o, "{:indent$}{}", "", line.trim_end());
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_negative_zero() {
        assert_eq!(fixed(-0.0, 4), "0.0000");
        assert_eq!(fixed(-1e-9, 4), "0.0000");
        assert_eq!(fixed(-1.5, 2), "-1.50");
        assert_eq!(signed(-1e-9, 4), "0.0000");
        assert_eq!(signed(0.25, 2), "+0.25");
        assert_eq!(sci(-0.0, 3), "0.000e0");
        assert_eq!(sci(-2.5e-7, 2), "-2.50e-7");
    }

    #[test]
    fn fractions_have_three_significant_digits() {
        assert_eq!(sig3(0.031234), "0.0312");
        assert_eq!(sig3(0.25), "0.250");
        assert_eq!(sig3(0.0012345), "0.00123");
        assert_eq!(sig3(4.1666e-5), "4.17e-5");
        assert_eq!(sig3(0.0), "0");
        assert_eq!(sig3(1.0), "1.00");
    }

    #[test]
    fn tables_align_columns() {
        let mut t = table(&["name", "value"], "lr");
        t.add_row(vec!["a", "1.5"])
            .add_row(vec!["long name", "10.25"]);
        let mut o = String::new();
        push_table(&mut o, &t, 1);
        let lines: Vec<&str> = o.lines().collect();
        assert_eq!(lines.len(), 3, "{o}");
        assert!(
            lines
                .iter()
                .all(|l| l.starts_with("  ") && !l.ends_with(' '))
        );
        // Right-aligned values end in the same column.
        assert_eq!(lines[1].len(), lines[2].len(), "{o}");
    }
}
