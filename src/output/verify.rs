//! Files of the verification suite: verify.csv and verify.json.

use super::json::json_bytes;
use crate::error::Result;
use crate::output::{self, OutputSet};
use crate::study::verify::{ErrorMeasure, VerifyCase, VerifySuite};
use serde::Serialize;

/// `verify.csv`: `case,quantity,unit,source,reference,computed,error,tolerance,error_measure,
/// triangles,passed` (reference, computed in `unit`; error and tolerance relative or in `unit`
/// as `error_measure` says).
pub fn verify_csv(suite: &VerifySuite) -> Result<Vec<u8>> {
    let header = [
        "case",
        "quantity",
        "unit",
        "source",
        "reference",
        "computed",
        "error",
        "tolerance",
        "error_measure",
        "triangles",
        "passed",
    ];
    let rows = suite.cases.iter().map(|c| {
        [
            c.case.clone(),
            c.quantity.clone(),
            c.unit.clone(),
            c.reference_detail.clone(),
            output::format_f64(c.reference),
            output::format_f64(c.computed),
            output::format_f64(c.error),
            output::format_f64(c.tolerance),
            match c.error_measure {
                ErrorMeasure::Relative => "relative".into(),
                ErrorMeasure::Absolute => "absolute".into(),
            },
            c.triangles.to_string(),
            c.passed.to_string(),
        ]
    });
    output::csv_bytes(header, rows)
}

/// Schema of verify.json.
pub const VERIFY_SCHEMA: &str = "xsheat.verify/1";

#[derive(Serialize)]
struct VerifyOut<'a> {
    schema: &'static str,
    version: &'static str,
    all_passed: bool,
    cases: &'a [VerifyCase],
}

/// `verify.json`: schema, version, overall result and every case (reference, computed and,
/// for absolute measures, error and tolerance in the case's `unit`).
pub fn verify_json(suite: &VerifySuite) -> Result<Vec<u8>> {
    let out = VerifyOut {
        schema: VERIFY_SCHEMA,
        version: crate::VERSION,
        all_passed: suite.all_passed(),
        cases: &suite.cases,
    };
    json_bytes(&out, "verify.json")
}

/// Both files of the suite, ready to be committed atomically.
pub fn verify_files(suite: &VerifySuite) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("verify.csv", verify_csv(suite)?);
    set.add("verify.json", verify_json(suite)?);
    Ok(set)
}
