//! Unit tests of the parent module.

use super::*;

#[test]
fn biot_eigenvalues_match_the_tabulated_plane_wall_values() {
    // β tan β = Bi is the eigenvalue equation of the plane wall with convection; for Bi = 1
    // the first root is ζ1 = 0.8603 rad with C1 = 1.1191 (Incropera et al., Table 5.1; the
    // tabulated values quoted from memory).
    let b = biot_eigenvalues(1.0, 3);
    assert!((b[0] - 0.8603).abs() < 1e-4, "{}", b[0]);
    let c1 = 4.0 * b[0].sin() / (2.0 * b[0] + (2.0 * b[0]).sin());
    assert!((c1 - 1.1191).abs() < 1e-4, "{c1}");
    for (n, &x) in b.iter().enumerate() {
        assert!((x * x.tan() - 1.0).abs() < 1e-10);
        assert!(x > n as f64 * PI && x < (n as f64 + 0.5) * PI);
    }
}

#[test]
fn convective_rectangle_series_satisfies_its_boundary_conditions() {
    let r = ConvectiveRectangle {
        length: 0.5,
        height: 0.4,
        conductivity: 1.0,
        h: 2.0,
        theta0: 50.0,
    };
    // Base value θ0 (at y = 0 the 400-term cosine series converges only like 1/n).
    assert!((r.theta(0.1, 0.0) - 50.0).abs() < 0.5);
    // Convection at x = L: −k ∂θ/∂x = h θ (central difference).
    let (x, y, d) = (0.5, 0.3, 1e-5);
    // One-sided second-order difference.
    let dtdx =
        (3.0 * r.theta(x, y) - 4.0 * r.theta(x - d, y) + r.theta(x - 2.0 * d, y)) / (2.0 * d);
    assert!(
        (-dtdx - 2.0 * r.theta(x, y)).abs() < 1e-5 * r.theta(x, y),
        "{dtdx}"
    );
    // Energy balance of the series: the heat entering at the base leaves by convection,
    // Q' = ∫_0^W h θ(L, y) dy (composite Simpson rule, 200 intervals; the truncated series
    // at y = 0 and the corner behaviour limit the agreement to about 1e-5).
    let m = 200;
    let hy = 0.4 / m as f64;
    let mut sum = 0.0;
    for i in 0..=m {
        let w = if i == 0 || i == m {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        sum += w * 2.0 * r.theta(0.5, i as f64 * hy);
    }
    let loss = sum * hy / 3.0;
    let q = r.base_heat_flow();
    assert!((loss - q).abs() < 1e-4 * q, "{loss} vs {q}");
}

#[test]
fn the_table_has_unique_names_clean_citations_and_quantities() {
    let all = cases();
    let mut names: Vec<&str> = all.iter().map(|c| c.name).collect();
    names.sort_unstable();
    names.dedup();
    assert_eq!(names.len(), all.len(), "repeated case names");
    for c in &all {
        assert!(!c.quantities.is_empty(), "{}: no quantities", c.name);
        let bases =
            std::iter::once(&c.basis).chain(c.quantities.iter().filter_map(|q| q.basis.as_ref()));
        for b in bases {
            assert!(!b.label.is_empty() && !b.formula.is_empty(), "{}", c.name);
            // Remarks such as "from memory" belong in the code comments, not the citation.
            for text in [b.label, b.source, b.formula] {
                assert!(!text.contains("memory"), "{}: {text}", c.name);
            }
        }
        assert_eq!(case(c.name).as_ref(), Some(c));
        // Every model parses.
        assert!(crate::model::parse(c.model).is_ok(), "{}", c.name);
    }
    assert!(case("no_such_case").is_none());
}

#[test]
fn fourier_rectangle_series_meets_its_boundary_values() {
    // θ = 0 on the sides x = 0, x = L and the base y = 0; θ → 1 along y = W (away from the
    // corners, where the series converges slowly); symmetric about x = L/2.
    let t = |x: f64, y: f64| fourier_rectangle_theta(2.0, 1.0, x, y);
    assert!(t(0.0, 0.5).abs() < 1e-12);
    assert!(t(2.0, 0.5).abs() < 1e-9);
    assert!(t(1.0, 0.0).abs() < 1e-12);
    assert!((t(1.0, 1.0) - 1.0).abs() < 2e-3, "{}", t(1.0, 1.0));
    assert!((t(0.5, 0.7) - t(1.5, 0.7)).abs() < 1e-9);
    assert!(t(1.0, 0.5) > 0.0 && t(1.0, 0.5) < 1.0);
}
