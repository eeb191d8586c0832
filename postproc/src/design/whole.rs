//! Figures of the whole solve: the inductance matrix by both routes, the stored energy and
//! the mesh.

use serde::Serialize;

use fluxpick_solver::bh::BhCurve;
use fluxpick_solver::Field;
use num_complex::Complex64 as C;

use crate::fields::{Fields, Phasor};
use crate::figures::domain_energy;

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct InductanceMatrix {
    pub names: Vec<String>,
    pub flux_h: Vec<Vec<f64>>,
    pub energy_h: Vec<Vec<f64>>,
}

/// The windings' mutual flux linkages per ampere (λ_ij of winding i in j's unit field, per
/// metre in planar form) and the inductance matrix by the flux and energy routes for
/// `depth`; `names` are the windings' in solve order.
pub fn inductance_matrix(
    fields: &Fields,
    depth: f64,
    names: Vec<String>,
) -> (Vec<Vec<C>>, InductanceMatrix) {
    // ∫ν Re(B_a · B_b*) dV: the energy route to L_ab
    let energy2 = |a: &Phasor, b: &Phasor| -> f64 {
        Field::coenergy_sum(&[(&a.f[0], &b.f[0]), (&a.f[1], &b.f[1])], |_| true)
    };
    let unit = &fields.unit;
    let nw = unit.len();
    let mut flux_m = vec![vec![0.0; nw]; nw];
    let mut energy_m = vec![vec![0.0; nw]; nw];
    let mut lambda_unit = vec![vec![C::new(0.0, 0.0); nw]; nw];
    for i in 0..nw {
        for j in 0..nw {
            lambda_unit[i][j] = fields.linkage(i, &unit[j]);
            flux_m[i][j] = lambda_unit[i][j].re * depth;
            if j >= i {
                energy_m[i][j] = energy2(&unit[i], &unit[j]) * depth;
                energy_m[j][i] = energy_m[i][j];
            }
        }
    }
    let matrix = InductanceMatrix {
        names,
        flux_h: flux_m,
        energy_h: energy_m,
    };
    (lambda_unit, matrix)
}

/// Stored energy of the total field for `depth` (J). With a Newton field (`curves` per
/// region): ∫ (∫₀^B H dB) dV over the physical domain, the curve's energy density in
/// nonlinear regions and ½ν|B|² elsewhere; otherwise ½∫ν|B|².
pub fn stored_energy(fields: &Fields, curves: &[Option<BhCurve>], depth: f64) -> f64 {
    let disc = &fields.disc;
    if fields.newton.is_none() {
        return domain_energy(&[&fields.total.f[0], &fields.total.f[1]]) * depth;
    }
    let f = &fields.total.f[0];
    let mut w = 0.0;
    for c in (0..disc.n_cells()).filter(|&c| !disc.is_image(c)) {
        let curve = curves
            .get(disc.cell_region[c] as usize)
            .and_then(|k| k.as_ref());
        f.quadrature(c, &fluxpick_solver::quadrature::DEGREE5, |v, dv| {
            let b = v.b[0].hypot(v.b[1]);
            w += dv
                * match curve {
                    Some(k) => k.energy_density(b),
                    None => 0.5 * f.nu_at(c, v.x) * b * b,
                };
        });
    }
    w * depth
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MeshFigures {
    /// Nodes and triangles of the physical domain (the exterior image not counted).
    pub nodes: usize,
    pub triangles: usize,
    /// Triangles of the exterior image of an open boundary.
    pub exterior_triangles: usize,
    pub unknowns: usize,
    pub min_angle_deg: f64,
    pub mean_angle_deg: f64,
    pub element_order: u8,
}

/// The mesh's figures: counts of the physical domain, its quality and the unknowns.
pub fn mesh_figures(mesh: &fluxpick_mesh::Mesh, fields: &Fields) -> MeshFigures {
    let disc = &fields.disc;
    let stats = mesh.stats();
    let physical_cells = (0..disc.n_cells()).filter(|&c| !disc.is_image(c)).count();
    let mut used = vec![false; disc.points.len()];
    for c in (0..disc.n_cells()).filter(|&c| !disc.is_image(c)) {
        for &n in disc.cell(c) {
            used[n as usize] = true;
        }
    }
    MeshFigures {
        nodes: used.iter().filter(|u| **u).count(),
        triangles: physical_cells,
        exterior_triangles: disc.n_cells() - physical_cells,
        unknowns: disc.n_dofs + fields.n_constraints,
        min_angle_deg: stats.min_angle_deg,
        mean_angle_deg: stats.mean_min_angle_deg,
        element_order: match disc.order {
            fluxpick_solver::Order::Quadratic => 2,
            _ => 1,
        },
    }
}
