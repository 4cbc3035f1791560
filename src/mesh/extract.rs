//! Turning the classified triangulation into a [`Mesh`]: the kept faces and their nodes, the
//! triangles with their materials, the boundary edges with their names, and the statistics.

use super::classify::{Classified, NO_PIECE};
use super::mesher::lap;
use super::quality::{self, SmallAngle};
use super::{BoundaryEdge, Cdt, Mesh, MeshTimings, spatial};
use crate::error::{Error, Result};
use crate::geom::Point;
use crate::geometry::{Pslg, Zone};
use crate::model::Section;
use spade::handles::{FaceHandle, InnerTag};
use spade::{CdtEdge, Point2, Triangulation};
use std::time::Instant;

type Face<'a> = FaceHandle<'a, InnerTag, Point2<f64>, (), CdtEdge<()>, ()>;

/// The faces in the section and the node number of each triangulation vertex
/// (`usize::MAX` for vertices of no kept face), with the node coordinates.
fn kept_faces<'a>(
    cdt: &'a Cdt,
    cl: &Classified,
) -> Result<(Vec<Face<'a>>, Vec<usize>, Vec<Point>)> {
    let mut node_of = vec![usize::MAX; cdt.num_vertices()];
    let mut kept = Vec::new();
    for f in cdt.inner_faces() {
        if cl.face_zone[f.fix().index()].is_some() {
            kept.push(f);
            for v in f.vertices() {
                node_of[v.fix().index()] = 0;
            }
        }
    }
    if kept.is_empty() {
        return Err(Error::input("mesh: the section has no area"));
    }
    let mut nodes = Vec::new();
    for v in cdt.vertices() {
        let i = v.fix().index();
        if node_of[i] == 0 {
            node_of[i] = nodes.len();
            let p = v.position();
            nodes.push([p.x, p.y]);
        }
    }
    Ok((kept, node_of, nodes))
}

/// Edges of kept faces whose other side is not kept, with their boundary names.
fn boundary_edges(
    pslg: &Pslg,
    cl: &Classified,
    kept: &[Face],
    node_of: &[usize],
) -> Result<Vec<BoundaryEdge>> {
    let zone = |f: Face| -> Zone { cl.face_zone[f.fix().index()] };
    let mut out = Vec::new();
    for (t, f) in kept.iter().enumerate() {
        for e in f.adjacent_edges() {
            let other_kept = e.rev().face().as_inner().is_some_and(|n| zone(n).is_some());
            if other_kept {
                continue;
            }
            let piece = cl.edge_piece[e.as_undirected().fix().index()];
            if piece == NO_PIECE {
                return Err(Error::run(
                    "internal: section boundary edge is not a constraint",
                ));
            }
            let p = &pslg.pieces[piece as usize];
            let ring = p
                .ring
                .ok_or_else(|| Error::run("internal: boundary edge on an interface"))?;
            out.push(BoundaryEdge {
                nodes: [
                    node_of[e.from().fix().index()],
                    node_of[e.to().fix().index()],
                ],
                boundary: p.boundary,
                triangle: t,
                ring,
                segment: p.segment,
            });
        }
    }
    Ok(out)
}

/// Turn the classified triangulation into a [`Mesh`].
pub(super) fn extract(
    section: &Section,
    pslg: &Pslg,
    cdt: &Cdt,
    cl: &Classified,
    small: &[SmallAngle],
    to_cdt: &[usize],
    timings: &mut MeshTimings,
) -> Result<Mesh> {
    let mut t = Instant::now();
    let (kept, node_of, nodes) = kept_faces(cdt, cl)?;
    let mut triangles = Vec::with_capacity(kept.len());
    let mut material = Vec::with_capacity(kept.len());
    for f in &kept {
        let vs = f.vertices();
        triangles.push([
            node_of[vs[0].fix().index()],
            node_of[vs[1].fix().index()],
            node_of[vs[2].fix().index()],
        ]);
        let zone = cl.face_zone[f.fix().index()]
            .ok_or_else(|| Error::run("internal: kept face without zone"))?;
        material.push(pslg.zone_material[zone]);
    }
    let mut boundary_edges = boundary_edges(pslg, cl, &kept, &node_of)?;
    let (mut nodes, mut node_of) = (nodes, node_of);
    let new_of = spatial::renumber(spatial::Numbered {
        nodes: &mut nodes,
        triangles: &mut triangles,
        material: &mut material,
        boundary_edges: &mut boundary_edges,
    });
    for n in node_of.iter_mut().filter(|n| **n != usize::MAX) {
        *n = new_of[*n];
    }
    lap(&mut t, &mut timings.extract_s);
    let mut small_nodes = vec![false; nodes.len()];
    for &(pv, _, _) in small {
        let n = node_of[to_cdt[pv]];
        if n != usize::MAX {
            small_nodes[n] = true;
        }
    }
    let stats = quality::stats(
        pslg,
        &nodes,
        &triangles,
        boundary_edges.len(),
        small,
        &small_nodes,
        section.mesh.max_area,
    );
    lap(&mut t, &mut timings.stats_s);
    let mut mesh = Mesh {
        nodes,
        triangles,
        material,
        boundary_edges,
        interfaces: Vec::new(),
        stats,
    };
    super::contact::split(section, &mut mesh);
    lap(&mut t, &mut timings.contact_s);
    Ok(mesh)
}
