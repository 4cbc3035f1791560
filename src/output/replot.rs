//! `xsheat plot MODEL DIR`: the pictures of an existing result set of `solve`, re-staged as a
//! whole set. The field is not read back from field.vtu: the model is solved again (the solve
//! is deterministic) and the new field.vtu's SHA-256 must equal the one in DIR's manifest, so a
//! picture is only ever drawn of the very field DIR holds; every other file of DIR is kept byte
//! for byte (after checking it against the manifest), the pictures, isotherm files and
//! report.html are (re)made and summary.json is rewritten with the new manifest.

use super::fs::OutputSet;
use super::manifest::sha256_hex;
use super::plot::{FIELD_PNG, FIELD_SVG, PlotOptions};
use super::vtk::VtkOptions;
use super::{ISOTHERMS_DXF, ISOTHERMS_GEOJSON, REPORT_FILE, SUMMARY_FILE};
use crate::error::{Error, Result};
use crate::run::Solved;
use std::path::Path;

/// The files of an earlier solve's result set, each checked against its manifest entry.
#[derive(Debug, Clone)]
pub struct SolveSet {
    /// (path, bytes) in manifest order, summary.json excluded.
    files: Vec<(String, Vec<u8>)>,
    /// SHA-256 of its field.vtu.
    field_sha256: String,
}

fn refuse(dir: &Path, why: impl std::fmt::Display) -> Error {
    Error::input(format!("plot {}: {why}", dir.display()))
}

/// Reads the result set of `solve` in `dir`: summary.json with schema `xsheat.summary/…` and a
/// `files` manifest, every listed file present with its size and SHA-256, a field.vtu among
/// them, and no adaptive history (an adaptive mesh cannot be re-made from the model alone).
/// Anything else is refused (exit 2).
pub fn read_solve_set(dir: &Path) -> Result<SolveSet> {
    let text = std::fs::read(dir.join(SUMMARY_FILE)).map_err(|e| {
        refuse(
            dir,
            format!("no readable {SUMMARY_FILE} ({e}): not a result set of solve"),
        )
    })?;
    let v: serde_json::Value = serde_json::from_slice(&text)
        .map_err(|e| refuse(dir, format!("{SUMMARY_FILE} is not valid JSON: {e}")))?;
    let schema = v.get("schema").and_then(|s| s.as_str()).unwrap_or("");
    if !schema.starts_with("xsheat.summary/") {
        return Err(refuse(
            dir,
            format!("{SUMMARY_FILE} is not the summary of a solve (schema {schema:?})"),
        ));
    }
    if v.get("adaptivity")
        .and_then(|a| a.as_array())
        .is_some_and(|a| !a.is_empty())
    {
        return Err(refuse(
            dir,
            "the set was solved adaptively (--target-error); its mesh cannot be re-made from the \
             model alone: run solve --target-error … --plot instead",
        ));
    }
    let entries = v
        .get("files")
        .and_then(|f| f.as_array())
        .ok_or_else(|| refuse(dir, format!("{SUMMARY_FILE} has no files manifest")))?;
    let mut files = Vec::new();
    let mut field_sha256 = None;
    for e in entries {
        let (Some(path), Some(sha)) = (
            e.get("path").and_then(|p| p.as_str()),
            e.get("sha256").and_then(|p| p.as_str()),
        ) else {
            return Err(refuse(dir, "a manifest entry lacks its path or sha256"));
        };
        if path.starts_with('/') || path.split('/').any(|c| c == ".." || c.is_empty()) {
            return Err(refuse(
                dir,
                format!("manifest path {path:?} leaves the set"),
            ));
        }
        let bytes = std::fs::read(dir.join(path))
            .map_err(|e| refuse(dir, format!("{path} is listed but cannot be read: {e}")))?;
        if sha256_hex(&bytes) != sha {
            return Err(refuse(
                dir,
                format!("{path} differs from its manifest entry (changed since it was written)"),
            ));
        }
        if path == "field.vtu" {
            field_sha256 = Some(sha.to_string());
        }
        files.push((path.to_string(), bytes));
    }
    let field_sha256 =
        field_sha256.ok_or_else(|| refuse(dir, "the set has no field.vtu in its manifest"))?;
    Ok(SolveSet {
        files,
        field_sha256,
    })
}

/// The files that `plot` makes anew (everything else of the set is kept).
const REMADE: [&str; 6] = [
    SUMMARY_FILE,
    REPORT_FILE,
    FIELD_SVG,
    FIELD_PNG,
    ISOTHERMS_GEOJSON,
    ISOTHERMS_DXF,
];

/// The re-staged set: `old`'s files with pictures, isotherm files, report.html and summary.json
/// made from `sv`, which must be the field `old` holds (its field.vtu, plain or compressed,
/// has the manifest's SHA-256; else refused, exit 2, naming `dir`).
pub fn replot_files(
    sv: &Solved,
    old: &SolveSet,
    dir: &Path,
    plot: &PlotOptions,
) -> Result<OutputSet> {
    let started = std::time::Instant::now();
    let same = [false, true]
        .into_iter()
        .try_fold(false, |found, compress| {
            if found {
                return Ok::<bool, Error>(true);
            }
            let bytes = super::solve_field_vtu(sv, &VtkOptions { compress })?;
            Ok(sha256_hex(&bytes) == old.field_sha256)
        })?;
    if !same {
        return Err(refuse(
            dir,
            "its field.vtu is not the field of this model as it solves now (the model, its mesh \
             settings or the xsheat version differ from the run that wrote the set); run solve \
             --plot instead",
        ));
    }
    let mut set = OutputSet::new();
    for (name, bytes) in &old.files {
        if !REMADE.contains(&name.as_str()) {
            set.add(name.clone(), bytes.clone());
        }
    }
    let (pictures, svg) = super::picture_files(sv, Some(plot), true)?;
    for (name, bytes) in pictures {
        set.add(name, bytes);
    }
    super::solve::finish_solve_set(set, sv, svg.as_deref(), started)
}
