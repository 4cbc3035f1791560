//! The picture and isotherm files of a solve (`--plot`, `--isotherms`, `xsheat plot`): the
//! isotherm levels and lines of the field, then `field.svg`, `field.png`,
//! `isotherms.geojson` and `isotherms.dxf` as named bytes.

use super::isotherms::{ISOTHERMS_DXF, ISOTHERMS_GEOJSON, isotherms_dxf, isotherms_geojson};
use super::plot::{self, FIELD_PNG, FIELD_SVG, FieldInputs, PlotOptions};
use crate::error::Result;
use crate::post::isotherms::{isotherms, round_levels};
use crate::run::Solved;

/// Files as (name in the set, bytes).
pub type NamedFiles = Vec<(String, Vec<u8>)>;

/// Picture and isotherm files of `sv`: with `plot` the two pictures (and the isotherm files),
/// with `isotherm_files` alone only the isotherm files. Returns the files and the SVG text for
/// the report page.
pub fn picture_files(
    sv: &Solved,
    plot: Option<&PlotOptions>,
    isotherm_files: bool,
) -> Result<(NamedFiles, Option<String>)> {
    let mut files = Vec::new();
    if plot.is_none() && !isotherm_files {
        return Ok((files, None));
    }
    let r = &sv.results;
    let (step, levels) = round_levels(r.t_min.value, r.t_max.value);
    let lines = isotherms(&sv.mesh, &r.temperature, &levels);
    let title = &sv.section().title;
    files.push((
        ISOTHERMS_GEOJSON.to_string(),
        isotherms_geojson(title, step, &lines)?,
    ));
    files.push((ISOTHERMS_DXF.to_string(), isotherms_dxf(step, &lines)?));
    let Some(options) = plot else {
        return Ok((files, None));
    };
    let picture = plot::field_picture(
        &FieldInputs {
            section: sv.section(),
            mesh: &sv.mesh,
            results: r,
            isotherms: &lines,
            step,
        },
        options,
    )?;
    let svg = String::from_utf8_lossy(&picture.svg).into_owned();
    files.push((FIELD_SVG.to_string(), picture.svg));
    files.push((FIELD_PNG.to_string(), picture.png));
    Ok((files, Some(svg)))
}
