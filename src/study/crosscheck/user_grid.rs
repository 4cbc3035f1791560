//! Reading a user's own grid results: CSV with x (m), y (m) and temperature (°C) columns under
//! one of the accepted headers ([`USER_HEADERS`]).

use super::*;

/// Accepted header forms of a user's grid-results file, as (columns before x, the x, y and
/// temperature column names): `x,y,temperature`, `x_m,y_m,temperature_c`, and the tool's own
/// nodes.csv header `node,x_m,y_m,temperature_c` (the node column is ignored). Further columns
/// after these are ignored.
pub const USER_HEADERS: [(&[&str], [&str; 3]); 3] = [
    (&[], USER_HEADER),
    (&[], ["x_m", "y_m", "temperature_c"]),
    (&["node"], ["x_m", "y_m", "temperature_c"]),
];

/// The accepted header forms as text, for messages: `"x,y,temperature", …`.
fn accepted_headers() -> String {
    let forms: Vec<String> = USER_HEADERS
        .iter()
        .map(|(lead, cols)| format!("{:?}", [*lead, &cols[..]].concat().join(",")))
        .collect();
    format!("{}, {} or {}", forms[0], forms[1], forms[2])
}

/// Which header form a header record is: the first column index of x and the column names.
fn header_form(found: &[&str]) -> Option<(usize, [&'static str; 3])> {
    USER_HEADERS.iter().find_map(|(lead, cols)| {
        let n = lead.len();
        let matches = found.len() >= n + 3 && found[..n] == **lead && found[n..n + 3] == *cols;
        matches.then_some((n, *cols))
    })
}

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

/// Parse grid results: CSV whose header starts with one of [`USER_HEADERS`] (m, m, °C);
/// further columns are ignored; every x, y and temperature value must be a finite number.
/// Blank lines are skipped. `source` names the file in messages.
pub fn parse_user_grid(text: &str, source: &str) -> Result<UserGrid> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let mut points = Vec::new();
    let mut form: Option<(usize, [&str; 3])> = None;
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
        let Some((first, names)) = form else {
            let found: Vec<&str> = record.iter().collect();
            form = Some(header_form(&found).ok_or_else(|| {
                Error::input(format!(
                    "{source}: line {line}: header {:?} is not one of the accepted headers {} \
                     (x and y in m, temperature in °C; further columns are ignored)",
                    found.join(","),
                    accepted_headers()
                ))
            })?);
            continue;
        };
        points.push(user_point(&record, first, names, source, line)?);
    }
    if form.is_none() {
        return Err(Error::input(format!(
            "{source}: the file is empty; expected one of the headers {} and one point per line",
            accepted_headers()
        )));
    }
    if points.is_empty() {
        return Err(Error::input(format!(
            "{source}: no points after the header"
        )));
    }
    Ok(UserGrid {
        source: source.to_string(),
        points,
    })
}

/// One data row: x, y and temperature from columns `first..first + 3`, named `names`.
fn user_point(
    record: &csv::StringRecord,
    first: usize,
    names: [&str; 3],
    source: &str,
    line: u64,
) -> Result<UserPoint> {
    if record.len() < first + 3 {
        return Err(Error::input(format!(
            "{source}: line {line}: expected at least {} values ({}), found {}",
            first + 3,
            names.join(", "),
            record.len()
        )));
    }
    let mut v = [0.0; 3];
    for (k, name) in names.iter().enumerate() {
        let raw = record[first + k].trim();
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
    Ok(UserPoint {
        line,
        x: v[0],
        y: v[1],
        temperature: v[2],
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

#[cfg(test)]
mod header_tests {
    use super::*;

    #[test]
    fn all_three_header_forms_give_the_same_points() {
        let texts = [
            "x,y,temperature\n0.5,0.25,12.5\n",
            "x_m,y_m,temperature_c,extra\n0.5,0.25,12.5,z\n",
            "node,x_m,y_m,temperature_c\n7,0.5,0.25,12.5\n",
        ];
        for t in texts {
            let g = parse_user_grid(t, "t.csv").unwrap();
            assert_eq!(
                g.points,
                [UserPoint {
                    line: 2,
                    x: 0.5,
                    y: 0.25,
                    temperature: 12.5
                }],
                "{t}"
            );
        }
    }

    #[test]
    fn other_headers_are_refused_with_the_accepted_forms_listed() {
        for bad in [
            "y,x,temperature",
            "node,x,y,temperature",
            "x_m,y_m,temperature",
        ] {
            let e = parse_user_grid(&format!("{bad}\n1,2,3,4\n"), "t.csv").unwrap_err();
            let m = e.message();
            assert!(m.contains(&format!("header {bad:?}")), "{m}");
            for form in [
                "\"x,y,temperature\"",
                "\"x_m,y_m,temperature_c\"",
                "\"node,x_m,y_m,temperature_c\"",
            ] {
                assert!(m.contains(form), "{m} lacks {form}");
            }
        }
    }

    #[test]
    fn a_nodes_row_without_temperature_is_refused() {
        let e = parse_user_grid("node,x_m,y_m,temperature_c\n0,1,2\n", "t.csv").unwrap_err();
        assert!(e.message().contains("line 2"), "{e}");
        assert!(e.message().contains("expected at least 4 values"), "{e}");
        let e = parse_user_grid("node,x_m,y_m,temperature_c\n0,1,2,hot\n", "t.csv").unwrap_err();
        assert!(e.message().contains("column temperature_c"), "{e}");
    }
}
