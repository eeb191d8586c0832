//! The warnings stage: a pass over a solve's results and its case, saying where a figure
//! should not be trusted as it stands or where it means a hazard.

use crate::case::{Case, Symmetry};
use crate::format::eng;
use fluxpick_postproc::design::coils::ENAMEL_PACKING;

use super::fields::SolveNotes;
use super::results::Results;

/// ICNIRP 2010 reference levels for 25–300 Hz (values from memory of the guideline's
/// tables), rms: general public 200 µT, occupational 1000 µT.
const ICNIRP_PUBLIC_T: f64 = 2e-4;
const ICNIRP_OCCUPATIONAL_T: f64 = 1e-3;
/// Capacitor voltage above which it is called hazardous (common practice, no source: the
/// extra-low-voltage boundary of 50 V ac).
const CAPACITOR_HAZARD_V: f64 = 50.0;

/// Every warning of one solve, in the order: how it was solved, parts, probes, coils, the
/// accuracy loop.
pub fn warnings(case: &Case, r: &Results, notes: &SolveNotes) -> Vec<String> {
    let mut w = solve_warnings(case, r, notes);
    w.extend(part_warnings(case, r));
    w.extend(exposure_warnings(r));
    w.extend(coil_warnings(case, r));
    if let Some(a) = r.accuracy.as_ref().filter(|a| !a.reached) {
        w.push(format!(
            "accuracy: the target {} was not reached ({} after {} passes, {} triangles): the largest estimated error is {:.2} %; raise model.max_triangles or relax the target",
            a.target,
            a.stopped,
            a.refinement.len(),
            r.mesh.triangles,
            100.0 * a.refinement.last().map_or(f64::NAN, |p| p.worst)
        ));
    }
    w
}

fn solve_warnings(case: &Case, r: &Results, notes: &SolveNotes) -> Vec<String> {
    let mut w = Vec::new();
    if let Some((iterations, converged)) = notes.effective {
        w.push(format!(
            "saturating materials at {} Hz: an effective permeability per region from the energy-equivalent reluctivity at its mean flux density ({} iterations{}); an approximation: harmonics and saturation within a region are not modelled",
            case.frequency,
            iterations,
            if converged { "" } else { ", NOT converged" }
        ));
    }
    if r.solve.newton_iterations.is_some() {
        w.push(
            "saturating materials: figures are from the Newton solve at the case's currents and field; inductances (both routes) are those of the unsaturated materials (their μr), not incremental values at this operating point".to_string(),
        );
    }
    w
}

fn part_warnings(case: &Case, r: &Results) -> Vec<String> {
    let mut w = Vec::new();
    for p in &case.parts {
        let f = &r.parts[&p.name];
        let (Some(bs), peak) = (f.b_sat_t, f.b_peak_t) else {
            continue;
        };
        if peak > bs {
            w.push(format!(
                "part `{}`: peak |B| {} exceeds the saturation flux density {} of `{}`; the linear result does not hold there",
                p.name, eng(peak, "T"), eng(bs, "T"), case.material(p.material).name
            ));
        } else if peak > 0.8 * bs {
            w.push(format!(
                "part `{}`: peak |B| {} is above 80 % of the saturation flux density {} (near saturation)",
                p.name, eng(peak, "T"), eng(bs, "T")
            ));
        }
    }
    w
}

fn exposure_warnings(r: &Results) -> Vec<String> {
    let mut w = Vec::new();
    if !(r.frequency_hz > 0.0 && (25.0..=300.0).contains(&r.frequency_hz)) {
        return w;
    }
    for (name, p) in &r.probes {
        let peak = p.b_abs_t.iter().flatten().fold(0.0f64, |a, b| a.max(*b));
        let level = if peak > ICNIRP_OCCUPATIONAL_T {
            Some("the occupational reference level 1000 µT")
        } else if peak > ICNIRP_PUBLIC_T {
            Some("the general-public reference level 200 µT")
        } else {
            None
        };
        if let Some(l) = level {
            w.push(format!(
                "probe `{name}`: |B| up to {} exceeds {l} (ICNIRP 2010, 50/60 Hz): exposure limits apply where people can be",
                eng(peak, "T")
            ));
        }
    }
    w
}

fn coil_warnings(case: &Case, r: &Results) -> Vec<String> {
    let mut w = Vec::new();
    for (name, c) in &r.coils {
        if let Some(v) = c.capacitor_voltage_v.filter(|v| *v > CAPACITOR_HAZARD_V) {
            w.push(format!(
                "coil `{name}`: the tuning capacitor sees about {} rms at resonance (above 50 V): rate it for this, guard it, and discharge it before touching the circuit",
                eng(v, "V")
            ));
        }
        // The case check counts bare copper at the fill factor; with enamel (grade 2) at a
        // good random-winding packing the real window may hold fewer.
        if c.turns > c.turns_that_fit_enamelled * (1.0 + 1e-9) {
            w.push(format!(
                "coil `{name}`: {} turns fit as bare copper, but with grade-2 enamel at a packing of {} the window holds only about {:.0}: check the bobbin",
                c.turns,
                ENAMEL_PACKING,
                c.turns_that_fit_enamelled
            ));
        }
        if let Some(x) = c.wire_diameter_over_skin_depth.filter(|x| *x > 0.5) {
            w.push(format!(
                "coil `{name}`: the wire is {x:.2} skin depths thick; skin and proximity effects in the winding are not negligible and are not in `resistance_ohm`"
            ));
        }
        if case.symmetry == Symmetry::Planar && !c.core_parts.is_empty() {
            w.push(format!(
                "coil `{name}`: a planar model treats the core ({}) as infinitely long along the depth; a finite rod is demagnetised much more strongly, so characterise rods with an axisymmetric model",
                c.core_parts.join(", ")
            ));
        }
    }
    w
}
