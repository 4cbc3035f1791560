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

/// Appends [`format_f64`]`(x)` to `out` without allocating a string.
pub fn push_f64(out: &mut Vec<u8>, x: f64) {
    use std::io::Write as _;
    // Writing into a Vec<u8> cannot fail.
    let _ = if x == 0.0 {
        out.write_all(b"0")
    } else if x.is_finite() && (1e-4..1e15).contains(&x.abs()) {
        write!(out, "{x}")
    } else {
        write!(out, "{x:e}")
    };
}

/// Appends the decimal digits of `i` to `out`.
pub(crate) fn push_usize(out: &mut Vec<u8>, i: usize) {
    use std::io::Write as _;
    let _ = write!(out, "{i}");
}

/// `node,x_m,y_m,temperature_c` — one row per node, 0-based node numbers. Written straight
/// into one buffer (no field needs quoting), the same bytes [`csv_bytes`] would give.
pub fn nodes_csv(mesh: &Mesh, results: &Results) -> Result<Vec<u8>> {
    check_len(
        "temperature",
        results.temperature.len(),
        mesh.nodes.len(),
        "node",
    )?;
    let mut out = Vec::with_capacity(64 + 64 * mesh.nodes.len());
    out.extend_from_slice(b"node,x_m,y_m,temperature_c\n");
    for (i, (p, &t)) in mesh.nodes.iter().zip(&results.temperature).enumerate() {
        push_usize(&mut out, i);
        for v in [p[0], p[1], t] {
            out.push(b',');
            push_f64(&mut out, v);
        }
        out.push(b'\n');
    }
    Ok(out)
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
/// max_temperature_c` — heat flow per metre of section depth, positive into the section —
/// and, when some boundary radiates, `radiation_coefficient_w_per_m2_k` (the mean linearised
/// coefficient h_r; empty for boundaries that do not radiate).
pub fn boundaries_csv(results: &Results) -> Result<Vec<u8>> {
    let radiates = results
        .boundaries
        .iter()
        .any(|b| b.radiation_coefficient.is_some());
    let mut header = vec![
        "name",
        "kind",
        "length_m",
        "heat_flow_w_per_m",
        "mean_temperature_c",
        "min_temperature_c",
        "max_temperature_c",
    ];
    if radiates {
        header.push("radiation_coefficient_w_per_m2_k");
    }
    csv_bytes(
        header,
        results.boundaries.iter().map(|b| {
            let mut row = vec![
                b.name.clone(),
                b.kind.to_string(),
                format_f64(b.length),
                format_f64(b.heat_flow),
                format_f64(b.mean_temperature),
                format_f64(b.min_temperature),
                format_f64(b.max_temperature),
            ];
            if radiates {
                row.push(b.radiation_coefficient.map_or(String::new(), format_f64));
            }
            row
        }),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn push_f64_matches_format_f64() {
        let mut values = vec![
            0.0,
            -0.0,
            1.0,
            -1.5,
            0.1,
            1e-4,
            9.99e-5,
            1e15,
            9.99e14,
            1e-300,
            -2.5e300,
            f64::MIN_POSITIVE,
            f64::MAX,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
        ];
        let mut x = 0.123_456_789_f64;
        for _ in 0..2000 {
            x = (x * 7.31 + 0.17).fract() * 10f64.powi(((x * 1e6) as i32 % 40) - 20);
            values.extend([x, -x]);
        }
        for v in values {
            let mut out = Vec::new();
            push_f64(&mut out, v);
            assert_eq!(String::from_utf8(out).unwrap(), format_f64(v), "{v:e}");
        }
    }
}
