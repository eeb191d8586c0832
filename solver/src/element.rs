//! Lagrange triangles of first and second order, and the element kernels.
//!
//! Kernels are pure functions over fixed-size arrays: node coordinates in, local matrices out.
//! The weak forms (docs/physics.md, "Two formulations in one unknown"), with w = 1 (planar) or w = 2πr (axisymmetric):
//!
//! * planar A_z: `∫ ν ∇A·∇v dS`, so the "curl vector" of a basis function is `∇N`;
//! * axisymmetric A_φ: `∫ ν [∂A/∂z ∂v/∂z + (∂A/∂r + A/r)(∂v/∂r + v/r)] 2πr dS`, so the curl
//!   vector is `(∂N/∂r + N/r, ∂N/∂z)`: the A/r term is part of B_z and must not be dropped;
//! * mass `∫ σ N_i N_j w dS` and source `∫ J N_i w dS` for eddy currents and windings.

use crate::quadrature::{QuadPoint, DEGREE5};
use crate::Formulation;

/// A basis on the triangle: values and barycentric derivatives at a point.
pub trait Basis<const N: usize> {
    /// Shape function values at barycentric point `l`.
    fn values(l: [f64; 3]) -> [f64; N];
    /// Derivatives dN_i/dL_k (treating L1, L2, L3 as independent).
    fn dl(l: [f64; 3]) -> [[f64; 3]; N];
}

/// Linear (3-node) triangle.
pub struct P1;
/// Quadratic (6-node) triangle: vertices, then midpoints of edges (0,1), (1,2), (2,0).
pub struct P2;

impl Basis<3> for P1 {
    fn values(l: [f64; 3]) -> [f64; 3] {
        l
    }
    fn dl(_l: [f64; 3]) -> [[f64; 3]; 3] {
        [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    }
}

impl Basis<6> for P2 {
    fn values(l: [f64; 3]) -> [f64; 6] {
        [
            l[0] * (2.0 * l[0] - 1.0),
            l[1] * (2.0 * l[1] - 1.0),
            l[2] * (2.0 * l[2] - 1.0),
            4.0 * l[0] * l[1],
            4.0 * l[1] * l[2],
            4.0 * l[2] * l[0],
        ]
    }
    fn dl(l: [f64; 3]) -> [[f64; 3]; 6] {
        [
            [4.0 * l[0] - 1.0, 0.0, 0.0],
            [0.0, 4.0 * l[1] - 1.0, 0.0],
            [0.0, 0.0, 4.0 * l[2] - 1.0],
            [4.0 * l[1], 4.0 * l[0], 0.0],
            [0.0, 4.0 * l[2], 4.0 * l[1]],
            [4.0 * l[2], 0.0, 4.0 * l[0]],
        ]
    }
}

/// Affine geometry of a straight-sided triangle.
#[derive(Clone, Copy, Debug)]
pub struct Geometry {
    pub v: [[f64; 2]; 3],
    /// Signed area (positive for counter-clockwise).
    pub area: f64,
    /// Gradients of the barycentric coordinates.
    pub grad_l: [[f64; 2]; 3],
}

impl Geometry {
    pub fn new(v: [[f64; 2]; 3]) -> Self {
        let [a, b, c] = v;
        let det = (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]);
        let area = 0.5 * det;
        let inv = 1.0 / det;
        let grad_l = [
            [(b[1] - c[1]) * inv, (c[0] - b[0]) * inv],
            [(c[1] - a[1]) * inv, (a[0] - c[0]) * inv],
            [(a[1] - b[1]) * inv, (b[0] - a[0]) * inv],
        ];
        Geometry { v, area, grad_l }
    }

    /// Cartesian point of barycentric coordinates `l`.
    pub fn point(&self, l: [f64; 3]) -> [f64; 2] {
        [
            l[0] * self.v[0][0] + l[1] * self.v[1][0] + l[2] * self.v[2][0],
            l[0] * self.v[0][1] + l[1] * self.v[1][1] + l[2] * self.v[2][1],
        ]
    }

    /// Barycentric coordinates of a Cartesian point.
    pub fn barycentric(&self, p: [f64; 2]) -> [f64; 3] {
        let a = self.v[0];
        let d = [p[0] - a[0], p[1] - a[1]];
        let l1 = self.grad_l[1][0] * d[0] + self.grad_l[1][1] * d[1];
        let l2 = self.grad_l[2][0] * d[0] + self.grad_l[2][1] * d[1];
        [1.0 - l1 - l2, l1, l2]
    }

    /// Cartesian gradients of the basis functions at `l`.
    pub fn gradients<const N: usize, B: Basis<N>>(&self, l: [f64; 3]) -> [[f64; 2]; N] {
        let dl = B::dl(l);
        let mut g = [[0.0; 2]; N];
        for i in 0..N {
            for k in 0..3 {
                g[i][0] += dl[i][k] * self.grad_l[k][0];
                g[i][1] += dl[i][k] * self.grad_l[k][1];
            }
        }
        g
    }
}

/// Values and curl vectors of the basis at a point, with the integration weight factor.
///
/// The curl vector c_i is such that B = Σ a_i (c_i[1], -c_i[0]) ... see [`b_from_curl`]:
/// planar c_i = ∇N_i; axisymmetric c_i = (∂N_i/∂r + N_i/r, ∂N_i/∂z).
pub struct PointBasis<const N: usize> {
    pub n: [f64; N],
    pub c: [[f64; 2]; N],
    /// 1 (planar) or 2πr (axisymmetric).
    pub weight: f64,
    pub x: [f64; 2],
}

pub fn point_basis<const N: usize, B: Basis<N>>(
    g: &Geometry,
    l: [f64; 3],
    formulation: Formulation,
) -> PointBasis<N> {
    let n = B::values(l);
    let grad = g.gradients::<N, B>(l);
    let x = g.point(l);
    match formulation {
        Formulation::Planar => PointBasis {
            n,
            c: grad,
            weight: 1.0,
            x,
        },
        Formulation::Axisymmetric => {
            let r = x[0];
            let mut c = [[0.0; 2]; N];
            for i in 0..N {
                c[i] = [grad[i][0] + n[i] / r, grad[i][1]];
            }
            PointBasis {
                n,
                c,
                weight: std::f64::consts::TAU * r,
                x,
            }
        }
    }
}

/// Flux density from a field's curl vector `c = Σ a_i c_i`.
/// Planar: B = (∂A/∂y, −∂A/∂x) with c = ∇A. Axisymmetric: B_r = −∂A/∂z, B_z = ∂A/∂r + A/r with
/// c = (∂A/∂r + A/r, ∂A/∂z).
pub fn b_from_curl(c: [f64; 2], formulation: Formulation) -> [f64; 2] {
    match formulation {
        Formulation::Planar => [c[1], -c[0]],
        Formulation::Axisymmetric => [-c[1], c[0]],
    }
}

/// How the reluctivity varies over an element.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Reluctivity {
    Constant(f64),
    /// The exterior image of an open boundary (Kelvin inversion about `center` with radius
    /// `radius`, image coordinates): ν' = ν0 (ρ'/R)² in the axisymmetric form, ν0 in planar.
    KelvinImage {
        nu0: f64,
        center: [f64; 2],
        radius: f64,
    },
}

impl Reluctivity {
    pub fn at(&self, x: [f64; 2], formulation: Formulation) -> f64 {
        match *self {
            Reluctivity::Constant(nu) => nu,
            Reluctivity::KelvinImage {
                nu0,
                center,
                radius,
            } => match formulation {
                Formulation::Planar => nu0,
                Formulation::Axisymmetric => {
                    let dx = x[0] - center[0];
                    let dy = x[1] - center[1];
                    nu0 * (dx * dx + dy * dy) / (radius * radius)
                }
            },
        }
    }
}

/// The local matrices of one element.
#[derive(Clone, Copy, Debug)]
pub struct Local<const N: usize> {
    /// `∫ ν c_i·c_j w dS`
    pub stiffness: [[f64; N]; N],
    /// `∫ N_i N_j w dS` (multiply by σ or jωσ as needed)
    pub mass: [[f64; N]; N],
    /// `∫ N_i w dS` (multiply by a uniform current density)
    pub load: [f64; N],
    /// `∫ N_i / r w dS` in axisymmetric (a 1/r current density), `∫ N_i w` in planar
    pub load_inv_r: [f64; N],
    /// `∫ w / r² dS` in axisymmetric, `∫ w dS` in planar (a solid conductor's self term)
    pub measure_inv_r2: f64,
    /// Cross-section area `∫ dS` (no volume weight).
    pub area: f64,
    /// `∫ dS / r` (no volume weight) in axisymmetric, the area in planar.
    pub area_inv_r: f64,
}

/// Element kernel: stiffness, mass and load of one triangle. Pure function.
pub fn local_matrices<const N: usize, B: Basis<N>>(
    nodes: &[[f64; 2]; 3],
    nu: Reluctivity,
    formulation: Formulation,
) -> Local<N> {
    local_matrices_with::<N, B>(nodes, nu, formulation, &DEGREE5)
}

pub fn local_matrices_with<const N: usize, B: Basis<N>>(
    nodes: &[[f64; 2]; 3],
    nu: Reluctivity,
    formulation: Formulation,
    rule: &[QuadPoint],
) -> Local<N> {
    let g = Geometry::new(*nodes);
    let mut out = Local {
        stiffness: [[0.0; N]; N],
        mass: [[0.0; N]; N],
        load: [0.0; N],
        load_inv_r: [0.0; N],
        measure_inv_r2: 0.0,
        area: g.area,
        area_inv_r: 0.0,
    };
    for q in rule {
        let pb = point_basis::<N, B>(&g, q.l, formulation);
        let dw = q.w * g.area * pb.weight;
        let nu_q = nu.at(pb.x, formulation);
        let inv_r = match formulation {
            Formulation::Planar => 1.0,
            Formulation::Axisymmetric => 1.0 / pb.x[0],
        };
        out.measure_inv_r2 += dw * inv_r * inv_r;
        out.area_inv_r += q.w * g.area * inv_r;
        for i in 0..N {
            out.load[i] += dw * pb.n[i];
            out.load_inv_r[i] += dw * pb.n[i] * inv_r;
            for j in 0..N {
                out.stiffness[i][j] +=
                    dw * nu_q * (pb.c[i][0] * pb.c[j][0] + pb.c[i][1] * pb.c[j][1]);
                out.mass[i][j] += dw * pb.n[i] * pb.n[j];
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tri() -> [[f64; 2]; 3] {
        [[0.3, 0.1], [1.2, 0.4], [0.5, 0.9]]
    }

    /// Basis gradients against central finite differences (derivatives are checked against finite differences: common practice, no source).
    fn fd_check<const N: usize, B: Basis<N>>() {
        let g = Geometry::new(tri());
        let l = [0.2, 0.5, 0.3];
        let p = g.point(l);
        let grad = g.gradients::<N, B>(l);
        let h = 1e-6;
        for (axis, _) in [0, 1].iter().enumerate() {
            let mut pp = p;
            let mut pm = p;
            pp[axis] += h;
            pm[axis] -= h;
            let vp = B::values(g.barycentric(pp));
            let vm = B::values(g.barycentric(pm));
            for i in 0..N {
                let fd = (vp[i] - vm[i]) / (2.0 * h);
                assert!(
                    (fd - grad[i][axis]).abs() < 1e-7,
                    "N{i} d/dx{axis}: {fd} vs {}",
                    grad[i][axis]
                );
            }
        }
    }

    #[test]
    fn gradients_match_finite_differences() {
        fd_check::<3, P1>();
        fd_check::<6, P2>();
    }

    #[test]
    fn partition_of_unity_and_nodal_interpolation() {
        let l = [0.1, 0.7, 0.2];
        assert!((P2::values(l).iter().sum::<f64>() - 1.0).abs() < 1e-14);
        let nodes = [
            [1.0, 0.0, 0.0],
            [0.0, 1.0, 0.0],
            [0.0, 0.0, 1.0],
            [0.5, 0.5, 0.0],
            [0.0, 0.5, 0.5],
            [0.5, 0.0, 0.5],
        ];
        for (i, li) in nodes.iter().enumerate() {
            let v = P2::values(*li);
            for (j, vj) in v.iter().enumerate() {
                let e = if i == j { 1.0 } else { 0.0 };
                assert!((vj - e).abs() < 1e-14);
            }
        }
    }

    #[test]
    fn planar_stiffness_annihilates_constants_and_is_symmetric() {
        let loc = local_matrices::<6, P2>(&tri(), Reluctivity::Constant(2.0), Formulation::Planar);
        for i in 0..6 {
            let row: f64 = loc.stiffness[i].iter().sum();
            assert!(row.abs() < 1e-12);
            for j in 0..6 {
                assert!((loc.stiffness[i][j] - loc.stiffness[j][i]).abs() < 1e-12);
            }
        }
        let area: f64 = loc.mass.iter().flatten().sum();
        assert!((area - Geometry::new(tri()).area).abs() < 1e-12);
    }

    /// In axisymmetric form A = c·r is a uniform axial field B_z = 2c (B_z = ∂A/∂r + A/r):
    /// the curl vector must give exactly that; without the A/r term it would give c.
    #[test]
    fn axisymmetric_curl_includes_a_over_r() {
        let g = Geometry::new(tri());
        let l = [0.25, 0.25, 0.5];
        let pb = point_basis::<6, P2>(&g, l, Formulation::Axisymmetric);
        let nodes = [
            g.v[0],
            g.v[1],
            g.v[2],
            g.point([0.5, 0.5, 0.0]),
            g.point([0.0, 0.5, 0.5]),
            g.point([0.5, 0.0, 0.5]),
        ];
        let c = 3.0;
        let mut curl = [0.0; 2];
        for i in 0..6 {
            let a = c * nodes[i][0];
            curl[0] += a * pb.c[i][0];
            curl[1] += a * pb.c[i][1];
        }
        let b = b_from_curl(curl, Formulation::Axisymmetric);
        assert!(
            (b[1] - 2.0 * c).abs() < 1e-12 && b[0].abs() < 1e-12,
            "{b:?}"
        );
    }
}
