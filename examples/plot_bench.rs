//! Benchmark of the field picture's heavy parts on an invented 1M-triangle mesh (a 1000 × 500
//! cell strip of 20 m × 10 m, each cell split in two, T = 10·sin(x/3) + y): the raster (our
//! scan conversion with per-pixel linear interpolation) at 1600 × 1000 px and the isotherms
//! (marching triangles, 8–15 levels). Budget: under 1 s for the raster and 2 s for the
//! isotherms on one core. `cargo run --release --example plot_bench`.

use std::time::Instant;
use xsheat::mesh::{Mesh, MeshStats};
use xsheat::output::plot::raster::{Frame, field_raster};
use xsheat::post::isotherms::{isotherms, round_levels};

fn strip(nx: usize, ny: usize, w: f64, h: f64) -> Mesh {
    let id = |i: usize, j: usize| j * (nx + 1) + i;
    let mut nodes = Vec::with_capacity((nx + 1) * (ny + 1));
    for j in 0..=ny {
        for i in 0..=nx {
            nodes.push([w * i as f64 / nx as f64, h * j as f64 / ny as f64]);
        }
    }
    let mut triangles = Vec::with_capacity(2 * nx * ny);
    for j in 0..ny {
        for i in 0..nx {
            triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
            triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
    }
    let n = triangles.len();
    Mesh {
        nodes,
        material: vec![0; n],
        triangles,
        boundary_edges: Vec::new(),
        interfaces: Vec::new(),
        stats: MeshStats {
            nodes: 0,
            triangles: n,
            boundary_edges: 0,
            min_angle_deg: 45.0,
            min_angle_away_from_small_input_angles_deg: 45.0,
            max_area: 0.0,
            min_area: 0.0,
            worst_triangle: 0,
            worst_triangle_centroid: [0.0, 0.0],
            small_input_angles: Vec::new(),
            area: w * h,
        },
    }
}

fn main() {
    let mesh = strip(1000, 500, 20.0, 10.0);
    let t: Vec<f64> = mesh
        .nodes
        .iter()
        .map(|p| 10.0 * (p[0] / 3.0).sin() + p[1])
        .collect();
    let (lo, hi) = t
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let frame = Frame {
        x0: 0.0,
        y0: 10.0,
        scale: 1600.0 / 20.0,
        width: 1600,
        height: 800,
    };
    println!("triangles: {}", mesh.triangles.len());
    let mut raster_s = Vec::new();
    let mut iso_s = Vec::new();
    for _ in 0..3 {
        let t0 = Instant::now();
        let pm = field_raster(&mesh, &t, &frame, lo, hi).expect("raster");
        raster_s.push(t0.elapsed().as_secs_f64());
        assert_eq!(pm.width(), 1600);
        let t0 = Instant::now();
        let (_, levels) = round_levels(lo, hi);
        let iso = isotherms(&mesh, &t, &levels);
        iso_s.push(t0.elapsed().as_secs_f64());
        assert!(!iso.is_empty());
    }
    raster_s.sort_by(f64::total_cmp);
    iso_s.sort_by(f64::total_cmp);
    println!(
        "raster 1600x800 px: median {:.3} s (budget 1 s)",
        raster_s[1]
    );
    println!("isotherms: median {:.3} s (budget 2 s)", iso_s[1]);
}
