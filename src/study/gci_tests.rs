//! Unit tests of the parent module.

use super::*;

#[test]
fn gci_constant_ratio_second_order_worked_by_hand() {
    // Levels coarsest first: h = 4, 2, 1 with φ = 1.16, 1.04, 1.01 (Celik indices 3, 2, 1).
    // ε21 = φ2 − φ1 = 0.03, ε32 = φ3 − φ2 = 0.12, r21 = r32 = 2, so q(p) = 0 and
    // p = ln(0.12/0.03)/ln 2 = ln 4/ln 2 = 2.
    // φ_ext = (2²·1.01 − 1.04)/(2² − 1) = (4.04 − 1.04)/3 = 1.
    // GCI_fine = 1.25·|ε21|/(r^p − 1) = 1.25·0.03/3 = 0.0125 (absolute);
    // e_a = 0.03/1.01 = 0.029703, GCI_fine% = 100·1.25·0.029703/3 = 1.23762 %.
    let g = gci(&[4.0, 2.0, 1.0], &[1.16, 1.04, 1.01], 1.0).unwrap();
    assert_eq!(g.status, ConvergenceStatus::Monotone);
    assert!((g.observed_order.unwrap() - 2.0).abs() < 1e-9);
    assert!((g.extrapolated.unwrap() - 1.0).abs() < 1e-12);
    assert!((g.gci_fine.unwrap() - 0.0125).abs() < 1e-12);
    assert!((g.gci_fine_percent.unwrap() - 1.25 * 100.0 * 0.03 / 1.01 / 3.0).abs() < 1e-9);
    assert!((g.approximate_relative_error.unwrap() - 0.03 / 1.01).abs() < 1e-12);
}

#[test]
fn gci_non_constant_ratio_worked_by_hand() {
    // φ = 1 + h² on h = 3, 1.5, 1 (coarsest first): φ3 = 10, φ2 = 3.25, φ1 = 2.
    // r21 = 1.5, r32 = 2; ε21 = 1.25, ε32 = 6.75, ε32/ε21 = 5.4.
    // At p = 2: q = ln((1.5² − 1)/(2² − 1)) = ln(1.25/3) = −0.875469;
    // (ln 5.4 + q)/ln 1.5 = (1.686399 − 0.875469)/0.405465 = 2.000 — the fixed point.
    // φ_ext = (2.25·2 − 3.25)/1.25 = 1; GCI_fine = 1.25·1.25/1.25 = 1.25 (absolute),
    // e_a = 1.25/2 = 0.625, GCI_fine% = 100·1.25·0.625/1.25 = 62.5 %.
    let g = gci(&[3.0, 1.5, 1.0], &[10.0, 3.25, 2.0], 10.0).unwrap();
    assert_eq!(g.status, ConvergenceStatus::Monotone);
    assert!((g.observed_order.unwrap() - 2.0).abs() < 1e-9, "{g:?}");
    assert!((g.extrapolated.unwrap() - 1.0).abs() < 1e-9);
    assert!((g.gci_fine.unwrap() - 1.25).abs() < 1e-9);
    assert!((g.gci_fine_percent.unwrap() - 62.5).abs() < 1e-7);
    assert!((g.r21 - 1.5).abs() < 1e-15 && (g.r32 - 2.0).abs() < 1e-15);
}

#[test]
fn gci_classification() {
    let h = [4.0, 2.0, 1.0];
    let c = gci(&h, &[5.0, 5.0, 5.0 + 1e-13], 5.0).unwrap();
    assert_eq!(c.status, ConvergenceStatus::Constant);
    assert_eq!(c.gci_fine, Some(0.0));
    // Exactly zero everywhere (an insulated boundary's heat flow).
    let z = gci(&h, &[0.0; 3], 0.0).unwrap();
    assert_eq!(z.status, ConvergenceStatus::Constant);
    assert_eq!(z.gci_fine_percent, None);
    let o = gci(&h, &[1.0, 1.1, 0.95], 1.0).unwrap();
    assert_eq!(o.status, ConvergenceStatus::Oscillating);
    assert_eq!(o.observed_order, None);
    let d = gci(&h, &[1.15, 1.1, 1.0], 1.0).unwrap();
    assert_eq!(d.status, ConvergenceStatus::Divergent);
    assert_eq!(d.gci_fine, None);
    // ε32/ε21 = 2^8: p = 8 is outside the plausible range.
    let u = gci(&h, &[1.0 + 256.0 + 1.0, 2.0, 1.0], 1.0).unwrap();
    assert_eq!(u.status, ConvergenceStatus::Unreliable);
    assert!((u.observed_order.unwrap() - 8.0).abs() < 1e-9);
    assert_eq!(u.gci_fine, None);
    // Four levels: the finest three decide, every triplet's order is listed.
    let f = gci(
        &[8.0, 4.0, 2.0, 1.0],
        &[1.0 + 64.0, 1.0 + 16.0, 1.0 + 4.0, 2.0],
        1.0,
    )
    .unwrap();
    assert_eq!(f.orders_by_triplet.len(), 2);
    for p in &f.orders_by_triplet {
        assert!((p.unwrap() - 2.0).abs() < 1e-9);
    }
    assert!(gci(&[2.0, 1.0], &[1.0, 1.0], 1.0).is_err());
    assert!(gci(&h, &[1.0, f64::NAN, 1.0], 1.0).is_err());
}

#[test]
fn observed_order_bisection_agrees_with_fixed_point() {
    // Strongly different ratios: the fixed point and the bisection solve the same equation.
    for &(r21, r32, p) in &[(1.2f64, 3.0f64, 1.5f64), (2.0, 1.1, 2.5), (1.5, 1.5, 1.0)] {
        let ratio: f64 = r21.powf(p) * (r32.powf(p) - 1.0) / (r21.powf(p) - 1.0);
        let got = observed_order(r21, r32, ratio).unwrap();
        assert!((got - p).abs() < 1e-8, "{r21} {r32} {p}: {got}");
    }
}
