//! Figures of a part (a core, a plate, a wall): |B| statistics, eddy-current loss, against
//! its material's saturation, and its apparent permeability in an applied field.

use crate::errors::ErrorModel;
use crate::estimated::Estimated;
use crate::fields::{Fields, Phasor};
use crate::figure_record;
use crate::figures::region_flux;

use super::Context;

/// A part as its figures need it.
#[derive(Clone, Debug)]
pub struct PartSpec {
    pub material: String,
    /// Its region ids in the mesh.
    pub regions: Vec<u32>,
    /// The material's saturation flux density (T), if given.
    pub b_sat: Option<f64>,
    /// Skin depth of its material at the case frequency (conductive parts, f > 0).
    pub skin_depth_m: Option<f64>,
    /// With an applied field: the middle cross-section for the apparent permeability.
    pub section: Option<Section>,
}

/// The middle cross-section of a part across an applied field.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Section {
    /// The part's centroid and bounding box (m).
    pub centroid: [f64; 2],
    pub bbox: ([f64; 2], [f64; 2]),
    /// The applied field's direction (unit vector) and flux density (T rms).
    pub direction: [f64; 2],
    pub b: f64,
}

figure_record! {
    #[derive(Clone, Debug, PartialEq)]
    pub struct PartFigures {
        pub material: String,
        /// Mean |B| (rms); its error: the recovery estimate over the part (so for every
        /// `_err` sibling: docs/physics.md, "Error estimates").
        pub b_mean_t: Estimated<f64>,
        pub b_peak_t: f64,
        pub loss_w: Estimated<f64>,
        pub b_sat_t: Option<f64>,
        /// Peak |B| over the material's saturation flux density.
        pub b_peak_over_sat: Option<f64>,
        /// Skin depth of the part's material at the case frequency (conductive parts, f > 0).
        pub skin_depth_m: Option<f64>,
        /// With a background field: mean flux density along the part's middle cross-section
        /// (across the applied direction) over the applied b.
        pub apparent_permeability: Option<f64>,
    }
}

/// Mean of |B · dir| along the part's middle cross-section (the line through its centroid
/// across the applied direction), in the part only; weighted by r in axisymmetric form.
fn section_mean(f: &Phasor, regions: &[u32], s: &Section, axi: bool) -> Option<f64> {
    let c = s.centroid;
    let (lo, hi) = s.bbox;
    let dir = s.direction;
    let half = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
    let perp = [-dir[1], dir[0]];
    let n = 801;
    let (mut sum, mut wsum) = (0.0, 0.0);
    let f = &f.f;
    for k in 0..n {
        let t = -half + 2.0 * half * k as f64 / (n - 1) as f64;
        let p = [c[0] + t * perp[0], c[1] + t * perp[1]];
        if axi && p[0] < 0.0 {
            continue;
        }
        let Some((cell, _)) = f[0].locator.locate(&f[0].disc, p) else {
            continue;
        };
        if !regions.contains(&f[0].disc.cell_region[cell]) {
            continue;
        }
        let (Some(a), Some(b)) = (f[0].at(p), f[1].at(p)) else {
            continue;
        };
        let along = (a.b[0] * dir[0] + a.b[1] * dir[1]).hypot(b.b[0] * dir[0] + b.b[1] * dir[1]);
        let w = if axi { p[0] } else { 1.0 };
        sum += w * along;
        wsum += w;
    }
    (wsum > 0.0).then(|| sum / wsum)
}

/// The figures of one part; `region_loss` is [`Fields::region_losses`] of the solve.
pub fn part_figures(
    fields: &Fields,
    errors: &ErrorModel,
    ctx: &Context,
    spec: &PartSpec,
    region_loss: &[f64],
) -> PartFigures {
    let regions = &spec.regions;
    let s = region_flux(&[&fields.total.f[0], &fields.total.f[1]], regions);
    let apparent_permeability = match (&spec.section, &fields.background) {
        (Some(sec), Some(bg)) if sec.b != 0.0 => {
            // with saturation the Newton field at the case's own field (superposition
            // does not hold); otherwise the applied field's solution alone
            let f = if fields.newton.is_some() {
                &fields.total
            } else {
                bg
            };
            section_mean(f, regions, sec, ctx.axisymmetric).map(|m| m / sec.b)
        }
        _ => None,
    };
    let loss: f64 = regions.iter().map(|&r| region_loss[r as usize]).sum();
    let loss_err = errors
        .region(regions)
        .filter(|_| regions.iter().any(|&r| region_loss[r as usize] > 0.0))
        .map(|e| 2.0 * e);
    PartFigures {
        material: spec.material.clone(),
        b_mean_t: Estimated::new(s.b_mean, errors.region_mean(regions)),
        b_peak_t: s.b_peak,
        loss_w: Estimated::new(loss, loss_err),
        b_sat_t: spec.b_sat,
        b_peak_over_sat: spec.b_sat.map(|bs| s.b_peak / bs),
        skin_depth_m: spec.skin_depth_m,
        apparent_permeability,
    }
}
