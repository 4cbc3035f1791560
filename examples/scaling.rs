//! Scaling benchmark: one parameterised section of our own (a 20 × 10 m block of two
//! materials with 20 pipes; invented numbers) meshed from 10⁴ up to 2·10⁶ triangles and run end
//! to end (parse → mesh → assemble → solve → post → the `solve` file set written into a
//! temporary directory). Each size runs in a child process of this example, so the peak RSS
//! (VmHWM) is that size's own. Prints triangles, nodes, the median time per stage, total, peak
//! RSS, bytes per triangle and the growth exponent of the total.
//!
//! `cargo run --release --example scaling [-- MAX_TRIANGLES [SOLVER]]` (default 2e6, `auto`;
//! SOLVER as `solve --solver`: auto, cholesky, amg). The machine is noisy: compare medians and
//! ratios.
use std::process::Command;
use std::time::Instant;
use xsheat::{model, output, run};

#[path = "common/scaling_section.rs"]
mod section;
use section::{area, model_text};

/// VmHWM of this process, MiB.
fn peak_rss_mib() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let l = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = l.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

/// One end-to-end run; prints `triangles nodes parse mesh assemble solve post write total rss`.
fn child(target: f64, solver: &str) -> Result<(), xsheat::Error> {
    let dir = tempfile::tempdir().map_err(|e| xsheat::Error::run(e.to_string()))?;
    let out = dir.path().join("result");
    let t0 = Instant::now();
    let text = model_text(xsheat::mesh::TRIANGLES_PER_AREA_LIMIT * area() / target);
    let mut prepared = run::prepare_model(model::parse(&text)?)?;
    prepared.solver = xsheat::solve::SolverChoice::parse(solver)?;
    let t1 = Instant::now();
    let opts = xsheat::mesh::MeshOptions::with_max_triangles(10 * target as usize)?;
    let solved = run::solve(prepared, &opts)?;
    let t2 = Instant::now();
    let mut rd = output::ResultDir::check(&out, &[])?;
    rd.commit(&output::solve_files(&solved)?)?;
    let t3 = Instant::now();
    let t = &solved.timings;
    println!(
        "{} {} {} {} {} {} {} {} {} {}",
        solved.mesh.triangles.len(),
        solved.mesh.nodes.len(),
        (t1 - t0).as_secs_f64(),
        t.mesh_s,
        t.assemble_s,
        t.solve_s,
        t.post_s,
        (t3 - t2).as_secs_f64(),
        (t3 - t0).as_secs_f64(),
        peak_rss_mib().unwrap_or(f64::NAN)
    );
    Ok(())
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    // As the command-line tool does (src/alloc.rs): peak memory as a user sees it.
    xsheat::alloc::fix_mmap_threshold();
    let args: Vec<String> = std::env::args().collect();
    if args.get(1).map(String::as_str) == Some("--child") {
        let solver = args.get(3).map_or("auto", String::as_str);
        return Ok(child(args[2].parse()?, solver)?);
    }
    let max: f64 = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(2.0e6);
    let solver = args.get(2).map_or("auto", String::as_str);
    let exe = std::env::current_exe()?;
    let head = [
        "triangles",
        "nodes",
        "reps",
        "parse_s",
        "mesh_s",
        "assemble_s",
        "solve_s",
        "post_s",
        "write_s",
        "total_s",
        "rss_mib",
        "B/tri",
        "exp",
    ];
    println!("| {} |", head.join(" | "));
    println!("|{}", "---|".repeat(head.len()));
    let mut rows: Vec<(f64, f64)> = Vec::new();
    let sizes = [1.0e4, 3.0e4, 1.0e5, 3.0e5, 1.0e6, 2.0e6];
    for target in sizes.into_iter().filter(|&t| t <= max * 1.0001) {
        let reps = if target < 1.5e5 {
            5
        } else if target < 5e5 {
            3
        } else {
            1
        };
        let mut cols: Vec<Vec<f64>> = vec![Vec::new(); 10];
        for _ in 0..reps {
            let o = Command::new(&exe)
                .args(["--child", &target.to_string(), solver])
                .output()?;
            if !o.status.success() {
                return Err(String::from_utf8_lossy(&o.stderr).into_owned().into());
            }
            let line = String::from_utf8_lossy(&o.stdout);
            for (c, v) in cols.iter_mut().zip(line.split_whitespace()) {
                c.push(v.parse()?);
            }
        }
        let m: Vec<f64> = cols.into_iter().map(median).collect();
        let exp = rows.last().map_or(String::from("–"), |&(n0, t0)| {
            format!("{:.2}", (m[8] / t0).ln() / (m[0] / n0).ln())
        });
        println!(
            "| {} | {} | {reps} | {:.3} | {:.3} | {:.3} | {:.3} | {:.3} | {:.3} | {:.3} | {:.0} | {:.0} | {exp} |",
            m[0],
            m[1],
            m[2],
            m[3],
            m[4],
            m[5],
            m[6],
            m[7],
            m[8],
            m[9],
            m[9] * 1024.0 * 1024.0 / m[0]
        );
        rows.push((m[0], m[8]));
    }
    if let (Some(&(n0, t0)), Some(&(n1, t1))) = (rows.first(), rows.last()) {
        println!(
            "growth of the total from {n0} to {n1} triangles: N^{:.3}",
            (t1 / t0).ln() / (n1 / n0).ln()
        );
    }
    Ok(())
}
