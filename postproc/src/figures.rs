//! Integrals of a solved field: energy, per-region flux density, flux linkage, inductance.

use fluxpick_solver::element::Geometry;
use fluxpick_solver::quadrature::DEGREE6;
use fluxpick_solver::statics::Density;
use fluxpick_solver::Field;

/// Mean and peak |B| over a set of regions.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RegionFlux {
    /// Volume-weighted mean of |B| (T).
    pub b_mean: f64,
    /// Largest |B| at the element nodes and quadrature points (T).
    pub b_peak: f64,
    /// Volume of the regions (m³ in axisymmetric form; m² per metre of depth in planar form).
    pub volume: f64,
}

/// Mean and peak |B| over the cells whose region is in `regions`. `parts` are the real and
/// imaginary parts of a phasor field (or one static field): |B| is the rms magnitude
/// sqrt(Σ_k |B_k|²).
pub fn region_flux(parts: &[&Field], regions: &[u32]) -> RegionFlux {
    let mut out = RegionFlux::default();
    let Some(first) = parts.first() else {
        return out;
    };
    let d = &first.disc;
    let mut integral = 0.0;
    // (|B|, volume weight) at a point of cell c
    let magnitude = |c: usize, l: [f64; 3]| -> (f64, f64) {
        let mut m2 = 0.0;
        let mut w = 0.0;
        for f in parts {
            let v = f.at_cell(c, l);
            m2 += v.b[0].powi(2) + v.b[1].powi(2);
            w = v.weight;
        }
        (m2.sqrt(), w)
    };
    const VERTICES: [[f64; 3]; 3] = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
    for c in (0..d.n_cells()).filter(|&c| regions.contains(&d.cell_region[c]) && !d.is_image(c)) {
        let area = Geometry::new(d.vertices(c)).area;
        for q in &DEGREE6 {
            let (b, w) = magnitude(c, q.l);
            let dv = q.w * area * w;
            integral += b * dv;
            out.volume += dv;
            out.b_peak = out.b_peak.max(b);
        }
        for l in VERTICES {
            // vertices on the axis use the limit form of B_z; still a valid |B|
            out.b_peak = out.b_peak.max(magnitude(c, l).0);
        }
    }
    if out.volume > 0.0 {
        out.b_mean = integral / out.volume;
    }
    out
}

/// Flux linkage ∫ A j dV of a winding with current density `j` per ampere (Wb-turns; per
/// metre of depth in planar form).
pub fn flux_linkage(f: &Field, density: &[Density]) -> f64 {
    use rayon::prelude::*;
    let d = &f.disc;
    if density.is_empty() {
        return 0.0;
    }
    (0..d.n_cells())
        .into_par_iter()
        .filter(|&c| density.iter().any(|de| de.region == d.cell_region[c]))
        .map(|c| {
            let mut lambda = 0.0;
            for de in density.iter().filter(|de| de.region == d.cell_region[c]) {
                f.quadrature(c, &DEGREE6, |v, dv| lambda += v.a * de.at(v.x) * dv);
            }
            lambda
        })
        // in cell order, summed serially: deterministic on any number of threads
        .collect::<Vec<f64>>()
        .iter()
        .sum()
}

/// Magnetic energy in the physical domain (not the exterior image) of the field whose parts
/// (a phasor's real and imaginary, say) are `parts`, in one pass: J (per metre in planar).
pub fn domain_energy(parts: &[&Field]) -> f64 {
    let Some(first) = parts.first() else {
        return 0.0;
    };
    let pairs: Vec<(&Field, &Field)> = parts.iter().map(|&f| (f, f)).collect();
    0.5 * Field::coenergy_sum(&pairs, |c| !first.disc.is_image(c))
}
