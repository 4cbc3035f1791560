//! Number formatting shared by every stage (messages, CSV cells, reports).

/// Formats a float for text output: the shortest decimal that reads back to the same `f64`,
/// positional for `1e-4 <= |x| < 1e15`, scientific (`1.5e-7`, `2e15`) otherwise. Both zeros
/// give `0`; non-finite values give `NaN`, `inf`, `-inf`.
pub fn format_f64(x: f64) -> String {
    if x == 0.0 {
        "0".to_string()
    } else if x.is_finite() && (1e-4..1e15).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}
