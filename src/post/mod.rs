//! Post stage: everything computed from the solved field. This file owns the result types and
//! [`postprocess`], which strings the steps together:
//!
//! - [`field`]: gradients and heat fluxes per triangle and recovered per node, temperature
//!   extremes;
//! - [`flows`]: heat flow per boundary (reactions for fixed edges, exact edge integrals for flux
//!   and convection edges) and the energy balance;
//! - [`sample`]: probes and line profiles;
//! - [`cuts`]: heat flow across cuts;
//! - [`isotherms`]: isotherm levels and lines (marching triangles), for pictures and files;
//! - [`estimate`]: the Zienkiewicz–Zhu error estimate.
//!
//! [`Locator`] (point location and nearest boundary point) is public for reuse by other
//! features.

pub mod contacts;
pub mod cuts;
pub mod estimate;
pub mod field;
pub mod flows;
pub mod isotherms;
mod locate;
pub mod sample;
#[cfg(test)]
mod tests;

pub use locate::*;

use crate::error::{Error, Result};
use crate::fem::{System, check_mesh};
use crate::mesh::Mesh;
use crate::model::{BoundaryKind, Section};
use crate::solve::Solution;
use serde::Serialize;
use std::fmt;

/// Where an extreme temperature occurs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Extreme {
    /// °C
    pub value: f64,
    /// The node where it occurs (the first such node in node order).
    pub node: usize,
    /// m
    pub at: [f64; 2],
}

/// The kind of boundary condition of a [`BoundaryResult`], without its values. Serialised (and
/// displayed) as the lowercase name used in model files: `fixed`, `insulated`, `flux`,
/// `convection`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ConditionKind {
    /// Fixed temperature.
    Fixed,
    /// Zero normal flux (also every unnamed boundary segment).
    Insulated,
    /// Imposed normal flux.
    Flux,
    /// Film coefficient to an ambient temperature.
    Convection,
    /// Surface radiation to surroundings.
    Radiation,
}

impl ConditionKind {
    /// The lowercase name, as in model files.
    pub fn as_str(self) -> &'static str {
        match self {
            ConditionKind::Fixed => "fixed",
            ConditionKind::Insulated => "insulated",
            ConditionKind::Flux => "flux",
            ConditionKind::Convection => "convection",
            ConditionKind::Radiation => "radiation",
        }
    }
}

impl From<&BoundaryKind> for ConditionKind {
    fn from(kind: &BoundaryKind) -> Self {
        match kind {
            BoundaryKind::Fixed { .. } => ConditionKind::Fixed,
            BoundaryKind::Insulated => ConditionKind::Insulated,
            BoundaryKind::Flux { .. } => ConditionKind::Flux,
            BoundaryKind::Convection { .. } => ConditionKind::Convection,
            BoundaryKind::Radiation { .. } => ConditionKind::Radiation,
        }
    }
}

impl fmt::Display for ConditionKind {
    /// The lowercase name; width and alignment flags are honoured.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.pad(self.as_str())
    }
}

/// Results for one named boundary.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoundaryResult {
    /// Boundary name, or "(unnamed)" for the unnamed (insulated) segments.
    pub name: String,
    /// Kind of boundary condition.
    pub kind: ConditionKind,
    /// m
    pub length: f64,
    /// W per metre of section depth, positive into the section.
    pub heat_flow: f64,
    /// Length-weighted mean surface temperature, °C.
    pub mean_temperature: f64,
    /// Lowest nodal temperature on the boundary, °C.
    pub min_temperature: f64,
    /// Highest nodal temperature on the boundary, °C.
    pub max_temperature: f64,
    /// Mean linearised radiation coefficient `h_r = εσ(T² + T_s²)(T + T_s)` over the
    /// boundary's radiating edges, W/(m²·K); `None` when it does not radiate.
    pub radiation_coefficient: Option<f64>,
}

/// The temperature at one probe point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProbeResult {
    /// Probe name.
    pub name: String,
    /// Requested position, m.
    pub at: [f64; 2],
    /// x of the position where the field was evaluated (differs when snapped to the
    /// boundary), m.
    pub x: f64,
    /// y of the evaluated position, m.
    pub y: f64,
    /// °C
    pub temperature: f64,
    /// True when the probe lay just outside the discretised section and was taken at the
    /// nearest boundary point.
    pub snapped: bool,
}

/// One sample of a line profile.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineSample {
    /// Distance from the line's start, m.
    pub s: f64,
    /// x of the sample point, m.
    pub x: f64,
    /// y of the sample point, m.
    pub y: f64,
    /// °C
    pub temperature: f64,
    /// x component of the recovered (nodal, interpolated) heat flux, W/m².
    pub qx: f64,
    /// y component of the recovered heat flux, W/m².
    pub qy: f64,
}

/// The profile along one line.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineResult {
    /// Line name.
    pub name: String,
    /// Samples inside the section, in order along the line.
    pub samples: Vec<LineSample>,
    /// Samples outside the section: (sample index, position).
    pub skipped: Vec<(usize, [f64; 2])>,
}

/// A point source with the temperature of its node.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointSourceResult {
    /// Point source name.
    pub name: String,
    /// Position, m.
    pub at: [f64; 2],
    /// Heat released, W/m (negative: a sink).
    pub power: f64,
    /// The mesh node at `at`.
    pub node: usize,
    /// Temperature of that node, °C: depends on the mesh (the exact field is logarithmic and
    /// infinite at the line), falling as the triangles around it shrink.
    pub temperature: f64,
}

/// Each point source of `section` with its power in `system` and its node's temperature.
fn point_source_results(
    section: &Section,
    system: &System,
    temperature: &[f64],
) -> Result<Vec<PointSourceResult>> {
    if system.point_source.len() != section.point_sources.len() {
        return Err(Error::run(
            "internal error: the system's point sources disagree with the section's",
        ));
    }
    Ok(section
        .point_sources
        .iter()
        .zip(&system.point_source)
        .map(|(s, p)| PointSourceResult {
            name: s.name.clone(),
            at: s.at,
            power: p.power,
            node: p.node,
            temperature: temperature[p.node],
        })
        .collect())
}

/// Everything derived from a solved field.
#[derive(Debug, Clone, PartialEq)]
pub struct Results {
    /// °C per node.
    pub temperature: Vec<f64>,
    /// K/m per triangle.
    pub cell_gradient: Vec<[f64; 2]>,
    /// W/m² per triangle, q = −k∇T.
    pub cell_flux: Vec<[f64; 2]>,
    /// Recovered per node (area-weighted average of the adjacent triangles), K/m.
    pub nodal_gradient: Vec<[f64; 2]>,
    /// Recovered per node, W/m².
    pub nodal_flux: Vec<[f64; 2]>,
    /// One entry per boundary that occurs on the mesh, in boundary-id order; unnamed segments
    /// (insulated) are gathered under the name "(unnamed)" when present.
    pub boundaries: Vec<BoundaryResult>,
    /// Total heat generated by sources, W/m: volumetric sources (Σ Q·A) plus point sources
    /// (Σ P).
    pub heat_source: f64,
    /// One result per point source of the section, in order.
    pub point_sources: Vec<PointSourceResult>,
    /// Σ boundary heat flows + heat source, W/m (zero to round-off).
    pub energy_imbalance: f64,
    /// |imbalance| / max(Σ|boundary flows| + |source|, floor) ([`flows::balance_scale`]).
    pub energy_imbalance_relative: f64,
    /// Lowest nodal temperature.
    pub t_min: Extreme,
    /// Highest nodal temperature.
    pub t_max: Extreme,
    /// One result per probe of the section, in order.
    pub probes: Vec<ProbeResult>,
    /// One profile per line of the section, in order.
    pub lines: Vec<LineResult>,
    /// Heat flow across each cut of the section, in order.
    pub cuts: Vec<cuts::CutResult>,
    /// Heat flow per item: each hole and each run of ring segments with one boundary name
    /// ([`flows::item_results`]).
    pub items: Vec<flows::ItemResult>,
    /// Area, heat generated and temperatures per material ([`flows::material_results`]).
    pub materials: Vec<flows::MaterialResult>,
    /// Warnings found while post-processing (skipped line samples, snapped probes).
    pub warnings: Vec<String>,
}

impl Results {
    /// Checks that every per-node array has one value per node of `mesh` and every
    /// per-triangle array one value per triangle; the error names the array.
    pub fn check_lengths(&self, mesh: &Mesh) -> Result<()> {
        let (n, t) = (mesh.nodes.len(), mesh.triangles.len());
        check_count("temperature", self.temperature.len(), n, "node")?;
        check_count("nodal gradient", self.nodal_gradient.len(), n, "node")?;
        check_count("nodal heat flux", self.nodal_flux.len(), n, "node")?;
        check_count("triangle gradient", self.cell_gradient.len(), t, "triangle")?;
        check_count("triangle heat flux", self.cell_flux.len(), t, "triangle")?;
        Ok(())
    }
}

/// An internal error unless `got == want`: results hold `got` values of `what`, expected one
/// per `per` (`want`).
pub fn check_count(what: &str, got: usize, want: usize, per: &str) -> Result<()> {
    if got != want {
        return Err(Error::run(format!(
            "internal: results hold {got} values of {what}, expected one per {per} ({want})"
        )));
    }
    Ok(())
}

/// Computes everything derived from a solved field; see [`Results`]. Steps: check the inputs,
/// gradients and fluxes, boundary heat flows and the energy balance, extremes, probes, lines.
pub fn postprocess(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    solution: &Solution,
) -> Result<Results> {
    postprocess_located(section, mesh, system, solution, &Locator::new(mesh))
}

/// [`postprocess`] with a point locator of `mesh` that several solves on one mesh share (load
/// cases), so that its spatial index is built once.
pub fn postprocess_located(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    solution: &Solution,
    locator: &Locator,
) -> Result<Results> {
    check_inputs(section, mesh, system, solution)?;
    if !std::ptr::eq(locator.mesh(), mesh) {
        return Err(Error::run(
            "internal error: a point locator of another mesh",
        ));
    }
    let temperature = &solution.temperature;
    let conductivity = |t: usize| *system.triangle_conductivity(mesh, t);
    let field = field::gradients_and_fluxes_with(mesh, &conductivity, temperature);
    let residual = system.residual(temperature)?;
    let boundaries = flows::boundary_results(section, mesh, &residual, temperature)?;
    let items = flows::item_results(section, mesh, &residual, temperature);
    let materials = flows::material_results(section, mesh, &system.cell_source, temperature);
    let floor = flows::balance_floor(system, temperature);
    let point_power: Vec<f64> = system.point_source.iter().map(|p| p.power).collect();
    let balance = flows::EnergyBalance::of(&boundaries, &system.cell_source, &point_power, floor);
    let point_sources = point_source_results(section, system, temperature)?;
    let (t_min, t_max) = field::extremes(mesh, temperature);
    let mut warnings = Vec::new();
    let sampler = sample::Sampler::new(section, locator, temperature, &field.nodal_flux);
    let probes = sampler.probes(&mut warnings)?;
    let lines = sampler.lines(&mut warnings)?;
    let cuts = cuts::cut_flows(section, mesh, &conductivity, temperature, &mut warnings);
    Ok(Results {
        temperature: temperature.clone(),
        cell_gradient: field.cell_gradient,
        cell_flux: field.cell_flux,
        nodal_gradient: field.nodal_gradient,
        nodal_flux: field.nodal_flux,
        boundaries,
        heat_source: balance.heat_source,
        point_sources,
        energy_imbalance: balance.imbalance,
        energy_imbalance_relative: balance.imbalance_relative,
        t_min,
        t_max,
        probes,
        lines,
        cuts,
        items,
        materials,
        warnings,
    })
}

/// The mesh against the section ([`check_mesh`]), the sizes of system and solution against
/// the mesh, and a finite solved field.
fn check_inputs(
    section: &Section,
    mesh: &Mesh,
    system: &System,
    solution: &Solution,
) -> Result<()> {
    check_mesh(section, mesh)?;
    let n = mesh.nodes.len();
    if system.node_count() != n
        || solution.temperature.len() != n
        || system.cell_source.len() != mesh.triangles.len()
        || system.conductivity.len() != section.materials.len()
    {
        return Err(Error::run(
            "internal error: mesh, system and solution disagree in size",
        ));
    }
    if let Some(i) = solution.temperature.iter().position(|v| !v.is_finite()) {
        return Err(Error::run(format!(
            "the solved temperature at node {i} is not finite"
        )));
    }
    Ok(())
}
