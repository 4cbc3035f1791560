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

/// A key of the summary: its JSON type and description.
fn key(ty: &str, description: &str) -> Value {
    json!({ "type": ty, "description": description })
}

/// The JSON Schema of summary.json's top level (see the module doc for what it leaves out).
pub fn summary_schema() -> Value {
    let always = [
        (
            "schema",
            json!({ "const": SUMMARY_SCHEMA, "description": "Name and version of this file's layout." }),
        ),
        (
            "version",
            key("string", "xsheat version that wrote the file."),
        ),
        ("title", key("string", "The model's title.")),
        (
            "caution",
            key("string", "What the results are and are not."),
        ),
        (
            "units",
            key(
                "object",
                "The unit of each key suffix (_m, _c, _w_per_m, …).",
            ),
        ),
        ("nodes", key("integer", "Mesh nodes, count.")),
        ("triangles", key("integer", "Mesh triangles, count.")),
        (
            "min_angle_deg",
            key("number", "Smallest triangle angle of the mesh, degrees."),
        ),
        (
            "max_triangle_area_m2",
            key("number", "Largest triangle of the mesh, m²."),
        ),
        (
            "section_area_m2",
            key("number", "Meshed area of the section, m²."),
        ),
        (
            "materials",
            key(
                "array",
                "Per material: conductivity, W/(m·K), heat source, W/m³, area, m², heat generated, W/m, mean, min and max temperature, °C.",
            ),
        ),
        (
            "temperature",
            key(
                "object",
                "Lowest and highest temperature, °C, their places, m, and nodes.",
            ),
        ),
        (
            "heat_flow_w_per_m",
            key(
                "object",
                "Heat flow into the section per boundary name, W/m (per metre of depth).",
            ),
        ),
        (
            "boundaries",
            key(
                "array",
                "Per boundary: condition, length, m, heat flow, W/m, mean, min and max temperature, °C.",
            ),
        ),
        (
            "heat_source_w_per_m",
            key("number", "Heat generated inside the section, W/m."),
        ),
        (
            "energy_imbalance_w_per_m",
            key(
                "number",
                "Sum of boundary heat flows and heat generated, W/m.",
            ),
        ),
        (
            "energy_imbalance_relative",
            key(
                "number",
                "The imbalance relative to the largest flow, dimensionless.",
            ),
        ),
        (
            "probes",
            key("array", "Per probe: position, m, and temperature, °C."),
        ),
        (
            "lines",
            key(
                "array",
                "Per line: samples written and samples outside the section.",
            ),
        ),
        (
            "items",
            key(
                "array",
                "Heat flow, W/m, and temperatures, °C, per hole and run of segments.",
            ),
        ),
        (
            "error_estimate",
            key(
                "object",
                "Zienkiewicz–Zhu estimate of the discretisation error (energy norm, (W·K/m)^½, and relative).",
            ),
        ),
        (
            "warnings",
            json!({ "type": "array", "items": { "type": "string" }, "description": "Warnings of the run." }),
        ),
        (
            "checks",
            key(
                "array",
                "Numerical self-checks: name, value, tolerance, passed, severity, detail.",
            ),
        ),
        (
            "model",
            key(
                "object",
                "The model as resolved, with its defaults, in the model file's own keys (lengths in m).",
            ),
        ),
        (
            "run",
            key(
                "object",
                "Timings, s, and peak memory, MiB: the only part that differs between two runs of one model.",
            ),
        ),
    ];
    let sometimes = [
        (
            "cuts",
            key(
                "array",
                "With [[cuts]]: heat flow across each cut, W/m, and its lengths, m.",
            ),
        ),
        (
            "environments",
            key(
                "array",
                "With [environments]: name, ambient, °C, and boundaries of each environment.",
            ),
        ),
        (
            "coupling_w_per_m_k",
            key(
                "array",
                "With [environments]: thermal coupling coefficient L2D of each pair, W/(m·K).",
            ),
        ),
        (
            "psi",
            key(
                "array",
                "With [[psi]]: linear thermal transmittance ψ, W/(m·K).",
            ),
        ),
        (
            "temperature_factors",
            key(
                "array",
                "With [environments]: temperature factor f_Rsi per boundary, dimensionless.",
            ),
        ),
        (
            "f_rsi_min",
            key(
                "number",
                "With f_rsi_min: the lowest acceptable temperature factor, dimensionless.",
            ),
        ),
        (
            "adaptivity",
            key("array", "With --target-error: the refinement cycles."),
        ),
        (
            "nonlinear",
            key(
                "object",
                "For a nonlinear model: method, tolerance and iteration history.",
            ),
        ),
        (
            "files",
            key(
                "array",
                "The manifest: every other file of the result set with its SHA-256.",
            ),
        ),
    ];
    let properties: serde_json::Map<String, Value> = always
        .iter()
        .chain(&sometimes)
        .map(|(k, v)| ((*k).to_string(), v.clone()))
        .collect();
    let required: Vec<&str> = always.iter().map(|(k, _)| *k).collect();
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
