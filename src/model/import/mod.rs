//! Rings from other files: `[geojson]` (RFC 7946 features, `geojson.rs`), `[drawing]` (DXF
//! drawings, `dxf.rs`) and a ring's `points_file` (CSV point lists, `points.rs`). Each importer turns its file into written rings ([`RingFile`]s with
//! points and one boundary name per real segment, in metres), exactly what the same rings
//! typed in the model file would be; [`resolve_imports`] puts them into the model beside its
//! inline `[outline]`, `[[regions]]` and `[[holes]]`, so every check of a written ring applies to
//! them too. Paths are relative to the model file.

mod dxf;
mod geojson;
mod points;

use super::RingFile;
use super::file::ModelFile;
use crate::error::{Error, Result, printable};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// Largest GeoJSON, DXF or points CSV file accepted, bytes (64 MiB), checked before the file is read.
pub const MAX_IMPORT_FILE_BYTES: u64 = 64 * 1024 * 1024;

/// `[geojson]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct GeojsonFile {
    /// Path of the GeoJSON file, relative to the model file. Coordinates are metres in a local
    /// plane (no map projection).
    pub file: String,
}

/// `[drawing]` as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct DrawingFile {
    /// Path of the DXF file, relative to the model file.
    pub file: String,
    /// Unit of the drawing's coordinates: `m` (default), `cm` or `mm`; only the drawing's own
    /// coordinates are converted.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schemars(extend("enum" = ["m", "cm", "mm"]))]
    pub length_unit: Option<String>,
    /// Distance, in the drawing's unit, within which ends of LINE/ARC chains join and boundary
    /// lines lie on outline edges (default 10⁻⁶ × the drawing's diagonal).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<f64>,
    /// Boundary of the outline's edges that no boundary layer names.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub default_boundary: Option<String>,
    /// `[drawing.layers]`: the role of each layer.
    #[serde(default)]
    pub layers: BTreeMap<String, LayerFile>,
}

/// The role of one drawing layer as written.
#[derive(Debug, Clone, Deserialize, Serialize, Default, PartialEq, schemars::JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct LayerFile {
    /// Closed rings on the layer are regions (or the outline) of this material.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub material: Option<String>,
    /// Closed rings on the layer are holes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hole: Option<bool>,
    /// The layer's one closed ring is the outline (with `material`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outline: Option<bool>,
    /// With `hole`: the holes' boundary. Alone: lines on the layer name the outline edges
    /// they lie on.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boundary: Option<String>,
}

/// What the import read (kept with the model file, never written in one).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Imported {
    /// Every file read, as resolved against the model file's directory (inputs of the run: no
    /// output may replace them).
    pub files: Vec<PathBuf>,
    /// Warnings of the import (ignored entities, altitudes, unmapped layers, ...).
    pub warnings: Vec<String>,
}

/// Rings read from one file.
#[derive(Debug, Default)]
struct ImportedRings {
    outline: Option<RingFile>,
    regions: Vec<RingFile>,
    holes: Vec<RingFile>,
}

/// Read the file named by `[geojson]` or `[drawing]` (relative to `dir`, the model file's
/// directory) and put their rings into `file`: the file's outline unless the model has an
/// inline `[outline]`, its regions and holes before the inline ones (a later region wins
/// where regions overlap, so inline regions lie on top). Does nothing for a model without
/// either table.
///
/// Then reads every ring's `points_file` (CSV, see `points.rs`) into `points` (and `edges`).
/// The files read are listed in [`ModelFile::imported`].
pub fn resolve_imports(file: &mut ModelFile, dir: &Path) -> Result<()> {
    let mut imported = Imported::default();
    let read_rings = import_rings(file, dir, &mut imported)?;
    let read_points = points::resolve_points_files(file, dir, &mut imported)?;
    if read_rings || read_points {
        let slot = file.imported.get_or_insert_with(Imported::default);
        slot.files.extend(imported.files);
        slot.warnings.extend(imported.warnings);
    }
    Ok(())
}

/// The rings of `[geojson]` or `[drawing]` put into `file`; false for a model with neither.
fn import_rings(file: &mut ModelFile, dir: &Path, imported: &mut Imported) -> Result<bool> {
    let rings = match (&file.geojson, &file.drawing) {
        (None, None) => return Ok(false),
        (Some(_), Some(_)) => {
            return Err(Error::input(
                "[geojson] and [drawing]: give at most one of them (the section's rings come from one file)",
            ));
        }
        (Some(g), None) => {
            let path = dir.join(&g.file);
            let label = format!("[geojson] file \"{}\"", printable(&g.file));
            let bytes = read_import(&path, &label)?;
            imported.files.push(path);
            let text = String::from_utf8(bytes)
                .map_err(|_| Error::input(format!("{label}: not UTF-8 text")))?;
            let prefix = printable(&g.file);
            geojson::rings(&text, &prefix, file.outline.is_some(), imported)?
        }
        (None, Some(d)) => {
            let path = dir.join(&d.file);
            let label = format!("[drawing] file \"{}\"", printable(&d.file));
            let bytes = read_import(&path, &label)?;
            imported.files.push(path);
            // The model's max_area is in its length_unit²; the importers work in m².
            let f = super::units::unit_factor(file.length_unit.as_deref())?;
            let max_area = file.mesh.max_area.map(|a| a / f / f);
            dxf::rings(&bytes, d, file.outline.is_some(), max_area, imported)?
        }
    };
    if let Some(o) = rings.outline {
        file.outline = Some(o);
    }
    file.regions.splice(0..0, rings.regions);
    file.holes.splice(0..0, rings.holes);
    Ok(true)
}

/// Refuses a model whose `[geojson]` or `[drawing]` was not read (a model validated from memory
/// rather than loaded from its file), and returns the import's warnings.
pub(super) fn import_warnings(file: &ModelFile) -> Result<Vec<String>> {
    points::check_resolved(file)?;
    if file.geojson.is_none() && file.drawing.is_none() {
        return Ok(Vec::new());
    }
    match &file.imported {
        Some(i) => Ok(i.warnings.clone()),
        None => Err(Error::input(
            "[geojson]/[drawing]: the file they name is read relative to the model file; load the model from its file (model::load) or call model::resolve_imports first",
        )),
    }
}

/// The bytes of an imported file, refused above [`MAX_IMPORT_FILE_BYTES`].
fn read_import(path: &Path, label: &str) -> Result<Vec<u8>> {
    use std::io::Read;
    let cannot =
        |e: std::io::Error| Error::input(format!("{label}: cannot read {}: {e}", path.display()));
    let f = std::fs::File::open(path).map_err(cannot)?;
    let mut bytes = Vec::new();
    f.take(MAX_IMPORT_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_IMPORT_FILE_BYTES {
        return Err(Error::input(format!(
            "{label}: larger than the limit of {MAX_IMPORT_FILE_BYTES} bytes (64 MiB)"
        )));
    }
    Ok(bytes)
}

/// A ring's points without the closing point: the last point is dropped when it equals the
/// first (the closing-point convention of GeoJSON and closed CAD polylines), so every name
/// belongs to a real segment.
fn open_ring(mut points: Vec<[f64; 2]>) -> Vec<[f64; 2]> {
    if points.len() > 1 && points.first() == points.last() {
        points.pop();
    }
    points
}

#[cfg(test)]
mod tests;
