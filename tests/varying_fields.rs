//! Temperatures and heat sources that vary with position: linear fields `{ at, value, gradient }`
//! on fixed edges, convective ambients and heat sources, profiles along a boundary by arc
//! length; their refusals, the echo and `length_unit`.

mod common;

use common::{solve_text, tmp, write, xsheat};
use xsheat::mesh::MeshOptions;
use xsheat::{model, run};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .expect("boundary")
        .heat_flow
}

/// T = 12 + 3x − 5y on all four sides of a 2 m × 1 m rectangle, k = 2 (invented numbers).
const PATCH: &str = r#"
[mesh]
max_area = 0.01
[materials.rock]
conductivity = 2.0
[outline]
material = "rock"
rectangle = { corner = [0.0, 0.0], width = 2.0, height = 1.0 }
edges = ["s", "e", "n", "w"]
[boundaries.s]
kind = "fixed"
temperature = { at = [0.0, 0.0], value = 12.0, gradient = [3.0, -5.0] }
[boundaries.e]
kind = "fixed"
temperature = { at = [0.0, 0.0], value = 12.0, gradient = [3.0, -5.0] }
[boundaries.n]
kind = "fixed"
temperature = { at = [1.0, 1.0], value = 10.0, gradient = [3.0, -5.0] }
[boundaries.w]
kind = "fixed"
temperature = { at = [0.0, 0.0], value = 12.0, gradient = [3.0, -5.0] }
"#;

#[test]
fn linear_fixed_temperatures_reproduce_the_linear_field_and_its_flux() {
    let s = solve(PATCH);
    // Source: P1 patch test — linear triangles reproduce a linear field exactly (common
    // practice; Zienkiewicz & Taylor, The Finite Element Method, vol. 1, patch test, from
    // memory). T = 12 + 3x − 5y is harmonic, so it is the exact solution.
    for (p, t) in s.mesh.nodes.iter().zip(&s.results.temperature) {
        let exact = 12.0 + 3.0 * p[0] - 5.0 * p[1];
        assert!((t - exact).abs() < 1e-9, "T at {p:?}: {t} vs {exact}");
    }
    // q = −k∇T = −2·(3, −5) = (−6, 10) W/m² in every triangle (Fourier's law).
    for q in &s.results.cell_flux {
        assert!(
            (q[0] + 6.0).abs() < 1e-9 && (q[1] - 10.0).abs() < 1e-9,
            "{q:?}"
        );
    }
    // No source: the boundary heat flows sum to zero (energy conservation, common practice).
    let sum: f64 = s.results.boundaries.iter().map(|b| b.heat_flow).sum();
    assert!(sum.abs() < 1e-9, "sum of flows {sum}");
}

/// Unit square, k = 1.5; T = c0 + c1·x + c2·y exact; top (y = 1) convective with h = 4 to an
/// ambient linear in x, the other sides fixed at the exact field (invented numbers).
fn convective_square() -> String {
    let (c0, c1, c2, k, h) = (5.0, 2.0, -3.0, 1.5, 4.0);
    // At y = 1 (outward normal +y): −k·∂T/∂y = h·(T − T∞) ⇒ T∞(x) = T(x, 1) + k·c2/h
    //   = c0 + c2 + k·c2/h + c1·x, linear in x (derived here).
    let amb0 = c0 + c2 + k * c2 / h;
    format!(
        r#"
[mesh]
max_area = 0.005
[materials.m]
conductivity = {k}
[outline]
material = "m"
rectangle = {{ corner = [0.0, 0.0], width = 1.0, height = 1.0 }}
edges = ["fix", "fix", "top", "fix"]
[boundaries.fix]
kind = "fixed"
temperature = {{ at = [0.0, 0.0], value = {c0}, gradient = [{c1}, {c2}] }}
[boundaries.top]
kind = "convection"
h = {h}
ambient = {{ at = [0.0, 1.0], value = {amb0}, gradient = [{c1}, 0.0] }}
"#
    )
}

#[test]
fn linear_ambient_on_a_convective_face_gives_the_exact_linear_field() {
    let s = solve(&convective_square());
    // Exact solution derived in `convective_square`: the harmonic field T = 5 + 2x − 3y meets
    // the Robin condition −k ∂T/∂n = h (T − T∞(x)) on the top face with the linear T∞ above;
    // P1 with the exactly integrated edge load reproduces it (patch test, common practice).
    for (p, t) in s.mesh.nodes.iter().zip(&s.results.temperature) {
        let exact = 5.0 + 2.0 * p[0] - 3.0 * p[1];
        assert!((t - exact).abs() < 1e-9, "T at {p:?}: {t} vs {exact}");
    }
    // Heat into the section through the top: −q·n·L = k·c2·1 = 1.5·(−3) = −4.5 W/m
    // (Fourier's law, q·n = −k ∂T/∂y).
    assert!((flow(&s, "top") + 4.5).abs() < 1e-9, "{}", flow(&s, "top"));
    let sum: f64 = s.results.boundaries.iter().map(|b| b.heat_flow).sum();
    assert!(sum.abs() < 1e-9);
}

#[test]
fn linear_heat_source_in_a_slab_matches_the_exact_cubic() {
    // Slab 0 ≤ x ≤ L = 1 m (0.2 m high, top and bottom insulated), k = 2, T(0) = T(L) = 0,
    // Q(x) = Q0 + Q1·x with Q0 = 1000 W/m³, Q1 = 3000 W/m⁴ (invented numbers).
    let text = r#"
[mesh]
max_area = 0.0002
[materials.m]
conductivity = 2.0
heat_source = { at = [0.0, 0.0], value = 1000.0, gradient = [3000.0, 0.0] }
[outline]
material = "m"
rectangle = { corner = [0.0, 0.0], width = 1.0, height = 0.2 }
edges = ["ins", "right", "ins", "left"]
[boundaries.left]
kind = "fixed"
temperature = 0.0
[boundaries.right]
kind = "fixed"
temperature = 0.0
[boundaries.ins]
kind = "insulated"
"#;
    let s = solve(text);
    let (q0, q1, k, l) = (1000.0, 3000.0, 2.0, 1.0);
    // Exact: k·T'' = −(Q0 + Q1·x) ⇒ T = −(Q0·x²/2 + Q1·x³/6)/k + C1·x with T(0) = 0 and
    // C1 = (Q0·L/2 + Q1·L²/6)/k from T(L) = 0 (integrated twice, derived here).
    let c1 = (q0 * l / 2.0 + q1 * l * l / 6.0) / k;
    let exact = |x: f64| -(q0 * x * x / 2.0 + q1 * x.powi(3) / 6.0) / k + c1 * x;
    let tmax = (0..=100)
        .map(|i| exact(i as f64 / 100.0))
        .fold(0.0_f64, f64::max);
    for (p, t) in s.mesh.nodes.iter().zip(&s.results.temperature) {
        let e = exact(p[0]);
        assert!((t - e).abs() < 2e-3 * tmax, "T at {p:?}: {t} vs {e}");
    }
    // ∫Q dA = H·(Q0·L + Q1·L²/2) = 0.2·(1000 + 1500) = 500 W/m, exact for a linear source.
    assert!(
        (s.results.heat_source - 500.0).abs() < 1e-9,
        "{}",
        s.results.heat_source
    );
    // Left face: heat leaves by k·T'(0)·H = C1·k·H... the outflow at x = 0 is k·C1·H.
    assert!((flow(&s, "left") + k * c1 * 0.2).abs() < 2e-3 * 500.0);
    assert!(s.results.energy_imbalance.abs() < 1e-9 * 500.0);
}

#[test]
fn a_profile_on_a_fixed_edge_takes_its_values_at_the_nodes() {
    // Bottom edge (0,0) → (4,0), counter-clockwise, so s = x; profile 10 °C at s = 0, 14 °C at
    // s = 1, 2 °C at s = 3 and constant beyond (the edge is 4 m long: a warning).
    let text = r#"
[mesh]
max_area = 0.02
[materials.m]
conductivity = 1.0
[outline]
material = "m"
rectangle = { corner = [0.0, 0.0], width = 4.0, height = 1.0 }
edges = ["ground", "ins", "ins", "ins"]
[boundaries.ground]
kind = "fixed"
temperature = { profile = [[0.0, 10.0], [1.0, 14.0], [3.0, 2.0]] }
size = 0.1
[boundaries.ins]
kind = "insulated"
"#;
    let s = solve(text);
    let interp = |x: f64| {
        if x <= 1.0 {
            10.0 + 4.0 * x
        } else if x <= 3.0 {
            14.0 - 6.0 * (x - 1.0)
        } else {
            2.0
        }
    };
    let mut n = 0;
    for (p, t) in s.mesh.nodes.iter().zip(&s.results.temperature) {
        if p[1].abs() < 1e-12 {
            n += 1;
            // Definition of the profile: linear interpolation in s (this file's README).
            assert!((t - interp(p[0])).abs() < 1e-9, "T at {p:?}: {t}");
        }
    }
    assert!(n >= 41, "{n} bottom nodes");
    let w = &s.prepared.section.warnings;
    assert!(
        w.iter()
            .any(|m| m.contains("boundaries.ground.temperature")),
        "{w:?}"
    );
}

#[test]
fn the_echo_reads_back_to_the_same_section() {
    let text = format!(
        "{}\n[materials.m2]\nconductivity = 1.0\nheat_source = {{ at = [0.5, 0.5], value = 10.0, gradient = [1.0, 2.0] }}\n",
        convective_square()
    );
    let p = run::prepare_model(model::parse(&text).expect("parse")).expect("valid");
    let back = toml::to_string(&p.section.resolved_model()).expect("toml");
    let again = model::validate(&model::parse(&back).expect("parse echo")).expect("valid");
    assert_eq!(again.boundaries, p.section.boundaries);
    assert_eq!(again.materials, p.section.materials);
    // and a profile
    let prof = PATCH.replace(
        "temperature = { at = [1.0, 1.0], value = 10.0, gradient = [3.0, -5.0] }",
        "temperature = { profile = [[0.0, 1.0], [2.0, 3.0]] }",
    );
    let p = run::prepare_model(model::parse(&prof).expect("parse")).expect("valid");
    let back = toml::to_string(&p.section.resolved_model()).expect("toml");
    let again = model::validate(&model::parse(&back).expect("parse echo")).expect("valid");
    assert_eq!(again.boundaries, p.section.boundaries);
}

#[test]
fn a_model_in_millimetres_gives_the_metre_result() {
    let m = convective_square();
    let mm = format!("length_unit = \"mm\"\n{m}")
        .replace("max_area = 0.005", "max_area = 5000.0")
        .replace(
            "width = 1.0, height = 1.0",
            "width = 1000.0, height = 1000.0",
        )
        .replace("at = [0.0, 1.0]", "at = [0.0, 1000.0]");
    let a = solve(&m);
    let b = solve(&mm);
    assert_eq!(a.mesh.nodes.len(), b.mesh.nodes.len());
    for (x, y) in a.results.temperature.iter().zip(&b.results.temperature) {
        assert!((x - y).abs() < 1e-9);
    }
    assert!((flow(&a, "top") - flow(&b, "top")).abs() < 1e-9);
}

/// `solve` of `text` exits 2 with `needle` in the message and writes nothing.
fn refused(text: &str, needle: &str) {
    let (run, _d, out) = solve_text(text, &[]);
    assert_eq!(run.code, 2, "{needle}: {}", run.stderr);
    assert!(
        run.stderr.contains(needle),
        "{needle:?} not in {}",
        run.stderr
    );
    assert!(!out.exists());
}

#[test]
fn bad_fields_are_refused_by_name() {
    let nan = PATCH.replace(
        "gradient = [3.0, -5.0] }\n[boundaries.e]",
        "gradient = [nan, -5.0] }\n[boundaries.e]",
    );
    refused(&nan, "boundaries.s.temperature: gradient[0]");
    let p = |prof: &str| {
        PATCH.replace(
            "temperature = { at = [1.0, 1.0], value = 10.0, gradient = [3.0, -5.0] }",
            &format!("temperature = {{ profile = {prof} }}"),
        )
    };
    refused(
        &p("[[0.0, 1.0], [0.0, 2.0]]"),
        "boundaries.n.temperature: profile point 1",
    );
    refused(
        &p("[[0.0, 1.0]]"),
        "boundaries.n.temperature: profile has 1 point",
    );
    refused(
        &PATCH.replace("value = 10.0,", "value = 10.0, slope = 1.0,"),
        "slope",
    );
    let source = convective_square().replace(
        "conductivity = 1.5",
        "conductivity = 1.5\nheat_source = { profile = [[0.0, 1.0], [1.0, 2.0]] }",
    );
    refused(&source, "materials.m.heat_source");
    // a profile on a boundary of two pieces (fix is three sides, one chain: accepted; `ins`
    // below is two separate sides)
    let two = PATCH
        .replace("edges = [\"s\", \"e\", \"n\", \"w\"]", "edges = [\"s\", \"e\", \"s\", \"w\"]")
        .replace(
            "[boundaries.s]\nkind = \"fixed\"\ntemperature = { at = [0.0, 0.0], value = 12.0, gradient = [3.0, -5.0] }",
            "[boundaries.s]\nkind = \"fixed\"\ntemperature = { profile = [[0.0, 1.0], [9.0, 2.0]] }",
        );
    refused(
        &two,
        "boundaries.s.temperature: a profile needs a boundary whose segments form one connected chain",
    );
    // a load case may not override a varying value, nor give a field
    let case =
        format!("{PATCH}\n[[cases]]\nname = \"c\"\n[cases.boundaries.s]\ntemperature = 3.0\n");
    refused(
        &case,
        "boundaries.s.temperature: the base model's temperature varies",
    );
    let case = format!(
        "{PATCH}\n[[cases]]\nname = \"c\"\n[cases.boundaries.s]\ntemperature = {{ profile = [[0.0, 1.0], [1.0, 2.0]] }}\n"
    );
    refused(
        &case,
        "boundaries.s.temperature: a load case takes a number",
    );
    // nonlinear models
    let rad =
        convective_square().replace("h = 4\n", "h = 4\nemissivity = 0.9\nsurroundings = 10.0\n");
    refused(
        &rad,
        "boundaries.fix.temperature: a temperature that varies with position is not available in a nonlinear model",
    );
    // environments
    let env = format!(
        "{}\n[boundaries.side]\nkind = \"convection\"\nh = 2.0\nambient = 0.0\n[environments]\nair = [\"top\"]\nearth = [\"side\"]\n",
        convective_square().replace("[\"fix\", \"fix\", \"top\"", "[\"fix\", \"side\", \"top\"")
    );
    refused(&env, "boundaries.top.ambient");
}

#[test]
fn the_grid_check_refuses_a_varying_temperature() {
    let d = tmp();
    let path = write(d.path(), "model.toml", PATCH);
    let out = d.path().join("out");
    let run = xsheat([
        "gridcheck".as_ref(),
        path.as_os_str(),
        "--spacing".as_ref(),
        "0.1".as_ref(),
        "--out".as_ref(),
        out.as_os_str(),
    ]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(
        run.stderr.contains("boundaries.e.temperature"),
        "{}",
        run.stderr
    );
    assert!(!out.exists());
}

#[test]
fn summary_json_describes_the_field_and_its_range() {
    let (run, _d, out) = solve_text(PATCH, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let text = std::fs::read_to_string(out.join("summary.json")).expect("summary");
    let v: serde_json::Value = serde_json::from_str(&text).expect("json");
    let b = v["boundaries"]
        .as_array()
        .expect("array")
        .iter()
        .find(|b| b["name"] == "n")
        .expect("n")
        .clone();
    let var = &b["condition"]["varying"];
    // n runs from (2, 1) to (0, 1): T from 13 to 7 °C
    assert!((var["imposed_min_c"].as_f64().expect("min") - 7.0).abs() < 1e-12);
    assert!((var["imposed_max_c"].as_f64().expect("max") - 13.0).abs() < 1e-12);
    assert_eq!(var["gradient_k_per_m"][1].as_f64(), Some(-5.0));
}

#[test]
fn coupling_unit_solves_drop_a_varying_fixed_temperature() {
    // Environments superpose unit solves with every fixed boundary at 0 °C: a fixed boundary
    // whose temperature varies must not leak into them (invented numbers).
    let base = r#"
[mesh]
max_area = 0.01
[materials.m]
conductivity = 1.0
[outline]
material = "m"
rectangle = { corner = [0.0, 0.0], width = 1.0, height = 1.0 }
edges = ["out", "ins", "in", "side"]
[boundaries.in]
kind = "convection"
h = 8.0
ambient = 20.0
[boundaries.out]
kind = "convection"
h = 25.0
ambient = 0.0
[boundaries.ins]
kind = "insulated"
[boundaries.side]
kind = "fixed"
temperature = SIDE
[environments]
inside = ["in"]
outside = ["out"]
"#;
    let a = solve(&base.replace("SIDE", "5.0"));
    let b = solve(&base.replace(
        "SIDE",
        "{ at = [0.0, 0.0], value = 5.0, gradient = [0.0, 7.0] }",
    ));
    let (ca, cb) = (a.coupling.expect("coupling"), b.coupling.expect("coupling"));
    let (la, lb) = (ca.l2d(0, 1).expect("l2d"), cb.l2d(0, 1).expect("l2d"));
    assert!((la - lb).abs() < 1e-12 * la.abs().max(1.0), "{la} vs {lb}");
}
