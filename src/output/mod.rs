//! Output stage: turns a mesh and its results into files, and writes files safely.
//!
//! This module owns
//! * [`OutputSet`] and [`write_file_atomic`] (`fs.rs`) and [`ResultDir`] (`resultdir.rs`), the
//!   only code that writes files: a result set becomes the whole content of its directory in
//!   one step (staged beside it, flushed, swapped in), under an advisory lock, with a manifest
//!   (`manifest.rs`: [`ManifestEntry`], summary.json's `files` or `manifest.json`);
//! * the VTK XML unstructured-grid writers [`field_vtu`] (solved field), [`mesh_vtu`] (mesh and
//!   its quality) and [`grid_vtu`] (grid model), written by our own encoder ([`encode_vtu`]);
//! * the Matrix Market export of the reduced system ([`matrix_files`], `matrix.rs`);
//! * the CSV writers [`nodes_csv`], [`probes_csv`], [`line_csv`], [`boundaries_csv`] and those
//!   of the studies (convergence, verify, gridcheck, compare);
//! * the report page `report.html` ([`report_html`], `report_page.rs`, on the polyglot HTML
//!   writer of `html.rs`);
//! * the pictures `field.svg` / `field.png` and the mesh picture ([`plot`]) and the isotherm
//!   files `isotherms.geojson` / `isotherms.dxf` (`isotherms.rs`, [`picture_files`]);
//! * the JSON files, each a typed serde record with `"schema": "xsheat.<kind>/<n>"`:
//!   [`summary_json`] (`xsheat.summary/2`), [`convergence_json`] (`xsheat.convergence/2`) and
//!   [`verify_json`] (`xsheat.verify/1`).
//!
//! Names carry their unit as one suffix ([`UNIT_SUFFIXES`]): `temperature_c`,
//! `heat_flow_w_per_m`, `gradient_k_per_m`, … in CSV headers, JSON keys and VTK arrays alike.
//!
//! Every writer returns bytes; nothing here touches the disk except [`ResultDir`] (and
//! [`OutputSet::commit`] through it) and [`write_file_atomic`].
//!
//! # Determinism and number formatting
//!
//! The same inputs give byte-identical files (only the `run` object of the summary, which holds
//! the timings, is expected to vary). No hash-ordered container is iterated.
//!
//! * CSV numbers use [`format_f64`]: the shortest decimal string that reads back to the same
//!   `f64` (Rust's round-trip formatting), written positionally (`{}`) when
//!   `1e-4 <= |x| < 1e15` and in scientific notation (`{:e}`, e.g. `1.5e-7`) otherwise;
//!   zero (either sign) is written `0`; non-finite values are written `NaN`, `inf`, `-inf`.
//! * JSON numbers are written by `serde_json` (shortest round-trip, e.g. `0.1`, `1e-7`);
//!   a non-finite value becomes `null`.
//! * VTK arrays are stored exactly as little-endian binary (Float64 / Int32 / Int64 / UInt8),
//!   base64-encoded appended data, optionally zlib-compressed at a fixed level ([`VtkOptions`]),
//!   so no decimal conversion happens at all.
//!
//! Node and triangle numbers in every file are 0-based, matching VTK point and cell ids.

mod cases;
mod converge;
mod coupling;
mod crosscheck;
mod csv;
mod flows;
mod fs;
mod grid_vtk;
mod html;
mod isotherms;
mod json;
mod manifest;
mod matrix;
mod pictures;
pub mod plot;
mod replot;
mod report_page;
mod resultdir;
mod schema;
mod solve;
mod summary;
mod sweep;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_nested;
mod verify;
pub(crate) mod vtk;

pub use cases::*;
pub use converge::*;
pub use crosscheck::*;
pub use csv::*;
pub use flows::*;
pub use fs::*;
pub use grid_vtk::*;
pub use isotherms::*;
pub use json::{ERROR_ESTIMATE_METHOD, UNIT_SUFFIXES};
pub use manifest::*;
pub use matrix::*;
pub use pictures::*;
pub use replot::*;
pub use report_page::*;
pub use resultdir::*;
pub use schema::*;
pub use solve::*;
pub use summary::*;
pub use sweep::*;
pub use verify::*;
pub use vtk::*;
