//! Writes the segment set of a model (the geometry stage's output, exactly what the mesher
//! triangulates) as a Triangle `.poly` file, with one hole point per hole of the section and the
//! mesh limits as a comment and on stdout (`q<min_angle> a<max_area>`), for comparing the mesh
//! stage with the `triangle` package (`bench/compare_solvers.py`).
//!
//! `cargo run --release --example export_poly -- MODEL.toml OUT.poly`
use std::fmt::Write as _;
use xsheat::geom;

/// A point strictly inside the ring: its vertex centroid if inside, else the centroid of the
/// first corner triangle that is.
fn inside_point(points: &[[f64; 2]]) -> Option<[f64; 2]> {
    let n = points.len() as f64;
    let c = points
        .iter()
        .fold([0.0, 0.0], |a, p| [a[0] + p[0] / n, a[1] + p[1] / n]);
    if geom::point_in_ring(points, c) {
        return Some(c);
    }
    (0..points.len()).find_map(|i| {
        let [a, b, d] = [0, 1, 2].map(|k| points[(i + k) % points.len()]);
        let g = [(a[0] + b[0] + d[0]) / 3.0, (a[1] + b[1] + d[1]) / 3.0];
        geom::point_in_ring(points, g).then_some(g)
    })
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let (Some(model), Some(out)) = (args.get(1), args.get(2)) else {
        return Err("usage: export_poly MODEL.toml OUT.poly".into());
    };
    let p = xsheat::run::prepare(std::path::Path::new(model))?;
    let (pslg, s) = (&p.pslg, &p.section);
    let mut text = String::new();
    let limits = format!("q{} a{:e}", s.mesh.min_angle, s.mesh.max_area);
    writeln!(
        text,
        "# xsheat segment set of {model}; Triangle switches: p{limits}"
    )?;
    writeln!(text, "{} 2 0 0", pslg.vertices.len())?;
    for (i, v) in pslg.vertices.iter().enumerate() {
        writeln!(text, "{} {:e} {:e}", i + 1, v[0], v[1])?;
    }
    writeln!(text, "{} 0", pslg.pieces.len())?;
    for (i, piece) in pslg.pieces.iter().enumerate() {
        writeln!(text, "{} {} {}", i + 1, piece.v[0] + 1, piece.v[1] + 1)?;
    }
    let holes: Vec<[f64; 2]> = s
        .holes
        .iter()
        .filter_map(|h| inside_point(&h.points))
        .collect();
    writeln!(text, "{}", holes.len())?;
    for (i, h) in holes.iter().enumerate() {
        writeln!(text, "{} {:e} {:e}", i + 1, h[0], h[1])?;
    }
    std::fs::write(out, text)?;
    println!("{limits}");
    Ok(())
}
