//! Load cases (`[[cases]]`): each case equals a separate solve of the model edited to the
//! case's values (whether the base factorisation was reused or not), refusals name the item,
//! and the files of a solve with cases (cases.csv, CASE/…, temperature_c:CASE in field.vtu).

mod common;

use common::solve_text;
use vtkio::Vtk;
use vtkio::model::{Attribute, DataSet, Piece};
use xsheat::mesh::MeshOptions;
use xsheat::model::{self, ModelFile};
use xsheat::run::{self, Factorisation};

/// A rectangle of two materials (one with a source) with a fixed, a flux and a convection
/// boundary, two probes and a line; invented values, for tests only.
const BASE: &str = r#"
title = "load case test"
[mesh]
max_area = 0.002
[materials.concrete]
conductivity = 1.6
heat_source = 50.0
[materials.board]
conductivity = 0.04
[outline]
material = "concrete"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.5], [0.0, 0.5]]
edges = ["bottom", "right", "top", ""]
[[regions]]
material = "board"
points = [[0.6, 0.0], [0.8, 0.0], [0.8, 0.5], [0.6, 0.5]]
[boundaries.bottom]
kind = "fixed"
temperature = 10.0
[boundaries.right]
kind = "flux"
flux = 15.0
[boundaries.top]
kind = "convection"
h = 8.0
ambient = -5.0
[[probes]]
name = "middle"
at = [0.5, 0.25]
[[probes]]
name = "corner"
at = [1.0, 0.5]
[[lines]]
name = "across"
from = [0.0, 0.3]
to = [1.0, 0.3]
samples = 11
"#;

/// Cases: loads only (reuse), a film coefficient (re-factorise), a conductivity (re-factorise).
const CASES: &str = r#"
[[cases]]
name = "winter"
[cases.boundaries.top]
ambient = -15.0
[cases.boundaries.bottom]
temperature = 4.0
[cases.boundaries.right]
flux = -30.0
[cases.materials.concrete]
heat_source = 0.0
[[cases]]
name = "windy"
[cases.boundaries.top]
h = 25.0
[[cases]]
name = "wet-board"
[cases.materials.board]
conductivity = 0.09
heat_source = 20.0
"#;

/// The base model with its cases, parsed.
fn with_cases() -> ModelFile {
    model::parse(&format!("{BASE}{CASES}")).expect("the test model parses")
}

/// The model file edited to case `i`'s values, without cases: the separate solve to compare.
fn edited(file: &ModelFile, i: usize) -> ModelFile {
    let mut m = file.clone();
    let case = m.cases[i].clone();
    m.cases.clear();
    for (name, b) in &case.boundaries {
        let target = m
            .boundaries
            .get_mut(name)
            .expect("the case names a boundary");
        for (dst, src) in [
            (&mut target.temperature, b.temperature.clone()),
            (&mut target.ambient, b.ambient.clone()),
        ] {
            if src.is_some() {
                *dst = src;
            }
        }
        for (dst, src) in [(&mut target.h, b.h), (&mut target.flux, b.flux)] {
            if src.is_some() {
                *dst = src;
            }
        }
    }
    for (name, v) in &case.materials {
        let target = m
            .materials
            .get_mut(name)
            .expect("the case names a material");
        if let Some(k) = &v.conductivity {
            target.conductivity = k.clone();
        }
        if v.heat_source.is_some() {
            target.heat_source = v.heat_source.clone();
        }
    }
    m
}

fn close(a: f64, b: f64, what: &str) {
    assert!((a - b).abs() <= 1e-10, "{what}: {a} against {b}");
}

#[test]
fn each_case_equals_a_separate_solve_of_the_edited_model() {
    let file = with_cases();
    let opts = MeshOptions::default();
    let solved = run::solve(run::prepare_model(file.clone()).unwrap(), &opts).unwrap();
    assert_eq!(solved.cases.len(), 3);
    let expected = [
        Factorisation::Reused,
        Factorisation::Refactorised,
        Factorisation::Refactorised,
    ];
    for (i, case) in solved.cases.iter().enumerate() {
        assert_eq!(case.factorisation, expected[i], "case {}", case.name);
        assert!(
            case.checks_passed(),
            "case {}: {:?}",
            case.name,
            case.checks
        );
        let separate = run::solve(run::prepare_model(edited(&file, i)).unwrap(), &opts).unwrap();
        assert!(separate.cases.is_empty());
        assert_eq!(separate.mesh.nodes, solved.mesh.nodes, "same mesh");
        let (r, s) = (&case.results, &separate.results);
        for (k, (a, b)) in r.temperature.iter().zip(&s.temperature).enumerate() {
            close(*a, *b, &format!("case {} node {k}", case.name));
        }
        assert_eq!(r.boundaries.len(), s.boundaries.len());
        for (a, b) in r.boundaries.iter().zip(&s.boundaries) {
            assert_eq!(a.name, b.name);
            close(
                a.heat_flow,
                b.heat_flow,
                &format!("{} heat flow {}", case.name, a.name),
            );
        }
        for (a, b) in r.probes.iter().zip(&s.probes) {
            close(
                a.temperature,
                b.temperature,
                &format!("{} probe {}", case.name, a.name),
            );
        }
        for (a, b) in r.lines[0].samples.iter().zip(&s.lines[0].samples) {
            close(a.temperature, b.temperature, &format!("{} line", case.name));
            close(a.qx, b.qx, &format!("{} line qx", case.name));
        }
        // The case really differs from the base.
        let moved = r
            .temperature
            .iter()
            .zip(&solved.results.temperature)
            .any(|(a, b)| (a - b).abs() > 1e-3);
        assert!(moved, "case {} equals the base", case.name);
    }
}

#[test]
fn a_case_giving_the_base_values_reuses_the_factorisation_and_equals_the_base() {
    let text = format!(
        "{BASE}\n[[cases]]\nname = \"same\"\n[cases.boundaries.top]\nh = 8.0\nambient = -5.0\n[cases.materials.board]\nconductivity = 0.04\n"
    );
    let p = run::prepare_model(model::parse(&text).unwrap()).unwrap();
    let solved = run::solve(p, &MeshOptions::default()).unwrap();
    let case = &solved.cases[0];
    assert_eq!(case.factorisation, Factorisation::Reused);
    assert_eq!(case.results.temperature, solved.results.temperature);
}

/// The validation error of the base model with `cases` appended.
fn refusal(cases: &str) -> String {
    let file = model::parse(&format!("{BASE}{cases}")).expect("parses");
    let e = model::validate(&file).expect_err("refused");
    assert_eq!(e.exit_code(), 2);
    e.message().to_string()
}

#[test]
fn refusals_name_the_case_and_the_item() {
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.boundaries.topp]\nambient = 1.0\n");
    assert!(
        m.contains("cases[0] \"a\": boundaries.topp: no such boundary"),
        "{m}"
    );
    assert!(m.contains("did you mean \"top\""), "{m}");
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.boundaries.top]\ntemperature = 1.0\n");
    assert!(m.contains("boundaries.top: key `temperature`"), "{m}");
    assert!(m.contains("\"convection\""), "{m}");
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.boundaries.bottom]\nflux = 1.0\n");
    assert!(m.contains("boundaries.bottom: key `flux`"), "{m}");
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.materials.steel]\nconductivity = 50.0\n");
    assert!(
        m.contains("cases[0] \"a\": materials.steel: no such material"),
        "{m}"
    );
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.boundaries.top]\nambient = -300.0\n");
    assert!(
        m.contains("boundaries.top: ambient") && m.contains("absolute zero"),
        "{m}"
    );
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.boundaries.top]\nh = 0.0\n");
    assert!(m.contains("boundaries.top: h = 0"), "{m}");
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.materials.board]\nconductivity = -1.0\n");
    assert!(m.contains("materials.board: conductivity"), "{m}");
    let m = refusal("[[cases]]\nname = \"a\"\n[cases.materials.board]\nheat_source = 1e20\n");
    assert!(m.contains("materials.board: heat_source"), "{m}");
    let m = refusal("[[cases]]\nname = \"a b\"\n");
    assert!(
        m.contains("cases[0] \"a b\"") && m.contains("only letters"),
        "{m}"
    );
    let m = refusal("[[cases]]\nname = \"A\"\n[[cases]]\nname = \"a\"\n");
    assert!(m.contains("cases[1] \"a\": duplicate case name"), "{m}");
    let m = refusal("[[cases]]\nname = \"Summary\"\n");
    assert!(
        m.contains("cases[0] \"Summary\"") && m.contains("stem of a file"),
        "{m}"
    );
    let m = refusal("[[cases]]\nname = \"line-across\"\n");
    assert!(m.contains("stem of a file"), "{m}");
    let m = refusal(&format!("[[cases]]\nname = \"{}\"\n", "x".repeat(65)));
    assert!(m.contains("65 characters"), "{m}");
}

#[test]
fn bad_case_from_the_command_line_exits_2_and_writes_nothing() {
    let text = format!("{BASE}[[cases]]\nname = \"a\"\n[cases.boundaries.nowhere]\nflux = 1.0\n");
    let (run, _d, out) = solve_text(&text, &[]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(run.stderr.contains("boundaries.nowhere"), "{}", run.stderr);
    assert!(!out.exists());
    let text = format!("{BASE}[[cases]]\nname = \"a\"\n[cases.boundaries.top]\nsize = 1.0\n");
    let (run, _d, out) = solve_text(&text, &[]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(run.stderr.contains("size"), "{}", run.stderr);
    assert!(!out.exists());
}

#[test]
fn solve_writes_the_case_files() {
    let (run, _d, out) = solve_text(&format!("{BASE}{CASES}"), &["--case-fields"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let mut rdr = csv::Reader::from_path(out.join("cases.csv")).unwrap();
    let header: Vec<String> = rdr.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        header,
        [
            "case",
            "factorisation",
            "heat_flow_w_per_m:bottom",
            "heat_flow_w_per_m:right",
            "heat_flow_w_per_m:top",
            "heat_flow_w_per_m:(unnamed)",
            "temperature_c:middle",
            "temperature_c:corner",
        ]
    );
    let rows: Vec<csv::StringRecord> = rdr.records().map(Result::unwrap).collect();
    let names: Vec<(&str, &str)> = rows.iter().map(|r| (&r[0], &r[1])).collect();
    assert_eq!(
        names,
        [
            ("winter", "reused"),
            ("windy", "refactorised"),
            ("wet-board", "refactorised")
        ]
    );
    for case in ["winter", "windy", "wet-board"] {
        for f in [
            "summary.json",
            "boundaries.csv",
            "probes.csv",
            "line-across.csv",
            "field.vtu",
        ] {
            assert!(out.join(case).join(f).is_file(), "{case}/{f}");
        }
        let s: serde_json::Value =
            serde_json::from_slice(&std::fs::read(out.join(case).join("summary.json")).unwrap())
                .unwrap();
        assert_eq!(s["schema"], "xsheat.case/1");
        assert_eq!(s["case"], case);
        assert!(s["caution"].is_string() && s["units"].is_object());
        assert!(s["checks"].as_array().unwrap().len() >= 2);
        // cases.csv and the case's summary agree on the heat flow through `top`.
        let row = rows.iter().find(|r| &r[0] == case).unwrap();
        let top: f64 = row[4].parse().unwrap();
        assert_eq!(top, s["heat_flow_w_per_m"]["top"].as_f64().unwrap());
    }
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    let files: Vec<&str> = summary["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["path"].as_str().unwrap())
        .collect();
    assert!(files.contains(&"cases.csv") && files.contains(&"winter/summary.json"));

    let vtk = Vtk::import(out.join("field.vtu")).expect("field.vtu reads back");
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        panic!("not an unstructured grid")
    };
    let Piece::Inline(piece) = pieces.into_iter().next().unwrap() else {
        panic!("piece not inline")
    };
    let names: Vec<(String, usize)> = piece
        .data
        .point
        .iter()
        .filter_map(|a| match a {
            Attribute::DataArray(d) => Some((d.name.clone(), d.len())),
            Attribute::Field { .. } => None,
        })
        .collect();
    for case in ["winter", "windy", "wet-board"] {
        let name = format!("temperature_c:{case}");
        let found = names.iter().find(|(n, _)| *n == name);
        assert_eq!(found.map(|f| f.1), Some(piece.num_points()), "{name}");
    }
}

#[test]
fn without_case_fields_no_field_per_case_and_no_cases_no_cases_csv() {
    let (run, _d, out) = solve_text(&format!("{BASE}{CASES}"), &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(out.join("winter/summary.json").is_file());
    assert!(!out.join("winter/field.vtu").exists());
    let (run, _d, out) = solve_text(BASE, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(!out.join("cases.csv").exists());
}

#[test]
fn check_lists_the_cases() {
    let d = common::tmp();
    let path = common::write(d.path(), "m.toml", &format!("{BASE}{CASES}"));
    let run = common::xsheat([std::ffi::OsStr::new("check"), path.as_os_str()]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("case winter"), "{}", run.stdout);
    assert!(run.stdout.contains("refactorises"), "{}", run.stdout);
}
