//! Contact resistances as zero-thickness interfaces: after meshing, the nodes along every edge
//! where two materials of a `[[contacts]]` entry meet are split, and each such edge becomes an
//! [`InterfaceEdge`] coupling the two sides' nodes through the conductance 1/R.
//!
//! The rule at every node on an interface edge: the triangles around the node (its fan) are
//! grouped by crossing shared edges that are not interface edges. One group keeps the node; every
//! further group gets a duplicate node at the same point. The group that keeps the node is the one
//! holding the smallest material id (ties: the smallest triangle index), so along a plain
//! interface between materials a < b the b side is re-pointed to the duplicates. Consequences:
//! - where an interface ends inside the section (the materials go on meeting along an edge
//!   without contact, or a third material continues the line), the fan stays in one group at
//!   that node, which is not split: the jump falls to zero there;
//! - at a T-junction of three materials with two or three contacts, each group separated by
//!   interface edges gets its own node (up to three);
//! - on the outer boundary or a hole, the open fan is grouped the same way; boundary edges follow
//!   their triangle to the duplicate.
//!
//! Triangles keep their indices and materials; only node indices change, so element-wise
//! post-processing is unaffected. Duplicates are appended after the original nodes, in order of
//! their original node and group.

use super::{InterfaceEdge, Mesh};
use crate::geom;
use crate::model::Section;

/// Which contact (index into `Section::contacts`) an edge between materials `m1` and `m2`
/// carries, if any.
fn contact_of(section: &Section, m1: usize, m2: usize) -> Option<usize> {
    let (a, b) = (m1.min(m2), m1.max(m2));
    section.contacts.iter().position(|c| c.a == a && c.b == b)
}

/// Splits the nodes of `mesh` along the contacts of `section` and records the interface edges.
/// A mesh of a section without contacts is left as it is.
pub fn split(section: &Section, mesh: &mut Mesh) {
    if section.contacts.is_empty() {
        return;
    }
    // Interior edges: (lo, hi, triangle), sorted, so that the two triangles of an edge are
    // neighbours in the list.
    let mut edges: Vec<(usize, usize, usize)> = Vec::with_capacity(3 * mesh.triangles.len());
    for (t, tri) in mesh.triangles.iter().enumerate() {
        for k in 0..3 {
            let (u, v) = (tri[k], tri[(k + 1) % 3]);
            edges.push((u.min(v), u.max(v), t));
        }
    }
    edges.sort_unstable();
    // (u, v, t1, t2, contact) per interface edge, t1 on the side of contact.a.
    let mut found: Vec<(usize, usize, usize, usize, usize)> = Vec::new();
    // Shared non-interface edges per node: (node, t1, t2) for the fan grouping.
    let mut links: Vec<(usize, usize, usize)> = Vec::new();
    for w in edges.windows(2) {
        let ((u, v, t1), (u2, v2, t2)) = (w[0], w[1]);
        if (u, v) != (u2, v2) {
            continue;
        }
        let (m1, m2) = (mesh.material[t1], mesh.material[t2]);
        match (m1 != m2).then(|| contact_of(section, m1, m2)).flatten() {
            Some(c) => {
                let (ta, tb) = if m1 == section.contacts[c].a {
                    (t1, t2)
                } else {
                    (t2, t1)
                };
                found.push((u, v, ta, tb, c));
            }
            None => {
                links.push((u, t1, t2));
                links.push((v, t1, t2));
            }
        }
    }
    if found.is_empty() {
        return;
    }
    let n = mesh.nodes.len();
    let mut on_interface = vec![false; n];
    for &(u, v, ..) in &found {
        on_interface[u] = true;
        on_interface[v] = true;
    }
    // Fans of the interface nodes.
    let mut fan: Vec<(usize, usize)> = Vec::new();
    for (t, tri) in mesh.triangles.iter().enumerate() {
        for &v in tri {
            if on_interface[v] {
                fan.push((v, t));
            }
        }
    }
    fan.sort_unstable();
    links.retain(|&(v, ..)| on_interface[v]);
    links.sort_unstable();
    let old_triangles = mesh.triangles.clone();
    let (mut f, mut l) = (0, 0);
    while f < fan.len() {
        let v = fan[f].0;
        let f_end = f + fan[f..].iter().take_while(|x| x.0 == v).count();
        let l_end = l + links[l..].iter().take_while(|x| x.0 == v).count();
        let tris: Vec<usize> = fan[f..f_end].iter().map(|x| x.1).collect();
        let groups = fan_groups(&tris, &links[l..l_end]);
        if groups.len() > 1 {
            let mut order: Vec<(usize, usize, usize)> = groups
                .iter()
                .enumerate()
                .map(|(g, ts)| {
                    let m = ts.iter().map(|&t| mesh.material[t]).min().unwrap_or(0);
                    (m, ts[0], g)
                })
                .collect();
            order.sort_unstable();
            for &(_, _, g) in &order[1..] {
                let dup = mesh.nodes.len();
                mesh.nodes.push(mesh.nodes[v]);
                for &t in &groups[g] {
                    for x in mesh.triangles[t].iter_mut() {
                        if *x == v {
                            *x = dup;
                        }
                    }
                }
            }
        }
        f = f_end;
        l = l_end;
    }
    // Node of triangle t that was `v` before the split.
    let moved = |mesh: &Mesh, t: usize, v: usize| -> usize {
        let k = old_triangles[t].iter().position(|&x| x == v).unwrap_or(0);
        mesh.triangles[t][k]
    };
    for e in 0..mesh.boundary_edges.len() {
        let be = mesh.boundary_edges[e];
        mesh.boundary_edges[e].nodes = be.nodes.map(|v| moved(mesh, be.triangle, v));
    }
    let mut interfaces = Vec::with_capacity(found.len());
    for &(u, v, ta, tb, c) in &found {
        interfaces.push(InterfaceEdge {
            a: [moved(mesh, ta, u), moved(mesh, ta, v)],
            b: [moved(mesh, tb, u), moved(mesh, tb, v)],
            triangles: [ta, tb],
            contact: c,
            length: geom::distance(mesh.nodes[u], mesh.nodes[v]),
            conductance: 1.0 / section.contacts[c].resistance,
        });
    }
    mesh.interfaces = interfaces;
    mesh.stats.nodes = mesh.nodes.len();
}

/// Groups of the triangles `tris` (sorted) around one node, joined by the `links` (node,
/// t1, t2) of shared edges that are not interface edges; each group sorted, groups in order of
/// their first triangle.
fn fan_groups(tris: &[usize], links: &[(usize, usize, usize)]) -> Vec<Vec<usize>> {
    let idx = |t: usize| tris.binary_search(&t).unwrap_or(0);
    let mut parent: Vec<usize> = (0..tris.len()).collect();
    fn root(p: &mut [usize], mut i: usize) -> usize {
        while p[i] != i {
            p[i] = p[p[i]];
            i = p[i];
        }
        i
    }
    for &(_, t1, t2) in links {
        let (r1, r2) = (root(&mut parent, idx(t1)), root(&mut parent, idx(t2)));
        if r1 != r2 {
            parent[r1.max(r2)] = r1.min(r2);
        }
    }
    let mut groups: Vec<Vec<usize>> = Vec::new();
    let mut slot = vec![usize::MAX; tris.len()];
    for (i, &t) in tris.iter().enumerate() {
        let r = root(&mut parent, i);
        if slot[r] == usize::MAX {
            slot[r] = groups.len();
            groups.push(Vec::new());
        }
        groups[slot[r]].push(t);
    }
    groups
}

/// Warnings for contacts whose materials never meet on this mesh, naming the contact.
pub fn unmet_warnings(section: &Section, mesh: &Mesh) -> Vec<String> {
    section
        .contacts
        .iter()
        .enumerate()
        .filter(|(i, _)| !mesh.interfaces.iter().any(|e| e.contact == *i))
        .map(|(i, c)| {
            format!(
                "contacts[{i}] ({}): the materials never meet along an edge of the mesh; the contact has no effect",
                c.label(&section.materials)
            )
        })
        .collect()
}
