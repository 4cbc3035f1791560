//! Sampling a solved grid model: the temperature at any point (bilinear in a cell, else the
//! nearest node).

use super::{GridSolution, NONE};

impl GridSolution {
    fn node(&self, i: i64, j: i64) -> Option<usize> {
        if i < 0 || j < 0 || i as usize >= self.nx || j as usize >= self.ny {
            return None;
        }
        let n = self.node_at[j as usize * self.nx + i as usize];
        (n != NONE).then_some(n as usize)
    }

    /// Temperature at p, °C: bilinear within a grid cell whose centre is inside the section
    /// and whose four corners are nodes; else the nearest node within one spacing; else `None`.
    pub fn temperature_at(&self, p: [f64; 2]) -> Option<f64> {
        if !p[0].is_finite() || !p[1].is_finite() {
            return None;
        }
        let h = self.spacing;
        let fx = (p[0] - self.origin[0]) / h;
        let fy = (p[1] - self.origin[1]) / h;
        if fx < -1.0 || fy < -1.0 || fx > self.nx as f64 || fy > self.ny as f64 {
            return None;
        }
        let ci = (fx.floor() as i64).clamp(0, self.nx as i64 - 2);
        let cj = (fy.floor() as i64).clamp(0, self.ny as i64 - 2);
        let (u, v) = (fx - ci as f64, fy - cj as f64);
        if (0.0..=1.0).contains(&u) && (0.0..=1.0).contains(&v) {
            let corners = [
                self.node(ci, cj),
                self.node(ci + 1, cj),
                self.node(ci, cj + 1),
                self.node(ci + 1, cj + 1),
            ];
            let inside = self.cell_inside[cj as usize * (self.nx - 1) + ci as usize];
            if let (true, [Some(a), Some(b), Some(c), Some(d)]) = (inside, corners) {
                let t = &self.temperature;
                return Some(
                    (1.0 - u) * (1.0 - v) * t[a]
                        + u * (1.0 - v) * t[b]
                        + (1.0 - u) * v * t[c]
                        + u * v * t[d],
                );
            }
        }
        let (bi, bj) = (fx.round() as i64, fy.round() as i64);
        let mut best: Option<(f64, usize)> = None;
        for j in bj - 1..=bj + 1 {
            for i in bi - 1..=bi + 1 {
                if let Some(n) = self.node(i, j) {
                    let d = ((fx - i as f64).powi(2) + (fy - j as f64).powi(2)).sqrt() * h;
                    if d <= h && best.is_none_or(|(bd, _)| d < bd) {
                        best = Some((d, n));
                    }
                }
            }
        }
        best.map(|(_, n)| self.temperature[n])
    }
}
