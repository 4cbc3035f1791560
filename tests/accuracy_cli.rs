//! `xsheat verify` and `xsheat converge` through the command-line tool.

mod common;

use common::{tmp, xsheat};
use std::ffi::OsStr;

/// A two-layer wall between two films with insulated cuts: the exact field is piecewise linear,
/// so the heat flows are mesh-independent (P1 reproduces it), and the insulated cut carries no
/// heat at all.
const WALL: &str = r#"
title = "two-layer wall"
[mesh]
max_area = 0.005
[materials.masonry]
conductivity = 1.2
[materials.insulation]
conductivity = 0.04
[outline]
material = "masonry"
points = [[0.0, 0.0], [0.5, 0.0], [0.5, 1.0], [0.0, 1.0]]
edges = ["cut", "outside", "cut", "inside"]
[[regions]]
material = "insulation"
points = [[0.2, 0.0], [0.5, 0.0], [0.5, 1.0], [0.2, 1.0]]
[[holes]]
circle = { center = [0.1, 0.5], radius = 0.06 }
boundary = "duct"
[boundaries.inside]
kind = "convection"
h = 25.0
ambient = 20.0
[boundaries.outside]
kind = "convection"
h = 8.0
ambient = -5.0
[boundaries.cut]
kind = "insulated"
[boundaries.duct]
kind = "fixed"
temperature = 35.0
[[probes]]
name = "mid"
at = [0.3, 0.5]
"#;

#[test]
fn verify_passes_and_writes_its_files() {
    let scratch = tmp();
    let d = scratch.path();
    let out = xsheat([OsStr::new("verify"), OsStr::new("--out"), d.as_os_str()]);
    let stdout = &out.stdout;
    println!("{stdout}");
    assert_eq!(out.code, 0, "{stdout}\n{}", out.stderr);
    assert!(stdout.contains("eccentric_cylinders") && stdout.contains("convective_rectangle"));
    let csv = std::fs::read_to_string(d.join("verify.csv")).unwrap();
    assert!(csv.starts_with(
        "case,quantity,unit,source,reference,computed,error,tolerance,error_measure,triangles,passed\n"
    ));
    assert!(!csv.contains(",false\n"));
    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(d.join("verify.json")).unwrap()).unwrap();
    assert_eq!(json["all_passed"], true);
    assert_eq!(json["schema"], "xsheat.verify/1");
    // The console table names each case's source, and no "from memory" remark.
    assert!(stdout.contains("source"), "{stdout}");
    assert!(!stdout.contains("from memory"), "{stdout}");
}

#[test]
fn converge_writes_documented_files_and_flags_constant_quantities() {
    let scratch = tmp();
    let d = scratch.path();
    let model = d.join("wall.toml");
    std::fs::write(&model, WALL).unwrap();
    let dir = d.join("out");
    let out = xsheat([
        OsStr::new("converge"),
        model.as_os_str(),
        OsStr::new("--levels"),
        OsStr::new("4"),
        OsStr::new("--out"),
        dir.as_os_str(),
    ]);
    let stdout = &out.stdout;
    println!("{stdout}");
    assert_eq!(out.code, 0, "{}", out.stderr);
    let csv = std::fs::read_to_string(dir.join("convergence.csv")).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        "quantity,unit,level_1_value,level_2_value,level_3_value,level_4_value,observed_order,extrapolated_value,gci_fine,gci_fine_percent,status"
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let row = |q: &str| {
        rows.iter()
            .find(|r| r[0] == q)
            .unwrap_or_else(|| panic!("no row {q} in\n{csv}"))
            .clone()
    };
    assert_eq!(row("triangles")[10], "level_data");
    assert_eq!(row("h")[1], "m");
    // The insulated cut carries exactly no heat at every level.
    let cut = row("heat_flow:cut");
    assert_eq!(cut[1], "W/m");
    assert_eq!(cut[10], "constant");
    for q in [
        "probe:mid",
        "heat_flow:inside",
        "heat_flow:duct",
        "t_min",
        "t_max",
    ] {
        let r = row(q);
        assert!(
            [
                "constant",
                "monotone",
                "oscillating",
                "divergent",
                "unreliable"
            ]
            .contains(&r[10]),
            "{r:?}"
        );
    }
    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.join("convergence.json")).unwrap()).unwrap();
    assert_eq!(json["schema"], "xsheat.convergence/2");
    let study = &json["study"];
    assert!(study["levels"][0]["max_area_m2"].as_f64().unwrap() > 0.0);
    assert!(study["circles"][0]["radius_m"].as_f64().unwrap() > 0.0);
    assert!(stdout.contains("Zienkiewicz–Zhu estimate"), "{stdout}");
    assert_eq!(study["levels"].as_array().unwrap().len(), 4);
    // The circle keeps one segment count at every level.
    assert_eq!(study["circles"][0]["ring"], "holes[0]");
    assert!(stdout.contains("segments at every level"));
    let tri: Vec<u64> = study["levels"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["triangles"].as_u64().unwrap())
        .collect();
    assert!(tri.windows(2).all(|w| w[1] > w[0]), "{tri:?}");
}

#[test]
fn converge_refuses_bad_arguments_with_exit_2_and_writes_nothing() {
    let scratch = tmp();
    let d = scratch.path();
    let model = d.join("wall.toml");
    std::fs::write(&model, WALL).unwrap();
    let dir = d.join("out");
    let two = xsheat([
        OsStr::new("converge"),
        model.as_os_str(),
        OsStr::new("--levels"),
        OsStr::new("2"),
        OsStr::new("--out"),
        dir.as_os_str(),
    ]);
    assert_eq!(two.code, 2);
    assert!(two.stderr.contains("--levels = 2"));
    // The finest of 5 levels is estimated at 2.2·0.49/(0.005/4⁴) ≈ 55 000 triangles.
    let big = xsheat([
        OsStr::new("converge"),
        model.as_os_str(),
        OsStr::new("--levels"),
        OsStr::new("5"),
        OsStr::new("--max-triangles"),
        OsStr::new("5000"),
        OsStr::new("--out"),
        dir.as_os_str(),
    ]);
    assert_eq!(big.code, 2);
    assert!(big.stderr.contains("finest level"));
    assert!(!dir.exists());
}
