//! Bad input to `gridcheck` and `compare`: exit code 2, a message naming the offending item,
//! and nothing written (the output directory is not even created).

mod common;

use common::{tmp, xsheat};
use std::path::{Path, PathBuf};
use tempfile::TempDir;

/// A case directory with the wall-strip fixture written as its model; returns (dir, model path, output dir). The
/// directory is removed when the returned guard is dropped.
fn case() -> (TempDir, String, PathBuf) {
    let d = tmp();
    let model = common::write(d.path(), "model.toml", common::WALL_STRIP);
    let out = d.path().join("out");
    (d, model.to_str().unwrap().to_string(), out)
}

/// Runs xsheat and asserts exit 2, every `want` in stderr, and no output directory.
fn refused(args: &[&str], out: &Path, want: &[&str]) {
    let out_arg = out.to_str().unwrap();
    let o = xsheat(args.iter().copied().chain(["--out", out_arg]));
    let err = &o.stderr;
    assert_eq!(o.code, 2, "{args:?}: {err}");
    for w in want {
        assert!(err.contains(w), "{args:?}: expected {w:?} in {err}");
    }
    assert!(!out.exists(), "{args:?}: output directory was created");
}

#[test]
fn bad_spacings_are_refused() {
    let (_dir, model, out) = case();
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

fn compare_refused(csv: &str, want: &[&str]) {
    let (d, model, out) = case();
    let grid = d.path().join("grid.csv");
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
        "x_m,y_m,temperature\n0.1,0.1,20\n",
        &[
            "line 1",
            "header \"x_m,y_m,temperature\"",
            "\"x,y,temperature\", \"x_m,y_m,temperature_c\" or \"node,x_m,y_m,temperature_c\"",
        ],
    );
    compare_refused(
        "y,x,temperature\n0.1,0.1,20\n",
        &["header \"y,x,temperature\""],
    );
    compare_refused(
        "x,y,temperature\n0.1,0.1,20\n0.2,0.1,NaN\n",
        &[
            "line 3, column temperature",
            "\"NaN\" is not a finite number",
        ],
    );
    compare_refused(
        "x,y,temperature\ninf,0.1,20\n",
        &["line 2, column x", "not a finite number"],
    );
    compare_refused(
        "x,y,temperature\n0.1,abc,20\n",
        &["line 2, column y", "\"abc\" is not a number"],
    );
    compare_refused(
        "x,y,temperature\n0.1,0.2\n",
        &["line 2", "expected at least 3 values"],
    );
    compare_refused("", &["the file is empty"]);
    compare_refused("x,y,temperature\n", &["no points after"]);
    compare_refused(
        "x,y,temperature\n5.0,5.0,20\n-1.0,0.3,20\n",
        &["none of the 2 points lies inside the section", "line 2"],
    );
    let (d, model, out) = case();
    refused(
        &[
            "compare",
            &model,
            "--grid-file",
            d.path().join("absent.csv").to_str().unwrap(),
        ],
        &out,
        &["cannot read grid results file"],
    );
}
