//! One error model for every figure of a solve: the recovered-error estimate of
//! `fluxpick_solver::estimate` over the unit solutions, the applied field's and the total
//! field, read as the relative error of each kind of figure.
//!
//! Figures that are values of the bilinear form (flux linkages and inductances of windings,
//! impedances) have the exact error a(e_i, e_j) by Galerkin orthogonality, estimated by the
//! recovered-error Gram matrix; region means and losses use the recovered field over the
//! region. With B-H curves at 0 Hz the figures come from the Newton field, which these linear
//! estimates do not describe: no estimates are made then (docs/physics.md, "Error
//! estimates").

use fluxpick_solver::estimate::{estimate, Estimate, Use};
use num_complex::Complex64 as C;

use crate::fields::Fields;

/// The error model of one solve.
pub struct ErrorModel {
    pub est: Estimate,
    /// Fields per phasor in the Gram matrix: 1 (static) or 2 (real and imaginary parts).
    stride: usize,
    /// Index of the applied field's phasor in the Gram matrix (after the unit solutions).
    pub background_index: usize,
    /// Whether estimates are made (not for Newton solves).
    pub estimated: bool,
    cell_region: Vec<u32>,
}

impl ErrorModel {
    /// Estimates the errors of `fields`, leaving out the cells of region `skip` (the
    /// exterior image of an open boundary: a planar net current puts a logarithmic
    /// singularity at its centre).
    pub fn new(fields: &Fields, skip: Option<u32>) -> ErrorModel {
        let harmonic = fields.harmonic().is_some();
        let drive = Use {
            drive: true,
            per_cell: false,
        };
        let per_cell = Use {
            drive: false,
            per_cell: true,
        };
        let mut v = Vec::new();
        for p in fields.unit.iter().chain(fields.background.iter()) {
            v.push((&p.f[0], drive));
            if harmonic {
                v.push((&p.f[1], drive));
            }
        }
        v.push((&fields.total.f[0], per_cell));
        if harmonic {
            v.push((&fields.total.f[1], per_cell));
        }
        ErrorModel {
            est: estimate(&v, skip),
            stride: if harmonic { 2 } else { 1 },
            background_index: fields.unit.len(),
            estimated: fields.newton.is_none(),
            cell_region: fields.disc.cell_region.clone(),
        }
    }

    /// The complex Gram entry of phasors `a` and `b` (unit solutions, then the applied
    /// field's): the estimated a(e_a, e_b).
    pub fn gram(&self, a: usize, b: usize) -> C {
        let g = |x: usize, y: usize| self.est.gram[x][y];
        let (ra, rb) = (a * self.stride, b * self.stride);
        if self.stride == 1 {
            C::new(g(ra, rb), 0.0)
        } else {
            C::new(g(ra, rb) - g(ra + 1, rb + 1), g(ra, rb + 1) + g(ra + 1, rb))
        }
    }

    /// Error of winding `i`'s flux linkage in the total field (per metre in planar form).
    pub fn linkage(&self, i: usize, fields: &Fields) -> C {
        let mut e: C = (0..fields.unit.len())
            .map(|j| fields.currents[j] * self.gram(i, j))
            .sum();
        if let Some(k) = fields.background_coef {
            e += k * self.gram(i, self.background_index);
        }
        e
    }

    /// A relative error |err| / |value|, when estimates are made and both are usable.
    pub fn rel(&self, err: f64, value: f64) -> Option<f64> {
        (self.estimated && value.abs() > 0.0 && err.is_finite()).then(|| err.abs() / value.abs())
    }

    fn cells_in<'a>(&'a self, regions: &'a [u32]) -> impl Iterator<Item = usize> + 'a {
        (0..self.cell_region.len()).filter(|&c| regions.contains(&self.cell_region[c]))
    }

    /// Relative error of a field quantity over regions: √(η²/∫ν|B|²) of the total field.
    pub fn region(&self, regions: &[u32]) -> Option<f64> {
        let (mut e, mut w) = (0.0, 0.0);
        for c in self.cells_in(regions) {
            for k in 0..self.est.cell_error.len() {
                e += self.est.cell_error[k][c];
                w += self.est.cell_energy[k][c];
            }
        }
        (self.estimated && w > 0.0).then(|| (e / w).sqrt())
    }

    /// Relative error of a region's mean |B|: the shift of the mean when B_h is replaced by
    /// the recovered B* (the recovered field is the better one; their difference estimates
    /// the error of the mean), over the mean of |B_h|.
    pub fn region_mean(&self, regions: &[u32]) -> Option<f64> {
        let mut shift = [0.0; 4];
        let mut babs = 0.0;
        for c in self.cells_in(regions) {
            for k in 0..self.est.cell_shift.len() {
                shift[2 * k] += self.est.cell_shift[k][c][0];
                shift[2 * k + 1] += self.est.cell_shift[k][c][1];
                babs += self.est.cell_abs[k][c];
            }
        }
        let s = shift.iter().map(|x| x * x).sum::<f64>().sqrt();
        (self.estimated && babs > 0.0).then(|| s / babs)
    }

    /// Relative error of the stored energy (the recovered error energy over the energy).
    pub fn energy(&self) -> Option<f64> {
        let tot: f64 = self.est.cell_error.iter().flatten().sum();
        let w: f64 = self.est.cell_energy.iter().flatten().sum();
        (self.estimated && w > 0.0).then(|| tot / w)
    }
}
