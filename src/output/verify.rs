//! Files of the verification suite: verify.csv and verify.json.

use crate::error::{Error, Result};
use crate::output::{self, OutputSet};
use crate::study::verify::{ErrorMeasure, VerifySuite};

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

/// `verify.json`: schema, version, overall result and every case.
pub fn verify_json(suite: &VerifySuite) -> Result<Vec<u8>> {
    let v = serde_json::json!({
        "schema": "xsheat.verify/1",
        "version": crate::VERSION,
        "all_passed": suite.all_passed(),
        "cases": suite.cases,
    });
    let mut s = serde_json::to_string_pretty(&v)
        .map_err(|e| Error::run(format!("cannot encode verify.json: {e}")))?;
    s.push('\n');
    Ok(s.into_bytes())
}

/// Both files of the suite, ready to be committed atomically.
pub fn verify_files(suite: &VerifySuite) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("verify.csv", verify_csv(suite)?);
    set.add("verify.json", verify_json(suite)?);
    Ok(set)
}
