//! Benchmark of the fill-reducing orderings of the sparse Cholesky factorisation on the
//! reduced conduction matrix of the `scaling` example's section (a 20 × 10 m block of two
//! materials with 20 pipes; invented numbers): faer's AMD against our nested dissection
//! (`solve::ordering`). Prints, per mesh size, the factor's stored entries (deterministic: the
//! fill each ordering leaves) and the medians of the factorisation time (ordering, symbolic and
//! numeric; CPU seconds of the process, which noise disturbs less than wall time), of one solve, and the relative residual of both.
//!
//! `cargo run --release --example ordering [-- MAX_TRIANGLES [REPEATS]]` (default 1e6, 3).
//! The machine is noisy: compare medians and ratios.
use std::time::Instant;
use xsheat::solve::{LinearSolver, Ordering, SparseCholesky, factorized::reduced_system};
use xsheat::{fem, mesh::MeshOptions, model, run};

#[path = "common/scaling_section.rs"]
mod scaling_section;
use scaling_section::{area, model_text};

/// CPU seconds of this process (user + system, all threads; /proc/self/stat, Linux), which a
/// busy machine disturbs less than wall time.
fn cpu_s() -> f64 {
    let s = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let after = s.rsplit(')').next().unwrap_or("");
    let f: Vec<f64> = after
        .split_whitespace()
        .map(|x| x.parse().unwrap_or(0.0))
        .collect();
    // Fields 14 and 15 of the line (utime, stime) are 12 and 13 after the command name.
    f.get(11).copied().unwrap_or(0.0) / 100.0 + f.get(12).copied().unwrap_or(0.0) / 100.0
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn residual(k: &sprs::CsMat<f64>, x: &[f64], f: &[f64]) -> f64 {
    let mut r = 0.0;
    for (i, row) in k.outer_iterator().enumerate() {
        let kx: f64 = row.iter().map(|(j, v)| v * x[j]).sum();
        r += (kx - f[i]).powi(2);
    }
    r.sqrt() / f.iter().map(|v| v * v).sum::<f64>().sqrt()
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let max: f64 = args.get(1).map_or(Ok(1e6), |s| s.parse())?;
    let reps: usize = args.get(2).map_or(Ok(3), |s| s.parse())?;
    let area = area();
    println!(
        "| triangles | unknowns | L entries AMD | L entries ND | ND/AMD | factorise AMD cpu s | factorise ND cpu s | ND/AMD | solve AMD s | solve ND s | residual AMD | residual ND |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|");
    let mut target = 3e4;
    while target <= max * 1.0001 {
        let text = model_text(xsheat::mesh::TRIANGLES_PER_AREA_LIMIT * area / target);
        let prepared = run::prepare_model(model::parse(&text)?)?;
        let opts = MeshOptions::with_max_triangles(10 * target as usize)?;
        let mesh = run::mesh(&prepared, &opts)?;
        let system = fem::assemble(&prepared.section, &mesh)?;
        let (free, k, f) = reduced_system(&system)?;
        let xy: Vec<[f64; 2]> = free.iter().map(|&i| mesh.nodes[i]).collect();
        let mut row = Vec::new();
        for ordering in [Ordering::Amd, Ordering::Geometric(&xy)] {
            let (mut fact, mut sol) = (Vec::new(), Vec::new());
            let (mut entries, mut res) = (0, 0.0);
            for _ in 0..reps.max(1) {
                let t = cpu_s();
                let c = SparseCholesky::factorize_with(&k, ordering)?;
                fact.push(cpu_s() - t);
                let mut x = f.clone();
                let t = Instant::now();
                c.solve_in_place(&mut x)?;
                sol.push(t.elapsed().as_secs_f64());
                entries = c.factor_entries();
                res = residual(&k, &x, &f);
            }
            row.push((entries, median(fact), median(sol), res));
        }
        let (a, d) = (row[0], row[1]);
        println!(
            "| {} | {} | {} | {} | {:.3} | {:.3} | {:.3} | {:.2} | {:.3} | {:.3} | {:.1e} | {:.1e} |",
            mesh.triangles.len(),
            k.rows(),
            a.0,
            d.0,
            d.0 as f64 / a.0 as f64,
            a.1,
            d.1,
            d.1 / a.1,
            a.2,
            d.2,
            a.3,
            d.3
        );
        target *= 3.0;
    }
    Ok(())
}
