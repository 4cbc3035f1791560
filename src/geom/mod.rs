//! Planar primitives shared by every stage: areas, distances, projection onto a segment,
//! point-in-ring, and the robust orientation predicate. Points are `[x, y]` in metres.
//!
//! Nothing here knows about models or meshes; the stages above call these instead of writing
//! their own.

pub mod index;

/// A point `[x, y]`, m.
pub type Point = [f64; 2];

/// Orientation of `c` relative to the directed line `a → b`: positive when `c` lies to the left,
/// negative to the right, zero when the three points are collinear. The sign is exact (adaptive
/// precision arithmetic of J. R. Shewchuk, "Adaptive precision floating-point arithmetic and
/// fast robust geometric predicates", Discrete Comput. Geom. 18 (1997) 305–363, via the
/// `robust` crate); the magnitude is twice the signed area of the triangle `a b c`.
#[inline]
pub fn orient(a: Point, b: Point, c: Point) -> f64 {
    let coord = |p: Point| robust::Coord { x: p[0], y: p[1] };
    robust::orient2d(coord(a), coord(b), coord(c))
}

/// Twice the signed area of triangle `a b c` by plain floating-point arithmetic (positive when
/// counter-clockwise); use [`orient`] where only the sign matters and must be exact.
#[inline]
pub fn cross(a: Point, b: Point, c: Point) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

/// Signed area of triangle `a b c`, m² (positive when counter-clockwise).
#[inline]
pub fn triangle_area(a: Point, b: Point, c: Point) -> f64 {
    0.5 * cross(a, b, c)
}

/// Signed area of a closed polygon given by its vertices (the closing edge is implied), m²;
/// positive when the vertices run counter-clockwise (shoelace formula).
pub fn polygon_area(points: &[Point]) -> f64 {
    let n = points.len();
    let mut s = 0.0;
    for i in 0..n {
        let (p, q) = (points[i], points[(i + 1) % n]);
        s += p[0] * q[1] - q[0] * p[1];
    }
    0.5 * s
}

/// Euclidean distance between two points, m. Computed as the square root of the sum of
/// squares (not `hypot`, which rounds differently in about one case in six): the stages' own
/// distance helpers did so, and the meshes and output files stay bit-identical with it.
#[inline]
pub fn distance(a: Point, b: Point) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
}

/// Point at parameter `t` on the segment `a → b` (`t = 0` at `a`, `t = 1` at `b`).
#[inline]
pub fn lerp(a: Point, b: Point, t: f64) -> Point {
    [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]
}

/// Parameter `t ∈ [0, 1]` and distance of the point of segment `a → b` nearest to `p`.
pub fn project(a: Point, b: Point, p: Point) -> (f64, f64) {
    let d = [b[0] - a[0], b[1] - a[1]];
    let l2 = d[0] * d[0] + d[1] * d[1];
    let t = if l2 > 0.0 {
        (((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1]) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (t, distance(p, lerp(a, b, t)))
}

/// Crossing-number point-in-polygon test of `p` against the closed ring `points` (the closing
/// edge is implied). Points on the boundary may go either way; callers that care about the
/// boundary test the distance to it separately.
pub fn point_in_ring(points: &[Point], p: Point) -> bool {
    let n = points.len();
    if n == 0 {
        return false;
    }
    let mut inside = false;
    let mut j = n - 1;
    for i in 0..n {
        if crosses_ray(points[i], points[j], p) {
            inside = !inside;
        }
        j = i;
    }
    inside
}

/// Whether the edge `a b` crosses the horizontal ray from `p` towards +x (half-open in y, so a
/// vertex on the ray is counted once): the step of the crossing-number test.
#[inline]
pub fn crosses_ray(a: Point, b: Point, p: Point) -> bool {
    if (a[1] > p[1]) != (b[1] > p[1]) {
        let x = a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
        p[0] < x
    } else {
        false
    }
}

/// Axis-aligned bounding box `[x_min, y_min, x_max, y_max]` of a set of points
/// (`[inf, inf, -inf, -inf]` for none).
pub fn bbox(points: impl IntoIterator<Item = Point>) -> [f64; 4] {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for p in points {
        b[0] = b[0].min(p[0]);
        b[1] = b[1].min(p[1]);
        b[2] = b[2].max(p[0]);
        b[3] = b[3].max(p[1]);
    }
    b
}

/// The corner of triangle `p` opposite its shortest edge, with the two edge vectors from it:
/// the smallest interior angle is there (the larger side faces the larger angle).
fn smallest_corner(p: [Point; 3]) -> ([f64; 2], [f64; 2]) {
    let d2 = |a: Point, b: Point| (b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2);
    // Edge i is opposite corner i.
    let e = [d2(p[1], p[2]), d2(p[2], p[0]), d2(p[0], p[1])];
    let i = if e[0] <= e[1] && e[0] <= e[2] {
        0
    } else if e[1] <= e[2] {
        1
    } else {
        2
    };
    let (a, b, c) = (p[i], p[(i + 1) % 3], p[(i + 2) % 3]);
    ([b[0] - a[0], b[1] - a[1]], [c[0] - a[0], c[1] - a[1]])
}

/// Smallest interior angle of the triangle `p`, degrees (one `atan2`, at the corner opposite
/// the shortest edge).
pub fn min_angle_deg(p: [Point; 3]) -> f64 {
    let (u, v) = smallest_corner(p);
    let cr = u[0] * v[1] - u[1] * v[0];
    let dot = u[0] * v[0] + u[1] * v[1];
    cr.abs().atan2(dot).to_degrees()
}

/// sin² of the smallest interior angle of the triangle `p` (0 for a degenerate triangle), with
/// no trigonometric call. The smallest angle is at most 60°, where sin² grows with the angle,
/// so comparing sin² values (or with `sin²(limit)`) orders triangles as their angles do.
pub fn min_angle_sin2(p: [Point; 3]) -> f64 {
    let (u, v) = smallest_corner(p);
    let cr = u[0] * v[1] - u[1] * v[0];
    let uu = u[0] * u[0] + u[1] * u[1];
    let vv = v[0] * v[0] + v[1] * v[1];
    if uu == 0.0 || vv == 0.0 {
        return 0.0;
    }
    cr * cr / (uu * vv)
}

/// A point written for a message: `(x, y)`, each coordinate rounded to 12 significant digits and
/// written with the fewest decimals that show them (so `-5.1000000000000005` prints `-5.1`).
pub fn format_point(p: Point) -> String {
    format!("({}, {})", short(p[0]), short(p[1]))
}

/// `x` rounded to 12 significant digits, as the shortest decimal of the rounded value.
fn short(x: f64) -> String {
    match format!("{x:.11e}").parse::<f64>() {
        Ok(r) if x.is_finite() => format!("{r}"),
        _ => format!("{x}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn areas_and_orientation() {
        let sq = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]];
        assert_eq!(polygon_area(&sq), 2.0);
        let rev: Vec<Point> = sq.iter().rev().copied().collect();
        assert_eq!(polygon_area(&rev), -2.0);
        assert_eq!(triangle_area([0.0, 0.0], [1.0, 0.0], [0.0, 1.0]), 0.5);
        assert!(orient([0.0, 0.0], [1.0, 0.0], [0.5, 1e-300]) > 0.0);
        assert_eq!(orient([0.0, 0.0], [1.0, 1.0], [3.0, 3.0]), 0.0);
    }

    #[test]
    fn robust_orientation_of_nearly_collinear_points() {
        // The naive cross product gets the sign of this classic near-degenerate case wrong or
        // zero; the adaptive predicate must agree with the exact answer computed by hand:
        // c lies 2^-52·0.5 above the line y = x at x = 0.5 + 2^-53 (exactly representable).
        let a = [0.5, 0.5];
        let b = [12.0, 12.0];
        let c = [0.5 + f64::EPSILON / 2.0, 0.5 + f64::EPSILON];
        assert!(orient(a, b, c) > 0.0);
    }

    #[test]
    fn projection_distance_and_rings() {
        let (t, d) = project([0.0, 0.0], [2.0, 0.0], [1.0, 1.0]);
        assert_eq!((t, d), (0.5, 1.0));
        let (t, d) = project([0.0, 0.0], [0.0, 0.0], [3.0, 4.0]);
        assert_eq!((t, d), (0.0, 5.0));
        let sq = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]];
        assert!(point_in_ring(&sq, [1.0, 0.5]));
        assert!(!point_in_ring(&sq, [3.0, 0.5]));
        assert!(!point_in_ring(&[], [0.0, 0.0]));
        assert_eq!(bbox(sq), [0.0, 0.0, 2.0, 1.0]);
        assert!((min_angle_deg([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]) - 45.0).abs() < 1e-12);
        // A 30-60-90 triangle in every corner order: the smallest angle is 30°, sin² = 1/4.
        let t = [[0.0, 0.0], [3f64.sqrt(), 0.0], [0.0, 1.0]];
        for p in [
            t,
            [t[1], t[2], t[0]],
            [t[2], t[0], t[1]],
            [t[0], t[2], t[1]],
        ] {
            assert!((min_angle_deg(p) - 30.0).abs() < 1e-12);
            assert!((min_angle_sin2(p) - 0.25).abs() < 1e-15);
        }
        assert_eq!(min_angle_sin2([[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]]), 0.0);
        assert_eq!(min_angle_sin2([[0.0, 0.0], [0.0, 0.0], [2.0, 0.0]]), 0.0);
        assert_eq!(format_point([0.1, -2.0]), "(0.1, -2)");
        assert_eq!(format_point([-0.7, -5.1000000000000005]), "(-0.7, -5.1)");
        assert_eq!(
            format_point([123456.789012345, 1e-7]),
            "(123456.789012, 0.0000001)"
        );
    }
}
