//! Benchmark of issue 10's adaptive-refinement target: each cycle should cost at most 1.5× a
//! plain solve of a mesh of its size.
//!
//! One invented section (a 20 × 10 m block of two materials with 20 pipes, the `scaling`
//! example's section with a coarse start) is refined adaptively
//! (`study::adaptive::solve_adaptive`, Dörfler marking of the Zienkiewicz–Zhu indicators) to a
//! relative error estimate of 0.5 %. A progress reporter timestamps the start of every cycle
//! (marking, insertion of the new points, extraction, assembly, solve, post-processing and the
//! estimate), so each cycle's wall time is measured inside the one run. For each cycle's
//! triangle count, a plain run of the same section (`run::solve`: mesh from scratch, assemble,
//! solve, post-process) with a uniform size limit giving about as many triangles is timed
//! (median of `REPS`). Prints cycle, triangles, cycle s, plain s (its triangles), and the ratio
//! of the cost per triangle.
//!
//! `cargo run --release --example adaptive_bench [-- REPS]` (default 3). The machine is noisy:
//! compare medians and ratios.
use std::sync::Mutex;
use std::time::Instant;
use xsheat::mesh::MeshOptions;
use xsheat::{model, run, study};

#[path = "common/scaling_section.rs"]
mod scaling_section;
use scaling_section::{area, model_text};

/// Start times of the adaptive cycles (progress stages named "adaptive cycle N").
struct Clock {
    cycles: Mutex<Vec<Instant>>,
}

struct Shared(&'static Clock);

impl xsheat::progress::Reporter for Shared {
    fn stage(&self, name: &str) {
        if name.starts_with("adaptive cycle")
            && let Ok(mut c) = self.0.cycles.lock()
        {
            c.push(Instant::now());
        }
    }
    fn items(&self, _: &str, _: usize, _: usize) {}
    fn done(&self) {}
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let reps: usize = std::env::args().nth(1).map_or(Ok(3), |s| s.parse())?.max(1);
    let clock: &'static Clock = Box::leak(Box::new(Clock {
        cycles: Mutex::new(Vec::new()),
    }));
    xsheat::progress::install(Box::new(Shared(clock)));
    let opts = MeshOptions::with_max_triangles(3_000_000)?;
    let prepared = run::prepare_model(model::parse(&model_text(0.05))?)?;
    let t0 = Instant::now();
    let solved = study::adaptive::solve_adaptive(prepared, &opts, 0.005)?;
    let end = Instant::now();
    let starts = clock.cycles.lock().map(|c| c.clone()).unwrap_or_default();
    let history = &solved.adaptivity;
    println!(
        "first mesh and solve: {} triangles, {:.3} s; {} cycles, final estimate {:.4}",
        history.first().map_or(0, |c| c.triangles),
        starts
            .first()
            .map_or(end, |s| *s)
            .duration_since(t0)
            .as_secs_f64(),
        history.len().saturating_sub(1),
        solved.error_estimate.relative
    );
    println!(
        "| cycle | triangles | cycle_s | plain triangles | plain_s | cycle/plain per triangle |"
    );
    println!("|---|---|---|---|---|---|");
    let area = area();
    for (k, c) in history.iter().enumerate().skip(1) {
        let (Some(&from), to) = (starts.get(k - 1), starts.get(k).copied().unwrap_or(end)) else {
            continue;
        };
        let cycle_s = to.duration_since(from).as_secs_f64();
        let max_area = xsheat::mesh::TRIANGLES_PER_AREA_LIMIT * area / c.triangles as f64;
        let mut times = Vec::new();
        let mut plain_triangles = 0;
        for _ in 0..reps {
            let p = run::prepare_model(model::parse(&model_text(max_area))?)?;
            let t = Instant::now();
            let s = run::solve(p, &opts)?;
            times.push(t.elapsed().as_secs_f64());
            plain_triangles = s.mesh.triangles.len();
        }
        let plain_s = median(times);
        println!(
            "| {k} | {} | {cycle_s:.3} | {plain_triangles} | {plain_s:.3} | {:.2} |",
            c.triangles,
            (cycle_s / c.triangles as f64) / (plain_s / plain_triangles as f64)
        );
    }
    Ok(())
}
