//! Design figures of a pickup (issue "From field to design figures"): inductance against
//! Wheeler's multilayer formula, Q of a wound rod, the circuit identities in results.json,
//! and the EMF of a pickup beside a feeder pair against Ampère and Faraday.

mod common;
use common::*;

use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Wheeler's multilayer formula (H. A. Wheeler, "Simple inductance formulas for radio
/// coils", Proc. IRE 16, 1398, 1928): L = 0.8 a² N² / (6a + 9b + 10c) µH with inches, i.e.
/// 31.5 a² N² / (6a + 9b + 10c) µH with metres; a the mean radius, b the length, c the
/// depth of the winding; about 1 % when the three terms of the denominator are comparable
/// (docs/references.md gives the metric form with the constant 31.6, from memory).
#[test]
fn air_cored_multilayer_coil_matches_wheeler() {
    let r = solve_text(
        r#"
[model]
title = "multilayer air coil"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -200], max = [200, 200] }
boundary = "open"
mesh_size = 20
[[coil]]
name = "coil"
turns = 500
wire = "awg30"
rect = { min = [15, -10], max = [25, 10] }
mesh_size = 1
"#,
    );
    let (a, b, c, n) = (0.020, 0.020, 0.010, 500.0);
    let wheeler = 0.8 / 0.0254 * a * a * n * n / (6.0 * a + 9.0 * b + 10.0 * c) * 1e-6;
    assert_rel(
        "multilayer coil L vs Wheeler",
        get(&r, "coils.coil.inductance_h"),
        wheeler,
        0.02,
    );
}

fn rod(frequency: f64) -> String {
    format!(
        r#"
[model]
title = "wound rod at 60 Hz"
symmetry = "axisymmetric"
frequency = {frequency}
[domain]
rect = {{ min = [0, -300], max = [300, 300] }}
boundary = "open"
mesh_size = 30
[background]
b = 1e-6
direction = [0, 1]
[materials.ferrite]
mu_r = 2000
density = 4800
[[part]]
name = "rod"
material = "ferrite"
rect = {{ min = [0, -100], max = [17.5, 100] }}
mesh_size = 2.5
[[coil]]
name = "pickup"
turns = 12000
wire_diameter = 0.32
fill_factor = 0.6
rect = {{ min = [18, -90], max = [27, 90] }}
mesh_size = 2.5
[circuit]
tuning = "series"
load = "matched"
storage = {{ capacitance = 0.1, voltage = 3.3 }}
"#
    )
}

/// About 12 000 turns of 0.32 mm wire on a 35 mm × 200 mm ferrite rod at 60 Hz: such a
/// coil measured Q ≈ 24 (common practice, no source); asserted 15–40. The circuit
/// identities hold exactly: matched power EMF²/(4R), series C = 1/(ω²L), capacitor voltage
/// Q·EMF at series resonance with the load shorted, charge time ½CV²/P.
#[test]
fn rod_coil_q_and_circuit_identities() {
    let r = solve_text(&rod(60.0));
    let omega = 2.0 * PI * 60.0;
    let c = |k: &str| get(&r, &format!("coils.pickup.{k}"));
    let q = c("q");
    eprintln!(
        "L {} H, R {} Ω, Q {q}, C {} F, EMF {} V",
        c("inductance_h"),
        c("resistance_ohm"),
        c("tuning_capacitance_f"),
        c("emf_v")
    );
    assert!((15.0..=40.0).contains(&q), "Q = {q}");
    let rt = c("resistance_ohm") + c("eddy_resistance_ohm");
    let emf = c("emf_v");
    assert_rel(
        "matched power",
        c("matched_power_w"),
        emf * emf / (4.0 * rt),
        1e-12,
    );
    assert_rel(
        "load power (matched)",
        c("load_power_w"),
        c("matched_power_w"),
        1e-12,
    );
    assert_rel(
        "series C",
        c("tuning_capacitance_f"),
        1.0 / (omega * omega * c("inductance_h")),
        1e-12,
    );
    assert_rel("capacitor voltage", c("capacitor_voltage_v"), q * emf, 1e-9);
    let e = 0.5 * 0.1 * 3.3 * 3.3;
    assert_rel("storage energy", c("storage_energy_j"), e, 1e-12);
    assert_rel(
        "charge time",
        c("charge_time_s"),
        e / c("load_power_w"),
        1e-12,
    );
    // Per cm³ and per gram: the rod is 35 mm × 200 mm (192.4 cm³) of 4.8 g/cm³ ferrite.
    let vol = PI * 17.5f64.powi(2) * 200.0 * 1e-9;
    assert_rel("core volume", c("core_volume_m3"), vol, 2e-3);
    assert_rel(
        "power per cm³",
        c("power_per_cm3_w"),
        c("matched_power_w") / (vol * 1e6),
        2e-3,
    );
    let grams = (4800.0 * vol + c("copper_mass_kg")) * 1e3;
    assert_rel(
        "power per gram",
        c("power_per_gram_w"),
        c("matched_power_w") / grams,
        2e-3,
    );
    // In a 1 µT field the rod's apparent permeability is far below μr (demagnetisation).
    let mu = get(&r, "parts.rod.apparent_permeability");
    assert!((10.0..200.0).contains(&mu), "apparent permeability {mu}");
    // And at 0 Hz the circuit figures are not applicable: null, not zero.
    let s = solve_text(&rod(0.0));
    for k in [
        "q",
        "tuning_capacitance_f",
        "matched_power_w",
        "charge_time_s",
    ] {
        assert!(
            s["coils"]["pickup"][k].is_null(),
            "{k} at 0 Hz: {}",
            s["coils"]["pickup"][k]
        );
    }
}

/// A go-and-return feeder at 100 A rms, 50 Hz (conductors at x = 0 and x = −60 mm) and an
/// air-cored pickup of 200 turns, 10 mm wide, centred 200 mm from the go conductor on the
/// same line: EMF = ω N A μ0 I (1/(2π r₁) − 1/(2π r₂)) with A = width × depth
/// (Ampère's law for the field, Faraday's law for the EMF), within 1 %.
#[test]
fn pickup_beside_feeder_pair_follows_ampere_and_faraday() {
    let r = solve_text(
        r#"
[model]
title = "feeder pair and a small air pickup"
symmetry = "planar"
frequency = 50
depth = 1000
[domain]
circle = { center = [0, 0], radius = 800 }
boundary = "open"
mesh_size = 60
[[conductor]]
name = "go"
circle = { center = [0, 0], radius = 5 }
current = 100
kind = "stranded"
mesh_size = 1.5
[[conductor]]
name = "return"
circle = { center = [-60, 0], radius = 5 }
current = -100
kind = "stranded"
mesh_size = 1.5
[[coil]]
name = "pickup"
turns = 200
wire = "awg36"
sides = [ { rect = { center = [205, 0], size = [1, 6] }, sense = 1 },
          { rect = { center = [195, 0], size = [1, 6] }, sense = -1 } ]
mesh_size = 0.5
"#,
    );
    let (omega, n, i) = (2.0 * PI * 50.0, 200.0, 100.0);
    let area = 0.010 * 1.0;
    let (r1, r2) = (0.200, 0.260);
    let b = MU0 * i / (2.0 * PI) * (1.0 / r1 - 1.0 / r2);
    assert_rel(
        "pickup EMF beside a feeder",
        get(&r, "coils.pickup.emf_v"),
        omega * n * area * b,
        0.01,
    );
}

/// 1000 turns of AWG 30 (0.2546 mm bare, ASTM B258) pass the bare-copper check at fill
/// 0.7 in an 80 mm² window (1099 fit), but with grade-2 enamel (about 0.288 mm, value from
/// memory) at a packing of 0.78 only about 880 fit: a warning says so.
#[test]
fn enamelled_winding_that_does_not_fit_is_warned() {
    let r = solve_text(
        r#"
[model]
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -100], max = [100, 100] }
boundary = "open"
mesh_size = 10
[background]
b = 1e-6
direction = [0, 1]
[[coil]]
name = "c"
turns = 1000
wire = "awg30"
fill_factor = 0.7
rect = { min = [10, -5], max = [18, 5] }
"#,
    );
    let fit = get(&r, "coils.c.turns_that_fit_enamelled");
    assert!((850.0..910.0).contains(&fit), "{fit}");
    let warned = r["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|w| w.as_str().unwrap().contains("grade-2 enamel"));
    assert!(warned, "{}", r["warnings"]);
}
