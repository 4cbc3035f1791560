//! Bad input to `gridcheck` and `compare`: exit code 2, a message naming the offending item,
//! and nothing written (the output directory is not even created).

use std::path::PathBuf;
use std::process::Command;

const MODEL: &str = r#"
[mesh]
max_area = 0.005
[materials.brick]
conductivity = 0.7
[outline]
material = "brick"
points = [[0.0, 0.0], [0.9, 0.0], [0.9, 0.6], [0.0, 0.6]]
edges = ["inside", "", "outside", ""]
[boundaries.inside]
kind = "fixed"
temperature = 21.0
[boundaries.outside]
kind = "convection"
h = 25.0
ambient = -3.0
"#;

/// A case directory with the model written; returns (dir, model path, output dir).
fn case(name: &str) -> (PathBuf, String, PathBuf) {
    let d = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("crosscheck_errors")
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    let model = d.join("model.toml");
    std::fs::write(&model, MODEL).unwrap();
    let out = d.join("out");
    (d, model.to_str().unwrap().to_string(), out)
}

/// Runs xsheat and asserts exit 2, every `want` in stderr, and no output directory.
fn refused(args: &[&str], out: &PathBuf, want: &[&str]) {
    let o = Command::new(env!("CARGO_BIN_EXE_xsheat"))
        .args(args)
        .arg("--out")
        .arg(out)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    for w in want {
        assert!(err.contains(w), "{args:?}: expected {w:?} in {err}");
    }
    assert!(!out.exists(), "{args:?}: output directory was created");
}

#[test]
fn bad_spacings_are_refused() {
    let (_, model, out) = case("spacing");
    for h in ["0", "-0.1", "NaN", "inf"] {
        refused(
            &["gridcheck", &model, "--spacing", h],
            &out,
            &["--spacing", "positive finite"],
        );
    }
    // 0.9/1e-4 + 1 = 9001 by 0.6/1e-4 + 1 = 6001 grid points, above the grid node limit.
    refused(
        &["gridcheck", &model, "--spacing", "1e-4"],
        &out,
        &["spacing h = 0.0001 m", "9001 × 6001", "limit of 4000000"],
    );
    // Halving 0.05 m ten times also crosses the limit; refused before any solve.
    refused(
        &["gridcheck", &model, "--spacing", "0.05", "--levels", "11"],
        &out,
        &["limit of 4000000"],
    );
    refused(
        &["gridcheck", &model, "--spacing", "0.05", "--levels", "0"],
        &out,
        &["--levels = 0"],
    );
    refused(
        &[
            "gridcheck",
            &model,
            "--spacing",
            "0.05",
            "--spacing",
            "0.1",
            "--levels",
            "2",
        ],
        &out,
        &["--levels needs exactly one --spacing"],
    );
    refused(
        &[
            "gridcheck",
            &model,
            "--spacing",
            "0.05",
            "--spacing",
            "0.05",
        ],
        &out,
        &["--spacing = 0.05 m given twice"],
    );
    refused(
        &[
            "gridcheck",
            &model,
            "--spacing",
            "0.05",
            "--fe-max-area",
            "-1",
        ],
        &out,
        &["--fe-max-area = -1"],
    );
    // Off-grid spacing for this section: a convection edge between grid lines.
    refused(
        &["gridcheck", &model, "--spacing", "0.07"],
        &out,
        &["does not lie on grid lines"],
    );
}

fn compare_refused(name: &str, csv: &str, want: &[&str]) {
    let (d, model, out) = case(name);
    let grid = d.join("grid.csv");
    std::fs::write(&grid, csv).unwrap();
    refused(
        &["compare", &model, "--grid-file", grid.to_str().unwrap()],
        &out,
        want,
    );
}

#[test]
fn bad_grid_files_are_refused() {
    compare_refused(
        "header",
        "x_m,y_m,temperature\n0.1,0.1,20\n",
        &[
            "line 1",
            "header \"x_m,y_m,temperature\"",
            "\"x,y,temperature\", \"x_m,y_m,temperature_c\" or \"node,x_m,y_m,temperature_c\"",
        ],
    );
    compare_refused(
        "header_order",
        "y,x,temperature\n0.1,0.1,20\n",
        &["header \"y,x,temperature\""],
    );
    compare_refused(
        "nan",
        "x,y,temperature\n0.1,0.1,20\n0.2,0.1,NaN\n",
        &[
            "line 3, column temperature",
            "\"NaN\" is not a finite number",
        ],
    );
    compare_refused(
        "inf",
        "x,y,temperature\ninf,0.1,20\n",
        &["line 2, column x", "not a finite number"],
    );
    compare_refused(
        "text",
        "x,y,temperature\n0.1,abc,20\n",
        &["line 2, column y", "\"abc\" is not a number"],
    );
    compare_refused(
        "short",
        "x,y,temperature\n0.1,0.2\n",
        &["line 2", "expected at least 3 values"],
    );
    compare_refused("empty", "", &["the file is empty"]);
    compare_refused("no_points", "x,y,temperature\n", &["no points after"]);
    compare_refused(
        "none_inside",
        "x,y,temperature\n5.0,5.0,20\n-1.0,0.3,20\n",
        &["none of the 2 points lies inside the section", "line 2"],
    );
    let (d, model, out) = case("missing");
    refused(
        &[
            "compare",
            &model,
            "--grid-file",
            d.join("absent.csv").to_str().unwrap(),
        ],
        &out,
        &["cannot read grid results file"],
    );
}
