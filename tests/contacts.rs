//! Contact resistances (`[[contacts]]`): the composite wall against its analytical solution,
//! the temperature jump in the field and a line profile, the energy balance, the nonlinear
//! path, the warning for materials that never meet, and the refusals.

mod common;

use common::{solve_text, tmp, write, xsheat};
use xsheat::mesh::MeshOptions;
use xsheat::model::parse;
use xsheat::post::contacts::contact_flows;
use xsheat::run;

const T_WARM: f64 = 20.0;
const T_COLD: f64 = 0.0;
const K_BRICK: f64 = 0.8;
const K_FOAM: f64 = 0.04;
const L_BRICK: f64 = 0.2;
const L_FOAM: f64 = 0.1;
const R_CONTACT: f64 = 0.5;
const HEIGHT: f64 = 0.2;

/// Brick 0 ≤ x ≤ 0.2 (outline), foam 0.2 ≤ x ≤ 0.3 (region), warm left, cold right, top and
/// bottom insulated; `brick_k` replaces the brick's conductivity (e.g. by a table).
fn wall(brick_k: &str, extra: &str) -> String {
    format!(
        r#"
title = "composite wall"
[mesh]
max_area = 0.002
[materials.brick]
conductivity = {brick_k}
[materials.foam]
conductivity = {K_FOAM}
[outline]
material = "brick"
points = [[0.0, 0.0], [0.3, 0.0], [0.3, 0.2], [0.0, 0.2]]
edges = ["", "cold", "", "warm"]
[[regions]]
material = "foam"
points = [[0.2, 0.0], [0.3, 0.0], [0.3, 0.2], [0.2, 0.2]]
[[contacts]]
between = ["foam", "brick"]
resistance = {R_CONTACT}
[boundaries.warm]
kind = "fixed"
temperature = {T_WARM}
[boundaries.cold]
kind = "fixed"
temperature = {T_COLD}
[[lines]]
name = "across"
from = [0.0, 0.1]
to = [0.3, 0.1]
samples = 31
{extra}
"#
    )
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Heat flux of the composite wall with a contact resistance in series:
/// q = ΔT / (L1/k1 + R + L2/k2) (Incropera et al., Fundamentals of Heat and Mass Transfer,
/// ch. 3, thermal contact resistance; from memory). The field is piecewise linear, so P1
/// elements reproduce it to round-off.
fn q_exact() -> f64 {
    (T_WARM - T_COLD) / (L_BRICK / K_BRICK + R_CONTACT + L_FOAM / K_FOAM)
}

fn check_wall(solved: &run::Solved) {
    let q = q_exact();
    let r = &solved.results;
    let warm = r.boundaries.iter().find(|b| b.name == "warm").unwrap();
    let cold = r.boundaries.iter().find(|b| b.name == "cold").unwrap();
    // Composite wall with contact resistance (Incropera, ch. 3; from memory): q·H in W/m.
    assert!(rel(warm.heat_flow, q * HEIGHT) < 1e-9, "{}", warm.heat_flow);
    assert!(
        rel(-cold.heat_flow, q * HEIGHT) < 1e-9,
        "{}",
        cold.heat_flow
    );
    assert!(r.energy_imbalance_relative < 1e-12);
    // The jump q·R at every interface node pair (Incropera, ch. 3; from memory).
    let mesh = &solved.mesh;
    assert!(!mesh.interfaces.is_empty());
    let t = &r.temperature;
    for e in &mesh.interfaces {
        for k in 0..2 {
            assert_ne!(e.a[k], e.b[k], "every interface node is split");
            assert!(rel(t[e.a[k]] - t[e.b[k]], q * R_CONTACT) < 1e-9);
        }
    }
    let flows = contact_flows(solved.section(), mesh, t);
    assert_eq!(flows.len(), 1);
    assert_eq!(flows[0].between, ["brick".to_string(), "foam".to_string()]);
    assert!(rel(flows[0].interface_length_m, HEIGHT) < 1e-12);
    assert!(rel(flows[0].mean_temperature_jump_k, q * R_CONTACT) < 1e-9);
    assert!(rel(flows[0].heat_flow_a_to_b_w_per_m, q * HEIGHT) < 1e-9);
    // The line profile shows the jump: the exact piecewise-linear field on each side.
    let line = &r.lines[0];
    for s in &line.samples {
        let x = s.x;
        let want = if x < L_BRICK - 1e-12 {
            T_WARM - q * x / K_BRICK
        } else if x > L_BRICK + 1e-12 {
            T_COLD + q * (L_BRICK + L_FOAM - x) / K_FOAM
        } else {
            continue;
        };
        let got = s.temperature;
        assert!((got - want).abs() < 1e-9 * T_WARM, "x {x}: {got} vs {want}");
    }
}

#[test]
fn composite_wall_with_contact_resistance_matches_the_series_formula() {
    let prepared = run::prepare_model(parse(&wall(&K_BRICK.to_string(), "")).unwrap()).unwrap();
    let solved = run::solve(prepared, &MeshOptions::default()).unwrap();
    assert!(solved.checks_passed());
    check_wall(&solved);
    // The echo writes [[contacts]] back: it reads back to the same section.
    let echoed = xsheat::model::validate(&solved.section().resolved_model()).unwrap();
    assert_eq!(echoed.contacts, solved.section().contacts);
}

#[test]
fn adaptive_refinement_splits_every_refined_mesh() {
    let d = tmp();
    let out = d.path().join("out");
    let model = common::repo_file("geometry/culvert-joint.toml");
    let run = xsheat([
        "solve".as_ref(),
        model.as_os_str(),
        "--out".as_ref(),
        out.as_os_str(),
        "--target-error".as_ref(),
        "0.05".as_ref(),
        "--strict".as_ref(),
    ]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let s: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    assert!(s["adaptivity"].as_array().unwrap().len() > 1);
    // Interface lengths of the demo's geometry: 1.2 m (concrete/board), 1.2 + 0.08 m
    // (board/backfill).
    let len = |i: usize| s["contacts"][i]["interface_length_m"].as_f64().unwrap();
    assert!(rel(len(0), 1.2) < 1e-12 && rel(len(1), 1.28) < 1e-12);
    assert!(s["energy_imbalance_relative"].as_f64().unwrap() < 1e-12);
}

#[test]
fn composite_wall_through_the_nonlinear_path_gives_the_same_answer() {
    // A conductivity table of constant k sends the model through the nonlinear solver; the
    // interface term is linear and must give the same composite-wall answer.
    let k = format!("{{ table = [[-50.0, {K_BRICK}], [100.0, {K_BRICK}]] }}");
    let prepared = run::prepare_model(parse(&wall(&k, "")).unwrap()).unwrap();
    let solved = run::solve(prepared, &MeshOptions::default()).unwrap();
    assert!(solved.nonlinear.is_some());
    check_wall(&solved);
}

#[test]
fn field_vtu_holds_both_node_sets_and_summary_reports_the_contact() {
    let (run, _d, out) = solve_text(&wall(&K_BRICK.to_string(), ""), &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let s: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
    let c = &s["contacts"][0];
    assert_eq!(c["between"][1], "foam");
    let jump = c["mean_temperature_jump_k"].as_f64().unwrap();
    assert!(rel(jump, q_exact() * R_CONTACT) < 1e-9);
    assert_eq!(s["model"]["contacts"][0]["resistance"], R_CONTACT);
    // nodes.csv: two nodes at each interface point, with temperatures q·R apart.
    let nodes = std::fs::read_to_string(out.join("nodes.csv")).unwrap();
    let mut on_interface: Vec<f64> = nodes
        .lines()
        .skip(1)
        .filter_map(|l| {
            let v: Vec<f64> = l.split(',').filter_map(|x| x.parse().ok()).collect();
            ((v[1] - L_BRICK).abs() < 1e-12).then_some(v[3])
        })
        .collect();
    on_interface.sort_by(f64::total_cmp);
    let n = on_interface.len();
    assert!(n >= 4 && n.is_multiple_of(2), "{n}");
    assert!(rel(on_interface[n - 1] - on_interface[0], q_exact() * R_CONTACT) < 1e-9);
    assert_eq!(
        s["nodes"].as_u64().unwrap() as usize,
        nodes.lines().count() - 1
    );
}

#[test]
fn console_check_and_report_page_show_the_contact_with_its_flow() {
    let text = wall(&K_BRICK.to_string(), "");
    let (run, d, out) = solve_text(&text, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    // Composite wall in series (q_exact, Incropera ch. 3): the flow across the contact is
    // q·HEIGHT from brick to foam, and the console and report.html print it.
    let flow = q_exact() * HEIGHT;
    let row = run
        .stdout
        .lines()
        .find(|l| l.trim_start().starts_with("brick/foam"))
        .unwrap_or_else(|| panic!("no contact row:\n{}", run.stdout));
    let printed: f64 = row.split_whitespace().last().unwrap().parse().unwrap();
    assert!((printed - flow).abs() < 1e-6, "{row}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains(r#"id="contacts""#));
    assert!(
        html.contains(&format!("{flow:.6}")),
        "flow {flow:.6} not on the page"
    );
    let model = write(d.path(), "check.toml", &text);
    let check = xsheat(["check".as_ref(), model.as_os_str()]);
    assert_eq!(check.code, 0, "{}", check.stderr);
    assert!(
        check
            .stdout
            .contains("contact brick/foam: resistance 5.0000e-1 m²·K/W"),
        "{}",
        check.stdout
    );
}

#[test]
fn a_contact_between_materials_that_never_meet_is_a_warning_naming_it() {
    let extra = "[materials.steel]\nconductivity = 50.0\n[[contacts]]\nbetween = [\"steel\", \"brick\"]\nresistance = 0.1\n";
    let prepared = run::prepare_model(parse(&wall(&K_BRICK.to_string(), extra)).unwrap()).unwrap();
    let solved = run::solve(prepared, &MeshOptions::default()).unwrap();
    assert!(
        solved
            .warnings
            .iter()
            .any(|w| w.starts_with("contacts[1] (brick/steel)") && w.contains("never meet")),
        "{:?}",
        solved.warnings
    );
}

#[test]
fn bad_contacts_are_refused_naming_the_entry_and_nothing_is_written() {
    let base = wall(&K_BRICK.to_string(), "");
    let bad = [
        (
            "[[contacts]]\nbetween = [\"brick\", \"glass\"]\nresistance = 0.1\n",
            "contacts[1]: between[1]: material \"glass\"",
        ),
        (
            "[[contacts]]\nbetween = [\"foam\", \"foam\"]\nresistance = 0.1\n",
            "contacts[1]: between names material \"foam\" twice",
        ),
        (
            "[[contacts]]\nbetween = [\"brick\", \"foam\"]\nresistance = 0.1\n",
            "contacts[1]: the pair",
        ),
    ];
    for (extra, want) in bad {
        let (run, _d, out) = solve_text(&format!("{base}{extra}"), &[]);
        assert_eq!(run.code, 2, "{}", run.stderr);
        assert!(run.stderr.contains(want), "{}", run.stderr);
        assert!(!out.exists());
    }
    for r in ["0.0", "-1.0", "nan", "inf"] {
        let text = base.replace(
            &format!("resistance = {R_CONTACT}"),
            &format!("resistance = {r}"),
        );
        let (run, _d, out) = solve_text(&text, &[]);
        assert_eq!(run.code, 2, "{r}: {}", run.stderr);
        assert!(
            run.stderr.contains("contacts[0]: resistance"),
            "{}",
            run.stderr
        );
        assert!(!out.exists());
    }
}

#[test]
fn the_grid_cross_checks_refuse_contacts_by_name() {
    let d = tmp();
    let model = write(d.path(), "m.toml", &wall(&K_BRICK.to_string(), ""));
    let out = d.path().join("out");
    let run = xsheat([
        "gridcheck".as_ref(),
        model.as_os_str(),
        "--spacing".as_ref(),
        "0.02".as_ref(),
        "--out".as_ref(),
        out.as_os_str(),
    ]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(
        run.stderr.contains("contacts[0] (brick/foam)"),
        "{}",
        run.stderr
    );
    assert!(!out.exists());
}
