//! Figures of a pickup coil: flux linkage, EMF, inductance by both routes, the winding
//! (resistance, wire, what fits the window), tuning and harvest, the core it sits on.

use num_complex::Complex64 as C;

use crate::circuit::{self, Tuning};
use crate::errors::ErrorModel;
use crate::estimated::Estimated;
use crate::fields::Fields;
use crate::figure_record;
use crate::wire;

use super::{skin_depth, Context};

/// Packing of round enamelled wire in a bobbin (orthocyclic about 0.9, good random winding
/// about 0.78; common practice, no source).
pub const ENAMEL_PACKING: f64 = 0.78;

/// Conductivity of annealed copper at 20 °C, 1/(1.7241e-8 Ω·m) (IEC 60028).
pub const COPPER_CONDUCTIVITY_20C: f64 = 1.0 / wire::COPPER_RESISTIVITY_20C;

/// A coil as its figures need it.
#[derive(Clone, Debug)]
pub struct CoilSpec {
    /// Its winding index in the solve (coils first, then conductors).
    pub winding: usize,
    pub turns: f64,
    /// Bare copper diameter (m), temperature (°C) and the fill factor of its window.
    pub wire_diameter: f64,
    pub temperature_c: f64,
    pub fill_factor: f64,
    /// Mean length of one turn (m).
    pub mean_turn_length: f64,
    /// Regions of one winding window (one side for planar coils).
    pub window_regions: Vec<u32>,
    /// The magnetic parts inside the coil's span.
    pub core: Vec<CorePart>,
    pub harvest: Harvest,
    /// The applied field's b (T rms), when the case has one.
    pub applied_b: Option<f64>,
}

/// A part of a coil's core.
#[derive(Clone, Debug)]
pub struct CorePart {
    pub name: String,
    pub regions: Vec<u32>,
    /// Density of its material (kg/m³), if given.
    pub density: Option<f64>,
}

/// The electronics behind a coil.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Harvest {
    pub tuning: Tuning,
    /// A stated resistive load (Ω); None: the matched one.
    pub load_ohm: Option<f64>,
    pub storage: Option<Storage>,
}

/// A storage capacitor charged to a target voltage.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Storage {
    pub capacitance: f64,
    pub voltage: f64,
}

figure_record! {
    #[derive(Clone, Debug, PartialEq)]
    pub struct CoilFigures {
        pub turns: f64,
        pub flux_linkage_wb: Estimated<f64>,
        pub flux_linkage_wb_phase_deg: f64,
        pub emf_v: Estimated<f64>,
        pub emf_v_phase_deg: f64,
        /// Flux route: flux linkage per ampere of its own current.
        pub inductance_h: Estimated<f64>,
        /// Energy route: 2W/I², for the check that both agree.
        pub inductance_energy_h: f64,
        pub resistance_ohm: f64,
        pub eddy_resistance_ohm: f64,
        pub wire_diameter_m: f64,
        pub wire_length_m: f64,
        pub mean_turn_length_m: f64,
        pub copper_mass_kg: f64,
        pub q: Estimated<Option<f64>>,
        pub tuning_capacitance_f: Estimated<Option<f64>>,
        pub matched_power_w: Estimated<Option<f64>>,
        /// Copper cross-section window (one side for planar coils), m², and the turns of the
        /// bare wire that fit it at the coil's fill factor.
        pub window_area_m2: f64,
        pub turns_that_fit: f64,
        /// Turns of grade-2 enamelled wire that fit at a packing of 0.78 (see `wire`).
        pub turns_that_fit_enamelled: f64,
        /// Wire diameter over the skin depth in copper at the case frequency: below about 0.5
        /// skin and proximity effects inside the wire are negligible (common practice).
        pub wire_diameter_over_skin_depth: Option<f64>,
        /// The tuning `tuning_capacitance_f` is for (the coil's circuit; series otherwise).
        pub tuning: String,
        pub series_capacitance_f: Option<f64>,
        pub parallel_capacitance_f: Option<f64>,
        /// rms voltage across the tuning capacitor at resonance (worst case: series tuning
        /// with the load shorted, parallel with it open), ≈ Q × EMF.
        pub capacitor_voltage_v: Option<f64>,
        /// The stated resistive load (null = matched).
        pub load_ohm: Option<f64>,
        pub load_power_w: Option<f64>,
        /// ½CV² of the storage and the time to reach it at `load_power_w` through an
        /// ideal rectifier (lossless, drawing that power at any capacitor voltage).
        pub storage_energy_j: Option<f64>,
        pub charge_time_s: Option<f64>,
        /// Magnetic parts inside the coil's span, their volume (for the model depth) and mass
        /// (when every core material gives a density).
        pub core_parts: Vec<String>,
        pub core_volume_m3: Option<f64>,
        pub core_mass_kg: Option<f64>,
        /// Matched power per cm³ of core, and per gram of core and copper.
        pub power_per_cm3_w: Option<f64>,
        pub power_per_gram_w: Option<f64>,
        pub equivalent_area_m2: Estimated<Option<f64>>,
    }
}

/// The open-circuit circuit figures: tuning capacitors, Q, matched and load power, the
/// capacitor's voltage and the storage's charge.
struct Tuned {
    c_series: Option<f64>,
    c_parallel: Option<f64>,
    chosen: Option<f64>,
    q: Option<f64>,
    matched: Option<f64>,
    capacitor_v: Option<f64>,
    load_power: Option<f64>,
    storage_energy: Option<f64>,
    charge_time: Option<f64>,
}

fn tuned(h: &Harvest, ac: bool, omega: f64, emf: f64, l: f64, r: f64) -> Tuned {
    let tuned = ac && l > 0.0 && r > 0.0;
    let c_series = tuned.then(|| circuit::series_capacitance(omega, l));
    let c_parallel = tuned.then(|| circuit::parallel_capacitance(omega, l, r));
    let chosen = match h.tuning {
        Tuning::Series => c_series,
        Tuning::Parallel => c_parallel,
        Tuning::None => None,
    };
    let q = tuned.then(|| circuit::quality_factor(omega, l, r));
    let matched = tuned.then(|| circuit::matched_power(emf, r));
    let capacitor_v = chosen.map(|cap| circuit::capacitor_voltage(h.tuning, omega, emf, l, r, cap));
    let load_power = if !tuned {
        None
    } else if let Some(rl) = h.load_ohm {
        Some(circuit::load_power(
            h.tuning,
            omega,
            emf,
            l,
            r,
            chosen.unwrap_or(f64::INFINITY),
            rl,
        ))
    } else {
        matched
    };
    let (storage_energy, charge_time) = match (h.storage, load_power) {
        (Some(st), Some(p)) if p > 0.0 => {
            let (e, t) = circuit::charge_time(st.capacitance, st.voltage, p);
            (Some(e), Some(t))
        }
        (Some(st), _) => (Some(0.5 * st.capacitance * st.voltage * st.voltage), None),
        _ => (None, None),
    };
    Tuned {
        c_series,
        c_parallel,
        chosen,
        q,
        matched,
        capacitor_v,
        load_power,
        storage_energy,
        charge_time,
    }
}

/// Volume (m³ for the model depth) and mass (when every part gives a density) of a core.
fn core_measure(fields: &Fields, core: &[CorePart], depth: f64) -> (Option<f64>, Option<f64>) {
    if core.is_empty() {
        return (None, None);
    }
    let mut vol = 0.0;
    let mut mass = Some(0.0);
    for k in core {
        let (_, v) = fields.measure(&k.regions, depth);
        vol += v;
        mass = match (mass, k.density) {
            (Some(m), Some(rho)) => Some(m + rho * v),
            _ => None,
        };
    }
    (Some(vol), mass)
}

/// The figures of one coil. `self_linkage` is its own flux linkage per ampere and
/// `energy_inductance` the energy route's L (both for the model depth as results state).
pub fn coil_figures(
    fields: &Fields,
    errors: &ErrorModel,
    ctx: &Context,
    spec: &CoilSpec,
    self_linkage: C,
    energy_inductance: f64,
) -> CoilFigures {
    let (depth, omega, ac) = (ctx.depth, ctx.omega(), ctx.ac());
    let i = spec.winding;
    let lam = fields.linkage(i, &fields.total) * depth;
    let (lam_m, lam_p) = (lam.norm(), lam.arg().to_degrees());
    let l = self_linkage.re * depth;
    // Z = jωλ per ampere of its own current: R_eddy = −ω Im λ.
    let r_eddy = if fields.harmonic().is_some() {
        -omega * self_linkage.im * depth
    } else {
        0.0
    };
    let length = spec.turns * spec.mean_turn_length;
    let r = wire::resistance_per_metre(spec.wire_diameter, spec.temperature_c) * length;
    let mass = wire::mass_per_metre(spec.wire_diameter) * length;
    // EMF = −jωλ (rms phasor); static: 0.
    let emf = C::new(0.0, -omega) * lam;
    let (emf_m, emf_p) = (emf.norm(), emf.arg().to_degrees());
    let t = tuned(&spec.harvest, ac, omega, emf_m, l, r + r_eddy);
    let (window_area, _) = fields.measure(&spec.window_regions, depth);
    let (core_volume, core_mass) = core_measure(fields, &spec.core, depth);
    let lam_err = errors.rel(errors.linkage(i, fields).norm() * depth, lam.norm());
    let l_err = errors.rel(errors.gram(i, i).norm() * depth, l);
    let applied = spec.applied_b.filter(|b| *b != 0.0);
    let equivalent_area = match (applied, &fields.background) {
        // with saturation: the total flux linkage over the applied b
        (Some(b), Some(_)) if fields.newton.is_some() => Estimated::new(Some(lam.norm() / b), None),
        (Some(b), Some(bg)) => {
            let lb = fields.linkage(i, bg);
            Estimated::new(
                Some(lb.norm() * depth / b),
                errors.rel(errors.gram(i, errors.background_index).norm(), lb.norm()),
            )
        }
        _ => Estimated::new(None, None),
    };
    CoilFigures {
        turns: spec.turns,
        flux_linkage_wb: Estimated::new(if ac { lam_m } else { lam.re }, lam_err),
        flux_linkage_wb_phase_deg: if ac { lam_p } else { 0.0 },
        emf_v: Estimated::new(if ac { emf_m } else { 0.0 }, lam_err.filter(|_| ac)),
        emf_v_phase_deg: if ac { emf_p } else { 0.0 },
        inductance_h: Estimated::new(l, l_err),
        inductance_energy_h: energy_inductance,
        resistance_ohm: r,
        eddy_resistance_ohm: r_eddy,
        wire_diameter_m: spec.wire_diameter,
        wire_length_m: length,
        mean_turn_length_m: spec.mean_turn_length,
        copper_mass_kg: mass,
        q: Estimated::new(t.q, l_err.filter(|_| t.q.is_some())),
        tuning_capacitance_f: Estimated::new(t.chosen, l_err.filter(|_| t.chosen.is_some())),
        matched_power_w: Estimated::new(
            t.matched,
            lam_err.filter(|_| t.matched.is_some()).map(|e| 2.0 * e),
        ),
        window_area_m2: window_area,
        turns_that_fit: wire::turns_that_fit(window_area, spec.wire_diameter, spec.fill_factor),
        turns_that_fit_enamelled: wire::turns_that_fit(
            window_area,
            wire::overall_diameter(spec.wire_diameter, wire::Grade::Grade2),
            ENAMEL_PACKING,
        ),
        wire_diameter_over_skin_depth: ac
            .then(|| spec.wire_diameter / skin_depth(ctx.frequency, 1.0, COPPER_CONDUCTIVITY_20C)),
        tuning: match spec.harvest.tuning {
            Tuning::Series => "series",
            Tuning::Parallel => "parallel",
            Tuning::None => "none",
        }
        .into(),
        series_capacitance_f: t.c_series,
        parallel_capacitance_f: t.c_parallel,
        capacitor_voltage_v: t.capacitor_v,
        load_ohm: spec.harvest.load_ohm,
        load_power_w: t.load_power,
        storage_energy_j: t.storage_energy,
        charge_time_s: t.charge_time,
        core_parts: spec.core.iter().map(|k| k.name.clone()).collect(),
        core_volume_m3: core_volume,
        core_mass_kg: core_mass,
        power_per_cm3_w: match (t.matched, core_volume) {
            (Some(p), Some(v)) if v > 0.0 => Some(p / (v * 1e6)),
            _ => None,
        },
        power_per_gram_w: match (t.matched, core_mass) {
            (Some(p), Some(m)) => Some(p / ((m + mass) * 1e3)),
            _ => None,
        },
        equivalent_area_m2: equivalent_area,
    }
}
