//! The files of load cases: `cases.csv` (one row per case), and per case `CASE/summary.json`
//! (`xsheat.case/1`), `CASE/boundaries.csv`, `CASE/probes.csv`, `CASE/line-NAME.csv` and, on
//! request, `CASE/field.vtu`.

use super::csv::{boundaries_csv, csv_bytes, format_f64, line_csv, probes_csv};
use super::json::{OrderedMap, json_bytes, unit_legend};
use super::solve::SolveFileOptions;
use super::vtk::field_vtu_arrays;
use super::{OutputSet, SUMMARY_FILE};
use crate::CAUTION;
use crate::error::{Error, Result};
use crate::model::BoundaryKind;
use crate::run::{CaseSolved, Check, Factorisation, Solved};
use serde::Serialize;

/// Schema of a case's summary.json.
pub const CASE_SCHEMA: &str = "xsheat.case/1";

/// Name of the table of all cases in the result directory.
pub const CASES_FILE: &str = "cases.csv";

/// `case,factorisation,heat_flow_w_per_m:NAME…,temperature_c:NAME…` — one row per load case
/// in file order: the heat flow through each boundary of the base results (W/m, positive into
/// the section) and the temperature at each probe (°C).
pub fn cases_csv(sv: &Solved) -> Result<Vec<u8>> {
    let mut header = vec!["case".to_string(), "factorisation".to_string()];
    header.extend(
        sv.results
            .boundaries
            .iter()
            .map(|b| format!("heat_flow_w_per_m:{}", b.name)),
    );
    header.extend(
        sv.results
            .probes
            .iter()
            .map(|p| format!("temperature_c:{}", p.name)),
    );
    let mut rows = Vec::with_capacity(sv.cases.len());
    for c in &sv.cases {
        let r = &c.results;
        if r.boundaries.len() != sv.results.boundaries.len()
            || r.probes.len() != sv.results.probes.len()
        {
            return Err(Error::run(format!(
                "internal: case {} has other boundaries or probes than the base case",
                c.name
            )));
        }
        let mut row = vec![c.name.clone(), c.factorisation.as_str().to_string()];
        row.extend(r.boundaries.iter().map(|b| format_f64(b.heat_flow)));
        row.extend(r.probes.iter().map(|p| format_f64(p.temperature)));
        rows.push(row);
    }
    csv_bytes(header, rows)
}

#[derive(Serialize)]
struct CaseBoundaryOut<'a> {
    name: &'a str,
    kind: &'a str,
    heat_flow_w_per_m: f64,
    mean_temperature_c: f64,
    min_temperature_c: f64,
    max_temperature_c: f64,
}

#[derive(Serialize)]
struct CaseProbeOut<'a> {
    name: &'a str,
    x_m: f64,
    y_m: f64,
    temperature_c: f64,
}

/// A condition or material value the case sets, with unit-suffixed keys.
#[derive(Serialize)]
#[serde(untagged)]
enum OverrideOut<'a> {
    Boundary {
        boundary: &'a str,
        kind: &'static str,
        #[serde(skip_serializing_if = "Option::is_none")]
        temperature_c: Option<f64>,
        #[serde(skip_serializing_if = "Option::is_none")]
        flux_w_per_m2: Option<f64>,
        #[serde(skip_serializing_if = "Option::is_none")]
        h_w_per_m2_k: Option<f64>,
        #[serde(skip_serializing_if = "Option::is_none")]
        ambient_c: Option<f64>,
    },
    Material {
        material: &'a str,
        #[serde(flatten)]
        conductivity: super::json::ConductivityOut,
        heat_source_w_per_m3: f64,
    },
}

#[derive(Serialize)]
struct CaseSummary<'a> {
    schema: &'static str,
    version: &'static str,
    case: &'a str,
    factorisation: Factorisation,
    caution: &'static str,
    units: OrderedMap<&'static str, &'static str>,
    overrides: Vec<OverrideOut<'a>>,
    min_temperature_c: f64,
    max_temperature_c: f64,
    heat_flow_w_per_m: OrderedMap<&'a str, f64>,
    boundaries: Vec<CaseBoundaryOut<'a>>,
    heat_source_w_per_m: f64,
    energy_imbalance_w_per_m: f64,
    energy_imbalance_relative: f64,
    probes: Vec<CaseProbeOut<'a>>,
    lines: Vec<&'a str>,
    warnings: &'a [String],
    checks: &'a [Check],
}

/// The values case `c` sets (boundaries, then materials), as resolved.
fn overrides<'a>(sv: &'a Solved, c: &'a CaseSolved) -> Vec<OverrideOut<'a>> {
    let s = sv.section();
    let Some(case) = s.cases.iter().find(|k| k.name == c.name) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for b in &case.boundaries {
        let (mut t, mut q, mut h, mut a) = (None, None, None, None);
        match b.kind {
            BoundaryKind::Fixed { temperature } => t = Some(temperature),
            BoundaryKind::Insulated | BoundaryKind::Radiation { .. } => {}
            BoundaryKind::Flux { flux } => q = Some(flux),
            BoundaryKind::Convection { h: hh, ambient } => (h, a) = (Some(hh), Some(ambient)),
        }
        out.push(OverrideOut::Boundary {
            boundary: &s.boundaries[b.id].name,
            kind: b.kind.name(),
            temperature_c: t,
            flux_w_per_m2: q,
            h_w_per_m2_k: h,
            ambient_c: a,
        });
    }
    for m in &case.materials {
        out.push(OverrideOut::Material {
            material: &s.materials[m.id].name,
            conductivity: (&m.conductivity).into(),
            heat_source_w_per_m3: m.heat_source,
        });
    }
    out
}

/// A case's summary.json (`xsheat.case/1`): the values it sets, how it was solved, extremes,
/// heat flows, balance, probes, line names, warnings and self-checks. No timings: the file is
/// byte-identical run to run.
pub fn case_summary_json(sv: &Solved, c: &CaseSolved) -> Result<Vec<u8>> {
    let r = &c.results;
    let summary = CaseSummary {
        schema: CASE_SCHEMA,
        version: crate::VERSION,
        case: &c.name,
        factorisation: c.factorisation,
        caution: CAUTION,
        units: unit_legend(),
        overrides: overrides(sv, c),
        min_temperature_c: r.t_min.value,
        max_temperature_c: r.t_max.value,
        heat_flow_w_per_m: OrderedMap(
            r.boundaries
                .iter()
                .map(|b| (b.name.as_str(), b.heat_flow))
                .collect(),
        ),
        boundaries: r
            .boundaries
            .iter()
            .map(|b| CaseBoundaryOut {
                name: &b.name,
                kind: b.kind.as_str(),
                heat_flow_w_per_m: b.heat_flow,
                mean_temperature_c: b.mean_temperature,
                min_temperature_c: b.min_temperature,
                max_temperature_c: b.max_temperature,
            })
            .collect(),
        heat_source_w_per_m: r.heat_source,
        energy_imbalance_w_per_m: r.energy_imbalance,
        energy_imbalance_relative: r.energy_imbalance_relative,
        probes: r
            .probes
            .iter()
            .map(|p| CaseProbeOut {
                name: &p.name,
                x_m: p.x,
                y_m: p.y,
                temperature_c: p.temperature,
            })
            .collect(),
        lines: r.lines.iter().map(|l| l.name.as_str()).collect(),
        warnings: &c.warnings,
        checks: &c.checks,
    };
    json_bytes(&summary, "case summary JSON")
}

/// Adds `cases.csv` and every case's directory to `set` (nothing without cases); with
/// `case_fields`, each case's own `field.vtu` as well.
pub fn add_case_files(set: &mut OutputSet, sv: &Solved, options: &SolveFileOptions) -> Result<()> {
    if sv.cases.is_empty() {
        return Ok(());
    }
    set.add(CASES_FILE, cases_csv(sv)?);
    for c in &sv.cases {
        let dir = &c.name;
        set.add(format!("{dir}/{SUMMARY_FILE}"), case_summary_json(sv, c)?);
        set.add(format!("{dir}/boundaries.csv"), boundaries_csv(&c.results)?);
        set.add(format!("{dir}/probes.csv"), probes_csv(&c.results)?);
        for l in &c.results.lines {
            set.add(format!("{dir}/line-{}.csv", l.name), line_csv(l)?);
        }
        if options.case_fields {
            set.add(
                format!("{dir}/field.vtu"),
                field_vtu_arrays(&sv.mesh, &c.results, &[], &[], &options.vtk)?,
            );
        }
    }
    Ok(())
}

/// The point arrays `temperature_c:CASE` (°C) of every case, for the one field.vtu.
pub fn case_point_arrays(sv: &Solved) -> Vec<(String, &[f64])> {
    sv.cases
        .iter()
        .map(|c| {
            (
                format!("temperature_c:{}", c.name),
                c.results.temperature.as_slice(),
            )
        })
        .collect()
}
