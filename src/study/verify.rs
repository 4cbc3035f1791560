//! Verification suite behind `xsheat verify`: one table of reference cases ([`cases`]), each a
//! built-in model with quantities whose reference values come from closed-form solutions in
//! the published literature. Every case is solved through the whole pipeline (model → mesh →
//! fem → solve → post) and each quantity compared with its reference within a stated
//! tolerance. The test suite loops over the same table (tests/analytical.rs).
//!
//! Each case carries a clean citation (author, title, chapter or table) for the console and
//! the files; where a section or table number is recalled from memory, the comment beside the
//! case says so. The formulas are standard and written out with each case.

use crate::error::{Error, Result};

use crate::grid::GridSolution;
use crate::mesh::MeshOptions;
use crate::model;
use crate::run::{self, Solved};
use serde::Serialize;
use std::f64::consts::PI;

/// How the error of a quantity is measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ErrorMeasure {
    /// |computed − reference| / |reference|.
    Relative,
    /// |computed − reference| in the unit of the quantity.
    Absolute,
}

/// One checked value: a quantity of a reference case, as computed and compared.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerifyCase {
    /// Name of the reference case, e.g. `hollow_cylinder`.
    pub case: String,
    /// The quantity checked, e.g. `heat_flow:inner` or `probe:centre`.
    pub quantity: String,
    /// Unit of the reference and computed values (and of an absolute error).
    pub unit: String,
    /// Short source for the table, e.g. `Incropera ch. 3`.
    pub source: String,
    /// The formula used and the full citation of its source.
    pub reference_detail: String,
    /// Reference value, in `unit`.
    pub reference: f64,
    /// Value computed by xsheat, in `unit`.
    pub computed: f64,
    /// Error, relative or in `unit` as `error_measure` says.
    pub error: f64,
    /// Largest error accepted, measured as `error`.
    pub tolerance: f64,
    /// How `error` and `tolerance` are measured.
    pub error_measure: ErrorMeasure,
    /// True when the error is finite and at most the tolerance.
    pub passed: bool,
    /// Triangles of the element mesh the case was solved on.
    pub triangles: usize,
}

/// The whole suite: every quantity of every case, in table order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VerifySuite {
    /// One entry per checked quantity.
    pub cases: Vec<VerifyCase>,
}

impl VerifySuite {
    /// True when every quantity is within its tolerance.
    pub fn all_passed(&self) -> bool {
        self.cases.iter().all(|c| c.passed)
    }
    /// Number of quantities outside their tolerance.
    pub fn failed(&self) -> usize {
        self.cases.iter().filter(|c| !c.passed).count()
    }
}

/// A value read off a solved case.
#[derive(Debug, Clone, PartialEq)]
pub enum Reading {
    /// Heat flow into the section through the named boundary, W/m (element model).
    HeatFlow(&'static str),
    /// Temperature at the named probe, °C (element model).
    Probe(&'static str),
    /// Temperature at the named probe minus a base temperature, K (element model).
    ProbeRise {
        /// The probe's name.
        probe: &'static str,
        /// The temperature subtracted, °C.
        base: f64,
    },
    /// Heat flow into the section through the named boundary in the case's grid model, W/m.
    GridHeatFlow(&'static str),
    /// Temperature of the case's grid model at a point, °C.
    GridTemperature([f64; 2]),
}

/// What a quantity is compared with.
#[derive(Debug, Clone, PartialEq)]
pub enum Reference {
    /// A value of the exact solution, in the quantity's unit.
    Exact(f64),
    /// A value read off the same case (to compare two discretisations with each other).
    Model(Reading),
}

/// Where the reference of a quantity comes from.
#[derive(Debug, Clone, PartialEq)]
pub struct Basis {
    /// Short label for the table, e.g. `Incropera Table 4.1`.
    pub label: &'static str,
    /// Clean citation: author, title, chapter or table (no remarks).
    pub source: &'static str,
    /// The exact solution or comparison used, written out.
    pub formula: &'static str,
}

impl Basis {
    /// The formula followed by its citation, as printed and written to the files.
    pub fn detail(&self) -> String {
        if self.source.is_empty() {
            self.formula.to_string()
        } else {
            format!("{}: {}", self.formula, self.source)
        }
    }
}

/// One quantity checked in a reference case.
#[derive(Debug, Clone, PartialEq)]
pub struct Quantity {
    /// Name in the results, e.g. `heat_flow:inside`.
    pub name: String,
    /// Unit of the values.
    pub unit: &'static str,
    /// What xsheat computes.
    pub computed: Reading,
    /// What it is compared with.
    pub reference: Reference,
    /// Largest error accepted.
    pub tolerance: f64,
    /// How the error is measured.
    pub measure: ErrorMeasure,
    /// The basis of this quantity's reference when it is not the case's own.
    pub basis: Option<Basis>,
}

/// One reference case: a model with known solution and the quantities checked on it.
#[derive(Debug, Clone, PartialEq)]
pub struct ReferenceCase {
    /// Case name, e.g. `composite_wall`.
    pub name: &'static str,
    /// Source and formula of the reference values.
    pub basis: Basis,
    /// The model file (TOML) solved.
    pub model: &'static str,
    /// Spacing of the grid (finite-difference) model, m, for the grid readings.
    pub grid_spacing: Option<f64>,
    /// The quantities checked, in order.
    pub quantities: Vec<Quantity>,
}

fn quantity(
    name: &str,
    unit: &'static str,
    computed: Reading,
    reference: f64,
    tolerance: f64,
    measure: ErrorMeasure,
) -> Quantity {
    Quantity {
        name: name.to_string(),
        unit,
        computed,
        reference: Reference::Exact(reference),
        tolerance,
        measure,
        basis: None,
    }
}

/// The citation of Incropera et al. followed by a chapter or table.
macro_rules! incropera {
    ($where:literal) => {
        concat!(
            "F. P. Incropera, D. P. DeWitt, T. L. Bergman and A. S. Lavine, Fundamentals of Heat and Mass Transfer, ",
            $where
        )
    };
}

/// Citation of the convective-rectangle series. The chapter on steady flow in a rectangle
/// with the radiation boundary condition is not named: recalled only vaguely from memory.
const CARSLAW_JAEGER: &str =
    "H. S. Carslaw and J. C. Jaeger, Conduction of Heat in Solids, 2nd ed., Oxford, 1959";

/// Composite wall: series thermal resistances. The exact solution is piecewise linear, which
/// P1 reproduces, so the agreement is to round-off. Source: Incropera et al., ch. 3 (the
/// composite plane wall, §3.1 recalled from memory).
fn composite_wall() -> ReferenceCase {
    // q'' = ΔT / (1/h1 + L1/k1 + L2/k2 + 1/h2) over a 1 m high wall.
    let q = 25.0 / (1.0 / 25.0 + 0.2 / 1.2 + 0.3 / 0.04 + 1.0 / 8.0);
    ReferenceCase {
        name: "composite_wall",
        basis: Basis {
            label: "Incropera ch. 3",
            source: incropera!("ch. 3"),
            formula: "series thermal resistances q = dT/(1/h1 + L1/k1 + L2/k2 + 1/h2)",
        },
        model: r#"
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
        grid_spacing: None,
        quantities: vec![quantity(
            "heat_flow:inside",
            "W/m",
            Reading::HeatFlow("inside"),
            q,
            1e-9,
            ErrorMeasure::Relative,
        )],
    }
}

/// Hollow cylinder between two fixed temperatures. Source: Incropera et al., ch. 3 (radial
/// systems, §3.3 recalled from memory).
fn hollow_cylinder() -> ReferenceCase {
    let q = 2.0 * PI * 2.3 * (80.0 - 15.0) / (1.0f64 / 0.4).ln();
    ReferenceCase {
        name: "hollow_cylinder",
        basis: Basis {
            label: "Incropera ch. 3",
            source: incropera!("ch. 3"),
            formula: "cylindrical wall q' = 2 pi k (T1 - T2) / ln(r2/r1)",
        },
        model: r#"
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
        grid_spacing: None,
        quantities: vec![quantity(
            "heat_flow:inner",
            "W/m",
            Reading::HeatFlow("inner"),
            q,
            2e-3,
            ErrorMeasure::Relative,
        )],
    }
}

/// Eccentric cylinders: conduction shape factor per unit length. Source: Incropera et al.,
/// Table 4.1 (table number recalled from memory).
fn eccentric_cylinders() -> ReferenceCase {
    // Outer diameter D = 2, inner d = 0.6, centres z = 0.3 apart.
    let (dd, d, z) = (2.0f64, 0.6f64, 0.3f64);
    let shape = 2.0 * PI / ((dd * dd + d * d - 4.0 * z * z) / (2.0 * dd * d)).acosh();
    let q = shape * 1.6 * (65.0 - 5.0);
    ReferenceCase {
        name: "eccentric_cylinders",
        basis: Basis {
            label: "Incropera Table 4.1",
            source: incropera!("Table 4.1"),
            formula: "conduction shape factor of a cylinder eccentric in a larger cylinder, S/L = 2 pi / arccosh((D^2 + d^2 - 4 z^2)/(2 D d)), q' = S k dT",
        },
        model: r#"
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
        grid_spacing: None,
        quantities: vec![quantity(
            "heat_flow:pipe",
            "W/m",
            Reading::HeatFlow("pipe"),
            q,
            3e-3,
            ErrorMeasure::Relative,
        )],
    }
}

/// θ = (T − T1)/(T2 − T1) of the rectangle 0 ≤ x ≤ L, 0 ≤ y ≤ W with T2 on y = W and T1 on the
/// other three sides, by separation of variables:
/// θ = (2/π) Σ ((−1)^{n+1} + 1)/n · sin(nπx/L) · sinh(nπy/L)/sinh(nπW/L) (odd n up to 1999).
pub fn fourier_rectangle_theta(l: f64, w: f64, x: f64, y: f64) -> f64 {
    let mut sum = 0.0;
    for n in (1..2000).step_by(2) {
        let k = n as f64 * PI / l;
        // sinh(k y)/sinh(k W) written with exponentials to avoid overflow.
        let ratio =
            (k * (y - w)).exp() * (1.0 - (-2.0 * k * y).exp()) / (1.0 - (-2.0 * k * w).exp());
        sum += 2.0 / n as f64 * (k * x).sin() * ratio;
    }
    2.0 / PI * sum
}

/// Rectangle with one side hot, three cold: Fourier series at interior points. Source:
/// Incropera et al., §4.2, the method of separation of variables (section number recalled from
/// memory).
fn fourier_rectangle() -> ReferenceCase {
    let quantities = [("centre", 1.0, 0.5), ("upper", 0.5, 0.8)]
        .into_iter()
        .map(|(name, x, y)| {
            quantity(
                &format!("probe:{name}"),
                "degC",
                Reading::Probe(name),
                5.0 + 100.0 * fourier_rectangle_theta(2.0, 1.0, x, y),
                0.05,
                ErrorMeasure::Absolute,
            )
        })
        .collect();
    ReferenceCase {
        name: "fourier_rectangle",
        basis: Basis {
            label: "Incropera §4.2",
            source: incropera!("§4.2"),
            formula: "separation of variables, theta = (2/pi) sum ((-1)^(n+1) + 1)/n sin(n pi x/L) sinh(n pi y/L)/sinh(n pi W/L), theta = (T - T1)/(T2 - T1)",
        },
        model: r#"
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
        grid_spacing: None,
        quantities,
    }
}

/// Disk with a uniform source and a fixed rim. Source: Incropera et al., ch. 3 (radial systems
/// with generation, §3.5 recalled from memory).
fn disk_with_source() -> ReferenceCase {
    ReferenceCase {
        name: "disk_with_source",
        basis: Basis {
            label: "Incropera ch. 3",
            source: incropera!("ch. 3"),
            formula: "solid cylinder with uniform generation, T(0) - Ts = q R^2/(4k)",
        },
        model: r#"
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
        grid_spacing: None,
        quantities: vec![quantity(
            "centre_rise",
            "K",
            Reading::ProbeRise {
                probe: "centre",
                base: 12.0,
            },
            2000.0 * 0.25 / (4.0 * 1.5),
            3e-3,
            ErrorMeasure::Relative,
        )],
    }
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
    /// L, m: from the insulated side x = 0 to the convective side x = L.
    pub length: f64,
    /// W, m: from the fixed base y = 0 to the insulated top y = W.
    pub height: f64,
    /// k, W/(m·K).
    pub conductivity: f64,
    /// Film coefficient on x = L, W/(m²·K).
    pub h: f64,
    /// θ0 = T_base − T∞, K.
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

/// The convective rectangle of the suite: L = 0.5 m, W = 0.4 m, k = 1, h = 2 (Bi = 1),
/// base 70 °C, ambient 20 °C.
const CONVECTIVE: ConvectiveRectangle = ConvectiveRectangle {
    length: 0.5,
    height: 0.4,
    conductivity: 1.0,
    h: 2.0,
    theta0: 50.0,
};

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
/// with Biot-number eigenvalues. Source: Carslaw & Jaeger (steady flow in a rectangle with the
/// radiation boundary condition; the chapter is not quoted, recalled only from memory).
fn convective_rectangle() -> ReferenceCase {
    let mut quantities = vec![quantity(
        "heat_flow:base",
        "W/m",
        Reading::HeatFlow("base"),
        CONVECTIVE.base_heat_flow(),
        2e-3,
        ErrorMeasure::Relative,
    )];
    for (name, x, y) in [("corner", 0.5, 0.4), ("middle", 0.25, 0.2)] {
        quantities.push(quantity(
            &format!("probe:{name}"),
            "degC",
            Reading::Probe(name),
            20.0 + CONVECTIVE.theta(x, y),
            0.01,
            ErrorMeasure::Absolute,
        ));
    }
    ReferenceCase {
        name: "convective_rectangle",
        basis: Basis {
            label: "Carslaw & Jaeger 1959",
            source: CARSLAW_JAEGER,
            formula: "steady rectangle, fixed base, convection (Bi = hL/k = 1) on one side, two insulated sides: theta = theta0 sum C_n cos(b_n x/L) cosh(b_n (W - y)/L)/cosh(b_n W/L), b_n tan b_n = Bi, C_n = 4 sin b_n/(2 b_n + sin 2 b_n); eigenvalues computed by bisection",
        },
        model: CONVECTIVE_RECTANGLE,
        grid_spacing: None,
        quantities,
    }
}

/// The convective rectangle solved by the grid (5-point finite-difference) model as well: the
/// grid model against the same series solution, and the two models against each other.
fn grid_versus_element() -> ReferenceCase {
    let consistency = Quantity {
        name: "grid_minus_element:probe:middle".to_string(),
        unit: "degC",
        computed: Reading::GridTemperature([0.25, 0.2]),
        reference: Reference::Model(Reading::Probe("middle")),
        tolerance: 0.02,
        measure: ErrorMeasure::Absolute,
        basis: Some(Basis {
            label: "internal consistency",
            source: "",
            formula: "element solution (reference column) against the grid model (computed column) at the middle of the convective rectangle: two independent discretisations of one boundary-value problem",
        }),
    };
    ReferenceCase {
        name: "grid_versus_element",
        basis: Basis {
            label: "Carslaw & Jaeger 1959",
            source: CARSLAW_JAEGER,
            formula: "grid model (5-point finite differences, spacing 5 mm, half-cell treatment of the insulated and convective edges) of the convective rectangle, against its series solution (see convective_rectangle)",
        },
        model: CONVECTIVE_RECTANGLE,
        grid_spacing: Some(0.005),
        quantities: vec![
            quantity(
                "grid:heat_flow:base",
                "W/m",
                Reading::GridHeatFlow("base"),
                CONVECTIVE.base_heat_flow(),
                5e-3,
                ErrorMeasure::Relative,
            ),
            quantity(
                "grid:probe:middle",
                "degC",
                Reading::GridTemperature([0.25, 0.2]),
                20.0 + CONVECTIVE.theta(0.25, 0.2),
                0.02,
                ErrorMeasure::Absolute,
            ),
            consistency,
        ],
    }
}

/// The table of reference cases, in the order `xsheat verify` runs and prints them.
pub fn cases() -> Vec<ReferenceCase> {
    vec![
        composite_wall(),
        hollow_cylinder(),
        eccentric_cylinders(),
        fourier_rectangle(),
        disk_with_source(),
        convective_rectangle(),
        grid_versus_element(),
    ]
}

/// The case of that name in [`cases`], if any.
pub fn case(name: &str) -> Option<ReferenceCase> {
    cases().into_iter().find(|c| c.name == name)
}

fn case_error(case: &str, e: impl std::fmt::Display) -> Error {
    Error::run(format!("verify {case}: {e}"))
}

/// Solves a case's model with the default mesh options; a failed self-check is an error.
pub fn solve_case(case: &ReferenceCase) -> Result<Solved> {
    let name = case.name;
    let m = model::parse(case.model).map_err(|e| case_error(name, e))?;
    let p = run::prepare_model(m).map_err(|e| case_error(name, e))?;
    let s = run::solve(p, &MeshOptions::default()).map_err(|e| case_error(name, e))?;
    if let Some(e) = run::failed_checks_error(&s) {
        return Err(case_error(name, e));
    }
    Ok(s)
}

/// The element and (when the case has one) grid solutions a reading is taken from.
struct Solutions<'a> {
    case: &'a str,
    element: &'a Solved,
    grid: Option<GridSolution>,
}

impl Solutions<'_> {
    fn read(&self, r: &Reading) -> Result<f64> {
        let case = self.case;
        let grid = || {
            self.grid
                .as_ref()
                .ok_or_else(|| case_error(case, "the case has no grid spacing"))
        };
        match *r {
            Reading::HeatFlow(name) => self
                .element
                .results
                .boundaries
                .iter()
                .find(|b| b.name == name)
                .map(|b| b.heat_flow)
                .ok_or_else(|| case_error(case, format!("no boundary {name}"))),
            Reading::Probe(name) => self.probe(name),
            Reading::ProbeRise { probe, base } => Ok(self.probe(probe)? - base),
            Reading::GridHeatFlow(name) => grid()?
                .heat_flow
                .iter()
                .find(|(n, _)| n == name)
                .map(|(_, q)| *q)
                .ok_or_else(|| case_error(case, format!("grid model has no boundary {name}"))),
            Reading::GridTemperature(p) => grid()?.temperature_at(p).ok_or_else(|| {
                case_error(
                    case,
                    format!(
                        "grid model has no value at {}",
                        crate::geom::format_point(p)
                    ),
                )
            }),
        }
    }

    fn probe(&self, name: &str) -> Result<f64> {
        self.element
            .results
            .probes
            .iter()
            .find(|p| p.name == name)
            .map(|p| p.temperature)
            .ok_or_else(|| case_error(self.case, format!("no probe {name}")))
    }
}

/// Compares every quantity of a case with its reference on a solution of the case's model
/// (from [`solve_case`]). An error means a reading is missing (a defect of the case).
pub fn evaluate(case: &ReferenceCase, solved: &Solved) -> Result<Vec<VerifyCase>> {
    let grid = match case.grid_spacing {
        Some(h) => Some(
            crate::grid::build(solved.section(), h)
                .and_then(|m| crate::grid::solve(&m))
                .map_err(|e| case_error(case.name, e))?,
        ),
        None => None,
    };
    let sol = Solutions {
        case: case.name,
        element: solved,
        grid,
    };
    let mut out = Vec::with_capacity(case.quantities.len());
    for q in &case.quantities {
        let computed = sol.read(&q.computed)?;
        let reference = match &q.reference {
            Reference::Exact(v) => *v,
            Reference::Model(r) => sol.read(r)?,
        };
        let diff = (computed - reference).abs();
        let error = match q.measure {
            ErrorMeasure::Absolute => diff,
            ErrorMeasure::Relative => diff / reference.abs(),
        };
        let basis = q.basis.as_ref().unwrap_or(&case.basis);
        out.push(VerifyCase {
            case: case.name.to_string(),
            quantity: q.name.clone(),
            unit: q.unit.to_string(),
            source: basis.label.to_string(),
            reference_detail: basis.detail(),
            reference,
            computed,
            error,
            tolerance: q.tolerance,
            error_measure: q.measure,
            passed: error.is_finite() && error <= q.tolerance,
            triangles: solved.mesh.triangles.len(),
        });
    }
    Ok(out)
}

/// Solves one case and compares its quantities ([`solve_case`], then [`evaluate`]).
pub fn run_case(case: &ReferenceCase) -> Result<Vec<VerifyCase>> {
    let s = solve_case(case)?;
    evaluate(case, &s)
}

/// Runs every case of [`cases`]. An error means a case could not be solved (a defect: exit 1);
/// a failed comparison is recorded in the case.
pub fn run_suite() -> Result<VerifySuite> {
    let mut out = Vec::new();
    for case in cases() {
        out.extend(run_case(&case)?);
    }
    Ok(VerifySuite { cases: out })
}

#[cfg(test)]
#[path = "verify_tests.rs"]
mod tests;
