//! Files of a convergence study: convergence.csv and convergence.json.

use crate::error::{Error, Result};
use crate::output::{self, OutputSet};
use crate::study::converge::ConvergenceStudy;

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

/// `convergence.json`: the whole study (levels with their ZZ estimates, quantities with the GCI
/// details, circles, notes, warnings). Deterministic: no timings.
pub fn convergence_json(study: &ConvergenceStudy) -> Result<Vec<u8>> {
    let v = serde_json::json!({
        "schema": "xsheat.convergence/1",
        "version": crate::VERSION,
        "caution": crate::CAUTION,
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
