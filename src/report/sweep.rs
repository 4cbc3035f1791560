//! Console text of `xsheat sweep`: the parameters swept, how many variants this set holds and
//! which failed (their messages are in sweep.csv).

use super::{push_table, table};
use crate::output::SweepSummary;
use crate::text::format_f64;
use std::fmt::Write;

/// The summary `xsheat sweep` prints: one row per parameter, then the variant counts.
pub fn sweep_report(s: &SweepSummary) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "sweep of {} ({} mode, {} variants)",
        s.model, s.mode, s.variants
    );
    let mut t = table(&["parameter", "values"], "ll");
    for p in &s.parameters {
        let v: Vec<String> = p.values.iter().map(|&x| format_f64(x)).collect();
        t.add_row(vec![p.key.clone(), v.join(", ")]);
    }
    push_table(&mut o, &t, 2);
    let _ = writeln!(
        o,
        "variants in this set: {} (shard {}), solved: {}, failed: {}",
        s.in_this_set.len(),
        s.run.shard,
        s.in_this_set.len() - s.failed.len(),
        s.failed.len()
    );
    o
}
