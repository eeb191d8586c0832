//! One [`SolverSetup`] serving many solves: solving again with other region materials
//! refills values on the set-up's pattern and reuses its ordering and symbolic analysis.
//!
//! Bit-for-bit identity of a refilled set-up with a fresh one is a consistency check of the
//! set-up (no outside reference can say it); each counting test is paired with a physics
//! check against a closed form, so that the refilled materials are seen to take effect.

use std::f64::consts::TAU;

use fluxpick_mesh::{generate, Cuts, MeshParams, MeshSpec, Outer, RegionInput, Shape, Side};
use fluxpick_solver::bh::{typical, BhCurve};
use fluxpick_solver::nonlinear::{solve_nonlinear, NewtonOptions, NonlinearSolution};
use fluxpick_solver::ordering::MIN_VERTICES;
use fluxpick_solver::{
    solve_harmonic, solve_static, Field, Formulation, HarmonicSolution, Order, Problem,
    RegionMaterial, SetupStats, SolverSetup, Spread, StaticSolution, Winding, WindingRegion, MU0,
};

/// A planar disk: a steel rod (conductive), a solid copper conductor, a stranded coil side
/// and an applied field; large enough at second order for the nested-dissection ordering.
fn mixed_mesh() -> fluxpick_mesh::Mesh {
    let circle = |x: f64| Shape::Circle {
        center: [x, 0.0],
        radius: 0.01,
    };
    generate(&MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: 0.1,
            cuts: Cuts::default(),
        },
        background_max_edge: 0.01,
        regions: vec![
            RegionInput {
                shape: circle(0.03),
                max_edge: Some(0.002),
                skin_edge: Some(0.001),
            },
            RegionInput {
                shape: circle(-0.03),
                max_edge: Some(0.002),
                skin_edge: Some(0.001),
            },
            RegionInput {
                shape: Shape::Rect {
                    min: [-0.02, 0.03],
                    max: [0.02, 0.04],
                },
                max_edge: Some(0.002),
                skin_edge: None,
            },
        ],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    })
    .unwrap()
}

fn mixed_problem(mesh: &fluxpick_mesh::Mesh) -> Problem<'_> {
    Problem {
        mesh,
        formulation: Formulation::Planar,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(500.0, 2e6),
            RegionMaterial::from_mu_r(1.0, 5.8e7),
            RegionMaterial::from_mu_r(1.0, 0.0),
        ],
        windings: vec![
            Winding {
                name: "bar".into(),
                regions: vec![WindingRegion {
                    region: 2,
                    turns: 1.0,
                    spread: Spread::Solid,
                }],
            },
            Winding {
                name: "coil".into(),
                regions: vec![WindingRegion {
                    region: 3,
                    turns: -30.0,
                    spread: Spread::Uniform,
                }],
            },
        ],
        background: Some([1e-3, 2e-4]),
        dirichlet: vec![Side::Arc],
    }
}

fn bits(a: &[f64]) -> Vec<u64> {
    a.iter().map(|v| v.to_bits()).collect()
}

fn same_field(what: &str, a: &Field, b: &Field) {
    assert!(bits(&a.a) == bits(&b.a), "{what}: fields differ");
}

fn same_static(what: &str, a: &StaticSolution, b: &StaticSolution) {
    assert_eq!(a.unit.len(), b.unit.len());
    for (k, (x, y)) in a.unit.iter().zip(&b.unit).enumerate() {
        same_field(&format!("{what}: unit {k}"), x, y);
    }
    same_field(
        &format!("{what}: background"),
        a.background.as_ref().unwrap(),
        b.background.as_ref().unwrap(),
    );
    assert_eq!(a.densities, b.densities, "{what}: densities");
    assert_eq!(a.nnz, b.nnz);
    assert_eq!(a.max_residual.to_bits(), b.max_residual.to_bits());
}

fn same_harmonic(what: &str, a: &HarmonicSolution, b: &HarmonicSolution) {
    let psi_bits = |p: &[Vec<num_complex::Complex64>]| -> Vec<(u64, u64)> {
        p.iter()
            .flatten()
            .map(|z| (z.re.to_bits(), z.im.to_bits()))
            .collect()
    };
    assert_eq!(a.unit.len(), b.unit.len());
    for (k, (x, y)) in a.unit.iter().zip(&b.unit).enumerate() {
        same_field(&format!("{what}: unit {k} re"), &x[0], &y[0]);
        same_field(&format!("{what}: unit {k} im"), &x[1], &y[1]);
    }
    let (x, y) = (
        a.background.as_ref().unwrap(),
        b.background.as_ref().unwrap(),
    );
    same_field(&format!("{what}: background re"), &x[0], &y[0]);
    same_field(&format!("{what}: background im"), &x[1], &y[1]);
    assert_eq!(psi_bits(&a.unit_psi), psi_bits(&b.unit_psi), "{what}: psi");
    assert_eq!(
        psi_bits(std::slice::from_ref(&a.background_psi)),
        psi_bits(std::slice::from_ref(&b.background_psi)),
        "{what}: background psi"
    );
    assert_eq!(bits(&a.sigma), bits(&b.sigma));
    assert_eq!(a.constraints, b.constraints);
    assert_eq!(a.densities, b.densities);
    assert_eq!(a.max_residual.to_bits(), b.max_residual.to_bits());
    assert_eq!(a.krylov_iterations, b.krylov_iterations);
    assert_eq!(a.krylov_solves, b.krylov_solves);
}

fn same_newton(what: &str, a: &NonlinearSolution, b: &NonlinearSolution) {
    same_field(what, &a.field, &b.field);
    assert_eq!(a.report.iterations, b.report.iterations, "{what}");
    assert_eq!(
        bits(&a.report.residual_history),
        bits(&b.report.residual_history),
        "{what}: residual history"
    );
    same_static(&format!("{what}: linear start"), &a.linear, &b.linear);
}

/// The static, harmonic and Newton solves through a set-up that has solved other materials
/// first equal the one-shot functions' (each on a fresh set-up) bit for bit; the whole run
/// makes one ordering and one analysis.
#[test]
fn refilled_setup_gives_the_fresh_results_bit_for_bit() {
    let mesh = mixed_mesh();
    assert!(
        mesh.points.len() >= MIN_VERTICES,
        "ordered by nested dissection"
    );
    let p = mixed_problem(&mesh);
    let mut other = p.materials.clone();
    other[1] = RegionMaterial::from_mu_r(120.0, 5e6);
    other[2].sigma = 3.5e7;
    let setup = SolverSetup::new(&p).unwrap();

    let before = setup.solve_static(&other).unwrap();
    let refilled = setup.solve_static(&p.materials).unwrap();
    let fresh = solve_static(&p).unwrap();
    same_static("static", &refilled, &fresh);
    // the other materials did give another field (the comparison can fail)
    assert!(bits(&before.unit[1].a) != bits(&fresh.unit[1].a));

    let before = setup.solve_harmonic(&other, 50.0).unwrap();
    let refilled = setup.solve_harmonic(&p.materials, 50.0).unwrap();
    let fresh = solve_harmonic(&p, 50.0).unwrap();
    same_harmonic("harmonic", &refilled, &fresh);
    assert!(bits(&before.unit[0][1].a) != bits(&fresh.unit[0][1].a));
    // a plan kept for a frequency sweep too
    let plan = setup.harmonic_plan(&p.materials).unwrap();
    same_harmonic(
        "plan",
        &plan.solve(60.0).unwrap(),
        &solve_harmonic(&p, 60.0).unwrap(),
    );

    let curve = BhCurve::new(&typical::MILD_STEEL).unwrap();
    let curves = vec![None, Some(curve), None, None];
    let currents = [3.0e4, 2.0e4];
    let opts = NewtonOptions::default();
    setup
        .solve_nonlinear(&other, &curves, &currents, opts)
        .unwrap();
    let refilled = setup
        .solve_nonlinear(&p.materials, &curves, &currents, opts)
        .unwrap();
    let fresh = solve_nonlinear(&p, &curves, &currents, opts).unwrap();
    same_newton("newton", &refilled, &fresh);
    assert!(fresh.report.iterations >= 1);

    let stats = setup.stats();
    assert_eq!((stats.orderings, stats.analyses), (1, 1), "{stats:?}");
}

const R1: f64 = 0.010;
const R2: f64 = 0.015;

/// A wire (r 2 mm, region 2) inside a tube R1..R2 (region 1), in a disk of radius 50 mm
/// held at A = 0; fine enough at second order for nested dissection.
fn tube_problem(mesh: &fluxpick_mesh::Mesh, mu_r_wall: f64) -> Problem<'_> {
    Problem {
        mesh,
        formulation: Formulation::Planar,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(mu_r_wall, 0.0),
            RegionMaterial::from_mu_r(1.0, 0.0),
        ],
        windings: vec![Winding {
            name: "wire".into(),
            regions: vec![WindingRegion {
                region: 2,
                turns: 1.0,
                spread: Spread::Uniform,
            }],
        }],
        background: None,
        dirichlet: vec![Side::Arc],
    }
}

fn tube_mesh() -> fluxpick_mesh::Mesh {
    generate(&MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: 0.05,
            cuts: Cuts::default(),
        },
        background_max_edge: 0.002,
        regions: vec![
            RegionInput {
                shape: Shape::Annulus {
                    center: [0.0, 0.0],
                    inner: R1,
                    outer: R2,
                },
                max_edge: Some(0.0007),
                skin_edge: None,
            },
            RegionInput {
                shape: Shape::Circle {
                    center: [0.0, 0.0],
                    radius: 0.002,
                },
                max_edge: Some(0.0008),
                skin_edge: None,
            },
        ],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    })
    .unwrap()
}

/// Flux per metre through the wall, A(R1) − A(R2), of a field.
fn wall_flux(f: &Field, current: f64) -> f64 {
    current * (f.at([R1, 0.0]).unwrap().a - f.at([R2, 0.0]).unwrap().a)
}

/// Changing the wall's ν twice refills values only: no new ordering or analysis (one
/// assembly more per solve). Each refilled solve matches Ampère's law for a linear wall,
/// H = I/(2πr), so the flux per metre through it is μ0 μr I ln(R2/R1)/(2π) (textbook
/// magnetostatics; the formula from memory).
#[test]
fn material_refill_makes_no_new_ordering_or_analysis() {
    let mesh = tube_mesh();
    assert!(
        mesh.points.len() >= MIN_VERTICES,
        "ordered by nested dissection"
    );
    let p = tube_problem(&mesh, 1.0);
    let setup = SolverSetup::new(&p).unwrap();
    assert_eq!(setup.stats(), SetupStats::default());
    let mut materials = p.materials.clone();
    let current = 10.0;
    for (k, mu_r) in [1.0, 300.0, 2000.0].into_iter().enumerate() {
        materials[1] = RegionMaterial::from_mu_r(mu_r, 0.0);
        let sol = setup.solve_static(&materials).unwrap();
        let stats = setup.stats();
        assert_eq!(
            stats,
            SetupStats {
                orderings: 1,
                analyses: 1,
                assemblies: k + 1
            },
            "after solve {k}"
        );
        let fe = wall_flux(&sol.unit[0], current);
        let exact = MU0 * mu_r * current * (R2 / R1).ln() / TAU;
        eprintln!("mu_r {mu_r}: flux {fe:.6e} against {exact:.6e} Wb/m");
        assert!(
            (fe / exact - 1.0).abs() < 1e-3,
            "mu_r {mu_r}: {fe} vs {exact}"
        );
    }
    // the time-harmonic plan refills K and σM on the same pattern
    materials[1].sigma = 1e6;
    setup.solve_harmonic(&materials, 50.0).unwrap();
    let stats = setup.stats();
    assert_eq!(
        (stats.orderings, stats.analyses, stats.assemblies),
        (1, 1, 5)
    );
}

/// Newton's starting linear solve and its iterations make one ordering and one analysis,
/// and one Jacobian assembly per iteration (the static stiffness is the other one). The
/// saturated wall's flux follows Ampère's law with the curve's own B(H):
/// ∫ B(I/(2πr)) dr over the wall (Simpson's rule here).
#[test]
fn newton_makes_one_ordering_and_one_analysis() {
    let mesh = tube_mesh();
    let curve = BhCurve::new(&typical::MILD_STEEL).unwrap();
    let p = tube_problem(&mesh, curve.initial_mu_r());
    let curves = vec![None, Some(curve.clone()), None];
    let current = 300.0;
    let setup = SolverSetup::new(&p).unwrap();
    let sol = setup
        .solve_nonlinear(&p.materials, &curves, &[current], NewtonOptions::default())
        .unwrap();
    let stats = setup.stats();
    eprintln!("{stats:?}, {} iterations", sol.report.iterations);
    assert!(sol.report.iterations >= 2, "{:?}", sol.report);
    assert_eq!(
        stats,
        SetupStats {
            orderings: 1,
            analyses: 1,
            assemblies: 1 + sol.report.iterations
        }
    );
    let fe = wall_flux(&sol.field, 1.0);
    let n = 2000;
    let h = (R2 - R1) / n as f64;
    let b = |r: f64| curve.b_of_h(current / (TAU * r));
    let mut s = b(R1) + b(R2);
    for k in 1..n {
        s += b(R1 + k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
    }
    let exact = s * h / 3.0;
    assert!((fe / exact - 1.0).abs() < 5e-3, "{fe} vs {exact}");
}
