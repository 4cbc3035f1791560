//! Files of `xsheat solve` on the demo sections: presence, CSV headers with units, VTK read-back
//! with vtkio (array names and lengths), and byte-identical output from two runs.

mod common;

use common::{repo_file, tmp, xsheat};
use std::ffi::OsStr;
use std::path::Path;
use vtkio::Vtk;
use vtkio::model::{Attribute, DataSet, Piece};

/// Runs `xsheat solve` on a file of the repository into `out`; asserts success and returns
/// (stdout, stderr).
fn solve_into(model: &str, out: &Path) -> (String, String) {
    let o = xsheat([
        OsStr::new("solve"),
        repo_file(model).as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 0, "{}{}", o.stdout, o.stderr);
    (o.stdout, o.stderr)
}

fn header(path: &Path) -> String {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .next()
        .unwrap()
        .to_string()
}

#[test]
fn demo_outputs_are_complete_and_read_back() {
    let scratch = tmp();
    let out = scratch.path().join("out");
    let (stdout, stderr) = solve_into("geometry/utility-tunnel.toml", &out);
    // The report holds results only; the caution goes to stderr.
    assert!(!stdout.contains("CAUTION"), "{stdout}");
    assert!(stderr.contains("CAUTION"), "{stderr}");
    assert!(stderr.contains("qualified engineer"), "{stderr}");
    for s in [
        "Zienkiewicz–Zhu estimate: 0.",
        "heat flow W/m",
        "self-checks:",
    ] {
        assert!(stdout.contains(s), "solve output lacks {s}: {stdout}");
    }
    assert!(!stdout.contains("-0.0000"), "{stdout}");
    assert!(stdout.contains("files to"), "{stdout}");
    assert_eq!(header(&out.join("nodes.csv")), "node,x_m,y_m,temperature_c");
    assert_eq!(
        header(&out.join("probes.csv")),
        "name,x_m,y_m,temperature_c"
    );
    assert_eq!(
        header(&out.join("boundaries.csv")),
        "name,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,max_temperature_c"
    );
    for line in ["vertical-centre", "below-surface"] {
        assert_eq!(
            header(&out.join(format!("line-{line}.csv"))),
            "s_m,x_m,y_m,temperature_c,qx_w_per_m2,qy_w_per_m2"
        );
    }
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    for key in [
        "schema",
        "version",
        "units",
        "nodes",
        "triangles",
        "min_angle_deg",
        "materials",
        "temperature",
        "heat_flow_w_per_m",
        "heat_source_w_per_m",
        "energy_imbalance_w_per_m",
        "probes",
        "warnings",
        "model",
        "caution",
        "run",
        "checks",
        "error_estimate",
    ] {
        assert!(summary.get(key).is_some(), "summary.json lacks {key}");
    }
    assert_eq!(summary["schema"], "xsheat.summary/2");
    assert_eq!(summary["error_estimate"]["method"], "Zienkiewicz–Zhu");
    let rel = summary["error_estimate"]["relative"].as_f64().unwrap();
    assert!(rel > 0.0 && rel < 1.0, "relative error estimate {rel}");
    let nodes = summary["nodes"].as_u64().unwrap() as usize;
    let triangles = summary["triangles"].as_u64().unwrap() as usize;
    // Heat flows in the summary sum with the source to zero (energy balance).
    let total: f64 = summary["heat_flow_w_per_m"]
        .as_object()
        .unwrap()
        .values()
        .map(|v| v.as_f64().unwrap())
        .sum::<f64>()
        + summary["heat_source_w_per_m"].as_f64().unwrap();
    assert!(total.abs() < 1e-8, "imbalance {total}");

    // field.vtu read back with vtkio.
    let vtk = Vtk::import(out.join("field.vtu")).expect("field.vtu reads back");
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        panic!("not an unstructured grid")
    };
    let Piece::Inline(piece) = pieces.into_iter().next().unwrap() else {
        panic!("piece not inline")
    };
    assert_eq!(piece.num_points(), nodes);
    assert_eq!(piece.cells.types.len(), triangles);
    let shape = |attrs: &[Attribute]| -> Vec<(String, usize, usize)> {
        attrs
            .iter()
            .map(|a| match a {
                Attribute::DataArray(d) => (d.name.clone(), d.num_comp(), d.len()),
                Attribute::Field { name, .. } => (name.clone(), 0, 0),
            })
            .collect()
    };
    let point = shape(&piece.data.point);
    let cell = shape(&piece.data.cell);
    for (name, comp) in [
        ("temperature_c", 1),
        ("heat_flux_nodal_w_per_m2", 3),
        ("gradient_nodal_k_per_m", 3),
    ] {
        assert!(
            point.contains(&(name.to_string(), comp, comp * nodes)),
            "{name}: {point:?}"
        );
    }
    for (name, comp) in [
        ("heat_flux_w_per_m2", 3),
        ("gradient_k_per_m", 3),
        ("material", 1),
        ("error_indicator", 1),
        ("conductivity_xx_w_per_m_k", 1),
        ("conductivity_yy_w_per_m_k", 1),
        ("conductivity_xy_w_per_m_k", 1),
    ] {
        assert!(
            cell.contains(&(name.to_string(), comp, comp * triangles)),
            "{name}: {cell:?}"
        );
    }
}

fn without_run(summary: &[u8]) -> serde_json::Value {
    let mut v: serde_json::Value = serde_json::from_slice(summary).unwrap();
    v.as_object_mut().unwrap().remove("run");
    v
}

#[test]
fn two_runs_give_byte_identical_files() {
    let scratch = tmp();
    let (a, b) = (scratch.path().join("a"), scratch.path().join("b"));
    solve_into("geometry/buried-pipes.toml", &a);
    solve_into("geometry/buried-pipes.toml", &b);
    let mut names: Vec<String> = std::fs::read_dir(&a)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    names.sort();
    assert!(names.len() >= 7, "{names:?}");
    for n in &names {
        let (x, y) = (
            std::fs::read(a.join(n)).unwrap(),
            std::fs::read(b.join(n)).unwrap(),
        );
        if n == "summary.json" {
            assert_eq!(without_run(&x), without_run(&y));
        } else {
            assert!(x == y, "{n} differs between runs");
        }
    }
}

#[test]
fn solve_refuses_a_directory_with_foreign_files() {
    let scratch = tmp();
    let out = scratch.path();
    std::fs::write(out.join("notes.txt"), "engineer's notes").unwrap();
    let o = xsheat([
        OsStr::new("solve"),
        repo_file("geometry/buried-pipes.toml").as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains("notes.txt"), "{}", o.stderr);
    assert_eq!(
        std::fs::read_to_string(out.join("notes.txt")).unwrap(),
        "engineer's notes"
    );
    assert!(!out.join("field.vtu").exists());
}

#[test]
fn mesh_command_writes_a_vtu() {
    let scratch = tmp();
    let file = scratch.path().join("mesh.vtu");
    let o = xsheat([
        OsStr::new("mesh"),
        repo_file("geometry/utility-tunnel.toml").as_os_str(),
        OsStr::new("--out"),
        file.as_os_str(),
    ]);
    assert_eq!(o.code, 0);
    assert!(o.stdout.contains("min angle"), "{}", o.stdout);
    assert!(Vtk::import(&file).is_ok());
}

#[test]
fn check_command_prints_the_model() {
    let o = xsheat([
        OsStr::new("check"),
        repo_file("geometry/utility-tunnel.toml").as_os_str(),
    ]);
    assert_eq!(o.code, 0);
    let stdout = &o.stdout;
    for s in [
        "topsoil",
        "cable-duct",
        "gallery",
        "model is valid",
        "24 segments",
    ] {
        assert!(stdout.contains(s), "check output lacks {s}: {stdout}");
    }
}

/// summary.json's `run` object holds every stage time, their sum and the peak memory.
#[test]
fn summary_run_object_has_stage_times_total_and_peak_memory() {
    let d = tmp();
    let out = d.path().join("out");
    solve_into("geometry/buried-pipes.toml", &out);
    let s: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    let t = &s["run"]["timings_s"];
    let keys = [
        "parse_s",
        "mesh_s",
        "assemble_s",
        "solve_s",
        "post_s",
        "cases_s",
        "write_s",
    ];
    let mut sum = 0.0;
    for k in keys {
        let v = t[k].as_f64().unwrap_or_else(|| panic!("{k} missing: {t}"));
        assert!(v >= 0.0, "{k} = {v}");
        sum += v;
    }
    assert!(t["parse_s"].as_f64().unwrap() > 0.0, "{t}");
    assert!(t["write_s"].as_f64().unwrap() > 0.0, "{t}");
    let total = t["total_s"].as_f64().unwrap();
    assert!(
        (total - sum).abs() <= 1e-9 * sum.max(1.0),
        "{total} vs {sum}"
    );
    if cfg!(target_os = "linux") {
        let rss = s["run"]["peak_rss_mib"]
            .as_f64()
            .expect("peak_rss_mib on Linux");
        assert!(rss > 1.0 && rss < 1e6, "{rss}");
    }
}
