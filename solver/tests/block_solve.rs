//! The Cholesky solve of a block of right-hand sides in one sweep through the factor.

use fluxpick_mesh::{generate, MeshParams, MeshSpec, Outer, Side};
use fluxpick_solver::assembly::Pattern;
use fluxpick_solver::linsolve::{relative_residual, CholeskyAnalysis};
use fluxpick_solver::{Discretisation, Formulation, Order};

/// A block of right-hand sides solved in one sweep gives what column-by-column solves give.
#[test]
fn block_solve_matches_single_columns() {
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [0.0, 0.0],
            max: [1.0, 0.5],
        },
        background_max_edge: 0.03,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let mesh = generate(&spec).unwrap();
    let d = Discretisation::new(&mesh, Formulation::Planar, Order::Linear, &[Side::Bottom]);
    let p = Pattern::new(&d);
    let mut values = vec![0.0; p.nnz()];
    for j in 0..p.n {
        for k in p.col_ptr[j]..p.col_ptr[j + 1] {
            values[k] = if p.row_idx[k] == j { 10.0 } else { -1.0 };
        }
    }
    let a = CholeskyAnalysis::new(&p).unwrap();
    let f = a.factor(&p, &values).unwrap();
    let rhs: Vec<Vec<f64>> = (0..20)
        .map(|c| (0..p.n).map(|i| ((i + 13 * c) % 17) as f64 - 8.0).collect())
        .collect();
    let block = f.solve(&rhs);
    for (b, x) in rhs.iter().zip(&block) {
        let single = f.solve(std::slice::from_ref(b)).pop().unwrap();
        let d = single
            .iter()
            .zip(x)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        let scale = single.iter().map(|v| v.abs()).fold(0.0, f64::max);
        assert!(d <= 1e-13 * scale, "block and single solves differ by {d}");
        assert!(relative_residual(&p, &values, x, b) < 1e-13);
    }
}
