//! Geometry stage: checks that need several rings at once (self-intersection, holes inside the
//! outline and apart from each other, probes and lines inside the section, point sources inside
//! the material and off every ring) and builds the
//! planar straight-line graph (PSLG) the mesher triangulates. Every input segment is split at
//! every contact with another segment (crossings, T-junctions, collinear overlaps) after snapping
//! points closer than the tolerance, so the mesher receives non-crossing constraints only. Each
//! resulting piece knows the zone on either side — void (outside or in a hole), the outline's
//! material, or a region — and, on the section boundary, its boundary name.
//!
//! This file holds the PSLG types and the build's sequence of steps; `segments` finds the
//! contacts and snaps the vertices, `classify` locates points against the rings.

mod classify;
mod features;
mod segments;

pub use classify::Classifier;
pub use features::{
    JumpCorner, THIN_FEATURE_FACTOR, ThinFeature, jump_corner_warning, thin_feature_warning,
};

use crate::error::{Error, Result};
use crate::geom::index::{self, BoxIndex, PointIndex};
use crate::geom::{self, Point};
use crate::model::{POINT_SOURCE_CLEARANCE, Section};
use serde::Serialize;
use std::collections::BTreeMap;

/// Which ring a boundary edge lies on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum RingRef {
    /// The outline.
    Outline,
    /// `holes[i]`.
    Hole(usize),
}

/// What lies on one side of a piece: `None` = void, `Some(0)` = the outline's material,
/// `Some(i + 1)` = `regions[i]`.
pub type Zone = Option<usize>;

/// Which ring an input segment came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum RingId {
    /// The outline.
    Outline,
    /// `holes[i]`.
    Hole(usize),
    /// `regions[i]`.
    Region(usize),
}

impl RingId {
    /// The ring as named in messages (`outline`, `holes[2]`, `regions[0]`).
    pub fn label(&self) -> String {
        match self {
            RingId::Outline => "outline".into(),
            RingId::Hole(i) => format!("holes[{i}]"),
            RingId::Region(i) => format!("regions[{i}]"),
        }
    }
}

/// One input segment that a piece lies on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Source {
    /// The ring of the segment.
    pub ring: RingId,
    /// Segment index within the validated ring.
    pub segment: usize,
    /// True when the piece runs in the ring's (counter-clockwise) direction.
    pub forward: bool,
}

/// A non-crossing constraint segment of the PSLG.
#[derive(Debug, Clone, PartialEq)]
pub struct Piece {
    /// End vertices (indices into `Pslg::vertices`, lower first).
    pub v: [usize; 2],
    /// The input segments the piece lies on.
    pub sources: Vec<Source>,
    /// Zone to the left of `v[0] → v[1]`.
    pub left: Zone,
    /// Zone to the right of `v[0] → v[1]`.
    pub right: Zone,
    /// Boundary id on the section boundary (`None` = unnamed), only meaningful if `ring` is set.
    pub boundary: Option<usize>,
    /// The boundary ring this piece lies on, if it is on the section boundary.
    pub ring: Option<RingRef>,
    /// Segment index within that ring (validated order), only meaningful if `ring` is set.
    pub segment: usize,
}

impl Piece {
    /// Whether the piece separates material from void (lies on the section boundary).
    pub fn is_boundary(&self) -> bool {
        self.left.is_none() != self.right.is_none()
    }
}

/// The planar straight-line graph handed to the mesher.
#[derive(Debug, Clone)]
pub struct Pslg {
    /// Snapped vertices, m.
    pub vertices: Vec<Point>,
    /// Pieces that separate different zones (boundaries and material interfaces).
    pub pieces: Vec<Piece>,
    /// Material id of each zone (index = zone number).
    pub zone_material: Vec<usize>,
    /// Snapping tolerance, m.
    pub tol: f64,
    /// Free vertices the mesh must hold exactly (the point sources' positions, in
    /// `Section::point_sources` order), each inside the material and off every piece.
    pub points: Vec<Point>,
    /// Corners where fixed boundaries of different temperatures meet.
    pub jump_corners: Vec<JumpCorner>,
    /// Places where pieces sharing no vertex come closer than the resolution
    /// ([`THIN_FEATURE_FACTOR`] × the section's diagonal), the thinnest first.
    pub thin_features: Vec<ThinFeature>,
    /// Notes for the user (regions clipped by the outline or holes, temperature jumps, thin
    /// features).
    pub warnings: Vec<String>,
}

/// Snapping tolerance of a section: 1e-9 × its diameter.
pub fn tolerance(section: &Section) -> f64 {
    1e-9 * section.diameter().max(1e-9)
}

/// Check the rings against each other and build the PSLG.
pub fn build(section: &Section) -> Result<Pslg> {
    let tol = tolerance(section);
    let segs = segments::all_segments(section);
    let splits = segments::split_points(section, &segs, tol)?;
    check_hole_placement(section)?;
    let classifier = Classifier::new(section);
    let (vertices, chains) = segments::snap_vertices(&segs, splits, tol);
    let by_key = segments::piece_sources(&segs, &chains);
    let zone_material: Vec<usize> = std::iter::once(section.outline_material)
        .chain(section.regions.iter().map(|r| r.material))
        .collect();
    let assembled = assemble_pieces(section, &classifier, &vertices, by_key, zone_material.len())?;
    let mut warnings = clipping_warnings(&assembled.region_clipped);
    check_regions_have_area(&assembled.zone_seen)?;
    check_probes(section, &classifier, tol)?;
    check_lines(section, &classifier, tol)?;
    check_point_sources(section, &classifier)?;
    let jump_corners = features::jump_corners(section, &classifier, &zone_material);
    warnings.extend(jump_corners.iter().map(|c| jump_corner_warning(section, c)));
    let thin_limit = THIN_FEATURE_FACTOR * section.diameter();
    let thin_features = features::thin_features(&vertices, &assembled.pieces, thin_limit);
    if !thin_features.is_empty() {
        warnings.push(thin_feature_warning(&thin_features, thin_limit));
    }
    Ok(Pslg {
        vertices,
        pieces: assembled.pieces,
        zone_material,
        tol,
        points: section.point_sources.iter().map(|s| s.at).collect(),
        jump_corners,
        thin_features,
        warnings,
    })
}

/// Holes inside the outline and not inside each other.
fn check_hole_placement(section: &Section) -> Result<()> {
    for (i, h) in section.holes.iter().enumerate() {
        if !geom::point_in_ring(&section.outline.points, h.points[0]) {
            return Err(Error::input(format!(
                "holes[{i}]: lies outside the outline"
            )));
        }
        for (j, g) in section.holes.iter().enumerate() {
            if i != j && geom::point_in_ring(&g.points, h.points[0]) {
                return Err(Error::input(format!(
                    "holes[{i}]: lies inside holes[{j}] (holes may not be nested)"
                )));
            }
        }
    }
    Ok(())
}

/// Where the parts of a region that fall in the void lie: outside the outline, inside holes.
type Clipped = BTreeMap<usize, (bool, Vec<usize>)>;

/// The pieces that separate zones, with what the assembly learnt on the way.
struct Assembled {
    pieces: Vec<Piece>,
    /// Whether each zone lies beside some piece.
    zone_seen: Vec<bool>,
    region_clipped: Clipped,
}

/// Zones left and right of a piece (direction a → b) through its midpoint. For the rings the
/// piece lies on, the ring's interior is on the left when the ring runs a → b.
fn side_zones(classifier: &Classifier, mid: Point, sources: &[Source]) -> (Zone, Zone) {
    let mut left_known = Vec::new();
    let mut right_known = Vec::new();
    for s in sources {
        if !left_known.iter().any(|(id, _)| *id == s.ring) {
            left_known.push((s.ring, s.forward));
            right_known.push((s.ring, !s.forward));
        }
    }
    (
        classifier.zone_with(mid, &left_known),
        classifier.zone_with(mid, &right_known),
    )
}

/// Notes where a region piece lying in the void was clipped.
fn note_clipped(classifier: &Classifier, mid: Point, sources: &[Source], clipped: &mut Clipped) {
    for s in sources {
        if let RingId::Region(r) = s.ring {
            let outside = !classifier.inside_outline(mid);
            let e = clipped.entry(r).or_insert((false, Vec::new()));
            if outside {
                e.0 = true;
            } else if let Some(h) = classifier.hole_containing(mid)
                && !e.1.contains(&h)
            {
                e.1.push(h);
            }
        }
    }
}

/// The boundary ring and boundary id of a piece on the section boundary: from the first
/// outline or hole segment it lies on.
fn boundary_of(
    section: &Section,
    sources: &[Source],
    mid: Point,
) -> Result<(RingRef, usize, Option<usize>)> {
    for s in sources {
        match s.ring {
            RingId::Outline => {
                return Ok((
                    RingRef::Outline,
                    s.segment,
                    section.outline.edge_boundary[s.segment],
                ));
            }
            RingId::Hole(h) => {
                return Ok((
                    RingRef::Hole(h),
                    s.segment,
                    section.holes[h].edge_boundary[s.segment],
                ));
            }
            RingId::Region(_) => {}
        }
    }
    Err(Error::run(format!(
        "internal: a boundary piece near {} lies on no outline or hole segment",
        geom::format_point(mid)
    )))
}

/// Keeps the pieces with different zones on their two sides, tagged with their boundary.
fn assemble_pieces(
    section: &Section,
    classifier: &Classifier,
    vertices: &[Point],
    by_key: BTreeMap<(usize, usize), Vec<Source>>,
    zones: usize,
) -> Result<Assembled> {
    let mut out = Assembled {
        pieces: Vec::new(),
        zone_seen: vec![false; zones],
        region_clipped: BTreeMap::new(),
    };
    for ((a, b), sources) in by_key {
        let mid = geom::lerp(vertices[a], vertices[b], 0.5);
        let (left, right) = side_zones(classifier, mid, &sources);
        for z in [left, right].into_iter().flatten() {
            out.zone_seen[z] = true;
        }
        if left == right {
            // Interior to one zone, or in the void: no constraint needed. A region piece in
            // the void was clipped.
            if left.is_none() {
                note_clipped(classifier, mid, &sources, &mut out.region_clipped);
            }
            continue;
        }
        let (ring, segment, boundary) = if left.is_none() || right.is_none() {
            let (r, seg, b) = boundary_of(section, &sources, mid)?;
            (Some(r), seg, b)
        } else {
            (None, 0, None)
        };
        out.pieces.push(Piece {
            v: [a, b],
            sources,
            left,
            right,
            boundary,
            ring,
            segment,
        });
    }
    Ok(out)
}

/// One warning per clipped region.
fn clipping_warnings(clipped: &Clipped) -> Vec<String> {
    clipped
        .iter()
        .map(|(r, (outside, holes))| {
            let mut parts = Vec::new();
            if *outside {
                parts.push("outside the outline".to_string());
            }
            for h in holes {
                parts.push(format!("inside holes[{h}]"));
            }
            format!(
                "regions[{r}]: the parts {} are clipped away",
                parts.join(" and ")
            )
        })
        .collect()
}

/// A region whose zone occurs on no piece has no area of its own left.
fn check_regions_have_area(zone_seen: &[bool]) -> Result<()> {
    match zone_seen.iter().skip(1).position(|seen| !seen) {
        Some(i) => Err(Error::input(format!(
            "regions[{i}]: no area left after clipping (it lies outside the outline, inside a hole, or under later regions)"
        ))),
        None => Ok(()),
    }
}

/// Whether `p` lies in the section or within the probe tolerance of its boundary.
fn near_section(section: &Section, classifier: &Classifier, p: Point, tol: f64) -> bool {
    let (d, ring, _) = classifier.nearest_boundary(p);
    d <= probe_tolerance(section, ring, tol)
}

/// Probes inside the section (or within the probe tolerance of its boundary).
fn check_probes(section: &Section, classifier: &Classifier, tol: f64) -> Result<()> {
    for (i, p) in section.probes.iter().enumerate() {
        if classifier.zone(p.at).is_none() {
            let (d, ring, _) = classifier.nearest_boundary(p.at);
            if d > probe_tolerance(section, ring, tol) {
                return Err(Error::input(format!(
                    "probes[{i}] \"{}\": point {} lies outside the section ({d:.3e} m from the nearest boundary, on {})",
                    p.name,
                    geom::format_point(p.at),
                    ring.label()
                )));
            }
        }
    }
    Ok(())
}

/// Point sources inside the material (not outside the outline, not in a hole), at least
/// [`POINT_SOURCE_CLEARANCE`] × the section's diameter away from every ring segment (outline,
/// holes, regions: a source on a boundary or a material interface is refused) and from each
/// other.
fn check_point_sources(section: &Section, classifier: &Classifier) -> Result<()> {
    if section.point_sources.is_empty() {
        return Ok(());
    }
    let clearance = POINT_SOURCE_CLEARANCE * section.diameter();
    let rings: Vec<(String, &crate::model::Ring)> =
        std::iter::once(("outline".into(), &section.outline))
            .chain(
                section
                    .holes
                    .iter()
                    .enumerate()
                    .map(|(i, h)| (format!("holes[{i}]"), h)),
            )
            .chain(
                section
                    .regions
                    .iter()
                    .enumerate()
                    .map(|(i, r)| (format!("regions[{i}]"), &r.ring)),
            )
            .collect();
    let segs: Vec<(usize, usize)> = rings
        .iter()
        .enumerate()
        .flat_map(|(r, (_, ring))| (0..ring.len()).map(move |j| (r, j)))
        .collect();
    let index = BoxIndex::new(segs.iter().map(|&(r, j)| {
        let (a, b) = rings[r].1.segment(j);
        index::segment_bbox(a, b)
    }));
    let mut near = PointIndex::new();
    let mut found = Vec::new();
    for (i, s) in section.point_sources.iter().enumerate() {
        let label = format!("point_sources[{i}] \"{}\"", s.name);
        let at = geom::format_point(s.at);
        for k in index.meeting_vec(index::inflate(index::segment_bbox(s.at, s.at), clearance)) {
            let (r, j) = segs[k];
            let (a, b) = rings[r].1.segment(j);
            let d = geom::project(a, b, s.at).1;
            if d <= clearance {
                return Err(Error::input(format!(
                    "{label}: point {at} lies on {} segment {} ({d:.3e} m from it, closer than {clearance:.3e} m = {POINT_SOURCE_CLEARANCE:e} × the section's diameter); a point source must lie inside one material — move it off the edge (heat entering through a boundary is a flux boundary)",
                    rings[r].0, rings[r].1.written_segment[j]
                )));
            }
        }
        if classifier.zone(s.at).is_none() {
            let place = match classifier.hole_containing(s.at) {
                Some(h) => format!("inside holes[{h}]"),
                None => "outside the outline".to_string(),
            };
            return Err(Error::input(format!(
                "{label}: point {at} lies {place}; a point source must lie in the material"
            )));
        }
        found.clear();
        near.within(s.at, clearance, &mut found);
        if let Some(&other) = found.first() {
            return Err(Error::input(format!(
                "{label}: point {at} is at the place of point_sources[{other}] \"{}\" (closer than {clearance:.3e} m); give one source the sum of their powers",
                section.point_sources[other].name
            )));
        }
        near.insert(s.at, i);
    }
    Ok(())
}

/// Lines with at least one sample inside the section.
fn check_lines(section: &Section, classifier: &Classifier, tol: f64) -> Result<()> {
    for (i, l) in section.lines.iter().enumerate() {
        let n = l.samples;
        let sample = |k: usize| geom::lerp(l.from, l.to, k as f64 / (n - 1) as f64);
        // Point-in-polygon first (fast); the nearest-boundary search only if that finds none.
        let any_inside = (0..n).any(|k| classifier.zone(sample(k)).is_some())
            || (0..n).any(|k| near_section(section, classifier, sample(k), tol));
        if !any_inside {
            return Err(Error::input(format!(
                "lines[{i}] \"{}\": no sample lies inside the section",
                l.name
            )));
        }
    }
    Ok(())
}

/// Distance outside the discretised section within which a point is taken at the nearest
/// boundary point: the ring's sagitta for circles, else the snapping tolerance.
pub fn probe_tolerance(section: &Section, ring: RingId, tol: f64) -> f64 {
    let circle = match ring {
        RingId::Outline => section.outline.circle,
        RingId::Hole(i) => section.holes[i].circle,
        RingId::Region(_) => None,
    };
    circle
        .map(|c| c.sagitta() * 1.000001)
        .unwrap_or(0.0)
        .max(tol)
}

#[cfg(test)]
mod tests;
