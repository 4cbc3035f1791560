//! Parameter sweeps: a plan file names a model and some of its numeric keys with lists of
//! values; every combination (grid mode, the last parameter varying fastest) or every i-th
//! tuple (list mode) is a variant. Each variant's model text is the model file with those
//! numbers replaced, parsed and validated through the library's normal path, then solved.
//!
//! Variants run on the global rayon pool (so `--threads` and `RAYON_NUM_THREADS` apply); each
//! finished variant is turned at once into its row values and its files by the caller's
//! function, so no [`Solved`] outlives its variant. Results come back in variant order, the same
//! whatever the number of threads. A [`Shard`] runs the variants with index ≡ I−1 (mod N).

mod key;
mod plan;
#[cfg(test)]
mod tests;

pub use key::{Step, Target, parse_key};
pub use plan::{MAX_VARIANTS, Mode, Parameter, Plan};

use crate::error::{Error, Result};
use crate::mesh::MeshOptions;
use crate::run::{self, Solved};
use rayon::prelude::*;

/// Threads of the global rayon pool the variants run on.
pub fn threads() -> usize {
    rayon::current_num_threads()
}

/// `--shard I/N`: this run's share of the variants (`index` is I, 1-based).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// I, 1 ≤ I ≤ N.
    pub index: usize,
    /// N ≥ 1.
    pub count: usize,
}

impl Shard {
    /// The whole sweep (1/1).
    pub const ALL: Shard = Shard { index: 1, count: 1 };

    /// Parses and checks `I/N` (1 ≤ I ≤ N).
    pub fn parse(text: &str) -> Result<Shard> {
        let bad = |why: &str| Error::input(format!("--shard {text:?}: {why}"));
        let (i, n) = text
            .split_once('/')
            .ok_or_else(|| bad("expected I/N, e.g. 2/8"))?;
        let num = |s: &str| {
            s.trim()
                .parse::<usize>()
                .map_err(|_| bad("I and N must be whole numbers"))
        };
        let (index, count) = (num(i)?, num(n)?);
        if count == 0 || index == 0 || index > count {
            return Err(bad("needs 1 ≤ I ≤ N"));
        }
        Ok(Shard { index, count })
    }

    /// True when variant `i` (0-based) belongs to this shard.
    pub fn has(&self, i: usize) -> bool {
        i % self.count == self.index - 1
    }

    /// The variants of this shard among `total`, ascending.
    pub fn variants(&self, total: usize) -> Vec<usize> {
        (self.index - 1..total).step_by(self.count).collect()
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

/// How a variant ended.
#[derive(Debug, Clone, PartialEq)]
pub enum Status {
    /// Solved and its files made.
    Ok,
    /// Refused or failed: the exit code `solve` would give (2 input, 1 run) and the message.
    Failed {
        /// 2 for an invalid model, 1 for a failed run.
        exit_code: i32,
        /// The error message, on one line.
        message: String,
    },
}

/// The outcome of one variant: its values, status, the numbers of its sweep.csv row, and what
/// the caller made of the solved model (its files).
#[derive(Debug, Clone)]
pub struct Variant<T> {
    /// 0-based variant index.
    pub index: usize,
    /// One value per parameter.
    pub values: Vec<f64>,
    /// How it ended.
    pub status: Status,
    /// Heat flow per boundary of [`Plan::boundaries`], W/m (None when failed or absent).
    pub heat_flows: Vec<Option<f64>>,
    /// Temperature per probe of [`Plan::probes`], °C (None when failed).
    pub temperatures: Vec<Option<f64>>,
    /// Relative Zienkiewicz–Zhu error estimate (None when failed).
    pub zz_estimate: Option<f64>,
    /// The caller's result for a solved variant (its files).
    pub files: Option<T>,
    /// Warnings of the variant.
    pub warnings: Vec<String>,
}

/// Solves one variant's model (validation included) and refuses failed self-checks.
fn solve_variant(plan: &Plan, i: usize, opts: &MeshOptions) -> Result<Solved> {
    let model = plan.variant_model(i)?;
    let prepared = run::prepare_model(model)?;
    let solved = run::solve(prepared, opts)?;
    match run::failed_checks_error(&solved) {
        Some(e) => Err(e),
        None => Ok(solved),
    }
}

/// Runs variant `i`: solve, then `make` its files; every failure becomes its status.
pub fn run_variant<T, F>(plan: &Plan, i: usize, opts: &MeshOptions, make: &F) -> Variant<T>
where
    F: Fn(&Solved) -> Result<T>,
{
    let mut v = Variant {
        index: i,
        values: plan.values(i),
        status: Status::Ok,
        heat_flows: vec![None; plan.boundaries.len()],
        temperatures: vec![None; plan.probes.len()],
        zz_estimate: None,
        files: None,
        warnings: Vec::new(),
    };
    let done = solve_variant(plan, i, opts).and_then(|s| make(&s).map(|f| (s, f)));
    match done {
        Ok((s, files)) => {
            for (slot, name) in v.heat_flows.iter_mut().zip(&plan.boundaries) {
                *slot = s
                    .results
                    .boundaries
                    .iter()
                    .find(|b| &b.name == name)
                    .map(|b| b.heat_flow);
            }
            for (slot, name) in v.temperatures.iter_mut().zip(&plan.probes) {
                *slot = s
                    .results
                    .probes
                    .iter()
                    .find(|p| &p.name == name)
                    .map(|p| p.temperature);
            }
            v.zz_estimate = Some(s.error_estimate.relative);
            v.warnings = s.warnings.clone();
            v.files = Some(files);
        }
        Err(e) => {
            let message = e
                .message()
                .lines()
                .map(str::trim)
                .collect::<Vec<_>>()
                .join(" ");
            v.status = Status::Failed {
                exit_code: e.exit_code(),
                message,
            };
        }
    }
    v
}

/// Runs the variants of `shard` on the global rayon pool and returns them in variant order.
/// `make` turns each solved variant into what the caller keeps (its files) as soon as it is
/// solved; the solved model is dropped right after.
pub fn run_sweep<T, F>(plan: &Plan, opts: &MeshOptions, shard: Shard, make: F) -> Vec<Variant<T>>
where
    T: Send,
    F: Fn(&Solved) -> Result<T> + Sync,
{
    let indices = shard.variants(plan.variants);
    let total = indices.len();
    let finished = std::sync::atomic::AtomicUsize::new(0);
    crate::progress::items("sweep variants", 0, total);
    indices
        .into_par_iter()
        .map(|i| {
            let v = run_variant(plan, i, opts, &make);
            let done = finished.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            crate::progress::items("sweep variants", done, total);
            v
        })
        .collect()
}
