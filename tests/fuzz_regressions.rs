//! Inputs found by the fuzz targets in `fuzz/` (see fuzz/README.md), kept as regression tests:
//! each must give a clear error (or a result), quickly, never a panic or a hang.

use xsheat::mesh::MeshOptions;
use xsheat::model::parse;
use xsheat::run;

/// mesh_section: a boundary `size` of 10⁻¹² of the section's diagonal used to split every
/// boundary piece into up to 10⁷ parts (allocating and bulk-loading tens of millions of
/// vertices) before the triangle estimate refused the mesh. Now refused before any splitting.
#[test]
fn tiny_boundary_size_is_refused_before_splitting() {
    let text = r#"
[mesh]
max_area = 0.05
[materials.m]
conductivity = 1.0
[outline]
material = "m"
points = [[0, 0], [8, 0], [8, 8], [0, 8], [4, 4]]
boundary = "a"
[boundaries.a]
kind = "fixed"
temperature = 10
size = 1e-11
"#;
    let prepared = run::prepare_model(parse(text).unwrap()).unwrap();
    let opts = MeshOptions {
        max_triangles: 20_000,
        refine: true,
    };
    let err = run::mesh(&prepared, &opts).unwrap_err();
    assert_eq!(err.exit_code(), 2, "{err}");
    assert!(err.message().contains("boundaries' size"), "{err}");
}

/// mesh_section: a section micrometres wide 100 km from the origin. The snapping tolerance
/// (10⁻⁹ of the diameter) makes the vertex pool's grid keys saturate at the i64 range, and the
/// neighbour-cell key `k + 1` overflowed (a panic with overflow checks, as in debug builds and
/// the fuzz build; silent wrapping in release). The keys now saturate.
#[test]
fn tiny_section_far_from_origin_builds() {
    let text = r#"
[mesh]
max_area = 1e-14
[materials.m]
conductivity = 1.6
[outline]
material = "m"
points = [[100000.000003, -99999.999999], [100000.000002, -99999.999999], [100000.000003, -99999.999997]]
"#;
    let prepared = run::prepare_model(parse(text).unwrap()).unwrap();
    assert_eq!(prepared.pslg.vertices.len(), 3);
    assert_eq!(prepared.pslg.pieces.len(), 3);
}
