//! Spatial order: Morton (Z-order) codes of points in a bounding box, the order they give
//! (ties broken by the original index, so the order is deterministic), and the renumbering of a
//! mesh's nodes and triangles by it. Local numbering gives the sparse factorisation a banded,
//! cache-friendly matrix and spade's point location short walks.

use super::BoundaryEdge;
use crate::geom::{self, Point};

/// Spreads the low 32 bits of `x` to the even bit positions of a 64-bit word.
fn spread(x: u64) -> u64 {
    let mut x = x & 0xffff_ffff;
    x = (x | (x << 16)) & 0x0000_ffff_0000_ffff;
    x = (x | (x << 8)) & 0x00ff_00ff_00ff_00ff;
    x = (x | (x << 4)) & 0x0f0f_0f0f_0f0f_0f0f;
    x = (x | (x << 2)) & 0x3333_3333_3333_3333;
    (x | (x << 1)) & 0x5555_5555_5555_5555
}

/// Morton code of `p` in the box `b` = [x0, y0, x1, y1]: both coordinates quantised to 32 bits
/// and interleaved (x in the even bits).
pub fn morton_code(p: Point, b: [f64; 4]) -> u64 {
    let q = |v: f64, lo: f64, hi: f64| -> u64 {
        let w = hi - lo;
        if w <= 0.0 || !v.is_finite() {
            return 0;
        }
        (((v - lo) / w).clamp(0.0, 1.0) * f64::from(u32::MAX)) as u64
    };
    spread(q(p[0], b[0], b[2])) | (spread(q(p[1], b[1], b[3])) << 1)
}

/// Indices of `points` in Morton order within their bounding box (ties by index).
pub fn morton_order(points: &[Point]) -> Vec<usize> {
    let b = geom::bbox(points.iter().copied());
    let mut keyed: Vec<(u64, usize)> = points
        .iter()
        .enumerate()
        .map(|(i, &p)| (morton_code(p, b), i))
        .collect();
    keyed.sort_unstable();
    keyed.into_iter().map(|(_, i)| i).collect()
}

/// The parts of a mesh that carry node and triangle numbers.
pub struct Numbered<'a> {
    /// Node coordinates.
    pub nodes: &'a mut Vec<Point>,
    /// Triangles by node.
    pub triangles: &'a mut Vec<[usize; 3]>,
    /// Material of each triangle.
    pub material: &'a mut Vec<usize>,
    /// Boundary edges (nodes and triangle).
    pub boundary_edges: &'a mut [BoundaryEdge],
}

/// Renumbers nodes in Morton order of their coordinates and triangles in Morton order of their
/// centroids (codes in the nodes' bounding box); returns the new number of each old node.
pub fn renumber(m: Numbered) -> Vec<usize> {
    let b = geom::bbox(m.nodes.iter().copied());
    let node_order = morton_order(m.nodes);
    let mut new_of = vec![0; m.nodes.len()];
    for (new, &old) in node_order.iter().enumerate() {
        new_of[old] = new;
    }
    *m.nodes = node_order.iter().map(|&i| m.nodes[i]).collect();
    let mut keyed: Vec<(u64, usize)> = m
        .triangles
        .iter()
        .enumerate()
        .map(|(t, tri)| {
            let p = tri.map(|v| m.nodes[new_of[v]]);
            let c = [
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ];
            (morton_code(c, b), t)
        })
        .collect();
    keyed.sort_unstable();
    let mut tri_new_of = vec![0; keyed.len()];
    for (new, &(_, old)) in keyed.iter().enumerate() {
        tri_new_of[old] = new;
    }
    *m.triangles = keyed
        .iter()
        .map(|&(_, t)| m.triangles[t].map(|v| new_of[v]))
        .collect();
    *m.material = keyed.iter().map(|&(_, t)| m.material[t]).collect();
    for e in m.boundary_edges.iter_mut() {
        e.nodes = e.nodes.map(|v| new_of[v]);
        e.triangle = tri_new_of[e.triangle];
    }
    new_of
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn morton_codes_interleave_the_quantised_coordinates() {
        let b = [0.0, 0.0, 1.0, 1.0];
        assert_eq!(morton_code([0.0, 0.0], b), 0);
        // x = max sets every even bit, y = max every odd bit.
        assert_eq!(morton_code([1.0, 0.0], b), 0x5555_5555_5555_5555);
        assert_eq!(morton_code([0.0, 1.0], b), 0xaaaa_aaaa_aaaa_aaaa);
        assert_eq!(morton_code([1.0, 1.0], b), u64::MAX);
    }

    #[test]
    fn morton_order_visits_quadrants_in_z_order_and_breaks_ties_by_index() {
        let pts = [[0.9, 0.9], [0.1, 0.1], [0.9, 0.1], [0.1, 0.9], [0.1, 0.1]];
        // Z order: lower left, lower right, upper left, upper right; the duplicate by index.
        assert_eq!(morton_order(&pts), vec![1, 4, 2, 3, 0]);
    }
}
