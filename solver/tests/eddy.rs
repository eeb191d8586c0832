//! Time-harmonic solver against exact eddy-current solutions.
//!
//! * Round solid wire (planar): internal impedance per metre
//!   Z = k/(2πaσ) · J0(ka)/J1(ka), k = (1 − j)/δ, δ = √(2/(ωμσ)) (e^{jωt} phasors; Ramo,
//!   Whinnery & Van Duzer, "Fields and Waves in Communication Electronics", §5.13). The
//!   series for J0, J1 below is checked against values computed with mpmath 1.3
//!   (`besselj`, 30 digits), and the ratio tables against the same library.
//! * Thick plate under a tangential field (planar, 1D): A'' = k²A in the plate, whose
//!   solution gives the surface impedance Zs = jωμ tanh(kd/2)/k on each face
//!   (→ (1 + j)/(σδ) for d ≫ δ; e.g. Stoll, "The Analysis of Eddy Currents", 1974, ch. 2).
//! * Long cylinder in a uniform axial field (axisymmetric, 1D): B(r) = B_s J0(kr)/J0(ka)
//!   (the Kelvin-function solution written with J0 of complex argument; same sources).

use std::f64::consts::{PI, TAU};

use fluxpick_mesh::{generate, Cuts, MeshParams, MeshSpec, Outer, RegionInput, Shape, Side};
use fluxpick_solver::{
    solve_harmonic, Formulation, Order, Problem, RegionMaterial, Spread, Winding, WindingRegion,
    MU0,
};
use num_complex::Complex64 as C;

/// J_n(z), n = 0 or 1, by its power series (adequate for |z| ≤ 20 in double precision).
fn bessel_j(n: u32, z: C) -> C {
    let h = z / 2.0;
    let mut term = if n == 0 { C::new(1.0, 0.0) } else { h };
    let mut sum = term;
    let q = -h * h;
    for m in 1..200 {
        term = term * q / (m as f64 * (m + n) as f64);
        sum += term;
        if term.norm() < 1e-18 * sum.norm() {
            break;
        }
    }
    sum
}

#[test]
fn bessel_series_matches_mpmath() {
    // mpmath.besselj at 30 digits (rounded to 12 here).
    let cases = [
        (
            C::new(3.0, -3.0),
            C::new(-3.366_500_829_202, 2.095_429_221_003),
            C::new(1.636_451_401_809, 3.278_633_442_703),
        ),
        (
            C::new(10.0, -10.0),
            C::new(-2_314.975_314_445_21, -411.562_857_025_381),
            C::new(-460.680_913_538_353, 2_246.626_790_704_06),
        ),
    ];
    for (z, j0, j1) in cases {
        assert!((bessel_j(0, z) - j0).norm() < 1e-10 * j0.norm(), "J0({z})");
        assert!((bessel_j(1, z) - j1).norm() < 1e-10 * j1.norm(), "J1({z})");
    }
}

const SIGMA_CU: f64 = 5.8e7;
const F: f64 = 50.0;

fn skin_depth(f: f64, mu_r: f64, sigma: f64) -> f64 {
    (2.0 / (TAU * f * MU0 * mu_r * sigma)).sqrt()
}

/// A round wire of radius `a` (m) in a fixed disk of radius 4a: AC/DC resistance ratio and
/// internal inductance over its DC value μ0/(8π).
fn wire_ratios(a: f64, sigma: f64, order: Order) -> (f64, f64, f64) {
    let delta = skin_depth(F, 1.0, sigma);
    let r_out = 4.0 * a;
    let spec = MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: r_out,
            cuts: Cuts::default(),
        },
        background_max_edge: r_out / 6.0,
        regions: vec![RegionInput {
            shape: Shape::Circle {
                center: [0.0, 0.0],
                radius: a,
            },
            max_edge: Some(a / 5.0),
            skin_edge: Some((delta / 3.0).min(a / 5.0)),
        }],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let mesh = generate(&spec).unwrap();
    let p = Problem {
        mesh: &mesh,
        formulation: Formulation::Planar,
        order,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(1.0, sigma),
        ],
        windings: vec![Winding {
            name: "wire".into(),
            regions: vec![WindingRegion {
                region: 1,
                turns: 1.0,
                spread: Spread::Solid,
            }],
        }],
        background: None,
        dirichlet: vec![Side::Arc],
    };
    let t0 = std::time::Instant::now();
    let sol = solve_harmonic(&p, F).unwrap();
    println!(
        "  {} unknowns, {:.2} s, {} GMRES iterations over {} solves",
        sol.disc.n_dofs,
        t0.elapsed().as_secs_f64(),
        sol.krylov_iterations,
        sol.krylov_solves
    );
    let omega = TAU * F;
    let z = sol.conductor_impedance(0, 1.0).unwrap();
    let r_dc = 1.0 / (sigma * PI * a * a);
    // Loss integral at 1 A must give the same resistance as the terminal voltage.
    let loss = sol.region_losses(&sol.unit[0], &sol.unit_psi[0]);
    assert!(
        (loss[1] - z.re).abs() < 1e-6 * z.re,
        "loss {} vs Re Z {}",
        loss[1],
        z.re
    );
    // Internal inductance from the energy inside the wire (2W/I², I = 1 A rms).
    let inside = |c: usize| sol.disc.cell_region[c] == 1;
    let w = sol.unit[0][0].energy(inside) + sol.unit[0][1].energy(inside);
    let l_int = 2.0 * w;
    // And the terminal reactance less the external log term (the outer boundary at 4a).
    let l_ext = MU0 / TAU * (r_out / a).ln();
    let l_terminal = z.im / omega - l_ext;
    (
        z.re / r_dc,
        l_int / (MU0 / (8.0 * PI)),
        l_terminal / (MU0 / (8.0 * PI)),
    )
}

#[test]
fn round_wire_matches_bessel_solution_from_0_2_to_10_skin_depths() {
    // a/δ, then R_ac/R_dc and L_int/(μ0/8π) from the exact solution (mpmath 1.3).
    let table = [
        (0.2, 1.000_033_332_444_47, 0.999_983_333_814_8),
        (0.5, 1.001_300_728_555_79, 0.999_349_692_166_573),
        (1.0, 1.020_492_388_855_62, 0.989_767_993_126_011),
        (2.0, 1.264_642_906_273_21, 0.870_482_595_604_191),
        (5.0, 2.768_107_600_734_29, 0.396_275_966_091_337),
        (10.0, 5.259_301_857_510_8, 0.199_585_100_995_755),
    ];
    for (sigma, name) in [(SIGMA_CU, "copper"), (3.5e7, "aluminium")] {
        let delta = skin_depth(F, 1.0, sigma);
        for (x, r_ref, l_ref) in table {
            // The series agrees with the table (so the table's source is checked too).
            let k = C::new(1.0, -1.0);
            let zr = k * x / 2.0 * bessel_j(0, k * x) / bessel_j(1, k * x);
            assert!((zr.re - r_ref).abs() < 1e-9 && (zr.im * 4.0 / (x * x) - l_ref).abs() < 1e-9);
            let (r, l, lt) = wire_ratios(x * delta, sigma, Order::Quadratic);
            println!(
                "{name} a/δ {x}: R {r:.5} ({r_ref:.5}) L {l:.5} ({l_ref:.5}) terminal {lt:.5}"
            );
            assert!(
                (r / r_ref - 1.0).abs() < 0.01,
                "{name} a/δ {x}: R ratio {r} vs {r_ref}"
            );
            assert!(
                (l / l_ref - 1.0).abs() < 0.01,
                "{name} a/δ {x}: L ratio {l} vs {l_ref}"
            );
            assert!(
                (lt / l_ref - 1.0).abs() < 0.01,
                "{name} a/δ {x}: terminal L {lt} vs {l_ref}"
            );
        }
    }
}

/// A plate |y| < d/2 across a strip of width w, between fixed boundaries at y = ±y_max
/// holding the background potential of a tangential field b along x; the strip's sides
/// are left natural (flux-normal), so nothing varies along x.
fn plate(d: f64, mu_r: f64, sigma: f64) -> (C, C, f64, C, C, f64) {
    let delta = skin_depth(F, mu_r, sigma);
    let (w, y_max, b) = (2.0 * delta, d / 2.0 + 4.0 * delta, 1e-3);
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [0.0, -y_max],
            max: [w, y_max],
        },
        background_max_edge: delta / 2.0,
        regions: vec![RegionInput {
            shape: Shape::Rect {
                min: [0.0, -d / 2.0],
                max: [w, d / 2.0],
            },
            max_edge: Some(delta / 2.0),
            skin_edge: Some(delta / 5.0),
        }],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let mesh = generate(&spec).unwrap();
    let p = Problem {
        mesh: &mesh,
        formulation: Formulation::Planar,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(mu_r, sigma),
        ],
        windings: vec![],
        background: Some([b, 0.0]),
        dirichlet: vec![Side::Bottom, Side::Top],
    };
    let sol = solve_harmonic(&p, F).unwrap();
    let omega = TAU * F;
    let field = sol.background.as_ref().unwrap();
    let psi = &sol.background_psi;
    // FE: H_x just above the plate, A at its face, loss per metre of depth.
    let at = |x: [f64; 2]| {
        let (re, im) = (field[0].at(x).unwrap(), field[1].at(x).unwrap());
        (C::new(re.a, im.a), C::new(re.b[0], im.b[0]))
    };
    let (_, b_gap) = at([w / 2.0, d / 2.0 + 2.0 * delta]);
    let h0 = b_gap / MU0;
    let (a_face, _) = at([w / 2.0, d / 2.0]);
    let zs = C::new(0.0, omega) * a_face / h0;
    let loss = sol.region_losses(field, psi)[1];
    // Exact 1D solution.
    let k = C::new(1.0, 1.0) / delta;
    let mu = MU0 * mu_r;
    let th = (k * d / 2.0).tanh();
    let h0_exact = C::new(b * y_max, 0.0) / (mu * th / k + MU0 * (y_max - d / 2.0));
    let zs_exact = C::new(0.0, omega * mu) * th / k;
    let loss_exact = 2.0 * w * zs_exact.re * h0_exact.norm_sqr();
    (h0, zs, loss, h0_exact, zs_exact, loss_exact)
}

#[test]
fn plate_surface_impedance_and_loss_match_the_1d_solution() {
    // Aluminium and a mild steel (μr 100, σ 5 MS/m, typical values), thick (8δ) and thin
    // (1δ, where tanh(kd/2) departs from 1).
    for (mu_r, sigma, name) in [(1.0, 3.5e7, "aluminium"), (100.0, 5e6, "steel")] {
        let delta = skin_depth(F, mu_r, sigma);
        for t in [8.0, 1.0] {
            let (h0, zs, loss, h0e, zse, losse) = plate(t * delta, mu_r, sigma);
            println!(
                "{name} d = {t}δ: H0 {h0:.4} ({h0e:.4}) Zs {zs:.4e} ({zse:.4e}) loss {loss:.5e} ({losse:.5e})"
            );
            assert!((h0 - h0e).norm() < 0.005 * h0e.norm(), "{name} {t}δ: H0");
            assert!((zs - zse).norm() < 0.01 * zse.norm(), "{name} {t}δ: Zs");
            assert!((loss / losse - 1.0).abs() < 0.01, "{name} {t}δ: loss");
            if t > 4.0 {
                // the thick limit (1 + j)/(σδ)
                let thick = C::new(1.0, 1.0) / (sigma * delta);
                assert!((zs - thick).norm() < 0.01 * thick.norm());
            }
        }
    }
}

/// A cylinder r < a, a coil of `turns` × 1 A filling c1 < r < c2, both through the whole
/// height h; natural conditions at top, bottom and outside (H_z = 0 beyond the coil), the
/// axis held at 0. Returns (FE B on the axis, exact), (FE loss per metre, exact), FE H in
/// the gap and its exact N I / h.
fn axial_cylinder(a: f64, mu_r: f64, sigma: f64) -> ((C, C), (f64, f64), (C, f64)) {
    let delta = skin_depth(F, mu_r, sigma);
    let (c1, c2, h, turns) = (a + delta, a + 2.0 * delta, 2.0 * delta, 100.0);
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [0.0, 0.0],
            max: [c2 + delta, h],
        },
        background_max_edge: delta / 2.0,
        regions: vec![
            RegionInput {
                shape: Shape::Rect {
                    min: [0.0, 0.0],
                    max: [a, h],
                },
                max_edge: Some(delta / 2.0),
                skin_edge: Some(delta / 5.0),
            },
            RegionInput {
                shape: Shape::Rect {
                    min: [c1, 0.0],
                    max: [c2, h],
                },
                max_edge: Some(delta / 2.0),
                skin_edge: None,
            },
        ],
        clip_at_axis: true,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let mesh = generate(&spec).unwrap();
    let p = Problem {
        mesh: &mesh,
        formulation: Formulation::Axisymmetric,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(mu_r, sigma),
            RegionMaterial::from_mu_r(1.0, 0.0),
        ],
        windings: vec![Winding {
            name: "solenoid".into(),
            regions: vec![WindingRegion {
                region: 2,
                turns,
                spread: Spread::Uniform,
            }],
        }],
        background: None,
        dirichlet: vec![Side::Left],
    };
    let sol = solve_harmonic(&p, F).unwrap();
    let omega = TAU * F;
    let f = &sol.unit[0];
    let b_at = |x: [f64; 2]| {
        let (re, im) = (f[0].at(x).unwrap(), f[1].at(x).unwrap());
        C::new(re.b[1], im.b[1])
    };
    let b_axis = b_at([0.0, h / 2.0]);
    let h_gap = b_at([0.5 * (a + c1), h / 2.0]) / MU0;
    let loss = sol.region_losses(f, &sol.unit_psi[0])[1] / h;
    // Exact: H_s = N I / h at the surface, B(r) = μ H_s J0(kr)/J0(ka), k = (1 − j)/δ.
    let hs = turns / h;
    let k = C::new(1.0, -1.0) / delta;
    let mu = MU0 * mu_r;
    let ka = k * a;
    let b_axis_exact = mu * hs / bessel_j(0, ka);
    let a_face = mu * hs * bessel_j(1, ka) / (k * bessel_j(0, ka));
    let loss_exact = TAU * a * (C::new(0.0, omega) * a_face * hs).re;
    ((b_axis, b_axis_exact), (loss, loss_exact), (h_gap, hs))
}

#[test]
fn axial_cylinder_matches_the_kelvin_function_solution() {
    for (mu_r, sigma, x, name) in [
        (1.0, 3.5e7, 3.0, "aluminium"),
        (100.0, 5e6, 5.0, "steel"),
        (1.0, 5.8e7, 0.7, "copper"),
    ] {
        let delta = skin_depth(F, mu_r, sigma);
        let ((b, be), (p, pe), (hg, hge)) = axial_cylinder(x * delta, mu_r, sigma);
        println!(
            "{name} a = {x}δ: B axis {b:.5e} ({be:.5e}) loss/m {p:.5e} ({pe:.5e}) H gap {hg:.4}"
        );
        assert!(
            (hg.norm() / hge - 1.0).abs() < 0.005,
            "{name}: gap field {hg} vs {hge}"
        );
        assert!((b - be).norm() < 0.02 * be.norm(), "{name}: axis field");
        assert!((p / pe - 1.0).abs() < 0.02, "{name}: loss {p} vs {pe}");
    }
}
