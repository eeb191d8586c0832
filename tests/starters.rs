//! Every starter case of `fluxpick new KIND` runs as written: written by `new`, accepted by
//! `check` without warnings, solved by `solve`, with figures that are finite and plausible
//! against outside references (each named beside its check).

mod common;

use std::path::Path;

use common::{fluxpick, get, MU0, PI};
use fluxpick::starters::STARTERS;

/// `fluxpick new KIND --out DIR/KIND.toml`, `check`, `solve`; returns results.json.
fn new_check_solve(kind: &str, dir: &Path) -> serde_json::Value {
    let case = dir.join(format!("{kind}.toml"));
    let c = case.to_str().unwrap();
    let o = fluxpick(&["new", kind, "--out", c]);
    assert!(o.status.success(), "new {kind}: {o:?}");
    let text = std::fs::read_to_string(&case).unwrap();
    assert_eq!(text, fluxpick::starters::find(kind).unwrap().text);
    assert!(
        text.contains("CHANGE"),
        "{kind}: the comments must say what to change"
    );
    let o = fluxpick(&["check", c]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "check {kind}: {err}");
    assert!(
        !err.contains("warning"),
        "{kind}: a starter should pass check without warnings:\n{err}"
    );
    common::solve(&case, &dir.join("out"))
}

fn finite_positive(r: &serde_json::Value, key: &str) -> f64 {
    let v = get(r, key);
    assert!(v.is_finite() && v > 0.0, "{key} = {v}");
    v
}

#[test]
fn rod_starter_runs_and_is_plausible() {
    let dir = tempfile::tempdir().unwrap();
    let r = new_check_solve("rod", dir.path());
    let f = get(&r, "frequency_hz");
    let lambda = finite_positive(&r, "coils.pickup.flux_linkage_wb");
    let emf = finite_positive(&r, "coils.pickup.emf_v");
    // V = jωλ (docs/physics.md, Faraday's law for phasors).
    common::assert_rel("EMF = ωλ", emf, 2.0 * PI * f * lambda, 1e-9);
    // Equivalent area = λ / B0 with B0 = 10 µT as the starter says.
    let a_eq = finite_positive(&r, "coils.pickup.equivalent_area_m2");
    common::assert_rel("A_eq = λ/B0", a_eq, lambda / 10e-6, 1e-9);
    // Apparent permeability of a 10 x 100 mm rod of μr 2000: above a prolate spheroid of the
    // same L/D (Osborn, Phys. Rev. 67, 351 (1945): a cylinder's middle section is less
    // demagnetised than the spheroid's; see README's aspect study) and far below μr.
    let mu_app = finite_positive(&r, "parts.rod.apparent_permeability");
    let n = common::osborn_prolate(10.0);
    let spheroid = 2000.0 / (1.0 + n * (2000.0 - 1.0));
    eprintln!("apparent μ {mu_app}, prolate spheroid {spheroid}");
    assert!(mu_app > spheroid && mu_app < 0.2 * 2000.0);
    // Power into a matched load is EMF² / 4R (maximum power transfer, any circuit text).
    let rw = finite_positive(&r, "coils.pickup.resistance_ohm");
    let p = finite_positive(&r, "coils.pickup.matched_power_w");
    common::assert_rel("P = V²/4R", p, emf * emf / (4.0 * rw), 1e-6);
}

#[test]
fn feeder_starter_runs_and_is_plausible() {
    let dir = tempfile::tempdir().unwrap();
    let r = new_check_solve("feeder", dir.path());
    finite_positive(&r, "coils.pickup.emf_v");
    finite_positive(&r, "coils.pickup.inductance_h");
    // Near the pair, away from the bar, |B| on the bisector is that of two antiparallel line
    // currents: μ0 I s / (2π (x² + (s/2)²)) (Biot–Savart; outside a round conductor its
    // field is a line current's). The bar 60 mm further out perturbs it by about 1 %.
    let x = get(&r, "probes.bisector.points.0.0");
    let b = finite_positive(&r, "probes.bisector.b_abs_t.0");
    let (i, s) = (300.0, 0.05);
    let pair = MU0 * i * s / (2.0 * PI * (x * x + s * s / 4.0));
    common::assert_rel("|B| beside the pair", b, pair, 0.03);
    // AC/DC resistance of a round solid conductor, radius 8 mm, skin depth 9.35 mm:
    // 1 + (a/δ)⁴/48 to leading order (the low-frequency series of the Bessel-function
    // solution for an isolated round wire; series from memory, the full Bessel solution is
    // checked in tests/eddy_cases.rs); the return conductor's proximity adds a little.
    let ratio = get(&r, "conductors.go.ac_dc_ratio");
    let delta = get(&r, "conductors.go.skin_depth_m");
    let isolated = 1.0 + (0.008 / delta).powi(4) / 48.0;
    eprintln!("AC/DC {ratio}, isolated-wire series {isolated}");
    assert!(ratio >= isolated * (1.0 - 2e-3) && ratio < isolated + 0.05);
}

#[test]
fn three_phase_starter_runs_and_is_plausible() {
    let dir = tempfile::tempdir().unwrap();
    let r = new_check_solve("three-phase", dir.path());
    finite_positive(&r, "coils.pickup.emf_v");
    // The conductive wall carries eddy currents: a loss, and an induced resistance.
    finite_positive(&r, "parts.wall.loss_w");
    finite_positive(&r, "coils.pickup.eddy_resistance_ohm");
    // DC resistance of a 10 x 40 mm copper bar over the 25 mm depth at σ = 5.8e7 S/m (IEC
    // 60028: 1.7241e-8 Ω·m at 20 °C), and an AC/DC ratio a little above 1 (the bars are
    // thinner than two skin depths).
    for bar in ["L1", "L2", "L3"] {
        let dc = get(&r, &format!("conductors.{bar}.dc_resistance_ohm"));
        common::assert_rel("R_dc", dc, 0.025 / (5.8e7 * 0.010 * 0.040), 1e-6);
        let ratio = get(&r, &format!("conductors.{bar}.ac_dc_ratio"));
        assert!(ratio > 1.0 && ratio < 1.3, "{bar}: AC/DC {ratio}");
    }
    // Balanced phases cancel: at the gap probe |B| stays below three bars' fields added in
    // phase, μ0·3I/(2πd) with d the distance to the nearest bar centre (upper bound, the
    // steel wall's concentration included with a factor 2 margin; common practice, no source).
    let pts = r["probes"]["gap"]["points"].as_array().unwrap();
    let bs = r["probes"]["gap"]["b_abs_t"].as_array().unwrap();
    for (p, b) in pts.iter().zip(bs) {
        let (x, y) = (p[0].as_f64().unwrap(), p[1].as_f64().unwrap());
        let d = [-0.08, 0.0, 0.08]
            .iter()
            .map(|c| (x - c).hypot(y))
            .fold(f64::INFINITY, f64::min);
        let b = b.as_f64().unwrap();
        assert!(b.is_finite() && b < 2.0 * MU0 * 3.0 * 630.0 / (2.0 * PI * d));
    }
}

#[test]
fn coaxial_starter_runs_and_is_plausible() {
    let dir = tempfile::tempdir().unwrap();
    let r = new_check_solve("coaxial", dir.path());
    let m = &r["inductance_matrix"]["flux_h"];
    let l1 = m[0][0].as_f64().unwrap();
    let l2 = m[1][1].as_f64().unwrap();
    let m12 = m[0][1].as_f64().unwrap();
    // Reciprocity (M12 = M21, Neumann's formula is symmetric).
    common::assert_rel("M12 = M21", m12, m[1][0].as_f64().unwrap(), 1e-9);
    // Coupling coefficient between 0 and 1 (positive magnetic energy).
    let k = m12 / (l1 * l2).sqrt();
    eprintln!("coupling k = {k}");
    assert!(k > 0.0 && k < 1.0);
    // The open receiver links M·I of the driver's 1 A.
    let lambda = get(&r, "coils.receiver.flux_linkage_wb");
    common::assert_rel("λ_rx = M·I", lambda, m12 * 1.0, 1e-6);
    // Flux and energy routes to the inductance agree (docs/physics.md, "From the field to
    // the figures").
    let l1e = r["inductance_matrix"]["energy_h"][0][0].as_f64().unwrap();
    common::assert_rel("L1 two routes", l1e, l1, 1e-3);
    finite_positive(&r, "coils.receiver.load_power_w");
}

#[test]
fn new_refuses_to_overwrite_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("mine.toml");
    std::fs::write(&p, "my own case").unwrap();
    let o = fluxpick(&["new", "rod", "--out", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--force"));
    assert_eq!(std::fs::read_to_string(&p).unwrap(), "my own case");
    let o = fluxpick(&["new", "rod", "--out", p.to_str().unwrap(), "--force"]);
    assert!(o.status.success());
    assert_eq!(
        std::fs::read_to_string(&p).unwrap(),
        fluxpick::starters::find("rod").unwrap().text
    );
    // Standard output, and a misspelt kind (clap suggests the closest).
    let o = fluxpick(&["new", "coaxial", "--out", "-"]);
    assert_eq!(
        String::from_utf8_lossy(&o.stdout),
        fluxpick::starters::find("coaxial").unwrap().text
    );
    let o = fluxpick(&["new", "feder"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("feeder"));
    assert_eq!(STARTERS.len(), 4);
}
