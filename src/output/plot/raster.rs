//! The filled temperature map as a raster: our own scan conversion of the mesh's triangles
//! with per-pixel linear interpolation of the nodal temperatures (the P1 field itself), each
//! pixel coloured by the map at its centre. Pixels no triangle covers (holes, outside the
//! section) stay transparent. The cost is one pass over the triangles plus one evaluation per
//! covered pixel, whatever the mesh size, so a 1M-triangle field draws in well under a second
//! (measured by `examples/plot_bench.rs`).

use super::colormap;
use crate::mesh::Mesh;
use resvg::tiny_skia::{Pixmap, PremultipliedColorU8};

/// How model coordinates map to pixels: pixel (i, j) (column, row from the top) has its
/// centre at x = `x0` + (i + ½)/`scale`, y = `y0` − (j + ½)/`scale`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Frame {
    /// Model x of the raster's left edge, m.
    pub x0: f64,
    /// Model y of the raster's top edge, m.
    pub y0: f64,
    /// Pixels per metre.
    pub scale: f64,
    /// Raster width, pixels.
    pub width: u32,
    /// Raster height, pixels.
    pub height: u32,
}

impl Frame {
    /// Pixel coordinates (continuous; pixel centres at half-integers) of model point `p`.
    pub fn to_pixel(&self, p: [f64; 2]) -> [f64; 2] {
        [(p[0] - self.x0) * self.scale, (self.y0 - p[1]) * self.scale]
    }

    /// Model point at pixel coordinates `q`.
    pub fn to_model(&self, q: [f64; 2]) -> [f64; 2] {
        [self.x0 + q[0] / self.scale, self.y0 - q[1] / self.scale]
    }
}

/// The colour-map fraction of temperature `t` on the range `lo..hi`.
pub fn fraction(t: f64, lo: f64, hi: f64) -> f64 {
    if hi > lo { (t - lo) / (hi - lo) } else { 0.5 }
}

/// Rasterises the field `temperature` (per node) of `mesh` into a `frame.width` ×
/// `frame.height` pixmap, coloured by viridis over `lo..hi`; uncovered pixels transparent.
/// `None` for a zero-sized frame.
pub fn field_raster(
    mesh: &Mesh,
    temperature: &[f64],
    frame: &Frame,
    lo: f64,
    hi: f64,
) -> Option<Pixmap> {
    let mut pixmap = Pixmap::new(frame.width, frame.height)?;
    let (w, h) = (frame.width as usize, frame.height as usize);
    let pixels = pixmap.pixels_mut();
    for tri in &mesh.triangles {
        // Vertices in "centre index" coordinates: pixel (i, j) centre at (i, j).
        let v = tri.map(|n| {
            let q = frame.to_pixel(mesh.nodes[n]);
            [q[0] - 0.5, q[1] - 0.5]
        });
        let t = tri.map(|n| temperature[n]);
        let area =
            (v[1][0] - v[0][0]) * (v[2][1] - v[0][1]) - (v[2][0] - v[0][0]) * (v[1][1] - v[0][1]);
        if area == 0.0 || !area.is_finite() {
            continue;
        }
        let ymin = v.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min);
        let ymax = v.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max);
        let xmin = v.iter().map(|p| p[0]).fold(f64::INFINITY, f64::min);
        let xmax = v.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max);
        let j0 = ymin.ceil().max(0.0) as usize;
        let j1 = (ymax.floor().min(h as f64 - 1.0)).max(-1.0);
        let i0 = xmin.ceil().max(0.0) as usize;
        let i1 = (xmax.floor().min(w as f64 - 1.0)).max(-1.0);
        if j1 < 0.0 || i1 < 0.0 {
            continue;
        }
        let (j1, i1) = (j1 as usize, i1 as usize);
        // Barycentric weight k at (x, y): edge function of the opposite edge / area.
        let weight = |k: usize, x: f64, y: f64| {
            let (a, b) = (v[(k + 1) % 3], v[(k + 2) % 3]);
            ((b[0] - a[0]) * (y - a[1]) - (x - a[0]) * (b[1] - a[1])) / area
        };
        let tol = -1e-9;
        for j in j0..=j1 {
            let y = j as f64;
            for i in i0..=i1 {
                let x = i as f64;
                let l = [weight(0, x, y), weight(1, x, y), weight(2, x, y)];
                if l[0] < tol || l[1] < tol || l[2] < tol {
                    continue;
                }
                let value = l[0] * t[0] + l[1] * t[1] + l[2] * t[2];
                let [r, g, b] = colormap::viridis_u8(fraction(value, lo, hi));
                if let Some(c) = PremultipliedColorU8::from_rgba(r, g, b, 255) {
                    pixels[j * w + i] = c;
                }
            }
        }
    }
    Some(pixmap)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_pixel_centre_inside_gets_the_map_colour_of_the_interpolated_field() {
        // Unit square, T = 10·x + 5·y; 20 × 20 pixels over it.
        let mesh = crate::fem::testutil::rectangle_mesh(1.0, 1.0, 3, 2, [None; 4], |_| 0);
        let t: Vec<f64> = mesh
            .nodes
            .iter()
            .map(|p| 10.0 * p[0] + 5.0 * p[1])
            .collect();
        let frame = Frame {
            x0: 0.0,
            y0: 1.0,
            scale: 20.0,
            width: 20,
            height: 20,
        };
        let pm = field_raster(&mesh, &t, &frame, 0.0, 15.0).expect("pixmap");
        for j in 0..20 {
            for i in 0..20 {
                let p = frame.to_model([i as f64 + 0.5, j as f64 + 0.5]);
                let want = colormap::viridis_u8((10.0 * p[0] + 5.0 * p[1]) / 15.0);
                let c = pm.pixel(i, j).expect("pixel");
                assert_eq!(
                    [c.red(), c.green(), c.blue(), c.alpha()],
                    [want[0], want[1], want[2], 255]
                );
            }
        }
    }
}
