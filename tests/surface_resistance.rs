//! Surface resistance `resistance = R_s` on convection edges (h = 1/R_s): the plane-wall result,
//! equality with the same `h`, the echo, `check` and summary.json, and load cases.

mod common;

use common::{solve_text, xsheat};
use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

/// A plane wall 0.25 m thick (k = 0.8), 1 m high, room side R_si = 0.13 at x = 0, outside
/// R_se = 0.04 at x = 0.25, top and bottom adiabatic. Invented numbers.
const WALL: &str = r#"
title = "wall with surface resistances"
[mesh]
max_area = 0.004
[materials.brick]
conductivity = 0.8
[outline]
material = "brick"
points = [[0.0, 0.0], [0.25, 0.0], [0.25, 1.0], [0.0, 1.0]]
edges = ["cut", "outside", "cut", "room"]
[boundaries.room]
kind = "convection"
resistance = 0.13
ambient = 20.0
[boundaries.outside]
kind = "convection"
resistance = 0.04
ambient = -10.0
[boundaries.cut]
kind = "insulated"
[[probes]]
name = "mid"
at = [0.125, 0.5]
"#;

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .expect("boundary")
        .heat_flow
}

#[test]
fn plane_wall_with_surface_resistances_passes_delta_t_over_the_series_sum() {
    let s = solve(WALL);
    // Source: series thermal resistances of a plane wall, q = ΔT / (R_si + L/k + R_se)
    // (Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3; R_s = 1/h as in
    // ISO 6946). P1 reproduces the linear field exactly: agreement to round-off.
    let r_total = 0.13 + 0.25 / 0.8 + 0.04;
    let q = 30.0 / r_total;
    let room = flow(&s, "room");
    assert!((room - q).abs() <= 1e-9 * q, "{room} vs {q}");
    assert!((flow(&s, "outside") + q).abs() <= 1e-9 * q);
    // Mid-wall temperature: 20 − q·(R_si + 0.125/k), same source.
    let t_mid = 20.0 - q * (0.13 + 0.125 / 0.8);
    let probe = s.results.probes[0].temperature;
    assert!((probe - t_mid).abs() <= 1e-9, "{probe} vs {t_mid}");
}

#[test]
fn resistance_equals_the_film_coefficient_one_over_r() {
    // h = 1/R_s exactly: 1/0.125 = 8 and 1/0.04 = 25 are exact in binary, so the two models
    // give bit-identical temperatures.
    let by_r = WALL.replace("resistance = 0.13", "resistance = 0.125");
    let by_h = by_r
        .replace("resistance = 0.125", "h = 8.0")
        .replace("resistance = 0.04", "h = 25.0");
    let a = solve(&by_r);
    let b = solve(&by_h);
    assert_eq!(a.results.temperature, b.results.temperature);
    // The echo keeps the key the user wrote.
    let echo = a.section().resolved_json();
    assert_eq!(echo["boundaries"]["room"]["resistance"], 0.125);
    assert!(echo["boundaries"]["room"].get("h").is_none());
    let echo_h = b.section().resolved_json();
    assert_eq!(echo_h["boundaries"]["room"]["h"], 8.0);
    // The echo reads back as the same section.
    let back = model::parse(&toml::to_string(&a.section().resolved_model()).expect("toml"))
        .expect("parse echo");
    let again = model::validate(&back).expect("valid echo");
    assert_eq!(again.boundaries, a.section().boundaries);
}

#[test]
fn check_and_summary_show_the_resistance() {
    let d = common::tmp();
    let path = common::write(d.path(), "wall.toml", WALL);
    let out = xsheat([std::ffi::OsStr::new("check"), path.as_os_str()]);
    assert_eq!(out.code, 0, "{}", out.stderr);
    assert!(
        out.stdout.contains("R_s = 0.13 m²·K/W"),
        "check output: {}",
        out.stdout
    );
    let (run, _d, dir) = solve_text(WALL, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let text = std::fs::read_to_string(dir.join("summary.json")).expect("summary");
    let v: serde_json::Value = serde_json::from_str(&text).expect("json");
    let room = v["boundaries"]
        .as_array()
        .expect("boundaries")
        .iter()
        .find(|b| b["name"] == "room")
        .expect("room")
        .clone();
    assert_eq!(room["condition"]["resistance_m2_k_per_w"], 0.13);
    assert_eq!(room["condition"]["h_w_per_m2_k"], 1.0 / 0.13);
    assert_eq!(v["model"]["boundaries"]["room"]["resistance"], 0.13);
}

#[test]
fn a_case_may_change_the_resistance_or_give_h_instead() {
    let text = format!(
        "{WALL}\n[[cases]]\nname = \"still-air\"\n[cases.boundaries.outside]\nresistance = 0.13\n[[cases]]\nname = \"by-h\"\n[cases.boundaries.outside]\nh = 25.0\n[[cases]]\nname = \"ambient-only\"\n[cases.boundaries.outside]\nambient = 0.0\n"
    );
    let s = solve(&text);
    let sec = s.section();
    assert_eq!(sec.cases[0].boundaries[0].resistance, Some(0.13));
    assert_eq!(sec.cases[1].boundaries[0].resistance, None);
    // A case that leaves the film coefficient alone keeps the base's resistance.
    assert_eq!(sec.cases[2].boundaries[0].resistance, Some(0.04));
    // Source: series resistances as above, with R_se = 0.13 in the first case.
    let q = 30.0 / (0.13 + 0.25 / 0.8 + 0.13);
    let room = &s.cases[0].results.boundaries;
    let got = room
        .iter()
        .find(|b| b.name == "room")
        .expect("room")
        .heat_flow;
    assert!((got - q).abs() <= 1e-9 * q, "{got} vs {q}");
    assert!(sec.case_changes_matrix(0));
    assert!(!sec.case_changes_matrix(2));
    let echo = sec.resolved_json();
    assert_eq!(
        echo["cases"][0]["boundaries"]["outside"]["resistance"],
        0.13
    );
    assert_eq!(echo["cases"][1]["boundaries"]["outside"]["h"], 25.0);
}

#[test]
fn bad_resistances_are_refused_naming_the_boundary() {
    for (from, to, words) in [
        (
            "resistance = 0.13",
            "resistance = 0.13\nh = 7.7",
            &["boundaries.room", "either `h` or `resistance`"][..],
        ),
        (
            "resistance = 0.13\n",
            "",
            &["boundaries.room", "needs `h`", "`resistance`"][..],
        ),
        (
            "resistance = 0.13",
            "resistance = 0.0",
            &["boundaries.room", "resistance = 0"][..],
        ),
        (
            "resistance = 0.13",
            "resistance = -0.13",
            &["boundaries.room", "resistance = -0.13"][..],
        ),
        (
            "resistance = 0.13",
            "resistance = nan",
            &["boundaries.room", "resistance = NaN"][..],
        ),
        (
            "kind = \"insulated\"",
            "kind = \"insulated\"\nresistance = 0.1",
            &["boundaries.cut", "`resistance` does not apply"][..],
        ),
    ] {
        assert!(WALL.contains(from));
        let text = WALL.replacen(from, to, 1);
        let err = model::validate(&model::parse(&text).expect("parse"))
            .expect_err(to)
            .to_string();
        for w in words {
            assert!(err.contains(w), "{to:?}: {err}");
        }
    }
    // In a case: both keys.
    let text = format!(
        "{WALL}\n[[cases]]\nname = \"both\"\n[cases.boundaries.room]\nh = 7.7\nresistance = 0.13\n"
    );
    let err = model::validate(&model::parse(&text).expect("parse"))
        .expect_err("both in a case")
        .to_string();
    assert!(
        err.contains("cases[0]") && err.contains("boundaries.room"),
        "{err}"
    );
}
