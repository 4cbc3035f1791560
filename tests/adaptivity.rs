//! Adaptive refinement driven by the Zienkiewicz–Zhu estimate. On a section with a re-entrant
//! corner the solution has a singular gradient there (r^(2/3) behaviour at a 270° corner,
//! e.g. Grisvard, Elliptic Problems in Nonsmooth Domains, 1985), so uniform refinement
//! converges slowly and adaptive refinement should reach a given estimate with far fewer
//! triangles. The section is the L-shaped fixture (tests/fixtures/l-section.toml): only one
//! edge is fixed, so no corner joins two different fixed temperatures (which would make the
//! exact solution's energy infinite).

mod common;

use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

/// Coarsest global area limit, m²: about 60 triangles on the 0.48 m² L-shaped fixture.
const COARSE: f64 = 0.008;

fn prepared(max_area: f64) -> run::Prepared {
    run::prepare_model(model::parse(&common::l_section_with_max_area(max_area)).unwrap()).unwrap()
}

#[test]
fn adaptive_refinement_beats_uniform_refinement_at_a_re_entrant_corner() {
    let target = 0.03;
    // Uniform: divide max_area by 4 until the estimate meets the target.
    let mut area = COARSE;
    let uniform_triangles = loop {
        let s = run::solve(prepared(area), &MeshOptions::default()).unwrap();
        if s.error_estimate.relative <= target {
            break s.mesh.triangles.len();
        }
        area /= 4.0;
        assert!(area > 1e-7, "uniform refinement did not reach the target");
    };
    let adaptive =
        xsheat::study::adaptive::solve_adaptive(prepared(COARSE), &MeshOptions::default(), target)
            .unwrap();
    let last = adaptive.adaptivity.last().unwrap();
    assert!(last.relative_error <= target);
    assert_eq!(last.triangles, adaptive.mesh.triangles.len());
    // The estimate falls from cycle to cycle overall, and the mesh only grows.
    let first = &adaptive.adaptivity[0];
    assert!(first.relative_error > target);
    for w in adaptive.adaptivity.windows(2) {
        assert!(w[1].triangles >= w[0].triangles);
    }
    let ratio = adaptive.mesh.triangles.len() as f64 / uniform_triangles as f64;
    eprintln!(
        "adaptive {} uniform {uniform_triangles} ratio {ratio:.3}",
        adaptive.mesh.triangles.len()
    );
    assert!(
        ratio <= 0.5,
        "adaptive {} vs uniform {uniform_triangles} triangles (ratio {ratio:.2})",
        adaptive.mesh.triangles.len()
    );
    // Quality bounds hold on the adapted mesh, and the energy balance still closes.
    assert!(adaptive.mesh.stats.min_angle_deg >= 28.0 - 1e-9);
    assert!(adaptive.checks_passed());
}

#[test]
fn adaptive_refinement_stops_at_the_triangle_limit_with_a_warning() {
    let opts = MeshOptions {
        max_triangles: 400,
        refine: true,
    };
    let s = xsheat::study::adaptive::solve_adaptive(prepared(COARSE), &opts, 1e-4).unwrap();
    assert!(s.mesh.triangles.len() <= 400);
    assert!(
        s.warnings.iter().any(|w| w.contains("--max-triangles")),
        "{:?}",
        s.warnings
    );
}

#[test]
fn target_error_must_be_a_fraction() {
    for bad in [0.0, -0.1, 1.5, f64::NAN] {
        let e =
            xsheat::study::adaptive::solve_adaptive(prepared(COARSE), &MeshOptions::default(), bad)
                .unwrap_err();
        assert_eq!(e.exit_code(), 2);
    }
}
