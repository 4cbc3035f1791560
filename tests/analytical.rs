//! Whole-pipeline checks against analytical solutions. The reference cases — models, reference
//! values, tolerances and their sources — live in one table, `xsheat::study::verify::cases()`,
//! which `xsheat verify` runs too. This file has one test per case of the table, a test that
//! the cases covered here are exactly the table's, and further checks of the same models that
//! the suite does not make (each naming its source).

use std::collections::BTreeSet;
use xsheat::mesh::MeshOptions;
use xsheat::study::verify::{self, ReferenceCase};
use xsheat::{model, run};

/// One `#[test]` per named case, each running [`check_case`], and the list of names covered.
macro_rules! reference_case_tests {
    ($($name:ident),* $(,)?) => {
        $(
            #[test]
            fn $name() {
                check_case(stringify!($name));
            }
        )*
        /// The cases that have a test above.
        const COVERED: &[&str] = &[$(stringify!($name)),*];
    };
}

reference_case_tests!(
    composite_wall,
    hollow_cylinder,
    eccentric_cylinders,
    fourier_rectangle,
    disk_with_source,
    convective_rectangle,
    grid_versus_element,
);

fn case(name: &str) -> ReferenceCase {
    verify::case(name).unwrap_or_else(|| panic!("no reference case {name} in verify::cases()"))
}

/// Solves the named case and asserts every quantity of the table is within its tolerance.
fn check_case(name: &str) {
    let case = case(name);
    let results = verify::run_case(&case).unwrap_or_else(|e| panic!("{name}: {e}"));
    assert_eq!(results.len(), case.quantities.len());
    for r in &results {
        assert_eq!(r.case, name);
        assert!(
            r.passed,
            "{name} {}: computed {} vs reference {} ({}), error {:e} above tolerance {:e}",
            r.quantity, r.computed, r.reference, r.reference_detail, r.error, r.tolerance
        );
    }
}

#[test]
fn the_tests_here_cover_exactly_the_cases_of_the_table() {
    let table: Vec<&str> = verify::cases().iter().map(|c| c.name).collect();
    let table_set: BTreeSet<&str> = table.iter().copied().collect();
    let covered: BTreeSet<&str> = COVERED.iter().copied().collect();
    assert_eq!(
        table_set.len(),
        table.len(),
        "repeated case names: {table:?}"
    );
    assert_eq!(covered.len(), COVERED.len(), "repeated tests: {COVERED:?}");
    assert_eq!(
        covered, table_set,
        "a case is missing from the table or has no test here"
    );
}

/// Solves the named case's model with `extra` (e.g. further probes) appended.
fn solve_with(name: &str, extra: &str) -> run::Solved {
    let text = format!("{}{extra}", case(name).model);
    let p = run::prepare_model(model::parse(&text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .unwrap_or_else(|| panic!("no boundary {name}"))
        .heat_flow
}

fn probe(s: &run::Solved, name: &str) -> f64 {
    s.results
        .probes
        .iter()
        .find(|p| p.name == name)
        .unwrap_or_else(|| panic!("no probe {name}"))
        .temperature
}

#[test]
fn composite_wall_outside_face_passes_the_same_flow() {
    // Source: 1D series thermal resistances, q'' = ΔT / (1/h1 + L1/k1 + L2/k2 + 1/h2)
    // (Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3). The exact solution is
    // piecewise linear, which P1 elements reproduce: the heat leaving through the outside face
    // equals the series value to round-off.
    let s = solve_with("composite_wall", "");
    let q = 25.0 / (1.0 / 25.0 + 0.2 / 1.2 + 0.3 / 0.04 + 1.0 / 8.0);
    let qout = flow(&s, "outside");
    assert!((qout + q).abs() <= 1e-9 * q, "outside {qout} vs {}", -q);
}

#[test]
fn hollow_cylinder_logarithmic_profile_and_balance() {
    // Source: conduction through a cylindrical wall (Incropera et al., ch. 3, radial systems):
    // T(r) = T1 + (T2 − T1)·ln(r/r1)/ln(r2/r1). Tolerance 0.05 K for a 65 K difference.
    let s = solve_with(
        "hollow_cylinder",
        "[[probes]]\nname = \"mid\"\nat = [0.0, 0.7]\n",
    );
    let t = 80.0 + (15.0 - 80.0) * (0.7f64 / 0.4).ln() / (1.0f64 / 0.4).ln();
    let got = probe(&s, "mid");
    assert!((got - t).abs() < 0.05, "{got} vs {t}");
    // Without a source all heat entering the inner ring leaves through the outer one.
    let q = flow(&s, "inner");
    assert!((flow(&s, "outer") + q).abs() <= 1e-9 * q);
}

#[test]
fn fourier_rectangle_at_further_interior_points() {
    // Source: separation of variables for a rectangle with T1 on three sides and T2 on the
    // fourth (Incropera et al., §4.2, section number recalled from memory); the series is
    // verify::fourier_rectangle_theta. Points away from the singular corners; tolerance 0.1 K
    // for a 100 K difference.
    let extra: String = [
        ("b", 0.5, 0.5),
        ("c", 1.5, 0.25),
        ("d", 1.0, 0.8),
        ("e", 0.3, 0.9),
    ]
    .iter()
    .map(|(n, x, y)| format!("[[probes]]\nname = \"{n}\"\nat = [{x:?}, {y:?}]\n"))
    .collect();
    let s = solve_with("fourier_rectangle", &extra);
    assert_eq!(s.results.probes.len(), 6);
    for p in &s.results.probes {
        let exact = 5.0 + 100.0 * verify::fourier_rectangle_theta(2.0, 1.0, p.x, p.y);
        assert!(
            (p.temperature - exact).abs() < 0.1,
            "probe {} at ({}, {}): {} vs {exact}",
            p.name,
            p.x,
            p.y,
            p.temperature
        );
    }
}

#[test]
fn disk_with_source_loses_all_generated_heat_through_the_rim() {
    // Energy balance of the solid cylinder with uniform generation (Incropera et al., ch. 3):
    // q̇·πR² leaves through the rim; exact for the discrete model too.
    let s = solve_with("disk_with_source", "");
    let source = s.results.heat_source;
    assert!(source > 0.0);
    assert!((flow(&s, "rim") + source).abs() <= 1e-9 * source);
}
