//! Classification of the triangulation: the PSLG piece under every constraint edge (refinement
//! splits constraints, so each is followed from end to end) and the zone of every face (faces
//! connected across non-constraint edges share the zone a bounding piece gives them).

use super::{Cdt, Constraint};
use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::geometry::{Pslg, Zone};
use spade::Triangulation;
use spade::handles::{FixedVertexHandle, InnerTag};

/// Marks a triangulation edge that lies on no piece.
pub(super) const NO_PIECE: u32 = u32::MAX;

/// Zones of the faces and the piece of every constraint edge of the current triangulation.
pub(super) struct Classified {
    /// Piece of each undirected edge (`NO_PIECE` for non-constraint edges).
    pub(super) edge_piece: Vec<u32>,
    /// Zone per face index (outer face and void faces: `None`).
    pub(super) face_zone: Vec<Zone>,
}

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

/// The zone of the connected component of faces containing `start` (across non-constraint
/// edges), marking its faces with component number `c`.
fn component_zone(
    pslg: &Pslg,
    edge_piece: &[u32],
    start: spade::handles::FaceHandle<'_, InnerTag, spade::Point2<f64>, (), spade::CdtEdge<()>, ()>,
    c: usize,
    comp: &mut [usize],
) -> Result<Zone> {
    let mut zone: Option<Zone> = None;
    let mut stack = vec![start];
    comp[start.fix().index()] = c;
    while let Some(face) = stack.pop() {
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
                    if comp[ni] == usize::MAX {
                        comp[ni] = c;
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

/// Pieces of the constraint edges and zones of the faces of the current triangulation.
pub(super) fn classify(cdt: &Cdt, pslg: &Pslg, cons: &[Constraint]) -> Result<Classified> {
    let mut edge_piece = vec![NO_PIECE; cdt.num_undirected_edges()];
    for c in cons {
        trace_constraint(cdt, c, &mut edge_piece)?;
    }
    let nfaces = cdt.num_all_faces();
    let mut comp = vec![usize::MAX; nfaces];
    let mut comp_zone: Vec<Zone> = Vec::new();
    for f in cdt.inner_faces() {
        if comp[f.fix().index()] != usize::MAX {
            continue;
        }
        let c = comp_zone.len();
        comp_zone.push(component_zone(pslg, &edge_piece, f, c, &mut comp)?);
    }
    let mut face_zone = vec![None; nfaces];
    for f in cdt.inner_faces() {
        let i = f.fix().index();
        face_zone[i] = comp_zone[comp[i]];
    }
    Ok(Classified {
        edge_piece,
        face_zone,
    })
}
