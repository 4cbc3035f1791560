fn main() {
    let path = std::env::args().nth(1).unwrap();
    let (_f, s) = xsheat::model::load(std::path::Path::new(&path)).unwrap_or_else(|e| { eprintln!("{e}"); std::process::exit(2) });
    let t = std::time::Instant::now();
    let p = xsheat::geometry::build(&s).unwrap_or_else(|e| { eprintln!("{e}"); std::process::exit(2) });
    println!("pslg {} verts {} pieces, warnings {:?} {:?}", p.vertices.len(), p.pieces.len(), s.warnings, p.warnings);
    let m = xsheat::mesh::build(&s, &p, &Default::default()).unwrap_or_else(|e| { eprintln!("{e}"); std::process::exit(2) });
    println!("{:?} in {:?}", m.stats, t.elapsed());
    println!("tri*maxarea/area = {}", m.stats.triangles as f64 * s.mesh.max_area / m.stats.area);
    let mut counts = std::collections::BTreeMap::new();
    for e in &m.boundary_edges { *counts.entry(e.boundary).or_insert(0.0) += m.edge_length(e); }
    println!("{counts:?}");
    let mut mc = std::collections::BTreeMap::new();
    for (t, &mm) in m.material.iter().enumerate() { *mc.entry(mm).or_insert(0.0) += m.triangle_area(t); }
    println!("{mc:?}");
}
