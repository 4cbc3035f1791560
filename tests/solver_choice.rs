//! `solve --solver`: the smoothed aggregation AMG path (conjugate gradient preconditioned by
//! multigrid) gives the Cholesky path's temperatures and heat flows to 1e-9 relative and passes
//! the same self-checks; its files do not depend on the thread count; summary.json records the
//! solver.

mod common;

use common::{repo_file, solve_text};
use xsheat::mesh::MeshOptions;
use xsheat::run::{self, CheckStatus, Solved};
use xsheat::solve::SolverChoice;

fn solve(path: &str, refine: f64, solver: SolverChoice) -> Solved {
    let mut p = run::prepare(&repo_file(path)).expect(path);
    p.section.mesh.max_area /= refine;
    p.solver = solver;
    let s = run::solve(p, &MeshOptions::with_max_triangles(2_000_000).unwrap()).expect(path);
    for c in &s.checks {
        assert_ne!(c.status(), CheckStatus::Failed, "{path} {solver:?}: {c:?}");
    }
    s
}

fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
    let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y).powi(2)).sum();
    let n: f64 = b.iter().map(|y| y * y).sum();
    (d / n).sqrt()
}

#[test]
fn amg_gives_the_cholesky_solution() {
    // Reference: the direct solve of the same system. Both stop at a row-wise backward error
    // the solver_residual check accepts (≤ 16·ε·√n for AMG); 1e-9 relative is common practice
    // for "the same solution" of a well-conditioned conduction system.
    for (path, refine) in [
        ("tests/fixtures/l-section.toml", 1.0),
        ("assets/templates/tunnel.toml", 4.0),
        ("assets/templates/wall.toml", 16.0),
        ("geometry/culvert-joint.toml", 4.0),
        ("geometry/wall-junction.toml", 4.0),
    ] {
        let c = solve(path, refine, SolverChoice::Cholesky);
        let a = solve(path, refine, SolverChoice::Amg);
        let (rc, ra) = (c.solver.unwrap(), a.solver.unwrap());
        assert_eq!(
            (rc.used, ra.used),
            (SolverChoice::Cholesky, SolverChoice::Amg)
        );
        assert_eq!(rc.unknowns, ra.unknowns);
        assert!(
            ra.unknowns > xsheat::solve::amg::COARSEST_UNKNOWNS && ra.iterations > 1,
            "{path}: {ra:?} does not exercise the multigrid levels"
        );
        let d = relative_difference(&a.solution.temperature, &c.solution.temperature);
        assert!(d < 1e-9, "{path}: temperatures differ by {d:e}");
        let scale = c
            .results
            .boundaries
            .iter()
            .fold(0.0f64, |m, b| m.max(b.heat_flow.abs()));
        for (x, y) in a.results.boundaries.iter().zip(&c.results.boundaries) {
            assert!(
                (x.heat_flow - y.heat_flow).abs() <= 1e-9 * scale,
                "{path} {}: {} against {}",
                y.name,
                x.heat_flow,
                y.heat_flow
            );
        }
        if let (Some(x), Some(y)) = (&a.coupling, &c.coupling) {
            for (u, v) in x.pairs.iter().zip(&y.pairs) {
                assert!((u.value - v.value).abs() <= 1e-9 * v.value.abs(), "{path}");
            }
        }
    }
}

#[test]
fn auto_takes_cholesky_below_and_amg_from_the_crossover() {
    let n = xsheat::solve::AMG_FROM_UNKNOWNS;
    assert_eq!(SolverChoice::Auto.resolve(n - 1), SolverChoice::Cholesky);
    assert_eq!(SolverChoice::Auto.resolve(n), SolverChoice::Amg);
    assert_eq!(SolverChoice::Cholesky.resolve(n), SolverChoice::Cholesky);
    assert_eq!(SolverChoice::Amg.resolve(10), SolverChoice::Amg);
    let s = solve("tests/fixtures/l-section.toml", 1.0, SolverChoice::Auto);
    assert_eq!(s.solver.unwrap().used, SolverChoice::Cholesky);
    // Models with load cases or environments keep the factorisation under auto, whatever the
    // size; an explicit choice stays.
    let many = SolverChoice::Auto.for_right_hand_sides(true);
    assert_eq!(many.resolve(10 * n), SolverChoice::Cholesky);
    assert_eq!(
        SolverChoice::Auto.for_right_hand_sides(false).resolve(n),
        SolverChoice::Amg
    );
    assert_eq!(
        SolverChoice::Amg.for_right_hand_sides(true),
        SolverChoice::Amg
    );
}

fn summary_without_run(out: &std::path::Path) -> serde_json::Value {
    let text = std::fs::read_to_string(out.join("summary.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
    v.as_object_mut().unwrap().remove("run");
    v
}

#[test]
fn amg_files_are_the_same_whatever_the_thread_count() {
    let model = std::fs::read_to_string(repo_file("assets/templates/tunnel.toml")).unwrap();
    let model = model.replacen("max_area = 0.1  ", "max_area = 0.02 ", 1);
    let (one, _d1, out1) = solve_text(&model, &["--solver", "amg", "--threads", "1"]);
    let (two, _d2, out2) = solve_text(&model, &["--solver", "amg", "--threads", "2"]);
    assert_eq!((one.code, two.code), (0, 0), "{}{}", one.stderr, two.stderr);
    assert!(
        one.stdout.contains("solver: smoothed aggregation AMG"),
        "{}",
        one.stdout
    );
    for f in ["field.vtu", "nodes.csv", "boundaries.csv"] {
        assert_eq!(
            std::fs::read(out1.join(f)).unwrap(),
            std::fs::read(out2.join(f)).unwrap(),
            "{f}"
        );
    }
    let s = summary_without_run(&out1);
    assert_eq!(s, summary_without_run(&out2));
    assert_eq!(s["solver"]["requested"], "amg");
    assert_eq!(s["solver"]["used"], "amg");
    assert!(
        s["solver"]["iterations"].as_u64().unwrap() > 1,
        "{}",
        s["solver"]
    );
}

#[test]
fn unknown_solver_is_refused() {
    let model = std::fs::read_to_string(repo_file("tests/fixtures/l-section.toml")).unwrap();
    let (run, _d, out) = solve_text(&model, &["--solver", "lu"]);
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("--solver lu"), "{}", run.stderr);
    assert!(!out.exists());
}

#[test]
fn amg_on_a_nonlinear_model_is_a_warning() {
    let d = common::tmp();
    let out = d.path().join("out");
    let model = repo_file("geometry/insulated-pipe-duct.toml");
    let run = common::xsheat([
        "solve".as_ref(),
        model.as_os_str(),
        "--out".as_ref(),
        out.as_os_str(),
        "--solver".as_ref(),
        "amg".as_ref(),
    ]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stderr.contains("--solver amg applies to linear models"),
        "{}",
        run.stderr
    );
    assert!(summary_without_run(&out).get("solver").is_none());
}
