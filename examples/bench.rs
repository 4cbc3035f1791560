//! Benchmark: time per pipeline stage for a sequence of mesh sizes on an invented section (a
//! slab with two pipes and a layer), medians of repeated runs. Run with
//! `cargo run --release --example bench [-- MAX_TRIANGLES]`; the machine is noisy, so compare
//! medians and ratios, not single numbers.
use std::time::Instant;
use xsheat::{fem, mesh::MeshOptions, post, run, solve};

const MODEL: &str = r#"
[materials.soil]
conductivity = 1.5
[materials.layer]
conductivity = 0.9
[outline]
material = "soil"
points = [[0.0, 0.0], [10.0, 0.0], [10.0, 6.0], [0.0, 6.0]]
edges = ["base", "side", "top", "side"]
[[regions]]
material = "layer"
points = [[0.0, 3.0], [10.0, 3.0], [10.0, 4.0], [0.0, 4.0]]
[[holes]]
circle = { center = [4.0, 2.0], radius = 0.3 }
boundary = "pipe"
[[holes]]
circle = { center = [6.0, 2.0], radius = 0.3 }
boundary = "pipe"
[boundaries.base]
kind = "fixed"
temperature = 10.0
[boundaries.side]
kind = "insulated"
[boundaries.top]
kind = "convection"
h = 15.0
ambient = -2.0
[boundaries.pipe]
kind = "fixed"
temperature = 70.0
"#;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() -> Result<(), xsheat::Error> {
    let max: f64 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1.0e6);
    println!(
        "{:>10} {:>8} {:>10} {:>10} {:>10} {:>10} {:>10} {:>12}",
        "triangles",
        "repeats",
        "mesh_s",
        "assemble_s",
        "solve_s",
        "post_s",
        "total_s",
        "us_per_tri"
    );
    let mut target = 1.0e4;
    while target <= max * 1.0001 {
        let area = 60.0 - 2.0 * std::f64::consts::PI * 0.09;
        let text = MODEL.replace(
            "[materials.soil]",
            &format!(
                "[mesh]\nmax_area = {}\n[materials.soil]",
                2.2 * area / target
            ),
        );
        let prepared = run::prepare_model(xsheat::model::parse(&text)?)?;
        let repeats = if target < 2e5 { 5 } else { 3 };
        let mut t = vec![Vec::new(); 4];
        let mut n = 0;
        for _ in 0..repeats {
            let t0 = Instant::now();
            let m = run::mesh(&prepared, &MeshOptions::default())?;
            let t1 = Instant::now();
            let sys = fem::assemble(&prepared.section, &m)?;
            let t2 = Instant::now();
            let sol = solve::solve_system(&sys)?;
            let t3 = Instant::now();
            let _ = post::postprocess(&prepared.section, &m, &sys, &sol)?;
            let t4 = Instant::now();
            for (k, d) in [(0, t1 - t0), (1, t2 - t1), (2, t3 - t2), (3, t4 - t3)] {
                t[k].push(d.as_secs_f64());
            }
            n = m.triangles.len();
        }
        let med: Vec<f64> = t.into_iter().map(median).collect();
        let total: f64 = med.iter().sum();
        println!(
            "{n:>10} {repeats:>8} {:>10.4} {:>10.4} {:>10.4} {:>10.4} {total:>10.4} {:>12.3}",
            med[0],
            med[1],
            med[2],
            med[3],
            1e6 * total / n as f64
        );
        target *= 10.0;
    }
    Ok(())
}
