//! The grid convergence index (GCI) with Richardson extrapolation, following the procedure of
//! I. B. Celik et al., "Procedure for estimation and reporting of uncertainty due to
//! discretization in CFD applications", J. Fluids Eng. 130 (2008) 078001, with the factor of
//! safety 1.25 (P. J. Roache, Verification and Validation in Computational Science and
//! Engineering, Hermosa, 1998; ASME V&V 20-2009).

use crate::error::{Error, Result};
use serde::Serialize;

/// Differences below this fraction of the quantity's scale count as round-off (the same level as
/// the solver-residual and energy-balance self-checks).
pub const CONSTANT_RELATIVE_TOLERANCE: f64 = 1e-9;
/// Factor of safety of the GCI for studies with three or more levels (Roache 1998).
pub const GCI_SAFETY_FACTOR: f64 = 1.25;
/// Observed orders outside this range are flagged `unreliable` (our choice: below it the levels
/// are far from the asymptotic range, above it — twice the formal order 2 of P1 point values —
/// extrapolation is not trustworthy).
pub const PLAUSIBLE_ORDER: (f64, f64) = (0.5, 4.0);

/// How the values of a quantity behave over the three finest levels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ConvergenceStatus {
    /// No change beyond round-off ([`CONSTANT_RELATIVE_TOLERANCE`] × scale).
    Constant,
    /// Successive differences of one sign, shrinking: order, extrapolation and GCI reported.
    Monotone,
    /// Successive differences change sign: no order reported.
    Oscillating,
    /// Differences of one sign that do not shrink under refinement: no order reported.
    Divergent,
    /// An order could not be determined or lies outside [`PLAUSIBLE_ORDER`]; the order (if any)
    /// is reported, no extrapolation and no GCI.
    Unreliable,
}

impl ConvergenceStatus {
    /// The status's name as written in files (`monotone`, `oscillating`, …).
    pub fn as_str(&self) -> &'static str {
        match self {
            ConvergenceStatus::Constant => "constant",
            ConvergenceStatus::Monotone => "monotone",
            ConvergenceStatus::Oscillating => "oscillating",
            ConvergenceStatus::Divergent => "divergent",
            ConvergenceStatus::Unreliable => "unreliable",
        }
    }
}

/// Result of the GCI procedure on the three finest levels of a sequence.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Gci {
    /// How the values behave (decides what is reported).
    pub status: ConvergenceStatus,
    /// Observed order p.
    pub observed_order: Option<f64>,
    /// Richardson extrapolation φ_ext = (r21^p·φ1 − φ2)/(r21^p − 1).
    pub extrapolated: Option<f64>,
    /// GCI of the finest level in the unit of the quantity: 1.25·|φ1 − φ2|/(r21^p − 1).
    pub gci_fine: Option<f64>,
    /// The same relative to |φ1|, percent (Celik's GCI_fine^21); `None` when φ1 = 0.
    pub gci_fine_percent: Option<f64>,
    /// |φ1 − φ2|/|φ1| (Celik's e_a^21); `None` when φ1 = 0.
    pub approximate_relative_error: Option<f64>,
    /// |φ_ext − φ1|/|φ_ext| (Celik's e_ext^21).
    pub extrapolated_relative_error: Option<f64>,
    /// Refinement ratio h2/h1 (1 = finest).
    pub r21: f64,
    /// Refinement ratio h3/h2.
    pub r32: f64,
    /// Observed order of every run of three consecutive levels, coarsest run first (more than
    /// three levels show whether the order settles); `None` where not monotone.
    pub orders_by_triplet: Vec<Option<f64>>,
    /// Why a value is missing, or how it was obtained.
    pub note: String,
}

/// GCI procedure on a sequence of levels, **coarsest first**: `h[i]` the representative size
/// (e.g. (A/N_i)^½), `values[i]` the quantity. The finest three levels give the order, the
/// extrapolated value and the GCI. `scale` is the magnitude against which round-off is judged
/// (e.g. the largest |temperature|, or Σ|boundary heat flows|); differences at most
/// [`CONSTANT_RELATIVE_TOLERANCE`] × max(scale, max|value|) count as no change.
pub fn gci(h: &[f64], values: &[f64], scale: f64) -> Result<Gci> {
    if h.len() != values.len() {
        return Err(Error::input(format!(
            "GCI: {} sizes for {} values",
            h.len(),
            values.len()
        )));
    }
    if h.len() < 3 {
        return Err(Error::input(format!(
            "GCI: needs at least 3 levels, got {}",
            h.len()
        )));
    }
    if let Some(i) = h.iter().position(|x| !(x.is_finite() && *x > 0.0)) {
        return Err(Error::input(format!(
            "GCI: size of level {} is {}, must be positive and finite",
            i + 1,
            h[i]
        )));
    }
    if let Some(i) = values.iter().position(|x| !x.is_finite()) {
        return Err(Error::input(format!(
            "GCI: value of level {} is {}, must be finite",
            i + 1,
            values[i]
        )));
    }
    let scale = if scale.is_finite() { scale.abs() } else { 0.0 };
    let n = h.len();
    let mut orders_by_triplet = Vec::with_capacity(n - 2);
    for k in 0..n - 2 {
        let g = gci3(
            [h[k + 2], h[k + 1], h[k]],
            [values[k + 2], values[k + 1], values[k]],
            scale,
        );
        orders_by_triplet.push(match g.status {
            ConvergenceStatus::Monotone | ConvergenceStatus::Unreliable => g.observed_order,
            _ => None,
        });
    }
    let mut g = gci3(
        [h[n - 1], h[n - 2], h[n - 3]],
        [values[n - 1], values[n - 2], values[n - 3]],
        scale,
    );
    g.orders_by_triplet = orders_by_triplet;
    Ok(g)
}

/// Celik et al. (2008) for three levels, index 0 = finest (their 1).
fn gci3(h: [f64; 3], phi: [f64; 3], scale: f64) -> Gci {
    let r21 = h[1] / h[0];
    let r32 = h[2] / h[1];
    let e21 = phi[1] - phi[0];
    let e32 = phi[2] - phi[1];
    let magnitude = phi.iter().fold(scale, |m, v| m.max(v.abs()));
    let tol = CONSTANT_RELATIVE_TOLERANCE * magnitude;
    let rel = |num: f64, den: f64| (den != 0.0).then(|| (num / den).abs());
    let mut g = Gci {
        status: ConvergenceStatus::Unreliable,
        observed_order: None,
        extrapolated: None,
        gci_fine: None,
        gci_fine_percent: None,
        approximate_relative_error: rel(e21, phi[0]),
        extrapolated_relative_error: None,
        r21,
        r32,
        orders_by_triplet: Vec::new(),
        note: String::new(),
    };
    if e21.abs() <= tol && e32.abs() <= tol {
        g.status = ConvergenceStatus::Constant;
        g.extrapolated = Some(phi[0]);
        g.gci_fine = Some(0.0);
        g.gci_fine_percent = rel(0.0, phi[0]).map(|_| 0.0);
        g.extrapolated_relative_error = rel(0.0, phi[0]).map(|_| 0.0);
        g.note = format!("no change beyond round-off ({tol:.1e}) over the finest three levels");
        return g;
    }
    if !(r21 > 1.0 && r32 > 1.0) {
        g.note = format!(
            "the representative size does not decrease from level to level (r21 = {r21:.4}, r32 = {r32:.4})"
        );
        return g;
    }
    if e21.abs() <= tol || e32.abs() <= tol {
        g.note = "one of the two finest differences vanishes to round-off: no order".into();
        return g;
    }
    if e21 * e32 < 0.0 {
        g.status = ConvergenceStatus::Oscillating;
        g.note = "successive differences change sign: oscillatory convergence, no order".into();
        return g;
    }
    // Monotone differences. A positive order exists iff ε32/ε21 exceeds its limit as p → 0,
    // ln r32 / ln r21 (1 for a constant ratio).
    let ratio = e32 / e21;
    if ratio <= r32.ln() / r21.ln() {
        g.status = ConvergenceStatus::Divergent;
        g.note = format!(
            "the differences do not shrink under refinement (ε32/ε21 = {ratio:.4}): no order"
        );
        return g;
    }
    let Some(p) = observed_order(r21, r32, ratio) else {
        g.note = "the order equation has no solution in (0, 50]".into();
        return g;
    };
    g.observed_order = Some(p);
    if !(PLAUSIBLE_ORDER.0..=PLAUSIBLE_ORDER.1).contains(&p) {
        g.note = format!(
            "observed order {p:.3} outside [{}, {}]: not in the asymptotic range; no extrapolation or GCI",
            PLAUSIBLE_ORDER.0, PLAUSIBLE_ORDER.1
        );
        return g;
    }
    let rp = r21.powf(p);
    let ext = (rp * phi[0] - phi[1]) / (rp - 1.0);
    let gci_abs = GCI_SAFETY_FACTOR * e21.abs() / (rp - 1.0);
    g.status = ConvergenceStatus::Monotone;
    g.extrapolated = Some(ext);
    g.gci_fine = Some(gci_abs);
    g.gci_fine_percent = rel(gci_abs, phi[0]).map(|x| 100.0 * x);
    g.extrapolated_relative_error = rel(ext - phi[0], ext);
    if r21 < 1.3 || r32 < 1.3 {
        g.note = format!(
            "refinement ratio below 1.3 (r21 = {r21:.3}, r32 = {r32:.3}), less than Celik et al. recommend"
        );
    }
    g
}

/// Observed order from ε32/ε21 = r21^p·(r32^p − 1)/(r21^p − 1) (monotone case, s = 1): Celik's
/// fixed-point iteration p = |ln|ε32/ε21| + q(p)| / ln r21, q(p) = ln((r21^p − 1)/(r32^p − 1)),
/// started from q = 0; bisection on the same equation if the iteration does not settle.
fn observed_order(r21: f64, r32: f64, ratio: f64) -> Option<f64> {
    let (l21, lr) = (r21.ln(), ratio.ln());
    let q = |p: f64| ((r21.powf(p) - 1.0) / (r32.powf(p) - 1.0)).ln();
    let residual = |p: f64| p * l21 - q(p) - lr;
    let mut p = (lr / l21).abs();
    for _ in 0..500 {
        let next = (lr + q(p)).abs() / l21;
        if !next.is_finite() {
            break;
        }
        if (next - p).abs() <= 1e-13 * p.max(1.0) {
            if residual(next).abs() <= 1e-9 * lr.abs().max(1.0) && next > 0.0 {
                return Some(next);
            }
            break;
        }
        p = next;
    }
    // Bisection: residual is increasing in p; negative near 0 when a positive root exists.
    let (mut lo, mut hi) = (1e-9, 50.0);
    if !(residual(lo) < 0.0 && residual(hi) > 0.0) {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if residual(mid) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

#[cfg(test)]
#[path = "gci_tests.rs"]
mod tests;
