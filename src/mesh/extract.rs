//! Turning the classified triangulation into a [`Mesh`]: the kept faces and their nodes, the
//! triangles with their materials, the boundary edges with their names, all numbered in Morton
//! order (as [`spatial::renumber`] would number them) without an intermediate numbering, and
//! the statistics.

use super::classify::{Classified, NO_PIECE};
use super::mesher::lap;
use super::quality::{self, SmallAngle};
use super::{BoundaryEdge, Cdt, Mesh, MeshTimings, spatial};
use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::geometry::Pslg;
use crate::model::Section;
use spade::Triangulation;
use std::time::Instant;

/// Marks a triangulation vertex of no kept face.
const UNUSED: usize = usize::MAX;

/// The kept faces in face order: their vertices (triangulation indices), zones and boundary
/// edges (nodes as triangulation indices, triangle as the kept face's position).
struct Kept {
    faces: Vec<[u32; 3]>,
    zone: Vec<u32>,
    boundary: Vec<BoundaryEdge>,
    used: Vec<bool>,
}

/// One pass over the faces: the kept ones with their vertices, zones and boundary edges (edges
/// whose other side is not kept, named by their piece).
fn kept_faces(cdt: &Cdt, pslg: &Pslg, cl: &Classified) -> Result<Kept> {
    let mut k = Kept {
        faces: Vec::with_capacity(cdt.num_inner_faces()),
        zone: Vec::with_capacity(cdt.num_inner_faces()),
        boundary: Vec::new(),
        used: vec![false; cdt.num_vertices()],
    };
    for f in cdt.inner_faces() {
        let Some(z) = cl.zone(f.fix().index()) else {
            continue;
        };
        let t = k.faces.len();
        let edges = f.adjacent_edges();
        // spade's `vertices()`: the origins of `adjacent_edges()`, counter-clockwise.
        let vs = edges.map(|e| e.from().fix().index());
        for &v in &vs {
            k.used[v] = true;
        }
        k.faces.push(vs.map(|v| v as u32));
        k.zone.push(z as u32);
        for (i, e) in edges.iter().enumerate() {
            if e.rev()
                .face()
                .as_inner()
                .is_some_and(|n| cl.kept(n.fix().index()))
            {
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
            k.boundary.push(BoundaryEdge {
                nodes: [vs[i], vs[(i + 1) % 3]],
                boundary: p.boundary,
                triangle: t,
                ring,
                segment: p.segment,
            });
        }
    }
    if k.faces.is_empty() {
        return Err(Error::input("mesh: the section has no area"));
    }
    Ok(k)
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
    let k = kept_faces(cdt, pslg, cl)?;
    // Nodes in Morton order of their positions, ties by triangulation index (the order of a
    // numbering in vertex order, as `spatial::renumber` breaks ties).
    let all: Vec<Point> = cdt
        .vertices()
        .map(|v| {
            let p = v.position();
            [p.x, p.y]
        })
        .collect();
    let b = geom::bbox(
        all.iter()
            .zip(&k.used)
            .filter(|(_, u)| **u)
            .map(|(p, _)| *p),
    );
    let mut keyed: Vec<(u64, usize)> = all
        .iter()
        .zip(&k.used)
        .enumerate()
        .filter(|(_, (_, u))| **u)
        .map(|(i, (&p, _))| (spatial::morton_code(p, b), i))
        .collect();
    keyed.sort_unstable();
    let mut node_of = vec![UNUSED; all.len()];
    let mut nodes = Vec::with_capacity(keyed.len());
    for (new, &(_, v)) in keyed.iter().enumerate() {
        node_of[v] = new;
        nodes.push(all[v]);
    }
    drop(keyed);
    drop(all);
    // Triangles in Morton order of their centroids (codes in the nodes' box), ties by face
    // order.
    let mut keyed: Vec<(u64, usize)> = k
        .faces
        .iter()
        .enumerate()
        .map(|(t, f)| {
            let p = f.map(|v| nodes[node_of[v as usize]]);
            let c = [
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ];
            (spatial::morton_code(c, b), t)
        })
        .collect();
    keyed.sort_unstable();
    let mut tri_new_of = vec![0; keyed.len()];
    let mut triangles = Vec::with_capacity(keyed.len());
    let mut material = Vec::with_capacity(keyed.len());
    for (new, &(_, old)) in keyed.iter().enumerate() {
        tri_new_of[old] = new;
        triangles.push(k.faces[old].map(|v| node_of[v as usize]));
        material.push(pslg.zone_material[k.zone[old] as usize]);
    }
    drop(keyed);
    let mut boundary_edges = k.boundary;
    for e in &mut boundary_edges {
        e.nodes = e.nodes.map(|v| node_of[v]);
        e.triangle = tri_new_of[e.triangle];
    }
    lap(&mut t, &mut timings.extract_s);
    let mut small_nodes = vec![false; nodes.len()];
    for &(pv, _, _) in small {
        let n = node_of[to_cdt[pv]];
        if n != UNUSED {
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
