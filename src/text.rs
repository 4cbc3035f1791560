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

/// Drops the sign of a formatted number whose digits are all zero (`-0.000` → `0.000`,
/// `-0.0e0` → `0.0e0`, `+0.00` → `0.00`).
fn unsigned_zero(s: String) -> String {
    let mantissa = s.split(['e', 'E']).next().unwrap_or("");
    let all_zero = !mantissa.chars().any(|c| c.is_ascii_digit() && c != '0');
    match s.strip_prefix(['-', '+']) {
        Some(rest) if all_zero => rest.to_string(),
        _ => s,
    }
}

/// `x` with `digits` decimals.
pub fn fixed(x: f64, digits: usize) -> String {
    unsigned_zero(format!("{x:.digits$}"))
}

/// `x` with `digits` decimals and an explicit sign (none for zero).
pub fn signed(x: f64, digits: usize) -> String {
    unsigned_zero(format!("{x:+.digits$}"))
}

/// `x` in scientific notation with `digits` decimals of the mantissa (`1.234e-5`).
pub fn sci(x: f64, digits: usize) -> String {
    unsigned_zero(format!("{x:.digits$e}"))
}

/// A fraction with 3 significant digits: positional down to 0.001 (`0.0312`, `0.250`),
/// scientific below (`4.17e-5`).
pub fn sig3(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{}", x.abs());
    }
    let exp = x.abs().log10().floor();
    if !(-3.0..15.0).contains(&exp) {
        return sci(x, 2);
    }
    let decimals = (2.0 - exp).max(0.0) as usize;
    fixed(x, decimals)
}

/// `(x, y)` with `digits` decimals.
pub fn point(p: [f64; 2], digits: usize) -> String {
    format!("({}, {})", fixed(p[0], digits), fixed(p[1], digits))
}
