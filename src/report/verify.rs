//! Console text of `xsheat verify`: one row per check with its case, source, reference,
//! computed value, error, tolerance and result.

use super::{push_table, sci, table};
use crate::study::verify::{ErrorMeasure, VerifyCase, VerifySuite};
use std::fmt::Write;

fn error_text(c: &VerifyCase) -> (String, String) {
    let unit = match c.error_measure {
        ErrorMeasure::Relative => "rel",
        ErrorMeasure::Absolute => c.unit.as_str(),
    };
    (
        format!("{} {unit}", sci(c.error, 3)),
        format!("{} {unit}", sci(c.tolerance, 1)),
    )
}

/// The table `xsheat verify` prints, and the count of checks passed.
pub fn verify_report(suite: &VerifySuite) -> String {
    let mut s = String::new();
    let mut t = table(
        &[
            "case",
            "source",
            "quantity",
            "reference",
            "computed",
            "error",
            "tolerance",
            "triangles",
            "result",
        ],
        "lllrrrrrl",
    );
    for c in &suite.cases {
        let (e, tol) = error_text(c);
        t.add_row(vec![
            c.case.clone(),
            c.source.clone(),
            c.quantity.clone(),
            super::fixed(c.reference, 9),
            super::fixed(c.computed, 9),
            e,
            tol,
            c.triangles.to_string(),
            if c.passed { "pass" } else { "FAIL" }.to_string(),
        ]);
    }
    push_table(&mut s, &t, 0);
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{} of {} checks passed",
        suite.cases.len() - suite.failed(),
        suite.cases.len()
    );
    s
}
