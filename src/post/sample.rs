//! Probes and line profiles: the solved field evaluated at points of the section, with points
//! just outside the discretised boundary taken at the nearest boundary point (and a warning).

use super::{LineResult, LineSample, Locator, Placement, ProbeResult};
use crate::error::{Error, Result};
use crate::model::{Line, Section};

/// Evaluates the nodal temperature and recovered heat flux at points of a section.
pub struct Sampler<'a> {
    section: &'a Section,
    locator: &'a Locator<'a>,
    temperature: Vec<[f64; 1]>,
    nodal_flux: &'a [[f64; 2]],
}

impl<'a> Sampler<'a> {
    /// A sampler of the given nodal temperatures (°C) and recovered fluxes (W/m²) on a checked
    /// mesh, locating points with `locator` (a locator of the same mesh, shared by the solves
    /// on it so that its index is built once).
    pub fn new(
        section: &'a Section,
        locator: &'a Locator<'a>,
        temperature: &[f64],
        nodal_flux: &'a [[f64; 2]],
    ) -> Self {
        Sampler {
            section,
            locator,
            temperature: temperature.iter().map(|&v| [v]).collect(),
            nodal_flux,
        }
    }

    /// The temperature at every probe of the section, in order. A snapped probe adds a
    /// warning; a probe outside the section is an input error naming it.
    pub fn probes(&self, warnings: &mut Vec<String>) -> Result<Vec<ProbeResult>> {
        let mut probes = Vec::with_capacity(self.section.probes.len());
        for (i, probe) in self.section.probes.iter().enumerate() {
            let [x, y] = probe.at;
            let placement = self.locator.place(self.section, probe.at);
            let (at, snapped) = match placement {
                Placement::Inside { .. } => (probe.at, false),
                Placement::Snapped(q) => {
                    warnings.push(format!(
                        "probes[{i}] \"{}\": point ({x}, {y}) lies {:e} m outside the discretised section; evaluated at the nearest boundary point {}",
                        probe.name, q.distance, crate::geom::format_point(q.point)
                    ));
                    (q.point, true)
                }
                Placement::Outside { distance } => {
                    return Err(Error::input(format!(
                        "probes[{i}] \"{}\": point ({x}, {y}) lies outside the section (nearest boundary point {distance} m away)",
                        probe.name
                    )));
                }
            };
            let [value] = self
                .locator
                .interpolate(&placement, &self.temperature)
                .ok_or_else(|| Error::run("internal error: probe placement"))?;
            probes.push(ProbeResult {
                name: probe.name.clone(),
                at: probe.at,
                x: at[0],
                y: at[1],
                temperature: value,
                snapped,
            });
        }
        Ok(probes)
    }

    /// The profile along every line of the section, in order. Samples outside the section are
    /// skipped (with a warning); a line with no sample inside is an input error naming it.
    pub fn lines(&self, warnings: &mut Vec<String>) -> Result<Vec<LineResult>> {
        self.section
            .lines
            .iter()
            .enumerate()
            .map(|(i, line)| self.line(i, line, warnings))
            .collect()
    }

    fn line(&self, i: usize, line: &Line, warnings: &mut Vec<String>) -> Result<LineResult> {
        let name = &line.name;
        let finite = line.from.iter().chain(&line.to).all(|v| v.is_finite());
        if line.samples == 0 || !finite {
            return Err(Error::input(format!(
                "lines[{i}] \"{name}\": needs finite end points and at least one sample"
            )));
        }
        let d = [line.to[0] - line.from[0], line.to[1] - line.from[1]];
        let length = (d[0] * d[0] + d[1] * d[1]).sqrt();
        let mut samples = Vec::with_capacity(line.samples);
        let mut skipped = Vec::new();
        let mut snapped = 0usize;
        let mut snapped_max = 0.0f64;
        for k in 0..line.samples {
            let (f, p) = sample_point(line, d, k);
            let placement = self.locator.place(self.section, p);
            if let Placement::Snapped(q) = placement {
                snapped += 1;
                snapped_max = snapped_max.max(q.distance);
            }
            let (Some([t]), Some([qx, qy])) = (
                self.locator.interpolate(&placement, &self.temperature),
                self.locator.interpolate(&placement, self.nodal_flux),
            ) else {
                skipped.push((k, p));
                continue;
            };
            samples.push(LineSample {
                s: f * length,
                x: p[0],
                y: p[1],
                temperature: t,
                qx,
                qy,
            });
        }
        if samples.is_empty() {
            return Err(Error::input(format!(
                "lines[{i}] \"{name}\": none of its {} samples from {} to {} lies inside the section",
                line.samples,
                crate::geom::format_point(line.from),
                crate::geom::format_point(line.to)
            )));
        }
        if let Some(&(k0, p0)) = skipped.first() {
            warnings.push(format!(
                "lines[{i}] \"{name}\": {} of {} samples lie outside the section and were skipped (the first is sample {k0} at {})",
                skipped.len(),
                line.samples,
                crate::geom::format_point(p0)
            ));
        }
        if snapped > 0 {
            warnings.push(format!(
                "lines[{i}] \"{name}\": {snapped} samples lie up to {snapped_max:e} m outside the discretised section and were evaluated at the nearest boundary point"
            ));
        }
        Ok(LineResult {
            name: name.clone(),
            samples,
            skipped,
        })
    }
}

/// Fraction along the line and position of sample `k` (`d` = end − start); the last sample
/// is exactly the end point.
fn sample_point(line: &Line, d: [f64; 2], k: usize) -> (f64, [f64; 2]) {
    let f = if line.samples > 1 {
        k as f64 / (line.samples - 1) as f64
    } else {
        0.0
    };
    let p = if k + 1 == line.samples && line.samples > 1 {
        line.to
    } else {
        [line.from[0] + f * d[0], line.from[1] + f * d[1]]
    };
    (f, p)
}
