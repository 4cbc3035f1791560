//! Bad input through the command-line tool: exit code 2, one message on stderr naming the
//! offending item, and no output file written.

mod common;

use common::{tmp, xsheat};
use std::ffi::OsStr;
use tempfile::TempDir;

const BASE: &str = r#"
title = "error-case base"
[mesh]
max_area = 0.05
[materials.concrete]
conductivity = 1.7
[outline]
material = "concrete"
points = [[0.0, 0.0], [8.0, 0.0], [8.0, 5.0], [0.0, 5.0]]
edges = ["base", "right", "top", "left"]
[[holes]]
circle = { center = [2.0, 2.0], radius = 0.3 }
boundary = "gallery"
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
[boundaries.gallery]
kind = "insulated"
[[probes]]
name = "P1"
at = [4.0, 2.5]
"#;

/// Writes the model into a fresh directory and runs `xsheat solve` on it. Returns the exit
/// code, stderr, the directory's guard and the output path (`out` inside it).
fn run_solve(model: &str) -> (i32, String, TempDir, std::path::PathBuf) {
    let (o, d, out) = common::solve_text(model, &[]);
    (o.code, o.stderr, d, out)
}

fn replace(from: &str, to: &str) -> String {
    assert!(BASE.contains(from), "base model lacks {from:?}");
    BASE.replacen(from, to, 1)
}

#[test]
fn base_model_solves() {
    let (code, err, _dir, out) = run_solve(BASE);
    assert_eq!(code, 0, "{err}");
    for f in [
        "field.vtu",
        "nodes.csv",
        "probes.csv",
        "boundaries.csv",
        "summary.json",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
}

#[test]
fn bad_inputs_exit_2_name_the_item_and_write_nothing() {
    let holes_two = "[[holes]]\ncircle = { center = [2.0, 2.0], radius = 0.3 }\nboundary = \"gallery\"\n[[holes]]\ncircle = { center = [2.4, 2.0], radius = 0.3 }\nboundary = \"gallery\"\n";
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "syntax",
            replace("conductivity = 1.7", "conductivity = = 1.7"),
            &["line 6"],
        ),
        (
            "unknown-key",
            replace("conductivity = 1.7", "conductivty = 1.7"),
            &["conductivty"],
        ),
        (
            "wrong-type",
            replace("conductivity = 1.7", "conductivity = \"high\""),
            &["conductivity"],
        ),
        (
            "unknown-material",
            replace("material = \"concrete\"", "material = \"steel\""),
            &["outline", "\"steel\""],
        ),
        (
            "unknown-boundary",
            replace("\"right\", \"top\"", "\"rigth\", \"top\""),
            &["outline: edges[1]", "\"rigth\""],
        ),
        (
            "unknown-kind",
            replace("kind = \"flux\"", "kind = \"fluxx\""),
            &["boundaries.right", "\"fluxx\""],
        ),
        (
            "edges-count",
            replace("\"top\", \"left\"]", "\"top\"]"),
            &["outline", "edges", "3 names", "4 segments"],
        ),
        (
            "two-points",
            replace(
                "[[0.0, 0.0], [8.0, 0.0], [8.0, 5.0], [0.0, 5.0]]\nedges = [\"base\", \"right\", \"top\", \"left\"]",
                "[[0.0, 0.0], [8.0, 0.0], [8.0, 0.0]]\nboundary = \"base\"",
            ),
            &["outline", "3 distinct points"],
        ),
        (
            "self-intersecting",
            replace(
                "[[0.0, 0.0], [8.0, 0.0], [8.0, 5.0], [0.0, 5.0]]",
                "[[0.0, 0.0], [8.0, 0.0], [0.0, 5.0], [8.0, 5.0]]",
            ),
            &["outline", "intersects itself"],
        ),
        (
            "hole-outside",
            replace("center = [2.0, 2.0]", "center = [20.0, 2.0]"),
            &["holes[0]", "outside the outline"],
        ),
        (
            "hole-crossing",
            replace("center = [2.0, 2.0]", "center = [0.1, 2.0]"),
            &["holes[0]", "outline"],
        ),
        (
            "holes-overlapping",
            replace(
                "[[holes]]\ncircle = { center = [2.0, 2.0], radius = 0.3 }\nboundary = \"gallery\"\n",
                holes_two,
            ),
            &["holes[1]", "holes[0]"],
        ),
        (
            "conductivity-zero",
            replace("conductivity = 1.7", "conductivity = 0.0"),
            &["materials.concrete", "conductivity"],
        ),
        (
            "conductivity-inf",
            replace("conductivity = 1.7", "conductivity = inf"),
            &["materials.concrete", "conductivity"],
        ),
        (
            "h-negative",
            replace("h = 15.0", "h = -1.0"),
            &["boundaries.top", "h = -1"],
        ),
        (
            "nan-coordinate",
            replace("[8.0, 5.0], [0.0, 5.0]]", "[8.0, nan], [0.0, 5.0]]"),
            &["outline: points[2]", "finite"],
        ),
        (
            "nan-temperature",
            replace("temperature = 10.0", "temperature = nan"),
            &["boundaries.base", "temperature"],
        ),
        (
            "below-absolute-zero",
            replace("temperature = 10.0", "temperature = -300.0"),
            &["boundaries.base", "absolute zero"],
        ),
        (
            "probe-outside",
            replace("at = [4.0, 2.5]", "at = [9.0, 2.5]"),
            &["probes[0]", "\"P1\"", "outside"],
        ),
        (
            "probe-in-hole",
            replace("at = [4.0, 2.5]", "at = [2.0, 2.0]"),
            &["probes[0]", "outside"],
        ),
        (
            "singular",
            BASE.replace(
                "kind = \"fixed\"\ntemperature = 10.0",
                "kind = \"insulated\"",
            )
            .replace(
                "kind = \"convection\"\nh = 15.0\nambient = 25.0",
                "kind = \"insulated\"",
            ),
            &["singular"],
        ),
        (
            "min-angle",
            replace("max_area = 0.05", "max_area = 0.05\nmin_angle = 35"),
            &["min_angle"],
        ),
        (
            "max-area-zero",
            replace("max_area = 0.05", "max_area = 0.0"),
            &["max_area"],
        ),
        (
            "too-many-triangles",
            replace("max_area = 0.05", "max_area = 1e-9")
                .replace("radius = 0.3 }", "radius = 0.3, segments = 48 }"),
            &["max_area", "triangles", "--max-triangles"],
        ),
        (
            "circle-too-many-segments",
            replace("max_area = 0.05", "max_area = 1e-9"),
            &["holes[0]", "segments", "20000"],
        ),
        (
            "circle-segments-given-too-many",
            replace("radius = 0.3 }", "radius = 0.3, segments = 50000 }"),
            &["holes[0]", "segments = 50000"],
        ),
        (
            "circle-radius",
            replace("radius = 0.3", "radius = -0.3"),
            &["holes[0]", "radius"],
        ),
        (
            "points-and-circle",
            replace(
                "circle = { center = [2.0, 2.0], radius = 0.3 }",
                "circle = { center = [2.0, 2.0], radius = 0.3 }\npoints = [[1.0, 1.0], [2.0, 1.0], [2.0, 2.0]]",
            ),
            &["holes[0]", "points", "circle"],
        ),
        (
            "duplicate-probe",
            format!("{BASE}\n[[probes]]\nname = \"P1\"\nat = [5.0, 2.5]\n"),
            &["probes[1]", "duplicate"],
        ),
        (
            "line-outside",
            format!(
                "{BASE}\n[[lines]]\nname = \"L\"\nfrom = [10.0, 0.0]\nto = [12.0, 0.0]\nsamples = 5\n"
            ),
            &["lines[0]", "\"L\"", "no sample"],
        ),
        (
            "misspelt-key-suggestion",
            replace("conductivity = 1.7", "conductivty = 1.7"),
            &["line 6", "did you mean `conductivity`"],
        ),
        (
            "missing-key",
            replace("conductivity = 1.7", "heat_source = 1.0"),
            &["conductivity"],
        ),
        (
            "kind-key-mismatch",
            replace(
                "kind = \"fixed\"\ntemperature = 10.0",
                "kind = \"fixed\"\ntemperature = 10.0\nh = 3.0",
            ),
            &["boundaries.base", "`h`", "fixed"],
        ),
        (
            "kind-suggestion",
            replace("kind = \"flux\"", "kind = \"flx\""),
            &["boundaries.right", "did you mean \"flux\""],
        ),
        (
            "material-suggestion",
            replace("material = \"concrete\"", "material = \"concret\""),
            &["outline", "did you mean \"concrete\""],
        ),
        (
            "edges-and-boundary",
            replace(
                "edges = [\"base\", \"right\", \"top\", \"left\"]",
                "edges = [\"base\", \"right\", \"top\", \"left\"]\nboundary = \"base\"",
            ),
            &["outline", "edges", "boundary", "not both"],
        ),
        (
            "vertex-repeated",
            replace(
                "[[0.0, 0.0], [8.0, 0.0], [8.0, 5.0], [0.0, 5.0]]\nedges = [\"base\", \"right\", \"top\", \"left\"]",
                "[[0.0, 0.0], [8.0, 0.0], [8.0, 5.0], [4.0, 2.0], [8.0, 5.0], [0.0, 5.0]]\nboundary = \"base\"",
            ),
            &["outline", "repeats", "touch itself"],
        ),
        (
            "hole-in-hole",
            replace(
                "[[holes]]\ncircle = { center = [2.0, 2.0], radius = 0.3 }\nboundary = \"gallery\"\n",
                "[[holes]]\ncircle = { center = [2.0, 2.0], radius = 0.3 }\nboundary = \"gallery\"\n[[holes]]\ncircle = { center = [2.0, 2.0], radius = 0.1 }\nboundary = \"gallery\"\n",
            ),
            &["holes[1]", "inside holes[0]"],
        ),
        (
            "region-no-area",
            format!(
                "{BASE}\n[[regions]]\nmaterial = \"concrete\"\ncircle = {{ center = [2.0, 2.0], radius = 0.1 }}\n"
            ),
            &["regions[0]", "no area"],
        ),
        (
            "region-outside",
            format!(
                "{BASE}\n[[regions]]\nmaterial = \"concrete\"\npoints = [[20.0, 0.0], [21.0, 0.0], [21.0, 1.0]]\n"
            ),
            &["regions[0]", "no area"],
        ),
        (
            "huge-coordinate",
            replace("[8.0, 5.0], [0.0, 5.0]]", "[8.0, 5.0e7], [0.0, 5.0]]"),
            &["outline: points[2]", "accepted range"],
        ),
        (
            "duplicate-line",
            format!(
                "{BASE}\n[[lines]]\nname = \"L\"\nfrom = [1.0, 1.0]\nto = [3.0, 1.0]\nsamples = 3\n[[lines]]\nname = \"L\"\nfrom = [1.0, 1.5]\nto = [3.0, 1.5]\nsamples = 3\n"
            ),
            &["lines[1]", "duplicate"],
        ),
        (
            "bad-probe-name",
            replace("name = \"P1\"", "name = \"P 1\""),
            &["probes[0]", "letters, digits"],
        ),
        (
            "no-outline",
            BASE.replace("[outline]", "[ignored]"),
            &["ignored"],
        ),
        (
            "no-materials",
            BASE.replace("[materials.concrete]\nconductivity = 1.7\n", ""),
            &["material"],
        ),
        (
            "line-samples",
            format!(
                "{BASE}\n[[lines]]\nname = \"L\"\nfrom = [1.0, 1.0]\nto = [3.0, 1.0]\nsamples = 1\n"
            ),
            &["lines[0]", "samples"],
        ),
    ];
    for (case, model, needles) in cases {
        let (code, err, _dir, out) = run_solve(&model);
        assert_eq!(code, 2, "case {case}: exit code {code}, stderr: {err}");
        for n in needles {
            assert!(err.contains(n), "case {case}: stderr lacks {n:?}: {err}");
        }
        assert!(!out.exists(), "case {case}: output directory was created");
        assert_eq!(
            err.lines().filter(|l| l.starts_with("error:")).count(),
            1,
            "case {case}: {err}"
        );
    }
}

#[test]
fn unreadable_model_file() {
    let d = tmp();
    let out = d.path().join("out");
    let o = xsheat([
        OsStr::new("solve"),
        d.path().join("missing.toml").as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 2);
    assert!(o.stderr.contains("missing.toml"));
    assert!(!out.exists());
}

#[test]
fn mesh_command_refuses_bad_input_without_writing() {
    let d = tmp();
    let path = common::write(
        d.path(),
        "model.toml",
        &replace("conductivity = 1.7", "conductivity = -1.0"),
    );
    let out = d.path().join("mesh.vtu");
    let o = xsheat([
        OsStr::new("mesh"),
        path.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 2);
    assert!(!out.exists());
}

/// Bad values of the nonlinear keys (conductivity tables, radiation) and the linear-only
/// features in a nonlinear model: exit 2, the item named, nothing written.
#[test]
fn bad_nonlinear_inputs_exit_2_name_the_item_and_write_nothing() {
    let table = |t: &str| {
        replace(
            "conductivity = 1.7",
            &format!("conductivity = {{ table = {t} }}"),
        )
    };
    let top = |keys: &str| {
        replace(
            "kind = \"convection\"\nh = 15.0\nambient = 25.0",
            &format!("kind = \"convection\"\nh = 15.0\nambient = 25.0\n{keys}"),
        )
    };
    let radiation = |keys: &str| {
        replace(
            "[boundaries.left]\nkind = \"insulated\"",
            &format!("[boundaries.left]\nkind = \"radiation\"\n{keys}"),
        )
    };
    let radiating = top("emissivity = 0.9");
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "table-not-increasing",
            table("[[0.0, 1.0], [20.0, 1.2], [20.0, 1.3]]"),
            &["materials.concrete", "point 2", "strictly increasing"],
        ),
        (
            "table-decreasing",
            table("[[50.0, 1.0], [20.0, 1.2]]"),
            &["materials.concrete", "point 1", "strictly increasing"],
        ),
        (
            "table-k-zero",
            table("[[0.0, 1.0], [20.0, 0.0]]"),
            &["materials.concrete", "point 1", "conductivity"],
        ),
        (
            "table-k-negative",
            table("[[0.0, -1.0], [20.0, 1.0]]"),
            &["materials.concrete", "point 0", "conductivity"],
        ),
        (
            "table-one-point",
            table("[[0.0, 1.0]]"),
            &["materials.concrete", "1 points", "between 2"],
        ),
        (
            "table-nan-temperature",
            table("[[nan, 1.0], [20.0, 1.2]]"),
            &["materials.concrete", "point 0", "not a finite number"],
        ),
        (
            "table-nan-k",
            table("[[0.0, 1.0], [20.0, nan]]"),
            &["materials.concrete", "point 1", "conductivity"],
        ),
        (
            "table-below-absolute-zero",
            table("[[-300.0, 1.0], [20.0, 1.2]]"),
            &["materials.concrete", "point 0", "absolute zero"],
        ),
        (
            "table-three-numbers",
            table("[[0.0, 1.0, 2.0], [20.0, 1.2]]"),
            &["exactly two numbers"],
        ),
        (
            "table-unknown-key",
            replace(
                "conductivity = 1.7",
                "conductivity = { tabel = [[0.0, 1.0]] }",
            ),
            &["tabel", "table"],
        ),
        (
            "emissivity-zero",
            top("emissivity = 0.0"),
            &["boundaries.top", "emissivity", "(0, 1]"],
        ),
        (
            "emissivity-above-one",
            radiation("emissivity = 1.5\nsurroundings = 10.0"),
            &["boundaries.left", "emissivity", "(0, 1]"],
        ),
        (
            "emissivity-nan",
            top("emissivity = nan"),
            &["boundaries.top", "emissivity", "(0, 1]"],
        ),
        (
            "surroundings-nan",
            top("emissivity = 0.9\nsurroundings = nan"),
            &["boundaries.top: surroundings", "not a finite number"],
        ),
        (
            "surroundings-below-absolute-zero",
            radiation("emissivity = 0.9\nsurroundings = -300.0"),
            &["boundaries.left: surroundings", "absolute zero"],
        ),
        (
            "radiation-without-emissivity",
            radiation("surroundings = 10.0"),
            &["boundaries.left", "needs `emissivity`"],
        ),
        (
            "radiation-without-surroundings",
            radiation("emissivity = 0.9"),
            &["boundaries.left", "needs `surroundings`"],
        ),
        (
            "radiation-with-h",
            radiation("emissivity = 0.9\nsurroundings = 10.0\nh = 3.0"),
            &["boundaries.left", "`h`", "\"radiation\""],
        ),
        (
            "surroundings-without-emissivity",
            top("surroundings = 10.0"),
            &["boundaries.top", "without `emissivity`"],
        ),
        (
            "emissivity-on-fixed",
            replace(
                "kind = \"fixed\"\ntemperature = 10.0",
                "kind = \"fixed\"\ntemperature = 10.0\nemissivity = 0.9",
            ),
            &["boundaries.base", "`emissivity`", "\"fixed\""],
        ),
        (
            "cases-in-nonlinear-model",
            format!(
                "{radiating}\n[[cases]]\nname = \"winter\"\n[cases.boundaries.top]\nambient = -5.0\n"
            ),
            &["cases", "nonlinear"],
        ),
        (
            "environments-in-nonlinear-model",
            format!(
                "{}\n[environments]\nin = [\"top\"]\n",
                table("[[0.0, 1.0], [20.0, 1.2]]")
            ),
            &["environments", "nonlinear"],
        ),
    ];
    for (case, model, needles) in cases {
        let (code, err, _dir, out) = run_solve(&model);
        assert_eq!(code, 2, "case {case}: exit code {code}, stderr: {err}");
        for n in needles {
            assert!(err.contains(n), "case {case}: stderr lacks {n:?}: {err}");
        }
        assert!(!out.exists(), "case {case}: output directory was created");
    }
    // An unknown iteration method and the grid check of a nonlinear model are refused too.
    let (o, _d, out) = common::solve_text(&radiating, &["--nonlinear", "secant"]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains("--nonlinear secant"), "{}", o.stderr);
    assert!(!out.exists());
    let dir = tmp();
    let model = common::write(dir.path(), "m.toml", &radiating);
    let grid_out = dir.path().join("g");
    let o = xsheat([
        OsStr::new("gridcheck"),
        model.as_os_str(),
        OsStr::new("--spacing"),
        OsStr::new("0.5"),
        OsStr::new("--out"),
        grid_out.as_os_str(),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(
        o.stderr.contains("grid model") && o.stderr.contains("nonlinear"),
        "{}",
        o.stderr
    );
    assert!(!grid_out.exists());
}

/// Bad values of the keys of the surface resistance and the anisotropic conductivity: exit 2,
/// the message names the key and its item, nothing written.
#[test]
fn bad_physics_inputs_exit_2_name_the_key_and_write_nothing() {
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "h-and-resistance",
            replace("h = 15.0", "h = 15.0\nresistance = 0.04"),
            &["boundaries.top", "`h` or `resistance`"],
        ),
        (
            "resistance-zero",
            replace("h = 15.0", "resistance = 0.0"),
            &["boundaries.top", "resistance"],
        ),
        (
            "resistance-on-fixed",
            replace("temperature = 10.0", "temperature = 10.0\nresistance = 0.1"),
            &["boundaries.base", "`resistance`"],
        ),
        (
            "orientation-without-pair",
            replace(
                "conductivity = 1.7",
                "conductivity = 1.7\norientation = 30.0",
            ),
            &["materials.concrete", "orientation"],
        ),
        (
            "pair-minor-zero",
            replace("conductivity = 1.7", "conductivity = [1.7, 0.0]"),
            &["materials.concrete", "conductivity[1]"],
        ),
        (
            "orientation-nan",
            replace(
                "conductivity = 1.7",
                "conductivity = [1.7, 1.0]\norientation = nan",
            ),
            &["materials.concrete", "orientation"],
        ),
        (
            "pair-of-three",
            replace("conductivity = 1.7", "conductivity = [1.7, 1.0, 0.5]"),
            &["conductivity"],
        ),
    ];
    for (case, model, needles) in cases {
        let (code, err, _dir, out) = run_solve(&model);
        assert_eq!(code, 2, "case {case}: exit code {code}, stderr: {err}");
        for n in needles {
            assert!(err.contains(n), "case {case}: stderr lacks {n:?}: {err}");
        }
        assert!(!out.exists(), "case {case}: output directory was created");
    }
}

#[test]
fn bad_point_sources_exit_2_name_the_source_and_write_nothing() {
    let ps = |name: &str, at: &str, power: &str| {
        format!("\n[[point_sources]]\nname = \"{name}\"\nat = {at}\npower = {power}\n")
    };
    let ok = ps("cable", "[5.0, 3.0]", "30.0");
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "name-missing",
            format!("{BASE}\n[[point_sources]]\nat = [5.0, 3.0]\npower = 1.0\n"),
            &["point_sources", "name"],
        ),
        (
            "name-empty",
            format!("{BASE}{}", ps("", "[5.0, 3.0]", "1.0")),
            &["point_sources[0]", "empty"],
        ),
        (
            "name-duplicate",
            format!("{BASE}{ok}{}", ps("CABLE", "[6.0, 3.0]", "1.0")),
            &["point_sources[1]", "cable"],
        ),
        (
            "at-not-finite",
            format!("{BASE}{}", ps("c", "[nan, 3.0]", "1.0")),
            &["point_sources[0]", "at"],
        ),
        (
            "outside",
            format!("{BASE}{}", ps("c", "[9.0, 3.0]", "1.0")),
            &["point_sources[0]", "outside the outline"],
        ),
        (
            "in-hole",
            format!("{BASE}{}", ps("c", "[2.0, 2.0]", "1.0")),
            &["point_sources[0]", "inside holes[0]"],
        ),
        (
            "on-ring-edge",
            format!("{BASE}{}", ps("c", "[8.0, 3.0]", "1.0")),
            &["point_sources[0]", "lies on outline segment 1"],
        ),
        (
            "power-nan",
            format!("{BASE}{}", ps("c", "[5.0, 3.0]", "nan")),
            &["point_sources[0]", "power"],
        ),
        (
            "power-absurd",
            format!("{BASE}{}", ps("c", "[5.0, 3.0]", "1e9")),
            &["point_sources[0]", "power", "1e8"],
        ),
        (
            "same-place",
            format!("{BASE}{ok}{}", ps("pipe", "[5.0, 3.0]", "1.0")),
            &["point_sources[1]", "at the place of point_sources[0]"],
        ),
        (
            "unknown-key",
            format!(
                "{BASE}\n[[point_sources]]\nname = \"c\"\nat = [5.0, 3.0]\npower = 1.0\nradius = 0.1\n"
            ),
            &["radius"],
        ),
    ];
    for (case, model, needles) in cases {
        let (code, err, _dir, out) = run_solve(&model);
        assert_eq!(code, 2, "case {case}: exit code {code}, stderr: {err}");
        for n in needles {
            assert!(err.contains(n), "case {case}: stderr lacks {n:?}: {err}");
        }
        assert!(!out.exists(), "case {case}: output directory was created");
    }
}
