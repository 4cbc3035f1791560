//! Helpers shared by the integration tests: one temporary-directory helper, one runner for the
//! command-line tool, and the test-only fixtures (read from `tests/fixtures/`).
//!
//! Each test file includes this module with `mod common;` and uses only part of it.
#![allow(dead_code)]

use std::ffi::OsStr;
use std::path::{Path, PathBuf};

/// A fresh, empty temporary directory under Cargo's target tmp dir; removed when dropped.
pub fn tmp() -> tempfile::TempDir {
    tempfile::Builder::new()
        .prefix("xsheat-test-")
        .tempdir_in(env!("CARGO_TARGET_TMPDIR"))
        .expect("create a temporary directory")
}

/// Exit code and output of one run of the command-line tool.
#[derive(Debug)]
pub struct Run {
    /// Exit code (−1 if the process was killed by a signal).
    pub code: i32,
    /// Standard output, lossily decoded.
    pub stdout: String,
    /// Standard error, lossily decoded.
    pub stderr: String,
}

/// Runs `xsheat ARGS…` (the binary Cargo built for the tests) and collects its output.
pub fn xsheat<I, S>(args: I) -> Run
where
    I: IntoIterator<Item = S>,
    S: AsRef<OsStr>,
{
    let o = assert_cmd::Command::cargo_bin("xsheat")
        .expect("the xsheat binary")
        .args(args)
        .output()
        .expect("run xsheat");
    Run {
        code: o.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&o.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
    }
}

/// A file of the repository, by its path relative to the crate root.
pub fn repo_file(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(relative)
}

/// Runs `xsheat solve MODEL --out OUT EXTRA…` on a model text written into a fresh temporary
/// directory; returns the run, the directory (keep it alive while using the paths) and OUT.
pub fn solve_text(model: &str, extra: &[&str]) -> (Run, tempfile::TempDir, PathBuf) {
    let d = tmp();
    let path = write(d.path(), "model.toml", model);
    let out = d.path().join("out");
    let mut args = vec![
        OsStr::new("solve"),
        path.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ];
    args.extend(extra.iter().map(OsStr::new));
    let run = xsheat(args);
    (run, d, out)
}

/// Writes `text` to `dir/name` and returns the path.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).expect("write a test file");
    p
}

/// The L-shaped test section (tests/fixtures/l-section.toml), with its `max_area = 1.5e-5`.
pub const L_SECTION: &str = include_str!("../fixtures/l-section.toml");

/// The L-shaped test section with another global `max_area`, m².
pub fn l_section_with_max_area(max_area: f64) -> String {
    let from = "max_area = 1.5e-5";
    assert!(L_SECTION.contains(from), "fixture lacks {from:?}");
    L_SECTION.replacen(from, &format!("max_area = {max_area:e}"), 1)
}

/// The brick wall-strip test section (tests/fixtures/wall-strip.toml).
pub const WALL_STRIP: &str = include_str!("../fixtures/wall-strip.toml");
