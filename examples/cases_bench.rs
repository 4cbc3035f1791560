//! Benchmark of the two "many solves" targets: load cases on one factorisation, and a sweep
//! spread over the cores.
//!
//! 1. **Load cases.** One invented section (a 12 × 6 m block of two materials with 8 pipes,
//!    about 10⁵ triangles) solved end to end (mesh → files in memory) with no load case, with
//!    10 cases that change only ambients and fixed temperatures (the base factorisation is
//!    reused), and with 10 cases that change a conductivity (each factorised anew). Prints the
//!    median times and the ratio to the single case (target ≤ 1.5× for the reused cases).
//! 2. **Sweep.** A plan of 24 variants of a small section (about 2·10⁴ triangles each) run by
//!    `study::sweep::run_sweep` with the result files made in memory, on a pool of 1 and of 2
//!    threads. Prints the medians and the speed-up (target ≥ 1.7× on 2 cores).
//!
//! `cargo run --release --example cases_bench [-- REPS]` (default 3). The machine is noisy:
//! compare medians and ratios.
use std::time::Instant;
use xsheat::mesh::MeshOptions;
use xsheat::study::sweep;
use xsheat::{model, output, run};

fn section(max_area: f64) -> String {
    let mut s = format!(
        r#"[mesh]
max_area = {max_area}
[materials.concrete]
conductivity = 1.8
[materials.clay]
conductivity = 1.1
[outline]
material = "concrete"
points = [[0.0, 0.0], [12.0, 0.0], [12.0, 6.0], [0.0, 6.0]]
edges = ["base", "side", "top", "side"]
[[regions]]
material = "clay"
points = [[0.0, 0.0], [12.0, 0.0], [12.0, 2.0], [0.0, 2.0]]
[boundaries.base]
kind = "fixed"
temperature = 8.0
[boundaries.side]
kind = "insulated"
[boundaries.top]
kind = "convection"
h = 12.0
ambient = -5.0
[boundaries.supply]
kind = "fixed"
temperature = 60.0
[boundaries.return]
kind = "fixed"
temperature = 10.0
[[probes]]
name = "mid"
at = [6.0, 4.0]
"#
    );
    for i in 0..4 {
        let x = 1.5 + 3.0 * f64::from(i);
        for (y, name) in [(3.5, "supply"), (4.5, "return")] {
            s.push_str(&format!(
                "[[holes]]\ncircle = {{ center = [{x}, {y}], radius = 0.12 }}\nboundary = \"{name}\"\n"
            ));
        }
    }
    s
}

fn with_cases(base: &str, refactorise: bool) -> String {
    let mut s = base.to_string();
    for i in 0..10 {
        let t = -15.0 + 3.0 * f64::from(i);
        s.push_str(&format!("[[cases]]\nname = \"c{i}\"\n"));
        if refactorise {
            let k = 1.0 + 0.05 * f64::from(i);
            s.push_str(&format!("[cases.materials.clay]\nconductivity = {k}\n"));
        } else {
            s.push_str(&format!(
                "[cases.boundaries.top]\nambient = {t}\n[cases.boundaries.supply]\ntemperature = {}\n",
                55.0 + f64::from(i)
            ));
        }
    }
    s
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Solve and make the file set in memory: total seconds, triangles, the cases stage and the
/// encoding of the files, seconds.
fn solve_once(text: &str) -> Result<(f64, usize, f64, f64), xsheat::Error> {
    let t0 = Instant::now();
    let prepared = run::prepare_model(model::parse(text)?)?;
    let solved = run::solve(prepared, &MeshOptions::default())?;
    let t1 = Instant::now();
    let set = output::solve_files(&solved)?;
    assert!(set.len() > 1);
    Ok((
        t0.elapsed().as_secs_f64(),
        solved.mesh.triangles.len(),
        solved.timings.cases_s,
        t1.elapsed().as_secs_f64(),
    ))
}

fn cases_table(reps: usize) -> Result<(), Box<dyn std::error::Error>> {
    let base = section(12.0 * 6.0 * 1.6 / 1.0e5);
    println!(
        "load cases (one section, end to end with the file set in memory; medians of {reps}):"
    );
    println!("| model | triangles | median_s | cases_s | files_s | ratio to one case |");
    println!("|---|---|---|---|---|---|");
    let mut one = 0.0;
    for (label, text) in [
        ("base case only", base.clone()),
        ("+ 10 cases, factorisation reused", with_cases(&base, false)),
        ("+ 10 cases, each refactorised", with_cases(&base, true)),
    ] {
        let (mut times, mut cases, mut files) = (Vec::new(), Vec::new(), Vec::new());
        let mut triangles = 0;
        for _ in 0..reps {
            let (t, n, c, f) = solve_once(&text)?;
            times.push(t);
            cases.push(c);
            files.push(f);
            triangles = n;
        }
        let m = median(times);
        if one == 0.0 {
            one = m;
        }
        println!(
            "| {label} | {triangles} | {m:.3} | {:.3} | {:.3} | {:.2} |",
            median(cases),
            median(files),
            m / one
        );
    }
    Ok(())
}

fn sweep_table(reps: usize) -> Result<(), Box<dyn std::error::Error>> {
    let dir = tempfile::tempdir()?;
    let model_path = dir.path().join("block.toml");
    std::fs::write(&model_path, section(12.0 * 6.0 * 1.6 / 2.0e4))?;
    let plan_path = dir.path().join("plan.toml");
    std::fs::write(
        &plan_path,
        r#"model = "block.toml"
mode = "grid"
[[parameters]]
key = "materials.clay.conductivity"
values = [0.8, 1.0, 1.2, 1.4, 1.6, 1.8]
[[parameters]]
key = "boundaries.top.h"
values = [6.0, 9.0, 12.0, 15.0]
"#,
    )?;
    let plan = sweep::Plan::load(&plan_path)?;
    let shard = sweep::Shard::parse("1/1")?;
    let opts = MeshOptions::default();
    println!();
    println!(
        "sweep of {} variants (files made in memory; medians of {reps}):",
        plan.variants
    );
    println!("| threads | median_s | speed-up |");
    println!("|---|---|---|");
    let mut one = 0.0;
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()?;
        let mut times = Vec::new();
        for _ in 0..reps {
            let t0 = Instant::now();
            let v = pool.install(|| sweep::run_sweep(&plan, &opts, shard, output::variant_files));
            times.push(t0.elapsed().as_secs_f64());
            assert!(v.iter().all(|x| x.status == sweep::Status::Ok));
        }
        let m = median(times);
        if threads == 1 {
            one = m;
        }
        println!("| {threads} | {m:.3} | {:.2} |", one / m);
    }
    Ok(())
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let reps: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(3);
    cases_table(reps)?;
    sweep_table(reps)?;
    Ok(())
}
