//! The result set of `xsheat sweep`: `sweep.csv` (one row per variant), `sweep.json` (the plan,
//! its hash and which variants the set holds) and `variants/NNNN/` (each solved variant's
//! `solve` files), and the merge of shard sets (`sweep --collect`) into the set one run of the
//! whole plan writes.

use super::csv::csv_bytes;
use super::fs::OutputSet;
use super::json::json_bytes;
use super::manifest::{MANIFEST_FILE, ManifestEntry, sha256_hex};
use crate::error::{Error, Result};
use crate::run::Solved;
use crate::study::sweep::{Plan, Status, Variant};
use crate::text::format_f64;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Schema of sweep.json.
pub const SWEEP_SCHEMA: &str = "xsheat.sweep/1";
/// One row per variant.
pub const SWEEP_CSV: &str = "sweep.csv";
/// The sweep's summary.
pub const SWEEP_JSON: &str = "sweep.json";

/// Files of one variant: (path inside its directory, bytes).
pub type VariantFiles = Vec<(String, Vec<u8>)>;

/// One swept key in sweep.json.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepParameter {
    /// The key path.
    pub key: String,
    /// Its values.
    pub values: Vec<f64>,
}

/// How this set was made; the one object of sweep.json allowed to differ between runs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepRun {
    /// `I/N` of a shard, `1/1` for the whole plan, `collected` for a merge.
    pub shard: String,
    /// Threads of the rayon pool (0 for a merge).
    pub threads: usize,
    /// Wall-clock time, s.
    pub wall_s: f64,
}

/// sweep.json (`xsheat.sweep/1`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepSummary {
    /// `xsheat.sweep/1`.
    pub schema: String,
    /// xsheat version.
    pub version: String,
    /// SHA-256 of the plan file followed by the model file.
    pub plan_sha256: String,
    /// The plan's `model` entry.
    pub model: String,
    /// `grid` (last parameter varies fastest) or `list`.
    pub mode: String,
    /// The swept keys.
    pub parameters: Vec<SweepParameter>,
    /// Number of variants of the plan.
    pub variants: usize,
    /// Boundary names (heat-flow columns).
    pub boundaries: Vec<String>,
    /// Probe names (temperature columns).
    pub probes: Vec<String>,
    /// Variants whose rows and files this set holds, ascending.
    pub in_this_set: Vec<usize>,
    /// Variants of this set that failed, ascending.
    pub failed: Vec<usize>,
    /// How the set was made (varies between runs).
    pub run: SweepRun,
}

impl SweepSummary {
    /// The summary of a run of `shard` of `plan` whose variants ended as `variants`.
    pub fn of<T>(plan: &Plan, variants: &[Variant<T>], run: SweepRun) -> Self {
        Self {
            schema: SWEEP_SCHEMA.into(),
            version: crate::VERSION.into(),
            plan_sha256: plan.plan_sha256.clone(),
            model: plan.model.clone(),
            mode: plan.mode.name().into(),
            parameters: plan
                .parameters
                .iter()
                .map(|p| SweepParameter {
                    key: p.key.clone(),
                    values: p.values.clone(),
                })
                .collect(),
            variants: plan.variants,
            boundaries: plan.boundaries.clone(),
            probes: plan.probes.clone(),
            in_this_set: variants.iter().map(|v| v.index).collect(),
            failed: variants
                .iter()
                .filter(|v| v.status != Status::Ok)
                .map(|v| v.index)
                .collect(),
            run,
        }
    }

    /// The header of sweep.csv: `variant`, the keys, `status`, `heat_flow_w_per_m:NAME` per
    /// boundary, `temperature_c:NAME` per probe, `zz_estimate`.
    pub fn header(&self) -> Vec<String> {
        let mut h = vec!["variant".to_string()];
        h.extend(self.parameters.iter().map(|p| p.key.clone()));
        h.push("status".into());
        h.extend(
            self.boundaries
                .iter()
                .map(|b| format!("heat_flow_w_per_m:{b}")),
        );
        h.extend(self.probes.iter().map(|p| format!("temperature_c:{p}")));
        h.push("zz_estimate".into());
        h
    }
}

/// The files of one solved variant (those `solve` writes).
pub fn variant_files(sv: &Solved) -> Result<VariantFiles> {
    super::solve_files(sv)?.complete(Path::new("variant"))
}

/// Directory of variant `i` inside the set: `variants/0007`.
pub fn variant_dir(i: usize) -> String {
    format!("variants/{i:04}")
}

/// The status cell: `ok`, or `exit CODE: message`.
pub fn status_cell(s: &Status) -> String {
    match s {
        Status::Ok => "ok".into(),
        Status::Failed { exit_code, message } => format!("exit {exit_code}: {message}"),
    }
}

/// The sweep.csv row of a variant (empty cells for numbers a failed variant lacks).
pub fn variant_row<T>(v: &Variant<T>) -> Vec<String> {
    let cell = |x: &Option<f64>| x.map(format_f64).unwrap_or_default();
    let mut r = vec![v.index.to_string()];
    r.extend(v.values.iter().map(|&x| format_f64(x)));
    r.push(status_cell(&v.status));
    r.extend(v.heat_flows.iter().map(cell));
    r.extend(v.temperatures.iter().map(cell));
    r.push(cell(&v.zz_estimate));
    r
}

/// The result set of a sweep run: consumes the variants so each one's files move into the set.
pub fn sweep_files(
    summary: &SweepSummary,
    variants: Vec<Variant<VariantFiles>>,
) -> Result<OutputSet> {
    let rows: Vec<Vec<String>> = variants.iter().map(variant_row).collect();
    let files = variants
        .into_iter()
        .map(|v| (v.index, v.files.unwrap_or_default()))
        .collect();
    assemble(summary, rows, files)
}

/// sweep.csv, sweep.json and every variant's files, in variant order.
fn assemble(
    summary: &SweepSummary,
    rows: Vec<Vec<String>>,
    files: Vec<(usize, VariantFiles)>,
) -> Result<OutputSet> {
    let mut set = OutputSet::new();
    set.add(SWEEP_CSV, csv_bytes(summary.header(), rows)?);
    set.add(SWEEP_JSON, json_bytes(summary, SWEEP_JSON)?);
    for (i, fs) in files {
        for (name, bytes) in fs {
            set.add(format!("{}/{name}", variant_dir(i)), bytes);
        }
    }
    Ok(set)
}

/// One shard's set as read back.
struct ShardSet {
    dir: PathBuf,
    summary: SweepSummary,
    rows: Vec<(usize, Vec<String>)>,
    files: BTreeMap<usize, VariantFiles>,
}

#[derive(Deserialize)]
struct ManifestIn {
    files: Vec<ManifestEntry>,
}

fn bad(dir: &Path, why: impl std::fmt::Display) -> Error {
    Error::input(format!("--collect {}: {why}", dir.display()))
}

/// Reads a file of a shard set, checked against its manifest entry.
fn read_checked(dir: &Path, e: &ManifestEntry) -> Result<Vec<u8>> {
    let bytes = std::fs::read(dir.join(&e.path))
        .map_err(|err| bad(dir, format!("cannot read {}: {err}", e.path)))?;
    if sha256_hex(&bytes) != e.sha256 {
        return Err(bad(
            dir,
            format!(
                "{} does not match its manifest (changed after it was written)",
                e.path
            ),
        ));
    }
    Ok(bytes)
}

/// Reads sweep.csv's rows, checking the header against the summary's.
fn read_rows(dir: &Path, bytes: &[u8], s: &SweepSummary) -> Result<Vec<(usize, Vec<String>)>> {
    let mut r = csv::ReaderBuilder::new().from_reader(bytes);
    let header: Vec<String> = r
        .headers()
        .map_err(|e| bad(dir, format!("{SWEEP_CSV}: {e}")))?
        .iter()
        .map(String::from)
        .collect();
    if header != s.header() {
        return Err(bad(
            dir,
            format!("{SWEEP_CSV}: its header does not match {SWEEP_JSON}"),
        ));
    }
    let mut rows = Vec::new();
    for rec in r.records() {
        let rec = rec.map_err(|e| bad(dir, format!("{SWEEP_CSV}: {e}")))?;
        let row: Vec<String> = rec.iter().map(String::from).collect();
        let i = row[0]
            .parse::<usize>()
            .ok()
            .filter(|i| s.in_this_set.binary_search(i).is_ok())
            .ok_or_else(|| {
                bad(
                    dir,
                    format!("{SWEEP_CSV}: variant {:?} is not one of this set", row[0]),
                )
            })?;
        rows.push((i, row));
    }
    if rows.len() != s.in_this_set.len() {
        return Err(bad(
            dir,
            format!(
                "{SWEEP_CSV} has {} rows for {} variants",
                rows.len(),
                s.in_this_set.len()
            ),
        ));
    }
    Ok(rows)
}

/// Reads one shard's result set (every file checked against its manifest).
fn read_shard(dir: &Path) -> Result<ShardSet> {
    let manifest = std::fs::read(dir.join(MANIFEST_FILE))
        .ok()
        .and_then(|b| serde_json::from_slice::<ManifestIn>(&b).ok())
        .ok_or_else(|| bad(dir, "not a sweep result set (no readable manifest.json)"))?;
    let entry = |name: &str| manifest.files.iter().find(|e| e.path == name);
    let (Some(sj), Some(sc)) = (entry(SWEEP_JSON), entry(SWEEP_CSV)) else {
        return Err(bad(
            dir,
            format!("not a sweep result set (no {SWEEP_JSON} and {SWEEP_CSV})"),
        ));
    };
    let summary: SweepSummary = serde_json::from_slice(&read_checked(dir, sj)?)
        .ok()
        .filter(|s: &SweepSummary| s.schema == SWEEP_SCHEMA)
        .ok_or_else(|| {
            bad(
                dir,
                format!("{SWEEP_JSON} is not an {SWEEP_SCHEMA} summary"),
            )
        })?;
    let rows = read_rows(dir, &read_checked(dir, sc)?, &summary)?;
    let mut files: BTreeMap<usize, VariantFiles> = BTreeMap::new();
    for e in &manifest.files {
        let Some(rest) = e.path.strip_prefix("variants/") else {
            continue;
        };
        let (num, name) = rest
            .split_once('/')
            .ok_or_else(|| bad(dir, format!("unexpected file {}", e.path)))?;
        let i = num
            .parse::<usize>()
            .ok()
            .filter(|i| {
                variant_dir(*i) == format!("variants/{num}")
                    && summary.in_this_set.binary_search(i).is_ok()
            })
            .ok_or_else(|| bad(dir, format!("{} belongs to no variant of this set", e.path)))?;
        files
            .entry(i)
            .or_default()
            .push((name.to_string(), read_checked(dir, e)?));
    }
    Ok(ShardSet {
        dir: dir.to_path_buf(),
        summary,
        rows,
        files,
    })
}

/// The part of a summary every shard of one plan shares.
fn plan_part(s: &SweepSummary) -> SweepSummary {
    SweepSummary {
        in_this_set: Vec::new(),
        failed: Vec::new(),
        run: SweepRun {
            shard: String::new(),
            threads: 0,
            wall_s: 0.0,
        },
        ..s.clone()
    }
}

/// Merges shard sets of one plan (same plan hash; together every variant exactly once) into the
/// set one run of the whole plan writes; `run` describes the merge.
pub fn collect_sweep(dirs: &[PathBuf], run: SweepRun) -> Result<(SweepSummary, OutputSet)> {
    let shards: Vec<ShardSet> = dirs.iter().map(|d| read_shard(d)).collect::<Result<_>>()?;
    let first = shards
        .first()
        .ok_or_else(|| Error::input("--collect: no directory given"))?;
    let common = plan_part(&first.summary);
    let mut owner: BTreeMap<usize, &Path> = BTreeMap::new();
    for s in &shards {
        if plan_part(&s.summary) != common {
            return Err(bad(
                &s.dir,
                format!(
                    "comes from another plan than {} (plan_sha256 {} against {})",
                    first.dir.display(),
                    s.summary.plan_sha256,
                    first.summary.plan_sha256
                ),
            ));
        }
        for &i in &s.summary.in_this_set {
            if let Some(other) = owner.insert(i, &s.dir) {
                return Err(bad(
                    &s.dir,
                    format!("variant {i} is also in {}", other.display()),
                ));
            }
        }
    }
    let missing: Vec<String> = (0..common.variants)
        .filter(|i| !owner.contains_key(i))
        .map(|i| i.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Error::input(format!(
            "--collect: variants {} of {} are in none of the directories given",
            missing.join(", "),
            common.variants
        )));
    }
    let mut rows: Vec<(usize, Vec<String>)> = Vec::new();
    let mut files: Vec<(usize, VariantFiles)> = Vec::new();
    let mut failed = Vec::new();
    for s in shards {
        rows.extend(s.rows);
        files.extend(s.files);
        failed.extend(s.summary.failed);
    }
    rows.sort_by_key(|r| r.0);
    files.sort_by_key(|f| f.0);
    failed.sort_unstable();
    let summary = SweepSummary {
        in_this_set: (0..common.variants).collect(),
        failed,
        run,
        ..common
    };
    let set = assemble(&summary, rows.into_iter().map(|r| r.1).collect(), files)?;
    Ok((summary, set))
}
