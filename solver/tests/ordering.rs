//! The nested-dissection ordering: a permutation of the unknowns that solves the same system
//! as minimum degree, with less fill on a mesh of some thousands of vertices; used at second
//! order (first order keeps minimum degree).

use fluxpick_mesh::{generate, Cuts, MeshParams, MeshSpec, Outer};
use fluxpick_solver::assembly::Pattern;
use fluxpick_solver::linsolve::CholeskyAnalysis;
use fluxpick_solver::ordering::{dissect, nested_dissection, MIN_VERTICES};
use fluxpick_solver::{Discretisation, Formulation, Order};

fn disk(max_edge: f64) -> fluxpick_mesh::Mesh {
    // a disk with its exterior image: image arc nodes share unknowns with the domain arc
    let spec = MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: 1.0,
            cuts: Cuts::default(),
        },
        background_max_edge: max_edge,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: true,
        params: MeshParams::default(),
    };
    generate(&spec).unwrap()
}

/// Symmetric, strictly diagonally dominant with a positive diagonal, hence positive definite.
fn dominant_values(p: &Pattern) -> Vec<f64> {
    let mut values = vec![0.0; p.nnz()];
    for j in 0..p.n {
        let off = (p.col_ptr[j + 1] - p.col_ptr[j] - 1) as f64;
        for k in p.col_ptr[j]..p.col_ptr[j + 1] {
            values[k] = if p.row_idx[k] == j { off + 0.5 } else { -1.0 };
        }
    }
    values
}

#[test]
fn nested_dissection_solves_like_minimum_degree_with_less_fill() {
    let mesh = disk(0.02);
    for order in [Order::Linear, Order::Quadratic] {
        let d = Discretisation::new(&mesh, Formulation::Planar, order, &[]);
        let perm = dissect(&d).unwrap().expect("large enough to be dissected");
        let mut seen = vec![false; d.n_dofs];
        for &i in &perm {
            assert!(!seen[i], "{order:?}: unknown {i} twice");
            seen[i] = true;
        }
        assert_eq!(perm.len(), d.n_dofs);
        let p = Pattern::new(&d);
        let values = dominant_values(&p);
        let b: Vec<f64> = (0..p.n).map(|i| ((i * 7) % 13) as f64 - 6.0).collect();
        let amd = CholeskyAnalysis::new(&p).unwrap();
        let nd = CholeskyAnalysis::with_ordering(&p, Some(perm)).unwrap();
        let x_amd = amd
            .factor(&p, &values)
            .unwrap()
            .solve(std::slice::from_ref(&b))
            .pop()
            .unwrap();
        let x_nd = nd.factor(&p, &values).unwrap().solve(&[b]).pop().unwrap();
        let scale = x_amd.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let diff = x_amd
            .iter()
            .zip(&x_nd)
            .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
        assert!(
            diff <= 1e-12 * scale,
            "{order:?}: solutions differ by {diff:e}"
        );
        println!(
            "{order:?}: {} unknowns, factor values: nested dissection {}, minimum degree {}",
            p.n,
            nd.factor_nnz(),
            amd.factor_nnz()
        );
        assert!(
            nd.factor_nnz() < amd.factor_nnz(),
            "{order:?}: nested dissection {} against minimum degree {}",
            nd.factor_nnz(),
            amd.factor_nnz()
        );
    }
}

#[test]
fn first_order_spaces_keep_minimum_degree() {
    let mesh = disk(0.02);
    let d = Discretisation::new(&mesh, Formulation::Planar, Order::Linear, &[]);
    assert!(dissect(&d).unwrap().is_some());
    assert!(nested_dissection(&d).unwrap().is_none());
}

#[test]
fn small_problems_keep_minimum_degree() {
    let mesh = disk(0.2);
    let d = Discretisation::new(&mesh, Formulation::Planar, Order::Quadratic, &[]);
    assert!(mesh.points.len() < MIN_VERTICES);
    assert!(nested_dissection(&d).unwrap().is_none());
}

#[test]
fn an_ordering_that_is_not_a_permutation_is_refused() {
    let mesh = disk(0.2);
    let d = Discretisation::new(&mesh, Formulation::Planar, Order::Linear, &[]);
    let p = Pattern::new(&d);
    let mut twice: Vec<usize> = (0..p.n).collect();
    twice[1] = 0;
    assert!(CholeskyAnalysis::with_ordering(&p, Some(twice)).is_err());
    assert!(CholeskyAnalysis::with_ordering(&p, Some(vec![0; 3])).is_err());
    assert!(CholeskyAnalysis::with_ordering(&p, None).is_ok());
}

/// METIS keeps one random generator for the process: orderings made on two threads at once
/// must still equal the ordering made alone (a sweep runs its points side by side).
#[test]
fn orderings_made_side_by_side_equal_the_ordering_made_alone() {
    let mesh = disk(0.03);
    let d = Discretisation::new(&mesh, Formulation::Planar, Order::Quadratic, &[]);
    let alone = nested_dissection(&d).unwrap().expect("dissected");
    for _ in 0..4 {
        let (a, b) = std::thread::scope(|s| {
            let a = s.spawn(|| nested_dissection(&d).unwrap().unwrap());
            let b = s.spawn(|| nested_dissection(&d).unwrap().unwrap());
            (a.join().unwrap(), b.join().unwrap())
        });
        assert!(
            a == alone && b == alone,
            "an ordering changed when made beside another"
        );
    }
}
