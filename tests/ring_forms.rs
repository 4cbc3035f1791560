//! Ring forms: `rectangle`, arcs inside `points`, and the closing point (a last point that
//! repeats the first), through the library and the command line.

mod common;

use xsheat::model::{self, Section, circle_segments};
use xsheat::run;

/// The model `body` after a header with two materials and the boundaries used below.
fn model(body: &str) -> String {
    format!(
        r#"
[mesh]
max_area = 0.01
[materials.a]
conductivity = 1.0
[boundaries.b]
kind = "fixed"
temperature = 0.0
[boundaries.c]
kind = "fixed"
temperature = 1.0
{body}"#
    )
}

fn section(body: &str) -> Section {
    let text = model(body);
    model::validate(&model::parse(&text).expect("parses")).expect("valid")
}

fn input_error(body: &str) -> String {
    let text = model(body);
    match model::parse(&text).and_then(|m| model::validate(&m)) {
        Ok(_) => panic!("accepted: {body}"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn rectangle_equals_its_four_points() {
    let rect = section(
        "[outline]\nmaterial = \"a\"\nrectangle = { corner = [1.0, 2.0], width = 3.0, height = 0.5 }\nedges = [\"b\", \"\", \"c\", \"\"]\n",
    );
    let pts = section(
        "[outline]\nmaterial = \"a\"\npoints = [[1.0, 2.0], [4.0, 2.0], [4.0, 2.5], [1.0, 2.5]]\nedges = [\"b\", \"\", \"c\", \"\"]\n",
    );
    assert_eq!(rect.outline, pts.outline);
    let e = input_error(
        "[outline]\nmaterial = \"a\"\nrectangle = { corner = [0.0, 0.0], width = -1.0, height = 1.0 }\n",
    );
    assert!(e.contains("outline: rectangle width"), "{e}");
    let e = input_error(
        "[outline]\nmaterial = \"a\"\nrectangle = { corner = [0.0, 0.0], width = 1.0, height = 1.0 }\npoints = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]\n",
    );
    assert!(e.contains("outline: give one of"), "{e}");
}

#[test]
fn a_closing_point_takes_no_name_of_its_own() {
    let four = section(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]\nedges = [\"b\", \"\", \"c\", \"\"]\n",
    );
    let five = section(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]\nedges = [\"b\", \"\", \"c\", \"\"]\n",
    );
    assert_eq!(four.outline, five.outline);
    assert!(
        !five.warnings.iter().any(|w| w.contains("repeats")),
        "{:?}",
        five.warnings
    );
    // The older rule (one name per written point, the closing one dropped) still reads.
    let older = section(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]\nedges = [\"b\", \"\", \"c\", \"\", \"\"]\n",
    );
    assert_eq!(four.outline, older.outline);
    assert!(older.warnings.iter().any(|w| w.contains("repeats point")));
    // Other consecutive repeats keep one name per written point.
    let inner = section(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]\nedges = [\"b\", \"\", \"\", \"c\", \"\"]\n",
    );
    assert_eq!(four.outline.points, inner.outline.points);
    let e = input_error(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0]]\nedges = [\"b\", \"\", \"c\"]\n",
    );
    assert!(e.contains("3 names") && e.contains("4 segments"), "{e}");
}

/// A quarter disc of radius 1: two straight edges and one arc named "c".
const QUARTER: &str = "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [1.0, 0.0], { arc = { center = [0.0, 0.0], to = [0.0, 1.0], direction = \"ccw\" } }]\nedges = [\"b\", \"c\", \"b\"]\n";

#[test]
fn arcs_are_split_by_the_circle_rule_and_take_one_name() {
    let s = section(QUARTER);
    let full = circle_segments(1.0, 0.01, None);
    let n = full.div_ceil(4);
    assert_eq!(s.outline.arcs.len(), 1);
    let arc = s.outline.arcs[0];
    assert_eq!(arc.segments, n);
    assert!((arc.angle_deg - 90.0).abs() < 1e-12);
    assert_eq!(s.outline.len(), n + 2);
    let c_id = s.boundaries.iter().position(|b| b.name == "c").unwrap();
    let on_arc = (0..s.outline.len())
        .filter(|&i| s.outline.edge_boundary[i] == Some(c_id))
        .count();
    assert_eq!(on_arc, n);
    assert!(s.outline.written_segment.iter().all(|&k| k < 3));
    for p in &s.outline.points[1..] {
        let r = p[0].hypot(p[1]);
        assert!(r < 1e-12 || (r - 1.0).abs() < 1e-12, "{p:?}");
    }
    // Area of the inscribed fan: n triangles of area ½ r² sin(θ/n) (elementary geometry,
    // common practice); sagitta r(1 − cos(θ/2n)).
    let theta = std::f64::consts::FRAC_PI_2;
    let fan = 0.5 * n as f64 * (theta / n as f64).sin();
    let area = xsheat::geom::polygon_area(&s.outline.points);
    assert!((area - fan).abs() < 1e-12, "{area} vs {fan}");
    assert!((arc.sagitta() - (1.0 - (theta / (2.0 * n as f64)).cos())).abs() < 1e-15);
}

#[test]
fn a_clockwise_arc_and_two_half_arcs_match_their_counterparts() {
    let ccw = section(QUARTER);
    let cw = section(
        "[outline]\nmaterial = \"a\"\npoints = [[0.0, 0.0], [0.0, 1.0], { arc = { center = [0.0, 0.0], to = [1.0, 0.0], direction = \"cw\" } }]\nedges = [\"b\", \"c\", \"b\"]\n",
    );
    let mut a = ccw.outline.points.clone();
    let mut b = cw.outline.points.clone();
    let key =
        |p: &[f64; 2]| (p[0] * 1e9).round() as i64 * 1_000_000_000 + (p[1] * 1e9).round() as i64;
    a.sort_by_key(key);
    b.sort_by_key(key);
    assert_eq!(a.len(), b.len());
    for (p, q) in a.iter().zip(&b) {
        assert!((p[0] - q[0]).abs() < 1e-12 && (p[1] - q[1]).abs() < 1e-12);
    }
    // Two half-turn arcs of 16 chords each make the same polygon as a 32-segment circle.
    let arcs = section(
        "[outline]\nmaterial = \"a\"\npoints = [[1.0, 0.0], { arc = { center = [0.0, 0.0], to = [-1.0, 0.0], direction = \"ccw\", segments = 16 } }, { arc = { center = [0.0, 0.0], to = [1.0, 0.0], direction = \"ccw\", segments = 16 } }]\nboundary = \"b\"\n",
    );
    let circle = section(
        "[outline]\nmaterial = \"a\"\ncircle = { center = [0.0, 0.0], radius = 1.0, segments = 32 }\nboundary = \"b\"\n",
    );
    assert_eq!(arcs.outline.len(), 32);
    for (p, q) in arcs.outline.points.iter().zip(&circle.outline.points) {
        assert!(
            (p[0] - q[0]).abs() < 1e-12 && (p[1] - q[1]).abs() < 1e-12,
            "{p:?} {q:?}"
        );
    }
}

#[test]
fn bad_arcs_name_the_entry() {
    let cases = [
        ("to = [0.0, 1.2]", "points[2]: arc radius mismatch"),
        ("direction = \"ccw\"", "points[2]: arc direction \"cc\""),
        ("to = [0.0, 1.0]", "points[2]: the arc ends where it starts"),
    ];
    let replacements = [
        ("to = [0.0, 1.0]", "to = [0.0, 1.2]"),
        ("direction = \"ccw\"", "direction = \"cc\""),
        ("[1.0, 0.0], {", "[0.0, 1.0], {"),
    ];
    for ((_, want), (from, to)) in cases.iter().zip(replacements) {
        let body = QUARTER.replacen(from, to, 1);
        let e = input_error(&body);
        assert!(e.contains(&format!("outline: {want}")), "{e}");
    }
    // Through the command line: exit 2, nothing written.
    let (o, _d, out) =
        common::solve_text(&model(&QUARTER.replace("[0.0, 1.0]", "[0.0, 1.3]")), &[]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains("points[2]"), "{}", o.stderr);
    assert!(!out.exists());
}

#[test]
fn arcs_and_rectangles_echo_back_to_the_same_section() {
    let s = section(&format!(
        "{QUARTER}[[holes]]\nrectangle = {{ corner = [0.2, 0.2], width = 0.1, height = 0.2 }}\nboundary = \"c\"\n"
    ));
    let value: toml::Value = serde_json::from_value(s.resolved_json()).expect("a table");
    let text = toml::to_string(&value).expect("TOML");
    let back = model::validate(&model::parse(&text).expect("echo parses")).expect("echo valid");
    assert_eq!(back.outline.points, s.outline.points);
    assert_eq!(back.outline.edge_boundary, s.outline.edge_boundary);
    assert_eq!(back.holes[0].points, s.holes[0].points);
}

#[test]
fn check_prints_the_arc_chords_and_sagitta() {
    let d = common::tmp();
    let path = common::write(d.path(), "quarter.toml", &model(QUARTER));
    let o = common::xsheat([std::ffi::OsStr::new("check"), path.as_os_str()]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    assert!(o.stdout.contains("arc (segment 1)"), "{}", o.stdout);
    assert!(o.stdout.contains("sagitta"), "{}", o.stdout);
}

/// Radial conduction through a quarter of a thick tube, the arcs fixed at 1 °C (r = 1 m) and
/// 0 °C (r = 2 m), the radial edges insulated: heat flow Q = k·θ·ΔT / ln(r₂/r₁) per metre of
/// depth (cylindrical wall, Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, eq. 3.32
/// with 2π replaced by the angle θ).
#[test]
fn a_quarter_tube_drawn_with_arcs_conducts_radially() {
    let body = "[outline]\nmaterial = \"a\"\npoints = [[1.0, 0.0], [2.0, 0.0], { arc = { center = [0.0, 0.0], to = [0.0, 2.0], direction = \"ccw\", segments = 48 } }, [0.0, 1.0], { arc = { center = [0.0, 0.0], to = [1.0, 0.0], direction = \"cw\", segments = 48 } }]\nedges = [\"\", \"b\", \"\", \"c\"]\n";
    let p = run::prepare_model(model::parse(&model(body)).unwrap()).unwrap();
    let r = run::solve(p, &xsheat::mesh::MeshOptions::default()).unwrap();
    let q_c = r
        .results
        .boundaries
        .iter()
        .find(|f| f.name == "c")
        .unwrap()
        .heat_flow
        .abs();
    let exact = std::f64::consts::FRAC_PI_2 / 2f64.ln();
    // Chords of 48 per quarter shrink the section by about sagitta/r ~ 1e-4; mesh error ~1e-3.
    assert!((q_c - exact).abs() / exact < 5e-3, "{q_c} vs {exact}");
}
