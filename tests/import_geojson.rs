//! `[geojson]` through the pipeline: the demo (geometry/culvert-ground.*) gives the same mesh
//! and temperatures as the same rings typed inline, and bad GeoJSON stops the command-line tool
//! with exit 2 and nothing written.

mod common;

use common::{repo_file, tmp, write, xsheat};
use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

/// The demo's rings typed inline (coordinates copied from culvert-ground.geojson).
const INLINE_RINGS: &str = r#"
[outline]
material = "silt"
points = [[-8.0, -9.0], [8.0, -9.0], [8.0, 0.0], [-8.0, 0.0]]
edges = ["deep-ground", "far-field", "ground-surface", "far-field"]
[[regions]]
material = "sand"
points = [[-8.0, -9.0], [8.0, -9.0], [8.0, -5.0], [-8.0, -5.0]]
[[regions]]
material = "topsoil"
points = [[-8.0, -0.8], [8.0, -0.8], [8.0, 0.0], [-8.0, 0.0]]
[[regions]]
material = "concrete"
points = [[-1.4, -4.2], [1.4, -4.2], [1.4, -2.0], [-1.4, -2.0]]
[[holes]]
points = [[-1.1, -3.9], [-1.1, -2.3], [1.1, -2.3], [1.1, -3.9]]
boundary = "stream"
"#;

#[test]
fn geojson_demo_equals_the_inline_model() {
    let demo = repo_file("geometry/culvert-ground.toml");
    let text = std::fs::read_to_string(&demo).expect("demo");
    let inline_text = text.replace(
        "[geojson]\nfile = \"culvert-ground.geojson\"\n",
        INLINE_RINGS,
    );
    assert_ne!(inline_text, text, "the demo names its GeoJSON file");
    let o = MeshOptions::default();
    let a = run::solve(run::prepare(&demo).expect("demo prepares"), &o).expect("demo solves");
    let b = run::solve(
        run::prepare_model(model::parse(&inline_text).expect("parse")).expect("prepare"),
        &o,
    )
    .expect("inline solves");
    assert_eq!(a.mesh.nodes, b.mesh.nodes);
    assert_eq!(a.mesh.triangles, b.mesh.triangles);
    assert_eq!(a.mesh.material, b.mesh.material);
    assert_eq!(a.mesh.boundary_edges, b.mesh.boundary_edges);
    assert_eq!(a.solution.temperature, b.solution.temperature);
    assert!(a.warnings.iter().any(|w| w.contains("altitude")));
}

#[test]
fn bad_geojson_exits_2_and_writes_nothing() {
    let d = tmp();
    let model = std::fs::read_to_string(repo_file("geometry/culvert-ground.toml")).expect("demo");
    let geo = std::fs::read_to_string(repo_file("geometry/culvert-ground.geojson")).expect("demo");
    let m = write(d.path(), "m.toml", &model);
    for (bad, expected) in [
        (
            geo.replacen(r#""material": "sand""#, r#""name": "sand""#, 1),
            "culvert-ground.geojson features[1]: no property `material`",
        ),
        (
            geo.replacen(r#""type": "Polygon""#, r#""type": "LineString""#, 1),
            "not valid GeoJSON",
        ),
        (
            geo.replacen(r#""material": "topsoil""#, r#""material": "loam""#, 1),
            "culvert-ground.geojson features[2]: material \"loam\" is not defined",
        ),
    ] {
        write(d.path(), "culvert-ground.geojson", &bad);
        let out = d.path().join("out");
        let r = xsheat([
            "solve".as_ref(),
            m.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ]);
        assert_eq!(r.code, 2, "{expected}: {}", r.stderr);
        assert!(r.stderr.contains(expected), "{expected}: {}", r.stderr);
        assert!(!out.exists(), "{expected}");
    }
    // The GeoJSON file is an input: `mesh --out` may not replace it.
    write(d.path(), "culvert-ground.geojson", &geo);
    let target = d.path().join("culvert-ground.geojson");
    let r = xsheat([
        "mesh".as_ref(),
        m.as_os_str(),
        "--out".as_ref(),
        target.as_os_str(),
    ]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert_eq!(std::fs::read_to_string(&target).expect("kept"), geo);
}
