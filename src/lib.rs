//! xsheat — steady heat conduction through 2D cross-sections by the finite element method.
//!
//! Data flows one way through the pipeline; each stage is a module that imports only the
//! stages before it:
//!
//! ```text
//! model file ─ model ──► Section (validated) ─ geometry ──► Pslg (tagged segments)
//!            ─ mesh ───► Mesh ─ fem ──► System ─ solve ──► Solution
//!            ─ post ───► Results (gradients, fluxes, heat flows, probes, lines, ZZ estimate)
//! run:   the stages strung together for one solve, with the numerical self-checks
//! study: drivers above run (convergence study, adaptive refinement, verification, grid checks)
//! output: every file written (VTK, CSV, JSON) ─ report: every line printed on the console
//! ```
//!
//! Beside the pipeline: [`geom`] holds the planar primitives every stage uses (exact orientation,
//! areas, distances, point-in-ring, the one R-tree spatial index); [`grid`] is the
//! finite-difference (discrete mean-value) model used by the cross-checks; [`text`] holds number
//! formatting shared by all stages; [`progress`] the console progress line of long runs;
//! [`error`] the two error kinds (input → exit 2, run → exit 1).
//! The command-line tool (`src/main.rs`) is a thin shell of library calls; see DEVELOPERS.md for
//! where each job lives.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

pub mod alloc;
pub mod error;
pub mod fem;
pub mod geom;
pub mod geometry;
pub mod grid;
pub mod mesh;
pub mod model;
pub mod output;
pub mod post;
pub mod progress;
pub mod report;
pub mod run;
pub mod solve;
pub mod study;
pub mod text;

pub use error::{Error, Result};

/// The short caution printed with every solve and written into every summary.
pub const CAUTION: &str = "Results depend on the inputs and the model assumptions (steady state, \
2D section, conduction by Fourier's law, the conductivities and boundary conditions as given). They must be reviewed by a \
qualified engineer under local codes and licensed practice before use.";

/// The tool's version, as written into summary.json.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

/// Most worker threads `--threads` accepts.
pub const MAX_THREADS: usize = 1024;

/// Sets the number of worker threads of the global pool (rayon) that the parallel parts use
/// (sweep variants today). `None` keeps rayon's default: the `RAYON_NUM_THREADS` environment
/// variable, else one thread per core. Call once, before any parallel work. Results do not
/// depend on the thread count.
pub fn set_threads(threads: Option<usize>) -> Result<()> {
    let Some(n) = threads else {
        return Ok(());
    };
    if n == 0 || n > MAX_THREADS {
        return Err(Error::input(format!(
            "--threads {n}: give a number of threads from 1 to {MAX_THREADS}"
        )));
    }
    rayon::ThreadPoolBuilder::new()
        .num_threads(n)
        .build_global()
        .map_err(|e| Error::run(format!("cannot start {n} worker threads: {e}")))
}
