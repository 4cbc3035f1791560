//! Where the command-line tool writes what: results on stdout, diagnostics (warnings, the
//! caution, errors) on stderr, and what `--quiet` keeps (placed before or after the command).

use std::path::{Path, PathBuf};
use std::process::Command;

/// A unit square, hot on the left and cold on the right; the top and bottom are left unnamed,
/// which validation reports as a warning.
const MODEL: &str = r#"
[mesh]
max_area = 0.02
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
edges = ["", "cold", "", "hot"]
[boundaries.hot]
kind = "fixed"
temperature = 20.0
[boundaries.cold]
kind = "fixed"
temperature = 0.0
"#;

const WARNING: &str = "without a boundary name";

fn scratch(name: &str) -> PathBuf {
    let d = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("console")
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    std::fs::write(d.join("model.toml"), MODEL).unwrap();
    d
}

/// Runs xsheat in `dir` and returns (exit code, stdout, stderr).
fn xsheat(dir: &Path, args: &[&str]) -> (i32, String, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_xsheat"))
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stdout).to_string(),
        String::from_utf8_lossy(&o.stderr).to_string(),
    )
}

fn summary_warnings(dir: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(dir.join("out").join("summary.json")).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w.as_str().unwrap().to_string())
        .collect()
}

#[test]
fn warnings_go_to_stderr_not_stdout() {
    let d = scratch("plain");
    let (code, stdout, stderr) = xsheat(&d, &["solve", "model.toml", "--out", "out"]);
    assert_eq!(code, 0, "{stderr}");
    assert!(
        stderr.contains("warnings:") && stderr.contains(WARNING),
        "{stderr}"
    );
    assert!(!stdout.contains(WARNING), "{stdout}");
    assert!(
        stdout.contains("self-checks:"),
        "summary table on stdout: {stdout}"
    );
    assert!(
        stdout.contains("wrote ") && stdout.contains(" files to out"),
        "{stdout}"
    );
    assert!(
        stderr.contains(&format!("CAUTION: {}", xsheat::CAUTION)),
        "{stderr}"
    );
}

#[test]
fn quiet_before_or_after_the_command_keeps_results_and_the_caution() {
    for (name, args) in [
        ("before", ["--quiet", "solve", "model.toml", "--out", "out"]),
        ("after", ["solve", "model.toml", "--out", "out", "--quiet"]),
    ] {
        let d = scratch(name);
        let (code, stdout, stderr) = xsheat(&d, &args);
        assert_eq!(code, 0, "{name}: {stderr}");
        assert!(!stderr.contains(WARNING), "{name}: {stderr}");
        assert!(!stdout.contains(WARNING), "{name}: {stdout}");
        assert!(
            !stdout.contains("self-checks:"),
            "{name}: no table: {stdout}"
        );
        assert!(stdout.contains(" files to out"), "{name}: {stdout}");
        assert!(
            stderr.contains(&format!("CAUTION: {}", xsheat::CAUTION)),
            "{name}: {stderr}"
        );
        // The warnings stay in the summary.
        assert!(
            summary_warnings(&d).iter().any(|w| w.contains(WARNING)),
            "{name}: summary.json keeps the warning"
        );
    }
}

#[test]
fn check_prints_the_caution_on_stderr_and_errors_survive_quiet() {
    let d = scratch("check");
    let (code, stdout, stderr) = xsheat(&d, &["check", "model.toml", "--quiet"]);
    assert_eq!(code, 0, "{stderr}");
    assert_eq!(stdout.trim(), "model is valid");
    assert!(stderr.contains("CAUTION: "), "{stderr}");
    let (code, _, stderr) = xsheat(&d, &["--quiet", "check", "missing.toml"]);
    assert_eq!(code, 2);
    assert!(
        stderr.contains("error: ") && stderr.contains("missing.toml"),
        "{stderr}"
    );
}

#[test]
fn one_file_written_is_counted_in_the_singular() {
    let d = scratch("compare");
    std::fs::write(
        d.join("grid.csv"),
        "x,y,temperature\n0.5,0.5,10.0\n0.25,0.5,15.0\n",
    )
    .unwrap();
    let (code, stdout, stderr) = xsheat(
        &d,
        &[
            "compare",
            "model.toml",
            "--grid-file",
            "grid.csv",
            "--out",
            "out",
        ],
    );
    assert_eq!(code, 0, "{stderr}");
    assert!(stdout.contains("wrote 2 files to out"), "{stdout}");
    assert!(stderr.contains("CAUTION: "), "{stderr}");
}
