//! The drawing surface of every picture: SVG elements in pixel units (the picture's size is
//! its viewBox), text set in the bundled font, label boxes that keep labels apart, and the
//! two encodings — the SVG file (text converted to outlines by usvg, so no viewer needs the
//! font; an optional raster embedded as a PNG data URI) and the PNG (tiny-skia, the raster
//! drawn pixel for pixel, the vector layer rendered by resvg over it).
//!
//! The font is DejaVu Sans (`assets/fonts/DejaVuSans.ttf`, Bitstream Vera licence with DejaVu
//! changes in the public domain, `assets/fonts/LICENSE-DejaVu.txt`); no system font is read.

use crate::error::{Error, Result};
use resvg::tiny_skia::{self, Pixmap, PixmapPaint, Transform};
use resvg::usvg;
use std::fmt::Write as _;
use std::sync::Arc;

/// The bundled font file.
pub const FONT: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
/// Its family name, as SVG text refers to it.
pub const FONT_FAMILY: &str = "DejaVu Sans";
/// Mean advance of DejaVu Sans per em for digits and lower-case text (for label boxes).
const EM_ADVANCE: f64 = 0.6;

/// A number in SVG coordinates: two decimals, no trailing zeros.
pub fn num(x: f64) -> String {
    let s = format!("{:.2}", if x.abs() < 0.005 { 0.0 } else { x });
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// XML text with `&`, `<`, `>` and `"` escaped.
pub fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Where a text's anchor point is on it, horizontally.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Anchor {
    /// Left end.
    Start,
    /// Centre.
    Middle,
    /// Right end.
    End,
}

impl Anchor {
    fn as_str(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

/// One line of text to set.
#[derive(Debug, Clone, PartialEq)]
pub struct Text<'a> {
    /// Anchor point, px (baseline middle for [`Anchor::Middle`] with `centred`).
    pub at: [f64; 2],
    /// Font size, px.
    pub size: f64,
    /// Horizontal anchor.
    pub anchor: Anchor,
    /// Rotation about `at`, degrees (clockwise on screen).
    pub rotate: f64,
    /// Draw a white halo behind the glyphs (text over the field).
    pub halo: bool,
    /// Bold-looking weight (drawn with a thin stroke in the text colour).
    pub strong: bool,
    /// Vertically centred on `at` instead of sitting on it.
    pub centred: bool,
    /// The text.
    pub content: &'a str,
}

impl<'a> Text<'a> {
    /// Plain text of `size` px at `at`, left-aligned, no halo.
    pub fn new(at: [f64; 2], size: f64, content: &'a str) -> Self {
        Text {
            at,
            size,
            anchor: Anchor::Start,
            rotate: 0.0,
            halo: false,
            strong: false,
            centred: false,
            content,
        }
    }
}

/// Estimated box `[x0, y0, x1, y1]` of an unrotated text, px.
pub fn text_box(t: &Text) -> [f64; 4] {
    let w = EM_ADVANCE * t.size * t.content.chars().count() as f64;
    let x0 = match t.anchor {
        Anchor::Start => t.at[0],
        Anchor::Middle => t.at[0] - w / 2.0,
        Anchor::End => t.at[0] - w,
    };
    let (top, bottom) = if t.centred {
        (t.at[1] - 0.55 * t.size, t.at[1] + 0.45 * t.size)
    } else {
        (t.at[1] - 0.8 * t.size, t.at[1] + 0.2 * t.size)
    };
    [x0, top, x0 + w, bottom]
}

/// Boxes already taken by labels and other furniture; a new label goes where it overlaps none.
#[derive(Debug, Clone, Default)]
pub struct Occupied {
    boxes: Vec<[f64; 4]>,
}

impl Occupied {
    /// Marks `b` (grown by `pad` px) as taken.
    pub fn take(&mut self, b: [f64; 4], pad: f64) {
        self.boxes
            .push([b[0] - pad, b[1] - pad, b[2] + pad, b[3] + pad]);
    }
    /// True when `b` overlaps no taken box.
    pub fn is_free(&self, b: [f64; 4]) -> bool {
        self.boxes
            .iter()
            .all(|o| b[2] <= o[0] || b[0] >= o[2] || b[3] <= o[1] || b[1] >= o[3])
    }
}

/// A picture being drawn: vector elements and text, both in pixel units.
#[derive(Debug, Clone)]
pub struct Canvas {
    width: u32,
    height: u32,
    body: String,
    text: String,
}

impl Canvas {
    /// An empty `width` × `height` px picture (white background).
    pub fn new(width: u32, height: u32) -> Self {
        Canvas {
            width,
            height,
            body: String::new(),
            text: String::new(),
        }
    }

    /// Appends raw SVG (an element built by the caller from [`num`] and [`escape`]).
    pub fn raw(&mut self, element: &str) {
        self.body.push_str(element);
        self.body.push('\n');
    }

    /// An open or closed polyline path of pixel points.
    pub fn polyline(&mut self, points: &[[f64; 2]], style: &str) {
        if points.len() < 2 {
            return;
        }
        let mut d = String::new();
        path_data(&mut d, points);
        let _ = writeln!(self.body, r#"<path d="{d}" fill="none" {style}/>"#);
    }

    /// Sets a line of text in the bundled font.
    pub fn text(&mut self, t: &Text) {
        let mut attrs = format!(
            r#"x="{}" y="{}" font-size="{}" text-anchor="{}""#,
            num(t.at[0]),
            num(t.at[1]),
            num(t.size),
            t.anchor.as_str()
        );
        if t.centred {
            attrs.push_str(r#" dominant-baseline="central""#);
        }
        if t.rotate != 0.0 {
            let _ = write!(
                attrs,
                r#" transform="rotate({} {} {})""#,
                num(t.rotate),
                num(t.at[0]),
                num(t.at[1])
            );
        }
        let paint = match (t.halo, t.strong) {
            (true, _) => format!(
                r##"fill="#111" stroke="#fff" stroke-width="{}" stroke-linejoin="round" paint-order="stroke""##,
                num(t.size * 0.22)
            ),
            (false, true) => format!(
                r##"fill="#111" stroke="#111" stroke-width="{}""##,
                num(t.size * 0.035)
            ),
            (false, false) => r##"fill="#111""##.to_string(),
        };
        let _ = writeln!(
            self.text,
            r#"<text {attrs} {paint}>{}</text>"#,
            escape(t.content)
        );
    }

    fn header(&self) -> String {
        format!(
            r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="{FONT_FAMILY}">"#,
            w = self.width,
            h = self.height
        )
    }

    /// The SVG file: white background, the raster (if any) at its integer pixel offset as a PNG
    /// data URI, the vector layer, the text as outlines.
    pub fn svg(&self, raster: Option<(&Pixmap, [u32; 2])>) -> Result<Vec<u8>> {
        let mut out = self.header();
        out.push('\n');
        let _ = writeln!(
            out,
            r##"<rect x="0" y="0" width="{}" height="{}" fill="#fff"/>"##,
            self.width, self.height
        );
        if let Some((pm, [x, y])) = raster {
            let png = pm
                .encode_png()
                .map_err(|e| Error::run(format!("cannot encode the field raster: {e}")))?;
            let mut b64 = Vec::new();
            crate::output::vtk::base64_into(&mut b64, &png);
            let _ = writeln!(
                out,
                r#"<image x="{x}" y="{y}" width="{}" height="{}" preserveAspectRatio="none" style="image-rendering:pixelated" href="data:image/png;base64,{}"/>"#,
                pm.width(),
                pm.height(),
                String::from_utf8_lossy(&b64)
            );
        }
        out.push_str(&self.body);
        out.push_str(&self.text_outlines()?);
        out.push_str("</svg>\n");
        Ok(out.into_bytes())
    }

    /// The text layer as outlines: parsed by usvg with the bundled font only and written back
    /// (usvg's writer turns text into paths); the root element is stripped.
    fn text_outlines(&self) -> Result<String> {
        if self.text.is_empty() {
            return Ok(String::new());
        }
        let src = format!("{}\n{}</svg>\n", self.header(), self.text);
        let tree = parse(&src)?;
        let written = tree.to_string(&usvg::WriteOptions {
            indent: usvg::Indent::None,
            ..usvg::WriteOptions::default()
        });
        let start = written.find('>').map_or(0, |i| i + 1);
        let end = written.rfind("</svg>").unwrap_or(written.len());
        let mut inner = written[start..end].to_string();
        if !inner.ends_with('\n') {
            inner.push('\n');
        }
        Ok(inner)
    }

    /// The PNG: white, the raster (if any) copied pixel for pixel, the vector layer and the text
    /// rendered by resvg over it.
    pub fn png(&self, raster: Option<(&Pixmap, [u32; 2])>) -> Result<Vec<u8>> {
        let mut pm = Pixmap::new(self.width, self.height)
            .ok_or_else(|| Error::run("cannot allocate the picture"))?;
        pm.fill(tiny_skia::Color::WHITE);
        if let Some((r, [x, y])) = raster {
            pm.draw_pixmap(
                x as i32,
                y as i32,
                r.as_ref(),
                &PixmapPaint::default(),
                Transform::identity(),
                None,
            );
        }
        let src = format!("{}\n{}{}</svg>\n", self.header(), self.body, self.text);
        let tree = parse(&src)?;
        resvg::render(&tree, Transform::identity(), &mut pm.as_mut());
        pm.encode_png()
            .map_err(|e| Error::run(format!("cannot encode the picture as PNG: {e}")))
    }
}

/// `M x y L x y …` of pixel points.
pub fn path_data(d: &mut String, points: &[[f64; 2]]) {
    for (i, p) in points.iter().enumerate() {
        let _ = write!(
            d,
            "{}{} {}",
            if i == 0 { "M" } else { "L" },
            num(p[0]),
            num(p[1])
        );
    }
}

/// Parses SVG source with the bundled font as the only font.
fn parse(src: &str) -> Result<usvg::Tree> {
    let mut db = usvg::fontdb::Database::new();
    db.load_font_data(FONT.to_vec());
    db.set_sans_serif_family(FONT_FAMILY);
    let options = usvg::Options {
        font_family: FONT_FAMILY.to_string(),
        fontdb: Arc::new(db),
        ..usvg::Options::default()
    };
    usvg::Tree::from_str(src, &options)
        .map_err(|e| Error::run(format!("internal: picture SVG does not parse: {e}")))
}
