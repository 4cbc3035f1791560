//! Reading a user's own grid results (CSV x,y,temperature).

use super::*;

/// Read a user's grid results from a file (see [`parse_user_grid`]).
pub fn read_user_grid(path: &Path) -> Result<UserGrid> {
    let text = std::fs::read_to_string(path).map_err(|e| {
        Error::input(format!(
            "cannot read grid results file {}: {e}",
            path.display()
        ))
    })?;
    parse_user_grid(&text, &path.display().to_string())
}

/// Parse grid results: CSV whose header starts exactly `x,y,temperature` (m, m, °C); further
/// columns are ignored; every value of the first three columns must be a finite number. Blank
/// lines are skipped. `source` names the file in messages.
pub fn parse_user_grid(text: &str, source: &str) -> Result<UserGrid> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let expected = USER_HEADER.join(",");
    let mut points = Vec::new();
    let mut header_seen = false;
    for record in reader.records() {
        let record = record.map_err(|e| {
            let at = e.position().map_or(String::new(), |p| {
                format!(" line {}:", line_of(text, p.byte()))
            });
            Error::input(format!("{source}:{at} cannot read CSV: {e}"))
        })?;
        let line = record.position().map_or(0, |p| line_of(text, p.byte()));
        if record.len() == 1 && record[0].trim().is_empty() {
            continue;
        }
        if !header_seen {
            let found: Vec<&str> = record.iter().collect();
            if found.len() < 3 || found[..3] != USER_HEADER {
                return Err(Error::input(format!(
                    "{source}: line {line}: header {:?} is not the expected {expected:?} (the first \
                     three columns must be named exactly x, y, temperature: m, m, °C; further \
                     columns are ignored)",
                    found.join(",")
                )));
            }
            header_seen = true;
            continue;
        }
        if record.len() < 3 {
            return Err(Error::input(format!(
                "{source}: line {line}: expected at least 3 values (x, y, temperature), found {}",
                record.len()
            )));
        }
        let mut v = [0.0; 3];
        for (k, name) in USER_HEADER.iter().enumerate() {
            let raw = record[k].trim();
            let x: f64 = raw.parse().map_err(|_| {
                Error::input(format!(
                    "{source}: line {line}, column {name}: {raw:?} is not a number"
                ))
            })?;
            if !x.is_finite() {
                return Err(Error::input(format!(
                    "{source}: line {line}, column {name}: {raw:?} is not a finite number"
                )));
            }
            v[k] = x;
        }
        points.push(UserPoint {
            line,
            x: v[0],
            y: v[1],
            temperature: v[2],
        });
    }
    if !header_seen {
        return Err(Error::input(format!(
            "{source}: the file is empty; expected the header {expected:?} and one point per line"
        )));
    }
    if points.is_empty() {
        return Err(Error::input(format!(
            "{source}: no points after the header {expected:?}"
        )));
    }
    Ok(UserGrid {
        source: source.to_string(),
        points,
    })
}

/// Line number (1-based) of the first content at byte offset `byte`, counted from the text
/// itself: the reader may report a record as starting at the line ending before it (CRLF).
fn line_of(text: &str, byte: u64) -> u64 {
    let b = text.as_bytes();
    let mut at = (byte as usize).min(b.len());
    while at < b.len() && (b[at] == b'\r' || b[at] == b'\n') {
        at += 1;
    }
    1 + b[..at].iter().filter(|&&c| c == b'\n').count() as u64
}
