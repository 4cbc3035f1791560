//! `[drawing]`: closed rings of a DXF drawing (read by the `dxf` crate) as written rings. Each
//! layer of `[drawing.layers]` has one role: a material (its closed rings are regions, or the
//! outline), a hole, or a boundary (its LINE/POLYLINE/ARC entities name the outline edges they
//! lie on). Closed LWPOLYLINE/POLYLINE (bulges become arcs, split into chords by the circle
//! rule), CIRCLE (a circle ring), and closed chains of LINE, ARC and open polylines joined
//! within the tolerance become rings, per layer. The outline is the one ring of the layer
//! marked `outline = true`, else the largest ring on a material layer; the other material rings
//! are regions, largest first (so a ring drawn inside another wins there). Coordinates are
//! converted from the drawing's `length_unit` to metres; nothing else is.

use super::{DrawingFile, Imported, ImportedRings, LayerFile, RingFile, open_ring};
use crate::error::{Error, Result, printable};
use crate::geom::{bbox, distance, format_point, polygon_area, project};
use crate::model::{CircleFile, circle_segments};
use dxf::entities::{Entity, EntityType};
use dxf::enums::AcadVersion;
use std::collections::BTreeMap;
use std::f64::consts::PI;

/// What a layer is for.
#[derive(Debug, Clone, PartialEq)]
enum Role {
    /// Rings of this material; `outline`: the layer holding the outline.
    Material { name: String, outline: bool },
    /// Rings that are holes, with their boundary.
    Hole { boundary: Option<String> },
    /// Lines naming the outline edges they lie on.
    Boundary(String),
}

/// A closed ring read from a material or hole layer, in metres.
struct Shape {
    label: String,
    layer: String,
    points: Vec<[f64; 2]>,
    circle: Option<([f64; 2], f64)>,
}

impl Shape {
    fn area(&self) -> f64 {
        match self.circle {
            Some((_, r)) => PI * r * r,
            None => polygon_area(&self.points).abs(),
        }
    }
}

/// An open piece of a chain (LINE, ARC or open polyline), in metres.
struct Piece {
    label: String,
    points: Vec<[f64; 2]>,
}

/// Everything read from the entities of mapped layers.
#[derive(Default)]
struct Read {
    shapes: Vec<Shape>,
    pieces: BTreeMap<String, Vec<Piece>>,
    markers: Vec<(String, [f64; 2], [f64; 2])>,
}

/// The rings of a DXF drawing. `inline_outline`: the model has its own `[outline]`;
/// `max_area`: the model's `[mesh] max_area`, m², for the chord count of arcs.
pub(super) fn rings(
    bytes: &[u8],
    d: &DrawingFile,
    inline_outline: bool,
    max_area: Option<f64>,
    imported: &mut Imported,
) -> Result<ImportedRings> {
    let name = printable(&d.file);
    let roles = layer_roles(d, inline_outline)?;
    let per_metre = unit(d)?;
    let drawing = dxf::Drawing::load(&mut std::io::Cursor::new(bytes)).map_err(|e| {
        Error::input(format!(
            "[drawing] file \"{name}\": not a readable DXF drawing: {e} ({SUPPORTED})"
        ))
    })?;
    if drawing.header.version < AcadVersion::R12 {
        return Err(Error::input(format!(
            "[drawing] file \"{name}\": DXF version {:?} is not supported ({SUPPORTED}); save the drawing as R12 or later",
            drawing.header.version
        )));
    }
    let entities = mapped_entities(&name, &drawing, &roles, imported)?;
    let extent = bbox(entities.iter().flat_map(|(_, e)| entity_points(e)));
    let diagonal = ((extent[2] - extent[0]).powi(2) + (extent[3] - extent[1]).powi(2)).sqrt();
    let tol = match d.tolerance {
        Some(t) if t.is_finite() && t > 0.0 => t,
        Some(t) => {
            return Err(Error::input(format!(
                "[drawing] tolerance = {t} must be a positive finite number (in the drawing's unit)"
            )));
        }
        None => 1e-6 * diagonal,
    };
    // Chord length of arcs: the circle rule with the model's max_area (or, without one, the
    // drawing's extent / 4000, the default's scale).
    let area_m2 = max_area.unwrap_or(
        (extent[2] - extent[0]) * (extent[3] - extent[1]) / (per_metre * per_metre) / 4000.0,
    );
    let arcs = Arcs {
        max_area: area_m2,
        per_metre,
    };
    let mut read = Read::default();
    for (i, e) in &entities {
        read_entity(&name, *i, e, &roles[&e.common.layer], &arcs, &mut read)?;
    }
    for (layer, pieces) in std::mem::take(&mut read.pieces) {
        chain(&name, &layer, pieces, tol / per_metre, &mut read.shapes)?;
    }
    if read.shapes.is_empty() {
        return Err(Error::input(format!(
            "[drawing] file \"{name}\": no closed ring on a material or hole layer (closed LWPOLYLINE/POLYLINE, CIRCLE, or a closed chain of LINE/ARC)"
        )));
    }
    assemble(d, &roles, read, tol / per_metre, inline_outline)
}

/// The versions read, for messages.
const SUPPORTED: &str = "ASCII or binary DXF of versions R12 (AC1009) to R2018 (AC1032) are read";

/// The drawing's unit as a count per metre.
fn unit(d: &DrawingFile) -> Result<f64> {
    match d.length_unit.as_deref().unwrap_or("m") {
        "m" => Ok(1.0),
        "cm" => Ok(100.0),
        "mm" => Ok(1000.0),
        other => Err(Error::input(format!(
            "[drawing] length_unit = \"{}\" is not one of \"m\", \"cm\", \"mm\"",
            printable(other)
        ))),
    }
}

/// The role of each mapped layer, each checked.
fn layer_roles(d: &DrawingFile, inline_outline: bool) -> Result<BTreeMap<String, Role>> {
    if d.layers.is_empty() {
        return Err(Error::input(
            "[drawing.layers]: no layer mapped; give e.g. CONCRETE = { material = \"concrete\" }",
        ));
    }
    let mut roles = BTreeMap::new();
    let mut outline_layer: Option<&str> = None;
    for (layer, l) in &d.layers {
        let label = format!("[drawing.layers] {}", printable(layer));
        let role = layer_role(&label, l)?;
        if let Role::Material { outline: true, .. } = role {
            if inline_outline {
                return Err(Error::input(format!(
                    "{label}: outline = true, but the model has its own [outline]; give the outline once"
                )));
            }
            if let Some(first) = outline_layer {
                return Err(Error::input(format!(
                    "{label}: outline = true on a second layer (first: {})",
                    printable(first)
                )));
            }
            outline_layer = Some(layer);
        }
        roles.insert(layer.clone(), role);
    }
    Ok(roles)
}

/// One layer's role from its keys: `material` (with `outline`), `hole` (with `boundary`), or
/// `boundary` alone.
fn layer_role(label: &str, l: &LayerFile) -> Result<Role> {
    let hole = l.hole.unwrap_or(false);
    let outline = l.outline.unwrap_or(false);
    match (&l.material, hole, &l.boundary) {
        (Some(_), true, _) => Err(Error::input(format!(
            "{label}: `material` and `hole = true` together (a hole holds no material)"
        ))),
        (Some(_), false, Some(_)) => Err(Error::input(format!(
            "{label}: `boundary` on a material layer; put the boundary lines on a layer of their own mapped to {{ boundary = \"...\" }}"
        ))),
        (Some(m), false, None) => Ok(Role::Material {
            name: m.clone(),
            outline,
        }),
        (None, _, _) if outline => Err(Error::input(format!(
            "{label}: outline = true needs the outline's `material`"
        ))),
        (None, true, b) => Ok(Role::Hole {
            boundary: b.clone(),
        }),
        (None, false, Some(b)) => Ok(Role::Boundary(b.clone())),
        (None, false, None) => Err(Error::input(format!(
            "{label}: no role; give `material`, `hole = true` or `boundary`"
        ))),
    }
}

/// The DXF name of an entity's kind, and whether it is read (LINE, ARC, CIRCLE, 2D polylines).
fn kind(e: &EntityType) -> (&'static str, bool) {
    match e {
        EntityType::Line(_) => ("LINE", true),
        EntityType::Arc(_) => ("ARC", true),
        EntityType::Circle(_) => ("CIRCLE", true),
        EntityType::LwPolyline(_) => ("LWPOLYLINE", true),
        EntityType::Polyline(p) => (
            "POLYLINE",
            !(p.is_3d_polyline() || p.is_3d_polygon_mesh() || p.is_polyface_mesh()),
        ),
        EntityType::Insert(_) => ("INSERT (block)", false),
        EntityType::Spline(_) => ("SPLINE", false),
        EntityType::Text(_) | EntityType::MText(_) | EntityType::ArcAlignedText(_) => {
            ("TEXT/MTEXT", false)
        }
        EntityType::RotatedDimension(_)
        | EntityType::RadialDimension(_)
        | EntityType::DiameterDimension(_)
        | EntityType::AngularThreePointDimension(_)
        | EntityType::OrdinateDimension(_)
        | EntityType::Leader(_) => ("DIMENSION/LEADER", false),
        EntityType::Ellipse(_) => ("ELLIPSE", false),
        _ => ("other", false),
    }
}

/// The read entities of mapped layers, with their index in the drawing; warnings for ignored
/// entities (one, listing how many of each kind) and for layers not in the table; an error for
/// a mapped layer with nothing on it.
fn mapped_entities<'a>(
    name: &str,
    drawing: &'a dxf::Drawing,
    roles: &BTreeMap<String, Role>,
    imported: &mut Imported,
) -> Result<Vec<(usize, &'a Entity)>> {
    let mut ignored: BTreeMap<&str, usize> = BTreeMap::new();
    let mut unmapped: BTreeMap<&str, usize> = BTreeMap::new();
    let mut used: BTreeMap<&str, usize> = BTreeMap::new();
    let mut out = Vec::new();
    for (i, e) in drawing.entities().enumerate() {
        let (k, read) = kind(&e.specific);
        if e.common.is_in_paper_space {
            *ignored.entry("paper-space entities").or_default() += 1;
        } else if !read {
            *ignored.entry(k).or_default() += 1;
        } else if !roles.contains_key(&e.common.layer) {
            *unmapped.entry(&e.common.layer).or_default() += 1;
        } else {
            *used.entry(&e.common.layer).or_default() += 1;
            out.push((i, e));
        }
    }
    if !ignored.is_empty() {
        let list: Vec<String> = ignored.iter().map(|(k, n)| format!("{n} {k}")).collect();
        imported.warnings.push(format!(
            "{name}: {} entities ignored (blocks, splines, text, dimensions, hatches and 3D entities are not read): {}",
            ignored.values().sum::<usize>(),
            list.join(", ")
        ));
    }
    for (layer, n) in &unmapped {
        imported.warnings.push(format!(
            "{name}: layer \"{}\" is not in [drawing.layers]; its {n} entities are ignored",
            printable(layer)
        ));
    }
    if let Some(layer) = roles.keys().find(|l| !used.contains_key(l.as_str())) {
        return Err(Error::input(format!(
            "[drawing.layers] {}: no LINE, ARC, CIRCLE or polyline on this layer in \"{name}\"",
            printable(layer)
        )));
    }
    Ok(out)
}

/// Points that bound an entity (for the drawing's extent).
fn entity_points(e: &Entity) -> Vec<[f64; 2]> {
    match &e.specific {
        EntityType::Line(l) => vec![[l.p1.x, l.p1.y], [l.p2.x, l.p2.y]],
        EntityType::Arc(a) => circle_box(a.center.x, a.center.y, a.radius),
        EntityType::Circle(c) => circle_box(c.center.x, c.center.y, c.radius),
        EntityType::LwPolyline(p) => p.vertices.iter().map(|v| [v.x, v.y]).collect(),
        EntityType::Polyline(p) => p.vertices().map(|v| [v.location.x, v.location.y]).collect(),
        _ => Vec::new(),
    }
}

fn circle_box(x: f64, y: f64, r: f64) -> Vec<[f64; 2]> {
    vec![[x - r, y - r], [x + r, y + r]]
}

/// The circle rule for arcs, and the conversion to metres.
struct Arcs {
    /// The model's max_area, m².
    max_area: f64,
    /// Drawing units per metre.
    per_metre: f64,
}

impl Arcs {
    /// Chord count of an arc of `radius` turning `sweep` radians: the full circle's count
    /// (README: N = max(24, ⌈2πr/ℓ⌉)) times the fraction of the turn, at least 1.
    fn chords(&self, radius: f64, sweep: f64) -> usize {
        let n = circle_segments(radius, self.max_area, None) as f64;
        ((n * sweep.abs() / (2.0 * PI)).ceil() as usize).clamp(1, crate::model::MAX_CIRCLE_SEGMENTS)
    }

    /// A drawing point in metres.
    fn m(&self, p: [f64; 2]) -> [f64; 2] {
        [p[0] / self.per_metre, p[1] / self.per_metre]
    }

    /// Points (m) of the arc about `c` (drawing units) of radius `r` (drawing units) from angle
    /// `a0` turning `sweep` (radians, positive counter-clockwise), both ends included: centre
    /// and radius are converted first, so the points are those of the same arc written in
    /// metres.
    fn arc(&self, c: [f64; 2], r: f64, a0: f64, sweep: f64) -> Vec<[f64; 2]> {
        self.points(self.m(c), r / self.per_metre, a0, sweep)
    }

    /// Points of the arc about `c` of radius `r` (m) from angle `a0` turning `sweep` (radians,
    /// positive counter-clockwise), both ends included.
    fn points(&self, c: [f64; 2], r: f64, a0: f64, sweep: f64) -> Vec<[f64; 2]> {
        let k = self.chords(r, sweep);
        (0..=k)
            .map(|j| {
                let a = a0 + sweep * j as f64 / k as f64;
                [c[0] + r * a.cos(), c[1] + r * a.sin()]
            })
            .collect()
    }

    /// Points (m) of a polyline (with bulges) through `v` (x, y, bulge in drawing units),
    /// closed or not; the arc of bulge b from p to q turns 4·atan(b) (positive
    /// counter-clockwise). Ends of arcs are the vertices themselves.
    fn polyline(&self, v: &[(f64, f64, f64)], closed: bool) -> Vec<[f64; 2]> {
        let n = v.len();
        let mut pts = Vec::new();
        let segs = if closed { n } else { n.saturating_sub(1) };
        for i in 0..n {
            let p = [v[i].0, v[i].1];
            pts.push(self.m(p));
            if i >= segs {
                continue;
            }
            let q = [v[(i + 1) % n].0, v[(i + 1) % n].1];
            let b = v[i].2;
            let c = distance(p, q);
            if b == 0.0 || !b.is_finite() || c == 0.0 {
                continue;
            }
            let sweep = 4.0 * b.atan();
            let off = c * (1.0 - b * b) / (4.0 * b);
            let left = [-(q[1] - p[1]) / c, (q[0] - p[0]) / c];
            let m = [(p[0] + q[0]) / 2.0, (p[1] + q[1]) / 2.0];
            let center = [m[0] + off * left[0], m[1] + off * left[1]];
            let r = distance(center, p);
            let a0 = (p[1] - center[1]).atan2(p[0] - center[0]);
            let arc = self.arc(center, r, a0, sweep);
            pts.extend_from_slice(&arc[1..arc.len() - 1]);
        }
        pts
    }
}

/// One entity of a mapped layer into a shape, a piece of a chain or a boundary marker.
fn read_entity(
    name: &str,
    i: usize,
    e: &Entity,
    role: &Role,
    arcs: &Arcs,
    read: &mut Read,
) -> Result<()> {
    let layer = &e.common.layer;
    let label = format!(
        "{name} layer {} {} #{i}",
        printable(layer),
        kind(&e.specific).0
    );
    let normal_ok = |z: f64| z > 0.0;
    let (points, closed, circle) = match &e.specific {
        EntityType::Line(l) => (
            vec![arcs.m([l.p1.x, l.p1.y]), arcs.m([l.p2.x, l.p2.y])],
            false,
            None,
        ),
        EntityType::Arc(a) => {
            if !normal_ok(a.normal.z) {
                return Err(mirrored(&label));
            }
            let a0 = a.start_angle.to_radians();
            let mut sweep = (a.end_angle - a.start_angle).rem_euclid(360.0).to_radians();
            if sweep == 0.0 {
                sweep = 2.0 * PI;
            }
            let c = [a.center.x, a.center.y];
            (arcs.arc(c, a.radius, a0, sweep), false, None)
        }
        EntityType::Circle(c) => {
            if !normal_ok(c.normal.z) {
                return Err(mirrored(&label));
            }
            let ctr = [c.center.x, c.center.y];
            let circle = Some((arcs.m(ctr), c.radius / arcs.per_metre));
            (arcs.arc(ctr, c.radius, 0.0, 2.0 * PI), true, circle)
        }
        EntityType::LwPolyline(p) => {
            if !normal_ok(p.extrusion_direction.z) {
                return Err(mirrored(&label));
            }
            let v: Vec<_> = p.vertices.iter().map(|v| (v.x, v.y, v.bulge)).collect();
            (arcs.polyline(&v, p.is_closed()), p.is_closed(), None)
        }
        EntityType::Polyline(p) => {
            if !normal_ok(p.normal.z) {
                return Err(mirrored(&label));
            }
            let v: Vec<_> = p
                .vertices()
                .map(|v| (v.location.x, v.location.y, v.bulge))
                .collect();
            (arcs.polyline(&v, p.is_closed()), p.is_closed(), None)
        }
        _ => return Ok(()),
    };
    if let Some(p) = points
        .iter()
        .find(|p| !p[0].is_finite() || !p[1].is_finite())
    {
        return Err(Error::input(format!(
            "{label}: coordinate ({}, {}) is not a finite number",
            p[0], p[1]
        )));
    }
    match role {
        Role::Boundary(b) => {
            let n = points.len();
            let segs = if closed { n } else { n.saturating_sub(1) };
            for k in 0..segs {
                read.markers
                    .push((b.clone(), points[k], points[(k + 1) % n]));
            }
        }
        _ if closed || circle.is_some() => read.shapes.push(Shape {
            label,
            layer: layer.clone(),
            points: open_ring(points),
            circle,
        }),
        _ => read
            .pieces
            .entry(layer.clone())
            .or_default()
            .push(Piece { label, points }),
    }
    Ok(())
}

fn mirrored(label: &str) -> Error {
    Error::input(format!(
        "{label}: extrusion direction other than +Z (a mirrored entity); mirror it back or explode it in the CAD program"
    ))
}

/// Join the open pieces of one layer into closed rings (ends within `tol`, m), or refuse an
/// open chain naming the layer and the gap's coordinates (m).
fn chain(
    name: &str,
    layer: &str,
    pieces: Vec<Piece>,
    tol: f64,
    shapes: &mut Vec<Shape>,
) -> Result<()> {
    let mut used = vec![false; pieces.len()];
    for start in 0..pieces.len() {
        if used[start] {
            continue;
        }
        used[start] = true;
        let mut pts = pieces[start].points.clone();
        let mut labels = vec![pieces[start].label.clone()];
        loop {
            let end = pts[pts.len() - 1];
            if pts.len() > 2 && distance(end, pts[0]) <= tol {
                pts.pop();
                break;
            }
            let next = (0..pieces.len())
                .filter(|&j| !used[j])
                .flat_map(|j| {
                    let p = &pieces[j].points;
                    [
                        (j, false, distance(p[0], end)),
                        (j, true, distance(p[p.len() - 1], end)),
                    ]
                })
                .min_by(|a, b| a.2.total_cmp(&b.2));
            match next {
                Some((j, rev, dist)) if dist <= tol => {
                    used[j] = true;
                    let mut p = pieces[j].points.clone();
                    if rev {
                        p.reverse();
                    }
                    pts.extend_from_slice(&p[1..]);
                    labels.push(pieces[j].label.clone());
                }
                other => {
                    let nearest = other
                        .map(|(j, rev, d)| {
                            let p = &pieces[j].points;
                            let q = if rev { p[p.len() - 1] } else { p[0] };
                            format!(
                                "; the nearest free end is {} m away at {}",
                                d,
                                format_point(q)
                            )
                        })
                        .unwrap_or_default();
                    return Err(Error::input(format!(
                        "{name} layer {}: open chain of {}: it ends at {} but starts at {} (m, gap {} m){nearest}; close it, or raise [drawing] tolerance (now {tol} m; it is given in the drawing's unit)",
                        printable(layer),
                        short_list(&labels),
                        format_point(end),
                        format_point(pts[0]),
                        distance(end, pts[0])
                    )));
                }
            }
        }
        shapes.push(Shape {
            label: format!(
                "{name} layer {} chain of {}",
                printable(layer),
                short_list(&labels)
            ),
            layer: layer.to_string(),
            points: pts,
            circle: None,
        });
    }
    Ok(())
}

/// Entity labels of a chain, without the repeated file and layer, at most four.
fn short_list(labels: &[String]) -> String {
    let kinds: Vec<&str> = labels
        .iter()
        .map(|l| l.rsplit_once(" layer ").map_or(l.as_str(), |(_, r)| r))
        .map(|r| r.split_once(' ').map_or(r, |(_, k)| k))
        .collect();
    if kinds.len() <= 4 {
        kinds.join(", ")
    } else {
        format!("{}, … ({} entities)", kinds[..4].join(", "), kinds.len())
    }
}

/// Outline, regions and holes from the shapes, in metres, with the outline's edge names.
fn assemble(
    d: &DrawingFile,
    roles: &BTreeMap<String, Role>,
    read: Read,
    tol: f64,
    inline_outline: bool,
) -> Result<ImportedRings> {
    let material = |s: &Shape| match &roles[&s.layer] {
        Role::Material { name, outline } => Some((name.clone(), *outline)),
        _ => None,
    };
    let marked: Vec<usize> = (0..read.shapes.len())
        .filter(|&i| material(&read.shapes[i]).is_some_and(|m| m.1))
        .collect();
    let outline = match marked.as_slice() {
        [] if inline_outline => None,
        [] => (0..read.shapes.len())
            .filter(|&i| material(&read.shapes[i]).is_some())
            .max_by(|&a, &b| {
                read.shapes[a]
                    .area()
                    .total_cmp(&read.shapes[b].area())
                    .then(b.cmp(&a))
            }),
        [i] => Some(*i),
        [a, ..] => {
            return Err(Error::input(format!(
                "[drawing.layers] {}: the outline layer holds {} closed rings; keep only the outline on it",
                printable(&read.shapes[*a].layer),
                marked.len()
            )));
        }
    };
    if outline.is_none() && !inline_outline {
        return Err(Error::input(format!(
            "[drawing] file \"{}\": no closed ring on a material layer to be the outline",
            printable(&d.file)
        )));
    }
    let mut out = ImportedRings::default();
    let mut regions = Vec::new();
    for (i, s) in read.shapes.iter().enumerate() {
        let mut ring = ring_file(s);
        match (&roles[&s.layer], Some(i) == outline) {
            (Role::Material { name, .. }, true) => {
                ring.material = Some(name.clone());
                name_outline(&mut ring, s, &read.markers, d, tol)?;
                out.outline = Some(ring);
            }
            (Role::Material { name, .. }, false) => {
                ring.material = Some(name.clone());
                regions.push((s.area(), ring));
            }
            (Role::Hole { boundary }, _) => {
                ring.boundary = boundary.clone();
                out.holes.push(ring);
            }
            (Role::Boundary(_), _) => {}
        }
    }
    // Largest first (stable): a ring drawn inside another is listed after it and wins there.
    regions.sort_by(|a, b| b.0.total_cmp(&a.0));
    out.regions = regions.into_iter().map(|(_, r)| r).collect();
    Ok(out)
}

/// A shape as a written ring: a circle, or its points.
fn ring_file(s: &Shape) -> RingFile {
    let mut r = RingFile {
        label: Some(s.label.clone()),
        ..RingFile::default()
    };
    match s.circle {
        Some((c, radius)) => {
            r.circle = Some(CircleFile {
                center: c,
                radius,
                segments: None,
            })
        }
        None => r.points = Some(super::super::PointEntry::list(&s.points)),
    }
    r
}

/// The outline's edge names: the boundary layer whose lines the edge lies on (both ends
/// within `tol`), else `default_boundary`, else unnamed.
fn name_outline(
    ring: &mut RingFile,
    s: &Shape,
    markers: &[(String, [f64; 2], [f64; 2])],
    d: &DrawingFile,
    tol: f64,
) -> Result<()> {
    let default = d.default_boundary.clone().unwrap_or_default();
    if s.circle.is_some() {
        ring.boundary = d.default_boundary.clone();
        return Ok(());
    }
    let n = s.points.len();
    let mut edges = Vec::with_capacity(n);
    for i in 0..n {
        let (a, b) = (s.points[i], s.points[(i + 1) % n]);
        let on = |m: &&(String, [f64; 2], [f64; 2])| {
            project(m.1, m.2, a).1 <= tol && project(m.1, m.2, b).1 <= tol
        };
        let mut names = markers.iter().filter(on).map(|m| m.0.as_str());
        let first = names.next();
        if let (Some(x), Some(y)) = (first, names.find(|y| Some(*y) != first)) {
            return Err(Error::input(format!(
                "{}: edge {i} from {} to {} lies on lines of two boundaries, \"{}\" and \"{}\"",
                s.label,
                format_point(a),
                format_point(b),
                printable(x),
                printable(y)
            )));
        }
        edges.push(first.map_or(default.clone(), str::to_string));
    }
    if edges.iter().any(|e| !e.is_empty()) {
        ring.edges = Some(edges);
    }
    Ok(())
}
