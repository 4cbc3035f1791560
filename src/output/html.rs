//! The building blocks of `report.html`: a small writer for polyglot HTML (valid HTML5 that
//! is also well-formed XML: every element closed, void elements self-closed, only the XML
//! entities `&amp; &lt; &gt; &quot;`), the page's style sheet, and tables.
//!
//! The page is self-contained: inline CSS and SVG, no script, no link, no URL except the XML
//! namespaces.

use std::fmt::Write;

/// The XHTML namespace, the page's only URL (with SVG's, inside an embedded picture).
pub const XHTML_NAMESPACE: &str = "http://www.w3.org/1999/xhtml";

/// `text` with `&`, `<`, `>`, `"` and `'` escaped and control characters other than tab and
/// newline dropped (XML 1.0 forbids them).
pub fn escape(text: &str) -> String {
    let mut o = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            '\t' | '\n' => o.push(c),
            c if c.is_control() => {}
            c => o.push(c),
        }
    }
    o
}

/// Column alignment of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Text, left-aligned.
    Left,
    /// Numbers, right-aligned with tabular figures.
    Right,
}

/// A table: a header row and rows of cells (plain text, escaped when written).
#[derive(Debug, Clone)]
pub struct HtmlTable {
    header: Vec<String>,
    align: Vec<Align>,
    rows: Vec<(Vec<String>, Option<&'static str>)>,
    caption: Option<String>,
}

impl HtmlTable {
    /// A table with the given column headers; `align` has one letter per column, `l` or `r`.
    pub fn new(header: &[&str], align: &str) -> HtmlTable {
        HtmlTable {
            header: header.iter().map(|h| h.to_string()).collect(),
            align: align
                .chars()
                .map(|c| if c == 'r' { Align::Right } else { Align::Left })
                .collect(),
            rows: Vec::new(),
            caption: None,
        }
    }

    /// A note printed just above the table (e.g. a sign convention).
    pub fn caption(mut self, text: impl Into<String>) -> HtmlTable {
        self.caption = Some(text.into());
        self
    }

    /// Adds a row.
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push((cells, None));
    }

    /// Adds a row with a CSS class (`total`, `fail`, `warn`).
    pub fn row_class(&mut self, cells: Vec<String>, class: &'static str) {
        self.rows.push((cells, Some(class)));
    }

    fn class(&self, col: usize) -> &'static str {
        match self.align.get(col) {
            Some(Align::Right) => " class=\"num\"",
            _ => "",
        }
    }

    /// The table's markup.
    pub fn write(&self, o: &mut String) {
        if let Some(c) = &self.caption {
            let _ = writeln!(o, "<p class=\"note\">{}</p>", escape(c));
        }
        o.push_str("<table>\n");
        o.push_str("<thead><tr>");
        for (i, h) in self.header.iter().enumerate() {
            let _ = write!(o, "<th{}>{}</th>", self.class(i), escape(h));
        }
        o.push_str("</tr></thead>\n<tbody>\n");
        for (cells, class) in &self.rows {
            match class {
                Some(c) => {
                    let _ = write!(o, "<tr class=\"{c}\">");
                }
                None => o.push_str("<tr>"),
            }
            for (i, cell) in cells.iter().enumerate() {
                let _ = write!(o, "<td{}>{}</td>", self.class(i), escape(cell));
            }
            o.push_str("</tr>\n");
        }
        o.push_str("</tbody>\n</table>\n");
    }
}

/// A page under construction: sections of headings, paragraphs, tables and figures.
#[derive(Debug, Default)]
pub struct Page {
    body: String,
    open_section: bool,
}

impl Page {
    /// An empty page.
    pub fn new() -> Page {
        Page::default()
    }

    /// Starts a section with a heading (closing the previous one); `id` names its anchor.
    pub fn section(&mut self, id: &str, heading: &str) {
        self.close_section();
        let _ = writeln!(
            self.body,
            "<section id=\"{}\">\n<h2>{}</h2>",
            escape(id),
            escape(heading)
        );
        self.open_section = true;
    }

    fn close_section(&mut self) {
        if self.open_section {
            self.body.push_str("</section>\n");
            self.open_section = false;
        }
    }

    /// A sub-heading inside the current section.
    pub fn h3(&mut self, text: &str) {
        let _ = writeln!(self.body, "<h3>{}</h3>", escape(text));
    }

    /// A paragraph of plain text.
    pub fn p(&mut self, text: &str) {
        let _ = writeln!(self.body, "<p>{}</p>", escape(text));
    }

    /// A paragraph with a CSS class (`note`, `caution`, `fail`).
    pub fn p_class(&mut self, class: &str, text: &str) {
        let _ = writeln!(
            self.body,
            "<p class=\"{}\">{}</p>",
            escape(class),
            escape(text)
        );
    }

    /// A definition list of (term, value) pairs.
    pub fn facts(&mut self, pairs: &[(String, String)]) {
        self.body.push_str("<dl class=\"facts\">\n");
        for (k, v) in pairs {
            let _ = writeln!(self.body, "<dt>{}</dt><dd>{}</dd>", escape(k), escape(v));
        }
        self.body.push_str("</dl>\n");
    }

    /// A bulleted list of plain-text items.
    pub fn list(&mut self, items: &[String]) {
        self.list_class("", items);
    }

    /// A bulleted list with a CSS class (`files`: in columns).
    pub fn list_class(&mut self, class: &str, items: &[String]) {
        if class.is_empty() {
            self.body.push_str("<ul>\n");
        } else {
            let _ = writeln!(self.body, "<ul class=\"{}\">", escape(class));
        }
        for i in items {
            let _ = writeln!(self.body, "<li>{}</li>", escape(i));
        }
        self.body.push_str("</ul>\n");
    }

    /// A table.
    pub fn table(&mut self, t: &HtmlTable) {
        t.write(&mut self.body);
    }

    /// A figure holding trusted markup (an SVG picture made by this program, without its XML
    /// declaration) and a caption.
    pub fn figure(&mut self, markup: &str, caption: &str) {
        let _ = writeln!(
            self.body,
            "<figure>\n{}\n<figcaption>{}</figcaption>\n</figure>",
            strip_xml_declaration(markup).trim(),
            escape(caption)
        );
    }

    /// The complete document with `title` and a header block of trusted markup.
    pub fn finish(mut self, title: &str, header: &str) -> String {
        self.close_section();
        let mut o = String::with_capacity(self.body.len() + 8192);
        o.push_str("<!DOCTYPE html>\n");
        let _ = writeln!(
            o,
            "<html xmlns=\"{XHTML_NAMESPACE}\" lang=\"en\" xml:lang=\"en\">"
        );
        o.push_str("<head>\n<meta charset=\"utf-8\"/>\n");
        o.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n");
        let _ = writeln!(o, "<title>{}</title>", escape(title));
        let _ = writeln!(o, "<style>{STYLE}</style>");
        o.push_str("</head>\n<body>\n<main>\n");
        o.push_str(header);
        o.push_str(&self.body);
        o.push_str("</main>\n</body>\n</html>\n");
        o
    }
}

/// `svg` without a leading `<?xml …?>` declaration or doctype (not allowed inside HTML).
pub fn strip_xml_declaration(svg: &str) -> &str {
    let mut s = svg.trim_start();
    for prefix in ["<?xml", "<!DOCTYPE"] {
        if s.starts_with(prefix)
            && let Some(end) = s.find('>')
        {
            s = s[end + 1..].trim_start();
        }
    }
    s
}

/// The style sheet: a plain, dense technical page on screen, A4 portrait in print.
const STYLE: &str = r#"
:root { --ink: #1d232a; --muted: #59636e; --rule: #c9d0d6; --band: #f2f4f6; --accent: #20566f; --bad: #9b1c1c; --warn: #7a5200; }
* { box-sizing: border-box; }
html { color: var(--ink); background: #fff; }
body { margin: 0; font: 14px/1.45 "Segoe UI", "Helvetica Neue", Arial, sans-serif; }
main { max-width: 60rem; margin: 0 auto; padding: 1.5rem 1.25rem 3rem; }
header.page { border-bottom: 3px solid var(--accent); padding-bottom: 0.6rem; margin-bottom: 1rem; }
header.page h1 { font-size: 1.55rem; margin: 0 0 0.2rem; }
header.page p { margin: 0.1rem 0; color: var(--muted); }
h2 { font-size: 1.12rem; color: var(--accent); border-bottom: 1px solid var(--rule); padding-bottom: 0.15rem; margin: 1.6rem 0 0.5rem; }
h3 { font-size: 0.98rem; margin: 1rem 0 0.35rem; }
p { margin: 0.35rem 0; }
p.note { color: var(--muted); font-size: 0.9em; }
.caution { border-left: 5px solid var(--warn); background: #fbf6ea; padding: 0.5rem 0.8rem; margin: 0.8rem 0; }
p.fail, tr.fail td { color: var(--bad); font-weight: 600; }
tr.warn td { color: var(--warn); }
tr.total td { border-top: 1.5px solid var(--ink); font-weight: 600; }
table { border-collapse: collapse; margin: 0.4rem 0 0.8rem; font-size: 0.92em; }
ul.files { columns: 3 14rem; font-size: 0.9em; }
th, td { padding: 0.18rem 0.6rem 0.18rem 0; text-align: left; vertical-align: top; }
th { border-bottom: 1.5px solid var(--ink); font-weight: 600; white-space: nowrap; }
td { border-bottom: 1px solid var(--rule); }
tbody tr:nth-child(even) td { background: var(--band); }
.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; padding-left: 0.8rem; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 0.1rem 1rem; margin: 0.4rem 0 0.8rem; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; font-variant-numeric: tabular-nums; }
figure { margin: 0.6rem 0 1rem; }
figure svg { width: 100%; height: auto; display: block; border: 1px solid var(--rule); }
figcaption { color: var(--muted); font-size: 0.9em; margin-top: 0.25rem; }
ul { margin: 0.3rem 0 0.8rem; padding-left: 1.3rem; }
footer { margin-top: 2rem; border-top: 1px solid var(--rule); color: var(--muted); font-size: 0.85em; padding-top: 0.4rem; }
@page { size: A4 portrait; margin: 16mm 14mm 18mm 16mm; }
@media print {
  html { font-size: 9.5pt; }
  body { font-size: 9.5pt; }
  main { max-width: none; padding: 0; }
  h2 { break-after: avoid-page; page-break-after: avoid; margin-top: 1.1rem; }
  h3 { break-after: avoid-page; page-break-after: avoid; }
  table, figure, dl.facts, .caution { break-inside: avoid-page; page-break-inside: avoid; }
  thead { display: table-header-group; }
  tbody tr:nth-child(even) td { background: none; }
  figure svg { max-height: 150mm; }
}
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_drops_control_characters() {
        assert_eq!(
            escape("a<b & \"c\" 'd'>\u{1b}[0m\u{0}"),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;[0m"
        );
    }

    #[test]
    fn strips_a_leading_xml_declaration() {
        assert_eq!(
            strip_xml_declaration("<?xml version=\"1.0\"?>\n<svg/>"),
            "<svg/>"
        );
        assert_eq!(strip_xml_declaration("<svg/>"), "<svg/>");
    }

    #[test]
    fn tables_close_every_element() {
        let mut t = HtmlTable::new(&["a", "b"], "lr");
        t.row(vec!["x<".into(), "1".into()]);
        let mut o = String::new();
        t.write(&mut o);
        assert_eq!(o.matches("<tr").count(), o.matches("</tr>").count());
        assert!(o.contains("<td>x&lt;</td><td class=\"num\">1</td>"));
    }
}
