//! Magnetostatic system tests against analytic solutions, through the real binary on case
//! files. Each test names its source; tolerances are relative.

mod common;
use common::*;

#[test]
fn reference_formulas_match_published_values() {
    // Check values from docs/references.md (computed with scipy/mpmath).
    assert!((osborn_prolate(5.0) - 0.0558210).abs() < 1e-7);
    assert!((osborn_prolate(2.0) - 0.1735640).abs() < 1e-7);
    assert!((maxwell_mutual(0.01, 0.01, 0.01) - 4.940785e-9).abs() < 1e-15);
    assert!((maxwell_mutual(0.01, 0.015, 0.005) - 11.84650e-9).abs() < 1e-14);
    for (ratio, k) in [
        (0.1, 0.958807),
        (0.5, 0.818136),
        (1.0, 0.688423),
        (2.0, 0.525510),
        (5.0, 0.319825),
    ] {
        assert!(
            (nagaoka(ratio / 2.0, 1.0) - k).abs() < 2e-6,
            "k_N at 2a/l = {ratio}"
        );
    }
    assert!((loop_a_phi(0.01, 1.0, 0.005, 0.005) - 1.112067e-7).abs() < 1e-12);
}

/// Ampère's law: B = μ0 I r/(2πa²) inside a round wire, μ0 I/(2πr) outside
/// (docs/references.md, "Straight wires": 100 A at 0.1 m gives 200.000 µT).
#[test]
fn round_wire_inside_and_outside_planar() {
    let r = solve_text(
        r#"
[model]
title = "round wire"
symmetry = "planar"
[domain]
circle = { center = [0, 0], radius = 250 }
boundary = "open"
mesh_size = 25
[[conductor]]
name = "wire"
material = "copper"
circle = { center = [0, 0], radius = 10 }
current = 100
kind = "stranded"
mesh_size = 1.0
[[probe]]
name = "ray"
line = { from = [5, 0], to = [100, 0], points = 20 }
"#,
    );
    let i = 100.0;
    let a = 0.010;
    let inside = get(&r, "probes.ray.b_t.0.1").abs();
    assert_rel(
        "B at r = 5 mm (inside)",
        inside,
        MU0 * i * 0.005 / (2.0 * PI * a * a),
        5e-3,
    );
    let outside = get(&r, "probes.ray.b_t.19.1").abs();
    assert_rel("B at r = 100 mm", outside, 200.0e-6, 5e-3);
}

/// A permeable cylinder in a uniform transverse field has a uniform interior field
/// B_in/B0 = 2μr/(μr + 1) (classical 2D potential solution; docs/references.md: 1.980198 at
/// μr 100).
#[test]
fn permeable_cylinder_in_transverse_field() {
    let r = solve_text(
        r#"
[model]
title = "cylinder in a transverse field"
symmetry = "planar"
[domain]
circle = { center = [0, 0], radius = 120 }
boundary = "open"
mesh_size = 12
[background]
b = 1.0e-3
direction = [1, 0]
[materials.soft]
mu_r = 100
[[part]]
name = "cyl"
material = "soft"
circle = { center = [0, 0], radius = 20 }
mesh_size = 2
[[probe]]
name = "centre"
line = { from = [-5, 0], to = [5, 0], points = 3 }
"#,
    );
    let want = 2.0 * 100.0 / 101.0 * 1e-3;
    assert_rel(
        "mean |B| in the cylinder",
        get(&r, "parts.cyl.b_mean_t"),
        want,
        5e-3,
    );
    assert_rel(
        "B_x at the centre",
        get(&r, "probes.centre.b_t.1.0"),
        want,
        5e-3,
    );
}

/// Flux linkage of a go-and-return pair with a two-sided pickup: A = (μ0 I/2π) ln(r₋/r₊)
/// of two line currents (log formula); the mean of a harmonic A over a round coil side is its
/// centre value (mean-value property), so the reference is exact for round sides.
#[test]
fn feeder_pair_flux_linkage_log_formula() {
    let r = solve_text(
        r#"
[model]
title = "pair and pickup"
symmetry = "planar"
depth = 1000
[domain]
circle = { center = [0, 0], radius = 400 }
boundary = "open"
mesh_size = 30
[[conductor]]
name = "go"
circle = { center = [-50, 0], radius = 5 }
current = 100
kind = "stranded"
mesh_size = 1
[[conductor]]
name = "return"
circle = { center = [50, 0], radius = 5 }
current = -100
kind = "stranded"
mesh_size = 1
[[coil]]
name = "pickup"
turns = 10
wire = "awg30"
fill_factor = 0.5
sides = [ { circle = { center = [100, 100], radius = 3 }, sense = 1 },
          { circle = { center = [200, 100], radius = 3 }, sense = -1 } ]
mesh_size = 1
"#,
    );
    let a = |x: f64, y: f64| {
        let rp = ((x + 0.05f64).powi(2) + y * y).sqrt(); // to the +100 A conductor
        let rm = ((x - 0.05f64).powi(2) + y * y).sqrt();
        MU0 * 100.0 / (2.0 * PI) * (rm / rp).ln()
    };
    let want = 10.0 * 1.0 * (a(0.1, 0.1) - a(0.2, 0.1));
    assert_rel(
        "pickup flux linkage",
        get(&r, "coils.pickup.flux_linkage_wb"),
        want,
        5e-3,
    );
}

/// Prolate spheroid (aspect 5, μr 1000) in a uniform axial field: uniform interior field
/// B_in/B0 = μr/(1 + N(μr − 1)) with Osborn's N (Osborn, Phys. Rev. 67, 351, 1945;
/// docs/references.md: 17.6164).
#[test]
fn prolate_spheroid_interior_field() {
    let r = solve_text(
        r#"
[model]
title = "prolate spheroid"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -120], max = [120, 120] }
boundary = "open"
mesh_size = 12
[background]
b = 1.0e-3
direction = [0, 1]
[materials.core]
mu_r = 1000
[[part]]
name = "spheroid"
material = "core"
ellipse = { center = [0, 0], semi_axes = [10, 50] }
mesh_size = 1.0
"#,
    );
    let n = osborn_prolate(5.0);
    let want = 1000.0 / (1.0 + n * 999.0) * 1e-3;
    assert!((want / 1e-3 - 17.6164).abs() < 1e-3);
    assert_rel(
        "mean |B| in the spheroid",
        get(&r, "parts.spheroid.b_mean_t"),
        want,
        5e-3,
    );
}

/// Field of a single loop on its axis and off it (Smythe / Jackson 5.37; docs/references.md:
/// loop a = 10 mm, 1 A: centre B_z = 62.83185 µT; at (ρ 5, z 5 mm) B_ρ = 16.16891 µT,
/// B_z = 43.45849 µT).
#[test]
fn single_loop_field() {
    let r = solve_text(
        r#"
[model]
title = "loop"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -60], max = [60, 60] }
boundary = "open"
mesh_size = 2
[[coil]]
name = "loop"
turns = 1
wire_diameter = 0.2
fill_factor = 0.5
current = 1
circle = { center = [10, 0], radius = 0.3 }
mesh_size = 0.1
[[probe]]
name = "p"
line = { from = [0, 0], to = [5, 5], points = 2 }
"#,
    );
    assert_rel(
        "B_z at the centre",
        get(&r, "probes.p.b_t.0.1"),
        62.83185e-6,
        5e-3,
    );
    assert_rel(
        "B_rho at (5, 5) mm",
        get(&r, "probes.p.b_t.1.0"),
        16.16891e-6,
        5e-3,
    );
    assert_rel(
        "B_z at (5, 5) mm",
        get(&r, "probes.p.b_t.1.1"),
        43.45849e-6,
        5e-3,
    );
}

/// Mutual inductance of two coaxial loops (Maxwell, Treatise §701; docs/references.md:
/// a = 10, b = 15, d = 5 mm: 11.84650 nH), by the flux and the energy routes.
#[test]
fn coaxial_loops_mutual_inductance() {
    let r = solve_text(
        r#"
[model]
title = "two loops"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -60], max = [60, 60] }
boundary = "open"
mesh_size = 6
[[coil]]
name = "a"
turns = 1
wire_diameter = 0.2
fill_factor = 0.5
circle = { center = [10, 0], radius = 0.3 }
mesh_size = 0.1
[[coil]]
name = "b"
turns = 1
wire_diameter = 0.2
fill_factor = 0.5
circle = { center = [15, 5], radius = 0.3 }
mesh_size = 0.1
"#,
    );
    let want = maxwell_mutual(0.010, 0.015, 0.005);
    assert_rel(
        "M by flux",
        get(&r, "inductance_matrix.flux_h.0.1"),
        want,
        5e-3,
    );
    assert_rel(
        "M by energy",
        get(&r, "inductance_matrix.energy_h.0.1"),
        want,
        5e-3,
    );
    let (lf, le) = (
        get(&r, "coils.a.inductance_h"),
        get(&r, "coils.a.inductance_energy_h"),
    );
    assert_rel("self inductance, energy vs flux", le, lf, 5e-3);
}

/// Single-layer solenoid a = 10 mm, N = 100, l = 50 mm: L = k_N μ0 π a² N²/l = 67.1017 µH
/// (Lorenz / Nagaoka 1909, docs/references.md). Modelled as a 0.05 mm thick winding at mean
/// radius a; a shell of thickness t lowers L by about t/(3a) = 0.17 % (derived here).
#[test]
fn single_layer_solenoid_inductance() {
    let r = solve_text(
        r#"
[model]
title = "solenoid"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -150], max = [150, 150] }
boundary = "open"
mesh_size = 10
[[coil]]
name = "sol"
turns = 100
wire_diameter = 0.02
fill_factor = 0.5
rect = { min = [9.975, -25], max = [10.025, 25] }
mesh_size = 0.05
"#,
    );
    let want = nagaoka(0.01, 0.05) * MU0 * PI * 1e-4 * 1e4 / 0.05;
    assert!((want - 67.1017e-6).abs() < 1e-10);
    assert_rel(
        "solenoid inductance",
        get(&r, "coils.sol.inductance_h"),
        want,
        5e-3,
    );
}
