//! A solved potential on a discretisation: evaluation of A and B anywhere in the domain.

use std::sync::Arc;

use crate::discretisation::{Discretisation, Order};
use crate::element::{b_from_curl, point_basis, Basis, Geometry, Reluctivity, P1, P2};
use crate::quadrature::QuadPoint;
use crate::Formulation;

/// Uniform-grid bucket index of the physical cells (the exterior image is left out).
#[derive(Debug)]
pub struct Locator {
    min: [f64; 2],
    cell_size: [f64; 2],
    dims: [usize; 2],
    start: Vec<u32>,
    items: Vec<u32>,
}

impl Locator {
    pub fn new(d: &Discretisation) -> Self {
        let cells: Vec<usize> = (0..d.n_cells()).filter(|&c| !d.is_image(c)).collect();
        let mut min = [f64::INFINITY; 2];
        let mut max = [f64::NEG_INFINITY; 2];
        for &c in &cells {
            for p in d.vertices(c) {
                for k in 0..2 {
                    min[k] = min[k].min(p[k]);
                    max[k] = max[k].max(p[k]);
                }
            }
        }
        let n = (cells.len() as f64).sqrt().ceil().max(1.0) as usize;
        let dims = [n, n];
        let span = [(max[0] - min[0]).max(1e-300), (max[1] - min[1]).max(1e-300)];
        let cell_size = [span[0] / n as f64, span[1] / n as f64];
        let bucket = |x: f64, k: usize| -> usize {
            (((x - min[k]) / cell_size[k]).floor().max(0.0) as usize).min(dims[k] - 1)
        };
        let mut lists: Vec<Vec<u32>> = vec![Vec::new(); n * n];
        for &c in &cells {
            let v = d.vertices(c);
            let lo = [0, 1].map(|k| v.iter().map(|p| p[k]).fold(f64::INFINITY, f64::min));
            let hi = [0, 1].map(|k| v.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max));
            for i in bucket(lo[0], 0)..=bucket(hi[0], 0) {
                for j in bucket(lo[1], 1)..=bucket(hi[1], 1) {
                    lists[j * n + i].push(c as u32);
                }
            }
        }
        let mut start = vec![0u32];
        let mut items = Vec::new();
        for l in lists {
            items.extend(l);
            start.push(items.len() as u32);
        }
        Locator {
            min,
            cell_size,
            dims,
            start,
            items,
        }
    }

    /// The cell containing `p` and its barycentric coordinates, if `p` is in the domain.
    pub fn locate(&self, d: &Discretisation, p: [f64; 2]) -> Option<(usize, [f64; 3])> {
        let i = ((p[0] - self.min[0]) / self.cell_size[0]).floor();
        let j = ((p[1] - self.min[1]) / self.cell_size[1]).floor();
        let tol = 1e-9;
        let ok = |v: f64, n: usize| v >= -1.0 && v <= n as f64;
        if !ok(i, self.dims[0]) || !ok(j, self.dims[1]) {
            return None;
        }
        let i = (i.max(0.0) as usize).min(self.dims[0] - 1);
        let j = (j.max(0.0) as usize).min(self.dims[1] - 1);
        let b = j * self.dims[0] + i;
        let mut best: Option<(usize, [f64; 3], f64)> = None;
        for &c in &self.items[self.start[b] as usize..self.start[b + 1] as usize] {
            let g = Geometry::new(d.vertices(c as usize));
            let l = g.barycentric(p);
            let worst = l.iter().copied().fold(f64::INFINITY, f64::min);
            if worst >= -tol {
                return Some((c as usize, l));
            }
            if best.as_ref().is_none_or(|b| worst > b.2) {
                best = Some((c as usize, l, worst));
            }
        }
        // tolerate points a hair outside (on a boundary, round-off)
        best.filter(|b| b.2 > -1e-6).map(|b| (b.0, b.1))
    }
}

/// A potential on all nodes: the total A (applied + reaction) in the physical domain; in
/// the exterior image only the reaction part, in image coordinates.
#[derive(Clone, Debug)]
pub struct Field {
    pub disc: Arc<Discretisation>,
    pub locator: Arc<Locator>,
    /// Reluctivity law per region id (the image region's is the Kelvin law).
    pub nu: Arc<Vec<Reluctivity>>,
    pub a: Vec<f64>,
}

/// Value and flux density at one point of a cell.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PointValue {
    pub x: [f64; 2],
    pub a: f64,
    pub b: [f64; 2],
    /// Volume weight: 1 (planar, per metre of depth) or 2πr (axisymmetric).
    pub weight: f64,
}

impl Field {
    pub fn formulation(&self) -> Formulation {
        self.disc.formulation
    }

    /// A and B at barycentric point `l` of cell `c`.
    pub fn at_cell(&self, c: usize, l: [f64; 3]) -> PointValue {
        let mut out = None;
        Self::at_cell_each(&[self], c, l, |_, v| out = Some(v));
        out.expect("one field, one value")
    }

    /// Values of several fields at one point of cell `c`, all on this field's
    /// discretisation, with the basis evaluated once: `each(k, value of fields[k])`.
    pub fn at_cell_each(
        fields: &[&Field],
        c: usize,
        l: [f64; 3],
        each: impl FnMut(usize, PointValue),
    ) {
        let Some(first) = fields.first() else {
            return;
        };
        match first.disc.order {
            Order::Linear => Self::eval_each::<3, P1>(fields, c, l, each),
            Order::Quadratic => Self::eval_each::<6, P2>(fields, c, l, each),
        }
    }

    fn eval_each<const N: usize, B: Basis<N>>(
        fields: &[&Field],
        c: usize,
        l: [f64; 3],
        mut each: impl FnMut(usize, PointValue),
    ) {
        let d = &*fields[0].disc;
        let g = Geometry::new(d.vertices(c));
        let f = d.formulation;
        let pb = point_basis::<N, B>(&g, l, f);
        let on_axis = f == Formulation::Axisymmetric && pb.x[0] <= 0.0;
        let grad = on_axis.then(|| g.gradients::<N, B>(l));
        let nodes = d.cell(c);
        for (k, field) in fields.iter().enumerate() {
            let mut a = 0.0;
            let mut curl = [0.0; 2];
            for i in 0..N {
                let ai = field.a[nodes[i] as usize];
                a += ai * pb.n[i];
                curl[0] += ai * pb.c[i][0];
                curl[1] += ai * pb.c[i][1];
            }
            let b = match &grad {
                // r = 0: B_z = 2 ∂A/∂r (A ≈ r ∂A/∂r), B_r = -∂A/∂z = 0 on the axis.
                Some(grad) => {
                    let dadr: f64 = (0..N)
                        .map(|i| field.a[nodes[i] as usize] * grad[i][0])
                        .sum();
                    [0.0, 2.0 * dadr]
                }
                None => b_from_curl(curl, f),
            };
            each(
                k,
                PointValue {
                    x: pb.x,
                    a,
                    b,
                    weight: pb.weight,
                },
            );
        }
    }

    /// A and B at a point of the domain (None outside).
    pub fn at(&self, p: [f64; 2]) -> Option<PointValue> {
        self.locator
            .locate(&self.disc, p)
            .map(|(c, l)| self.at_cell(c, l))
    }

    /// Flux density at the centroid of cell `c`.
    pub fn cell_b(&self, c: usize) -> [f64; 2] {
        self.at_cell(c, [1.0 / 3.0; 3]).b
    }

    /// Calls `f(value, dV)` at each quadrature point of cell `c`; dV includes the area,
    /// the rule's weight and the volume weight.
    pub fn quadrature(&self, c: usize, rule: &[QuadPoint], mut f: impl FnMut(&PointValue, f64)) {
        let area = Geometry::new(self.disc.vertices(c)).area;
        for q in rule {
            let v = self.at_cell(c, q.l);
            f(&v, q.w * area * v.weight);
        }
    }

    /// Linear combination Σ k_i F_i of fields on the same discretisation.
    pub fn combine(parts: &[(f64, &Field)]) -> Option<Field> {
        let first = parts.first()?.1;
        let mut a = vec![0.0; first.a.len()];
        for (k, f) in parts {
            for (x, y) in a.iter_mut().zip(&f.a) {
                *x += k * y;
            }
        }
        Some(Field {
            disc: first.disc.clone(),
            locator: first.locator.clone(),
            nu: first.nu.clone(),
            a,
        })
    }

    /// Reluctivity at point `x` of cell `c`.
    pub fn nu_at(&self, c: usize, x: [f64; 2]) -> f64 {
        self.nu[self.disc.cell_region[c] as usize].at(x, self.disc.formulation)
    }

    /// Whether every nodal value is zero.
    pub fn is_zero(&self) -> bool {
        self.a.iter().all(|&x| x == 0.0)
    }

    /// Magnetic energy ½∫ν|B|² dV over the cells for which `keep(cell)` holds
    /// (J, per metre of depth in planar form). Image cells hold the exterior's energy.
    pub fn energy(&self, keep: impl Fn(usize) -> bool + Sync) -> f64 {
        self.coenergy_with(self, keep) * 0.5
    }

    /// ∫ν B·B' dV with another field on the same discretisation (mutual energy term),
    /// deterministic whatever the thread count. The degree-5 rule is exact for B·B' w of second-order planar elements (degree 2) and
    /// of axisymmetric ones up to the A/r term (degree 3), and for the image's ν ∝ ρ'².
    pub fn coenergy_with(&self, other: &Field, keep: impl Fn(usize) -> bool + Sync) -> f64 {
        Field::coenergy_sum(&[(self, other)], keep)
    }

    /// Σ over `pairs` of ∫ν B·B' dV (the real and imaginary parts of a phasor product, say)
    /// in one pass over the cells, the basis evaluated once per point for all the fields;
    /// deterministic whatever the thread count. All fields are on one discretisation with
    /// the same reluctivities (the first field's are used). A pair with a field that is zero
    /// everywhere (the imaginary part of a static solve) is left out: it adds nothing.
    pub fn coenergy_sum(pairs: &[(&Field, &Field)], keep: impl Fn(usize) -> bool + Sync) -> f64 {
        use rayon::prelude::*;
        let pairs: Vec<(&Field, &Field)> = pairs
            .iter()
            .copied()
            .filter(|(a, b)| !a.is_zero() && !b.is_zero())
            .collect();
        let Some(first) = pairs.first().map(|p| p.0) else {
            return 0.0;
        };
        // the distinct fields, and each pair's two indices among them
        let mut fields: Vec<&Field> = Vec::new();
        let mut idx: Vec<(usize, usize)> = Vec::with_capacity(pairs.len());
        for &(a, b) in &pairs {
            let mut ab = [0; 2];
            for (k, f) in [a, b].into_iter().enumerate() {
                ab[k] = match fields.iter().position(|g| std::ptr::eq(*g, f)) {
                    Some(i) => i,
                    None => {
                        fields.push(f);
                        fields.len() - 1
                    }
                };
            }
            idx.push((ab[0], ab[1]));
        }
        let rule = &crate::quadrature::DEGREE5;
        (0..first.disc.n_cells())
            .into_par_iter()
            .filter(|&c| keep(c))
            .map(|c| {
                let area = Geometry::new(first.disc.vertices(c)).area;
                let mut vals: Vec<PointValue> = Vec::with_capacity(fields.len());
                let mut w = 0.0;
                for q in rule {
                    vals.clear();
                    Field::at_cell_each(&fields, c, q.l, |_, p| vals.push(p));
                    let nu = first.nu_at(c, vals[0].x);
                    for &(i, j) in &idx {
                        let (v, u) = (vals[i], vals[j]);
                        w += q.w * area * v.weight * nu * (v.b[0] * u.b[0] + v.b[1] * u.b[1]);
                    }
                }
                w
            })
            // collected in cell order and summed serially: the same bits on any number
            // of threads
            .collect::<Vec<f64>>()
            .iter()
            .sum()
    }
}
