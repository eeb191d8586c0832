//! Figures of a conductor (a busbar, a cable core, a wire): loss, AC and DC resistance,
//! internal and loop inductance, voltage and input power.

use std::f64::consts::TAU;

use num_complex::Complex64 as C;

use crate::errors::ErrorModel;
use crate::estimated::Estimated;
use crate::fields::Fields;
use crate::figure_record;
use crate::figures::region_flux;

use super::Context;

/// A conductor as its figures need it.
#[derive(Clone, Debug)]
pub struct ConductorSpec {
    /// Its winding index in the solve (coils first, then conductors).
    pub winding: usize,
    pub regions: Vec<u32>,
    /// Conductivity of its material (S/m).
    pub sigma: f64,
    /// Solid (its own eddy currents solved) or stranded (uniform current density).
    pub solid: bool,
    /// rms current (A) and phase (degrees).
    pub current: f64,
    pub phase_deg: f64,
    pub skin_depth_m: Option<f64>,
}

figure_record! {
    #[derive(Clone, Debug, PartialEq)]
    pub struct ConductorFigures {
        pub current_a: f64,
        pub phase_deg: f64,
        pub b_mean_t: f64,
        pub b_peak_t: f64,
        /// Loss in the conductor with every source on (W, for the model depth).
        pub loss_w: Estimated<f64>,
        /// AC resistance from loss / I² (at I = 0: from its own 1 A alone).
        pub resistance_ohm: Estimated<f64>,
        pub dc_resistance_ohm: f64,
        pub ac_dc_ratio: Estimated<Option<f64>>,
        /// 2W/I² of its own field inside the conductor (internal inductance).
        pub internal_inductance_h: Estimated<f64>,
        /// ω × internal inductance (null when static).
        pub internal_reactance_ohm: Option<f64>,
        /// Flux route (at f > 0: Im(Z)/ω) for the model's extent: in planar form the loop
        /// closes at the outer boundary (or at infinity for an open one: grows with its size).
        pub inductance_h: Estimated<f64>,
        pub skin_depth_m: Option<f64>,
        /// Voltage across the conductor for the model depth (rms; static: 0): the resistive
        /// drop plus the induced part, the loop closing at the outer boundary.
        pub voltage_v: f64,
        pub voltage_v_phase_deg: f64,
        /// Re(V I*): the power this conductor's source delivers into the field and losses.
        pub input_power_w: f64,
    }
}

/// DC resistance: planar depth/(σS); axisymmetric (a ring) 2π/(σ∫dS/r) when solid,
/// ∫ j²/σ dV with the uniform density when stranded.
fn dc_resistance(fields: &Fields, ctx: &Context, spec: &ConductorSpec) -> f64 {
    let disc = &fields.disc;
    let axi = ctx.axisymmetric;
    let mut area = 0.0;
    let mut inv_r = 0.0;
    let mut dv_inv_r2 = 0.0;
    for cell in (0..disc.n_cells()).filter(|&k| spec.regions.contains(&disc.cell_region[k])) {
        fields
            .like
            .quadrature(cell, &fluxpick_solver::quadrature::DEGREE6, |v, dv| {
                let dsurf = if axi { dv / (TAU * v.x[0]) } else { dv };
                area += dsurf;
                if axi {
                    inv_r += dsurf / v.x[0];
                    dv_inv_r2 += dv;
                }
            });
    }
    let sigma = spec.sigma;
    if sigma <= 0.0 || area <= 0.0 {
        0.0
    } else if !axi {
        ctx.depth / (sigma * area)
    } else if spec.solid {
        TAU / (sigma * inv_r)
    } else {
        dv_inv_r2 / (sigma * area * area)
    }
}

/// The figures of one conductor; `region_loss` is [`Fields::region_losses`] of the solve and
/// `self_linkage` the winding's own flux linkage per ampere (per metre in planar form).
pub fn conductor_figures(
    fields: &Fields,
    errors: &ErrorModel,
    ctx: &Context,
    spec: &ConductorSpec,
    region_loss: &[f64],
    self_linkage: C,
) -> ConductorFigures {
    let regions = &spec.regions;
    let depth = ctx.depth;
    let omega = ctx.omega();
    let disc = &fields.disc;
    let harmonic = fields.harmonic();
    let w = spec.winding;
    let s = region_flux(&[&fields.total.f[0], &fields.total.f[1]], regions);
    let r_dc = dc_resistance(fields, ctx, spec);
    let inside = |cell: usize| regions.contains(&disc.cell_region[cell]);
    let own = &fields.unit[w];
    let l_int = (own.f[0].energy(inside) + own.f[1].energy(inside)) * 2.0 * depth;
    let solid_ac = harmonic.is_some() && spec.solid;
    let current = spec.current;
    let loss = if solid_ac {
        regions.iter().map(|&r| region_loss[r as usize]).sum()
    } else {
        current * current * r_dc
    };
    let r_ac = if current != 0.0 {
        loss / (current * current)
    } else {
        // no current of its own: the resistance at 1 A alone
        match harmonic {
            Some(h) if spec.solid => {
                h.region_losses(&own.f, &own.psi)
                    .iter()
                    .enumerate()
                    .filter(|(r, _)| regions.contains(&(*r as u32)))
                    .map(|(_, p)| p)
                    .sum::<f64>()
                    * depth
            }
            _ => r_dc,
        }
    };
    // V = jωλ + (at DC or when stranded) the resistive drop I R_dc.
    let lam = fields.linkage(w, &fields.total) * depth;
    let i_w = fields.currents[w];
    let v = C::new(0.0, omega) * lam
        + if solid_ac {
            C::new(0.0, 0.0)
        } else {
            i_w * r_dc
        };
    // the impedance per ampere of a solid conductor of the harmonic solve is a value of
    // the bilinear form: its error is the Gram self term
    let z_err = solid_ac
        .then(|| errors.rel(errors.gram(w, w).norm(), self_linkage.norm()))
        .flatten();
    let own_err = errors.region(regions).map(|e| 2.0 * e);
    let l = self_linkage.re * depth;
    let ac = ctx.ac();
    ConductorFigures {
        current_a: current,
        phase_deg: spec.phase_deg,
        b_mean_t: s.b_mean,
        b_peak_t: s.b_peak,
        loss_w: Estimated::new(loss, z_err.or(own_err.filter(|_| harmonic.is_some()))),
        resistance_ohm: Estimated::new(r_ac, z_err),
        dc_resistance_ohm: r_dc,
        ac_dc_ratio: Estimated::new((r_dc > 0.0).then(|| r_ac / r_dc), z_err),
        internal_inductance_h: Estimated::new(l_int, own_err),
        internal_reactance_ohm: ac.then_some(omega * l_int),
        inductance_h: Estimated::new(l, errors.rel(errors.gram(w, w).norm() * depth, l)),
        skin_depth_m: spec.skin_depth_m,
        voltage_v: if ac { v.norm() } else { v.re },
        voltage_v_phase_deg: if ac { v.arg().to_degrees() } else { 0.0 },
        input_power_w: (v * i_w.conj()).re,
    }
}
