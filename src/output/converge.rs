//! Files of a convergence study: convergence.csv and convergence.json (typed records).

use super::json::{ErrorEstimateOut, OrderedMap, json_bytes, unit_legend};
use crate::error::Result;
use crate::output::{self, OutputSet};
use crate::study::converge::ConvergenceStudy;
use crate::study::gci::Gci;
use serde::Serialize;

fn opt(x: Option<f64>) -> String {
    x.map(output::format_f64).unwrap_or_default()
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
    row.extend(study.levels.iter().map(|l| output::format_f64(l.h)));
    row.extend(blank());
    row.push("level_data".into());
    rows.push(row);
    for q in &study.quantities {
        let mut row = vec![q.quantity.clone(), q.unit.clone()];
        row.extend(q.values.iter().map(|&v| output::format_f64(v)));
        row.push(opt(q.gci.observed_order));
        row.push(opt(q.gci.extrapolated));
        row.push(opt(q.gci.gci_fine));
        row.push(opt(q.gci.gci_fine_percent));
        row.push(q.gci.status.as_str().to_string());
        rows.push(row);
    }
    output::csv_bytes(&header, rows)
}

/// Schema of convergence.json (2: unit-suffixed keys, typed error estimate).
pub const CONVERGENCE_SCHEMA: &str = "xsheat.convergence/2";

#[derive(Serialize)]
struct LevelOut {
    level: usize,
    max_area_m2: f64,
    nodes: usize,
    triangles: usize,
    h_m: f64,
    min_angle_deg: f64,
    error_estimate: ErrorEstimateOut,
}

#[derive(Serialize)]
struct QuantityOut<'a> {
    quantity: &'a str,
    /// Unit of `values` and of the GCI's extrapolated value and `gci_fine`.
    unit: &'a str,
    values: &'a [f64],
    gci: &'a Gci,
}

#[derive(Serialize)]
struct CircleOut<'a> {
    ring: &'a str,
    radius_m: f64,
    segments: usize,
    sagitta_m: f64,
    segments_from_model: bool,
}

#[derive(Serialize)]
struct StudyOut<'a> {
    title: &'a str,
    levels: Vec<LevelOut>,
    quantities: Vec<QuantityOut<'a>>,
    circles: Vec<CircleOut<'a>>,
    notes: &'a [String],
    warnings: &'a [String],
}

#[derive(Serialize)]
struct ConvergenceOut<'a> {
    schema: &'static str,
    version: &'static str,
    caution: &'static str,
    level_order: &'static str,
    units: OrderedMap<&'static str, &'static str>,
    error_estimate_method: &'static str,
    study: StudyOut<'a>,
}

fn study_out(study: &ConvergenceStudy) -> StudyOut<'_> {
    StudyOut {
        title: &study.title,
        levels: study
            .levels
            .iter()
            .map(|l| LevelOut {
                level: l.level,
                max_area_m2: l.max_area,
                nodes: l.nodes,
                triangles: l.triangles,
                h_m: l.h,
                min_angle_deg: l.min_angle_deg,
                error_estimate: ErrorEstimateOut::from(&l.error_estimate),
            })
            .collect(),
        quantities: study
            .quantities
            .iter()
            .map(|q| QuantityOut {
                quantity: &q.quantity,
                unit: &q.unit,
                values: &q.values,
                gci: &q.gci,
            })
            .collect(),
        circles: study
            .circles
            .iter()
            .map(|c| CircleOut {
                ring: &c.ring,
                radius_m: c.radius,
                segments: c.segments,
                sagitta_m: c.sagitta,
                segments_from_model: c.segments_from_model,
            })
            .collect(),
        notes: &study.notes,
        warnings: &study.warnings,
    }
}

/// `convergence.json`: the whole study (levels with their Zienkiewicz–Zhu estimates, quantities
/// with the GCI details, circles, notes, warnings). Deterministic: no timings.
pub fn convergence_json(study: &ConvergenceStudy) -> Result<Vec<u8>> {
    let out = ConvergenceOut {
        schema: CONVERGENCE_SCHEMA,
        version: crate::VERSION,
        caution: crate::CAUTION,
        level_order: "level 1 is the coarsest; Celik's index 1 (finest) is the last level",
        units: unit_legend(),
        error_estimate_method: "Zienkiewicz–Zhu, area-weighted gradient recovery per material; \
                                relative = eta / sqrt(|T_h|_E^2 + eta^2)",
        study: study_out(study),
    };
    json_bytes(&out, "convergence.json")
}

/// Both files of a study, ready to be committed atomically.
pub fn convergence_files(study: &ConvergenceStudy) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add("convergence.csv", convergence_csv(study)?);
    set.add("convergence.json", convergence_json(study)?);
    Ok(set)
}
