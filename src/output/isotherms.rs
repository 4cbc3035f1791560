//! Isotherm files for CAD and GIS: `isotherms.geojson` (RFC 7946 FeatureCollection of
//! LineStrings, one per polyline, with the level as `temperature_c`; coordinates are x, y in m
//! in the section plane, not geographic) and `isotherms.dxf` (DXF R2000 via the dxf crate:
//! one layer per level, `ISOTHERM_<level>C`, one LWPOLYLINE per polyline, closed loops
//! flagged closed). Header dates and GUIDs are fixed, so the bytes are the same on every run.

use crate::error::{Error, Result};
use crate::post::isotherms::{Isotherm, level_decimals};
use serde::Serialize;

/// The GeoJSON file name in a result set.
pub const ISOTHERMS_GEOJSON: &str = "isotherms.geojson";
/// The DXF file name in a result set.
pub const ISOTHERMS_DXF: &str = "isotherms.dxf";

#[derive(Serialize)]
struct Collection<'a> {
    #[serde(rename = "type")]
    kind: &'static str,
    /// Foreign member (RFC 7946 §6.1): what the file is.
    xsheat: Meta<'a>,
    features: Vec<Feature>,
}

#[derive(Serialize)]
struct Meta<'a> {
    schema: &'static str,
    title: &'a str,
    coordinates: &'static str,
    step_k: f64,
    levels_c: Vec<f64>,
}

#[derive(Serialize)]
struct Feature {
    #[serde(rename = "type")]
    kind: &'static str,
    properties: Properties,
    geometry: Geometry,
}

#[derive(Serialize)]
struct Properties {
    temperature_c: f64,
    closed: bool,
}

#[derive(Serialize)]
struct Geometry {
    #[serde(rename = "type")]
    kind: &'static str,
    coordinates: Vec<[f64; 2]>,
}

/// `isotherms.geojson` of `isotherms` (step `step` K) of the section titled `title`.
pub fn isotherms_geojson(title: &str, step: f64, isotherms: &[Isotherm]) -> Result<Vec<u8>> {
    let features = isotherms
        .iter()
        .flat_map(|iso| {
            iso.lines.iter().map(|l| Feature {
                kind: "Feature",
                properties: Properties {
                    temperature_c: iso.temperature,
                    closed: l.len() > 2 && l.first() == l.last(),
                },
                geometry: Geometry {
                    kind: "LineString",
                    coordinates: l.clone(),
                },
            })
        })
        .collect();
    let c = Collection {
        kind: "FeatureCollection",
        xsheat: Meta {
            schema: "xsheat.isotherms/1",
            title,
            coordinates: "x_m, y_m in the section plane (m), not geographic",
            step_k: step,
            levels_c: isotherms.iter().map(|i| i.temperature).collect(),
        },
        features,
    };
    let mut out = serde_json::to_vec_pretty(&c)
        .map_err(|e| Error::run(format!("cannot encode {ISOTHERMS_GEOJSON}: {e}")))?;
    out.push(b'\n');
    Ok(out)
}

/// The DXF layer name of a level: `ISOTHERM_12.5C`, `ISOTHERM_-2.5C`.
pub fn isotherm_layer(temperature: f64, step: f64) -> String {
    format!(
        "ISOTHERM_{}C",
        crate::text::fixed(temperature, level_decimals(step))
    )
}

/// `isotherms.dxf` of `isotherms` (step `step` K): coordinates in m.
pub fn isotherms_dxf(step: f64, isotherms: &[Isotherm]) -> Result<Vec<u8>> {
    use chrono::TimeZone;
    use dxf::LwPolylineVertex;
    use dxf::entities::{Entity, EntityType, LwPolyline};
    let mut d = dxf::Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    let fixed_local = chrono::NaiveDate::from_ymd_opt(2000, 1, 1)
        .and_then(|day| day.and_hms_opt(0, 0, 0))
        .ok_or_else(|| Error::run("internal: fixed DXF date"))?;
    let local = chrono::Local
        .from_local_datetime(&fixed_local)
        .earliest()
        .ok_or_else(|| Error::run("internal: fixed DXF date"))?;
    let utc = chrono::Utc.from_utc_datetime(&fixed_local);
    d.header.creation_date = local;
    d.header.update_date = local;
    d.header.creation_date_universal = utc;
    d.header.update_date_universal = utc;
    d.header.fingerprint_guid = uuid::Uuid::nil();
    d.header.version_guid = uuid::Uuid::nil();
    d.header.default_drawing_units = dxf::enums::Units::Meters;
    for iso in isotherms {
        let layer = isotherm_layer(iso.temperature, step);
        d.add_layer(dxf::tables::Layer {
            name: layer.clone(),
            ..Default::default()
        });
        for line in &iso.lines {
            let closed = line.len() > 2 && line.first() == line.last();
            let pts = if closed {
                &line[..line.len() - 1]
            } else {
                &line[..]
            };
            let mut poly = LwPolyline::default();
            poly.set_is_closed(closed);
            poly.vertices = pts
                .iter()
                .map(|p| LwPolylineVertex {
                    x: p[0],
                    y: p[1],
                    ..Default::default()
                })
                .collect();
            let mut e = Entity::new(EntityType::LwPolyline(poly));
            e.common.layer = layer.clone();
            d.add_entity(e);
        }
    }
    let mut out = Vec::new();
    d.save(&mut out)
        .map_err(|e| Error::run(format!("cannot encode {ISOTHERMS_DXF}: {e}")))?;
    Ok(out)
}
