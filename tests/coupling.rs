//! Coupling coefficients L2D, linear thermal transmittances ψ and temperature factors f_Rsi of
//! declared environments; their summary.json records; the bad-input cases of
//! `[environments]`, `[[psi]]` and `[[cuts]]`. Each check against the outside world names its
//! source.

mod common;

use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

/// A plane wall 1.3 m high: masonry 0.2 m (k = 0.9) and insulation 0.1 m (k = 0.035), room
/// film h_i = 7.7 (R_si = 0.13) at x = 0, outside film h_e = 25 (R_se = 0.04) at x = 0.3,
/// top and bottom adiabatic. Invented numbers.
const WALL: &str = r#"
title = "plane wall"
[mesh]
max_area = 0.002
[materials.masonry]
conductivity = 0.9
[materials.insulation]
conductivity = 0.035
[outline]
material = "masonry"
points = [[0.0, 0.0], [0.3, 0.0], [0.3, 1.3], [0.0, 1.3]]
edges = ["cut", "outer-face", "cut", "room-face"]
[[regions]]
material = "insulation"
points = [[0.2, 0.0], [0.3, 0.0], [0.3, 1.3], [0.2, 1.3]]
[boundaries.room-face]
kind = "convection"
h = 7.7
ambient = 20.0
[boundaries.outer-face]
kind = "convection"
h = 25.0
ambient = -5.0
[boundaries.cut]
kind = "insulated"
"#;

/// U of [`WALL`], W/(m²·K): series thermal resistances (Incropera et al., Fundamentals of Heat
/// and Mass Transfer, ch. 3).
fn wall_u() -> f64 {
    1.0 / (1.0 / 7.7 + 0.2 / 0.9 + 0.1 / 0.035 + 1.0 / 25.0)
}

fn wall_with_environments(extra: &str) -> String {
    format!("{WALL}\n[environments]\ninside = [\"room-face\"]\noutside = [\"outer-face\"]\n{extra}")
}

#[test]
fn plane_wall_coupling_is_u_times_height_and_psi_vanishes() {
    // Source: series thermal resistances (Incropera et al., ch. 3): a plane wall between two
    // environments passes U·ΔT per m² of face, so its coupling coefficient per metre of depth
    // is L2D = U·H (the definition of L2D per ISO 10211). P1 reproduces the piecewise-linear
    // field exactly, so the agreement is to round-off. A reference of the same U and length
    // gives ψ = L2D − U·H = 0.
    let u = wall_u();
    let psi = format!(
        "[[psi]]\nname = \"plain\"\ncoupling = [\"inside\", \"outside\"]\nreference = [{{ u = {u:?}, length = 1.3 }}]\n"
    );
    let s = solve(&wall_with_environments(&psi));
    let c = s.coupling.as_ref().expect("coupling results");
    assert_eq!(c.environments, ["inside", "outside"]);
    assert_eq!(c.pairs.len(), 1);
    let p = &c.pairs[0];
    assert_eq!(p.between, ["inside".to_string(), "outside".to_string()]);
    let l2d = u * 1.3;
    assert!((p.value - l2d).abs() <= 1e-10 * l2d, "{} vs {l2d}", p.value);
    assert!((p.reciprocal - l2d).abs() <= 1e-10 * l2d);
    assert_eq!(c.psi.len(), 1);
    assert!(c.psi[0].psi.abs() <= 1e-9, "psi {}", c.psi[0].psi);
    assert!((c.psi[0].reference - l2d).abs() <= 1e-12);
    // The reciprocity self-check is reported and passes.
    let check = s
        .checks
        .iter()
        .find(|k| k.name == "coupling_reciprocity")
        .expect("reciprocity check");
    assert!(check.passed && check.value <= 1e-8);
}

#[test]
fn plane_wall_temperature_factors_follow_the_surface_resistances() {
    // Common practice (follows from the series resistances, Incropera et al., ch. 3): on a plane
    // wall the room surface lies U·R_si·ΔT below the room air, so f_Rsi = 1 − U·R_si; the same
    // reasoning on the cold side gives (θ_se − θ_i)/(θ_e − θ_i) = 1 − U·R_se.
    let s = solve(&wall_with_environments("f_rsi_min = 0.7\n"));
    let c = s.coupling.as_ref().expect("coupling results");
    let u = wall_u();
    assert_eq!(c.f_rsi_min, Some(0.7));
    assert_eq!(c.temperature_factors.len(), 2);
    let room = c
        .temperature_factors
        .iter()
        .find(|f| f.boundary == "room-face")
        .expect("room face");
    let expected = 1.0 - u / 7.7;
    let f = room.f_rsi.expect("defined");
    assert!((f - expected).abs() <= 1e-10, "{f} vs {expected}");
    assert!(!room.highest && !room.below_minimum);
    assert_eq!((room.ambient_own, room.ambient_other), (20.0, -5.0));
    assert!((room.surface_temperature - (-5.0 + 25.0 * expected)).abs() <= 1e-9);
    assert_eq!(room.at[0], 0.0);
    let outer = c
        .temperature_factors
        .iter()
        .find(|f| f.boundary == "outer-face")
        .expect("outer face");
    assert!(
        outer.highest,
        "the cold side's critical value is its highest"
    );
    let f = outer.f_rsi.expect("defined");
    assert!((f - (1.0 - u / 25.0)).abs() <= 1e-10, "{f}");
}

#[test]
fn low_temperature_factor_is_flagged_and_warned() {
    // An uninsulated concrete wall 0.3 m thick (k = 2.3): U = 1/(R_si + d/k + R_se) ≈ 3.3
    // W/(m²·K), f_Rsi = 1 − U·R_si ≈ 0.57 < 0.7 (series resistances, Incropera et al., ch. 3).
    let bare = WALL
        .replace("conductivity = 0.035", "conductivity = 2.3")
        .replace("conductivity = 0.9", "conductivity = 2.3");
    let text = format!(
        "{bare}\n[environments]\ninside = [\"room-face\"]\noutside = [\"outer-face\"]\nf_rsi_min = 0.7\n"
    );
    let s = solve(&text);
    let c = s.coupling.as_ref().expect("coupling");
    let u = 1.0 / (1.0 / 7.7 + 0.3 / 2.3 + 1.0 / 25.0);
    let room = c
        .temperature_factors
        .iter()
        .find(|f| f.boundary == "room-face")
        .expect("room face");
    let f = room.f_rsi.expect("defined");
    assert!((f - (1.0 - u / 7.7)).abs() <= 1e-10);
    assert!(f < 0.7 && room.below_minimum);
    assert!(
        s.warnings
            .iter()
            .any(|w| w.contains("room-face") && w.contains("below f_rsi_min")),
        "{:?}",
        s.warnings
    );
}

#[test]
fn junction_coupling_reproduces_the_base_heat_flow_and_is_reciprocal() {
    // ISO 10211 defines L2D as the heat flow per metre between two environments per kelvin of
    // difference; steady conduction is linear, so with no sources, fluxes or fixed edges the
    // base solve's heat entering the section from the room equals L2D·(θ_i − θ_e)
    // (superposition). The demo junction
    // (invented numbers) has its room at 20 °C and the outside at −5 °C.
    let text = std::fs::read_to_string(common::repo_file("geometry/wall-junction.toml"))
        .expect("demo model");
    let s = solve(&text);
    let c = s.coupling.as_ref().expect("the demo declares environments");
    let l2d = c.l2d(0, 1).expect("pair");
    let from_room: f64 = s
        .results
        .boundaries
        .iter()
        .filter(|b| b.name.starts_with("room-"))
        .map(|b| b.heat_flow)
        .sum();
    assert!(
        (from_room - l2d * 25.0).abs() <= 1e-9 * from_room.abs(),
        "room flow {from_room} vs L2D·25 = {}",
        l2d * 25.0
    );
    let p = &c.pairs[0];
    assert!((p.value - p.reciprocal).abs() <= 1e-10 * p.value.abs());
    // The slab makes a thermal bridge: ψ > 0 against the plain wall (demo reference).
    assert!(c.psi[0].psi > 0.0, "{:?}", c.psi);
    // Far from the slab the room surface is the plain wall's, so no room surface is colder
    // than f_Rsi = 1 − U·R_si of the plain wall allows (series resistances, Incropera et al.,
    // ch. 3), up to the discretisation; the demo's limit 0.7 is met.
    let u = 1.0 / (1.0 / 7.7 + 0.24 / 0.8 + 0.12 / 0.035 + 1.0 / 25.0);
    for f in c
        .temperature_factors
        .iter()
        .filter(|f| f.environment == "inside")
    {
        let x = f.f_rsi.expect("defined");
        assert!(x >= 1.0 - u / 7.7 - 1e-3 && !f.below_minimum, "{f:?}");
    }
}

#[test]
fn three_environments_give_every_pair_reciprocally() {
    // Reciprocity of the discrete coupling (the stiffness matrix is symmetric, so the heat from
    // k to j per kelvin equals that from j to k; common practice, ISO 10211 tabulates one value
    // per pair) and conservation in each unit solve: the heat entering through environment k
    // leaves through the others, Σ_j L_kj over j ≠ k, because nothing else exchanges heat.
    let text = r#"
[mesh]
max_area = 0.003
[materials.concrete]
conductivity = 1.6
[materials.foam]
conductivity = 0.04
[outline]
material = "concrete"
points = [[0.0, 0.0], [1.2, 0.0], [1.2, 0.4], [0.5, 0.4], [0.5, 1.0], [0.0, 1.0]]
edges = ["a", "end", "b", "b", "end", "c"]
[[regions]]
material = "foam"
points = [[0.0, 0.0], [0.15, 0.0], [0.15, 1.0], [0.0, 1.0]]
[boundaries.a]
kind = "convection"
h = 10.0
ambient = 5.0
[boundaries.b]
kind = "convection"
h = 7.7
ambient = 21.0
[boundaries.c]
kind = "convection"
h = 25.0
ambient = -8.0
[boundaries.end]
kind = "insulated"
[environments]
ground = ["a"]
room = ["b"]
air = ["c"]
"#;
    let s = solve(text);
    let c = s.coupling.as_ref().expect("coupling");
    assert_eq!(c.environments, ["air", "ground", "room"]);
    assert_eq!(c.pairs.len(), 3);
    assert!(c.temperature_factors.is_empty(), "needs exactly two");
    for p in &c.pairs {
        assert!(p.value > 0.0);
        assert!((p.value - p.reciprocal).abs() <= 1e-9 * p.value, "{p:?}");
    }
    // Superposition (linear steady conduction): the base heat entering the section from the
    // room is Σ_j L_room,j (θ_room − θ_j).
    let amb = [-8.0, 5.0, 21.0];
    let expected: f64 = [0, 1]
        .iter()
        .map(|&j| c.l2d(2, j).expect("pair") * (amb[2] - amb[j]))
        .sum();
    let b = s
        .results
        .boundaries
        .iter()
        .find(|b| b.name == "b")
        .expect("b");
    assert!(
        (b.heat_flow - expected).abs() <= 1e-9 * expected.abs(),
        "{} vs {expected}",
        b.heat_flow
    );
}

#[test]
fn summary_json_carries_the_coupling_records() {
    let u = wall_u();
    let extra = format!(
        "f_rsi_min = 0.7\n[[psi]]\nname = \"plain\"\ncoupling = [\"inside\", \"outside\"]\nreference = [{{ u = {u:?}, length = 1.3 }}]\n"
    );
    let (run, _dir, out) = common::solve_text(&wall_with_environments(&extra), &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let text = std::fs::read_to_string(out.join("summary.json")).expect("summary");
    let v: serde_json::Value = serde_json::from_str(&text).expect("json");
    let envs = v["environments"].as_array().expect("environments");
    assert_eq!(envs.len(), 2);
    assert_eq!(envs[0]["name"], "inside");
    assert_eq!(envs[0]["ambient_c"], 20.0);
    assert_eq!(envs[0]["boundaries"][0], "room-face");
    let pair = &v["coupling_w_per_m_k"][0];
    assert_eq!(pair["between"][1], "outside");
    let value = pair["value"].as_f64().expect("value");
    assert!((value - u * 1.3).abs() <= 1e-10);
    let psi = &v["psi"][0];
    assert_eq!(psi["name"], "plain");
    assert!(psi["psi_w_per_m_k"].as_f64().expect("psi").abs() <= 1e-9);
    assert!(psi["l2d_w_per_m_k"].as_f64().is_some());
    assert!(psi["reference_w_per_m_k"].as_f64().is_some());
    let f = v["temperature_factors"]
        .as_array()
        .expect("temperature_factors");
    assert_eq!(f.len(), 2);
    for key in [
        "boundary",
        "environment",
        "other",
        "critical_surface_temperature_c",
        "critical",
        "at_m",
        "ambient_own_c",
        "ambient_other_c",
        "f_rsi",
        "below_minimum",
    ] {
        assert!(f[0].get(key).is_some(), "temperature_factors lacks {key}");
    }
    assert_eq!(v["f_rsi_min"], 0.7);
    // The console names the results too.
    assert!(run.stdout.contains("L2D"), "{}", run.stdout);
    assert!(run.stdout.contains("f_Rsi"), "{}", run.stdout);
}

#[test]
fn bad_environment_psi_and_cut_tables_exit_2_naming_the_item() {
    let env = "[environments]\ninside = [\"room-face\"]\noutside = [\"outer-face\"]\n";
    let cases: Vec<(&str, String, &[&str])> = vec![
        (
            "one-environment",
            format!("{WALL}\n[environments]\ninside = [\"room-face\"]\n"),
            &["environments", "at least 2"],
        ),
        (
            "unknown-boundary",
            format!(
                "{WALL}\n[environments]\ninside = [\"room-fac\"]\noutside = [\"outer-face\"]\n"
            ),
            &["environments.inside", "\"room-fac\"", "room-face"],
        ),
        (
            "not-convection",
            format!(
                "{WALL}\n[environments]\ninside = [\"room-face\", \"cut\"]\noutside = [\"outer-face\"]\n"
            ),
            &["environments.inside", "\"cut\"", "convection"],
        ),
        (
            "boundary-twice",
            format!(
                "{WALL}\n[environments]\ninside = [\"room-face\"]\noutside = [\"outer-face\", \"room-face\"]\n"
            ),
            &["environments.outside", "\"room-face\"", "already belongs"],
        ),
        (
            "f-rsi-range",
            format!("{WALL}\n{env}f_rsi_min = 1.5\n"),
            &["f_rsi_min", "(0, 1]"],
        ),
        (
            "psi-without-environments",
            format!(
                "{WALL}\n[[psi]]\nname = \"j\"\ncoupling = [\"inside\", \"outside\"]\nreference = [{{ u = 0.3, length = 1.0 }}]\n"
            ),
            &["psi[0] \"j\"", "[environments]"],
        ),
        (
            "psi-unknown-environment",
            format!(
                "{WALL}\n{env}[[psi]]\nname = \"j\"\ncoupling = [\"inside\", \"outsid\"]\nreference = [{{ u = 0.3, length = 1.0 }}]\n"
            ),
            &["psi[0] \"j\"", "\"outsid\"", "outside"],
        ),
        (
            "psi-same-environment",
            format!(
                "{WALL}\n{env}[[psi]]\nname = \"j\"\ncoupling = [\"inside\", \"inside\"]\nreference = [{{ u = 0.3, length = 1.0 }}]\n"
            ),
            &["psi[0] \"j\"", "twice"],
        ),
        (
            "psi-empty-reference",
            format!(
                "{WALL}\n{env}[[psi]]\nname = \"j\"\ncoupling = [\"inside\", \"outside\"]\nreference = []\n"
            ),
            &["psi[0] \"j\"", "reference"],
        ),
        (
            "psi-negative-u",
            format!(
                "{WALL}\n{env}[[psi]]\nname = \"j\"\ncoupling = [\"inside\", \"outside\"]\nreference = [{{ u = -0.3, length = 1.0 }}]\n"
            ),
            &["psi[0] \"j\"", "reference[0].u"],
        ),
        (
            "cut-one-point",
            format!("{WALL}\n[[cuts]]\nname = \"k\"\npoints = [[0.1, 0.1]]\n"),
            &["cuts[0] \"k\"", "at least 2"],
        ),
        (
            "cut-zero-segment",
            format!(
                "{WALL}\n[[cuts]]\nname = \"k\"\npoints = [[0.1, 0.1], [0.1, 0.1], [0.2, 0.5]]\n"
            ),
            &["cuts[0] \"k\"", "points[0] and points[1]"],
        ),
        (
            "cut-three-numbers",
            format!("{WALL}\n[[cuts]]\nname = \"k\"\npoints = [[0.1, 0.1, 0.0], [0.2, 0.5]]\n"),
            &["points"],
        ),
    ];
    for (case, model, needles) in cases {
        let (run, _dir, out) = common::solve_text(&model, &[]);
        assert_eq!(run.code, 2, "case {case}: {}", run.stderr);
        for n in needles {
            assert!(
                run.stderr.contains(n),
                "case {case}: stderr lacks {n:?}: {}",
                run.stderr
            );
        }
        assert!(!out.exists(), "case {case}: output written");
    }
}
