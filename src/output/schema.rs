//! `xsheat schema`: the JSON Schemas (draft 2020-12) printed for editors. The model file's is
//! generated from its serde mirrors (`model::model_schema`, complete). The one of summary.json
//! is written here by hand and covers its top level only: every key with its type, unit and
//! meaning, which keys are always there, and no other key; the records inside the lists and
//! objects are not described further (README, "Editor support").

use super::summary::SUMMARY_SCHEMA;
use crate::error::{Error, Result};
use crate::model::model_schema;
use serde_json::{Value, json};

/// The `$id` of the summary schema (a name, not a place to fetch it from).
pub const SUMMARY_SCHEMA_ID: &str = "urn:xsheat:schema:summary";

/// The names `xsheat schema` takes.
pub const SCHEMA_KINDS: [&str; 2] = ["model", "summary"];

/// The schema named `kind` ("model" or "summary") as pretty-printed JSON with a final newline;
/// another name is an input error.
pub fn schema_text(kind: &str) -> Result<String> {
    let value = match kind {
        "model" => model_schema(),
        "summary" => summary_schema(),
        _ => {
            return Err(Error::input(format!(
                "schema {}: not one of \"model\", \"summary\"",
                crate::error::printable(kind)
            )));
        }
    };
    let mut text = serde_json::to_string_pretty(&value)
        .map_err(|e| Error::run(format!("cannot encode the schema: {e}")))?;
    text.push('\n');
    Ok(text)
}

/// The top-level keys of summary.json: name, JSON type, meaning and unit, and whether the key
/// is always present (the others appear with the feature named).
const SUMMARY_KEYS: [(&str, &str, &str, bool); 35] = [
    (
        "version",
        "string",
        "xsheat version that wrote the file.",
        true,
    ),
    ("title", "string", "The model's title.", true),
    (
        "caution",
        "string",
        "What the results are and are not.",
        true,
    ),
    (
        "units",
        "object",
        "The unit of each key suffix (_m, _c, _w_per_m, …).",
        true,
    ),
    (
        "mesh_file",
        "object",
        "solve --mesh only: the mesh file (`mesh`) and boundary file (`boundary`) the results live on, as given.",
        false,
    ),
    ("nodes", "integer", "Mesh nodes, count.", true),
    ("triangles", "integer", "Mesh triangles, count.", true),
    (
        "min_angle_deg",
        "number",
        "Smallest triangle angle of the mesh, degrees.",
        true,
    ),
    (
        "max_triangle_area_m2",
        "number",
        "Largest triangle of the mesh, m².",
        true,
    ),
    (
        "section_area_m2",
        "number",
        "Meshed area of the section, m².",
        true,
    ),
    (
        "materials",
        "array",
        "Per material: conductivity, W/(m·K), heat source, W/m³, area, m², heat generated, W/m, mean, min and max temperature, °C.",
        true,
    ),
    (
        "temperature",
        "object",
        "Lowest and highest temperature, °C, their places, m, and nodes.",
        true,
    ),
    (
        "heat_flow_w_per_m",
        "object",
        "Heat flow into the section per boundary name, W/m (per metre of depth).",
        true,
    ),
    (
        "boundaries",
        "array",
        "Per boundary: condition, length, m, heat flow, W/m, mean, min and max temperature, °C.",
        true,
    ),
    (
        "heat_source_w_per_m",
        "number",
        "Heat generated inside the section, W/m.",
        true,
    ),
    (
        "energy_imbalance_w_per_m",
        "number",
        "Sum of boundary heat flows and heat generated, W/m.",
        true,
    ),
    (
        "energy_imbalance_relative",
        "number",
        "The imbalance relative to the largest flow, dimensionless.",
        true,
    ),
    (
        "probes",
        "array",
        "Per probe: position, m, and temperature, °C.",
        true,
    ),
    (
        "lines",
        "array",
        "Per line: samples written and samples outside the section.",
        true,
    ),
    (
        "items",
        "array",
        "Heat flow, W/m, and temperatures, °C, per hole and run of segments.",
        true,
    ),
    (
        "error_estimate",
        "object",
        "Zienkiewicz–Zhu estimate of the discretisation error (energy norm, (W·K/m)^½, and relative).",
        true,
    ),
    ("warnings", "array", "Warnings of the run (strings).", true),
    (
        "checks",
        "array",
        "Numerical self-checks: name, value, tolerance, passed, severity, detail.",
        true,
    ),
    (
        "model",
        "object",
        "The model as resolved, with its defaults, in the model file's own keys (lengths in m).",
        true,
    ),
    (
        "run",
        "object",
        "Timings, s, and peak memory, MiB: the only part that differs between two runs of one model.",
        true,
    ),
    (
        "cuts",
        "array",
        "With [[cuts]]: heat flow across each cut, W/m, and its lengths, m.",
        false,
    ),
    (
        "environments",
        "array",
        "With [environments]: name, ambient, °C, and boundaries of each environment.",
        false,
    ),
    (
        "coupling_w_per_m_k",
        "array",
        "With [environments]: thermal coupling coefficient L2D of each pair, W/(m·K).",
        false,
    ),
    (
        "psi",
        "array",
        "With [[psi]]: linear thermal transmittance ψ, W/(m·K).",
        false,
    ),
    (
        "temperature_factors",
        "array",
        "With [environments]: temperature factor f_Rsi per boundary, dimensionless.",
        false,
    ),
    (
        "f_rsi_min",
        "number",
        "With f_rsi_min: the lowest acceptable temperature factor, dimensionless.",
        false,
    ),
    (
        "adaptivity",
        "array",
        "With --target-error: the refinement cycles.",
        false,
    ),
    (
        "solver",
        "object",
        "For a linear model: the solver of the reduced system as requested (auto, cholesky, amg) and used (cholesky, amg), its unknowns and conjugate gradient iterations.",
        false,
    ),
    (
        "nonlinear",
        "object",
        "For a nonlinear model: method, tolerance and iteration history.",
        false,
    ),
    (
        "files",
        "array",
        "The manifest: every other file of the result set with its SHA-256.",
        false,
    ),
];

/// The JSON Schema of summary.json's top level (see the module doc for what it leaves out).
pub fn summary_schema() -> Value {
    let mut properties = serde_json::Map::new();
    properties.insert(
        "schema".into(),
        json!({ "const": SUMMARY_SCHEMA, "description": "Name and version of this file's layout." }),
    );
    let mut required = vec!["schema"];
    for (key, ty, description, always) in SUMMARY_KEYS {
        properties.insert(
            key.into(),
            json!({ "type": ty, "description": description }),
        );
        if always {
            required.push(key);
        }
    }
    json!({
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": SUMMARY_SCHEMA_ID,
        "title": "xsheat summary.json (top level)",
        "description": "The run summary of xsheat solve. Top level only: the records inside the lists and objects are not described here.",
        "type": "object",
        "properties": properties,
        "required": required,
        "additionalProperties": false
    })
}
