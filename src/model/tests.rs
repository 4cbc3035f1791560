//! Unit tests of the model stage: parsing errors, suggestions, ring clean-up, the echo.

use super::*;

#[test]
fn suggestions_for_misspellings() {
    let keys = [
        "title",
        "mesh",
        "materials",
        "outline",
        "boundaries",
        "probes",
    ];
    assert_eq!(suggest("boundary", keys.into_iter()), Some("boundaries"));
    assert_eq!(suggest("materail", keys.into_iter()), Some("materials"));
    assert_eq!(suggest("Outline", keys.into_iter()), Some("outline"));
    assert_eq!(suggest("xyzzy", keys.into_iter()), None);
}

#[test]
fn unknown_top_level_table_names_line_and_suggests() {
    let e = parse("title = \"x\"\n[boundary.a]\nkind = \"fixed\"\n").unwrap_err();
    let m = e.message();
    assert!(m.contains("line 2"), "{m}");
    assert!(m.contains("did you mean `boundaries`"), "{m}");
    assert_eq!(e.exit_code(), 2);
}

#[test]
fn circle_segment_rule() {
    // N = max(24, ⌈2πr/ℓ⌉), ℓ = (4·A/√3)^½: for A = 0.01, ℓ = 0.15197 m, r = 1 → 42.
    assert_eq!(circle_segments(1.0, 0.01, None), 42);
    assert_eq!(circle_segments(0.1, 0.01, None), 24);
    assert_eq!(circle_segments(1.0, 0.01, Some(7)), 7);
}

#[test]
fn clockwise_rings_are_reoriented_with_their_names() {
    let text = r#"
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [0.0, 1.0], [1.0, 1.0], [1.0, 0.0]]
edges = ["left", "top", "right", "bottom"]
[boundaries.left]
kind = "fixed"
temperature = 0.0
[boundaries.top]
kind = "insulated"
[boundaries.right]
kind = "insulated"
[boundaries.bottom]
kind = "insulated"
"#;
    let s = validate(&parse(text).unwrap()).unwrap();
    let r = &s.outline;
    assert!(crate::geom::polygon_area(&r.points) > 0.0);
    // Each segment keeps its name: find the segment from (0,1) to (0,0) (left, reversed).
    let name = |i: usize| r.edge_boundary[i].map(|b| s.boundaries[b].name.clone());
    for i in 0..4 {
        let (a, b) = r.segment(i);
        let expected = match (a, b) {
            ([0.0, 1.0], [0.0, 0.0]) => "left",
            ([1.0, 1.0], [0.0, 1.0]) => "top",
            ([1.0, 0.0], [1.0, 1.0]) => "right",
            ([0.0, 0.0], [1.0, 0.0]) => "bottom",
            _ => panic!("unexpected segment {a:?} → {b:?}"),
        };
        assert_eq!(name(i).as_deref(), Some(expected));
    }
}

#[test]
fn repeated_points_are_dropped_with_a_warning() {
    let text = r#"
[materials.a]
conductivity = 1.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]
edges = ["b", "", "b", "b", "b", "gone"]
[boundaries.b]
kind = "fixed"
temperature = 0.0
[boundaries.gone]
kind = "insulated"
"#;
    let s = validate(&parse(text).unwrap()).unwrap();
    assert_eq!(s.outline.len(), 4);
    assert!(s.outline.edge_boundary.iter().all(|b| b.is_some()));
    assert!(s.warnings.iter().any(|w| w.contains("repeats point 1")));
    assert!(s.warnings.iter().any(|w| w.contains("\"gone\"")));
}

/// Convert the echoed model (JSON) to TOML text.
fn echo_as_toml(s: &Section) -> String {
    let value: toml::Value = serde_json::from_value(s.resolved_json()).expect("echo is a table");
    toml::to_string(&value).expect("echo converts to TOML")
}

#[test]
fn echoed_demo_models_read_back_as_the_same_section() {
    for (name, text) in [
        (
            "buried-pipes",
            include_str!("../../geometry/buried-pipes.toml"),
        ),
        (
            "utility-tunnel",
            include_str!("../../geometry/utility-tunnel.toml"),
        ),
        ("parapet-mm", include_str!("../../geometry/parapet-mm.toml")),
        (
            "vaulted-cable-tunnel",
            include_str!("../../geometry/vaulted-cable-tunnel.toml"),
        ),
        (
            "wall-junction",
            include_str!("../../geometry/wall-junction.toml"),
        ),
    ] {
        let s = validate(&parse(text).unwrap()).unwrap();
        let toml_text = echo_as_toml(&s);
        let back =
            validate(&parse(&toml_text).unwrap_or_else(|e| panic!("{name}: {e}\n{toml_text}")))
                .unwrap_or_else(|e| panic!("{name}: {e}\n{toml_text}"));
        // The echo writes the resolved max_area out, so only the "was it a default" flag differs.
        assert!(!back.mesh.max_area_is_default, "{name}");
        let mut back = back;
        back.mesh.max_area_is_default = s.mesh.max_area_is_default;
        assert_eq!(back, s, "{name}\n{toml_text}");
    }
}

#[test]
fn echo_uses_the_model_file_keys() {
    let text = r#"
[materials.a]
conductivity = 2.0
[outline]
material = "a"
circle = { center = [0.0, 0.0], radius = 1.0 }
boundary = "skin"
[boundaries.skin]
kind = "convection"
h = 8.0
ambient = -5.0
"#;
    let s = validate(&parse(text).unwrap()).unwrap();
    let v = s.resolved_json();
    assert_eq!(v["outline"]["circle"]["segments"], s.outline.len());
    assert_eq!(v["outline"]["boundary"], "skin");
    assert_eq!(v["boundaries"]["skin"]["kind"], "convection");
    assert_eq!(v["boundaries"]["skin"]["ambient"], -5.0);
    assert_eq!(v["materials"]["a"]["heat_source"], 0.0);
    assert_eq!(v["mesh"]["max_area"], s.mesh.max_area);
    assert_eq!(v["title"], "untitled");
}

const SQUARE: &str = r#"
[materials.a]
conductivity = 2.0
[outline]
material = "a"
points = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]
boundary = "b"
[boundaries.b]
kind = "fixed"
temperature = 0.0
"#;

#[test]
fn values_at_each_stated_limit_pass_and_beyond_fail() {
    let cases = [
        (
            "conductivity = 2.0",
            "conductivity",
            MIN_CONDUCTIVITY,
            MAX_CONDUCTIVITY,
        ),
        (
            "temperature = 0.0",
            "temperature",
            ABSOLUTE_ZERO_C,
            MAX_ABS_TEMPERATURE_C,
        ),
    ];
    for (from, key, lo, hi) in cases {
        for (v, ok) in [
            (lo, true),
            (hi, true),
            (hi * 1.001, false),
            (lo - lo.abs() * 0.001, false),
        ] {
            let text = SQUARE.replace(from, &format!("{key} = {v:e}"));
            let r = validate(&parse(&text).unwrap());
            assert_eq!(r.is_ok(), ok, "{key} = {v:e}: {r:?}");
            if let Err(e) = r {
                assert_eq!(e.exit_code(), 2);
                assert!(e.message().contains(key), "{}", e.message());
            }
        }
    }
    let bounded = [
        (
            "kind = \"fixed\"\ntemperature = 0.0",
            "kind = \"flux\"\nflux",
            MAX_ABS_FLUX,
        ),
        (
            "conductivity = 2.0",
            "conductivity = 2.0\nheat_source",
            MAX_ABS_HEAT_SOURCE,
        ),
        (
            "kind = \"fixed\"\ntemperature = 0.0",
            "kind = \"convection\"\nambient = 0.0\nh",
            MAX_FILM_COEFFICIENT,
        ),
    ];
    for (from, to, max) in bounded {
        for (v, ok) in [(max, true), (max * 1.001, false)] {
            let text = SQUARE.replace(from, &format!("{to} = {v:e}"));
            let r = validate(&parse(&text).unwrap());
            assert_eq!(r.is_ok(), ok, "{to} = {v:e}: {r:?}");
        }
    }
}

#[test]
fn names_up_to_the_limit_pass_and_longer_fail() {
    let at = SQUARE.replace("\"b\"", &format!("\"{}\"", "b".repeat(MAX_NAME_CHARS)));
    let at = at.replace(
        "boundaries.b]",
        &format!("boundaries.{}]", "b".repeat(MAX_NAME_CHARS)),
    );
    assert!(validate(&parse(&at).unwrap()).is_ok());
    let over = at.replace(&"b".repeat(MAX_NAME_CHARS), &"b".repeat(MAX_NAME_CHARS + 1));
    let e = validate(&parse(&over).unwrap()).unwrap_err();
    assert!(e.message().contains("limit of 64"), "{}", e.message());
}

#[test]
fn title_up_to_the_limit_passes() {
    let t = format!("title = \"{}\"\n{SQUARE}", "t".repeat(MAX_TITLE_CHARS));
    assert_eq!(
        validate(&parse(&t).unwrap()).unwrap().title.len(),
        MAX_TITLE_CHARS
    );
}

#[cfg(target_os = "linux")]
#[test]
fn unbounded_stream_is_cut_at_the_file_limit() {
    // /dev/zero has no size on disk: the bounded read stops one byte past the limit.
    let e = load(std::path::Path::new("/dev/zero")).unwrap_err();
    assert_eq!(e.exit_code(), 2);
    assert!(e.message().contains("64 MiB"), "{}", e.message());
}
