//! Classification of the triangulation: the PSLG piece under every constraint edge (refinement
//! splits constraints, so each is followed from end to end) and the zone of every face (faces
//! connected across non-constraint edges share the zone a bounding piece gives them).

use super::{Cdt, Constraint};
use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::geometry::{Pslg, Zone};
use spade::Triangulation;
use spade::handles::{FixedFaceHandle, FixedVertexHandle, InnerTag};

/// Marks a triangulation edge that lies on no piece.
pub(super) const NO_PIECE: u32 = u32::MAX;

/// Zone to the left of a directed edge lying on `piece`, going from `a` to `b`.
fn zone_left_of(pslg: &Pslg, piece: usize, a: Point, b: Point) -> Zone {
    let p = &pslg.pieces[piece];
    let (pa, pb) = (pslg.vertices[p.v[0]], pslg.vertices[p.v[1]]);
    let same = (b[0] - a[0]) * (pb[0] - pa[0]) + (b[1] - a[1]) * (pb[1] - pa[1]) > 0.0;
    if same { p.left } else { p.right }
}

/// Marks the edges of one constraint with its piece by walking from its first vertex to its
/// last along the constraint edge pointing most nearly at the last.
fn trace_constraint(cdt: &Cdt, c: &Constraint, edge_piece: &mut [u32]) -> Result<()> {
    let pb = cdt.vertex(FixedVertexHandle::from_index(c.b)).position();
    let target = [pb.x, pb.y];
    let mut cur = FixedVertexHandle::from_index(c.a);
    let mut steps = 0usize;
    while cur.index() != c.b {
        let h = cdt.vertex(cur).position();
        let here = [h.x, h.y];
        let dir = [target[0] - here[0], target[1] - here[1]];
        let dl = geom::distance(target, here);
        let mut best: Option<(f64, _)> = None;
        for e in cdt.vertex(cur).out_edges() {
            if !e.is_constraint_edge() {
                continue;
            }
            let to = e.to().position();
            let d = [to.x - here[0], to.y - here[1]];
            let l = geom::distance([to.x, to.y], here);
            let cos = (d[0] * dir[0] + d[1] * dir[1]) / (l * dl);
            if best.as_ref().is_none_or(|(bc, _)| cos > *bc) {
                best = Some((cos, e));
            }
        }
        match best {
            Some((cos, e)) if cos > 1.0 - 1e-6 => {
                edge_piece[e.as_undirected().fix().index()] = c.piece as u32;
                cur = e.to().fix();
            }
            _ => {
                return Err(Error::run(format!(
                    "internal: lost the constraint path of a segment near {}",
                    geom::format_point(here)
                )));
            }
        }
        steps += 1;
        if steps > cdt.num_vertices() {
            return Err(Error::run("internal: constraint path does not end"));
        }
    }
    Ok(())
}

/// What a classification pass also screens for, face by face, while it visits the faces: the
/// area limit of each zone and the angle limit (sin² of the smallest angle).
pub(super) struct Screen<'a> {
    /// Area limit of a triangle of each zone, m².
    pub(super) zone_limit: &'a [f64],
    /// Faces whose smallest angle has a sin² below this are reported (0: none).
    pub(super) sin2_limit: f64,
}

/// Marks a face not yet visited.
const UNSEEN: u32 = u32::MAX;
/// Marks a face outside the section (outer or void zone).
const VOID: u32 = u32::MAX - 1;
/// Marks a face visited in the current component, zone not yet known.
const PENDING: u32 = u32::MAX - 2;

/// Zones of the faces and the piece of every constraint edge of the current triangulation.
pub(super) struct Classified {
    /// Piece of each undirected edge (`NO_PIECE` for non-constraint edges).
    pub(super) edge_piece: Vec<u32>,
    /// Zone per face index (`VOID` for the outer face and faces outside the section).
    face_zone: Vec<u32>,
    /// Faces of the section (in face order) that are larger than their zone's area limit or
    /// below the angle limit (empty without a [`Screen`]).
    pub(super) flagged: Vec<FixedFaceHandle<InnerTag>>,
}

impl Classified {
    /// Zone of the face with this index (`None`: outside the section).
    pub(super) fn zone(&self, face: usize) -> Zone {
        let z = self.face_zone[face];
        (z < PENDING).then_some(z as usize)
    }

    /// True when the face with this index lies in the section.
    pub(super) fn kept(&self, face: usize) -> bool {
        self.face_zone[face] < PENDING
    }
}

type Face<'a> =
    spade::handles::FaceHandle<'a, InnerTag, spade::Point2<f64>, (), spade::CdtEdge<()>, ()>;

/// Area and sin² of the smallest angle of a face.
fn area_and_sin2(f: Face) -> (f64, f64) {
    let [a, b, c] = f.positions();
    let p = [[a.x, a.y], [b.x, b.y], [c.x, c.y]];
    (
        geom::triangle_area(p[0], p[1], p[2]),
        geom::min_angle_sin2(p),
    )
}

/// Flood-fills the connected component of faces containing `start` (across non-constraint
/// edges), marking its faces `PENDING` and listing them in `members`; returns its zone. With a
/// screen, faces larger than `min_limit` or below its angle limit go to `flagged`.
fn component_zone(
    pslg: &Pslg,
    edge_piece: &[u32],
    start: Face,
    face_zone: &mut [u32],
    members: &mut Vec<u32>,
    screen: Option<(&Screen, f64)>,
    flagged: &mut Vec<FixedFaceHandle<InnerTag>>,
) -> Result<Zone> {
    let mut zone: Option<Zone> = None;
    let mut stack = vec![start];
    face_zone[start.fix().index()] = PENDING;
    while let Some(face) = stack.pop() {
        members.push(face.fix().index() as u32);
        if let Some((s, min_limit)) = screen {
            let (area, sin2) = area_and_sin2(face);
            if area > min_limit || sin2 < s.sin2_limit {
                flagged.push(face.fix());
            }
        }
        for e in face.adjacent_edges() {
            if e.is_constraint_edge() {
                let piece = edge_piece[e.as_undirected().fix().index()];
                if piece == NO_PIECE {
                    return Err(Error::run("internal: constraint edge without a segment"));
                }
                let [a, b] = e.positions();
                let z = zone_left_of(pslg, piece as usize, [a.x, a.y], [b.x, b.y]);
                match zone {
                    None => zone = Some(z),
                    Some(prev) if prev != z => {
                        return Err(Error::run(format!(
                            "internal: inconsistent zones around {}",
                            geom::format_point([a.x, a.y])
                        )));
                    }
                    _ => {}
                }
                continue;
            }
            match e.rev().face().as_inner() {
                Some(n) => {
                    let ni = n.fix().index();
                    if face_zone[ni] == UNSEEN {
                        face_zone[ni] = PENDING;
                        stack.push(n);
                    }
                }
                None => {
                    // A convex-hull edge that is no constraint: outside the outline.
                    if let Some(Some(_)) = zone {
                        return Err(Error::run(
                            "internal: material zone reaches the convex hull",
                        ));
                    }
                    zone = zone.or(Some(None));
                }
            }
        }
    }
    Ok(zone.unwrap_or(None))
}

/// Pieces of the constraint edges and zones of the faces of the current triangulation, in one
/// flood fill over the faces; with a `screen`, also the faces of the section that break their
/// zone's area limit or the angle limit.
pub(super) fn classify(
    cdt: &Cdt,
    pslg: &Pslg,
    cons: &[Constraint],
    screen: Option<&Screen>,
) -> Result<Classified> {
    let mut edge_piece = vec![NO_PIECE; cdt.num_undirected_edges()];
    for c in cons {
        trace_constraint(cdt, c, &mut edge_piece)?;
    }
    let mut face_zone = vec![UNSEEN; cdt.num_all_faces()];
    // The outer face (index 0) lies outside.
    face_zone[0] = VOID;
    let screen = screen.map(|s| {
        let min_limit = s.zone_limit.iter().copied().fold(f64::INFINITY, f64::min);
        (s, min_limit * (1.0 + 1e-12))
    });
    let mut members = Vec::new();
    let (mut flagged, mut maybe) = (Vec::new(), Vec::new());
    for f in cdt.inner_faces() {
        if face_zone[f.fix().index()] != UNSEEN {
            continue;
        }
        members.clear();
        maybe.clear();
        let zone = component_zone(
            pslg,
            &edge_piece,
            f,
            &mut face_zone,
            &mut members,
            screen,
            &mut maybe,
        )?;
        let mark = match zone {
            Some(z) => u32::try_from(z)
                .ok()
                .filter(|&z| z < PENDING)
                .ok_or_else(|| Error::run("internal: too many zones"))?,
            None => VOID,
        };
        for &i in &members {
            face_zone[i as usize] = mark;
        }
        if let (Some(z), Some((s, _))) = (zone, screen) {
            let limit = s.zone_limit[z] * (1.0 + 1e-12);
            flagged.extend(maybe.iter().copied().filter(|&i| {
                let (area, sin2) = area_and_sin2(cdt.face(i));
                area > limit || sin2 < s.sin2_limit
            }));
        }
    }
    flagged.sort_unstable();
    Ok(Classified {
        edge_piece,
        face_zone,
        flagged,
    })
}
