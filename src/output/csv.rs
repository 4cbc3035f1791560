//! CSV encoding of the solved field: nodes, probes, lines and boundaries, and the number format.

use super::vtk::check_len;
use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::post::{LineResult, Results};
pub use crate::text::format_f64;

/// CSV bytes of a header and rows (`\n` line ends): the one CSV encoder of every output.
pub fn csv_bytes<H, T, R, U>(header: H, rows: impl IntoIterator<Item = R>) -> Result<Vec<u8>>
where
    H: IntoIterator<Item = T>,
    T: AsRef<[u8]>,
    R: IntoIterator<Item = U>,
    U: AsRef<[u8]>,
{
    let fail = |e: &dyn std::fmt::Display| Error::run(format!("cannot encode CSV: {e}"));
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    w.write_record(header).map_err(|e| fail(&e))?;
    for row in rows {
        w.write_record(row).map_err(|e| fail(&e))?;
    }
    w.into_inner().map_err(|e| fail(&e.error()))
}

/// `node,x_m,y_m,temperature_c` — one row per node, 0-based node numbers.
pub fn nodes_csv(mesh: &Mesh, results: &Results) -> Result<Vec<u8>> {
    check_len(
        "temperature",
        results.temperature.len(),
        mesh.nodes.len(),
        "node",
    )?;
    csv_bytes(
        ["node", "x_m", "y_m", "temperature_c"],
        mesh.nodes
            .iter()
            .zip(&results.temperature)
            .enumerate()
            .map(|(i, (p, &t))| {
                [
                    i.to_string(),
                    format_f64(p[0]),
                    format_f64(p[1]),
                    format_f64(t),
                ]
            }),
    )
}

/// `name,x_m,y_m,temperature_c` — x, y are where the field was evaluated.
pub fn probes_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        ["name", "x_m", "y_m", "temperature_c"],
        results.probes.iter().map(|p| {
            [
                p.name.clone(),
                format_f64(p.x),
                format_f64(p.y),
                format_f64(p.temperature),
            ]
        }),
    )
}

/// `s_m,x_m,y_m,temperature_c,qx_w_per_m2,qy_w_per_m2` — one row per evaluated sample.
pub fn line_csv(line: &LineResult) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "s_m",
            "x_m",
            "y_m",
            "temperature_c",
            "qx_w_per_m2",
            "qy_w_per_m2",
        ],
        line.samples
            .iter()
            .map(|s| [s.s, s.x, s.y, s.temperature, s.qx, s.qy].map(format_f64)),
    )
}

/// `name,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,
/// max_temperature_c` — heat flow per metre of section depth, positive into the section.
pub fn boundaries_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "name",
            "kind",
            "length_m",
            "heat_flow_w_per_m",
            "mean_temperature_c",
            "min_temperature_c",
            "max_temperature_c",
        ],
        results.boundaries.iter().map(|b| {
            [
                b.name.clone(),
                b.kind.to_string(),
                format_f64(b.length),
                format_f64(b.heat_flow),
                format_f64(b.mean_temperature),
                format_f64(b.min_temperature),
                format_f64(b.max_temperature),
            ]
        }),
    )
}
