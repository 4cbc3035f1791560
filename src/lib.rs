//! xsheat — steady heat conduction through 2D cross-sections by the finite element method.
//!
//! Data flows one way through the pipeline:
//! [`model`] (validated section) → [`geometry`] (tagged segment set) → [`mesh`] (quality
//! triangulation) → [`fem`] (assembled system) → [`solve`] (nodal temperatures) → [`post`]
//! (gradients, fluxes, heat flows, probes, lines) → [`io`] (VTK, CSV, JSON).
//! [`run`] strings the stages together for the command-line tool and the examples.

pub mod accuracy;
pub mod crosscheck;
pub mod error;
pub mod fem;
pub mod geometry;
pub mod grid;
pub mod io;
pub mod mesh;
pub mod model;
pub mod post;
pub mod report;
pub mod run;
pub mod solve;
pub mod verify;

pub use error::{Error, Result};

/// The tool's version, as written into summary.json.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
