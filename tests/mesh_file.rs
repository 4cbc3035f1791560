//! `solve --mesh`: a mesh made elsewhere. The round trip `mesh --out m.vtu` → `solve --mesh
//! m.vtu` (and with `--mesh-boundary` the solve's own boundary.vtp) gives the same temperatures
//! and heat flows; a hand-written grid with a clockwise triangle solves a slab exactly; every bad
//! mesh exits 2 naming its item and writes nothing.

mod common;

use common::{repo_file, tmp, write, xsheat};
use std::path::Path;

/// Temperatures of nodes.csv, by row.
fn temperatures(dir: &Path) -> Vec<f64> {
    let mut r = csv::Reader::from_path(dir.join("nodes.csv")).expect("nodes.csv");
    let col = r
        .headers()
        .expect("header")
        .iter()
        .position(|h| h == "temperature_c")
        .expect("temperature_c column");
    r.records()
        .map(|rec| rec.expect("row")[col].parse().expect("number"))
        .collect()
}

fn summary(dir: &Path) -> serde_json::Value {
    serde_json::from_slice(&std::fs::read(dir.join("summary.json")).expect("summary"))
        .expect("json")
}

fn run(args: &[&dyn AsRef<std::ffi::OsStr>]) -> common::Run {
    xsheat(args.iter().map(|a| a.as_ref()))
}

#[test]
fn round_trip_through_mesh_vtu_gives_the_same_field() {
    let model = repo_file("geometry/cable-tunnel.toml");
    let d = tmp();
    let m = d.path().join("m.vtu");
    let o = run(&[&"mesh", &model, &"--out", &m]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    let (a, b, c) = (d.path().join("a"), d.path().join("b"), d.path().join("c"));
    assert_eq!(run(&[&"solve", &model, &"--out", &a]).code, 0);
    let o = run(&[&"solve", &model, &"--out", &b, &"--mesh", &m]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    let vtp = a.join("boundary.vtp");
    let o = run(&[
        &"solve",
        &model,
        &"--out",
        &c,
        &"--mesh",
        &m,
        &"--mesh-boundary",
        &vtp,
    ]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    let ta = temperatures(&a);
    for dir in [&b, &c] {
        let tb = temperatures(dir);
        assert_eq!(ta.len(), tb.len());
        let worst = ta
            .iter()
            .zip(&tb)
            .map(|(x, y)| (x - y).abs())
            .fold(0.0, f64::max);
        assert!(worst <= 1e-12, "{}: {worst}", dir.display());
        let (sa, sb) = (summary(&a), summary(dir));
        for (x, y) in sa["boundaries"]
            .as_array()
            .unwrap()
            .iter()
            .zip(sb["boundaries"].as_array().unwrap())
        {
            assert_eq!(x["name"], y["name"]);
            let (qa, qb) = (
                x["heat_flow_w_per_m"].as_f64().unwrap(),
                y["heat_flow_w_per_m"].as_f64().unwrap(),
            );
            assert!((qa - qb).abs() <= 1e-12 * qa.abs().max(1.0), "{qa} {qb}");
        }
        assert_eq!(sb["mesh_file"]["mesh"], m.display().to_string());
    }
    assert!(summary(&a).get("mesh_file").is_none());
    assert_eq!(
        summary(&c)["mesh_file"]["boundary"],
        vtp.display().to_string()
    );
}

/// A 1 m × 1 m slab, k = 2 W/(m·K), 0 °C at x = 0 and 10 °C at x = 1, top and bottom insulated.
const SLAB: &str = r#"
[materials.a]
conductivity = 2.0
[outline]
material = "a"
points = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = ["", "warm", "", "cold"]
[boundaries.warm]
kind = "fixed"
temperature = 10.0
[boundaries.cold]
kind = "fixed"
temperature = 0.0
[[probes]]
name = "p"
at = [0.25, 0.5]
"#;

/// A VTK XML unstructured grid in ASCII with these points, cells (connectivity, offsets,
/// types) and material ids.
fn vtu(
    points: &[[f64; 3]],
    conn: &[usize],
    offsets: &[usize],
    types: &[u8],
    mat: &[i64],
) -> String {
    let j = |v: Vec<String>| v.join(" ");
    format!(
        r#"<?xml version="1.0"?>
<VTKFile type="UnstructuredGrid" version="0.1" byte_order="LittleEndian">
<UnstructuredGrid><Piece NumberOfPoints="{}" NumberOfCells="{}">
<Points><DataArray type="Float64" NumberOfComponents="3" format="ascii">{}</DataArray></Points>
<Cells>
<DataArray type="Int64" Name="connectivity" format="ascii">{}</DataArray>
<DataArray type="Int64" Name="offsets" format="ascii">{}</DataArray>
<DataArray type="UInt8" Name="types" format="ascii">{}</DataArray>
</Cells>
<CellData><DataArray type="Int64" Name="material" format="ascii">{}</DataArray></CellData>
</Piece></UnstructuredGrid></VTKFile>
"#,
        points.len(),
        types.len(),
        j(points.iter().flatten().map(|v| v.to_string()).collect()),
        j(conn.iter().map(|v| v.to_string()).collect()),
        j(offsets.iter().map(|v| v.to_string()).collect()),
        j(types.iter().map(|v| v.to_string()).collect()),
        j(mat.iter().map(|v| v.to_string()).collect()),
    )
}

const SQUARE: [[f64; 3]; 4] = [
    [0.0, 0.0, 0.0],
    [1.0, 0.0, 0.0],
    [1.0, 1.0, 0.0],
    [0.0, 1.0, 0.0],
];

#[test]
fn hand_written_grid_with_a_clockwise_triangle_solves_the_slab_exactly() {
    let d = tmp();
    let model = write(d.path(), "slab.toml", SLAB);
    // The second triangle (0, 3, 2) is clockwise: turned, with a warning.
    let mesh = write(
        d.path(),
        "slab.vtu",
        &vtu(&SQUARE, &[0, 1, 2, 0, 3, 2], &[3, 6], &[5, 5], &[0, 0]),
    );
    let out = d.path().join("out");
    let o = run(&[&"solve", &model, &"--out", &out, &"--mesh", &mesh]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    assert!(
        o.stderr.contains("1 of 2 triangles were clockwise"),
        "{}",
        o.stderr
    );
    let s = summary(&out);
    // Source: Fourier's law in a plane slab, T linear in x (P1 elements are exact for a linear
    // field — common practice): T(0.25) = 2.5 °C, q = k·ΔT/L = 20 W/m² over 1 m of height.
    let p = s["probes"][0]["temperature_c"].as_f64().unwrap();
    assert!((p - 2.5).abs() < 1e-12, "{p}");
    let warm = s["heat_flow_w_per_m"]["warm"].as_f64().unwrap();
    assert!((warm - 20.0).abs() < 1e-12, "{warm}");
    assert!(
        s["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|w| w.as_str().unwrap().contains("clockwise"))
    );
}

#[test]
fn bad_meshes_exit_2_name_the_item_and_write_nothing() {
    let d = tmp();
    let model = write(d.path(), "slab.toml", SLAB);
    let good = vtu(&SQUARE, &[0, 1, 2, 0, 2, 3], &[3, 6], &[5, 5], &[0, 0]);
    let wide: Vec<[f64; 3]> = SQUARE.iter().map(|p| [2.0 * p[0], p[1], 0.0]).collect();
    let mut dup = SQUARE.to_vec();
    dup.push([1.0, 1.0, 0.0]);
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "quad",
            vtu(&SQUARE, &[0, 1, 2, 3], &[4], &[9], &[0]),
            &["cell 0", "only triangles"],
        ),
        (
            "unknown-material",
            vtu(&SQUARE, &[0, 1, 2, 0, 2, 3], &[3, 6], &[5, 5], &[0, 7]),
            &["cell 1", "material id 7", "0 = a"],
        ),
        (
            "duplicate-point",
            vtu(&dup, &[0, 1, 4, 0, 2, 3], &[3, 6], &[5, 5], &[0, 0]),
            &["points 2 and 4", "same point"],
        ),
        (
            "not-this-section",
            vtu(&wide, &[0, 1, 2, 0, 2, 3], &[3, 6], &[5, 5], &[0, 0]),
            &["boundary edge", "no segment", "not of this section"],
        ),
        (
            "overlap",
            vtu(&SQUARE[..3], &[0, 1, 2, 0, 1, 2], &[3, 6], &[5, 5], &[0, 0]),
            &["cells 0 and 1 overlap"],
        ),
        ("not-vtk", "this is no mesh".to_string(), &["--mesh", "VTK"]),
    ];
    for (name, text, needles) in cases {
        let mesh = write(d.path(), &format!("{name}.vtu"), &text);
        let out = d.path().join(format!("out-{name}"));
        let o = run(&[&"solve", &model, &"--out", &out, &"--mesh", &mesh]);
        assert_eq!(o.code, 2, "{name}: {}", o.stderr);
        for n in needles {
            assert!(
                o.stderr.contains(n),
                "{name}: stderr lacks {n:?}: {}",
                o.stderr
            );
        }
        assert!(!out.exists(), "{name}: output written");
    }
    // A boundary file that does not match the mesh, and one that misses edges.
    let mesh = write(d.path(), "good.vtu", &good);
    let base = d.path().join("base");
    assert_eq!(run(&[&"solve", &model, &"--out", &base]).code, 0);
    let other = tmp();
    let wide_model = write(
        other.path(),
        "wide.toml",
        &SLAB.replace("[1, 0], [1, 1]", "[2, 0], [2, 1]"),
    );
    let wide_out = other.path().join("out");
    assert_eq!(run(&[&"solve", &wide_model, &"--out", &wide_out]).code, 0);
    let out = d.path().join("out-vtp");
    let o = run(&[
        &"solve",
        &model,
        &"--out",
        &out,
        &"--mesh",
        &mesh,
        &"--mesh-boundary",
        &wide_out.join("boundary.vtp"),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(
        o.stderr.contains("--mesh-boundary") && o.stderr.contains("no boundary edge of the mesh"),
        "{}",
        o.stderr
    );
    assert!(!out.exists());
    // --mesh refuses adaptive refinement, and --out may not hold the mesh file.
    let o = run(&[
        &"solve",
        &model,
        &"--out",
        &out,
        &"--mesh",
        &mesh,
        &"--target-error",
        &"0.05",
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    let inside = d.path().join("set");
    std::fs::create_dir(&inside).unwrap();
    let held = write(&inside, "m.vtu", &good);
    let o = run(&[&"solve", &model, &"--out", &inside, &"--mesh", &held]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(held.exists());
}
