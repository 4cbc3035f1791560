//! `points_file`: a ring's points read from a CSV file (surveyed or exported point lists) into
//! the ring's `points` (and `edges`), in metres, before validation. The file has a header row
//! naming its columns: `x,y` (in the model's `length_unit`) or `x_m,y_m` (metres), and an
//! optional `edge` (the boundary of the segment starting at the row's point, empty =
//! unnamed). A last row repeating the first row's point is the closing point: it is dropped and
//! its `edge` cell must be empty, so there is one name per real segment. Lines starting with
//! `#` are comments; cells are trimmed. Errors name the ring, the file and the line (counted
//! from the file's first line, comments included).

use super::{Imported, read_import};
use crate::error::{Error, Result, printable};
use crate::model::file::ModelFile;
use crate::model::{PointEntry, RingFile};
use std::path::Path;

/// Read every ring's `points_file` (relative to `dir`); true when any was read.
pub(super) fn resolve_points_files(
    file: &mut ModelFile,
    dir: &Path,
    imported: &mut Imported,
) -> Result<bool> {
    let any = file
        .outline
        .iter()
        .chain(&file.regions)
        .chain(&file.holes)
        .any(|r| r.points_file.is_some());
    if !any {
        return Ok(false);
    }
    // Plain x,y are in the model's length_unit: divided by the same factor as `in_metres`
    // divides inline points, so the same numbers give the same metres.
    let factor = crate::model::units::unit_factor(file.length_unit.as_deref())?;
    let mut read = Read {
        dir,
        factor,
        imported,
    };
    if let Some(r) = file.outline.as_mut() {
        read.ring(r, "outline", true)?;
    }
    for (i, r) in file.regions.iter_mut().enumerate() {
        read.ring(r, &format!("regions[{i}]"), false)?;
    }
    for (i, r) in file.holes.iter_mut().enumerate() {
        read.ring(r, &format!("holes[{i}]"), true)?;
    }
    Ok(true)
}

/// Refuses a ring whose `points_file` was not read (a model validated from memory).
pub(super) fn check_resolved(file: &ModelFile) -> Result<()> {
    let rings = file
        .outline
        .iter()
        .map(|r| (r, "outline".to_string()))
        .chain(
            file.regions
                .iter()
                .enumerate()
                .map(|(i, r)| (r, format!("regions[{i}]"))),
        )
        .chain(
            file.holes
                .iter()
                .enumerate()
                .map(|(i, r)| (r, format!("holes[{i}]"))),
        );
    for (r, kind) in rings {
        if let Some(name) = &r.points_file {
            return Err(Error::input(format!(
                "{kind}: points_file \"{}\" is read relative to the model file; load the model from its file (model::load) or call model::resolve_imports first",
                printable(name)
            )));
        }
    }
    Ok(())
}

/// What reading a ring's file needs.
struct Read<'a> {
    dir: &'a Path,
    /// Units of `length_unit` per metre.
    factor: f64,
    imported: &'a mut Imported,
}

/// Which column holds what.
struct Columns {
    x: usize,
    y: usize,
    edge: Option<usize>,
    /// True for `x_m,y_m`.
    metres: bool,
}

/// The rows of a points file: the point (as written), its line and its edge cell.
struct Row {
    point: [f64; 2],
    line: u64,
    edge: String,
}

impl Read<'_> {
    /// Replace `r.points_file` by the points (and names) it holds.
    fn ring(&mut self, r: &mut RingFile, kind: &str, allow_names: bool) -> Result<()> {
        let Some(name) = r.points_file.clone() else {
            return Ok(());
        };
        let given: Vec<&str> = [
            ("points", r.points.is_some()),
            ("circle", r.circle.is_some()),
            ("rectangle", r.rectangle.is_some()),
        ]
        .iter()
        .filter(|(_, g)| *g)
        .map(|(k, _)| *k)
        .collect();
        if !given.is_empty() {
            return Err(Error::input(format!(
                "{kind}: give one of `points`, `circle`, `rectangle` and `points_file`, not points_file and {}",
                given.join(" and ")
            )));
        }
        let label = format!("{kind}: points_file \"{}\"", printable(&name));
        let path = self.dir.join(&name);
        let bytes = read_import(&path, &label)?;
        self.imported.files.push(path);
        let text = String::from_utf8(bytes).map_err(|e| {
            Error::input(format!(
                "{label}: not UTF-8 text (invalid byte at offset {})",
                e.utf8_error().valid_up_to()
            ))
        })?;
        let (columns, mut rows) = rows(&text, &label)?;
        if rows.len() >= 2 && rows.first().map(|f| f.point) == rows.last().map(|l| l.point) {
            if let Some(last) = rows.last()
                && !last.edge.is_empty()
            {
                return Err(Error::input(format!(
                    "{label}, line {}: the last point repeats the first (the closing point) and starts no segment: leave its edge cell empty",
                    last.line
                )));
            }
            rows.pop();
        }
        if rows.len() < 3 {
            return Err(Error::input(format!(
                "{label}: a ring needs at least 3 points, found {} (without a closing point)",
                rows.len()
            )));
        }
        if columns.edge.is_some() {
            if r.edges.is_some() || r.boundary.is_some() {
                return Err(Error::input(format!(
                    "{kind}: the edge column of points_file \"{}\" names the segments: give no `edges` or `boundary` with it",
                    printable(&name)
                )));
            }
            if let Some(row) = rows.iter().find(|row| !row.edge.is_empty()) {
                if !allow_names {
                    return Err(Error::input(format!(
                        "{label}, line {}: edge \"{}\": a region names no boundaries (its edges are material interfaces); name boundary segments on the outline or on holes",
                        row.line,
                        printable(&row.edge)
                    )));
                }
                r.edges = Some(rows.iter().map(|row| row.edge.clone()).collect());
            }
        }
        let f = if columns.metres { 1.0 } else { self.factor };
        let points: Vec<[f64; 2]> = rows
            .iter()
            .map(|row| [row.point[0] / f, row.point[1] / f])
            .collect();
        r.points = Some(PointEntry::list(&points));
        r.points_file = None;
        r.label = Some(format!("{kind} (points_file \"{}\")", printable(&name)));
        Ok(())
    }
}

/// The columns and rows of the file's text.
fn rows(text: &str, label: &str) -> Result<(Columns, Vec<Row>)> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let headers = reader
        .headers()
        .map_err(|e| Error::input(format!("{label}: {}", printable(&e.to_string()))))?
        .clone();
    let header_line = headers.position().map_or(1, csv::Position::line);
    let columns = columns(&headers, label, header_line)?;
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| record_error(&e, label, headers.len()))?;
        let line = record.position().map_or(0, csv::Position::line);
        let number = |col: usize, name: &str| -> Result<f64> {
            let cell = record.get(col).unwrap_or("");
            match cell.parse::<f64>() {
                Ok(v) if v.is_finite() => Ok(v),
                Ok(_) => Err(Error::input(format!(
                    "{label}, line {line}: column {name}: \"{}\" is not a finite number",
                    printable(cell)
                ))),
                Err(_) => Err(Error::input(format!(
                    "{label}, line {line}: column {name}: \"{}\" is not a number",
                    printable(cell)
                ))),
            }
        };
        let (xn, yn) = if columns.metres {
            ("x_m", "y_m")
        } else {
            ("x", "y")
        };
        let point = [number(columns.x, xn)?, number(columns.y, yn)?];
        let edge = columns
            .edge
            .and_then(|c| record.get(c))
            .unwrap_or("")
            .to_string();
        rows.push(Row { point, line, edge });
    }
    Ok((columns, rows))
}

/// A record the CSV reader refused (a row with another number of cells than the header).
fn record_error(e: &csv::Error, label: &str, header_len: usize) -> Error {
    match e.kind() {
        csv::ErrorKind::UnequalLengths { pos, len, .. } => Error::input(format!(
            "{label}, line {}: {len} cells, but the header row has {header_len}",
            pos.as_ref().map_or(0, csv::Position::line)
        )),
        _ => Error::input(format!("{label}: {}", printable(&e.to_string()))),
    }
}

/// The header row: `x,y` or `x_m,y_m`, optional `edge`, nothing else, each once.
fn columns(headers: &csv::StringRecord, label: &str, line: u64) -> Result<Columns> {
    const KNOWN: [&str; 5] = ["x", "y", "x_m", "y_m", "edge"];
    let expected = "the header row names the columns: x,y (in the model's length_unit) or x_m,y_m (metres), and optionally edge";
    if headers.iter().all(str::is_empty) {
        return Err(Error::input(format!("{label}: no header row ({expected})")));
    }
    let mut at = [None; 5];
    for (i, h) in headers.iter().enumerate() {
        let Some(k) = KNOWN.iter().position(|n| *n == h) else {
            let hint = if h.starts_with("x_") || h.starts_with("y_") {
                "; coordinates in another unit than metres go in x,y with the model's length_unit"
            } else {
                ""
            };
            return Err(Error::input(format!(
                "{label}, line {line}: unknown column \"{}\" ({expected}){hint}",
                printable(h)
            )));
        };
        if at[k].is_some() {
            return Err(Error::input(format!(
                "{label}, line {line}: column \"{h}\" given twice"
            )));
        }
        at[k] = Some(i);
    }
    let missing = |names: &str| {
        Error::input(format!(
            "{label}, line {line}: missing column {names} ({expected})"
        ))
    };
    let plain = at[0].is_some() || at[1].is_some();
    let metres = at[2].is_some() || at[3].is_some();
    if plain && metres {
        return Err(Error::input(format!(
            "{label}, line {line}: give the coordinates once, as x,y or as x_m,y_m, not both"
        )));
    }
    let (x, y) = match (metres, at) {
        (false, [Some(x), Some(y), ..]) => (x, y),
        (false, [Some(_), None, ..]) => return Err(missing("y")),
        (false, [None, Some(_), ..]) => return Err(missing("x")),
        (false, _) => return Err(missing("x,y")),
        (true, [_, _, Some(x), Some(y), _]) => (x, y),
        (true, [_, _, Some(_), None, _]) => return Err(missing("y_m")),
        (true, _) => return Err(missing("x_m")),
    };
    Ok(Columns {
        x,
        y,
        edge: at[4],
        metres,
    })
}
