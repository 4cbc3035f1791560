//! Mesh-stage breakdown: the `scaling` example's section (a 20 × 10 m block of two materials
//! with 20 pipes; invented numbers) meshed at a few sizes, with the median time of each pass of
//! the mesh stage: the segment set and spade's bulk-loaded constrained Delaunay triangulation
//! (`cdt`), spade's refinement (`refine`), and our passes (`classify`, `scan`: size estimate and
//! size/angle scans, `insert`, `extract` with the Morton renumbering, `stats`, `contact`).
//! `stage/refine` is the whole stage over spade's refinement alone, `ours%` the share of the
//! stage spent in our passes after the triangulation (everything but `cdt` and `refine`).
//!
//! `spare%` counts the triangulation's vertices that the mesh does not keep (frame, holes,
//! outside), per kept node.
//!
//! `cargo run --release --example mesh_stages [-- MAX_TRIANGLES [REPEATS]]` (defaults 1e6, 3);
//! `cargo run --release --example mesh_stages -- --model FILE [REPEATS]` meshes a model file
//! as written instead.
//! The machine is noisy: compare medians and ratios. A hash of each mesh goes to stderr (one
//! value when every repetition made the same mesh).
use std::time::Instant;
use xsheat::{mesh, model, run};

#[path = "common/scaling_section.rs"]
mod section;
use section::{area, model_text};

/// FNV-1a hash of the mesh's nodes, triangles, materials and boundary edges (to show the mesh
/// is the same byte for byte from run to run and before and after a change).
fn mesh_hash(m: &mesh::Mesh) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    let mut eat = |x: u64| {
        for b in x.to_le_bytes() {
            h = (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
        }
    };
    for p in &m.nodes {
        eat(p[0].to_bits());
        eat(p[1].to_bits());
    }
    for (t, &mat) in m.triangles.iter().zip(&m.material) {
        t.iter().for_each(|&v| eat(v as u64));
        eat(mat as u64);
    }
    for e in &m.boundary_edges {
        e.nodes.iter().for_each(|&v| eat(v as u64));
        eat(e.boundary.map_or(u64::MAX, |b| b as u64));
        eat(e.triangle as u64);
        eat(e.segment as u64);
    }
    h
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let model_file = (args.get(1).map(String::as_str) == Some("--model")).then(|| args[2].clone());
    let skip = if model_file.is_some() { 1 } else { 0 };
    let max: f64 = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(1.0e6);
    let reps: usize = args
        .get(2 + skip)
        .and_then(|s| s.parse().ok())
        .unwrap_or(3)
        .max(1);
    let head = [
        "triangles",
        "reps",
        "cdt_s",
        "refine_s",
        "classify_s",
        "scan_s",
        "insert_s",
        "extract_s",
        "stats_s",
        "contact_s",
        "stage_s",
        "wall_s",
        "stage/refine",
        "ours%",
        "spare%",
    ];
    println!("| {} |", head.join(" | "));
    println!("|{}", "---|".repeat(head.len()));
    let sizes: Vec<f64> = match model_file {
        Some(_) => vec![0.0],
        None => [1.0e5, 3.0e5, 1.0e6, 2.0e6]
            .into_iter()
            .filter(|&t| t <= max * 1.0001)
            .collect(),
    };
    for target in sizes {
        let (prepared, opts) = match &model_file {
            Some(f) => (
                run::prepare(std::path::Path::new(f))?,
                mesh::MeshOptions::with_max_triangles(mesh::MAX_TRIANGLES_LIMIT)?,
            ),
            None => {
                let text = model_text(mesh::TRIANGLES_PER_AREA_LIMIT * area() / target);
                (
                    run::prepare_model(model::parse(&text)?)?,
                    mesh::MeshOptions::with_max_triangles(10 * target as usize)?,
                )
            }
        };
        let mut cols: Vec<Vec<f64>> = vec![Vec::new(); head.len() - 2];
        let mut triangles = 0;
        let mut hashes = Vec::new();
        let mut angles = (0.0, 0.0);
        for _ in 0..reps {
            let t0 = Instant::now();
            let mut m = mesh::Mesher::new(&prepared.section, &prepared.pslg, &opts)?;
            m.refine(None, &[])?;
            let (mesh, t) = m.mesh_timed()?;
            let wall = t0.elapsed().as_secs_f64();
            let spare = m.triangulation_vertices() as f64 / mesh.nodes.len() as f64 - 1.0;
            drop(m);
            triangles = mesh.triangles.len();
            hashes.push(mesh_hash(&mesh));
            angles = (
                mesh.stats.min_angle_deg,
                mesh.stats.min_angle_away_from_small_input_angles_deg,
            );
            let ours = t.total_s() - t.cdt_s - t.refine_s;
            let row = [
                t.cdt_s,
                t.refine_s,
                t.classify_s,
                t.scan_s,
                t.insert_s,
                t.extract_s,
                t.stats_s,
                t.contact_s,
                t.total_s(),
                wall,
                t.total_s() / t.refine_s,
                100.0 * ours / t.total_s(),
                100.0 * spare,
            ];
            for (c, v) in cols.iter_mut().zip(row) {
                c.push(v);
            }
        }
        let m: Vec<String> = cols
            .into_iter()
            .map(|c| format!("{:.3}", median(c)))
            .collect();
        println!("| {triangles} | {reps} | {} |", m.join(" | "));
        hashes.dedup();
        let hashes: Vec<String> = hashes.iter().map(|h| format!("{h:016x}")).collect();
        eprintln!(
            "{triangles} triangles: mesh hash {}, min angle {:.3}° ({:.3}° away from small input angles)",
            hashes.join(" "),
            angles.0,
            angles.1
        );
    }
    Ok(())
}
