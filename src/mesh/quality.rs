//! Mesh quality: input angles too small for the angle limit, and the statistics of a finished
//! mesh (angles, areas, the worst triangle, angles away from small input angles).

use super::{MeshStats, SmallInputAngle};
use crate::geom::{self, Point};
use crate::geometry::{Pslg, Zone};

/// An input angle below the reporting limit: (PSLG vertex, angle in degrees, length of the
/// shorter of the two pieces).
pub(super) type SmallAngle = (usize, f64, f64);

/// The smallest angle inside the section between consecutive pieces at one vertex, with the
/// shorter of the two pieces; `None` if none is below `limit` degrees. `inc` holds the
/// incident pieces as (direction angle, zone to their left, length).
fn smallest_opening(inc: &mut [(f64, Zone, f64)], limit: f64) -> Option<(f64, f64)> {
    inc.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut smallest: Option<(f64, f64)> = None;
    for i in 0..inc.len() {
        let (a0, zone, l0) = inc[i];
        let (a1, _, l1) = inc[(i + 1) % inc.len()];
        let mut w = a1 - a0;
        if w <= 0.0 {
            w += 2.0 * std::f64::consts::PI;
        }
        let w = w.to_degrees();
        if zone.is_some() && w < limit && smallest.is_none_or(|(s, _)| w < s) {
            smallest = Some((w, l0.min(l1)));
        }
    }
    smallest
}

/// Input angles (between constraint pieces meeting at a vertex, inside the section) smaller
/// than `limit` degrees, at the vertices `used`.
pub(super) fn small_input_angles(pslg: &Pslg, used: &[usize], limit: f64) -> Vec<SmallAngle> {
    let mut incident: Vec<Vec<(f64, Zone, f64)>> = vec![Vec::new(); pslg.vertices.len()];
    for p in &pslg.pieces {
        let [a, b] = p.v;
        let (pa, pb) = (pslg.vertices[a], pslg.vertices[b]);
        let len = geom::distance(pa, pb);
        incident[a].push(((pb[1] - pa[1]).atan2(pb[0] - pa[0]), p.left, len));
        incident[b].push(((pa[1] - pb[1]).atan2(pa[0] - pb[0]), p.right, len));
    }
    let mut out = Vec::new();
    for &v in used {
        let inc = &mut incident[v];
        if inc.len() < 2 {
            continue;
        }
        if let Some((w, l)) = smallest_opening(inc, limit) {
            out.push((v, w, l));
        }
    }
    out
}

/// Centroid of a triangle.
pub(super) fn centroid(p: [Point; 3]) -> Point {
    [
        (p[0][0] + p[1][0] + p[2][0]) / 3.0,
        (p[0][1] + p[1][1] + p[2][1]) / 3.0,
    ]
}

/// Longest edge of a triangle, m.
pub(super) fn longest_edge(p: [Point; 3]) -> f64 {
    geom::distance(p[0], p[1])
        .max(geom::distance(p[1], p[2]))
        .max(geom::distance(p[2], p[0]))
}

/// Quality statistics of a mesh. Next to a small input angle θ, Delaunay refinement leaves
/// skinny triangles in the wedge out to where its opening reaches the mesh size: triangles
/// touching the vertex (`small_nodes`) or with their centroid within
/// R = min(2ℓ/θ, shorter side) of it are "next to" it (ℓ: edge of an equilateral triangle of
/// area `max_area`).
pub(super) fn stats(
    pslg: &Pslg,
    nodes: &[Point],
    triangles: &[[usize; 3]],
    boundary_edges: usize,
    small: &[SmallAngle],
    small_nodes: &[bool],
    max_area: f64,
) -> MeshStats {
    let ell = (4.0 * max_area / 3f64.sqrt()).sqrt();
    let small_input_angles: Vec<SmallInputAngle> = small
        .iter()
        .map(|&(v, a, side)| SmallInputAngle {
            at: pslg.vertices[v],
            angle_deg: a,
            radius: (2.0 * ell / a.to_radians()).min(side),
        })
        .collect();
    let mut stats = MeshStats {
        nodes: nodes.len(),
        triangles: triangles.len(),
        boundary_edges,
        min_angle_deg: f64::INFINITY,
        min_angle_away_from_small_input_angles_deg: f64::INFINITY,
        max_area: 0.0,
        min_area: f64::INFINITY,
        worst_triangle: 0,
        worst_triangle_centroid: [0.0; 2],
        small_input_angles,
        area: 0.0,
    };
    // Angles compared by sin² (no trigonometry per triangle); degrees for the two worst only.
    let (mut worst, mut worst_away) = (f64::INFINITY, None::<(f64, usize)>);
    for (t, tri) in triangles.iter().enumerate() {
        let p = [nodes[tri[0]], nodes[tri[1]], nodes[tri[2]]];
        let a = geom::triangle_area(p[0], p[1], p[2]);
        stats.area += a;
        stats.max_area = stats.max_area.max(a);
        stats.min_area = stats.min_area.min(a);
        let m = geom::min_angle_sin2(p);
        if m < worst {
            worst = m;
            stats.worst_triangle = t;
        }
        let near_small_angle = || {
            let c = centroid(p);
            stats
                .small_input_angles
                .iter()
                .any(|s| (c[0] - s.at[0]).powi(2) + (c[1] - s.at[1]).powi(2) <= s.radius * s.radius)
        };
        if worst_away.is_none_or(|(w, _)| m < w)
            && !tri.iter().any(|&n| small_nodes[n])
            && !near_small_angle()
        {
            worst_away = Some((m, t));
        }
    }
    let angle_of = |t: usize| {
        let tri = triangles[t];
        geom::min_angle_deg([nodes[tri[0]], nodes[tri[1]], nodes[tri[2]]])
    };
    if !triangles.is_empty() {
        let tri = triangles[stats.worst_triangle];
        stats.min_angle_deg = angle_of(stats.worst_triangle);
        stats.worst_triangle_centroid = centroid([nodes[tri[0]], nodes[tri[1]], nodes[tri[2]]]);
    }
    if let Some((_, t)) = worst_away {
        stats.min_angle_away_from_small_input_angles_deg = angle_of(t);
    }
    stats
}
