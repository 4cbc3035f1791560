//! Turning the classified triangulation into a [`Mesh`]: the kept faces and their nodes, the
//! triangles with their materials, the boundary edges with their names, all numbered in Morton
//! order (as [`spatial::renumber`] would number them) without an intermediate numbering, and
//! the statistics.

use super::classify::{Classified, Gathered, NO_PIECE};
use super::mesher::lap;
use super::quality::{self, SmallAngle};
use super::{BoundaryEdge, Cdt, Mesh, MeshTimings, spatial};
use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::geometry::Pslg;
use crate::model::Section;
use rayon::prelude::*;
use spade::Triangulation;
use std::time::Instant;

/// Marks a triangulation vertex of no kept face.
const UNUSED: usize = usize::MAX;

/// One pass over the faces: the kept ones with their vertices and zones, and their edges whose
/// other side is not kept (as the classification gathers them when it screens).
fn gather(cdt: &Cdt, cl: &Classified) -> Result<Gathered> {
    let mut g = Gathered::default();
    for f in cdt.inner_faces() {
        let fi = f.fix().index();
        let Some(z) = cl.zone(fi) else {
            continue;
        };
        let edges = f.adjacent_edges();
        // spade's `vertices()`: the origins of `adjacent_edges()`, counter-clockwise.
        g.faces.push((
            fi as u32,
            edges.map(|e| e.from().fix().index() as u32),
            z as u32,
        ));
        for (slot, e) in edges.iter().enumerate() {
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
            g.boundary.push((fi as u32, slot as u8, piece));
        }
    }
    Ok(g)
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
    let own;
    let g = match &cl.gathered {
        Some(g) => g,
        None => {
            own = gather(cdt, cl)?;
            &own
        }
    };
    if g.faces.is_empty() {
        return Err(Error::input("mesh: the section has no area"));
    }
    let mut used = vec![false; cdt.num_vertices()];
    for (_, vs, _) in &g.faces {
        for &v in vs {
            used[v as usize] = true;
        }
    }
    // Nodes in Morton order of their positions, ties by triangulation index (the order a
    // numbering in vertex order gets from `spatial::renumber`).
    let all: Vec<Point> = cdt
        .vertices()
        .map(|v| {
            let p = v.position();
            [p.x, p.y]
        })
        .collect();
    let b = geom::bbox(all.iter().zip(&used).filter(|(_, u)| **u).map(|(p, _)| *p));
    // Keys are distinct (the index breaks ties), so the parallel sort gives the one order
    // whatever the thread count.
    let mut keyed: Vec<(u64, usize)> = all
        .par_iter()
        .zip(&used)
        .enumerate()
        .filter(|(_, (_, u))| **u)
        .map(|(i, (&p, _))| (spatial::morton_code(p, b), i))
        .collect();
    drop(used);
    keyed.par_sort_unstable();
    let mut node_of = vec![UNUSED; all.len()];
    let mut nodes = Vec::with_capacity(keyed.len());
    for (new, &(_, v)) in keyed.iter().enumerate() {
        node_of[v] = new;
        nodes.push(all[v]);
    }
    drop(keyed);
    // Triangles in Morton order of their centroids (codes in the nodes' box), ties by face
    // index (the order of the faces in the triangulation).
    let mut keyed: Vec<(u64, u64)> = g
        .faces
        .par_iter()
        .enumerate()
        .map(|(k, (fi, vs, _))| {
            let p = vs.map(|v| all[v as usize]);
            let c = [
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ];
            (
                spatial::morton_code(c, b),
                (u64::from(*fi) << 32) | k as u64,
            )
        })
        .collect();
    drop(all);
    keyed.par_sort_unstable();
    let mut tri_of_face = vec![u32::MAX; cdt.num_all_faces()];
    let mut triangles = Vec::with_capacity(keyed.len());
    let mut material = Vec::with_capacity(keyed.len());
    for (new, &(_, packed)) in keyed.iter().enumerate() {
        let (fi, k) = ((packed >> 32) as usize, (packed & 0xffff_ffff) as usize);
        let (_, vs, z) = g.faces[k];
        tri_of_face[fi] = new as u32;
        triangles.push(vs.map(|v| node_of[v as usize]));
        material.push(pslg.zone_material[z as usize]);
    }
    drop(keyed);
    // Boundary edges in the order of their faces in the triangulation, then of the edges.
    let mut bnd = g.boundary.clone();
    bnd.sort_unstable();
    let mut boundary_edges = Vec::with_capacity(bnd.len());
    for (fi, slot, piece) in bnd {
        let t = tri_of_face[fi as usize] as usize;
        let p = &pslg.pieces[piece as usize];
        let ring = p
            .ring
            .ok_or_else(|| Error::run("internal: boundary edge on an interface"))?;
        let slot = slot as usize;
        boundary_edges.push(BoundaryEdge {
            nodes: [triangles[t][slot], triangles[t][(slot + 1) % 3]],
            boundary: p.boundary,
            triangle: t,
            ring,
            segment: p.segment,
        });
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
