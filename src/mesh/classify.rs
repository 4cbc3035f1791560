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
    /// Faces whose smallest angle has a sin² below this are reported.
    pub(super) sin2_limit: f64,
}

/// Marks a face not yet visited.
const UNSEEN: u32 = u32::MAX;
/// Marks a face outside the section (outer or void zone).
const VOID: u32 = u32::MAX - 1;
/// Marks a face visited in the current component, zone not yet known.
const PENDING: u32 = u32::MAX - 2;

/// The faces of the section as a pass over the triangulation found them, in any order: what
/// extraction needs, so that it does not walk the triangulation again.
#[derive(Default)]
pub(super) struct Gathered {
    /// Face index, vertices (triangulation indices, counter-clockwise, starting as spade's
    /// `vertices()` does) and zone of each face of the section.
    pub(super) faces: Vec<(u32, [u32; 3], u32)>,
    /// Edges of those faces with no face of the section on their other side: face index, the
    /// edge's place among the face's `adjacent_edges()`, and its piece.
    pub(super) boundary: Vec<(u32, u8, u32)>,
}

/// Zones of the faces and the piece of every constraint edge of the current triangulation.
pub(super) struct Classified {
    /// Piece of each undirected edge (`NO_PIECE` for non-constraint edges).
    pub(super) edge_piece: Vec<u32>,
    /// Zone per face index (`VOID` for the outer face and faces outside the section).
    face_zone: Vec<u32>,
    /// Faces of the section (in face order) that are larger than their zone's area limit or
    /// below the angle limit (empty without a [`Screen`]).
    pub(super) flagged: Vec<FixedFaceHandle<InnerTag>>,
    /// The section's faces, gathered by the flood fill when it screened them.
    pub(super) gathered: Option<Gathered>,
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

/// Area and sin² of the smallest angle of a triangle.
fn area_and_sin2(p: [Point; 3]) -> (f64, f64) {
    (
        geom::triangle_area(p[0], p[1], p[2]),
        geom::min_angle_sin2(p),
    )
}

/// One connected component of faces, as the flood fill visits it.
#[derive(Default)]
struct Component {
    /// Its faces (indices).
    members: Vec<u32>,
    /// Faces that may break a limit (screening).
    maybe: Vec<FixedFaceHandle<InnerTag>>,
    /// Vertices of its faces, beside `members` (gathering).
    verts: Vec<[u32; 3]>,
    /// Its constraint edges with no zone on their other side (gathering).
    boundary: Vec<(u32, u8, u32)>,
}

impl Component {
    fn clear(&mut self) {
        self.members.clear();
        self.maybe.clear();
        self.verts.clear();
        self.boundary.clear();
    }
}

/// Flood-fills the connected component of faces containing `start` (across non-constraint
/// edges), marking its faces `PENDING` and listing them in `comp`; returns its zone. With a
/// screen (and the smallest zone limit), lists the faces larger than that limit or below the
/// angle limit, and gathers the faces' vertices and boundary edges.
fn component_zone(
    pslg: &Pslg,
    edge_piece: &[u32],
    start: Face,
    face_zone: &mut [u32],
    screen: Option<(&Screen, f64)>,
    comp: &mut Component,
) -> Result<Zone> {
    let mut zone: Option<Zone> = None;
    let mut stack = vec![start];
    face_zone[start.fix().index()] = PENDING;
    while let Some(face) = stack.pop() {
        let fi = face.fix().index() as u32;
        comp.members.push(fi);
        let edges = face.adjacent_edges();
        let vs = edges.map(|e| e.from());
        if let Some((s, min_limit)) = screen {
            let p = vs.map(|v| {
                let q = v.position();
                [q.x, q.y]
            });
            let (area, sin2) = area_and_sin2(p);
            if area > min_limit || sin2 < s.sin2_limit {
                comp.maybe.push(face.fix());
            }
            comp.verts.push(vs.map(|v| v.fix().index() as u32));
        }
        for (slot, e) in edges.iter().enumerate() {
            if e.is_constraint_edge() {
                let piece = edge_piece[e.as_undirected().fix().index()];
                if piece == NO_PIECE {
                    return Err(Error::run("internal: constraint edge without a segment"));
                }
                let (a, b) = (vs[slot].position(), vs[(slot + 1) % 3].position());
                let (a, b) = ([a.x, a.y], [b.x, b.y]);
                let z = zone_left_of(pslg, piece as usize, a, b);
                match zone {
                    None => zone = Some(z),
                    Some(prev) if prev != z => {
                        return Err(Error::run(format!(
                            "internal: inconsistent zones around {}",
                            geom::format_point(a)
                        )));
                    }
                    _ => {}
                }
                if screen.is_some() && zone_left_of(pslg, piece as usize, b, a).is_none() {
                    comp.boundary.push((fi, slot as u8, piece));
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
/// zone's area limit or the angle limit, and the section's faces gathered for extraction.
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
    let mut comp = Component::default();
    let mut flagged = Vec::new();
    let mut gathered = Gathered::default();
    for f in cdt.inner_faces() {
        if face_zone[f.fix().index()] != UNSEEN {
            continue;
        }
        comp.clear();
        let zone = component_zone(pslg, &edge_piece, f, &mut face_zone, screen, &mut comp)?;
        let mark = match zone {
            Some(z) => u32::try_from(z)
                .ok()
                .filter(|&z| z < PENDING)
                .ok_or_else(|| Error::run("internal: too many zones"))?,
            None => VOID,
        };
        for &i in &comp.members {
            face_zone[i as usize] = mark;
        }
        if let (Some(z), Some((s, _))) = (zone, screen) {
            let limit = s.zone_limit[z] * (1.0 + 1e-12);
            flagged.extend(comp.maybe.iter().copied().filter(|&f| {
                let p = cdt.face(f).positions().map(|q| [q.x, q.y]);
                let (area, sin2) = area_and_sin2(p);
                area > limit || sin2 < s.sin2_limit
            }));
            gathered.faces.extend(
                comp.members
                    .iter()
                    .zip(&comp.verts)
                    .map(|(&i, &vs)| (i, vs, mark)),
            );
            gathered.boundary.extend_from_slice(&comp.boundary);
        }
    }
    flagged.sort_unstable();
    Ok(Classified {
        edge_piece,
        face_zone,
        flagged,
        gathered: screen.is_some().then_some(gathered),
    })
}
