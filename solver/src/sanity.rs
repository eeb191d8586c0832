//! Physical sanity checks that turn a silently wrong answer into a typed error.
//!
//! * [`check_reference`], before any factorisation: in planar form the weak form
//!   `∫ ν ∇A·∇v dS` only sees gradients, so on a connected piece of the mesh where no node is
//!   held (no fixed boundary side, no far-field point of an exterior image) the potential is
//!   defined up to a constant and the matrix is singular. A sparse Cholesky may not notice:
//!   rounding can leave a tiny positive pivot and a "solution" of arbitrary size. The check
//!   is structural (connected components of the cells through shared unknowns), costs one
//!   pass over the cells, and names the regions of the floating piece. In axisymmetric form
//!   the `A/r` term makes the stiffness definite on any piece (the null function C/r is not
//!   in the finite-element space), and the axis is held anyway, so nothing is checked there.
//!   In the time-harmonic solve a conductive region does not anchor a planar piece either:
//!   its voltage unknown absorbs a constant shift of A.
//! * [`check_finite`]: NaN or infinite values of a solution vector, named by region.
//!
//! The residual check (`‖Ax − b‖/‖b‖` above tolerance is an error) is in each solve
//! (`linsolve::RESIDUAL_TOLERANCE`, GMRES's tolerance in `harmonic.rs`).

use crate::discretisation::{Discretisation, FIXED};
use crate::{Formulation, SolveError};

/// Disjoint sets over unknowns (plus one "held" element), with path halving.
struct Sets {
    parent: Vec<u32>,
}

impl Sets {
    fn new(n: usize) -> Self {
        Sets {
            parent: (0..n as u32).collect(),
        }
    }

    fn find(&mut self, mut x: u32) -> u32 {
        while self.parent[x as usize] != x {
            let p = self.parent[self.parent[x as usize] as usize];
            self.parent[x as usize] = p;
            x = p;
        }
        x
    }

    fn union(&mut self, a: u32, b: u32) {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra != rb {
            // keep the smaller root: the "held" element (the largest index) never becomes
            // a child, so its set is recognised by its own index
            let (lo, hi) = if ra < rb { (ra, rb) } else { (rb, ra) };
            self.parent[lo as usize] = hi;
        }
    }
}

/// Fails with [`SolveError::NoReference`] when, in planar form, some connected piece of the
/// mesh has no node whose potential is held. The error lists the region ids of the first
/// such piece (sorted) and whether it is the whole domain (no boundary condition at all).
pub fn check_reference(d: &Discretisation) -> Result<(), SolveError> {
    if d.formulation == Formulation::Axisymmetric || d.n_cells() == 0 {
        return Ok(());
    }
    let held = d.n_dofs as u32;
    let key = |n: u32| -> u32 {
        match d.node_dof[n as usize] {
            FIXED => held,
            k => k,
        }
    };
    let mut sets = Sets::new(d.n_dofs + 1);
    for c in 0..d.n_cells() {
        let nodes = d.cell(c);
        let first = key(nodes[0]);
        for &n in &nodes[1..] {
            sets.union(first, key(n));
        }
    }
    let ground = sets.find(held);
    let mut floating_root = None;
    let mut regions: Vec<u32> = Vec::new();
    let mut cells_in = 0usize;
    for c in 0..d.n_cells() {
        let root = sets.find(key(d.cell(c)[0]));
        if root == ground {
            continue;
        }
        match floating_root {
            None => floating_root = Some(root),
            Some(r) if r != root => continue,
            Some(_) => {}
        }
        cells_in += 1;
        let region = d.cell_region[c];
        if !regions.contains(&region) {
            regions.push(region);
        }
    }
    if floating_root.is_none() {
        return Ok(());
    }
    regions.sort_unstable();
    Err(SolveError::NoReference {
        regions,
        whole_domain: cells_in == d.n_cells(),
    })
}

/// Fails with [`SolveError::NotFinite`] naming the region of the first cell (in cell order)
/// that touches a NaN or infinite nodal value; `values` has one entry per node of `d`.
pub fn check_finite(d: &Discretisation, values: &[f64]) -> Result<(), SolveError> {
    if values.iter().all(|v| v.is_finite()) {
        return Ok(());
    }
    for c in 0..d.n_cells() {
        if d.cell(c).iter().any(|&n| !values[n as usize].is_finite()) {
            return Err(SolveError::NotFinite {
                region: d.cell_region[c],
            });
        }
    }
    // a non-finite value at a node of no cell: report the background
    Err(SolveError::NotFinite { region: 0 })
}

/// As [`check_finite`] for a vector of unknowns (one entry per unknown of `d`).
pub fn check_finite_dofs(d: &Discretisation, x: &[f64]) -> Result<(), SolveError> {
    if x.iter().all(|v| v.is_finite()) {
        return Ok(());
    }
    let nodal: Vec<f64> = d
        .node_dof
        .iter()
        .map(|&k| if k == FIXED { 0.0 } else { x[k as usize] })
        .collect();
    check_finite(d, &nodal)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Order;
    use fluxpick_mesh::{BoundaryEdge, Mesh, Side};

    /// Two unit squares side by side, [0,1]² (region 0) and [1,2]×[0,1] (region 1), sharing
    /// the edge x = 1, or (with `gap`) apart, [2,3]×[0,1]; the left side of the left
    /// square is tagged Left, the right side of the right square Right.
    fn two_squares(gap: bool) -> Mesh {
        let x0 = if gap { 2.0 } else { 1.0 };
        let mut points = vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let mut triangles = vec![[0, 1, 2], [0, 2, 3]];
        let (a, b) = if gap {
            points.extend([[x0, 0.0], [x0, 1.0]]);
            (4, 5)
        } else {
            (1, 2)
        };
        points.extend([[x0 + 1.0, 0.0], [x0 + 1.0, 1.0]]);
        let (c, d) = (points.len() as u32 - 2, points.len() as u32 - 1);
        triangles.extend([[a, c, d], [a, d, b]]);
        Mesh {
            points,
            triangles,
            triangle_region: vec![0, 0, 1, 1],
            boundary_edges: vec![
                BoundaryEdge {
                    nodes: [3, 0],
                    side: Side::Left,
                },
                BoundaryEdge {
                    nodes: [c, d],
                    side: Side::Right,
                },
            ],
            region_count: 2,
            exterior: None,
            identified: vec![],
        }
    }

    #[test]
    fn held_side_anchors_the_connected_mesh() {
        let m = two_squares(false);
        for order in [Order::Linear, Order::Quadratic] {
            let d = Discretisation::new(&m, Formulation::Planar, order, &[Side::Left]);
            assert_eq!(check_reference(&d), Ok(()));
        }
    }

    #[test]
    fn no_boundary_condition_names_every_region() {
        let m = two_squares(false);
        let d = Discretisation::new(&m, Formulation::Planar, Order::Quadratic, &[]);
        assert_eq!(
            check_reference(&d),
            Err(SolveError::NoReference {
                regions: vec![0, 1],
                whole_domain: true
            })
        );
        // axisymmetric: the A/r term makes the matrix definite, nothing to report
        let d = Discretisation::new(&m, Formulation::Axisymmetric, Order::Quadratic, &[]);
        assert_eq!(check_reference(&d), Ok(()));
    }

    #[test]
    fn disconnected_piece_without_reference_is_named() {
        let m = two_squares(true);
        let d = Discretisation::new(&m, Formulation::Planar, Order::Linear, &[Side::Left]);
        assert_eq!(
            check_reference(&d),
            Err(SolveError::NoReference {
                regions: vec![1],
                whole_domain: false
            })
        );
        // holding the right piece too anchors both
        let d = Discretisation::new(
            &m,
            Formulation::Planar,
            Order::Linear,
            &[Side::Left, Side::Right],
        );
        assert_eq!(check_reference(&d), Ok(()));
    }

    #[test]
    fn non_finite_value_names_its_region() {
        let m = two_squares(false);
        let d = Discretisation::new(&m, Formulation::Planar, Order::Linear, &[Side::Left]);
        let mut v = vec![0.0; d.points.len()];
        assert_eq!(check_finite(&d, &v), Ok(()));
        // node 5 belongs only to the right square (region 1)
        v[5] = f64::NAN;
        assert_eq!(
            check_finite(&d, &v),
            Err(SolveError::NotFinite { region: 1 })
        );
        v[5] = f64::INFINITY;
        assert_eq!(
            check_finite(&d, &v),
            Err(SolveError::NotFinite { region: 1 })
        );
        // the same through the unknowns
        let mut x = vec![0.0; d.n_dofs];
        assert_eq!(check_finite_dofs(&d, &x), Ok(()));
        x[d.node_dof[5] as usize] = f64::NAN;
        assert_eq!(
            check_finite_dofs(&d, &x),
            Err(SolveError::NotFinite { region: 1 })
        );
    }
}
