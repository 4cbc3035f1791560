//! `xsheat compare`: a user's own grid results against the element field, through the
//! command-line tool.

mod common;

use std::ffi::OsStr;

use common::{Run, tmp, xsheat};
use std::path::{Path, PathBuf};

/// An invented section with a hole and mixed edges (an off-grid circle is fine here: compare
/// takes any points).
const MODEL: &str = r#"
title = "compare section"
[mesh]
max_area = 0.01
[materials.concrete]
conductivity = 1.7
heat_source = 40.0
[outline]
material = "concrete"
points = [[0.0, 0.0], [3.0, 0.0], [3.0, 2.0], [0.0, 2.0]]
edges = ["base", "right", "top", "left"]
[[holes]]
circle = { center = [1.0, 1.0], radius = 0.3 }
boundary = "duct"
[boundaries.base]
kind = "fixed"
temperature = 10.0
[boundaries.top]
kind = "convection"
h = 15.0
ambient = 25.0
[boundaries.right]
kind = "flux"
flux = 20.0
[boundaries.left]
kind = "insulated"
[boundaries.duct]
kind = "fixed"
temperature = 60.0
"#;

/// Solve MODEL and return nodes.csv rows as (x text, y text, temperature).
fn solved_nodes(d: &Path) -> (PathBuf, Vec<(String, String, f64)>) {
    let model = d.join("model.toml");
    std::fs::write(&model, MODEL).unwrap();
    let out = d.join("solve");
    let Run { code, stderr, .. } = xsheat([
        "solve",
        model.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    let text = std::fs::read_to_string(out.join("nodes.csv")).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("node,x_m,y_m,temperature_c"));
    let rows = lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[1].to_string(), f[2].to_string(), f[3].parse().unwrap())
        })
        .collect();
    (model, rows)
}

/// Runs `xsheat compare MODEL --grid-file GRID --out OUT`, asserts success and returns stdout.
fn compare_ok(model: &Path, grid: &Path, out: &Path) -> String {
    let Run {
        code,
        stdout,
        stderr,
    } = xsheat([
        OsStr::new("compare"),
        model.as_os_str(),
        OsStr::new("--grid-file"),
        grid.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(code, 0, "{stderr}");
    stdout
}

fn diffs(path: &Path) -> Vec<[f64; 5]> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("x_m,y_m,t_user_c,t_fe_c,diff_k"));
    lines
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            [v[0], v[1], v[2], v[3], v[4]]
        })
        .collect()
}

#[test]
fn own_nodes_give_zero_difference_and_a_shift_gives_a_constant_offset() {
    let scratch = tmp();
    let d = scratch.path();
    let (model, nodes) = solved_nodes(d);

    // The element model's own nodal values, under the user header (with an extra column,
    // which must be ignored). Linear triangles interpolate with nodal (Lagrange) basis
    // functions, φ_i(x_j) = δ_ij, so the element field at a node is exactly that node's value:
    // the barycentric coordinates of a vertex are (1, 0, 0) and the difference is zero.
    let mut text = String::from("x,y,temperature,note\n");
    for (x, y, t) in &nodes {
        text.push_str(&format!("{x},{y},{t},n\n"));
    }
    let grid = d.join("own.csv");
    std::fs::write(&grid, &text).unwrap();
    let out = d.join("out");
    let stdout = compare_ok(&model, &grid, &out);
    assert!(stdout.contains("max |diff| ="), "{stdout}");
    assert!(stdout.contains("mean diff"), "{stdout}");
    let rows = diffs(&out.join("compare.csv"));
    assert_eq!(rows.len(), nodes.len());
    for r in &rows {
        assert!(r[4].abs() <= 1e-9, "{r:?}");
    }

    // Shifted by +3.5 K: the difference is the constant 3.5 K (to round-off of the sums).
    let mut text = String::from("x,y,temperature\n");
    for (x, y, t) in &nodes {
        text.push_str(&format!("{x},{y},{}\n", t + 3.5));
    }
    std::fs::write(&grid, &text).unwrap();
    let out = d.join("out_shift");
    let stdout = compare_ok(&model, &grid, &out);
    for r in diffs(&out.join("compare.csv")) {
        assert!((r[4] - 3.5).abs() <= 1e-12, "{r:?}");
    }
    assert!(stdout.contains("mean diff  = 3.5000e0 K"), "{stdout}");
}

#[test]
fn points_outside_are_listed_and_skipped() {
    let scratch = tmp();
    let d = scratch.path();
    let model = d.join("model.toml");
    std::fs::write(&model, MODEL).unwrap();
    let mut text = String::from("x,y,temperature\n");
    text.push_str("1.5,0.0,10.0\n"); // on the fixed base: inside (boundary point)
    text.push_str("2.0,1.5,20.0\n"); // inside
    text.push_str("1.0,1.0,60.0\n"); // centre of the hole: outside
    for k in 0..7 {
        text.push_str(&format!("{},5.0,0.0\n", 0.1 * k as f64)); // above the section
    }
    let grid = d.join("pts.csv");
    std::fs::write(&grid, &text).unwrap();
    let out = d.join("out");
    let stdout = compare_ok(&model, &grid, &out);
    assert!(stdout.contains("10 points read, 2 inside"), "{stdout}");
    assert!(
        stdout.contains("8 points outside the section skipped"),
        "{stdout}"
    );
    assert!(stdout.contains("line 4: (1, 1)"), "{stdout}");
    assert!(stdout.contains("… and 3 more"), "{stdout}");
    let rows = diffs(&out.join("compare.csv"));
    assert_eq!(rows.len(), 2);
    // The base is fixed at 10 °C: the element field there is exactly 10.
    assert!((rows[0][3] - 10.0).abs() <= 1e-12, "{:?}", rows[0]);
    assert!(rows[0][4].abs() <= 1e-12, "{:?}", rows[0]);
}

#[test]
fn compare_reads_the_tools_own_nodes_csv() {
    let scratch = tmp();
    let d = scratch.path();
    let (model, nodes) = solved_nodes(d);
    let out = d.join("out");
    let stdout = compare_ok(&model, &d.join("solve").join("nodes.csv"), &out);
    assert!(
        stdout.contains(&format!("{n} points read, {n} inside", n = nodes.len())),
        "{stdout}"
    );
    // Same model, same mesh settings: compare meshes the section exactly as solve did, so every
    // point of nodes.csv is a mesh node. Linear triangles interpolate with nodal basis
    // functions (φ_i(x_j) = δ_ij), so the element field there is the node's own value. The
    // only differences left come from the decimal round trip (nodes.csv holds the shortest
    // text that reads back to the same f64, so none) and from the barycentric weights of a
    // vertex being computed as (1, 0, 0) up to round-off: |diff| ≤ 1e-9 K covers that with a
    // wide margin on temperatures of order 10–100 °C.
    let rows = diffs(&out.join("compare.csv"));
    assert_eq!(rows.len(), nodes.len());
    for (r, (x, y, t)) in rows.iter().zip(&nodes) {
        assert_eq!(r[0], x.parse::<f64>().unwrap());
        assert_eq!(r[1], y.parse::<f64>().unwrap());
        assert_eq!(r[2], *t);
        assert!(r[4].abs() <= 1e-9, "{r:?}");
    }
}
