//! `xsheat schema`: the model schema accepts every demo and embedded example model (converted
//! from TOML to JSON) and rejects what the model reader rejects for its shape (unknown keys,
//! wrong types, malformed points); the summary schema accepts a real summary.json; the command
//! prints only the schema and refuses an unknown name with exit 2.

mod common;

use common::{L_SECTION, repo_file, solve_text, xsheat};
use serde_json::Value;
use std::path::PathBuf;
use xsheat::model::{model_schema, parse};
use xsheat::output::summary_schema;

/// A TOML text as the JSON value a TOML editor validates.
fn toml_to_json(text: &str) -> Value {
    let v: toml::Value = toml::from_str(text).expect("TOML");
    serde_json::to_value(v).expect("TOML value to JSON")
}

/// The validator of a schema, after checking the schema against the 2020-12 meta-schema.
fn validator(schema: &Value) -> jsonschema::Validator {
    assert_eq!(
        schema["$schema"],
        "https://json-schema.org/draft/2020-12/schema"
    );
    jsonschema::meta::validate(schema).expect("a valid draft 2020-12 schema");
    jsonschema::draft202012::new(schema).expect("schema compiles")
}

/// Every error of `instance` against `v`, one line each.
fn errors(v: &jsonschema::Validator, instance: &Value) -> Vec<String> {
    v.iter_errors(instance)
        .map(|e| format!("{} at {}", e, e.instance_path()))
        .collect()
}

/// The model files of the repository: demos under geometry/ (sweep plans excepted), the
/// starter models of `xsheat new --template` and the test fixtures.
fn model_files() -> Vec<PathBuf> {
    let mut files = Vec::new();
    for dir in ["geometry", "assets/templates", "tests/fixtures"] {
        for entry in std::fs::read_dir(repo_file(dir)).expect("read dir") {
            let path = entry.expect("entry").path();
            let name = path.to_string_lossy().to_string();
            if name.ends_with(".toml") && !name.ends_with("-sweep.toml") {
                files.push(path);
            }
        }
    }
    files.sort();
    files
}

/// The models embedded in examples/ as `const NAME: &str = r#"…"#;` (those built with
/// `format!` have placeholders and are left out).
fn example_models() -> Vec<(String, String)> {
    let mut out = Vec::new();
    for entry in std::fs::read_dir(repo_file("examples")).expect("read examples") {
        let path = entry.expect("entry").path();
        // Subdirectories (code shared by examples, `examples/NAME/main.rs`) are left out.
        if !path.is_file() {
            continue;
        }
        let text = std::fs::read_to_string(&path).expect("read example");
        let mut rest = text.as_str();
        while let Some(i) = rest.find(": &str = r#\"") {
            rest = &rest[i + ": &str = r#\"".len()..];
            let end = rest.find("\"#;").expect("end of the raw string");
            out.push((path.display().to_string(), rest[..end].to_string()));
            rest = &rest[end..];
        }
    }
    out
}

#[test]
fn every_demo_fixture_and_example_model_validates() {
    let v = validator(&model_schema());
    let mut models: Vec<(String, String)> = model_files()
        .into_iter()
        .map(|p| {
            let text = std::fs::read_to_string(&p).expect("read model");
            (p.display().to_string(), text)
        })
        .collect();
    let examples = example_models();
    assert!(examples.len() >= 2, "bench.rs and grid_slab.rs models");
    models.extend(examples);
    assert!(models.len() >= 12, "{} models", models.len());
    for (name, text) in &models {
        parse(text).unwrap_or_else(|e| panic!("{name}: the reader refuses it: {e}"));
        let e = errors(&v, &toml_to_json(text));
        assert!(e.is_empty(), "{name}: {}", e.join("\n"));
    }
}

/// Every form of every key the reader takes, in one model (shape only: `parse`, not
/// `validate`).
const ALL_FORMS: &str = r#"
title = "all forms"
length_unit = "mm"
[mesh]
max_area = 100.0
min_angle = 28
[materials.a]
conductivity = 1
heat_source = 10.0
max_area = 50.0
[materials.b]
conductivity = [2.0, 1.0]
orientation = 30.0
[materials.c]
conductivity = { table = [[0.0, 1.0], [50, 1.2]] }
[outline]
material = "a"
points = [[0, 0], { arc = { center = [5.0, 0.0], to = [10.0, 0.0], direction = "cw", segments = 8 } }, [10, 10]]
edges = ["x", "", "y"]
[[regions]]
material = "b"
rectangle = { corner = [1.0, 1.0], width = 2.0, height = 1.0 }
boundary = "r"
[[holes]]
circle = { center = [5.0, 5.0], radius = 1.0, segments = 12 }
boundary = "h"
[boundaries.x]
kind = "fixed"
temperature = 10
size = 0.5
[boundaries.y]
kind = "convection"
resistance = 0.13
ambient = 20.0
emissivity = 0.9
surroundings = 18.0
[[probes]]
name = "p"
at = [1.0, 2.0]
[[lines]]
name = "l"
from = [0.0, 0.0]
to = [1.0, 1.0]
samples = 5
[[cases]]
name = "winter"
[cases.boundaries.x]
temperature = -5.0
[cases.materials.b]
conductivity = [2.5, 1.0]
heat_source = 0.0
[[cuts]]
name = "c"
points = [[0.0, 0.0], [1.0, 0.0]]
[environments]
inside = ["y"]
outside = ["x"]
f_rsi_min = 0.7
[[psi]]
name = "j"
coupling = ["inside", "outside"]
reference = [{ u = 0.3, length = 1000.0 }]
[geojson]
file = "ground.geojson"
[drawing]
file = "d.dxf"
length_unit = "mm"
tolerance = 0.01
default_boundary = "x"
[drawing.layers.WALL]
material = "a"
outline = true
[drawing.layers.HOLES]
hole = true
boundary = "h"
"#;

#[test]
fn every_form_the_reader_takes_validates() {
    let v = validator(&model_schema());
    parse(ALL_FORMS).expect("the reader takes every form");
    let e = errors(&v, &toml_to_json(ALL_FORMS));
    assert!(e.is_empty(), "{}", e.join("\n"));
}

#[test]
fn bad_shapes_are_refused_by_the_schema_and_the_reader() {
    let v = validator(&model_schema());
    let bad: [(&str, &str, &str); 12] = [
        ("unknown top key", "", "colour = \"red\"\n"),
        (
            "unknown material key",
            "[materials.a]\nconductivity = 1.0\ndensity = 2000.0\n",
            "",
        ),
        (
            "conductivity a string",
            "[materials.a]\nconductivity = \"high\"\n",
            "",
        ),
        (
            "conductivity of three numbers",
            "[materials.a]\nconductivity = [1.0, 2.0, 3.0]\n",
            "",
        ),
        (
            "conductivity table with another key",
            "[materials.a]\nconductivity = { table = [[0.0, 1.0]], law = \"x\" }\n",
            "",
        ),
        (
            "missing conductivity",
            "[materials.a]\nheat_source = 1.0\n",
            "",
        ),
        (
            "point of three numbers",
            "[outline]\npoints = [[0.0, 0.0, 1.0], [1.0, 0.0], [1.0, 1.0]]\n",
            "",
        ),
        (
            "arc with an unknown key",
            "[outline]\npoints = [[0.0, 0.0], { arc = { center = [1.0, 0.0], to = [2.0, 0.0], direction = \"cw\", radius = 1.0 } }, [1.0, 1.0]]\n",
            "",
        ),
        (
            "boundary h a string",
            "[boundaries.top]\nkind = \"convection\"\nh = \"ten\"\nambient = 20.0\n",
            "",
        ),
        (
            "boundary without kind",
            "[boundaries.top]\ntemperature = 20.0\n",
            "",
        ),
        (
            "samples not a whole number",
            "[[lines]]\nname = \"l\"\nfrom = [0.0, 0.0]\nto = [1.0, 0.0]\nsamples = 2.5\n",
            "",
        ),
        (
            "environment of a number",
            "[environments]\ninside = 3.0\n",
            "",
        ),
    ];
    for (what, table, top) in bad {
        let text = format!("{top}{table}");
        assert!(parse(&text).is_err(), "{what}: the reader takes it");
        assert!(
            !v.is_valid(&toml_to_json(&text)),
            "{what}: the schema takes it"
        );
    }
}

/// Names the reader takes as text but `validate` refuses are listed in the schema (so editors
/// complete them): another name fails both.
#[test]
fn named_choices_match_validation() {
    let v = validator(&model_schema());
    let good = L_SECTION.to_string();
    assert!(xsheat::model::validate(&parse(&good).unwrap()).is_ok());
    assert!(v.is_valid(&toml_to_json(&good)));
    let bad = [
        (
            "a kind that does not exist",
            good.replacen("kind = \"fixed\"", "kind = \"dirichlet\"", 1),
        ),
        (
            "a length unit that does not exist",
            format!("length_unit = \"inch\"\n{good}"),
        ),
    ];
    for (what, text) in bad {
        assert_ne!(text, good, "{what}: the fixture changed");
        let file = parse(&text).expect("the reader takes the text");
        assert!(
            xsheat::model::validate(&file).is_err(),
            "{what}: validation takes it"
        );
        assert!(
            !v.is_valid(&toml_to_json(&text)),
            "{what}: the schema takes it"
        );
    }
}

#[test]
fn schema_command_prints_only_the_schema() {
    let r = xsheat(["schema", "model"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.stderr.is_empty(), "{}", r.stderr);
    let printed: Value = serde_json::from_str(&r.stdout).expect("stdout is one JSON document");
    assert_eq!(printed, model_schema());
    // Every key of the model says what it is: a description on each property.
    let text = r.stdout;
    assert!(text.contains("length_unit (default m)"));
    assert!(!text.contains("\"null\""), "TOML has no null");

    let r = xsheat(["schema", "summary"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let printed: Value = serde_json::from_str(&r.stdout).expect("stdout is one JSON document");
    assert_eq!(printed, summary_schema());

    let r = xsheat(["schema", "mesh"]);
    assert_eq!(r.code, 2);
    assert!(r.stdout.is_empty());
    assert!(r.stderr.contains("schema mesh"), "{}", r.stderr);
}

/// Every property of every object of the model schema has a description.
#[test]
fn every_model_key_is_described() {
    fn walk(s: &Value, at: &str, missing: &mut Vec<String>) {
        if let Some(props) = s.get("properties").and_then(Value::as_object) {
            for (k, p) in props {
                if p.get("description").is_none() {
                    missing.push(format!("{at}.{k}"));
                }
                walk(p, &format!("{at}.{k}"), missing);
            }
        }
        if let Some(defs) = s.get("$defs").and_then(Value::as_object) {
            for (k, d) in defs {
                walk(d, k, missing);
            }
        }
        for key in ["anyOf", "oneOf"] {
            for alt in s.get(key).and_then(Value::as_array).into_iter().flatten() {
                walk(alt, at, missing);
            }
        }
    }
    let mut missing = Vec::new();
    walk(&model_schema(), "model", &mut missing);
    assert!(
        missing.is_empty(),
        "keys without a description: {missing:?}"
    );
}

#[test]
fn a_real_summary_validates_against_the_summary_schema() {
    let v = validator(&summary_schema());
    let (r, _d, out) = solve_text(L_SECTION, &["--quiet"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let text = std::fs::read_to_string(out.join("summary.json")).expect("summary.json");
    let summary: Value = serde_json::from_str(&text).expect("JSON");
    let e = errors(&v, &summary);
    assert!(e.is_empty(), "{}", e.join("\n"));
    // A key the schema does not know is refused (the top level is closed).
    let mut extra = summary.clone();
    extra["surprise_c"] = Value::from(1.0);
    assert!(!v.is_valid(&extra));
}
