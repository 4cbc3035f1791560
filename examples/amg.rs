//! Benchmark of the two solvers of the reduced conduction matrix on the `scaling` example's
//! section (a 20 × 10 m block of two materials with 20 pipes; invented numbers): sparse
//! Cholesky in geometric nested dissection order (the pipeline's: ordering + factorisation +
//! solve) against conjugate gradient preconditioned by smoothed aggregation AMG
//! (`solve::amg`: setup + solve). Each size and solver runs in a child process of this
//! example, which meshes and assembles once, then times REPEATS solves (wall time; medians).
//! The solver's memory is the growth of the resident set during its first run (VmHWM after,
//! reset by /proc/self/clear_refs, minus VmRSS before; Linux). Both stop at the accuracy the
//! pipeline's `solver_residual` self-check accepts; the table shows each one's row-wise
//! backward error `max_i |r_i| / (Σ_j|K_ij|·‖T‖∞ + |f_i|)` and the check's tolerance 64·ε·√n.
//!
//! `cargo run --release --example amg [-- MAX_TRIANGLES [REPEATS]]` (default 2e6, 3). The
//! machine is noisy: compare medians and ratios.
use std::process::Command;
use std::time::Instant;
use xsheat::solve::{
    AmgSolver, LinearSolver, Ordering, SparseCholesky, factorized::reduced_system,
};
use xsheat::{fem, mesh::MeshOptions, model, run};

#[path = "common/scaling_section.rs"]
mod scaling_section;
use scaling_section::{area, model_text};

/// A field of /proc/self/status in MiB.
fn status_mib(key: &str) -> f64 {
    let s = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    s.lines()
        .find(|l| l.starts_with(key))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse::<f64>().ok())
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Row-wise backward error of `k·x = f` (the `solver_residual` measure on the reduced rows).
fn backward_error(k: &sprs::CsMat<f64>, x: &[f64], f: &[f64]) -> f64 {
    let x_norm = x.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut e = 0.0f64;
    for (i, row) in k.outer_iterator().enumerate() {
        let (mut kx, mut s) = (0.0, 0.0);
        for (j, v) in row.iter() {
            kx += v * x[j];
            s += v.abs();
        }
        e = e.max((kx - f[i]).abs() / (s * x_norm + f[i].abs()));
    }
    e
}

/// One size and solver; prints `triangles unknowns setup_s solve_s total_s memory_mib
/// iterations backward_error detail`.
fn child(target: f64, solver: &str, reps: usize) -> Result<(), Box<dyn std::error::Error>> {
    let area = area();
    let text = model_text(xsheat::mesh::TRIANGLES_PER_AREA_LIMIT * area / target);
    let prepared = run::prepare_model(model::parse(&text)?)?;
    let opts = MeshOptions::with_max_triangles(10 * target as usize)?;
    let mesh = run::mesh(&prepared, &opts)?;
    let triangles = mesh.triangles.len();
    let system = fem::assemble(&prepared.section, &mesh)?;
    let (free, k, f) = reduced_system(&system)?;
    let xy: Vec<[f64; 2]> = free.iter().map(|&i| mesh.nodes[i]).collect();
    drop((system, mesh, prepared));
    let (mut setup, mut solve, mut memory) = (Vec::new(), Vec::new(), f64::NAN);
    let (mut iterations, mut error, mut detail) = (0, 0.0, String::new());
    for rep in 0..reps.max(1) {
        let before = status_mib("VmRSS:");
        if rep == 0 {
            // Resets VmHWM to the current resident set (Linux ≥ 4.0).
            let _ = std::fs::write("/proc/self/clear_refs", "5");
        }
        let mut x = f.clone();
        let t0 = Instant::now();
        let t1;
        if solver == "amg" {
            let s = AmgSolver::new(&k)?;
            t1 = Instant::now();
            s.solve_in_place(&mut x)?;
            iterations = s.last_iterations();
            detail = format!(
                "levels {:?}, stored entries {:.2}·nnz(K)",
                s.level_sizes(),
                s.stored_entries() as f64 / k.nnz() as f64
            );
        } else {
            let s = SparseCholesky::factorize_with(&k, Ordering::Geometric(&xy))?;
            t1 = Instant::now();
            s.solve_in_place(&mut x)?;
            iterations = 1;
            detail = format!(
                "factor entries {:.2}·nnz(K)",
                s.factor_entries() as f64 / k.nnz() as f64
            );
        }
        let t2 = Instant::now();
        if rep == 0 {
            memory = status_mib("VmHWM:") - before;
        }
        setup.push((t1 - t0).as_secs_f64());
        solve.push((t2 - t1).as_secs_f64());
        error = backward_error(&k, &x, &f);
    }
    let total: Vec<f64> = setup.iter().zip(&solve).map(|(a, b)| a + b).collect();
    println!(
        "{triangles} {} {} {} {} {memory} {iterations} {error} {detail}",
        k.rows(),
        median(setup),
        median(solve),
        median(total)
    );
    Ok(())
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("--child") {
        return child(args[2].parse()?, &args[3], args[4].parse()?);
    }
    let max: f64 = args.get(1).map_or(Ok(2e6), |s| s.parse())?;
    let reps: usize = args.get(2).map_or(Ok(3), |s| s.parse())?;
    let exe = std::env::current_exe()?;
    println!(
        "| triangles | unknowns | Cholesky s (order+factor / solve) | AMG-PCG s (setup / solve) | AMG/Cholesky time | Cholesky MiB | AMG MiB | AMG/Cholesky memory | PCG iterations | backward error Cholesky / AMG (check allows) |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|");
    let mut details = Vec::new();
    for target in [1e5, 3e5, 1e6, 2e6] {
        if target > max * 1.0001 {
            break;
        }
        let mut row: Vec<Vec<String>> = Vec::new();
        for solver in ["cholesky", "amg"] {
            let o = Command::new(&exe)
                .args(["--child", &target.to_string(), solver, &reps.to_string()])
                .output()?;
            if !o.status.success() {
                return Err(String::from_utf8_lossy(&o.stderr).into_owned().into());
            }
            let line = String::from_utf8_lossy(&o.stdout).trim().to_string();
            row.push(line.splitn(9, ' ').map(str::to_string).collect());
        }
        let (c, a) = (&row[0], &row[1]);
        let num = |v: &[String], i: usize| v[i].parse::<f64>().unwrap_or(f64::NAN);
        let n = num(c, 1);
        println!(
            "| {} | {} | {:.3} ({:.3} / {:.3}) | {:.3} ({:.3} / {:.3}) | {:.2} | {:.0} | {:.0} | {:.2} | {} | {:.1e} / {:.1e} ({:.1e}) |",
            c[0],
            c[1],
            num(c, 4),
            num(c, 2),
            num(c, 3),
            num(a, 4),
            num(a, 2),
            num(a, 3),
            num(a, 4) / num(c, 4),
            num(c, 5),
            num(a, 5),
            num(a, 5) / num(c, 5),
            a[6],
            num(c, 7),
            num(a, 7),
            64.0 * f64::EPSILON * n.sqrt()
        );
        details.push(format!("{}: Cholesky {}; AMG {}", c[0], c[8], a[8]));
    }
    for d in details {
        println!("{d}");
    }
    Ok(())
}
