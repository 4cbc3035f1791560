//! The element level of the P1 method: the conductivity tensor of a material and the geometry
//! of one linear triangle (area, shape-function gradients, conduction matrix), as small dense
//! nalgebra matrices.

use crate::mesh::Mesh;
use nalgebra::{Matrix2, Matrix2x3, Matrix3, Vector2, Vector3};

/// Symmetric conductivity tensor `D = [[kxx, kxy], [kxy, kyy]]`, W/(m·K). Isotropic materials
/// have `kxx = kyy = k`, `kxy = 0`; the general form is kept so anisotropy needs no new assembly.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conductivity {
    /// The tensor `D`, symmetric, W/(m·K).
    pub tensor: Matrix2<f64>,
}

impl Conductivity {
    /// Isotropic conductivity `k·I`, W/(m·K).
    pub fn isotropic(k: f64) -> Self {
        Conductivity {
            tensor: Matrix2::new(k, 0.0, 0.0, k),
        }
    }

    /// Anisotropic conductivity with principal values `k_major` along the direction at `angle`
    /// (radians, counter-clockwise from the x axis) and `k_minor` across it, W/(m·K):
    /// `D = R·diag(k_major, k_minor)·Rᵀ` with `R` the rotation by `angle`. The product is
    /// symmetrised, so `D` is exactly symmetric.
    pub fn principal(k_major: f64, k_minor: f64, angle: f64) -> Self {
        let rotation = nalgebra::Rotation2::new(angle).into_inner();
        let diagonal = Matrix2::from_diagonal(&Vector2::new(k_major, k_minor));
        let d = rotation * diagonal * rotation.transpose();
        Conductivity {
            tensor: (d + d.transpose()) * 0.5,
        }
    }

    /// `D·g` for a vector `g`.
    pub fn apply(&self, g: Vector2<f64>) -> Vector2<f64> {
        self.tensor * g
    }

    /// Heat flux `q = −D·∇T`, W/m², of a temperature gradient, K/m.
    pub fn flux(&self, gradient: Vector2<f64>) -> Vector2<f64> {
        -self.apply(gradient)
    }

    /// Energy density `g·D·g` of a gradient `g`, W/(m·K)·(K/m)².
    pub fn energy_density(&self, g: Vector2<f64>) -> f64 {
        g.dot(&self.apply(g))
    }
}

/// Geometry of one linear triangle: area and the (unscaled) shape-function gradients,
/// `∇N_i = (b_i, c_i) / (2A)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TriangleGeometry {
    /// Signed area, m² (positive for a counter-clockwise triangle).
    pub area: f64,
    /// `[[b_0, b_1, b_2], [c_0, c_1, c_2]]`, m: `2A·B` with `B` the gradient operator
    /// (column i is the gradient of shape function i times `2A`).
    pub scaled_gradients: Matrix2x3<f64>,
}

impl TriangleGeometry {
    /// Geometry of triangle `t` of the mesh (its node ids must exist).
    pub fn of(mesh: &Mesh, t: usize) -> Self {
        let ids = mesh.triangles[t];
        Self::from_points([mesh.nodes[ids[0]], mesh.nodes[ids[1]], mesh.nodes[ids[2]]])
    }

    /// Geometry of the triangle with corners `p`, m.
    pub fn from_points(p: [[f64; 2]; 3]) -> Self {
        let mut g = Matrix2x3::zeros();
        for i in 0..3 {
            let j = (i + 1) % 3;
            let k = (i + 2) % 3;
            g[(0, i)] = p[j][1] - p[k][1];
            g[(1, i)] = p[k][0] - p[j][0];
        }
        let area = 0.5 * (g[(0, 0)] * g[(1, 1)] - g[(0, 1)] * g[(1, 0)]);
        TriangleGeometry {
            area,
            scaled_gradients: g,
        }
    }

    /// Gradient of the linear field with the given nodal values, per metre.
    pub fn gradient(&self, values: Vector3<f64>) -> Vector2<f64> {
        (self.scaled_gradients * values) * (0.5 / self.area)
    }

    /// Element conduction matrix `A·Bᵀ·D·B`, W/K per metre of depth.
    pub fn conduction(&self, d: &Conductivity) -> Matrix3<f64> {
        let g = &self.scaled_gradients;
        let dg = d.tensor * g;
        (dg.transpose() * g) * (0.25 / self.area)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn principal_tensor_matches_the_hand_rotated_case() {
        // Worked by hand: angle 30°, cos² = 3/4, sin² = 1/4, sin·cos = √3/4;
        // kxx = 4·3/4 + 1·1/4 = 3.25, kyy = 4·1/4 + 1·3/4 = 1.75, kxy = (4 − 1)·√3/4.
        let d = Conductivity::principal(4.0, 1.0, 30f64.to_radians()).tensor;
        assert!((d[(0, 0)] - 3.25).abs() < 1e-12);
        assert!((d[(1, 1)] - 1.75).abs() < 1e-12);
        assert!((d[(0, 1)] - 3.0 * 3f64.sqrt() / 4.0).abs() < 1e-12);
        assert_eq!(d[(0, 1)], d[(1, 0)]);
        // The major axis is an eigenvector with eigenvalue k_major.
        let axis = Vector2::new(30f64.to_radians().cos(), 30f64.to_radians().sin());
        assert!((d * axis - axis * 4.0).norm() < 1e-12);
        // Zero angle gives the diagonal tensor; equal values the isotropic one.
        let d0 = Conductivity::principal(4.0, 1.0, 0.0).tensor;
        assert_eq!(d0, Matrix2::new(4.0, 0.0, 0.0, 1.0));
        let iso = Conductivity::principal(2.0, 2.0, 1.1).tensor;
        assert!((iso - Conductivity::isotropic(2.0).tensor).norm() < 1e-15);
    }

    #[test]
    fn conduction_matrix_of_a_right_triangle() {
        // Right triangle (0,0), (1,0), (0,1), k = 2: the P1 Laplacian element matrix is
        // k/2·[[2, −1, −1], [−1, 1, 0], [−1, 0, 1]] (standard linear-triangle result, from
        // memory; it follows from ∇N = (−1,−1), (1,0), (0,1) and A = 1/2).
        let g = TriangleGeometry::from_points([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]);
        assert_eq!(g.area, 0.5);
        let k = g.conduction(&Conductivity::isotropic(2.0));
        let expected = Matrix3::new(2.0, -1.0, -1.0, -1.0, 1.0, 0.0, -1.0, 0.0, 1.0);
        assert!((k - expected).norm() < 1e-15);
        let grad = g.gradient(Vector3::new(1.0, 3.0, -2.0));
        assert_eq!(grad, Vector2::new(2.0, -3.0));
        // A rotated anisotropic tensor conducts no heat for a uniform field either.
        let ka = g.conduction(&Conductivity::principal(5.0, 0.5, 0.7));
        assert!((ka * Vector3::repeat(1.0)).norm() < 1e-14);
        assert!((ka - ka.transpose()).norm() < 1e-15);
    }
}
