//! Pictures and isotherm files: field.png decodes at the stated size with varied content,
//! field.svg parses (usvg), the map colour at a point equals viridis at the field's temperature
//! there, isotherm vertices (GeoJSON and DXF read back) lie where the interpolated field equals
//! their level, `xsheat plot` re-stages a solve's set, and bad picture options are refused.

mod common;

use std::path::Path;
use xsheat::mesh::MeshOptions;
use xsheat::output::plot::{self, colormap, raster};
use xsheat::post::Locator;
use xsheat::post::isotherms::{isotherms, round_levels};

const DEMO: &str = "geometry/wall-junction.toml";

fn demo_text() -> String {
    std::fs::read_to_string(common::repo_file(DEMO)).expect("demo")
}

fn read(dir: &Path, name: &str) -> Vec<u8> {
    std::fs::read(dir.join(name)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

#[test]
fn solve_plot_writes_a_decodable_png_a_parsing_svg_and_the_same_bytes_twice() {
    let (run, _d, out) = common::solve_text(&demo_text(), &["--plot", "--plot-size", "800x500"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let png = read(&out, "field.png");
    let pm = resvg::tiny_skia::Pixmap::decode_png(&png).expect("field.png decodes");
    assert_eq!((pm.width(), pm.height()), (800, 500));
    let distinct: std::collections::BTreeSet<[u8; 4]> = pm
        .pixels()
        .iter()
        .map(|p| [p.red(), p.green(), p.blue(), p.alpha()])
        .collect();
    assert!(distinct.len() > 50, "only {} colours", distinct.len());
    let svg = read(&out, "field.svg");
    let tree = resvg::usvg::Tree::from_data(&svg, &resvg::usvg::Options::default())
        .expect("field.svg parses");
    assert_eq!(tree.size().width(), 800.0);
    assert!(
        !String::from_utf8_lossy(&svg).contains("<text"),
        "text is drawn as outlines"
    );
    for f in ["isotherms.geojson", "isotherms.dxf"] {
        assert!(out.join(f).is_file(), "{f}");
    }
    let (again, _d2, out2) =
        common::solve_text(&demo_text(), &["--plot", "--plot-size", "800x500"]);
    assert_eq!(again.code, 0);
    for f in [
        "field.svg",
        "field.png",
        "isotherms.geojson",
        "isotherms.dxf",
        "report.html",
    ] {
        assert_eq!(read(&out, f), read(&out2, f), "{f} differs between runs");
    }
}

#[test]
fn the_map_colour_at_a_point_is_viridis_at_the_field_temperature_there() {
    let p = xsheat::run::prepare(&common::repo_file(DEMO)).expect("model");
    let sv = xsheat::run::solve(p, &MeshOptions::default()).expect("solve");
    let r = &sv.results;
    let (step, levels) = round_levels(r.t_min.value, r.t_max.value);
    let lines = isotherms(&sv.mesh, &r.temperature, &levels);
    let options = plot::PlotOptions {
        probes: false,
        ..plot::PlotOptions::default()
    };
    let picture = plot::field_picture(
        &plot::FieldInputs {
            section: sv.section(),
            mesh: &sv.mesh,
            results: r,
            isotherms: &lines,
            step,
        },
        &options,
    )
    .expect("picture");
    let pm = resvg::tiny_skia::Pixmap::decode_png(&picture.png).expect("png");
    let locator = Locator::new(&sv.mesh);
    let [lo, hi] = picture.range;
    let (mut checked, mut matched) = (0, 0);
    let f = picture.layout.frame;
    let [ox, oy] = picture.layout.offset;
    for j in (0..f.height).step_by(7) {
        for i in (0..f.width).step_by(7) {
            let (x, y) = (ox + i, oy + j);
            let at = picture
                .layout
                .model([f64::from(x) + 0.5, f64::from(y) + 0.5]);
            let Some((t, w)) = locator.locate(at) else {
                continue;
            };
            let tri = sv.mesh.triangles[t];
            let temp: f64 = (0..3).map(|k| w[k] * r.temperature[tri[k]]).sum();
            // The published table (matplotlib _cm_listed.py _viridis_data), nearest entry.
            let k = (raster::fraction(temp, lo, hi) * 255.0).round() as usize;
            let want = colormap::VIRIDIS[k].map(|c| (c * 255.0).round() as i32);
            let px = pm.pixel(x, y).expect("pixel");
            let got = [px.red(), px.green(), px.blue()].map(i32::from);
            checked += 1;
            if (0..3).all(|c| (got[c] - want[c]).abs() <= 3) {
                matched += 1;
            }
        }
    }
    assert!(checked > 200, "{checked} points inside");
    // The rest lie under isotherms, interfaces, boundary lines and labels.
    assert!(
        matched as f64 >= 0.85 * checked as f64,
        "{matched} of {checked} pixels carry the map colour"
    );
}

/// The P1 field at `p` (located in the mesh, or snapped onto the boundary).
fn field_at(sv: &xsheat::run::Solved, locator: &Locator, p: [f64; 2]) -> f64 {
    let place = locator.place(sv.section(), p);
    let t: Vec<[f64; 1]> = sv.results.temperature.iter().map(|&t| [t]).collect();
    locator
        .interpolate(&place, &t)
        .expect("isotherm vertex in the section")[0]
}

#[test]
fn isotherm_files_read_back_and_every_vertex_lies_on_its_level() {
    let (run, d, out) = common::solve_text(&demo_text(), &["--isotherms"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        !out.join("field.png").exists(),
        "--isotherms alone draws no picture"
    );
    let p = xsheat::run::prepare(&d.path().join("model.toml")).expect("model");
    let sv = xsheat::run::solve(p, &MeshOptions::default()).expect("solve");
    let locator = Locator::new(&sv.mesh);
    let tol = 1e-9 * (sv.results.t_max.value - sv.results.t_min.value);
    let gj: serde_json::Value =
        serde_json::from_slice(&read(&out, "isotherms.geojson")).expect("geojson");
    assert_eq!(gj["type"], "FeatureCollection");
    let features = gj["features"].as_array().expect("features");
    assert!(features.len() >= 8);
    let mut vertices = 0;
    for f in features {
        assert_eq!(f["geometry"]["type"], "LineString");
        let level = f["properties"]["temperature_c"].as_f64().expect("level");
        for c in f["geometry"]["coordinates"]
            .as_array()
            .expect("coordinates")
        {
            let p = [c[0].as_f64().expect("x"), c[1].as_f64().expect("y")];
            let t = field_at(&sv, &locator, p);
            assert!((t - level).abs() <= tol, "{p:?}: {t} on the {level} line");
            vertices += 1;
        }
    }
    let drawing = dxf::Drawing::load_file(out.join("isotherms.dxf")).expect("dxf reads");
    let mut dxf_vertices = 0;
    for e in drawing.entities() {
        let dxf::entities::EntityType::LwPolyline(poly) = &e.specific else {
            panic!("only polylines expected");
        };
        let level: f64 = e.common.layer["ISOTHERM_".len()..e.common.layer.len() - 1]
            .parse()
            .expect("level in the layer name");
        for v in &poly.vertices {
            let t = field_at(&sv, &locator, [v.x, v.y]);
            assert!(
                (t - level).abs() <= 1e-6 * (1.0 + level.abs()),
                "{t} on {level}"
            );
            dxf_vertices += 1;
        }
    }
    assert!(dxf_vertices > 0 && dxf_vertices <= vertices);
    assert!(drawing.layers().any(|l| l.name.starts_with("ISOTHERM_")));
}

#[test]
fn plot_restages_a_solve_set_like_solve_plot_and_refuses_other_sets() {
    let d = common::tmp();
    let model = common::write(d.path(), "model.toml", &demo_text());
    let plain = d.path().join("plain");
    let direct = d.path().join("direct");
    let s = |out: &Path, extra: &[&str]| {
        let mut a = vec![
            "solve",
            model.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ];
        a.extend(extra);
        common::xsheat(a)
    };
    assert_eq!(s(&plain, &[]).code, 0);
    assert_eq!(s(&direct, &["--plot"]).code, 0);
    let run = common::xsheat(["plot", model.to_str().unwrap(), plain.to_str().unwrap()]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let names = |dir: &Path| {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .expect("dir")
            .map(|e| e.expect("entry"))
            .filter(|e| e.path().is_file())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    };
    assert_eq!(names(&plain), names(&direct));
    for n in names(&plain).iter().filter(|n| *n != "summary.json") {
        assert_eq!(read(&plain, n), read(&direct, n), "{n}");
    }
    let summary: serde_json::Value =
        serde_json::from_slice(&read(&plain, "summary.json")).expect("summary");
    let listed: Vec<&str> = summary["files"]
        .as_array()
        .expect("files")
        .iter()
        .map(|f| f["path"].as_str().expect("path"))
        .collect();
    assert!(listed.contains(&"field.png") && listed.contains(&"isotherms.dxf"));
    // Not a result set; a set of another model; a bad size.
    let empty = d.path().join("empty");
    std::fs::create_dir(&empty).expect("mkdir");
    let other = common::write(
        d.path(),
        "other.toml",
        &demo_text().replace("conductivity = 0.035", "conductivity = 0.04"),
    );
    for (m, dir, extra) in [
        (&model, &empty, vec![]),
        (&other, &plain, vec![]),
        (&model, &plain, vec!["--plot-size", "12x9000"]),
    ] {
        let mut a = vec!["plot", m.to_str().unwrap(), dir.to_str().unwrap()];
        a.extend(extra);
        let r = common::xsheat(a);
        assert_eq!(r.code, 2, "{}", r.stderr);
    }
    assert_eq!(
        s(&d.path().join("x"), &["--arrows"]).code,
        2,
        "--arrows without --plot"
    );
}

#[test]
fn mesh_plot_draws_the_mesh_beside_the_vtu() {
    let d = common::tmp();
    let model = common::write(d.path(), "model.toml", &demo_text());
    let vtu = d.path().join("m.vtu");
    let run = common::xsheat([
        "mesh",
        model.to_str().unwrap(),
        "--out",
        vtu.to_str().unwrap(),
        "--plot",
    ]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let svg = read(d.path(), "m.svg");
    resvg::usvg::Tree::from_data(&svg, &resvg::usvg::Options::default()).expect("m.svg parses");
    assert!(
        String::from_utf8_lossy(&svg).contains("#c00"),
        "worst triangles marked"
    );
}
