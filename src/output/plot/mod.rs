//! Pictures: `field.svg` and `field.png` of a solved field (`solve --plot`, `xsheat plot`) and
//! the mesh picture of `mesh --plot`.
//!
//! * `colormap.rs` — viridis (van der Walt and Smith 2015; table from matplotlib's
//!   `_cm_listed.py`, CC0), the map of every temperature colour;
//! * `raster.rs` — the filled map: our own triangle scan conversion with per-pixel linear
//!   interpolation of the nodal temperatures (one pass over the triangles; a 1M-triangle mesh
//!   at 1600 × 1000 px in well under a second, `examples/plot_bench.rs`);
//! * `canvas.rs` — SVG elements in pixel units, text in the bundled DejaVu Sans
//!   (`assets/fonts/`), label boxes, the SVG file (text as outlines, the raster as an embedded
//!   PNG) and the PNG (tiny-skia/resvg);
//! * `layout.rs` — plot area, model-to-pixel mapping, title, colour bar, scale bar,
//!   [`PlotSize`];
//! * `field.rs` — the field picture ([`field_picture`]); `mesh.rs` — the mesh picture
//!   ([`mesh_picture`]).
//!
//! Both are deterministic: the same inputs give the same bytes.

pub mod canvas;
pub mod colormap;
pub mod field;
pub mod layout;
pub mod mesh;
pub mod raster;

pub use field::{FieldInputs, Picture, PlotOptions, field_picture};
pub use layout::{Layout, PLOT_SIDE_RANGE, PlotSize};
pub use mesh::mesh_picture;

/// The SVG picture's file name in a result set.
pub const FIELD_SVG: &str = "field.svg";
/// The PNG picture's file name in a result set.
pub const FIELD_PNG: &str = "field.png";
