//! `xsheat sweep`: variants of a plan applied and solved like separate models, shards collected
//! into the unsharded set byte for byte, failing variants as rows, bad plans refused.

mod common;

use common::{repo_file, tmp, write, xsheat};
use std::fs;
use std::path::{Path, PathBuf};

const GRID: &str = r#"model = "m.toml"
mode = "grid"
[[parameters]]
key = "materials.insulation.conductivity"
values = [0.03, 0.04]
[[parameters]]
key = "boundaries.outside.ambient"
values = [-10, 0.0]
"#;

/// A directory with the wall-junction demo as m.toml and `plan` as p.toml.
fn setup(plan: &str) -> (tempfile::TempDir, PathBuf) {
    let d = tmp();
    let model = fs::read_to_string(repo_file("geometry/wall-junction.toml")).unwrap();
    write(d.path(), "m.toml", &model);
    let p = write(d.path(), "p.toml", plan);
    (d, p)
}

fn sweep(args: &[&Path]) -> common::Run {
    let mut a: Vec<&std::ffi::OsStr> = vec!["sweep".as_ref()];
    a.extend(args.iter().map(|p| p.as_os_str()));
    xsheat(a)
}

/// Every file below `dir`, relative `/`-separated path → bytes, with summary.json's and
/// sweep.json's `run` object removed (the one part allowed to differ) and manifest.json
/// (which holds their hashes) left out.
fn contents(dir: &Path) -> Vec<(String, Vec<u8>)> {
    fn walk(d: &Path, rel: &str, out: &mut Vec<(String, Vec<u8>)>) {
        for e in fs::read_dir(d).unwrap() {
            let e = e.unwrap();
            let name = format!("{rel}{}", e.file_name().to_string_lossy());
            if e.file_type().unwrap().is_dir() {
                walk(&e.path(), &format!("{name}/"), out);
            } else if name != "manifest.json" {
                let mut bytes = fs::read(e.path()).unwrap();
                if name.ends_with("summary.json") || name == "sweep.json" {
                    let mut v: serde_json::Value = serde_json::from_slice(&bytes).unwrap();
                    v.as_object_mut().unwrap().remove("run");
                    v.as_object_mut().unwrap().remove("files");
                    bytes = serde_json::to_vec(&v).unwrap();
                }
                out.push((name, bytes));
            }
        }
    }
    let mut v = Vec::new();
    walk(dir, "", &mut v);
    v.sort();
    v
}

fn rows(dir: &Path) -> Vec<Vec<String>> {
    let mut r = csv::Reader::from_path(dir.join("sweep.csv")).unwrap();
    let mut out = vec![r.headers().unwrap().iter().map(String::from).collect()];
    out.extend(
        r.records()
            .map(|x| x.unwrap().iter().map(String::from).collect()),
    );
    out
}

#[test]
fn grid_variants_equal_separate_solves_of_the_edited_model() {
    let (d, plan) = setup(GRID);
    let out = d.path().join("out");
    let r = sweep(&[&plan, "--out".as_ref(), &out]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let rows = rows(&out);
    assert_eq!(
        rows[0][..4],
        [
            "variant",
            "materials.insulation.conductivity",
            "boundaries.outside.ambient",
            "status"
        ]
    );
    assert!(rows[0].contains(&"heat_flow_w_per_m:outside".to_string()));
    assert!(rows[0].contains(&"temperature_c:corner-below-slab".to_string()));
    assert_eq!(rows[0].last().unwrap(), "zz_estimate");
    // 2 × 2 variants, the last parameter varying fastest.
    let values: Vec<[&str; 3]> = rows[1..].iter().map(|r| [&*r[1], &*r[2], &*r[3]]).collect();
    assert_eq!(
        values,
        [
            ["0.03", "-10", "ok"],
            ["0.03", "0", "ok"],
            ["0.04", "-10", "ok"],
            ["0.04", "0", "ok"]
        ]
    );
    // Variant 2 is the model with conductivity 0.04 and ambient −10 solved on its own.
    let model = fs::read_to_string(d.path().join("m.toml")).unwrap();
    let edited = model
        .replace(
            "[materials.insulation]\nconductivity = 0.035",
            "[materials.insulation]\nconductivity = 0.04",
        )
        .replace("ambient = -5.0", "ambient = -10");
    assert_ne!(edited, model);
    let single = write(d.path(), "edited.toml", &edited);
    let one = d.path().join("one");
    let r = xsheat([
        "solve".as_ref(),
        single.as_os_str(),
        "--out".as_ref(),
        one.as_os_str(),
    ]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(contents(&out.join("variants/0002")), contents(&one));
    // Its row holds the heat flows of that solve's boundaries.csv.
    let mut b = csv::Reader::from_path(one.join("boundaries.csv")).unwrap();
    let outside = b
        .records()
        .map(|x| x.unwrap())
        .find(|x| &x[0] == "outside")
        .unwrap();
    let col = rows[0]
        .iter()
        .position(|c| c == "heat_flow_w_per_m:outside")
        .unwrap();
    assert_eq!(rows[3][col], outside[3]);
}

#[test]
fn list_mode_takes_the_ith_values_together() {
    let plan = GRID.replace("mode = \"grid\"", "mode = \"list\"");
    let (d, plan) = setup(&plan);
    let out = d.path().join("out");
    let r = sweep(&[&plan, "--out".as_ref(), &out]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let rows = rows(&out);
    assert_eq!(rows.len(), 3);
    assert_eq!(rows[1][1..3], ["0.03", "-10"]);
    assert_eq!(rows[2][1..3], ["0.04", "0"]);
    assert!(out.join("variants/0001/field.vtu").is_file());
    assert!(!out.join("variants/0002").exists());
}

#[test]
fn shards_collected_equal_the_unsharded_sweep_byte_for_byte() {
    let plan = GRID.replace("[-10, 0.0]", "[-10, -5, 0.0]");
    let (d, plan) = setup(&plan);
    let p = d.path();
    let full = p.join("full");
    assert_eq!(sweep(&[&plan, "--out".as_ref(), &full]).code, 0);
    for s in ["1/2", "2/2"] {
        let out = p.join(format!("shard{}", &s[..1]));
        let r = sweep(&[
            &plan,
            "--shard".as_ref(),
            s.as_ref(),
            "--out".as_ref(),
            &out,
        ]);
        assert_eq!(r.code, 0, "{}", r.stderr);
    }
    assert_eq!(rows(&p.join("shard2")).len(), 1 + 3);
    assert!(p.join("shard2/variants/0001").is_dir() && !p.join("shard2/variants/0000").exists());
    let merged = p.join("merged");
    let (s1, s2) = (p.join("shard1"), p.join("shard2"));
    let r = sweep(&["--collect".as_ref(), &s2, &s1, "--out".as_ref(), &merged]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(
        fs::read(merged.join("sweep.csv")).unwrap(),
        fs::read(full.join("sweep.csv")).unwrap()
    );
    let (a, b) = (contents(&merged), contents(&full));
    assert_eq!(a.len(), b.len());
    for (x, y) in a.iter().zip(&b) {
        assert!(x == y, "{} differs from {}", x.0, y.0);
    }
    // A shard missing, or given twice: refused naming the variants, nothing written.
    let bad = p.join("bad");
    let r = sweep(&["--collect".as_ref(), &s1, "--out".as_ref(), &bad]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("variants 1, 3, 5 of 6 are in none"),
        "{}",
        r.stderr
    );
    let r = sweep(&["--collect".as_ref(), &s1, &s1, &s2, "--out".as_ref(), &bad]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("variant 0 is also in"), "{}", r.stderr);
    assert!(!bad.exists());
}

#[test]
fn shards_of_another_plan_or_a_changed_file_are_refused() {
    let (d, plan) = setup(GRID);
    let p = d.path();
    let s1 = p.join("s1");
    assert_eq!(
        sweep(&[
            &plan,
            "--shard".as_ref(),
            "1/2".as_ref(),
            "--out".as_ref(),
            &s1
        ])
        .code,
        0
    );
    write(p, "p.toml", &GRID.replace("0.04]", "0.05]"));
    let s2 = p.join("s2");
    assert_eq!(
        sweep(&[
            &plan,
            "--shard".as_ref(),
            "2/2".as_ref(),
            "--out".as_ref(),
            &s2
        ])
        .code,
        0
    );
    let bad = p.join("bad");
    let r = sweep(&["--collect".as_ref(), &s1, &s2, "--out".as_ref(), &bad]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("another plan"), "{}", r.stderr);
    let f = s1.join("variants/0000/probes.csv");
    fs::write(&f, "changed\n").unwrap();
    let r = sweep(&["--collect".as_ref(), &s1, &s2, "--out".as_ref(), &bad]);
    assert_eq!(r.code, 2);
    assert!(
        r.stderr.contains("variants/0000/probes.csv does not match"),
        "{}",
        r.stderr
    );
    assert!(!bad.exists());
}

#[test]
fn a_failing_variant_is_a_row_and_the_sweep_exits_1() {
    let plan = "model = \"m.toml\"\n[[parameters]]\nkey = \"mesh.max_area\"\nvalues = [0.0004, -1.0, 0.0008]\n";
    let (d, plan) = setup(plan);
    let out = d.path().join("out");
    let r = sweep(&[&plan, "--out".as_ref(), &out]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains("1 of 3 variants failed: 1"),
        "{}",
        r.stderr
    );
    let rows = rows(&out);
    assert_eq!(rows[1][2], "ok");
    assert!(
        rows[2][2].starts_with("exit 2: ") && rows[2][2].contains("max_area"),
        "{:?}",
        rows[2]
    );
    assert_eq!(rows[2][3], "", "a failed variant has no numbers");
    assert_eq!(rows[3][2], "ok");
    assert!(out.join("variants/0002/summary.json").is_file());
    assert!(!out.join("variants/0001").exists());
}

#[test]
fn bad_plans_exit_2_naming_the_item_and_write_nothing() {
    let grid = |a: &str, b: &str| GRID.replace(a, b);
    let cases: Vec<(String, &str)> = vec![
        (
            grid(
                "materials.insulation.conductivity",
                "materials.insulation.conductivty",
            ),
            "did you mean `conductivity`",
        ),
        (
            grid("materials.insulation.conductivity", "regions[5].material"),
            "`regions[5]`",
        ),
        (
            grid("materials.insulation.conductivity", "title"),
            "`title` holds a string",
        ),
        (
            grid("materials.insulation.conductivity", "probes[0].name"),
            "parameter 1",
        ),
        (
            grid("materials.insulation.conductivity", "materials..x"),
            "not a key path",
        ),
        (grid("[0.03, 0.04]", "[]"), "`values` is empty"),
        (grid("[0.03, 0.04]", "[0.03, \"x\"]"), "values[1]"),
        (
            grid("mode = \"grid\"", "mode = \"list\"").replace("[-10, 0.0]", "[1.0]"),
            "equally long",
        ),
        (
            grid("mode = \"grid\"", "mode = \"both\""),
            "mode = \"both\"",
        ),
        (
            grid("mode = \"grid\"", "mdoe = \"grid\""),
            "unknown field `mdoe`",
        ),
        (
            grid("model = \"m.toml\"", "model = \"missing.toml\""),
            "missing.toml",
        ),
        (
            grid("values = [-10, 0.0]", "values = [1]\nkey2 = 1"),
            "key2",
        ),
        (
            grid(
                "boundaries.outside.ambient",
                "materials.insulation.conductivity",
            ),
            "swept twice",
        ),
    ];
    for (plan, expected) in cases {
        let (d, plan_path) = setup(&plan);
        let out = d.path().join("out");
        let r = sweep(&[&plan_path, "--out".as_ref(), &out]);
        assert_eq!(r.code, 2, "{plan}\n{}", r.stderr);
        assert!(
            r.stderr.contains(expected),
            "expected {expected:?} in {}",
            r.stderr
        );
        assert!(!out.exists(), "{plan}");
    }
    let (d, plan) = setup(GRID);
    let out = d.path().join("out");
    let r = sweep(&[
        &plan,
        "--shard".as_ref(),
        "3/2".as_ref(),
        "--out".as_ref(),
        &out,
    ]);
    assert_eq!(r.code, 2);
    assert!(r.stderr.contains("--shard \"3/2\""), "{}", r.stderr);
    assert!(!out.exists());
}

/// A sweep on one worker thread and on two writes the same files (issue 10: results do not
/// depend on the thread count); `--threads 0` is refused.
#[test]
fn one_thread_and_two_threads_give_the_same_files() {
    let plan = GRID.replace("[-10, 0.0]", "[-10, -5, 0.0]");
    let (d, plan) = setup(&plan);
    let p = d.path();
    let (one, two) = (p.join("one"), p.join("two"));
    for (n, out) in [("1", &one), ("2", &two)] {
        let r = sweep(&[
            &plan,
            "--threads".as_ref(),
            n.as_ref(),
            "--out".as_ref(),
            out,
        ]);
        assert_eq!(r.code, 0, "{}", r.stderr);
    }
    assert_eq!(contents(&one), contents(&two));
    let r = sweep(&[
        &plan,
        "--threads".as_ref(),
        "0".as_ref(),
        "--out".as_ref(),
        &p.join("z"),
    ]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(r.stderr.contains("--threads"), "{}", r.stderr);
    assert!(!p.join("z").exists());
}
