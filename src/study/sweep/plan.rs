//! The sweep plan file: parsing and validation (every check before any solve), the variants it
//! defines and the model text of each.

use super::key::{self, Step, Target};
use crate::error::{Error, Result};
use crate::model::{self, ModelFile};
use serde::Deserialize;
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use toml_edit::DocumentMut;

/// At most this many variants in one plan (a grid's product is checked before it is formed).
pub const MAX_VARIANTS: usize = 100_000;

/// Plan files larger than this are refused before they are read.
const MAX_PLAN_BYTES: u64 = 16 * 1024 * 1024;

/// How the values of the parameters combine into variants.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Full factorial; the last parameter varies fastest.
    Grid,
    /// Variant i takes the i-th value of every parameter (all lists equally long).
    List,
}

impl Mode {
    /// The name used in the plan file (`grid`, `list`).
    pub fn name(self) -> &'static str {
        match self {
            Mode::Grid => "grid",
            Mode::List => "list",
        }
    }
}

/// One swept model key.
#[derive(Debug, Clone)]
pub struct Parameter {
    /// The key path as written in the plan.
    pub key: String,
    /// Its values, in plan order.
    pub values: Vec<f64>,
    steps: Vec<Step>,
    target: Target,
}

/// A validated sweep plan with the model it edits.
#[derive(Debug, Clone)]
pub struct Plan {
    /// The `model` entry as written in the plan.
    pub model: String,
    /// The model file's path (the `model` entry relative to the plan's directory).
    pub model_path: PathBuf,
    /// How values combine.
    pub mode: Mode,
    /// The swept keys, in plan order.
    pub parameters: Vec<Parameter>,
    /// Number of variants.
    pub variants: usize,
    /// SHA-256 (hex) of the plan file's bytes followed by the model file's bytes: shards of one
    /// sweep carry the same value.
    pub plan_sha256: String,
    /// Boundary names of the model, sorted (the heat-flow columns).
    pub boundaries: Vec<String>,
    /// Probe names of the model, in file order (the temperature columns).
    pub probes: Vec<String>,
    doc: DocumentMut,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PlanFile {
    model: String,
    #[serde(default)]
    mode: Option<String>,
    parameters: Vec<ParameterFile>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ParameterFile {
    key: String,
    values: Vec<toml::Value>,
}

/// Reads a file of at most `max` bytes as UTF-8 text, naming `what` in errors.
fn read_text(path: &Path, what: &str, max: u64) -> Result<Vec<u8>> {
    let cannot =
        |e: std::io::Error| Error::input(format!("cannot read {what} {}: {e}", path.display()));
    let meta = std::fs::metadata(path).map_err(cannot)?;
    if !meta.is_file() {
        return Err(Error::input(format!(
            "{what} {}: not a regular file",
            path.display()
        )));
    }
    if meta.len() > max {
        return Err(Error::input(format!(
            "{what} {}: larger than the limit of {max} bytes",
            path.display()
        )));
    }
    std::fs::read(path).map_err(cannot)
}

/// "sweep plan P, line L: message" for a TOML or schema error of the plan file.
fn plan_error(path: &Path, text: &str, e: &toml::de::Error) -> Error {
    let msg = e.message().trim_end().replace('\n', " ");
    match e.span() {
        Some(span) => {
            let line = text[..span.start.min(text.len())].matches('\n').count() + 1;
            Error::input(format!("sweep plan {}, line {line}: {msg}", path.display()))
        }
        None => Error::input(format!("sweep plan {}: {msg}", path.display())),
    }
}

/// A parameter's values as numbers (integers or finite floats), naming the bad one.
fn numbers(who: &str, values: &[toml::Value]) -> Result<Vec<f64>> {
    if values.is_empty() {
        return Err(Error::input(format!("{who}: `values` is empty")));
    }
    values
        .iter()
        .enumerate()
        .map(|(i, v)| match v {
            toml::Value::Integer(n) => Ok(*n as f64),
            toml::Value::Float(x) if x.is_finite() => Ok(*x),
            other => Err(Error::input(format!(
                "{who}: values[{i}] = {other} is not a finite number"
            ))),
        })
        .collect()
}

/// The number of variants of `parameters` combined by `mode`, or why the plan is refused.
fn variant_count(path: &Path, mode: Mode, parameters: &[Parameter]) -> Result<usize> {
    let refuse = |m: String| Error::input(format!("sweep plan {}: {m}", path.display()));
    match mode {
        Mode::Grid => {
            let mut n: usize = 1;
            for p in parameters {
                n = n
                    .checked_mul(p.values.len())
                    .filter(|&n| n <= MAX_VARIANTS)
                    .ok_or_else(|| {
                        refuse(format!("the grid has more than {MAX_VARIANTS} variants"))
                    })?;
            }
            Ok(n)
        }
        Mode::List => {
            let first = &parameters[0];
            if let Some(p) = parameters
                .iter()
                .find(|p| p.values.len() != first.values.len())
            {
                return Err(refuse(format!(
                    "mode = \"list\" needs equally long value lists: parameter `{}` has {}, `{}` has {}",
                    first.key,
                    first.values.len(),
                    p.key,
                    p.values.len()
                )));
            }
            Ok(first.values.len())
        }
    }
}

impl Plan {
    /// Reads and validates a plan file and the model it names (relative to the plan's
    /// directory). Every error is an input error (exit 2) naming the plan entry, before any
    /// variant is solved. The model must parse and validate as it stands.
    pub fn load(path: &Path) -> Result<Plan> {
        let plan_bytes = read_text(path, "sweep plan", MAX_PLAN_BYTES)?;
        let text = String::from_utf8(plan_bytes.clone())
            .map_err(|_| Error::input(format!("sweep plan {}: not UTF-8 text", path.display())))?;
        let file: PlanFile = toml::from_str(&text).map_err(|e| plan_error(path, &text, &e))?;
        let mode = match file.mode.as_deref() {
            None | Some("grid") => Mode::Grid,
            Some("list") => Mode::List,
            Some(other) => {
                return Err(Error::input(format!(
                    "sweep plan {}: mode = {other:?} is not \"grid\" or \"list\"",
                    path.display()
                )));
            }
        };
        let model_path = model_path(path, &file.model);
        let model_bytes = read_text(
            &model_path,
            "sweep plan's model",
            model::MAX_MODEL_FILE_BYTES,
        )?;
        let model_text = String::from_utf8(model_bytes.clone()).map_err(|_| {
            Error::input(format!(
                "sweep plan's model {}: not UTF-8 text",
                model_path.display()
            ))
        })?;
        let model_dir = model_path.parent().unwrap_or(Path::new("")).to_path_buf();
        let base = model::parse(&model_text)
            .and_then(|mut m| model::resolve_imports(&mut m, &model_dir).map(|()| m))
            .and_then(|m| model::validate(&m).map(|s| (m, s)));
        let (_, section) = base.map_err(|e| {
            Error::input(format!(
                "sweep plan's model {}: {}",
                model_path.display(),
                e.message()
            ))
        })?;
        let doc: DocumentMut = model_text.parse().map_err(|e| {
            Error::input(format!("sweep plan's model {}: {e}", model_path.display()))
        })?;
        let parameters = parameters(path, &doc, &file.parameters)?;
        let variants = variant_count(path, mode, &parameters)?;
        let mut h = Sha256::new();
        h.update(&plan_bytes);
        h.update(&model_bytes);
        let plan_sha256 = h.finalize().iter().map(|b| format!("{b:02x}")).collect();
        Ok(Plan {
            model: file.model,
            model_path,
            mode,
            parameters,
            variants,
            plan_sha256,
            boundaries: section.boundaries.iter().map(|b| b.name.clone()).collect(),
            probes: section.probes.iter().map(|p| p.name.clone()).collect(),
            doc,
        })
    }

    /// The value of every parameter in variant `i` (0-based): in grid mode the last parameter
    /// varies fastest, in list mode the i-th value of each.
    pub fn values(&self, i: usize) -> Vec<f64> {
        match self.mode {
            Mode::List => self.parameters.iter().map(|p| p.values[i]).collect(),
            Mode::Grid => {
                let mut rest = i;
                let mut v = vec![0.0; self.parameters.len()];
                for (k, p) in self.parameters.iter().enumerate().rev() {
                    v[k] = p.values[rest % p.values.len()];
                    rest /= p.values.len();
                }
                v
            }
        }
    }

    /// The model text of variant `i`: the model file with each swept number replaced (comments,
    /// layout and line numbers kept).
    pub fn variant_text(&self, i: usize) -> Result<String> {
        let mut doc = self.doc.clone();
        for (p, x) in self.parameters.iter().zip(self.values(i)) {
            key::set(&mut doc, &p.steps, x, p.target)?;
        }
        Ok(doc.to_string())
    }

    /// The model file of variant `i`, parsed by the library's normal path (validation follows in
    /// [`run::prepare_model`](crate::run::prepare_model)).
    pub fn variant_model(&self, i: usize) -> Result<ModelFile> {
        let mut m = model::parse(&self.variant_text(i)?)?;
        let dir = self.model_path.parent().unwrap_or(Path::new(""));
        model::resolve_imports(&mut m, dir)?;
        Ok(m)
    }
}

/// The model path of a plan: `model` relative to the plan's directory (absolute as given).
fn model_path(plan: &Path, model: &str) -> PathBuf {
    match plan.parent() {
        Some(dir) => dir.join(model),
        None => PathBuf::from(model),
    }
}

/// The plan's parameters, each key checked against the model document.
fn parameters(path: &Path, doc: &DocumentMut, given: &[ParameterFile]) -> Result<Vec<Parameter>> {
    if given.is_empty() {
        return Err(Error::input(format!(
            "sweep plan {}: no [[parameters]] (give at least one key and its values)",
            path.display()
        )));
    }
    let mut out: Vec<Parameter> = Vec::new();
    for (n, p) in given.iter().enumerate() {
        let who = format!(
            "sweep plan {}: parameter {} (key {:?})",
            path.display(),
            n + 1,
            p.key
        );
        let values = numbers(&who, &p.values)?;
        let steps = key::parse_key(&p.key)
            .map_err(|m| Error::input(format!("{who}: not a key path: {m}")))?;
        let target = key::target(doc, &steps).map_err(|m| Error::input(format!("{who}: {m}")))?;
        if out.iter().any(|q| q.steps == steps) {
            return Err(Error::input(format!("{who}: the key is swept twice")));
        }
        out.push(Parameter {
            key: p.key.clone(),
            values,
            steps,
            target,
        });
    }
    Ok(out)
}
