//! `field.svg` / `field.png`: the filled temperature map (raster of the P1 field), isotherms
//! with labels, material interfaces, boundaries with their names, optional heat-flux arrows,
//! probe markers with their values, colour bar, title and scale bar.

use super::canvas::{Anchor, Canvas, Occupied, Text, num, path_data, text_box};
use super::layout::{Layout, PlotSize};
use super::raster;
use crate::error::{Error, Result};
use crate::mesh::{Mesh, RingRef};
use crate::model::Section;
use crate::post::isotherms::{Isotherm, level_decimals};
use crate::post::{Locator, Results};
use std::collections::{BTreeMap, HashMap};
use std::fmt::Write as _;

/// Choices for a field picture.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PlotOptions {
    /// Picture size (`--plot-size`).
    pub size: PlotSize,
    /// Draw heat-flux arrows (`--arrows`).
    pub arrows: bool,
    /// Mark the probes with their values (on by default).
    pub probes: bool,
}

impl Default for PlotOptions {
    fn default() -> Self {
        PlotOptions {
            size: PlotSize::default(),
            arrows: false,
            probes: true,
        }
    }
}

/// A drawn field picture.
#[derive(Debug, Clone)]
pub struct Picture {
    /// field.svg
    pub svg: Vec<u8>,
    /// field.png
    pub png: Vec<u8>,
    /// Where the section lies on the picture.
    pub layout: Layout,
    /// The colour map's range, °C (the field's extremes).
    pub range: [f64; 2],
}

/// What a field picture shows.
#[derive(Debug, Clone, Copy)]
pub struct FieldInputs<'a> {
    /// The validated section (names of boundaries, probes, title).
    pub section: &'a Section,
    /// The mesh solved on.
    pub mesh: &'a Mesh,
    /// The results on it.
    pub results: &'a Results,
    /// Isotherms to draw (levels at the round step `step`).
    pub isotherms: &'a [Isotherm],
    /// Their step, K.
    pub step: f64,
}

/// Draws the field picture; see the module documentation.
pub fn field_picture(input: &FieldInputs, options: &PlotOptions) -> Result<Picture> {
    let (mesh, res) = (input.mesh, input.results);
    let bbox = crate::geom::bbox(mesh.nodes.iter().copied());
    let layout = Layout::new(options.size, bbox, 200.0);
    let (lo, hi) = (res.t_min.value, res.t_max.value);
    let pm = raster::field_raster(mesh, &res.temperature, &layout.frame, lo, hi)
        .ok_or_else(|| Error::run("internal: empty picture raster"))?;
    let mut c = Canvas::new(options.size.width, options.size.height);
    let mut occupied = Occupied::default();
    let decimals = level_decimals(input.step);
    let levels: Vec<f64> = input.isotherms.iter().map(|i| i.temperature).collect();
    let mut subtitle = format!(
        "Temperature, °C, linear on {} triangles",
        group_thousands(mesh.triangles.len())
    );
    if input.step > 0.0 {
        let _ = write!(
            subtitle,
            " · isotherms every {} K",
            crate::text::fixed(input.step, decimals)
        );
    }
    let arrows = if options.arrows {
        flux_arrows(&layout, mesh, res)
    } else {
        None
    };
    if let Some(a) = &arrows {
        let _ = if a.max > a.reference {
            write!(
                subtitle,
                " · arrows: heat flux, full length {} W/m² (longer capped; max {} W/m²)",
                crate::text::sig3(a.reference),
                crate::text::sig3(a.max)
            )
        } else {
            write!(
                subtitle,
                " · arrows: heat flux, longest {} W/m²",
                crate::text::sig3(a.max)
            )
        };
    }
    layout.title(&mut c, &mut occupied, &input.section.title, &subtitle);
    occupied.take(layout.furniture(), 0.0);
    draw_isotherm_lines(&mut c, &layout, input.isotherms);
    draw_interfaces(&mut c, &layout, mesh);
    draw_boundaries(&mut c, &layout, mesh);
    if let Some(Arrows { d, .. }) = &arrows {
        let u = layout.u;
        c.raw(&format!(
            r##"<path d="{d}" fill="none" stroke="#fff" stroke-opacity="0.7" stroke-width="{}" stroke-linecap="round"/>"##,
            num(3.2 * u)
        ));
        c.raw(&format!(
            r##"<path d="{d}" fill="none" stroke="#111" stroke-width="{}" stroke-linecap="round"/>"##,
            num(1.3 * u)
        ));
    }
    if options.probes {
        draw_probes(&mut c, &mut occupied, &layout, res);
    }
    boundary_labels(&mut c, &mut occupied, &layout, input.section, mesh);
    isotherm_labels(&mut c, &mut occupied, &layout, input.isotherms, decimals);
    layout.colour_bar(&mut c, lo, hi, &levels, decimals);
    layout.scale_bar(&mut c);
    let placed = Some((&pm, layout.offset));
    Ok(Picture {
        svg: c.svg(placed)?,
        png: c.png(placed)?,
        layout,
        range: [lo, hi],
    })
}

/// 1234567 → "1,234,567".
pub fn group_thousands(n: usize) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, ch) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

fn draw_isotherm_lines(c: &mut Canvas, layout: &Layout, isotherms: &[Isotherm]) {
    for iso in isotherms {
        let mut d = String::new();
        for line in &iso.lines {
            let pts: Vec<[f64; 2]> = line.iter().map(|&p| layout.px(p)).collect();
            path_data(&mut d, &pts);
        }
        if !d.is_empty() {
            c.raw(&format!(
                r##"<path d="{d}" fill="none" stroke="#000" stroke-opacity="0.55" stroke-width="{}" stroke-linejoin="round"/>"##,
                num(1.1 * layout.u)
            ));
        }
    }
}

/// Mesh edges between triangles of different materials, in triangle order.
pub fn interface_edges(mesh: &Mesh) -> Vec<[usize; 2]> {
    let mut first: HashMap<(usize, usize), usize> = HashMap::with_capacity(mesh.triangles.len());
    let mut out = Vec::new();
    for (t, tri) in mesh.triangles.iter().enumerate() {
        for k in 0..3 {
            let (a, b) = (tri[k], tri[(k + 1) % 3]);
            let key = (a.min(b), a.max(b));
            match first.get(&key) {
                Some(&o) if mesh.material[o] != mesh.material[t] => out.push([a, b]),
                Some(_) => {}
                None => {
                    first.insert(key, t);
                }
            }
        }
    }
    out
}

fn edges_path(layout: &Layout, mesh: &Mesh, edges: impl Iterator<Item = [usize; 2]>) -> String {
    let mut d = String::new();
    for [a, b] in edges {
        path_data(
            &mut d,
            &[layout.px(mesh.nodes[a]), layout.px(mesh.nodes[b])],
        );
    }
    d
}

fn draw_interfaces(c: &mut Canvas, layout: &Layout, mesh: &Mesh) {
    let d = edges_path(layout, mesh, interface_edges(mesh).into_iter());
    if !d.is_empty() {
        c.raw(&format!(
            r##"<path d="{d}" fill="none" stroke="#fff" stroke-opacity="0.85" stroke-width="{}" stroke-linecap="round"/>"##,
            num(1.4 * layout.u)
        ));
    }
}

fn draw_boundaries(c: &mut Canvas, layout: &Layout, mesh: &Mesh) {
    let d = edges_path(layout, mesh, mesh.boundary_edges.iter().map(|e| e.nodes));
    c.raw(&format!(
        r##"<path d="{d}" fill="none" stroke="#111" stroke-width="{}" stroke-linecap="round"/>"##,
        num(1.8 * layout.u)
    ));
}

/// Percentile of the sampled flux magnitudes that sets the full arrow length: a singular
/// corner or a source would otherwise shrink every other arrow to a dot.
const ARROW_REFERENCE_PERCENTILE: f64 = 0.9;

/// Arrows of the cell heat flux sampled on a grid over the section.
struct Arrows {
    /// SVG path data.
    d: String,
    /// Flux drawn at full length, W/m² (the 90th percentile of the samples).
    reference: f64,
    /// Largest sampled flux, W/m².
    max: f64,
}

/// Arrow paths of the cell heat flux on a grid over the section: length proportional to the
/// magnitude up to [`ARROW_REFERENCE_PERCENTILE`] of the samples, longer ones capped at full
/// length; arrows too short to show a shaft are left out. `None` when the field carries no flux.
fn flux_arrows(layout: &Layout, mesh: &Mesh, res: &Results) -> Option<Arrows> {
    let u = layout.u;
    let g = 46.0 * u;
    let locator = Locator::new(mesh);
    let f = layout.frame;
    let (ox, oy) = (f64::from(layout.offset[0]), f64::from(layout.offset[1]));
    let mut samples = Vec::new();
    let (nx, ny) = (
        (f64::from(f.width) / g).floor() as usize,
        (f64::from(f.height) / g).floor() as usize,
    );
    for j in 0..ny.max(1) {
        for i in 0..nx.max(1) {
            let q = [
                ox + (i as f64 + 0.5) * f64::from(f.width) / nx.max(1) as f64,
                oy + (j as f64 + 0.5) * f64::from(f.height) / ny.max(1) as f64,
            ];
            if let Some((t, _)) = locator.locate(layout.model(q)) {
                samples.push((q, res.cell_flux[t]));
            }
        }
    }
    let mut mags: Vec<f64> = samples
        .iter()
        .map(|(_, v)| v[0].hypot(v[1]))
        .filter(|m| m.is_finite() && *m > 0.0)
        .collect();
    mags.sort_by(f64::total_cmp);
    let max = *mags.last()?;
    let at = ((mags.len() - 1) as f64 * ARROW_REFERENCE_PERCENTILE).round() as usize;
    let reference = mags[at.min(mags.len() - 1)];
    let head = 5.0 * u;
    let mut d = String::new();
    for (p, v) in samples {
        let m = v[0].hypot(v[1]);
        if !(m.is_finite() && m > 0.0) {
            continue;
        }
        let len = 0.8 * g * (m / reference).min(1.0);
        if len < 2.2 * head {
            continue;
        }
        // Screen direction: y points down.
        let dir = [v[0] / m, -v[1] / m];
        let a = [p[0] - dir[0] * len / 2.0, p[1] - dir[1] * len / 2.0];
        let b = [p[0] + dir[0] * len / 2.0, p[1] + dir[1] * len / 2.0];
        let side = |s: f64| {
            [
                b[0] - head * dir[0] + s * 0.6 * head * dir[1],
                b[1] - head * dir[1] - s * 0.6 * head * dir[0],
            ]
        };
        path_data(&mut d, &[a, b]);
        path_data(&mut d, &[side(1.0), b, side(-1.0)]);
    }
    Some(Arrows { d, reference, max })
}

fn draw_probes(c: &mut Canvas, occupied: &mut Occupied, layout: &Layout, res: &Results) {
    let u = layout.u;
    for p in &res.probes {
        let at = layout.px([p.x, p.y]);
        c.raw(&format!(
            r##"<circle cx="{}" cy="{}" r="{}" fill="#fff" stroke="#111" stroke-width="{}"/>"##,
            num(at[0]),
            num(at[1]),
            num(4.5 * u),
            num(1.6 * u)
        ));
        occupied.take(
            [
                at[0] - 5.0 * u,
                at[1] - 5.0 * u,
                at[0] + 5.0 * u,
                at[1] + 5.0 * u,
            ],
            0.0,
        );
    }
    for p in &res.probes {
        let at = layout.px([p.x, p.y]);
        let label = format!(
            "{} {} °C",
            p.name,
            crate::text::fixed(p.temperature, 2).replace('-', "−")
        );
        let d = 7.0 * u;
        let candidates = [
            ([at[0] + d, at[1] - d - 2.0 * u], Anchor::Start, 0.0),
            ([at[0] + d, at[1] + d + 2.0 * u], Anchor::Start, 0.0),
            ([at[0] - d, at[1] - d - 2.0 * u], Anchor::End, 0.0),
            ([at[0] - d, at[1] + d + 2.0 * u], Anchor::End, 0.0),
            ([at[0] + 1.3 * d, at[1]], Anchor::Start, 0.0),
            ([at[0] - 1.3 * d, at[1]], Anchor::End, 0.0),
        ];
        place_label(c, occupied, layout, &label, 13.0 * u, &candidates);
    }
}

/// Sets `label` at the first candidate (point, anchor) whose box is free and inside the
/// picture, or at the first candidate when none is.
fn place_label(
    c: &mut Canvas,
    occupied: &mut Occupied,
    layout: &Layout,
    label: &str,
    size: f64,
    candidates: &[([f64; 2], Anchor, f64)],
) -> bool {
    let (w, h) = (f64::from(layout.size.width), f64::from(layout.size.height));
    let text_at = |(at, anchor, rotate): ([f64; 2], Anchor, f64)| {
        let mut t = Text::new(at, size, label);
        t.anchor = anchor;
        t.centred = true;
        t.halo = true;
        t.rotate = rotate;
        t
    };
    for &cand in candidates {
        let t = text_at(cand);
        let b = rotated_box(&t);
        if b[0] >= 2.0 && b[2] <= w - 2.0 && b[1] >= 2.0 && b[3] <= h - 2.0 && occupied.is_free(b) {
            c.text(&t);
            occupied.take(b, 2.0 * layout.u);
            return true;
        }
    }
    false
}

/// One label per named boundary, beside the longest ring segment carrying the name (outside
/// the section: in the hole for a hole, beyond the outline for the outline), trying other
/// segments and places along them when the first is taken.
fn boundary_labels(
    c: &mut Canvas,
    occupied: &mut Occupied,
    layout: &Layout,
    section: &Section,
    mesh: &Mesh,
) {
    let u = layout.u;
    // (boundary, ring, segment) → edges.
    let mut groups: BTreeMap<(usize, usize, usize), Vec<[usize; 2]>> = BTreeMap::new();
    for e in &mesh.boundary_edges {
        if let Some(b) = e.boundary {
            let ring = match e.ring {
                RingRef::Outline => 0,
                RingRef::Hole(i) => i + 1,
            };
            groups
                .entry((b, ring, e.segment))
                .or_default()
                .push(e.nodes);
        }
    }
    for (b, boundary) in section.boundaries.iter().enumerate() {
        let mut runs: Vec<(f64, &Vec<[usize; 2]>)> = groups
            .range((b, 0, 0)..(b + 1, 0, 0))
            .map(|(_, edges)| {
                let len: f64 = edges
                    .iter()
                    .map(|e| {
                        crate::geom::distance(
                            layout.px(mesh.nodes[e[0]]),
                            layout.px(mesh.nodes[e[1]]),
                        )
                    })
                    .sum();
                (len, edges)
            })
            .collect();
        if runs.is_empty() {
            continue;
        }
        runs.sort_by(|a, b| b.0.total_cmp(&a.0));
        let mut candidates = Vec::new();
        for (_, edges) in runs.iter().take(6) {
            for frac in [0.5, 0.25, 0.75] {
                if let Some(c) = label_spot(layout, mesh, edges, frac, 9.0 * u) {
                    candidates.push(c);
                }
            }
        }
        place_label(c, occupied, layout, &boundary.name, 14.0 * u, &candidates);
    }
}

/// A label place `off` px outside the section next to the point at fraction `frac` of a run
/// of collinear boundary edges: the point, the anchor facing away from the edge and the
/// rotation (−90° along a steep edge).
fn label_spot(
    layout: &Layout,
    mesh: &Mesh,
    edges: &[[usize; 2]],
    frac: f64,
    off: f64,
) -> Option<([f64; 2], Anchor, f64)> {
    let first = edges.first()?;
    let (a, b) = (
        layout.px(mesh.nodes[first[0]]),
        layout.px(mesh.nodes[first[1]]),
    );
    let d = [b[0] - a[0], b[1] - a[1]];
    let len = d[0].hypot(d[1]);
    if len <= 0.0 {
        return None;
    }
    let dir = [d[0] / len, d[1] / len];
    // Extent of the run along its direction.
    let proj = |p: [f64; 2]| (p[0] - a[0]) * dir[0] + (p[1] - a[1]) * dir[1];
    let (mut s0, mut s1) = (f64::INFINITY, f64::NEG_INFINITY);
    for e in edges {
        for n in e {
            let s = proj(layout.px(mesh.nodes[*n]));
            s0 = s0.min(s);
            s1 = s1.max(s);
        }
    }
    let s = s0 + frac * (s1 - s0);
    let p = [a[0] + s * dir[0], a[1] + s * dir[1]];
    // Section on the left in the model plane = on the right on screen (y down): outside is
    // the screen-left normal (sy, −sx) negated.
    let n = [-dir[1], dir[0]];
    let size = 14.0 * layout.u;
    // Along a steep edge the name is turned with it (reading upwards) so it needs no margin.
    if n[0].abs() > 0.7 {
        let at = [p[0] + n[0] * (off + 0.5 * size), p[1]];
        return Some((at, Anchor::Middle, -90.0));
    }
    let at = [p[0] + n[0] * off, p[1] + n[1] * (off + 0.5 * size)];
    let anchor = if n[0] > 0.3 {
        Anchor::Start
    } else if n[0] < -0.3 {
        Anchor::End
    } else {
        Anchor::Middle
    };
    Some((at, anchor, 0.0))
}

/// Labels of the isotherm levels: along the longest lines of each level, turned with the line,
/// where they overlap nothing already placed.
fn isotherm_labels(
    c: &mut Canvas,
    occupied: &mut Occupied,
    layout: &Layout,
    isotherms: &[Isotherm],
    decimals: usize,
) {
    let u = layout.u;
    let size = 12.5 * u;
    let f = layout.frame;
    let inner = [
        f64::from(layout.offset[0]),
        f64::from(layout.offset[1]),
        f64::from(layout.offset[0] + f.width),
        f64::from(layout.offset[1] + f.height),
    ];
    for iso in isotherms {
        let label = crate::text::fixed(iso.temperature, decimals).replace('-', "−");
        let mut lines: Vec<(f64, Vec<[f64; 2]>)> = iso
            .lines
            .iter()
            .map(|l| {
                let px: Vec<[f64; 2]> = l.iter().map(|&p| layout.px(p)).collect();
                let len = px
                    .windows(2)
                    .map(|w| crate::geom::distance(w[0], w[1]))
                    .sum();
                (len, px)
            })
            .filter(|(len, _)| *len > 90.0 * u)
            .collect();
        lines.sort_by(|a, b| b.0.total_cmp(&a.0));
        let mut placed = 0;
        for (len, px) in lines.iter().take(4) {
            if placed == 2 {
                break;
            }
            for frac in [0.5, 0.35, 0.65, 0.2, 0.8] {
                let Some((at, angle)) = point_along(px, frac * len, 12.0 * u) else {
                    continue;
                };
                let mut t = Text::new(at, size, &label);
                t.anchor = Anchor::Middle;
                t.centred = true;
                t.halo = true;
                t.rotate = angle;
                let b = rotated_box(&t);
                let inside =
                    b[0] >= inner[0] && b[1] >= inner[1] && b[2] <= inner[2] && b[3] <= inner[3];
                if inside && occupied.is_free(b) {
                    c.text(&t);
                    occupied.take(b, 4.0 * u);
                    placed += 1;
                    break;
                }
            }
        }
    }
}

/// The point at arc length `s` along a pixel polyline and the line's direction there (degrees,
/// kept in (−100°, 80°] so text reads left to right, upwards where steep), from the points `half` px either side.
fn point_along(px: &[[f64; 2]], s: f64, half: f64) -> Option<([f64; 2], f64)> {
    let at = |s: f64| -> Option<[f64; 2]> {
        let mut acc = 0.0;
        for w in px.windows(2) {
            let l = crate::geom::distance(w[0], w[1]);
            if acc + l >= s && l > 0.0 {
                let t = (s - acc) / l;
                return Some([
                    w[0][0] + t * (w[1][0] - w[0][0]),
                    w[0][1] + t * (w[1][1] - w[0][1]),
                ]);
            }
            acc += l;
        }
        None
    };
    let p = at(s)?;
    let (a, b) = (at((s - half).max(0.0))?, at(s + half)?);
    let mut angle = (b[1] - a[1]).atan2(b[0] - a[0]).to_degrees();
    if angle > 80.0 {
        angle -= 180.0;
    } else if angle <= -100.0 {
        angle += 180.0;
    }
    Some((p, angle))
}

/// Axis-aligned box of a text turned about its anchor.
fn rotated_box(t: &Text) -> [f64; 4] {
    let b = text_box(t);
    let (s, c) = t.rotate.to_radians().sin_cos();
    let corners = [[b[0], b[1]], [b[2], b[1]], [b[0], b[3]], [b[2], b[3]]].map(|p| {
        let (dx, dy) = (p[0] - t.at[0], p[1] - t.at[1]);
        [t.at[0] + c * dx - s * dy, t.at[1] + s * dx + c * dy]
    });
    let xs = corners.map(|p| p[0]);
    let ys = corners.map(|p| p[1]);
    [
        xs.iter().copied().fold(f64::INFINITY, f64::min),
        ys.iter().copied().fold(f64::INFINITY, f64::min),
        xs.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        ys.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    ]
}
