//! Where things go on a picture: the plot area, the mapping from the section plane (m) to
//! pixels, and the furniture around the field — title, colour bar with units, scale bar.

use super::canvas::{Canvas, Occupied, Text, num, text_box};
use super::colormap;
use super::raster::Frame;
use std::fmt::Write as _;

/// The picture's size in pixels (`--plot-size WxH`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PlotSize {
    /// px
    pub width: u32,
    /// px
    pub height: u32,
}

/// Smallest and largest side `--plot-size` accepts, px.
pub const PLOT_SIDE_RANGE: (u32, u32) = (320, 8000);

impl Default for PlotSize {
    fn default() -> Self {
        PlotSize {
            width: 1600,
            height: 1000,
        }
    }
}

impl PlotSize {
    /// Parses `WxH` (also `W×H`, `WXH`), both whole numbers of pixels from 320 to 8000.
    pub fn parse(s: &str) -> crate::Result<Self> {
        let bad = |why: &str| {
            crate::Error::input(format!(
                "--plot-size {s}: {why}; give WIDTHxHEIGHT in pixels, each {} to {}, e.g. 1600x1000",
                PLOT_SIDE_RANGE.0, PLOT_SIDE_RANGE.1
            ))
        };
        let parts: Vec<&str> = s.split(['x', 'X', '×']).collect();
        let [w, h] = parts[..] else {
            return Err(bad("not of the form WIDTHxHEIGHT"));
        };
        let side = |v: &str| -> crate::Result<u32> {
            let n: u32 = v
                .trim()
                .parse()
                .map_err(|_| bad("a side is not a whole number"))?;
            if !(PLOT_SIDE_RANGE.0..=PLOT_SIDE_RANGE.1).contains(&n) {
                return Err(bad("a side is out of range"));
            }
            Ok(n)
        };
        Ok(PlotSize {
            width: side(w)?,
            height: side(h)?,
        })
    }
}

/// The geometry of one picture: sizes scaled with it, the plot area and the section's place.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Layout {
    /// Picture size.
    pub size: PlotSize,
    /// Unit of furniture sizes: 1 at 1600 × 1000 px.
    pub u: f64,
    /// Plot area `[x0, y0, x1, y1]`, px.
    pub area: [f64; 4],
    /// The section's raster frame (model → raster pixels).
    pub frame: Frame,
    /// Where the raster's top-left pixel is on the picture, px (integers).
    pub offset: [u32; 2],
}

impl Layout {
    /// Lays out a picture of `size` for a section with bounding box `bbox` (`[xmin, ymin, xmax,
    /// ymax]`, m), leaving `right` px (× u) for a colour bar or legend.
    pub fn new(size: PlotSize, bbox: [f64; 4], right: f64) -> Self {
        let (w, h) = (f64::from(size.width), f64::from(size.height));
        // Text stays legible on small pictures: furniture never shrinks below 3/4 size.
        let u = (w / 1600.0).min(h / 1000.0).max(0.75);
        let area = [56.0 * u, 112.0 * u, w - right * u, h - 76.0 * u];
        let (bw, bh) = (
            (bbox[2] - bbox[0]).max(1e-300),
            (bbox[3] - bbox[1]).max(1e-300),
        );
        let scale = ((area[2] - area[0]) / bw).min((area[3] - area[1]) / bh);
        let ox = (area[0] + ((area[2] - area[0]) - bw * scale) / 2.0)
            .floor()
            .max(0.0);
        let oy = (area[1] + ((area[3] - area[1]) - bh * scale) / 2.0)
            .floor()
            .max(0.0);
        let frame = Frame {
            x0: bbox[0],
            y0: bbox[3],
            scale,
            width: ((bw * scale).ceil() as u32 + 1).min(size.width - ox as u32),
            height: ((bh * scale).ceil() as u32 + 1).min(size.height - oy as u32),
        };
        Layout {
            size,
            u,
            area,
            frame,
            offset: [ox as u32, oy as u32],
        }
    }

    /// Picture pixel coordinates of model point `p`.
    pub fn px(&self, p: [f64; 2]) -> [f64; 2] {
        let q = self.frame.to_pixel(p);
        [
            q[0] + f64::from(self.offset[0]),
            q[1] + f64::from(self.offset[1]),
        ]
    }

    /// Model point at picture pixel coordinates `q`.
    pub fn model(&self, q: [f64; 2]) -> [f64; 2] {
        self.frame.to_model([
            q[0] - f64::from(self.offset[0]),
            q[1] - f64::from(self.offset[1]),
        ])
    }

    /// The box of the column right of the plot area (colour bar or legend) and of the scale
    /// bar, kept free of labels.
    pub fn furniture(&self) -> [f64; 4] {
        let (w, h) = (f64::from(self.size.width), f64::from(self.size.height));
        [self.area[2] + 20.0 * self.u, 0.0, w, h]
    }

    /// Title and subtitle at the top left.
    pub fn title(&self, c: &mut Canvas, occupied: &mut Occupied, title: &str, subtitle: &str) {
        let u = self.u;
        let mut t = Text::new([40.0 * u, 46.0 * u], 28.0 * u, title);
        t.strong = true;
        c.text(&t);
        occupied.take(text_box(&t), 0.0);
        let s = Text::new([40.0 * u, 76.0 * u], 16.0 * u, subtitle);
        c.text(&s);
        occupied.take(text_box(&s), 0.0);
    }

    /// A scale bar of a round length (1, 2 or 5 × 10ⁿ m) at the bottom left.
    pub fn scale_bar(&self, c: &mut Canvas) {
        let u = self.u;
        let target = 0.22 * (self.area[2] - self.area[0]) / self.frame.scale;
        let e = target.log10().floor();
        let base = 10f64.powf(e);
        let len = [5.0, 2.0, 1.0]
            .into_iter()
            .map(|m| m * base)
            .find(|&l| l <= target)
            .unwrap_or(base);
        let len_px = len * self.frame.scale;
        let (x, y) = (40.0 * u, f64::from(self.size.height) - 36.0 * u);
        let tick = 7.0 * u;
        c.raw(&format!(
            r##"<path d="M{x0} {y0}L{x0} {y1}L{x1} {y1}L{x1} {y0}" fill="none" stroke="#111" stroke-width="{sw}"/>"##,
            x0 = num(x),
            x1 = num(x + len_px),
            y0 = num(y - tick),
            y1 = num(y),
            sw = num(2.0 * u)
        ));
        let label = format!("{} m", crate::text::format_f64(len));
        c.text(&Text::new([x + len_px + 10.0 * u, y], 15.0 * u, &label));
    }

    /// The colour bar on the right: the map from `lo` (bottom) to `hi` (top), ticks at the
    /// isotherm `levels` labelled with `decimals` decimals where they do not crowd, the extremes
    /// labelled, the unit on top.
    pub fn colour_bar(&self, c: &mut Canvas, lo: f64, hi: f64, levels: &[f64], decimals: usize) {
        let u = self.u;
        let (w, h) = (f64::from(self.size.width), f64::from(self.size.height));
        let x = w - 150.0 * u;
        let (top, bottom) = (130.0 * u, h - 130.0 * u);
        let bw = 26.0 * u;
        let mut stops = String::new();
        for k in 0..=32 {
            let f = f64::from(k) / 32.0;
            let _ = write!(
                stops,
                r#"<stop offset="{}" stop-color="{}"/>"#,
                num(f),
                colormap::viridis_hex(1.0 - f)
            );
        }
        c.raw(&format!(
            r#"<defs><linearGradient id="bar" x1="0" y1="0" x2="0" y2="1">{stops}</linearGradient></defs>"#
        ));
        c.raw(&format!(
            r##"<rect x="{}" y="{}" width="{}" height="{}" fill="url(#bar)" stroke="#111" stroke-width="{}"/>"##,
            num(x),
            num(top),
            num(bw),
            num(bottom - top),
            num(u)
        ));
        let mut head = Text::new([x, top - 36.0 * u], 16.0 * u, "Temperature");
        head.strong = true;
        c.text(&head);
        c.text(&Text::new([x, top - 14.0 * u], 16.0 * u, "°C"));
        let y_of = |t: f64| bottom - (bottom - top) * super::raster::fraction(t, lo, hi);
        let size = 14.0 * u;
        let label_x = x + bw + 8.0 * u;
        let mut taken: Vec<f64> = Vec::new();
        for (t, d) in [(hi, decimals + 1), (lo, decimals + 1)] {
            let y = y_of(t);
            let mut tx = Text::new([label_x, y], size, "");
            let s = crate::text::fixed(t, d.min(6)).replace('-', "−");
            tx.content = &s;
            tx.centred = true;
            tx.strong = true;
            c.text(&tx);
            taken.push(y);
        }
        let mut ticks = String::new();
        for &t in levels {
            let y = y_of(t);
            let _ = write!(
                ticks,
                "M{} {}L{} {}",
                num(x),
                num(y),
                num(x + bw + 5.0 * u),
                num(y)
            );
            if taken.iter().all(|&o| (o - y).abs() >= 1.3 * size) {
                let s = crate::text::fixed(t, decimals).replace('-', "−");
                let mut tx = Text::new([label_x, y], size, &s);
                tx.centred = true;
                c.text(&tx);
                taken.push(y);
            }
        }
        if !ticks.is_empty() {
            c.raw(&format!(
                r##"<path d="{ticks}" stroke="#111" stroke-width="{}"/>"##,
                num(u)
            ));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plot_sizes_parse_and_nonsense_is_refused() {
        assert_eq!(
            PlotSize::parse("800x600").expect("ok"),
            PlotSize {
                width: 800,
                height: 600
            }
        );
        assert_eq!(PlotSize::parse("1200×900").expect("ok").height, 900);
        for bad in [
            "", "800", "800x", "x600", "0x600", "800x-1", "1e3x600", "100x100", "9000x600", "8x6x4",
        ] {
            let e = PlotSize::parse(bad).expect_err(bad);
            assert_eq!(e.exit_code(), 2);
            assert!(e.to_string().contains("--plot-size"), "{e}");
        }
    }
}
