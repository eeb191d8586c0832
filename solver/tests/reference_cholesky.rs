//! faer's sparse Cholesky (through the solver) against an independent one: nalgebra-sparse's
//! `CscCholesky` (a port of the CSparse left-looking factorisation, reference library) on
//! the same assembled static system, permuted by the same nested-dissection ordering first
//! (nalgebra-sparse makes no fill-reducing ordering of its own).

use fluxpick_mesh::{generate, MeshParams, MeshSpec, Outer, RegionInput, Shape, Side};
use fluxpick_solver::ordering::dissect;
use fluxpick_solver::statics::background_potential;
use fluxpick_solver::{
    Formulation, Order, Problem, RegionMaterial, SolverSetup, Spread, Winding, WindingRegion,
};
use nalgebra_sparse::factorization::CscCholesky;
use nalgebra_sparse::na::DMatrix;
use nalgebra_sparse::{CooMatrix, CscMatrix};

#[test]
fn faer_solution_matches_nalgebra_sparse_cholesky() {
    let mesh = generate(&MeshSpec {
        outer: Outer::Rect {
            min: [-0.1, -0.1],
            max: [0.1, 0.1],
        },
        background_max_edge: 0.006,
        regions: vec![
            RegionInput {
                shape: Shape::Ellipse {
                    center: [0.02, 0.0],
                    semi_axes: [0.03, 0.008],
                },
                max_edge: Some(0.003),
                skin_edge: None,
            },
            RegionInput {
                shape: Shape::Rect {
                    min: [-0.05, -0.01],
                    max: [-0.03, 0.01],
                },
                max_edge: Some(0.003),
                skin_edge: None,
            },
        ],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    })
    .unwrap();
    let stranded = |region, turns| WindingRegion {
        region,
        turns,
        spread: Spread::Uniform,
    };
    let p = Problem {
        mesh: &mesh,
        formulation: Formulation::Planar,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(2000.0, 0.0),
            RegionMaterial::from_mu_r(1.0, 0.0),
        ],
        windings: vec![
            Winding {
                name: "coil".into(),
                regions: vec![stranded(2, 50.0)],
            },
            Winding {
                name: "core".into(),
                regions: vec![stranded(1, 1.0)],
            },
        ],
        background: Some([0.0, 1e-3]),
        dirichlet: vec![Side::Left, Side::Right, Side::Bottom, Side::Top],
    };
    let setup = SolverSetup::new(&p).unwrap();
    let n = setup.n_dofs();
    assert!((2000..20_000).contains(&n), "{n} unknowns");
    let system = setup.static_system(&p.materials).unwrap();
    let sol = setup.solve_static(&p.materials).unwrap();

    // P K Pᵀ with perm[new] = old
    let d = setup.discretisation();
    let perm = dissect(d).unwrap().expect("large enough to be dissected");
    let mut inv = vec![0; n];
    for (new, &old) in perm.iter().enumerate() {
        inv[old] = new;
    }
    let mut coo = CooMatrix::new(n, n);
    for (v, (r, c)) in system.matrix.iter() {
        coo.push(inv[r], inv[c], *v);
    }
    let chol = CscCholesky::factor(&CscMatrix::from(&coo)).expect("positive definite");
    let k = system.columns.len();
    let mut b = DMatrix::zeros(n, k);
    for (v, (r, c)) in system.rhs.iter() {
        b[(inv[r], c)] = *v;
    }
    let y = chol.solve(&b);

    let bg = p.background.unwrap();
    for (j, name) in system.columns.iter().enumerate() {
        let field = if j < 2 {
            &sol.unit[j]
        } else {
            sol.background.as_ref().unwrap()
        };
        let mut worst: f64 = 0.0;
        let mut scale: f64 = 0.0;
        for (node, &dof) in d.node_dof.iter().enumerate() {
            if dof == u32::MAX {
                continue;
            }
            // the reference's reaction potential (plus A_b for the applied field's field)
            let mut reference = y[(inv[dof as usize], j)];
            if j == 2 {
                reference += background_potential(d.formulation, bg, d.points[node]);
            }
            worst = worst.max((field.a[node] - reference).abs());
            scale = scale.max(reference.abs());
        }
        eprintln!(
            "{name}: {n} unknowns, max |faer - nalgebra-sparse| / max |A| = {:.2e}",
            worst / scale
        );
        assert!(scale > 0.0);
        assert!(
            worst <= 1e-10 * scale,
            "{name}: {worst:e} against {scale:e}"
        );
    }
}
