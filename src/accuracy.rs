//! Accuracy stage: how far a solved field is from the exact solution of the same model.
//!
//! This module owns
//! - the **Zienkiewicz–Zhu (ZZ) a posteriori error estimate** ([`zz_estimate`]): the gradient is
//!   recovered per node by area-weighted averaging of the constant triangle gradients, separately
//!   for each material meeting at the node ([`recover_gradient`]); the indicator of triangle T is
//!   η_T² = ∫_T (G* − ∇T_h)·k·(G* − ∇T_h) dA with G* the linear interpolant of the recovered
//!   corner values, integrated exactly by the 3-point edge-midpoint rule (the integrand is
//!   quadratic). Reference: O. C. Zienkiewicz and J. Z. Zhu, "A simple error estimator and
//!   adaptive procedure for practical engineering analysis", Int. J. Numer. Methods Eng. 24
//!   (1987) 337–357.
//! - the **grid convergence index (GCI)** with Richardson extrapolation ([`gci`]) following the
//!   procedure of I. B. Celik et al., "Procedure for estimation and reporting of uncertainty due
//!   to discretization in CFD applications", J. Fluids Eng. 130 (2008) 078001, with the factor of
//!   safety 1.25 (P. J. Roache, Verification and Validation in Computational Science and
//!   Engineering, Hermosa, 1998; ASME V&V 20-2009);
//! - the **mesh convergence study** ([`convergence_study`]) behind `xsheat converge`, and its
//!   outputs `convergence.csv` and `convergence.json`.
//!
//! Norms. The energy norm used throughout is the conduction energy (semi)norm
//! ‖v‖_E = (Σ_T ∫_T ∇v·k·∇v dA)^½, in (W·K/m)^½ per metre of section depth; the film term of
//! convection edges is not included (it would make the norm depend on the temperature level).
//! The relative estimate is η / (‖T_h‖_E² + η²)^½, i.e. the estimated error relative to the
//! estimated energy norm of the exact solution (‖T‖_E² ≈ ‖T_h‖_E² + ‖e‖_E² holds exactly for
//! the Galerkin solution of a problem with fixed temperatures only; it is the definition used by
//! Zienkiewicz and Zhu).

use crate::error::{Error, Result};
use crate::fem::{System, TriangleGeometry};
use crate::io::{self, OutputSet};
use crate::mesh::{Mesh, MeshOptions};
use crate::model::{self, Section};
use crate::post::Results;
use crate::run::{self, Prepared};
use serde::Serialize;

// ---------------------------------------------------------------------------------------------
// Zienkiewicz–Zhu error estimate
// ---------------------------------------------------------------------------------------------

/// The ZZ error estimate of one solved field.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ErrorEstimate {
    /// η_T per triangle, (W·K/m)^½, in mesh triangle order (for the `error_indicator` cell
    /// array). Not serialised: it has one value per triangle.
    #[serde(skip)]
    pub indicator: Vec<f64>,
    /// Estimated error in the energy norm, η = (Σ η_T²)^½, (W·K/m)^½.
    pub energy_norm: f64,
    /// Energy norm of the finite element solution, ‖T_h‖_E, (W·K/m)^½.
    pub solution_energy_norm: f64,
    /// η / (‖T_h‖_E² + η²)^½ (0 when both vanish).
    pub relative: f64,
}

/// Recovered gradient at the three corners of every triangle, K/m.
///
/// At each node the constant gradients of the adjacent triangles are averaged with their areas
/// as weights, separately for each material: a triangle sees the average over the triangles of
/// its own material around the node. Within one material the conductivity is uniform, so this is
/// the same as recovering the heat flux; across a material interface the normal gradient jumps
/// and is not smeared.
pub fn recover_gradient(mesh: &Mesh, cell_gradient: &[[f64; 2]]) -> Result<Vec<[[f64; 2]; 3]>> {
    let nt = mesh.triangles.len();
    if cell_gradient.len() != nt || mesh.material.len() != nt {
        return Err(Error::run(format!(
            "internal error: gradient recovery got {} gradients and {} material ids for {nt} triangles",
            cell_gradient.len(),
            mesh.material.len()
        )));
    }
    let n = mesh.nodes.len();
    // Per node: (material, Σ A·g, Σ A), in order of first appearance (deterministic).
    let mut acc: Vec<Vec<(usize, [f64; 2], f64)>> = vec![Vec::new(); n];
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let a = mesh.triangle_area(t).abs();
        let g = cell_gradient[t];
        let m = mesh.material[t];
        for &v in ids {
            if v >= n {
                return Err(Error::run(format!(
                    "internal error: triangle {t} refers to node {v} of {n}"
                )));
            }
            match acc[v].iter_mut().find(|e| e.0 == m) {
                Some(e) => {
                    e.1[0] += a * g[0];
                    e.1[1] += a * g[1];
                    e.2 += a;
                }
                None => acc[v].push((m, [a * g[0], a * g[1]], a)),
            }
        }
    }
    let mut out = Vec::with_capacity(nt);
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let m = mesh.material[t];
        let mut corners = [[0.0; 2]; 3];
        for (c, &v) in corners.iter_mut().zip(ids) {
            // The triangle itself contributed, so the entry exists and its weight is positive
            // unless the triangle is degenerate; then fall back to the triangle's own value.
            *c = match acc[v].iter().find(|e| e.0 == m) {
                Some(e) if e.2 > 0.0 => [e.1[0] / e.2, e.1[1] / e.2],
                _ => cell_gradient[t],
            };
        }
        out.push(corners);
    }
    Ok(out)
}

/// Zienkiewicz–Zhu estimate of the energy-norm error of a solved field (see the module doc for
/// the recovery, the norm and the relative measure).
pub fn zz_estimate(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    results: &Results,
) -> Result<ErrorEstimate> {
    let nt = mesh.triangles.len();
    if results.cell_gradient.len() != nt {
        return Err(Error::run(format!(
            "internal error: error estimate got {} triangle gradients for {nt} triangles",
            results.cell_gradient.len()
        )));
    }
    if system.conductivity.len() < section.materials.len() {
        return Err(Error::run(
            "internal error: error estimate: system and section disagree on materials",
        ));
    }
    let recovered = recover_gradient(mesh, &results.cell_gradient)?;
    let mut indicator = Vec::with_capacity(nt);
    let mut eta2 = 0.0;
    let mut norm2 = 0.0;
    for (t, c) in recovered.iter().enumerate() {
        let k = system.conductivity.get(mesh.material[t]).ok_or_else(|| {
            Error::run(format!(
                "internal error: triangle {t} has material id {} without a conductivity",
                mesh.material[t]
            ))
        })?;
        let area = TriangleGeometry::of(mesh, t).area.abs();
        let g = results.cell_gradient[t];
        // Edge-midpoint rule: exact for the quadratic integrand, weights A/3.
        let mut s = 0.0;
        for i in 0..3 {
            let j = (i + 1) % 3;
            let e = [
                0.5 * (c[i][0] + c[j][0]) - g[0],
                0.5 * (c[i][1] + c[j][1]) - g[1],
            ];
            let ke = k.apply(e);
            s += e[0] * ke[0] + e[1] * ke[1];
        }
        let et2 = (s * area / 3.0).max(0.0);
        let kg = k.apply(g);
        norm2 += area * (g[0] * kg[0] + g[1] * kg[1]);
        eta2 += et2;
        indicator.push(et2.sqrt());
    }
    let denom = (norm2 + eta2).sqrt();
    Ok(ErrorEstimate {
        indicator,
        energy_norm: eta2.sqrt(),
        solution_energy_norm: norm2.max(0.0).sqrt(),
        relative: if denom > 0.0 {
            eta2.sqrt() / denom
        } else {
            0.0
        },
    })
}

// ---------------------------------------------------------------------------------------------
// Grid convergence index
// ---------------------------------------------------------------------------------------------

/// Differences below this fraction of the quantity's scale count as round-off (the same level as
/// the solver-residual and energy-balance self-checks).
pub const CONSTANT_RELATIVE_TOLERANCE: f64 = 1e-9;
/// Factor of safety of the GCI for studies with three or more levels (Roache 1998).
pub const GCI_SAFETY_FACTOR: f64 = 1.25;
/// Observed orders outside this range are flagged `unreliable` (our choice: below it the levels
/// are far from the asymptotic range, above it — twice the formal order 2 of P1 point values —
/// extrapolation is not trustworthy).
pub const PLAUSIBLE_ORDER: (f64, f64) = (0.5, 4.0);

/// How the values of a quantity behave over the three finest levels.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ConvergenceStatus {
    /// No change beyond round-off ([`CONSTANT_RELATIVE_TOLERANCE`] × scale).
    Constant,
    /// Successive differences of one sign, shrinking: order, extrapolation and GCI reported.
    Monotone,
    /// Successive differences change sign: no order reported.
    Oscillating,
    /// Differences of one sign that do not shrink under refinement: no order reported.
    Divergent,
    /// An order could not be determined or lies outside [`PLAUSIBLE_ORDER`]; the order (if any)
    /// is reported, no extrapolation and no GCI.
    Unreliable,
}

impl ConvergenceStatus {
    pub fn as_str(&self) -> &'static str {
        match self {
            ConvergenceStatus::Constant => "constant",
            ConvergenceStatus::Monotone => "monotone",
            ConvergenceStatus::Oscillating => "oscillating",
            ConvergenceStatus::Divergent => "divergent",
            ConvergenceStatus::Unreliable => "unreliable",
        }
    }
}

/// Result of the GCI procedure on the three finest levels of a sequence.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Gci {
    pub status: ConvergenceStatus,
    /// Observed order p.
    pub observed_order: Option<f64>,
    /// Richardson extrapolation φ_ext = (r21^p·φ1 − φ2)/(r21^p − 1).
    pub extrapolated: Option<f64>,
    /// GCI of the finest level in the unit of the quantity: 1.25·|φ1 − φ2|/(r21^p − 1).
    pub gci_fine: Option<f64>,
    /// The same relative to |φ1|, percent (Celik's GCI_fine^21); `None` when φ1 = 0.
    pub gci_fine_percent: Option<f64>,
    /// |φ1 − φ2|/|φ1| (Celik's e_a^21); `None` when φ1 = 0.
    pub approximate_relative_error: Option<f64>,
    /// |φ_ext − φ1|/|φ_ext| (Celik's e_ext^21).
    pub extrapolated_relative_error: Option<f64>,
    /// h2/h1 and h3/h2 (1 = finest).
    pub r21: f64,
    pub r32: f64,
    /// Observed order of every run of three consecutive levels, coarsest run first (more than
    /// three levels show whether the order settles); `None` where not monotone.
    pub orders_by_triplet: Vec<Option<f64>>,
    pub note: String,
}

/// GCI procedure on a sequence of levels, **coarsest first**: `h[i]` the representative size
/// (e.g. (A/N_i)^½), `values[i]` the quantity. The finest three levels give the order, the
/// extrapolated value and the GCI. `scale` is the magnitude against which round-off is judged
/// (e.g. the largest |temperature|, or Σ|boundary heat flows|); differences at most
/// [`CONSTANT_RELATIVE_TOLERANCE`] × max(scale, max|value|) count as no change.
pub fn gci(h: &[f64], values: &[f64], scale: f64) -> Result<Gci> {
    if h.len() != values.len() {
        return Err(Error::input(format!(
            "GCI: {} sizes for {} values",
            h.len(),
            values.len()
        )));
    }
    if h.len() < 3 {
        return Err(Error::input(format!(
            "GCI: needs at least 3 levels, got {}",
            h.len()
        )));
    }
    if let Some(i) = h.iter().position(|x| !(x.is_finite() && *x > 0.0)) {
        return Err(Error::input(format!(
            "GCI: size of level {} is {}, must be positive and finite",
            i + 1,
            h[i]
        )));
    }
    if let Some(i) = values.iter().position(|x| !x.is_finite()) {
        return Err(Error::input(format!(
            "GCI: value of level {} is {}, must be finite",
            i + 1,
            values[i]
        )));
    }
    let scale = if scale.is_finite() { scale.abs() } else { 0.0 };
    let n = h.len();
    let mut orders_by_triplet = Vec::with_capacity(n - 2);
    for k in 0..n - 2 {
        let g = gci3(
            [h[k + 2], h[k + 1], h[k]],
            [values[k + 2], values[k + 1], values[k]],
            scale,
        );
        orders_by_triplet.push(match g.status {
            ConvergenceStatus::Monotone | ConvergenceStatus::Unreliable => g.observed_order,
            _ => None,
        });
    }
    let mut g = gci3(
        [h[n - 1], h[n - 2], h[n - 3]],
        [values[n - 1], values[n - 2], values[n - 3]],
        scale,
    );
    g.orders_by_triplet = orders_by_triplet;
    Ok(g)
}

/// Celik et al. (2008) for three levels, index 0 = finest (their 1).
fn gci3(h: [f64; 3], phi: [f64; 3], scale: f64) -> Gci {
    let r21 = h[1] / h[0];
    let r32 = h[2] / h[1];
    let e21 = phi[1] - phi[0];
    let e32 = phi[2] - phi[1];
    let magnitude = phi.iter().fold(scale, |m, v| m.max(v.abs()));
    let tol = CONSTANT_RELATIVE_TOLERANCE * magnitude;
    let rel = |num: f64, den: f64| (den != 0.0).then(|| (num / den).abs());
    let mut g = Gci {
        status: ConvergenceStatus::Unreliable,
        observed_order: None,
        extrapolated: None,
        gci_fine: None,
        gci_fine_percent: None,
        approximate_relative_error: rel(e21, phi[0]),
        extrapolated_relative_error: None,
        r21,
        r32,
        orders_by_triplet: Vec::new(),
        note: String::new(),
    };
    if e21.abs() <= tol && e32.abs() <= tol {
        g.status = ConvergenceStatus::Constant;
        g.extrapolated = Some(phi[0]);
        g.gci_fine = Some(0.0);
        g.gci_fine_percent = rel(0.0, phi[0]).map(|_| 0.0);
        g.extrapolated_relative_error = rel(0.0, phi[0]).map(|_| 0.0);
        g.note = format!("no change beyond round-off ({tol:.1e}) over the finest three levels");
        return g;
    }
    if !(r21 > 1.0 && r32 > 1.0) {
        g.note = format!(
            "the representative size does not decrease from level to level (r21 = {r21:.4}, r32 = {r32:.4})"
        );
        return g;
    }
    if e21.abs() <= tol || e32.abs() <= tol {
        g.note = "one of the two finest differences vanishes to round-off: no order".into();
        return g;
    }
    if e21 * e32 < 0.0 {
        g.status = ConvergenceStatus::Oscillating;
        g.note = "successive differences change sign: oscillatory convergence, no order".into();
        return g;
    }
    // Monotone differences. A positive order exists iff ε32/ε21 exceeds its limit as p → 0,
    // ln r32 / ln r21 (1 for a constant ratio).
    let ratio = e32 / e21;
    if ratio <= r32.ln() / r21.ln() {
        g.status = ConvergenceStatus::Divergent;
        g.note = format!(
            "the differences do not shrink under refinement (ε32/ε21 = {ratio:.4}): no order"
        );
        return g;
    }
    let Some(p) = observed_order(r21, r32, ratio) else {
        g.note = "the order equation has no solution in (0, 50]".into();
        return g;
    };
    g.observed_order = Some(p);
    if !(PLAUSIBLE_ORDER.0..=PLAUSIBLE_ORDER.1).contains(&p) {
        g.note = format!(
            "observed order {p:.3} outside [{}, {}]: not in the asymptotic range; no extrapolation or GCI",
            PLAUSIBLE_ORDER.0, PLAUSIBLE_ORDER.1
        );
        return g;
    }
    let rp = r21.powf(p);
    let ext = (rp * phi[0] - phi[1]) / (rp - 1.0);
    let gci_abs = GCI_SAFETY_FACTOR * e21.abs() / (rp - 1.0);
    g.status = ConvergenceStatus::Monotone;
    g.extrapolated = Some(ext);
    g.gci_fine = Some(gci_abs);
    g.gci_fine_percent = rel(gci_abs, phi[0]).map(|x| 100.0 * x);
    g.extrapolated_relative_error = rel(ext - phi[0], ext);
    if r21 < 1.3 || r32 < 1.3 {
        g.note = format!(
            "refinement ratio below 1.3 (r21 = {r21:.3}, r32 = {r32:.3}), less than Celik et al. recommend"
        );
    }
    g
}

/// Observed order from ε32/ε21 = r21^p·(r32^p − 1)/(r21^p − 1) (monotone case, s = 1): Celik's
/// fixed-point iteration p = |ln|ε32/ε21| + q(p)| / ln r21, q(p) = ln((r21^p − 1)/(r32^p − 1)),
/// started from q = 0; bisection on the same equation if the iteration does not settle.
fn observed_order(r21: f64, r32: f64, ratio: f64) -> Option<f64> {
    let (l21, lr) = (r21.ln(), ratio.ln());
    let q = |p: f64| ((r21.powf(p) - 1.0) / (r32.powf(p) - 1.0)).ln();
    let residual = |p: f64| p * l21 - q(p) - lr;
    let mut p = (lr / l21).abs();
    for _ in 0..500 {
        let next = (lr + q(p)).abs() / l21;
        if !next.is_finite() {
            break;
        }
        if (next - p).abs() <= 1e-13 * p.max(1.0) {
            if residual(next).abs() <= 1e-9 * lr.abs().max(1.0) && next > 0.0 {
                return Some(next);
            }
            break;
        }
        p = next;
    }
    // Bisection: residual is increasing in p; negative near 0 when a positive root exists.
    let (mut lo, mut hi) = (1e-9, 50.0);
    if !(residual(lo) < 0.0 && residual(hi) > 0.0) {
        return None;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if residual(mid) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

// ---------------------------------------------------------------------------------------------
// Mesh convergence study
// ---------------------------------------------------------------------------------------------

/// One mesh of a convergence study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyLevel {
    /// 1 = coarsest (the model's own mesh settings).
    pub level: usize,
    /// m²
    pub max_area: f64,
    pub nodes: usize,
    pub triangles: usize,
    /// Representative size (A/N)^½, m.
    pub h: f64,
    pub min_angle_deg: f64,
    /// ZZ estimate of this level.
    pub error_estimate: ErrorEstimate,
}

/// One quantity over the levels.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyQuantity {
    /// `probe:NAME`, `heat_flow:BOUNDARY`, `t_min`, `t_max`.
    pub quantity: String,
    pub unit: String,
    /// Per level, coarsest first.
    pub values: Vec<f64>,
    pub gci: Gci,
}

/// How a circle is discretised at every level of the study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudyCircle {
    /// `outline`, `regions[i]`, `holes[i]`.
    pub ring: String,
    pub radius: f64,
    pub segments: usize,
    /// r(1 − cos(π/N)), m: the polygon's largest distance from the circle.
    pub sagitta: f64,
    /// true when the model gives `segments`, false when derived from the finest level's
    /// max_area.
    pub segments_from_model: bool,
}

/// A mesh convergence study of one model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConvergenceStudy {
    pub title: String,
    pub levels: Vec<StudyLevel>,
    pub quantities: Vec<StudyQuantity>,
    pub circles: Vec<StudyCircle>,
    pub notes: Vec<String>,
    pub warnings: Vec<String>,
}

fn fixed_circle_segments(
    ring: &mut model::RingFile,
    boundaries: &std::collections::BTreeMap<String, model::BoundaryFile>,
    max_area: f64,
) -> Option<(f64, usize, bool)> {
    let n = model::ring_circle_segments(ring, boundaries, max_area)?;
    let c = ring.circle.as_mut()?;
    let from_model = c.segments.is_some();
    c.segments = Some(n);
    Some((c.radius, n, from_model))
}

/// Solve a prepared model on `levels` meshes, level 1 with the model's own `max_area` and each
/// further level with `max_area` divided by 4, and run the GCI procedure on every probe
/// temperature, every boundary heat flow and the temperature extremes.
///
/// Circles keep the segment count of the finest level at every level (or the model's own
/// `segments`), so all levels mesh the same polygon. Materials' `max_area` and boundaries'
/// `size` are refined with the global limit (areas / 4, lengths / 2 per level).
pub fn convergence_study(
    prepared: &Prepared,
    levels: usize,
    opts: &MeshOptions,
) -> Result<ConvergenceStudy> {
    if levels < 3 {
        return Err(Error::input(format!(
            "--levels = {levels}: a convergence study needs at least 3 levels"
        )));
    }
    let base = prepared.section.mesh.max_area;
    let finest = base / 4f64.powi(levels as i32 - 1);
    let area = crate::mesh::section_area(&prepared.section);
    let estimate = crate::mesh::estimate_triangles(area, finest);
    if !(estimate.is_finite() && estimate <= opts.max_triangles as f64) {
        return Err(Error::input(format!(
            "--levels = {levels}: the finest level (max_area = {base:e} m² / 4^{}) would give about {estimate:.0} triangles, above the limit of {}; use fewer levels, a larger mesh.max_area or pass --max-triangles",
            levels - 1,
            opts.max_triangles
        )));
    }

    // The model with circle segment counts fixed at the finest level's value.
    let mut model = prepared.model.clone();
    let finest_scale = 4f64.powi(levels as i32 - 1);
    let mut boundaries = model.boundaries.clone();
    for b in boundaries.values_mut() {
        b.size = b.size.map(|h| h / finest_scale.sqrt());
    }
    let mut circles = Vec::new();
    if let Some(o) = model.outline.as_mut()
        && let Some((radius, segments, from_model)) = fixed_circle_segments(o, &boundaries, finest)
    {
        circles.push(("outline".to_string(), radius, segments, from_model));
    }
    for (i, r) in model.regions.iter_mut().enumerate() {
        if let Some((radius, segments, from_model)) = fixed_circle_segments(r, &boundaries, finest)
        {
            circles.push((format!("regions[{i}]"), radius, segments, from_model));
        }
    }
    for (i, r) in model.holes.iter_mut().enumerate() {
        if let Some((radius, segments, from_model)) = fixed_circle_segments(r, &boundaries, finest)
        {
            circles.push((format!("holes[{i}]"), radius, segments, from_model));
        }
    }
    let circles: Vec<StudyCircle> = circles
        .into_iter()
        .map(
            |(ring, radius, segments, segments_from_model)| StudyCircle {
                sagitta: model::Circle {
                    center: [0.0, 0.0],
                    radius,
                    segments,
                }
                .sagitta(),
                ring,
                radius,
                segments,
                segments_from_model,
            },
        )
        .collect();

    let mut study_levels = Vec::with_capacity(levels);
    let mut solved_levels = Vec::with_capacity(levels);
    let mut warnings: Vec<String> = Vec::new();
    for level in 0..levels {
        let max_area = base / 4f64.powi(level as i32);
        let mut m = model.clone();
        m.mesh.max_area = Some(max_area);
        // Local size controls refine with the global limit: areas / 4, lengths / 2 per level.
        let scale = 4f64.powi(level as i32);
        for mat in m.materials.values_mut() {
            mat.max_area = mat.max_area.map(|a| a / scale);
        }
        for b in m.boundaries.values_mut() {
            b.size = b.size.map(|h| h / scale.sqrt());
        }
        let p = run::prepare_model(m)?;
        let sv = run::solve(p, opts)?;
        if let Some(e) = run::failed_checks_error(&sv) {
            return Err(Error::run(format!("level {}: {e}", level + 1)));
        }
        for w in &sv.warnings {
            let w = format!("level {}: {w}", level + 1);
            if !warnings.contains(&w) {
                warnings.push(w);
            }
        }
        let est = zz_estimate(sv.section(), &sv.mesh, &sv.system, &sv.results)?;
        let nt = sv.mesh.triangles.len();
        study_levels.push(StudyLevel {
            level: level + 1,
            max_area,
            nodes: sv.mesh.nodes.len(),
            triangles: nt,
            h: (sv.mesh.stats.area.abs() / nt as f64).sqrt(),
            min_angle_deg: sv.mesh.stats.min_angle_deg,
            error_estimate: est,
        });
        solved_levels.push(sv);
    }

    // Quantities, in a fixed order: probes (model order), heat flows (boundary name order),
    // t_min, t_max.
    let first = &solved_levels[0];
    let mut names: Vec<(String, String, f64)> = Vec::new();
    let t_scale = solved_levels
        .iter()
        .map(|s| s.results.t_min.value.abs().max(s.results.t_max.value.abs()))
        .fold(0.0, f64::max);
    let q_scale = solved_levels
        .iter()
        .map(|s| {
            s.results
                .boundaries
                .iter()
                .map(|b| b.heat_flow.abs())
                .sum::<f64>()
                + s.results.heat_source.abs()
        })
        .fold(0.0, f64::max);
    for p in &first.results.probes {
        names.push((format!("probe:{}", p.name), "degC".into(), t_scale));
    }
    for b in &first.results.boundaries {
        if b.name != "(unnamed)" {
            names.push((format!("heat_flow:{}", b.name), "W/m".into(), q_scale));
        }
    }
    names.push(("t_min".into(), "degC".into(), t_scale));
    names.push(("t_max".into(), "degC".into(), t_scale));
    let h: Vec<f64> = study_levels.iter().map(|l| l.h).collect();
    let mut quantities = Vec::with_capacity(names.len());
    for (quantity, unit, scale) in names {
        let mut values = Vec::with_capacity(levels);
        for (i, sv) in solved_levels.iter().enumerate() {
            let r = &sv.results;
            let v = if let Some(name) = quantity.strip_prefix("probe:") {
                r.probes
                    .iter()
                    .find(|p| p.name == name)
                    .map(|p| p.temperature)
            } else if let Some(name) = quantity.strip_prefix("heat_flow:") {
                Some(
                    r.boundaries
                        .iter()
                        .find(|b| b.name == name)
                        .map_or(0.0, |b| b.heat_flow),
                )
            } else if quantity == "t_min" {
                Some(r.t_min.value)
            } else {
                Some(r.t_max.value)
            };
            values.push(
                v.ok_or_else(|| Error::run(format!("level {}: no value of {quantity}", i + 1)))?,
            );
        }
        let gci = gci(&h, &values, scale)?;
        quantities.push(StudyQuantity {
            quantity,
            unit,
            values,
            gci,
        });
    }

    let mut notes = vec![
        format!(
            "level 1 uses the model's max_area = {} m²; each further level divides it by 4. The levels are independent quality Delaunay meshes (not nested); h = (A/N)^½ from the meshed area A and the actual triangle count N, r = h_coarse/h_fine (Celik et al. 2008).",
            io::format_f64(base)
        ),
        "observed order, extrapolated value and GCI come from the finest three levels (Celik et al. 2008, J. Fluids Eng. 130, 078001; factor of safety 1.25, Roache 1998); with more levels, orders_by_triplet shows whether the order settles.".to_string(),
        format!(
            "status: constant = no change beyond {CONSTANT_RELATIVE_TOLERANCE:e} of the quantity's scale; oscillating (sign change of successive differences) and divergent (differences not shrinking) report no order; unreliable = order undetermined or outside [{}, {}], no GCI reported.",
            PLAUSIBLE_ORDER.0, PLAUSIBLE_ORDER.1
        ),
        "gci_fine is in the unit of the quantity; gci_fine_percent is relative to the finest value. For temperatures in degC the percentage depends on the origin of the scale: use the absolute value.".to_string(),
        "the GCI estimates the discretisation error of the mesh only; it does not cover model assumptions or input data.".to_string(),
    ];
    if !circles.is_empty() {
        notes.push("circles keep one segment count at every level (the finest level's, or the model's own `segments`), so every level meshes the same polygon: the GCI covers the mesh error on that polygon, not the polygon-versus-circle difference, bounded by the sagitta listed per circle. A consequence: on coarse levels the mesh near a circle is already as fine as its fixed segments, so the local refinement ratio there is smaller than the global r = h2/h1 and orders of quantities dominated by a circle (its heat flow) may appear low.".to_string());
    }
    Ok(ConvergenceStudy {
        title: prepared.section.title.clone(),
        levels: study_levels,
        quantities,
        circles,
        notes,
        warnings,
    })
}

fn opt(x: Option<f64>) -> String {
    x.map(io::format_f64).unwrap_or_default()
}

/// `convergence.csv`: two rows of level data (`triangles`, `h`), then one row per quantity:
/// `quantity,unit,level_1_value,…,level_N_value,observed_order,extrapolated_value,gci_fine,
/// gci_fine_percent,status`. Level 1 is the coarsest. `gci_fine` and `extrapolated_value` are in
/// the row's unit; empty cells mean "not reported" (see the status).
pub fn convergence_csv(study: &ConvergenceStudy) -> Result<Vec<u8>> {
    let n = study.levels.len();
    let mut rows: Vec<Vec<String>> = Vec::new();
    let mut header = vec!["quantity".to_string(), "unit".to_string()];
    header.extend((1..=n).map(|i| format!("level_{i}_value")));
    header.extend(
        [
            "observed_order",
            "extrapolated_value",
            "gci_fine",
            "gci_fine_percent",
            "status",
        ]
        .map(String::from),
    );
    let blank = || vec![String::new(); 4];
    let mut row = vec!["triangles".to_string(), "1".to_string()];
    row.extend(study.levels.iter().map(|l| l.triangles.to_string()));
    row.extend(blank());
    row.push("level_data".into());
    rows.push(row);
    let mut row = vec!["h".to_string(), "m".to_string()];
    row.extend(study.levels.iter().map(|l| io::format_f64(l.h)));
    row.extend(blank());
    row.push("level_data".into());
    rows.push(row);
    for q in &study.quantities {
        let mut row = vec![q.quantity.clone(), q.unit.clone()];
        row.extend(q.values.iter().map(|&v| io::format_f64(v)));
        row.push(opt(q.gci.observed_order));
        row.push(opt(q.gci.extrapolated));
        row.push(opt(q.gci.gci_fine));
        row.push(opt(q.gci.gci_fine_percent));
        row.push(q.gci.status.as_str().to_string());
        rows.push(row);
    }
    io::csv_bytes(&header, rows)
}

/// `convergence.json`: the whole study (levels with their ZZ estimates, quantities with the GCI
/// details, circles, notes, warnings). Deterministic: no timings.
pub fn convergence_json(study: &ConvergenceStudy) -> Result<Vec<u8>> {
    let v = serde_json::json!({
        "schema": "xsheat.convergence/1",
        "version": crate::VERSION,
        "caution": io::CAUTION,
        "level_order": "level 1 is the coarsest; Celik's index 1 (finest) is the last level",
        "units": {
            "h": "m", "max_area": "m2", "degC": "°C", "W/m": "W per metre of section depth",
            "energy_norm": "(W·K/m)^0.5",
        },
        "error_estimate_method": "Zienkiewicz–Zhu, area-weighted gradient recovery per material; relative = eta / sqrt(|T_h|_E^2 + eta^2)",
        "study": study,
    });
    let mut s = serde_json::to_string_pretty(&v)
        .map_err(|e| Error::run(format!("cannot encode convergence.json: {e}")))?;
    s.push('\n');
    Ok(s.into_bytes())
}

/// Both files of a study, ready to be committed atomically.
pub fn convergence_files(study: &ConvergenceStudy) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("convergence.csv", convergence_csv(study)?);
    set.add("convergence.json", convergence_json(study)?);
    Ok(set)
}

fn short(x: Option<f64>, digits: usize) -> String {
    match x {
        Some(v) => format!("{v:.digits$}"),
        None => "-".to_string(),
    }
}

/// The table `xsheat converge` prints.
pub fn convergence_report(study: &ConvergenceStudy) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(s, "convergence study: {}", study.title);
    let _ = writeln!(
        s,
        "{:>5} {:>12} {:>10} {:>10} {:>12} {:>12}",
        "level", "max_area_m2", "triangles", "nodes", "h_m", "zz_rel_err"
    );
    for l in &study.levels {
        let _ = writeln!(
            s,
            "{:>5} {:>12.4e} {:>10} {:>10} {:>12.4e} {:>12.3e}",
            l.level, l.max_area, l.triangles, l.nodes, l.h, l.error_estimate.relative
        );
    }
    let _ = writeln!(s);
    let name_w = study
        .quantities
        .iter()
        .map(|q| q.quantity.chars().count())
        .max()
        .unwrap_or(8)
        .max(8);
    let _ = write!(s, "{:<name_w$} {:<5}", "quantity", "unit");
    for l in &study.levels {
        let _ = write!(s, " {:>14}", format!("level {}", l.level));
    }
    let _ = writeln!(
        s,
        " {:>7} {:>14} {:>11} {:>8} status",
        "order", "extrapolated", "gci_fine", "gci_%"
    );
    for q in &study.quantities {
        let _ = write!(s, "{:<name_w$} {:<5}", q.quantity, q.unit);
        for v in &q.values {
            let _ = write!(s, " {v:>14.8}");
        }
        let _ = writeln!(
            s,
            " {:>7} {:>14} {:>11} {:>8} {}",
            short(q.gci.observed_order, 3),
            short(q.gci.extrapolated, 8),
            q.gci.gci_fine.map_or("-".into(), |v| format!("{v:.3e}")),
            short(q.gci.gci_fine_percent, 4),
            q.gci.status.as_str()
        );
    }
    if !study.circles.is_empty() {
        let _ = writeln!(s);
        for c in &study.circles {
            let _ = writeln!(
                s,
                "circle {}: r = {} m, {} segments at every level{}, sagitta {:.3e} m",
                c.ring,
                c.radius,
                c.segments,
                if c.segments_from_model {
                    " (from the model)"
                } else {
                    " (the finest level's)"
                },
                c.sagitta
            );
        }
    }
    let _ = writeln!(s);
    for n in &study.notes {
        let _ = writeln!(s, "note: {n}");
    }
    let _ = writeln!(s, "{}", io::CAUTION);
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gci_constant_ratio_second_order_worked_by_hand() {
        // Levels coarsest first: h = 4, 2, 1 with φ = 1.16, 1.04, 1.01 (Celik indices 3, 2, 1).
        // ε21 = φ2 − φ1 = 0.03, ε32 = φ3 − φ2 = 0.12, r21 = r32 = 2, so q(p) = 0 and
        // p = ln(0.12/0.03)/ln 2 = ln 4/ln 2 = 2.
        // φ_ext = (2²·1.01 − 1.04)/(2² − 1) = (4.04 − 1.04)/3 = 1.
        // GCI_fine = 1.25·|ε21|/(r^p − 1) = 1.25·0.03/3 = 0.0125 (absolute);
        // e_a = 0.03/1.01 = 0.029703, GCI_fine% = 100·1.25·0.029703/3 = 1.23762 %.
        let g = gci(&[4.0, 2.0, 1.0], &[1.16, 1.04, 1.01], 1.0).unwrap();
        assert_eq!(g.status, ConvergenceStatus::Monotone);
        assert!((g.observed_order.unwrap() - 2.0).abs() < 1e-9);
        assert!((g.extrapolated.unwrap() - 1.0).abs() < 1e-12);
        assert!((g.gci_fine.unwrap() - 0.0125).abs() < 1e-12);
        assert!((g.gci_fine_percent.unwrap() - 1.25 * 100.0 * 0.03 / 1.01 / 3.0).abs() < 1e-9);
        assert!((g.approximate_relative_error.unwrap() - 0.03 / 1.01).abs() < 1e-12);
    }

    #[test]
    fn gci_non_constant_ratio_worked_by_hand() {
        // φ = 1 + h² on h = 3, 1.5, 1 (coarsest first): φ3 = 10, φ2 = 3.25, φ1 = 2.
        // r21 = 1.5, r32 = 2; ε21 = 1.25, ε32 = 6.75, ε32/ε21 = 5.4.
        // At p = 2: q = ln((1.5² − 1)/(2² − 1)) = ln(1.25/3) = −0.875469;
        // (ln 5.4 + q)/ln 1.5 = (1.686399 − 0.875469)/0.405465 = 2.000 — the fixed point.
        // φ_ext = (2.25·2 − 3.25)/1.25 = 1; GCI_fine = 1.25·1.25/1.25 = 1.25 (absolute),
        // e_a = 1.25/2 = 0.625, GCI_fine% = 100·1.25·0.625/1.25 = 62.5 %.
        let g = gci(&[3.0, 1.5, 1.0], &[10.0, 3.25, 2.0], 10.0).unwrap();
        assert_eq!(g.status, ConvergenceStatus::Monotone);
        assert!((g.observed_order.unwrap() - 2.0).abs() < 1e-9, "{g:?}");
        assert!((g.extrapolated.unwrap() - 1.0).abs() < 1e-9);
        assert!((g.gci_fine.unwrap() - 1.25).abs() < 1e-9);
        assert!((g.gci_fine_percent.unwrap() - 62.5).abs() < 1e-7);
        assert!((g.r21 - 1.5).abs() < 1e-15 && (g.r32 - 2.0).abs() < 1e-15);
    }

    #[test]
    fn gci_classification() {
        let h = [4.0, 2.0, 1.0];
        let c = gci(&h, &[5.0, 5.0, 5.0 + 1e-13], 5.0).unwrap();
        assert_eq!(c.status, ConvergenceStatus::Constant);
        assert_eq!(c.gci_fine, Some(0.0));
        // Exactly zero everywhere (an insulated boundary's heat flow).
        let z = gci(&h, &[0.0; 3], 0.0).unwrap();
        assert_eq!(z.status, ConvergenceStatus::Constant);
        assert_eq!(z.gci_fine_percent, None);
        let o = gci(&h, &[1.0, 1.1, 0.95], 1.0).unwrap();
        assert_eq!(o.status, ConvergenceStatus::Oscillating);
        assert_eq!(o.observed_order, None);
        let d = gci(&h, &[1.15, 1.1, 1.0], 1.0).unwrap();
        assert_eq!(d.status, ConvergenceStatus::Divergent);
        assert_eq!(d.gci_fine, None);
        // ε32/ε21 = 2^8: p = 8 is outside the plausible range.
        let u = gci(&h, &[1.0 + 256.0 + 1.0, 2.0, 1.0], 1.0).unwrap();
        assert_eq!(u.status, ConvergenceStatus::Unreliable);
        assert!((u.observed_order.unwrap() - 8.0).abs() < 1e-9);
        assert_eq!(u.gci_fine, None);
        // Four levels: the finest three decide, every triplet's order is listed.
        let f = gci(
            &[8.0, 4.0, 2.0, 1.0],
            &[1.0 + 64.0, 1.0 + 16.0, 1.0 + 4.0, 2.0],
            1.0,
        )
        .unwrap();
        assert_eq!(f.orders_by_triplet.len(), 2);
        for p in &f.orders_by_triplet {
            assert!((p.unwrap() - 2.0).abs() < 1e-9);
        }
        assert!(gci(&[2.0, 1.0], &[1.0, 1.0], 1.0).is_err());
        assert!(gci(&h, &[1.0, f64::NAN, 1.0], 1.0).is_err());
    }

    #[test]
    fn observed_order_bisection_agrees_with_fixed_point() {
        // Strongly different ratios: the fixed point and the bisection solve the same equation.
        for &(r21, r32, p) in &[(1.2f64, 3.0f64, 1.5f64), (2.0, 1.1, 2.5), (1.5, 1.5, 1.0)] {
            let ratio: f64 = r21.powf(p) * (r32.powf(p) - 1.0) / (r21.powf(p) - 1.0);
            let got = observed_order(r21, r32, ratio).unwrap();
            assert!((got - p).abs() < 1e-8, "{r21} {r32} {p}: {got}");
        }
    }
}
