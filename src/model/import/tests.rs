//! Imports read into written rings: the same section as the rings typed inline, and every bad
//! input refused with a message naming the item.

use crate::model::{Section, load, parse, validate};

/// Materials and boundaries shared by the import tests.
const TABLES: &str = r#"
[mesh]
max_area = 0.5
[materials.soil]
conductivity = 1.5
[materials.fill]
conductivity = 0.9
[boundaries.top]
kind = "convection"
h = 10.0
ambient = -5.0
[boundaries.base]
kind = "fixed"
temperature = 10.0
[boundaries.pipe]
kind = "fixed"
temperature = 40.0
"#;

/// Writes `files` (name, text) and `model.toml` (`model` + [`TABLES`]) into a fresh
/// directory and loads the model.
fn load_with(model: &str, files: &[(&str, &str)]) -> crate::Result<Section> {
    let d = tempfile::tempdir().expect("temporary directory");
    for (name, text) in files {
        std::fs::write(d.path().join(name), text).expect("write");
    }
    let path = d.path().join("model.toml");
    std::fs::write(&path, format!("{model}{TABLES}")).expect("write");
    load(&path).map(|(_, s)| s)
}

/// A GeoJSON FeatureCollection of the given feature texts.
fn collection(features: &[&str]) -> String {
    format!(
        r#"{{"type": "FeatureCollection", "features": [{}]}}"#,
        features.join(",")
    )
}

const OUTLINE: &str = r#"{"type": "Feature", "properties": {"material": "soil",
  "edges": [["base", "", "top", ""], ["pipe", "pipe", "pipe", "pipe"]]},
  "geometry": {"type": "Polygon", "coordinates": [
    [[0, 0], [6, 0], [6, 4], [0, 4], [0, 0]],
    [[2, 1], [2, 2], [3, 2], [3, 1], [2, 1]]]}}"#;
const FILL: &str = r#"{"type": "Feature", "properties": {"material": "fill"},
  "geometry": {"type": "Polygon", "coordinates": [[[1, 0.5], [4, 0.5], [4, 2.5], [1, 2.5], [1, 0.5]]]}}"#;

/// The same section typed inline.
const INLINE: &str = r#"
[outline]
material = "soil"
points = [[0.0, 0.0], [6.0, 0.0], [6.0, 4.0], [0.0, 4.0]]
edges = ["base", "", "top", ""]
[[regions]]
material = "fill"
points = [[1.0, 0.5], [4.0, 0.5], [4.0, 2.5], [1.0, 2.5]]
[[holes]]
points = [[2.0, 1.0], [2.0, 2.0], [3.0, 2.0], [3.0, 1.0]]
boundary = "pipe"
"#;

/// A ring's points and boundary ids.
type RingData = (Vec<[f64; 2]>, Vec<Option<usize>>);

/// Ring geometry and names of a section, without labels.
fn rings(s: &Section) -> Vec<RingData> {
    std::iter::once(&s.outline)
        .chain(s.regions.iter().map(|r| &r.ring))
        .chain(&s.holes)
        .map(|r| (r.points.clone(), r.edge_boundary.clone()))
        .collect()
}

#[test]
fn geojson_rings_equal_the_inline_rings() {
    let g = collection(&[FILL, OUTLINE]);
    let s = load_with("[geojson]\nfile = \"s.geojson\"\n", &[("s.geojson", &g)]).unwrap();
    let inline = validate(&parse(&format!("{INLINE}{TABLES}")).unwrap()).unwrap();
    assert_eq!(rings(&s), rings(&inline));
    // The outline is the largest polygon (features[1]); its interior ring is the hole.
    assert_eq!(s.outline.label, "s.geojson features[1]");
    assert_eq!(s.holes[0].label, "s.geojson features[1] interior ring 1");
    assert_eq!(s.regions[0].ring.label, "s.geojson features[0]");
    // The echo records the file and writes the rings out.
    let echo = s.resolved_json();
    assert_eq!(echo["geojson"]["file"], "s.geojson");
    assert_eq!(echo["outline"]["edges"][0], "base");
}

#[test]
fn role_outline_wins_over_size_and_inline_rings_are_added() {
    let outline = OUTLINE.replace(
        r#""material": "soil","#,
        r#""material": "soil", "role": "outline","#,
    );
    // A region larger than the outline: clipped by it, but not the outline.
    let big = r#"{"type": "Feature", "properties": {"material": "fill"},
      "geometry": {"type": "Polygon", "coordinates": [[[-1, -1], [9, -1], [9, 9], [-1, 9], [-1, -1]]]}}"#;
    let g = collection(&[big, &outline]);
    let extra = "[geojson]\nfile = \"s.geojson\"\n[[regions]]\nmaterial = \"soil\"\npoints = [[4.5, 3.0], [5.5, 3.0], [5.5, 3.5]]\n";
    let s = load_with(extra, &[("s.geojson", &g)]).unwrap();
    assert_eq!(s.outline.label, "s.geojson features[1]");
    assert_eq!(s.regions.len(), 2);
    assert_eq!(s.regions[1].ring.label, "regions[1]");
}

#[test]
fn altitudes_are_ignored_with_one_warning() {
    let g = collection(&[&OUTLINE
        .replace("[6, 4]", "[6, 4, 12.5]")
        .replace("[0, 4]", "[0, 4, 3]")]);
    let s = load_with("[geojson]\nfile = \"s.geojson\"\n", &[("s.geojson", &g)]).unwrap();
    let w: Vec<_> = s
        .warnings
        .iter()
        .filter(|w| w.contains("altitude"))
        .collect();
    assert_eq!(w.len(), 1, "{:?}", s.warnings);
    assert!(w[0].contains("2 positions"), "{}", w[0]);
}

#[test]
fn bad_geojson_is_refused_naming_the_feature_and_property() {
    let point = r#"{"type": "Feature", "properties": {"material": "soil"},
      "geometry": {"type": "Point", "coordinates": [1, 1]}}"#;
    let no_material = FILL.replace(r#""material": "fill""#, r#""name": "x""#);
    let unknown = FILL.replace(r#""fill""#, r#""fil""#);
    let named_region = FILL.replace(
        r#""material": "fill""#,
        r#""material": "fill", "boundary": "top""#,
    );
    let cases: Vec<(String, &str)> = vec![
        (
            collection(&[OUTLINE, point]),
            "features[1]: geometry is a Point",
        ),
        (
            collection(&[OUTLINE, &no_material]),
            "features[1]: no property `material`",
        ),
        (
            collection(&[OUTLINE, &unknown]),
            "features[1]: material \"fil\" is not defined",
        ),
        (
            collection(&[OUTLINE, &named_region]),
            "features[1]: `edges`/`boundary` are not allowed on a region",
        ),
        (
            collection(&[&OUTLINE.replace("[6, 4]", "[6, NaN]")]),
            "not valid GeoJSON",
        ),
        (
            collection(&[&OUTLINE.replace(r#""base", "", "top", """#, r#""base", "top""#)]),
            "features[0]: `edges` has 2 names but the ring has 4 segments",
        ),
        (
            collection(&[&OUTLINE.replace(
                r#""material": "soil","#,
                r#""material": "soil", "role": "wall","#,
            )]),
            "features[0]: property `role` = \"wall\"",
        ),
        (
            collection(&[
                OUTLINE,
                &FILL.replace(
                    "[[[1, 0.5]",
                    "[[[1, 0.5], [1.2, 0.6], [1.4, 0.6], [1, 0.5]], [[1, 0.5]",
                ),
            ]),
            "features[1] interior ring 1: interior rings are holes of the outline only",
        ),
        (
            r#"{"type": "Polygon", "coordinates": [[[0, 0], [1, 0], [1, 1], [0, 0]]]}"#.into(),
            "a bare geometry has no properties",
        ),
    ];
    for (text, expected) in cases {
        let e = load_with("[geojson]\nfile = \"s.geojson\"\n", &[("s.geojson", &text)])
            .expect_err(expected);
        assert!(
            e.message().contains(expected),
            "{expected}: {}",
            e.message()
        );
        assert_eq!(e.exit_code(), 2, "{expected}");
    }
    let e = load_with("[geojson]\nfile = \"missing.geojson\"\n", &[]).unwrap_err();
    assert!(
        e.message()
            .contains("[geojson] file \"missing.geojson\": cannot read")
    );
}

#[test]
fn a_model_with_an_unread_import_is_refused() {
    let e = validate(&parse(&format!("[geojson]\nfile = \"s.geojson\"\n{TABLES}")).unwrap())
        .unwrap_err();
    assert!(e.message().contains("[geojson]"), "{}", e.message());
}
