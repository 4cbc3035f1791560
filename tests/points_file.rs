//! `points_file` through the pipeline: the demo (geometry/service-tunnel.*) gives the same
//! rings, mesh and temperatures as the same points typed inline, x,y in the model's
//! length_unit equal x_m,y_m in metres, and a bad points file stops the command-line tool with
//! exit 2 and nothing written (the file being an input no output may replace).

mod common;

use common::{repo_file, tmp, write, xsheat};
use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

/// The demo's tunnel profile typed inline (points and names copied from
/// service-tunnel-profile.csv, the closing point left out).
const INLINE_HOLE: &str = r#"[[holes]]
points = [[-2.100, 0.000], [2.100, 0.000], [2.112, 1.800], [2.021, 2.341], [1.832, 2.857],
  [1.477, 3.277], [1.053, 3.624], [0.540, 3.815], [0.000, 3.909], [-0.542, 3.825],
  [-1.056, 3.630], [-1.478, 3.278], [-1.825, 2.853], [-2.017, 2.340], [-2.105, 1.800]]
edges = ["tunnel-floor", "tunnel-wall", "tunnel-wall", "tunnel-wall", "tunnel-wall",
  "tunnel-wall", "tunnel-wall", "tunnel-wall", "tunnel-wall", "tunnel-wall", "tunnel-wall",
  "tunnel-wall", "tunnel-wall", "tunnel-wall", "tunnel-wall"]
"#;

const FILE_HOLE: &str = "[[holes]]\npoints_file = \"service-tunnel-profile.csv\"\n";

#[test]
fn points_file_demo_equals_the_inline_model() {
    let demo = repo_file("geometry/service-tunnel.toml");
    let text = std::fs::read_to_string(&demo).expect("demo");
    let inline_text = text.replace(FILE_HOLE, INLINE_HOLE);
    assert_ne!(inline_text, text, "the demo names its points file");
    let o = MeshOptions::default();
    let pa = run::prepare(&demo).expect("demo prepares");
    let pb = run::prepare_model(model::parse(&inline_text).expect("parse")).expect("prepare");
    assert_eq!(pa.section.holes[0].points, pb.section.holes[0].points);
    assert_eq!(
        pa.section.holes[0].edge_boundary,
        pb.section.holes[0].edge_boundary
    );
    assert_eq!(
        pa.model.imported.as_ref().expect("files read").files,
        vec![demo.with_file_name("service-tunnel-profile.csv")]
    );
    // The echo writes the ring back as points and reads back to the same ring.
    let echo = pa.section.resolved_model();
    assert!(echo.holes[0].points_file.is_none());
    let again = model::validate(&echo).expect("the echo validates");
    assert_eq!(again.holes[0].points, pa.section.holes[0].points);
    assert_eq!(
        again.holes[0].edge_boundary,
        pa.section.holes[0].edge_boundary
    );
    let a = run::solve(pa, &o).expect("demo solves");
    let b = run::solve(pb, &o).expect("inline solves");
    assert_eq!(a.mesh.nodes, b.mesh.nodes);
    assert_eq!(a.mesh.triangles, b.mesh.triangles);
    assert_eq!(a.mesh.boundary_edges, b.mesh.boundary_edges);
    assert_eq!(a.solution.temperature, b.solution.temperature);
}

/// A square outline of side 2 (in the model's unit) with a hole read from `h.csv`.
fn model_with_hole(unit: &str) -> String {
    format!(
        r#"length_unit = "{unit}"
[mesh]
max_area = {area}
[materials.a]
conductivity = 1.0
[outline]
material = "a"
rectangle = {{ corner = [0.0, 0.0], width = {w}, height = {w} }}
boundary = "out"
[[holes]]
points_file = "h.csv"
[boundaries.out]
kind = "fixed"
temperature = 0.0
[boundaries.in]
kind = "fixed"
temperature = 10.0
"#,
        area = if unit == "mm" { 40000.0 } else { 0.04 },
        w = if unit == "mm" { 2000.0 } else { 2.0 },
    )
}

#[test]
fn plain_columns_are_in_the_length_unit_and_suffixed_ones_in_metres() {
    let d = tmp();
    let hole_m = "x_m,y_m,edge\n0.5,0.5,in\n1.5,0.5,in\n1.5,1.5,in\n0.5,1.5,in\n";
    let hole_mm = "x,y,edge\n500,500,in\n1500,500,in\n1500,1500,in\n500,1500,in\n";
    let load = |unit: &str, csv: &str| {
        let sub = d.path().join(unit);
        std::fs::create_dir_all(&sub).expect("dir");
        write(&sub, "h.csv", csv);
        let m = write(&sub, "m.toml", &model_with_hole(unit));
        model::load(&m).expect("loads").1
    };
    let a = load("m", hole_m);
    let b = load("mm", hole_mm);
    assert_eq!(a.holes[0].points, b.holes[0].points);
    assert_eq!(a.holes[0].points[0], [0.5, 0.5]);
    // x_m,y_m in a model in mm are still metres.
    let c = load("mm", hole_m);
    assert_eq!(c.holes[0].points, a.holes[0].points);
}

#[test]
fn bad_points_files_exit_2_and_write_nothing() {
    let d = tmp();
    let m = write(d.path(), "m.toml", &model_with_hole("m"));
    let good = "x,y,edge\n0.5,0.5,in\n1.5,0.5,in\n1.5,1.5,in\n0.5,1.5,in\n";
    for (bad, expected) in [
        (
            "x,z\n0.5,0.5\n".to_string(),
            "holes[0]: points_file \"h.csv\", line 1: unknown column \"z\"",
        ),
        (
            "x\n0.5\n".to_string(),
            "holes[0]: points_file \"h.csv\", line 1: missing column y",
        ),
        ("x_mm,y_mm\n1,2\n".to_string(), "unknown column \"x_mm\""),
        (
            "0.5,0.5\n1.5,0.5\n1.5,1.5\n".to_string(),
            "line 1: unknown column \"0.5\"",
        ),
        (
            good.replace("1.5,0.5,in", "1.5,abc,in"),
            "points_file \"h.csv\", line 3: column y: \"abc\" is not a number",
        ),
        (
            good.replace("1.5,1.5,in", "NaN,1.5,in"),
            "line 4: column x: \"NaN\" is not a finite number",
        ),
        (
            "x,y\n0.5,0.5\n1.5,0.5\n0.5,0.5\n".to_string(),
            "a ring needs at least 3 points, found 2",
        ),
        (
            format!("{good}0.5,0.5,in\n"),
            "line 6: the last point repeats the first (the closing point)",
        ),
        (
            good.replace("1.5,1.5,in", "1.5,1.5"),
            "line 4: 2 cells, but the header row has 3",
        ),
    ] {
        write(d.path(), "h.csv", &bad);
        let out = d.path().join("out");
        let r = xsheat([
            "solve".as_ref(),
            m.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ]);
        assert_eq!(r.code, 2, "{expected}: {}", r.stderr);
        assert!(r.stderr.contains(expected), "{expected}: {}", r.stderr);
        assert!(!out.exists(), "{expected}");
    }
    // Not UTF-8.
    std::fs::write(d.path().join("h.csv"), b"x,y\n0.5,\xff\n").expect("write");
    let r = xsheat(["check".as_ref(), m.as_os_str()]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("\"h.csv\": not UTF-8 text"),
        "{}",
        r.stderr
    );
    // Unreadable (missing).
    std::fs::remove_file(d.path().join("h.csv")).expect("remove");
    let r = xsheat(["check".as_ref(), m.as_os_str()]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("points_file \"h.csv\": cannot read"),
        "{}",
        r.stderr
    );
    // The points file is an input: `mesh --out` may not replace it.
    write(d.path(), "h.csv", good);
    let target = d.path().join("h.csv");
    let r = xsheat([
        "mesh".as_ref(),
        m.as_os_str(),
        "--out".as_ref(),
        target.as_os_str(),
    ]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert_eq!(std::fs::read_to_string(&target).expect("kept"), good);
}

#[test]
fn points_file_keys_are_refused_in_bad_combinations() {
    let d = tmp();
    let good = "x,y,edge\n0.5,0.5,in\n1.5,0.5,in\n1.5,1.5,in\n0.5,1.5,in\n";
    write(d.path(), "h.csv", good);
    let base = model_with_hole("m");
    for (edit, expected) in [
        (
            "points_file = \"h.csv\"\nboundary = \"in\"\n",
            "holes[0]: the edge column of points_file \"h.csv\" names the segments: give no `edges` or `boundary` with it",
        ),
        (
            "points_file = \"h.csv\"\npoints = [[0.5, 0.5], [1.5, 0.5], [1.0, 1.5]]\n",
            "holes[0]: give one of `points`, `circle`, `rectangle` and `points_file`, not points_file and points",
        ),
    ] {
        let m = write(
            d.path(),
            "m.toml",
            &base.replace("points_file = \"h.csv\"\n", edit),
        );
        let e = model::load(&m).expect_err(expected);
        assert!(e.message().contains(expected), "{}", e.message());
    }
    // A region may not name boundaries in its edge column.
    let region = base.replace(
        "[[holes]]\npoints_file = \"h.csv\"\n",
        "[[regions]]\nmaterial = \"a\"\npoints_file = \"h.csv\"\n",
    );
    let m = write(d.path(), "m.toml", &region);
    let e = model::load(&m).expect_err("region names");
    assert!(
        e.message().contains(
            "regions[0]: points_file \"h.csv\", line 2: edge \"in\": a region names no boundaries"
        ),
        "{}",
        e.message()
    );
    // A model validated from memory cannot read the file.
    let e = model::validate(&model::parse(&base).expect("parse")).expect_err("from memory");
    assert!(
        e.message()
            .contains("holes[0]: points_file \"h.csv\" is read relative to the model file"),
        "{}",
        e.message()
    );
    // Comments and a closing point with an empty edge cell are accepted; lines count comments.
    write(
        d.path(),
        "h.csv",
        "# survey 3\nx,y,edge\n0.5,0.5,in\n1.5,0.5,in\n1.5,1.5,in\n0.5,1.5,in\n0.5,0.5,\n",
    );
    let m = write(d.path(), "m.toml", &base);
    let s = model::load(&m).expect("loads").1;
    assert_eq!(s.holes[0].points.len(), 4);
    write(d.path(), "h.csv", "# survey 3\nx,y\n0.5,0.5\n1.5,q\n");
    let e = model::load(&m).expect_err("bad number");
    assert!(e.message().contains("line 4: column y"), "{}", e.message());
}
