//! The manifest of a result set: every file with its size and SHA-256, so a reader can verify
//! the set and the next run can tell an earlier xsheat result set from foreign files.
//!
//! `solve` keeps its manifest in the `files` array of summary.json; every other result set
//! gets a `manifest.json` (`"schema": "xsheat.manifest/1"`) with the same array.

use super::json::json_bytes;
use crate::error::Result;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::collections::BTreeSet;
use std::path::Path;

/// Schema of manifest.json.
pub const MANIFEST_SCHEMA: &str = "xsheat.manifest/1";

/// File name of the manifest written for result sets without a summary.json.
pub const MANIFEST_FILE: &str = "manifest.json";

/// File name of the solve summary, which carries its set's manifest in `files`.
pub const SUMMARY_FILE: &str = "summary.json";

/// One file of a result set.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ManifestEntry {
    /// Path relative to the result directory, `/`-separated (e.g. `winter/summary.json`).
    pub path: String,
    /// Size in bytes.
    pub bytes: u64,
    /// SHA-256 of the contents, lower-case hex.
    pub sha256: String,
}

impl ManifestEntry {
    /// The entry of a file named `path` holding `bytes`.
    pub fn of(path: &str, bytes: &[u8]) -> Self {
        Self {
            path: path.to_string(),
            bytes: bytes.len() as u64,
            sha256: sha256_hex(bytes),
        }
    }
}

/// SHA-256 of `bytes` as 64 lower-case hex digits.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

#[derive(Serialize)]
struct ManifestOut<'a> {
    schema: &'static str,
    version: &'static str,
    files: &'a [ManifestEntry],
}

/// `manifest.json`: schema, version and the `files` array.
pub fn manifest_json(files: &[ManifestEntry]) -> Result<Vec<u8>> {
    json_bytes(
        &ManifestOut {
            schema: MANIFEST_SCHEMA,
            version: crate::VERSION,
            files,
        },
        "manifest.json",
    )
}

#[derive(Deserialize)]
struct ManifestIn {
    schema: String,
    files: Vec<ManifestEntry>,
}

/// Reads the manifest `name` in `dir` if it is an xsheat manifest of the expected kind.
fn read_manifest(dir: &Path, name: &str, schema_prefix: &str) -> Option<Vec<ManifestEntry>> {
    let text = std::fs::read(dir.join(name)).ok()?;
    let m: ManifestIn = serde_json::from_slice(&text).ok()?;
    m.schema.starts_with(schema_prefix).then_some(m.files)
}

/// The files an earlier xsheat result set in `dir` consists of (its manifest file included),
/// or `None` when `dir` holds no readable xsheat manifest (manifest.json, or a summary.json
/// with a `files` array).
pub fn listed_files(dir: &Path) -> Option<BTreeSet<String>> {
    let (name, files) = read_manifest(dir, MANIFEST_FILE, MANIFEST_SCHEMA)
        .map(|f| (MANIFEST_FILE, f))
        .or_else(|| {
            read_manifest(dir, SUMMARY_FILE, "xsheat.summary/").map(|f| (SUMMARY_FILE, f))
        })?;
    // A manifest naming anything but a relative path of plain names (`../x`, `/etc/x`) is not
    // one of ours: its files are then foreign, and nothing outside DIR is ever touched.
    if files
        .iter()
        .any(|e| super::fs::check_set_path(dir, &e.path).is_err())
    {
        return None;
    }
    let mut names: BTreeSet<String> = files.into_iter().map(|e| e.path).collect();
    names.insert(name.to_string());
    Some(names)
}
