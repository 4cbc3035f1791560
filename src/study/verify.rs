//! Verification suite behind `xsheat verify`: built-in models with reference values from
//! closed-form solutions in the published literature, solved through the whole pipeline
//! (model → mesh → fem → solve → post), each compared against its reference with a stated
//! tolerance. Every case names its source. Section numbers of textbooks are quoted from memory
//! and marked so; the formulas themselves are standard and written out beside each case.

use crate::error::{Error, Result};

use crate::mesh::MeshOptions;
use crate::model;
use crate::run::{self, Solved};
use serde::Serialize;
use std::f64::consts::PI;

/// How the error of a case is measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ErrorMeasure {
    /// |computed − reference| / |reference|.
    Relative,
    /// |computed − reference| in the unit of the quantity.
    Absolute,
}

/// One checked value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerifyCase {
    pub case: String,
    pub quantity: String,
    pub unit: String,
    /// Short source for the table.
    pub source: String,
    /// Full citation and the formula used.
    pub reference_detail: String,
    pub reference: f64,
    pub computed: f64,
    pub error: f64,
    pub tolerance: f64,
    pub error_measure: ErrorMeasure,
    pub passed: bool,
    pub triangles: usize,
}

/// The whole suite.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerifySuite {
    pub cases: Vec<VerifyCase>,
}

impl VerifySuite {
    pub fn all_passed(&self) -> bool {
        self.cases.iter().all(|c| c.passed)
    }
    pub fn failed(&self) -> usize {
        self.cases.iter().filter(|c| !c.passed).count()
    }
}

struct Check<'a> {
    quantity: &'a str,
    unit: &'a str,
    reference: f64,
    computed: f64,
    tolerance: f64,
    measure: ErrorMeasure,
}

fn solve(case: &str, text: &str) -> Result<Solved> {
    let m = model::parse(text).map_err(|e| Error::run(format!("verify {case}: {e}")))?;
    let p = run::prepare_model(m).map_err(|e| Error::run(format!("verify {case}: {e}")))?;
    let s = run::solve(p, &MeshOptions::default())
        .map_err(|e| Error::run(format!("verify {case}: {e}")))?;
    if let Some(e) = run::failed_checks_error(&s) {
        return Err(Error::run(format!("verify {case}: {e}")));
    }
    Ok(s)
}

fn flow(s: &Solved, case: &str, name: &str) -> Result<f64> {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .map(|b| b.heat_flow)
        .ok_or_else(|| Error::run(format!("verify {case}: no boundary {name}")))
}

fn probe(s: &Solved, case: &str, name: &str) -> Result<f64> {
    s.results
        .probes
        .iter()
        .find(|p| p.name == name)
        .map(|p| p.temperature)
        .ok_or_else(|| Error::run(format!("verify {case}: no probe {name}")))
}

fn record(out: &mut Vec<VerifyCase>, case: &str, source: &str, detail: &str, s: &Solved, c: Check) {
    let diff = (c.computed - c.reference).abs();
    let error = match c.measure {
        ErrorMeasure::Absolute => diff,
        ErrorMeasure::Relative => diff / c.reference.abs(),
    };
    out.push(VerifyCase {
        case: case.to_string(),
        quantity: c.quantity.to_string(),
        unit: c.unit.to_string(),
        source: source.to_string(),
        reference_detail: detail.to_string(),
        reference: c.reference,
        computed: c.computed,
        error,
        tolerance: c.tolerance,
        error_measure: c.measure,
        passed: error.is_finite() && error <= c.tolerance,
        triangles: s.mesh.triangles.len(),
    });
}

/// Composite wall: series thermal resistances (piecewise linear exact solution, which P1
/// reproduces: agreement to round-off).
fn composite_wall(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "composite_wall";
    let s = solve(
        case,
        r#"
[mesh]
max_area = 0.004
[materials.masonry]
conductivity = 1.2
[materials.insulation]
conductivity = 0.04
[outline]
material = "masonry"
points = [[0.0, 0.0], [0.5, 0.0], [0.5, 1.0], [0.0, 1.0]]
edges = ["cut", "outside", "cut", "inside"]
[[regions]]
material = "insulation"
points = [[0.2, 0.0], [0.5, 0.0], [0.5, 1.0], [0.2, 1.0]]
[boundaries.inside]
kind = "convection"
h = 25.0
ambient = 20.0
[boundaries.outside]
kind = "convection"
h = 8.0
ambient = -5.0
[boundaries.cut]
kind = "insulated"
"#,
    )?;
    // q'' = ΔT / (1/h1 + L1/k1 + L2/k2 + 1/h2) over a 1 m high wall.
    let q = 25.0 / (1.0 / 25.0 + 0.2 / 1.2 + 0.3 / 0.04 + 1.0 / 8.0);
    record(
        out,
        case,
        "Incropera ch. 3",
        "series thermal resistances q = dT/(1/h1 + L1/k1 + L2/k2 + 1/h2): Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, ch. 3 (the composite plane wall, §3.1 from memory)",
        &s,
        Check {
            quantity: "heat_flow:inside",
            unit: "W/m",
            reference: q,
            computed: flow(&s, case, "inside")?,
            tolerance: 1e-9,
            measure: ErrorMeasure::Relative,
        },
    );
    Ok(())
}

/// Hollow cylinder between two fixed temperatures.
fn hollow_cylinder(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "hollow_cylinder";
    let s = solve(
        case,
        r#"
[mesh]
max_area = 0.00025
[materials.lining]
conductivity = 2.3
[outline]
material = "lining"
circle = { center = [0.0, 0.0], radius = 1.0, segments = 160 }
boundary = "outer"
[[holes]]
circle = { center = [0.0, 0.0], radius = 0.4, segments = 160 }
boundary = "inner"
[boundaries.outer]
kind = "fixed"
temperature = 15.0
[boundaries.inner]
kind = "fixed"
temperature = 80.0
"#,
    )?;
    let q = 2.0 * PI * 2.3 * (80.0 - 15.0) / (1.0f64 / 0.4).ln();
    record(
        out,
        case,
        "Incropera ch. 3",
        "cylindrical wall q' = 2 pi k (T1 - T2) / ln(r2/r1): Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3 (radial systems, §3.3 from memory)",
        &s,
        Check {
            quantity: "heat_flow:inner",
            unit: "W/m",
            reference: q,
            computed: flow(&s, case, "inner")?,
            tolerance: 2e-3,
            measure: ErrorMeasure::Relative,
        },
    );
    Ok(())
}

/// Eccentric cylinders: conduction shape factor per unit length.
fn eccentric_cylinders(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "eccentric_cylinders";
    // Outer diameter D = 2, inner d = 0.6, centres z = 0.3 apart.
    let s = solve(
        case,
        r#"
[mesh]
max_area = 0.0004
[materials.soil]
conductivity = 1.6
[outline]
material = "soil"
circle = { center = [0.0, 0.0], radius = 1.0, segments = 192 }
boundary = "outer"
[[holes]]
circle = { center = [0.3, 0.0], radius = 0.3, segments = 192 }
boundary = "pipe"
[boundaries.outer]
kind = "fixed"
temperature = 5.0
[boundaries.pipe]
kind = "fixed"
temperature = 65.0
"#,
    )?;
    let (dd, d, z) = (2.0f64, 0.6f64, 0.3f64);
    let shape = 2.0 * PI / ((dd * dd + d * d - 4.0 * z * z) / (2.0 * dd * d)).acosh();
    let q = shape * 1.6 * (65.0 - 5.0);
    record(
        out,
        case,
        "Incropera Table 4.1",
        "conduction shape factor of a cylinder eccentric in a larger cylinder, S/L = 2 pi / arccosh((D^2 + d^2 - 4 z^2)/(2 D d)), q' = S k dT: Incropera et al., Fundamentals of Heat and Mass Transfer, Table 4.1",
        &s,
        Check {
            quantity: "heat_flow:pipe",
            unit: "W/m",
            reference: q,
            computed: flow(&s, case, "pipe")?,
            tolerance: 3e-3,
            measure: ErrorMeasure::Relative,
        },
    );
    Ok(())
}

/// Rectangle with one side hot, three cold: Fourier series at interior points.
fn fourier_rectangle(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "fourier_rectangle";
    let s = solve(
        case,
        r#"
[mesh]
max_area = 0.00025
min_angle = 30
[materials.plate]
conductivity = 45.0
[outline]
material = "plate"
points = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]]
edges = ["cold", "cold", "hot", "cold"]
[boundaries.cold]
kind = "fixed"
temperature = 5.0
[boundaries.hot]
kind = "fixed"
temperature = 105.0
[[probes]]
name = "centre"
at = [1.0, 0.5]
[[probes]]
name = "upper"
at = [0.5, 0.8]
"#,
    )?;
    let (l, w) = (2.0f64, 1.0f64);
    // θ = (2/π) Σ ((−1)^{n+1} + 1)/n · sin(nπx/L) · sinh(nπy/L)/sinh(nπW/L).
    let theta = |x: f64, y: f64| -> f64 {
        let mut sum = 0.0;
        for n in (1..2000).step_by(2) {
            let k = n as f64 * PI / l;
            let ratio =
                (k * (y - w)).exp() * (1.0 - (-2.0 * k * y).exp()) / (1.0 - (-2.0 * k * w).exp());
            sum += 2.0 / n as f64 * (k * x).sin() * ratio;
        }
        2.0 / PI * sum
    };
    let detail = "separation of variables, theta = (2/pi) sum ((-1)^(n+1) + 1)/n sin(n pi x/L) sinh(n pi y/L)/sinh(n pi W/L), theta = (T - T1)/(T2 - T1): Incropera et al., Fundamentals of Heat and Mass Transfer, §4.2";
    for (name, x, y) in [("centre", 1.0, 0.5), ("upper", 0.5, 0.8)] {
        let quantity = format!("probe:{name}");
        record(
            out,
            case,
            "Incropera §4.2",
            detail,
            &s,
            Check {
                quantity: &quantity,
                unit: "degC",
                reference: 5.0 + 100.0 * theta(x, y),
                computed: probe(&s, case, name)?,
                tolerance: 0.05,
                measure: ErrorMeasure::Absolute,
            },
        );
    }
    Ok(())
}

/// Disk with a uniform source and a fixed rim.
fn disk_with_source(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "disk_with_source";
    let s = solve(
        case,
        r#"
[mesh]
max_area = 0.000125
[materials.core]
conductivity = 1.5
heat_source = 2000.0
[outline]
material = "core"
circle = { center = [0.0, 0.0], radius = 0.5, segments = 160 }
boundary = "rim"
[boundaries.rim]
kind = "fixed"
temperature = 12.0
[[probes]]
name = "centre"
at = [0.0, 0.0]
"#,
    )?;
    record(
        out,
        case,
        "Incropera ch. 3",
        "solid cylinder with uniform generation, T(0) - Ts = q R^2/(4k): Incropera et al., Fundamentals of Heat and Mass Transfer, ch. 3 (radial systems with generation, §3.5 from memory)",
        &s,
        Check {
            quantity: "centre_rise",
            unit: "K",
            reference: 2000.0 * 0.25 / (4.0 * 1.5),
            computed: probe(&s, case, "centre")? - 12.0,
            tolerance: 3e-3,
            measure: ErrorMeasure::Relative,
        },
    );
    Ok(())
}

/// Roots β_n of β·tan β = Bi, n = 1, 2, …: β_n in ((n−1)π, (n−½)π), found by bisection on
/// β·sin β − Bi·cos β (no poles).
pub fn biot_eigenvalues(bi: f64, count: usize) -> Vec<f64> {
    (0..count)
        .map(|n| {
            let f = |b: f64| b * b.sin() - bi * b.cos();
            let (mut lo, mut hi) = (n as f64 * PI, n as f64 * PI + 0.5 * PI);
            let flo = f(lo);
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if (f(mid) > 0.0) == (flo > 0.0) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            0.5 * (lo + hi)
        })
        .collect()
}

/// Exact solution of the convective rectangle: 0 ≤ x ≤ L, 0 ≤ y ≤ W, θ = T − T∞; θ = θ0 at
/// y = 0, insulated at x = 0 and y = W, −k ∂θ/∂x = h θ at x = L. With β_n tan β_n = Bi = hL/k,
/// λ_n = β_n/L and C_n = 4 sin β_n/(2β_n + sin 2β_n):
/// θ = θ0 Σ C_n cos(λ_n x) cosh(λ_n (W − y))/cosh(λ_n W), and the heat entering at the base
/// Q' = k θ0 Σ C_n sin β_n tanh(λ_n W).
pub struct ConvectiveRectangle {
    pub length: f64,
    pub height: f64,
    pub conductivity: f64,
    pub h: f64,
    pub theta0: f64,
}

impl ConvectiveRectangle {
    fn terms(&self, count: usize) -> Vec<(f64, f64)> {
        let bi = self.h * self.length / self.conductivity;
        biot_eigenvalues(bi, count)
            .into_iter()
            .map(|b| (b, 4.0 * b.sin() / (2.0 * b + (2.0 * b).sin())))
            .collect()
    }

    /// θ(x, y), K.
    pub fn theta(&self, x: f64, y: f64) -> f64 {
        let (l, w) = (self.length, self.height);
        let mut s = 0.0;
        for (b, c) in self.terms(400) {
            let lam = b / l;
            // cosh(λ(W − y))/cosh(λW) without overflow.
            let ratio = (-lam * y).exp() * (1.0 + (-2.0 * lam * (w - y)).exp())
                / (1.0 + (-2.0 * lam * w).exp());
            s += c * (lam * x).cos() * ratio;
        }
        self.theta0 * s
    }

    /// Heat entering through the base, W/m.
    pub fn base_heat_flow(&self) -> f64 {
        let w = self.height / self.length;
        let s: f64 = self
            .terms(20000)
            .iter()
            .map(|&(b, c)| c * b.sin() * (b * w).tanh())
            .sum();
        self.conductivity * self.theta0 * s
    }
}

/// The convective rectangle as a model file (grid-aligned, so the grid model takes it too).
const CONVECTIVE_RECTANGLE: &str = r#"
[mesh]
max_area = 0.00002
[materials.block]
conductivity = 1.0
[outline]
material = "block"
points = [[0.0, 0.0], [0.5, 0.0], [0.5, 0.4], [0.0, 0.4]]
edges = ["base", "film", "adiabatic", "adiabatic"]
[boundaries.base]
kind = "fixed"
temperature = 70.0
[boundaries.film]
kind = "convection"
h = 2.0
ambient = 20.0
[boundaries.adiabatic]
kind = "insulated"
[[probes]]
name = "corner"
at = [0.5, 0.4]
[[probes]]
name = "middle"
at = [0.25, 0.2]
"#;

/// Rectangle with a fixed base, convection on one side and two insulated sides: Fourier series
/// with Biot-number eigenvalues.
fn convective_rectangle(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "convective_rectangle";
    let s = solve(case, CONVECTIVE_RECTANGLE)?;
    let exact = ConvectiveRectangle {
        length: 0.5,
        height: 0.4,
        conductivity: 1.0,
        h: 2.0,
        theta0: 50.0,
    };
    let source = "Carslaw & Jaeger 1959";
    let detail = "steady rectangle, fixed base, convection (Bi = hL/k = 1) on one side, two insulated sides: theta = theta0 sum C_n cos(b_n x/L) cosh(b_n (W - y)/L)/cosh(b_n W/L), b_n tan b_n = Bi, C_n = 4 sin b_n/(2 b_n + sin 2 b_n); eigenvalues computed by bisection. H. S. Carslaw and J. C. Jaeger, Conduction of Heat in Solids, 2nd ed., Oxford, 1959 (steady flow in a rectangle with the radiation boundary condition; chapter from memory)";
    record(
        out,
        case,
        source,
        detail,
        &s,
        Check {
            quantity: "heat_flow:base",
            unit: "W/m",
            reference: exact.base_heat_flow(),
            computed: flow(&s, case, "base")?,
            tolerance: 2e-3,
            measure: ErrorMeasure::Relative,
        },
    );
    for (name, x, y) in [("corner", 0.5, 0.4), ("middle", 0.25, 0.2)] {
        let quantity = format!("probe:{name}");
        record(
            out,
            case,
            source,
            detail,
            &s,
            Check {
                quantity: &quantity,
                unit: "degC",
                reference: 20.0 + exact.theta(x, y),
                computed: probe(&s, case, name)?,
                tolerance: 0.01,
                measure: ErrorMeasure::Absolute,
            },
        );
    }
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Grid-versus-element agreement
// ---------------------------------------------------------------------------------------------

/// The convective rectangle solved by the grid (5-point finite-difference) model as well: the
/// grid model against the same series solution, and the two models against each other.
fn grid_versus_element(out: &mut Vec<VerifyCase>) -> Result<()> {
    let case = "grid_versus_element";
    let s = solve(case, CONVECTIVE_RECTANGLE)?;
    let g = crate::grid::build(s.section(), 0.005)
        .and_then(|m| crate::grid::solve(&m))
        .map_err(|e| Error::run(format!("verify {case}: {e}")))?;
    let exact = ConvectiveRectangle {
        length: 0.5,
        height: 0.4,
        conductivity: 1.0,
        h: 2.0,
        theta0: 50.0,
    };
    let grid_flow = g
        .heat_flow
        .iter()
        .find(|(n, _)| n == "base")
        .map(|(_, q)| *q)
        .ok_or_else(|| Error::run(format!("verify {case}: grid model has no boundary base")))?;
    let grid_middle = g.temperature_at([0.25, 0.2]).ok_or_else(|| {
        Error::run(format!(
            "verify {case}: grid model has no value at the middle"
        ))
    })?;
    let series = "Carslaw & Jaeger 1959";
    let series_detail = "grid model (5-point finite differences, spacing 5 mm, half-cell treatment of the insulated and convective edges) of the convective rectangle, against its series solution (see convective_rectangle)";
    record(
        out,
        case,
        series,
        series_detail,
        &s,
        Check {
            quantity: "grid:heat_flow:base",
            unit: "W/m",
            reference: exact.base_heat_flow(),
            computed: grid_flow,
            tolerance: 5e-3,
            measure: ErrorMeasure::Relative,
        },
    );
    record(
        out,
        case,
        series,
        series_detail,
        &s,
        Check {
            quantity: "grid:probe:middle",
            unit: "degC",
            reference: 20.0 + exact.theta(0.25, 0.2),
            computed: grid_middle,
            tolerance: 0.02,
            measure: ErrorMeasure::Absolute,
        },
    );
    record(
        out,
        case,
        "internal consistency",
        "element solution (reference column) against the grid model (computed column) at the middle of the convective rectangle: two independent discretisations of one boundary-value problem",
        &s,
        Check {
            quantity: "grid_minus_element:probe:middle",
            unit: "degC",
            reference: probe(&s, case, "middle")?,
            computed: grid_middle,
            tolerance: 0.02,
            measure: ErrorMeasure::Absolute,
        },
    );
    Ok(())
}

/// Runs every case. An error means a case could not be solved (a defect: exit 1); a failed
/// comparison is recorded in the case.
pub fn run_suite() -> Result<VerifySuite> {
    let mut cases = Vec::new();
    composite_wall(&mut cases)?;
    hollow_cylinder(&mut cases)?;
    eccentric_cylinders(&mut cases)?;
    fourier_rectangle(&mut cases)?;
    disk_with_source(&mut cases)?;
    convective_rectangle(&mut cases)?;
    grid_versus_element(&mut cases)?;
    Ok(VerifySuite { cases })
}

#[cfg(test)]
#[path = "verify_tests.rs"]
mod tests;
