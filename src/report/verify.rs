//! Console table of the verification suite.

use crate::study::verify::{ErrorMeasure, VerifyCase, VerifySuite};

fn error_text(c: &VerifyCase) -> (String, String) {
    match c.error_measure {
        ErrorMeasure::Relative => (
            format!("{:.3e} rel", c.error),
            format!("{:.1e} rel", c.tolerance),
        ),
        ErrorMeasure::Absolute => (
            format!("{:.3e} {}", c.error, c.unit),
            format!("{:.1e} {}", c.tolerance, c.unit),
        ),
    }
}

/// The table `xsheat verify` prints.
pub fn verify_report(suite: &VerifySuite) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{:<21} {:<20} {:<17} {:>15} {:>15} {:>15} {:>13} {:>9} result",
        "case", "source", "quantity", "reference", "computed", "error", "tolerance", "triangles"
    );
    for c in &suite.cases {
        let (e, t) = error_text(c);
        let _ = writeln!(
            s,
            "{:<21} {:<20} {:<17} {:>15.9} {:>15.9} {:>15} {:>13} {:>9} {}",
            c.case,
            c.source,
            c.quantity,
            c.reference,
            c.computed,
            e,
            t,
            c.triangles,
            if c.passed { "pass" } else { "FAIL" }
        );
    }
    let _ = writeln!(s);
    let mut seen: Vec<&str> = Vec::new();
    for c in &suite.cases {
        if !seen.contains(&c.case.as_str()) {
            seen.push(&c.case);
            let _ = writeln!(s, "{}: {}", c.case, c.reference_detail);
        }
    }
    let _ = writeln!(
        s,
        "{} of {} checks passed",
        suite.cases.len() - suite.failed(),
        suite.cases.len()
    );
    s
}
