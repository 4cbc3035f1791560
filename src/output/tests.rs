//! Unit tests of the parent module.

use super::*;
use crate::CAUTION;
use crate::error::Error;
use crate::mesh::Mesh;
use crate::mesh::{BoundaryEdge, MeshStats, RingRef};
use crate::model::Section;
use crate::post::estimate::ErrorEstimate;
use crate::post::{BoundaryResult, ConditionKind, Extreme, LineSample, ProbeResult};
use crate::post::{LineResult, Results};
use crate::run::{Check, Cycle, Timings};
use serde_json::Value;
use serde_json::json;
use std::fs;
use std::path::Path;
use std::path::PathBuf;
use vtkio::Vtk;
use vtkio::model::{Attribute, CellType, DataSet, Piece};
use vtkio::model::{DataArray, IOBuffer};

/// Unit square (0,0)-(2,1) split into two triangles.
fn tiny_mesh() -> Mesh {
    let nodes = vec![[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]];
    let edge = |a, b, t| BoundaryEdge {
        nodes: [a, b],
        boundary: Some(0),
        triangle: t,
        ring: RingRef::Outline,
        segment: 0,
    };
    Mesh {
        nodes,
        triangles: vec![[0, 1, 2], [0, 2, 3]],
        material: vec![0, 1],
        boundary_edges: vec![edge(0, 1, 0), edge(1, 2, 0), edge(2, 3, 1), edge(3, 0, 1)],
        interfaces: Vec::new(),
        stats: MeshStats {
            nodes: 4,
            triangles: 2,
            boundary_edges: 4,
            min_angle_deg: 26.56505117707799,
            min_angle_away_from_small_input_angles_deg: 26.56505117707799,
            max_area: 1.0,
            min_area: 1.0,
            worst_triangle: 0,
            worst_triangle_centroid: [4.0 / 3.0, 1.0 / 3.0],
            small_input_angles: vec![],
            area: 2.0,
        },
    }
}

fn tiny_results() -> Results {
    let boundary = |name: &str, kind: ConditionKind, q: f64| BoundaryResult {
        name: name.into(),
        kind,
        length: 1.0,
        heat_flow: q,
        mean_temperature: 10.0,
        min_temperature: 0.0,
        max_temperature: 20.0,
        radiation_coefficient: None,
    };
    Results {
        temperature: vec![20.0, 0.0, 0.0, 20.0],
        cell_gradient: vec![[-10.0, 0.0], [-10.0, 0.0]],
        cell_flux: vec![[10.0, 0.0], [10.0, 0.0]],
        nodal_gradient: vec![[-10.0, 0.0]; 4],
        nodal_flux: vec![[10.0, 1e-20]; 4],
        // Deliberately not alphabetical: output must follow this order.
        boundaries: vec![
            boundary("warm", ConditionKind::Fixed, 10.0),
            boundary("cold", ConditionKind::Fixed, -10.0),
            boundary("(unnamed)", ConditionKind::Insulated, 0.0),
        ],
        heat_source: 0.0,
        point_sources: Vec::new(),
        energy_imbalance: 1.0e-15,
        energy_imbalance_relative: 5.0e-17,
        t_min: Extreme {
            value: 0.0,
            node: 1,
            at: [2.0, 0.0],
        },
        t_max: Extreme {
            value: 20.0,
            node: 0,
            at: [0.0, 0.0],
        },
        probes: vec![ProbeResult {
            name: "mid, centre".into(),
            at: [1.0, 0.5],
            x: 1.0,
            y: 0.5,
            temperature: 10.0,
            snapped: false,
        }],
        lines: vec![LineResult {
            name: "across".into(),
            samples: vec![
                LineSample {
                    s: 0.0,
                    x: 0.0,
                    y: 0.5,
                    temperature: 20.0,
                    qx: 10.0,
                    qy: 0.0,
                },
                LineSample {
                    s: 2.0,
                    x: 2.0,
                    y: 0.5,
                    temperature: 0.0,
                    qx: 10.0,
                    qy: 0.0,
                },
            ],
            skipped: vec![(2, [3.0, 0.5])],
        }],
        cuts: Vec::new(),
        items: Vec::new(),
        materials: Vec::new(),
        warnings: vec![],
    }
}

fn tiny_section(mesh: &Mesh) -> Section {
    let points: Vec<String> = mesh
        .nodes
        .iter()
        .map(|p| format!("[{:?}, {:?}]", p[0], p[1]))
        .collect();
    let text = format!(
        r#"title = "Two triangles"
[mesh]
max_area = 1.0
min_angle = 20.0
[materials.concrete]
conductivity = 1.6
[materials.steel]
conductivity = 50.0
[outline]
material = "concrete"
points = [{}]
edges = ["warm", "", "cold", ""]
[boundaries.cold]
kind = "fixed"
temperature = 0.0
[boundaries.warm]
kind = "fixed"
temperature = 20.0
"#,
        points.join(", ")
    );
    crate::model::validate(&crate::model::parse(&text).unwrap()).unwrap()
}

fn scratch_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("xsheat-io-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    d
}

fn dir_listing(d: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn first_line(bytes: &[u8]) -> &str {
    std::str::from_utf8(bytes).unwrap().lines().next().unwrap()
}

/// Parses VTK bytes and returns (point count, cell types, point arrays, cell arrays).
fn parse_vtu(bytes: &[u8]) -> (usize, Vec<CellType>, Vec<DataArray>, Vec<DataArray>) {
    let vtk = Vtk::parse_xml(bytes).expect("vtu parses back");
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        panic!("not an unstructured grid")
    };
    assert_eq!(pieces.len(), 1);
    let Piece::Inline(piece) = pieces.into_iter().next().unwrap() else {
        panic!("piece not inline")
    };
    let arrays = |a: Vec<Attribute>| {
        a.into_iter()
            .map(|x| match x {
                Attribute::DataArray(d) => d,
                Attribute::Field { .. } => panic!("unexpected field"),
            })
            .collect::<Vec<_>>()
    };
    let n = piece.num_points();
    let types = piece.cells.types.clone();
    (n, types, arrays(piece.data.point), arrays(piece.data.cell))
}

fn shape(arrays: &[DataArray]) -> Vec<(String, usize, usize)> {
    arrays
        .iter()
        .map(|a| (a.name.clone(), a.num_comp(), a.len()))
        .collect()
}

fn owned(v: &[(&str, usize, usize)]) -> Vec<(String, usize, usize)> {
    v.iter().map(|&(n, c, l)| (n.to_string(), c, l)).collect()
}

#[test]
fn field_vtu_parses_back_with_expected_arrays() {
    let (mesh, res) = (tiny_mesh(), tiny_results());
    let bytes = field_vtu(&mesh, &res).unwrap();
    let (n, types, point, cell) = parse_vtu(&bytes);
    assert_eq!(n, 4);
    assert_eq!(types, vec![CellType::Triangle; 2]);
    assert_eq!(
        shape(&point),
        owned(&[
            ("temperature_c", 1, 4),
            ("heat_flux_nodal_w_per_m2", 3, 12),
            ("gradient_nodal_k_per_m", 3, 12)
        ])
    );
    assert_eq!(
        shape(&cell),
        owned(&[
            ("heat_flux_w_per_m2", 3, 6),
            ("gradient_k_per_m", 3, 6),
            ("material", 1, 2)
        ])
    );
    assert_eq!(point[0].data, IOBuffer::F64(res.temperature.clone()));
    assert_eq!(point[1].data, IOBuffer::F64([10.0, 1e-20, 0.0].repeat(4)));
    assert_eq!(cell[2].data, IOBuffer::I32(vec![0, 1]));
}

#[test]
fn mesh_vtu_parses_back_with_quality_arrays() {
    let mesh = tiny_mesh();
    let bytes = mesh_vtu(&mesh).unwrap();
    let (n, types, point, cell) = parse_vtu(&bytes);
    assert_eq!((n, types.len(), point.len()), (4, 2, 0));
    assert_eq!(
        shape(&cell),
        owned(&[
            ("material", 1, 2),
            ("quality_min_angle_deg", 1, 2),
            ("area_m2", 1, 2)
        ])
    );
    assert_eq!(cell[0].data.scalar_type(), vtkio::model::ScalarType::I32);
    let IOBuffer::F64(angles) = &cell[1].data else {
        panic!("angles not f64")
    };
    let expect = 0.5f64.atan().to_degrees(); // 26.565° at the 2×1 rectangle's corners
    assert!(
        angles.iter().all(|a| (a - expect).abs() < 1e-12),
        "{angles:?}"
    );
    assert_eq!(cell[2].data, IOBuffer::F64(vec![1.0, 1.0]));
}

#[test]
fn vtu_rejects_inconsistent_input() {
    let mut mesh = tiny_mesh();
    let mut res = tiny_results();
    res.temperature.pop();
    assert!(matches!(field_vtu(&mesh, &res), Err(Error::Run(_))));
    mesh.triangles[1] = [0, 2, 9];
    assert!(matches!(mesh_vtu(&mesh), Err(Error::Run(_))));
}

#[test]
fn csv_headers_and_rows() {
    let (mesh, res) = (tiny_mesh(), tiny_results());
    let nodes = nodes_csv(&mesh, &res).unwrap();
    assert_eq!(first_line(&nodes), "node,x_m,y_m,temperature_c");
    assert_eq!(
        String::from_utf8(nodes).unwrap(),
        "node,x_m,y_m,temperature_c\n0,0,0,20\n1,2,0,0\n2,2,1,0\n3,0,1,20\n"
    );
    let probes = probes_csv(&res).unwrap();
    assert_eq!(
        String::from_utf8(probes).unwrap(),
        "name,x_m,y_m,temperature_c\n\"mid, centre\",1,0.5,10\n"
    );
    let line = line_csv(&res.lines[0]).unwrap();
    assert_eq!(
        first_line(&line),
        "s_m,x_m,y_m,temperature_c,qx_w_per_m2,qy_w_per_m2"
    );
    assert_eq!(line.iter().filter(|&&b| b == b'\n').count(), 3);
    let b = boundaries_csv(&res).unwrap();
    assert_eq!(
        first_line(&b),
        "name,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,\
         max_temperature_c"
    );
    let text = String::from_utf8(b).unwrap();
    let order: Vec<&str> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    assert_eq!(order, ["warm", "cold", "(unnamed)"]);
}

#[test]
fn float_format_round_trips() {
    assert_eq!(format_f64(0.1), "0.1");
    assert_eq!(format_f64(-0.0), "0");
    assert_eq!(format_f64(20.0), "20");
    assert_eq!(format_f64(1e-20), "1e-20");
    assert_eq!(format_f64(-1.5e-7), "-1.5e-7");
    assert_eq!(format_f64(2e15), "2e15");
    assert_eq!(format_f64(f64::NAN), "NaN");
    for x in [
        0.1,
        1.0 / 3.0,
        -273.15,
        6.02214076e23,
        5e-324,
        f64::MAX,
        1e-4,
        9.99e14,
    ] {
        assert_eq!(format_f64(x).parse::<f64>().unwrap(), x);
    }
}

fn tiny_checks() -> Vec<Check> {
    vec![Check {
        name: "energy_balance".into(),
        value: 5.0e-17,
        tolerance: 1e-9,
        passed: true,
        severity: crate::run::Severity::Error,
        detail: "balanced".into(),
    }]
}

fn tiny_estimate() -> ErrorEstimate {
    ErrorEstimate {
        indicator: vec![0.1, 0.2],
        energy_norm: 0.25,
        solution_energy_norm: 10.0,
        relative: 0.025,
    }
}

#[test]
fn summary_has_keys_in_order() {
    let (mesh, res) = (tiny_mesh(), tiny_results());
    let section = tiny_section(&mesh);
    let warnings = vec!["segment 1 of outline has no boundary name".to_string()];
    let (checks, estimate, model) = (
        tiny_checks(),
        tiny_estimate(),
        json!({"title": "Two triangles"}),
    );
    let timings = Timings {
        mesh_s: 0.25,
        ..Timings::default()
    };
    let inputs = SummaryInputs {
        section: &section,
        mesh: &mesh,
        results: &res,
        warnings: &warnings,
        checks: &checks,
        error_estimate: &estimate,
        adaptivity: &[],
        timings: &timings,
        model: &model,
        coupling: None,
        nonlinear: None,
        solver: None,
        mesh_files: None,
    };
    let files = [ManifestEntry::of("nodes.csv", b"node\n")];
    let with_files = summary_json_with_files(&inputs, &files).unwrap();
    let v: Value = serde_json::from_slice(&with_files).unwrap();
    assert_eq!(v["files"][0]["path"], json!("nodes.csv"));
    assert_eq!(v["files"][0]["bytes"], json!(5));
    // `printf 'node\n' | sha256sum`
    assert_eq!(
        v["files"][0]["sha256"],
        json!("389b46f0445738f6b517def165c3e490efa2eb8825c695b8ac8221565e78e4fa")
    );
    let text = String::from_utf8(with_files).unwrap();
    assert!(text.find("\n  \"model\":") < text.find("\n  \"files\":"));
    assert!(text.find("\n  \"files\":") < text.find("\n  \"run\":"));
    let bytes = summary_json(&inputs).unwrap();
    assert!(bytes.ends_with(b"}\n"));
    assert_eq!(bytes, summary_json(&inputs).unwrap());
    let v: Value = serde_json::from_slice(&bytes).unwrap();
    let keys = [
        "schema",
        "version",
        "title",
        "caution",
        "units",
        "nodes",
        "triangles",
        "min_angle_deg",
        "max_triangle_area_m2",
        "section_area_m2",
        "materials",
        "temperature",
        "heat_flow_w_per_m",
        "boundaries",
        "heat_source_w_per_m",
        "energy_imbalance_w_per_m",
        "energy_imbalance_relative",
        "probes",
        "lines",
        "items",
        "error_estimate",
        "warnings",
        "checks",
        "model",
        "run",
    ];
    let text = String::from_utf8(bytes).unwrap();
    let top: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    assert_eq!(top.len(), keys.len(), "{top:?}");
    let at: Vec<usize> = keys
        .iter()
        .map(|k| text.find(&format!("\n  \"{k}\":")).expect(k))
        .collect();
    assert!(at.windows(2).all(|w| w[0] < w[1]), "key order {keys:?}");
    assert!(
        v.get("adaptivity").is_none(),
        "no adaptivity without cycles"
    );
    assert_eq!(v["schema"], json!("xsheat.summary/2"));
    assert_eq!(v["version"], json!(crate::VERSION));
    assert_eq!(v["caution"], json!(CAUTION));
    assert_eq!(v["units"]["_w_per_m2_k"], json!("W/(m²·K)"));
    assert_eq!(
        v["units"]["_w_per_m"],
        json!("W/m (per metre of section depth)")
    );
    assert_eq!(v["materials"][1]["name"], json!("steel"));
    assert_eq!(v["materials"][1]["conductivity_w_per_m_k"], json!(50.0));
    assert_eq!(v["temperature"]["max_at_m"], json!([0.0, 0.0]));
    assert_eq!(v["temperature"]["min_c"], json!(0.0));
    assert_eq!(v["boundaries"][0]["condition"]["kind"], json!("fixed"));
    assert_eq!(
        v["boundaries"][0]["condition"]["temperature_c"],
        json!(20.0)
    );
    assert_eq!(v["boundaries"][2]["condition"], Value::Null);
    assert_eq!(v["lines"][0]["samples"], json!(2));
    assert_eq!(v["lines"][0]["skipped"][0]["index"], json!(2));
    assert_eq!(v["lines"][0]["skipped"][0]["x_m"], json!(3.0));
    assert_eq!(v["probes"][0]["temperature_c"], json!(10.0));
    assert_eq!(v["error_estimate"]["method"], json!("Zienkiewicz–Zhu"));
    assert_eq!(v["error_estimate"]["relative"], json!(0.025));
    assert_eq!(
        v["error_estimate"]["energy_norm_sqrt_w_k_per_m"],
        json!(0.25)
    );
    assert_eq!(v["checks"][0]["name"], json!("energy_balance"));
    assert_eq!(v["run"]["timings_s"]["mesh_s"], json!(0.25));
    // Result order is kept in the text (a Value object would sort the keys).
    let flows = &text[text.find("\"heat_flow_w_per_m\": {").unwrap()..];
    let (w, c, u) = (
        flows.find("\"warm\"").unwrap(),
        flows.find("\"cold\"").unwrap(),
        flows.find("\"(unnamed)\"").unwrap(),
    );
    assert!(w < c && c < u);
}

#[test]
fn summary_lists_adaptive_cycles() {
    let (mesh, res) = (tiny_mesh(), tiny_results());
    let section = tiny_section(&mesh);
    let (checks, estimate) = (tiny_checks(), tiny_estimate());
    let cycles = [Cycle {
        cycle: 0,
        triangles: 2,
        nodes: 4,
        relative_error: 0.5,
        energy_norm_error: 0.75,
    }];
    let bytes = summary_json(&SummaryInputs {
        section: &section,
        mesh: &mesh,
        results: &res,
        warnings: &[],
        checks: &checks,
        error_estimate: &estimate,
        adaptivity: &cycles,
        timings: &Timings::default(),
        model: &Value::Null,
        coupling: None,
        nonlinear: None,
        solver: None,
        mesh_files: None,
    })
    .unwrap();
    let v: Value = serde_json::from_slice(&bytes).unwrap();
    assert_eq!(v["adaptivity"][0]["relative"], json!(0.5));
    assert_eq!(
        v["adaptivity"][0]["energy_norm_sqrt_w_k_per_m"],
        json!(0.75)
    );
    let text = String::from_utf8(bytes).unwrap();
    assert!(text.find("\"error_estimate\"").unwrap() < text.find("\"adaptivity\"").unwrap());
    assert!(text.find("\"adaptivity\"").unwrap() < text.find("\"warnings\"").unwrap());
}

#[test]
fn writers_are_deterministic() {
    let (mesh, res) = (tiny_mesh(), tiny_results());
    assert_eq!(
        field_vtu(&mesh, &res).unwrap(),
        field_vtu(&mesh.clone(), &res.clone()).unwrap()
    );
    assert_eq!(mesh_vtu(&mesh).unwrap(), mesh_vtu(&mesh.clone()).unwrap());
    assert_eq!(
        nodes_csv(&mesh, &res).unwrap(),
        nodes_csv(&mesh, &res).unwrap()
    );
    assert_eq!(
        boundaries_csv(&res).unwrap(),
        boundaries_csv(&res.clone()).unwrap()
    );
}

#[test]
fn output_set_replaces_the_whole_set_and_writes_a_manifest() {
    let dir = scratch_dir("ok").join("nested");
    let mut set = OutputSet::new();
    set.add("a.csv", b"new a".to_vec());
    set.add("b.json", b"{}\n".to_vec());
    // Creates a missing directory (and its parent); manifest.json is added.
    let written = set.commit(&dir).unwrap();
    assert_eq!(
        written,
        vec![
            dir.join("a.csv"),
            dir.join("b.json"),
            dir.join("manifest.json")
        ]
    );
    assert_eq!(dir_listing(&dir), ["a.csv", "b.json", "manifest.json"]);
    let m: Value = serde_json::from_slice(&fs::read(dir.join("manifest.json")).unwrap()).unwrap();
    assert_eq!(m["schema"], json!(MANIFEST_SCHEMA));
    assert_eq!(m["files"][0]["path"], json!("a.csv"));
    assert_eq!(m["files"][0]["bytes"], json!(5));
    // SHA-256 of "new a", computed independently with `printf 'new a' | sha256sum`.
    assert_eq!(
        m["files"][0]["sha256"],
        json!("fbb6b30b41732026a9073fd355103e207f6b3c7c1adc086724df42e286417adf")
    );
    // An earlier set is replaced as a whole: files it had and the new one lacks are gone.
    let mut smaller = OutputSet::new();
    smaller.add("a.csv", b"newer".to_vec());
    smaller.commit(&dir).unwrap();
    assert_eq!(dir_listing(&dir), ["a.csv", "manifest.json"]);
    assert_eq!(fs::read(dir.join("a.csv")).unwrap(), b"newer");
    // No staging directory is left beside it; only the lock file.
    let parent = dir.parent().unwrap();
    assert_eq!(dir_listing(parent), [".nested.xsheat-lock", "nested"]);
    // A foreign file is refused by name and nothing changes.
    fs::write(dir.join("keep.txt"), b"other").unwrap();
    let e = set.commit(&dir).unwrap_err();
    assert!(matches!(e, Error::Input(_)), "{e}");
    assert!(e.message().contains("keep.txt"), "{e}");
    assert_eq!(fs::read(dir.join("a.csv")).unwrap(), b"newer");
    // An empty directory is accepted.
    let empty = parent.join("empty");
    fs::create_dir_all(&empty).unwrap();
    set.commit(&empty).unwrap();
    assert_eq!(dir_listing(&empty), ["a.csv", "b.json", "manifest.json"]);
    let _ = fs::remove_dir_all(scratch_dir("ok"));
}

#[test]
fn output_set_failure_leaves_no_new_file() {
    let root = scratch_dir("fail");
    fs::create_dir_all(&root).unwrap();
    let mut set = OutputSet::new();
    set.add("a.csv", b"a".to_vec());
    set.add("b.csv", b"b".to_vec());

    // The output "directory" is an existing regular file: a bad --out (exit 2).
    let file = root.join("plain");
    fs::write(&file, b"x").unwrap();
    let e = set.commit(&file).unwrap_err();
    assert!(matches!(e, Error::Input(_)));
    assert!(e.message().contains("plain"), "{e}");
    assert_eq!(fs::read(&file).unwrap(), b"x");

    // A directory in DIR is never part of a set: refused by name.
    let dir = root.join("out");
    fs::create_dir_all(dir.join("b.csv")).unwrap();
    let e = set.commit(&dir).unwrap_err();
    assert!(e.message().contains("b.csv"), "{e}");
    assert_eq!(dir_listing(&dir), ["b.csv"]);

    // A file cannot be staged (its name is longer than the 255 bytes a file name may have):
    // the staging directory is removed and DIR is not created.
    let dir2 = root.join("out2");
    let long = "b".repeat(300);
    let mut set2 = OutputSet::new();
    set2.add("a.csv", b"a".to_vec());
    set2.add(long.clone(), b"b".to_vec());
    let e = set2.commit(&dir2).unwrap_err();
    assert!(e.message().contains(&long), "{e}");
    assert!(e.message().contains("was not changed"), "{e}");
    assert!(!dir2.exists());
    assert!(
        dir_listing(&root).iter().all(|n| !n.contains("stage")),
        "{:?}",
        dir_listing(&root)
    );

    // Bad names are refused before anything is written (nested paths such as `sub/x.csv` are
    // allowed: tests_nested.rs).
    for bad in ["", "..", "sub/../x.csv", "manifest.json"] {
        let mut s = OutputSet::new();
        s.add(bad, vec![]);
        assert!(s.commit(root.join("never")).is_err(), "{bad:?}");
    }
    let mut dup = OutputSet::new();
    dup.add("x", vec![]);
    dup.add("x", vec![]);
    assert!(dup.commit(root.join("never")).is_err());
    assert!(!root.join("never").exists());
    let _ = fs::remove_dir_all(&root);
}

#[test]
fn leftover_staging_directories_are_removed_by_the_next_commit() {
    let root = scratch_dir("leftover");
    fs::create_dir_all(root.join(".out.xsheat-stage-1-0/sub")).unwrap();
    fs::write(root.join(".out.xsheat-stage-1-0/sub/big.vtu"), b"x").unwrap();
    fs::create_dir_all(root.join("out/.xsheat-stage-2-0")).unwrap();
    // Another directory's staging area is not ours to remove.
    fs::create_dir_all(root.join(".other.xsheat-stage-1-0")).unwrap();
    let mut set = OutputSet::new();
    set.add("a.csv", b"a".to_vec());
    set.commit(root.join("out")).unwrap();
    assert_eq!(
        dir_listing(&root),
        [".other.xsheat-stage-1-0", ".out.xsheat-lock", "out"]
    );
    assert_eq!(dir_listing(&root.join("out")), ["a.csv", "manifest.json"]);
    let _ = fs::remove_dir_all(&root);
}

#[test]
fn a_held_lock_refuses_a_second_writer_with_its_process_id() {
    let root = scratch_dir("lock");
    let out = root.join("out");
    let mut first = ResultDir::check(&out, &[]).unwrap();
    first.lock(false).unwrap();
    let pid = fs::read_to_string(root.join(".out.xsheat-lock")).unwrap();
    assert_eq!(pid.trim(), std::process::id().to_string());
    let mut set = OutputSet::new();
    set.add("a.csv", b"a".to_vec());
    let e = set.commit(&out).unwrap_err();
    assert!(matches!(e, Error::Run(_)), "{e}");
    let want = format!("is being written by process {}", std::process::id());
    assert!(e.message().contains(&want), "{e}");
    assert!(!out.exists());
    first.commit(&set).unwrap();
    drop(first);
    set.commit(&out).unwrap();
    let _ = fs::remove_dir_all(&root);
}

#[cfg(unix)]
#[test]
fn out_file_targets_are_checked() {
    let root = scratch_dir("outfile");
    fs::create_dir_all(&root).unwrap();
    let model = root.join("model.toml");
    fs::write(&model, b"x").unwrap();
    let link = root.join("link.vtu");
    let old = root.join("old.vtu");
    fs::write(&old, b"old").unwrap();
    std::os::unix::fs::symlink(&old, &link).unwrap();
    let model_link = root.join("model-link.toml");
    std::os::unix::fs::symlink(&model, &model_link).unwrap();
    let m: &[&Path] = &[&model];
    assert_eq!(
        check_out_file(&root.join("new.vtu"), m).unwrap(),
        root.join("new.vtu")
    );
    assert_eq!(check_out_file(&old, m).unwrap(), old);
    // A link to a regular file writes the file the link points to; the link stays.
    assert_eq!(
        check_out_file(&link, m).unwrap(),
        fs::canonicalize(&old).unwrap()
    );
    let dotted = root.join("sub/../model.toml");
    fs::create_dir_all(root.join("sub")).unwrap();
    let cases: [(PathBuf, &str); 6] = [
        (root.clone(), "a directory"),
        (
            PathBuf::from(format!("{}/x/", root.display())),
            "ends in '/'",
        ),
        (PathBuf::from("/dev/null"), "a device"),
        (model.clone(), "is the input"),
        (model_link, "is the input"),
        (dotted, "is the input"),
    ];
    for (p, why) in cases {
        let e = check_out_file(&p, m).unwrap_err();
        assert!(matches!(e, Error::Input(_)), "{}: {e}", p.display());
        assert!(e.message().contains(why), "{}: {e}", p.display());
    }
    let _ = fs::remove_dir_all(&root);
}

#[test]
fn write_file_atomic_replaces_single_file() {
    let root = scratch_dir("single");
    let path = root.join("mesh.vtu");
    write_file_atomic(&path, b"one").unwrap();
    write_file_atomic(&path, b"two").unwrap();
    assert_eq!(fs::read(&path).unwrap(), b"two");
    assert_eq!(dir_listing(&root), ["mesh.vtu"]);
    assert!(write_file_atomic(&root, b"x").is_err());
    assert!(write_file_atomic(root.join(".."), b"x").is_err());
    let _ = fs::remove_dir_all(&root);
}

#[cfg(unix)]
#[test]
fn committed_files_get_ordinary_permissions() {
    use std::os::unix::fs::PermissionsExt;
    // Temporaries of the tempfile crate are private (0o600) by default; a result file must get
    // the mode of any new file (0o666 less the umask), the same as `fs::write` gives here.
    let dir = scratch_dir("mode");
    fs::create_dir_all(&dir).unwrap();
    fs::write(dir.join("plain.txt"), b"x").unwrap();
    write_file_atomic(dir.join("result.csv"), b"x").unwrap();
    let mode = |n: &str| fs::metadata(dir.join(n)).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode("result.csv"), mode("plain.txt"));
    let _ = fs::remove_dir_all(&dir);
}
