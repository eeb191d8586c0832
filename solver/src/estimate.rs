//! A posteriori error estimation by gradient recovery.
//!
//! The flux density B_h of a Lagrange solution jumps between elements. Averaging it at each
//! node over the elements of one region (area-weighted; regions are kept apart because only
//! B's normal component is continuous across a material interface) gives a continuous field
//! B* of the same order as the elements, which is closer to the exact B than B_h is; the
//! difference B* − B_h estimates the error (Zienkiewicz & Zhu, "A simple error estimator and
//! adaptive procedure for practical engineering analysis", Int. J. Numer. Meth. Eng. 24
//! (1987) 337–357). Per element, η_K² = ∫_K ν |B* − B_h|² w dS estimates the error's energy.
//!
//! Figures. With a(u, v) = ∫ ν c(u)·c(v) w dS the bilinear form of the problem, every
//! figure that is a value of a(·,·) between two solutions — an inductance a(u_i, u_j) of
//! windings at 1 A, a flux linkage f_k(u) = a(u_k, u) of a coil k under any source — has by
//! Galerkin orthogonality the exact error a(e_i, e_j) (a(u_i, u_j) − a(u_ih, u_jh) =
//! a(e_i, e_j) since a(e, v_h) = 0 for every v_h in the space). Replacing the errors by their
//! recovered estimates gives the estimate G_ij = ∫ ν (B*_i − B_ih)·(B*_j − B_jh) w dS, the
//! Gram matrix that [`estimate`] returns. The same holds, without conjugation, for the complex
//! symmetric time-harmonic form: the caller combines the real and imaginary parts.

use std::collections::HashMap;

use rayon::prelude::*;

use crate::element::Geometry;
use crate::field::Field;
use crate::quadrature::DEGREE5;
use crate::Order;

/// Recovered-error quantities of a set of fields on one discretisation.
#[derive(Clone, Debug)]
pub struct Estimate {
    /// G[f][g] = Σ_K ∫_K ν (B*_f − B_f)·(B*_g − B_g) w dS.
    pub gram: Vec<Vec<f64>>,
    /// a(u_f, u_f) = ∫ ν |B_f|² w dS of each field.
    pub energy: Vec<f64>,
    /// Per cell: Σ_f η_K,f² / a(u_f, u_f) over the fields marked `drive`, the relative
    /// error energy summed over them (the refinement indicator; fields with no energy are
    /// left out).
    pub cell_indicator: Vec<f64>,
    /// For the fields marked `per_cell`, in their order: per cell, η_K² and ∫_K ν|B_h|² w.
    pub cell_error: Vec<Vec<f64>>,
    pub cell_energy: Vec<Vec<f64>>,
    /// For the same fields: per cell, ∫_K (B* − B_h) w dS and ∫_K |B_h| w dS.
    pub cell_shift: Vec<Vec<[f64; 2]>>,
    pub cell_abs: Vec<Vec<f64>>,
}

/// Barycentric coordinates of the local nodes: vertices, then edge midpoints in the
/// element's order (edges 01, 12, 20).
const NODES_L: [[f64; 3]; 6] = [
    [1.0, 0.0, 0.0],
    [0.0, 1.0, 0.0],
    [0.0, 0.0, 1.0],
    [0.5, 0.5, 0.0],
    [0.0, 0.5, 0.5],
    [0.5, 0.0, 0.5],
];

/// Lagrange basis of the local nodes at barycentric point l (linear: 3 nodes; quadratic: 6).
fn shape(order: Order, l: [f64; 3]) -> ([f64; 6], usize) {
    match order {
        Order::Linear => ([l[0], l[1], l[2], 0.0, 0.0, 0.0], 3),
        Order::Quadratic => (
            [
                l[0] * (2.0 * l[0] - 1.0),
                l[1] * (2.0 * l[1] - 1.0),
                l[2] * (2.0 * l[2] - 1.0),
                4.0 * l[0] * l[1],
                4.0 * l[1] * l[2],
                4.0 * l[2] * l[0],
            ],
            6,
        ),
    }
}

/// The recovered flux density of each of `fields` (all on one discretisation) at the local
/// nodes of every cell (region-wise area-weighted nodal averages): `out[f][cell][node]`.
pub fn recover(fields: &[&Field]) -> Vec<Vec<[[f64; 2]; 6]>> {
    let Some(first) = fields.first() else {
        return Vec::new();
    };
    let d = &*first.disc;
    let m = fields.len();
    let npe = d.order.nodes_per_cell();
    let nc = d.n_cells();
    // B_h of every field at the local nodes (the basis evaluated once per node), cell c's
    // at local[c * m + f], and the cell areas
    let mut local = vec![[[0.0; 2]; 6]; nc * m];
    local.par_chunks_mut(m).enumerate().for_each(|(c, b)| {
        for (i, l) in NODES_L.iter().enumerate().take(npe) {
            Field::at_cell_each(fields, c, *l, |f, v| b[f][i] = v.b);
        }
    });
    let areas: Vec<f64> = (0..nc)
        .into_par_iter()
        .map(|c| Geometry::new(d.vertices(c)).area)
        .collect();
    // area-weighted sums per (node, region): a plain array for nodes inside one region,
    // a map for the few on interfaces
    const NONE: u32 = u32::MAX;
    const MULTI: u32 = u32::MAX - 1;
    let n = d.points.len();
    let mut owner = vec![NONE; n];
    for c in 0..nc {
        let r = d.cell_region[c];
        for &node in d.cell(c) {
            let o = &mut owner[node as usize];
            if *o == NONE {
                *o = r;
            } else if *o != r {
                *o = MULTI;
            }
        }
    }
    (0..m)
        .map(|f| {
            let mut sum = vec![[0.0f64; 3]; n];
            let mut shared: HashMap<(u32, u32), [f64; 3]> = HashMap::new();
            for c in 0..nc {
                let r = d.cell_region[c];
                let (b, area) = (&local[c * m + f], areas[c]);
                for (i, &node) in d.cell(c).iter().enumerate() {
                    let s = if owner[node as usize] == MULTI {
                        shared.entry((node, r)).or_insert([0.0; 3])
                    } else {
                        &mut sum[node as usize]
                    };
                    s[0] += area * b[i][0];
                    s[1] += area * b[i][1];
                    s[2] += area;
                }
            }
            (0..nc)
                .map(|c| {
                    let r = d.cell_region[c];
                    let mut out = [[0.0; 2]; 6];
                    for (i, &node) in d.cell(c).iter().enumerate() {
                        let s = if owner[node as usize] == MULTI {
                            shared[&(node, r)]
                        } else {
                            sum[node as usize]
                        };
                        out[i] = [s[0] / s[2], s[1] / s[2]];
                    }
                    out
                })
                .collect()
        })
        .collect()
}

/// What [`estimate`] does with one field.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Use {
    /// The field's relative error energy drives the refinement indicator.
    pub drive: bool,
    /// Keep its per-cell error and energy (for figures over regions).
    pub per_cell: bool,
}

/// Recovered-error Gram matrix, energies and the per-cell indicator of `fields` (all on
/// the same discretisation), leaving out the cells of region `skip` (the exterior image of an
/// open boundary: in planar form a net current puts a logarithmic singularity at its centre,
/// the image of infinity, where no mesh converges; its cells count zero). Deterministic
/// whatever the thread count.
pub fn estimate(fields: &[(&Field, Use)], skip: Option<u32>) -> Estimate {
    let m = fields.len();
    let Some(first) = fields.first().map(|f| f.0) else {
        return Estimate {
            gram: vec![],
            energy: vec![],
            cell_indicator: vec![],
            cell_error: vec![],
            cell_energy: vec![],
            cell_shift: vec![],
            cell_abs: vec![],
        };
    };
    let uses: Vec<Use> = fields.iter().map(|f| f.1).collect();
    let fields: Vec<&Field> = fields.iter().map(|f| f.0).collect();
    let d = &*first.disc;
    let order = d.order;
    let recovered = recover(&fields);
    // per cell: its contributions to G (m×m) and to the energies (m)
    type CellSums = (Vec<f64>, Vec<f64>, Vec<[f64; 2]>, Vec<f64>);
    let per_cell: Vec<CellSums> = (0..d.n_cells())
        .into_par_iter()
        .map(|c| {
            let area = Geometry::new(d.vertices(c)).area;
            let mut g = vec![0.0; m * m];
            let mut e = vec![0.0; m];
            let mut shift = vec![[0.0; 2]; m];
            let mut babs = vec![0.0; m];
            let mut err = vec![[0.0; 2]; m];
            // degree 5: exact for |B* − B_h|² (degree 4) and ν|B_h|² of planar quadratic
            // elements; against the degree-6 rule (12 points, not 7) the effectivities of
            // tests/accuracy.rs moved by at most 0.15, and post-processing of the 60 Hz wire
            // at 204k unknowns took 0.53 s instead of 0.61 s
            let rule = if Some(d.cell_region[c]) == skip {
                &[][..]
            } else {
                &DEGREE5[..]
            };
            for q in rule.iter() {
                let (phi, k) = shape(order, q.l);
                let mut nu = 0.0;
                let mut dv = 0.0;
                Field::at_cell_each(&fields, c, q.l, |f, v| {
                    if f == 0 {
                        nu = fields[0].nu_at(c, v.x);
                        dv = q.w * area * v.weight;
                    }
                    let mut bs = [0.0; 2];
                    for i in 0..k {
                        bs[0] += phi[i] * recovered[f][c][i][0];
                        bs[1] += phi[i] * recovered[f][c][i][1];
                    }
                    err[f] = [bs[0] - v.b[0], bs[1] - v.b[1]];
                    e[f] += dv * nu * (v.b[0] * v.b[0] + v.b[1] * v.b[1]);
                    shift[f][0] += dv * err[f][0];
                    shift[f][1] += dv * err[f][1];
                    babs[f] += dv * v.b[0].hypot(v.b[1]);
                });
                for f in 0..m {
                    for h in f..m {
                        g[f * m + h] += dv * nu * (err[f][0] * err[h][0] + err[f][1] * err[h][1]);
                    }
                }
            }
            (g, e, shift, babs)
        })
        .collect();
    let mut gram = vec![vec![0.0; m]; m];
    let mut energy = vec![0.0; m];
    for (g, e, _, _) in &per_cell {
        for f in 0..m {
            energy[f] += e[f];
            for h in f..m {
                gram[f][h] += g[f * m + h];
            }
        }
    }
    for f in 0..m {
        for h in 0..f {
            gram[f][h] = gram[h][f];
        }
    }
    let cell_indicator = per_cell
        .iter()
        .map(|(g, ..)| {
            (0..m)
                .filter(|&f| uses[f].drive && energy[f] > 0.0)
                .map(|f| g[f * m + f] / energy[f])
                .sum()
        })
        .collect();
    let kept: Vec<usize> = (0..m).filter(|&f| uses[f].per_cell).collect();
    let cell_error = kept
        .iter()
        .map(|&f| per_cell.iter().map(|c| c.0[f * m + f]).collect())
        .collect();
    let cell_energy = kept
        .iter()
        .map(|&f| per_cell.iter().map(|c| c.1[f]).collect())
        .collect();
    let cell_shift = kept
        .iter()
        .map(|&f| per_cell.iter().map(|c| c.2[f]).collect())
        .collect();
    let cell_abs = kept
        .iter()
        .map(|&f| per_cell.iter().map(|c| c.3[f]).collect())
        .collect();
    Estimate {
        gram,
        energy,
        cell_indicator,
        cell_error,
        cell_energy,
        cell_shift,
        cell_abs,
    }
}
