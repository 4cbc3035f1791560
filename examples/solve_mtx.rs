//! Times xsheat's sparse Cholesky (the solver of `xsheat solve`) on a system exported by
//! `xsheat solve --export-matrix DIR`: reads `DIR/K.mtx` and `DIR/f.mtx`, factorises and
//! solves REPEATS times and prints the medians, the relative residual and, with OUT, writes the
//! solution as little-endian f64 (for `bench/compare_solvers.py`).
//!
//! The factorisation is ordered as `xsheat solve` orders it: by the geometric nested dissection
//! of the free nodes' coordinates read from `DIR/free_nodes.csv` (`row,node,x_m,y_m`); when
//! that file is missing, by AMD (printed).
//!
//! `cargo run --release --example solve_mtx -- DIR [REPEATS] [OUT]`
use std::time::Instant;
use xsheat::solve::{LinearSolver, Ordering, SparseCholesky};

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// f.mtx (`array real general`, one column).
fn read_vector(text: &str) -> Vec<f64> {
    let mut lines = text.lines().filter(|l| !l.starts_with('%'));
    let n: usize = lines
        .next()
        .and_then(|l| l.split_whitespace().next())
        .and_then(|s| s.parse().ok())
        .expect("f.mtx: size line");
    let v: Vec<f64> = lines
        .map(|l| l.trim().parse().expect("f.mtx: a number"))
        .collect();
    assert_eq!(v.len(), n, "f.mtx: {} values for size {n}", v.len());
    v
}

/// Coordinates per matrix row from free_nodes.csv, if the file is there.
fn free_node_coordinates(
    dir: &std::path::Path,
) -> Result<Option<Vec<[f64; 2]>>, Box<dyn std::error::Error>> {
    let path = dir.join("free_nodes.csv");
    if !path.exists() {
        return Ok(None);
    }
    let mut reader = csv::Reader::from_path(path)?;
    let mut xy = Vec::new();
    for record in reader.records() {
        let r = record?;
        xy.push([r[2].parse::<f64>()?, r[3].parse::<f64>()?]);
    }
    Ok(Some(xy))
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let dir = std::path::PathBuf::from(args.get(1).ok_or("usage: solve_mtx DIR [REPEATS] [OUT]")?);
    let repeats: usize = args.get(2).map_or(Ok(5), |s| s.parse())?;
    let t = Instant::now();
    let k = sprs::io::read_matrix_market::<f64, usize, _>(dir.join("K.mtx"))?.to_csr::<usize>();
    let f = read_vector(&std::fs::read_to_string(dir.join("f.mtx"))?);
    let xy = free_node_coordinates(&dir)?;
    let read_s = t.elapsed().as_secs_f64();
    let ordering = match &xy {
        Some(xy) if xy.len() == k.rows() => Ordering::Geometric(xy),
        _ => Ordering::Amd,
    };
    println!(
        "ordering {ordering_name}",
        ordering_name = if matches!(ordering, Ordering::Amd) {
            "AMD (no free_nodes.csv)"
        } else {
            "geometric nested dissection"
        }
    );
    let (mut fact, mut sol, mut x) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..repeats.max(1) {
        let t = Instant::now();
        let c = SparseCholesky::factorize_with(&k, ordering)?;
        fact.push(t.elapsed().as_secs_f64());
        let t = Instant::now();
        x = f.clone();
        c.solve_in_place(&mut x)?;
        sol.push(t.elapsed().as_secs_f64());
    }
    let kx = &k * &sprs::CsVec::new(x.len(), (0..x.len()).collect(), x.clone());
    let mut r = vec![0.0; f.len()];
    for (i, v) in kx.iter() {
        r[i] = *v;
    }
    let norm = |v: &[f64]| v.iter().map(|a| a * a).sum::<f64>().sqrt();
    let diff: Vec<f64> = r.iter().zip(&f).map(|(a, b)| a - b).collect();
    let total: Vec<f64> = fact.iter().zip(&sol).map(|(a, b)| a + b).collect();
    println!(
        "unknowns {} nonzeros {} read_s {read_s:.3}",
        k.rows(),
        k.nnz()
    );
    println!(
        "xsheat_cholesky factorize_s {:.4} solve_s {:.4} total_s {:.4} repeats {} residual {:.3e}",
        median(fact),
        median(sol),
        median(total),
        repeats.max(1),
        norm(&diff) / norm(&f)
    );
    if let Some(out) = args.get(3) {
        let bytes: Vec<u8> = x.iter().flat_map(|v| v.to_le_bytes()).collect();
        std::fs::write(out, bytes)?;
    }
    Ok(())
}
