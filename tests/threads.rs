//! A solve on one thread and on two gives the same result set byte for byte (issue 10's
//! determinism promise), on a model large enough that every parallel part runs in parallel:
//! element matrices, the per-triangle post-processing, the nested dissection's halves and the
//! numeric factorisation (more than `solve::cholesky::PARALLEL_FACTOR_FROM` unknowns), and load
//! cases solved side by side on the kept factorisation.

mod common;

use std::path::Path;

/// A 20 × 10 m block of two materials with 20 pipes (invented numbers), ~130k triangles.
fn model() -> String {
    let mut s = String::from(
        r#"title = "threads"
[mesh]
max_area = 0.0025
[materials.concrete]
conductivity = 1.8
heat_source = 4.0
[materials.clay]
conductivity = [1.4, 0.9]
orientation = 25.0
[outline]
material = "concrete"
points = [[0.0, 0.0], [20.0, 0.0], [20.0, 10.0], [0.0, 10.0]]
edges = ["base", "side", "top", "side"]
[[regions]]
material = "clay"
points = [[0.0, 0.0], [20.0, 0.0], [20.0, 3.0], [0.0, 3.0]]
[boundaries.base]
kind = "fixed"
temperature = 5.0
[boundaries.side]
kind = "insulated"
[boundaries.top]
kind = "convection"
h = 12.0
ambient = -5.0
[boundaries.supply]
kind = "fixed"
temperature = 60.0
[boundaries.return]
kind = "convection"
h = 300.0
ambient = 10.0
[[probes]]
name = "mid"
at = [10.3, 6.1]
[[lines]]
name = "vertical"
from = [10.5, 0.0]
to = [10.5, 10.0]
samples = 101
[[cuts]]
name = "across"
points = [[0.0, 4.0], [20.0, 4.0]]
[[cases]]
name = "winter"
[cases.boundaries.top]
ambient = -15.0
[[cases]]
name = "warm-supply"
[cases.boundaries.supply]
temperature = 75.0
"#,
    );
    for i in 0..10 {
        let x = 1.0 + 2.0 * f64::from(i);
        for (y, name) in [(5.0, "supply"), (7.5, "return")] {
            s.push_str(&format!(
                "[[holes]]\ncircle = {{ center = [{x}, {y}], radius = 0.15 }}\nboundary = \"{name}\"\n"
            ));
        }
    }
    s
}

/// Every file under `dir` (load-case directories included) by relative path, with
/// summary.json files stripped of their `run` object.
fn files(dir: &Path) -> Vec<(String, Vec<u8>)> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<(String, Vec<u8>)>) {
        for e in std::fs::read_dir(dir).expect("result set") {
            let path = e.expect("entry").path();
            if path.is_dir() {
                walk(root, &path, out);
                continue;
            }
            let name = path
                .strip_prefix(root)
                .expect("inside")
                .to_string_lossy()
                .into_owned();
            let mut bytes = std::fs::read(&path).expect("file");
            if path.file_name().is_some_and(|n| n == "summary.json") {
                // The `run` object (timings, memory, thread count) is the one allowed
                // difference.
                let mut json: serde_json::Value = serde_json::from_slice(&bytes).expect("json");
                json.as_object_mut().expect("object").remove("run");
                bytes = serde_json::to_vec_pretty(&json).expect("json");
            }
            out.push((name, bytes));
        }
    }
    let mut v = Vec::new();
    walk(dir, dir, &mut v);
    v.sort();
    v
}

#[test]
fn one_thread_and_two_threads_write_the_same_files() {
    let text = model();
    let (one, _d1, out1) = common::solve_text(&text, &["--threads", "1"]);
    assert_eq!(one.code, 0, "{}", one.stderr);
    let (two, _d2, out2) = common::solve_text(&text, &["--threads", "2"]);
    assert_eq!(two.code, 0, "{}", two.stderr);
    let (a, b) = (files(&out1), files(&out2));
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out1.join("summary.json")).expect("summary"))
            .expect("json");
    let nodes = summary["nodes"].as_u64().expect("nodes");
    assert!(
        nodes > 60_000,
        "{nodes} nodes: too small to run in parallel"
    );
    assert_eq!(
        a.iter().map(|f| &f.0).collect::<Vec<_>>(),
        b.iter().map(|f| &f.0).collect::<Vec<_>>()
    );
    assert!(a.iter().any(|f| f.0.starts_with("winter")), "case files");
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        assert!(x == y, "{name} differs between 1 and 2 threads");
    }
}
