//! 50/60 Hz cases through the binary: three-phase superposition, shielding by a steel
//! plate and the energy balance of the time-harmonic solve.

mod common;
use common::*;

use std::f64::consts::PI;

const MU0: f64 = 4.0e-7 * PI;

/// Field (rms phasor components) of line currents along +z at `wires` (x, y, I, phase°):
/// B = μ0 I/(2π r²) (−dy, dx) (Ampère/Biot–Savart for an infinite straight wire).
fn line_field(wires: &[(f64, f64, f64, f64)], p: [f64; 2]) -> [(f64, f64); 2] {
    let mut b = [(0.0, 0.0); 2];
    for &(x, y, i, ph) in wires {
        let (dx, dy) = (p[0] - x, p[1] - y);
        let r2 = dx * dx + dy * dy;
        let k = MU0 * i / (2.0 * PI * r2);
        let (c, s) = (ph.to_radians().cos(), ph.to_radians().sin());
        b[0].0 += -k * dy * c;
        b[0].1 += -k * dy * s;
        b[1].0 += k * dx * c;
        b[1].1 += k * dx * s;
    }
    b
}

fn three_phase(kind: &str) -> String {
    format!(
        r#"
[model]
title = "flat three-phase set"
symmetry = "planar"
frequency = 50
[domain]
circle = {{ center = [0, 0], radius = 500 }}
boundary = "open"
mesh_size = 20
[[conductor]]
name = "a"
circle = {{ center = [-100, 0], radius = 10 }}
current = 500
phase = 0
kind = "{kind}"
mesh_size = 2
[[conductor]]
name = "b"
circle = {{ center = [0, 0], radius = 10 }}
current = 500
phase = -120
kind = "{kind}"
mesh_size = 2
[[conductor]]
name = "c"
circle = {{ center = [100, 0], radius = 10 }}
current = 500
phase = 120
kind = "{kind}"
mesh_size = 2
[[probe]]
name = "p"
line = {{ from = [-150, 120], to = [150, 120], points = 4 }}
"#
    )
}

#[test]
fn three_phase_set_field_is_the_superposition_of_line_currents() {
    let wires = [
        (-0.1, 0.0, 500.0, 0.0),
        (0.0, 0.0, 500.0, -120.0),
        (0.1, 0.0, 500.0, 120.0),
    ];
    // Stranded bars carry uniform current: outside, exactly the line-current field.
    // Solid bars at 50 Hz (radius 10 mm ≈ 1.1 δ in copper) crowd their current towards
    // each other (proximity effect); 120 mm away the change is below 0.5 % as well.
    for kind in ["stranded", "solid"] {
        let r = solve_text(&three_phase(kind));
        for k in 0..4 {
            let p = [
                get(&r, &format!("probes.p.points.{k}.0")),
                get(&r, &format!("probes.p.points.{k}.1")),
            ];
            let b = line_field(&wires, p);
            let (bx, by) = (b[0].0.hypot(b[0].1), b[1].0.hypot(b[1].1));
            // Components are compared against the field's size: one component can be
            // nearly cancelled by the phases, and a relative error of it says little.
            let size = (bx * bx + by * by).sqrt();
            let near = |what: &str, got: f64, want: f64| {
                let e = (got - want).abs() / size;
                eprintln!("{kind} {what} at {p:?}: {got:.5e} vs {want:.5e}, error {e:.2e} of |B|");
                assert!(e < 5e-3, "{kind} {what} at {p:?}: {got} vs {want}");
            };
            near("|Bx|", get(&r, &format!("probes.p.b_t.{k}.0")), bx);
            near("|By|", get(&r, &format!("probes.p.b_t.{k}.1")), by);
            // The rotating field's ellipse: semi-axes from G = u uᵀ + v vᵀ.
            let (u, v) = ([b[0].0, b[1].0], [b[0].1, b[1].1]);
            let (a, bb, c) = (
                u[0] * u[0] + v[0] * v[0],
                u[0] * u[1] + v[0] * v[1],
                u[1] * u[1] + v[1] * v[1],
            );
            let root = (0.25 * (a - c).powi(2) + bb * bb).sqrt();
            let major = (0.5 * (a + c) + root).sqrt();
            let minor = (0.5 * (a + c) - root).max(0.0).sqrt();
            near(
                "ellipse major",
                get(&r, &format!("probes.p.ellipse.{k}.major_t")),
                major,
            );
            near(
                "ellipse minor",
                get(&r, &format!("probes.p.ellipse.{k}.minor_t")),
                minor,
            );
        }
    }
}

fn shield_case(with_plate: bool) -> String {
    let plate = if with_plate {
        r#"
[materials.steel]
mu_r = 200
conductivity = 5e6
[[part]]
name = "plate"
material = "steel"
rect = { min = [75, -120], max = [78, 120] }
mesh_size = 4
"#
    } else {
        ""
    };
    format!(
        r#"
[model]
title = "feeder, plate, pickup"
symmetry = "planar"
frequency = 50
depth = 1000
[domain]
circle = {{ center = [75, 0], radius = 450 }}
boundary = "open"
mesh_size = 40
{plate}
[[conductor]]
name = "go"
circle = {{ center = [0, 30], radius = 10 }}
current = 400
mesh_size = 2
[[conductor]]
name = "return"
circle = {{ center = [0, -30], radius = 10 }}
current = -400
mesh_size = 2
[[coil]]
name = "pickup"
turns = 1000
wire = "awg30"
sides = [ {{ rect = {{ min = [150, 20], max = [160, 30] }}, sense = 1 }},
          {{ rect = {{ min = [150, -30], max = [160, -20] }}, sense = -1 }} ]
"#
    )
}

/// A steel plate between the feeder and the pickup lowers the pickup's EMF, and the
/// sources' input power Re(V I*) equals the losses (Poynting's theorem; the quasi-static
/// field stores no net time-average energy) to 1 %.
#[test]
fn steel_plate_shields_the_pickup_and_the_power_balances() {
    let bare = solve_text(&shield_case(false));
    let shielded = solve_text(&shield_case(true));
    let emf0 = get(&bare, "coils.pickup.emf_v");
    let emf1 = get(&shielded, "coils.pickup.emf_v");
    eprintln!("EMF without plate {emf0:.4e} V, with {emf1:.4e} V");
    assert!(emf1 < 0.9 * emf0, "the plate should lower the EMF");
    for r in [&bare, &shielded] {
        let input: f64 = ["go", "return"]
            .iter()
            .map(|c| get(r, &format!("conductors.{c}.input_power_w")))
            .sum();
        let mut loss: f64 = ["go", "return"]
            .iter()
            .map(|c| get(r, &format!("conductors.{c}.loss_w")))
            .sum();
        if r["parts"]["plate"].is_object() {
            let p = get(r, "parts.plate.loss_w");
            assert!(p > 0.0, "plate loss");
            loss += p;
        }
        assert_rel("input power vs losses", input, loss, 1e-2);
    }
    // The skin depth of the plate is reported: √(2/(ωμσ)) = 2.25 mm for μr 200, 5 MS/m.
    let delta = (2.0 / (2.0 * PI * 50.0 * MU0 * 200.0 * 5e6)).sqrt();
    assert_rel(
        "plate skin depth",
        get(&shielded, "parts.plate.skin_depth_m"),
        delta,
        1e-12,
    );
}

/// At a frequency where the conductors are thin against the skin depth, the solid
/// (eddy-current) solve and the stranded (uniform) solve agree, and the AC resistance
/// tends to the DC value (R_ac/R_dc = 1.00003 at a = 0.2 δ, exact Bessel solution).
#[test]
fn thin_solid_conductor_matches_the_uniform_current_solution() {
    let case = |kind: &str| {
        format!(
            r#"
[model]
symmetry = "planar"
frequency = 50
[domain]
circle = {{ center = [0, 0], radius = 300 }}
boundary = "open"
mesh_size = 30
[[conductor]]
name = "w"
circle = {{ center = [0, 0], radius = 1.87 }}
current = 10
kind = "{kind}"
mesh_size = 0.3
[[coil]]
name = "loop"
turns = 10
wire = "awg30"
sides = [ {{ rect = {{ min = [50, 0], max = [52, 2] }}, sense = 1 }},
          {{ rect = {{ min = [100, 0], max = [102, 2] }}, sense = -1 }} ]
"#
        )
    };
    let solid = solve_text(&case("solid"));
    let stranded = solve_text(&case("stranded"));
    assert_rel(
        "pickup EMF solid vs stranded",
        get(&solid, "coils.loop.emf_v"),
        get(&stranded, "coils.loop.emf_v"),
        1e-3,
    );
    assert_rel(
        "R_ac/R_dc at a = 0.2 δ",
        get(&solid, "conductors.w.ac_dc_ratio"),
        1.000_033,
        1e-3,
    );
}
