//! Time-harmonic (eddy-current) solve at one frequency, rms phasors, time dependence e^{jωt}.
//!
//! Weak form: `∫ ν c(A)·c(v) w + jω ∫ σ A v w − ∫ σ u g v w = ∫ J_s v w` with g = 1 (planar)
//! or 1/r (axisymmetric). In a solid conductor J = σ(−jωA + u g): u is its voltage per metre
//! (planar) or loop voltage / 2π (axisymmetric), one unknown per conductor, written u = jωψ,
//! with the constraint `∫ J dS = I`. Scaled by w·g (1 or 2π) the bordered system
//!
//! ```text
//! [ K + jωM      −jω b ] [A]   [f      ]
//! [ −jω bᵀ        jω d ] [ψ] = [I (w g)]      b_i = ∫σ N_i g w,  d = ∫σ g² w
//! ```
//!
//! is complex *symmetric* (not Hermitian). Passive conductive parts carry only induced
//! current: in planar form each is a solid conductor with I = 0 (the return flows in the same
//! part); in axisymmetric form u = 0 (closed loops). The system is solved by a sparse LU with a
//! fill-reducing ordering (faer): Cholesky and LDLᴴ assume a Hermitian matrix and would
//! silently return a wrong answer here, so this module uses LU only.

use std::f64::consts::TAU;
use std::sync::Arc;
use std::time::Instant;

use faer::c64;
use faer::linalg::solvers::Solve;
use faer::sparse::linalg::solvers::{Lu, SymbolicLu};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::Mat;
use rayon::prelude::*;

use crate::assembly::Pattern;
use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{local_matrices, Basis, Local, Reluctivity, P1, P2};
use crate::field::{Field, Locator};
use crate::linsolve::RESIDUAL_TOLERANCE;
use crate::problem::{Problem, Spread};
use crate::statics::{background_potential, Density, Timings};
use crate::{Formulation, SolveError, MU0};

/// A region whose conductor voltage is an unknown.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Constraint {
    pub region: u32,
    /// The winding it belongs to (a solid conductor), or None for a passive part (I = 0).
    pub winding: Option<usize>,
}

/// Solution at one frequency: one phasor field per winding at 1 A (phase 0) and one for the
/// applied field (amplitude `b`, phase 0), each as real and imaginary parts.
pub struct HarmonicSolution {
    pub frequency: f64,
    pub disc: Arc<Discretisation>,
    pub locator: Arc<Locator>,
    pub nu: Arc<Vec<Reluctivity>>,
    /// Conductivity per region id (0 for stranded windings and the image).
    pub sigma: Vec<f64>,
    pub constraints: Vec<Constraint>,
    pub unit: Vec<[Field; 2]>,
    /// ψ of every constraint (u = jωψ), per unit field.
    pub unit_psi: Vec<Vec<c64>>,
    pub background: Option<[Field; 2]>,
    pub background_psi: Vec<c64>,
    /// Current density per ampere of stranded windings (empty for solid ones).
    pub densities: Vec<Vec<Density>>,
    pub timings: Timings,
    pub nnz: usize,
    pub max_residual: f64,
}

impl HarmonicSolution {
    pub fn omega(&self) -> f64 {
        TAU * self.frequency
    }

    /// Induced current density phasor J = −jωσ(A − ψ g) at barycentric `l` of cell `c` for a
    /// field given as re/im parts and its constraint values.
    pub fn eddy_density(
        &self,
        field: &[Field; 2],
        psi: &[c64],
        c: usize,
        l: [f64; 3],
    ) -> (c64, f64, [f64; 2]) {
        let region = self.disc.cell_region[c];
        let sigma = self.sigma[region as usize];
        let a = field[0].at_cell(c, l);
        let ai = field[1].at_cell(c, l);
        let mut v = c64::new(a.a, ai.a);
        if let Some(k) = self.constraints.iter().position(|k| k.region == region) {
            let g = match self.disc.formulation {
                Formulation::Planar => 1.0,
                Formulation::Axisymmetric => 1.0 / a.x[0],
            };
            v -= psi[k] * g;
        }
        (c64::new(0.0, -self.omega() * sigma) * v, a.weight, a.x)
    }

    /// Impedance seen at a solid conductor's terminals for its unit field: Z = jωψ·s with
    /// s = depth (planar) or 2π (axisymmetric).
    pub fn conductor_impedance(&self, winding: usize, depth: f64) -> Option<c64> {
        let k = self
            .constraints
            .iter()
            .position(|k| k.winding == Some(winding))?;
        let s = match self.disc.formulation {
            Formulation::Planar => depth,
            Formulation::Axisymmetric => TAU,
        };
        Some(c64::new(0.0, self.omega()) * self.unit_psi[winding][k] * s)
    }
}

type CLocal = Vec<c64>;

pub fn solve_harmonic(p: &Problem, frequency: f64) -> Result<HarmonicSolution, SolveError> {
    match p.order {
        Order::Linear => solve_with::<3, P1>(p, frequency),
        Order::Quadratic => solve_with::<6, P2>(p, frequency),
    }
}

fn solve_with<const N: usize, B: Basis<N>>(
    p: &Problem,
    frequency: f64,
) -> Result<HarmonicSolution, SolveError> {
    let omega = TAU * frequency;
    let jw = c64::new(0.0, omega);
    let mut t = Timings::default();
    let t0 = Instant::now();
    let d = Discretisation::new(p.mesh, p.formulation, p.order, &p.dirichlet);
    if d.n_dofs == 0 {
        return Err(SolveError::NoUnknowns);
    }
    let image = d.exterior.as_ref().map(|e| e.region);
    let mut nu = Vec::with_capacity(d.region_count);
    let mut sigma = vec![0.0; d.region_count];
    for r in 0..d.region_count {
        if Some(r as u32) == image {
            let e = d.exterior.as_ref().expect("image");
            nu.push(Reluctivity::KelvinImage {
                nu0: 1.0 / MU0,
                center: [e.center[0] + e.offset[0], e.center[1] + e.offset[1]],
                radius: e.radius,
            });
        } else {
            let m = p
                .materials
                .get(r)
                .ok_or(SolveError::MissingMaterial { region: r as u32 })?;
            nu.push(Reluctivity::Constant(m.nu));
            sigma[r] = m.sigma;
        }
    }
    // Stranded windings carry no eddy currents; solid ones are constraints.
    let mut constraints = Vec::new();
    let mut in_winding = vec![false; d.region_count];
    for (w, wd) in p.windings.iter().enumerate() {
        for wr in &wd.regions {
            in_winding[wr.region as usize] = true;
            match wr.spread {
                Spread::Uniform => sigma[wr.region as usize] = 0.0,
                Spread::Solid => {
                    if sigma[wr.region as usize] <= 0.0 {
                        return Err(SolveError::SolidWithoutConductivity {
                            winding: wd.name.clone(),
                        });
                    }
                    constraints.push(Constraint {
                        region: wr.region,
                        winding: Some(w),
                    });
                }
            }
        }
    }
    if p.formulation == Formulation::Planar {
        for r in 0..d.region_count {
            if sigma[r] > 0.0 && !in_winding[r] {
                constraints.push(Constraint {
                    region: r as u32,
                    winding: None,
                });
            }
        }
    }
    let mut extra = vec![FIXED; d.n_cells()];
    if !constraints.is_empty() {
        for c in 0..d.n_cells() {
            if let Some(k) = constraints
                .iter()
                .position(|k| k.region == d.cell_region[c])
            {
                extra[c] = (d.n_dofs + k) as u32;
            }
        }
    }
    let nk = constraints.len();
    let pattern = if nk > 0 {
        Pattern::with_extras(&d, &extra, nk)
    } else {
        Pattern::new(&d)
    };
    let n = pattern.n;
    t.setup = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let loc: Vec<Local<N>> = (0..d.n_cells())
        .into_par_iter()
        .map(|c| {
            local_matrices::<N, B>(&d.vertices(c), nu[d.cell_region[c] as usize], d.formulation)
        })
        .collect();
    let axi = p.formulation == Formulation::Axisymmetric;
    let border = |l: &Local<N>, s: f64| -> [f64; N] {
        let mut b = if axi { l.load_inv_r } else { l.load };
        for x in b.iter_mut() {
            *x *= s;
        }
        b
    };
    let k_local = if nk > 0 { N + 1 } else { N };
    let values: Vec<c64> = pattern.assemble(d.n_cells(), |c| {
        let l = &loc[c];
        let s = sigma[d.cell_region[c] as usize];
        let mut m: CLocal = vec![c64::new(0.0, 0.0); k_local * k_local];
        for i in 0..N {
            for j in 0..N {
                m[i * k_local + j] = c64::new(l.stiffness[i][j], omega * s * l.mass[i][j]);
            }
        }
        if nk > 0 && extra[c] != FIXED {
            let b = border(l, s);
            for i in 0..N {
                m[i * k_local + N] = -jw * b[i];
                m[N * k_local + i] = -jw * b[i];
            }
            m[N * k_local + N] = jw * (s * l.measure_inv_r2);
        }
        Some(m)
    });
    // Right-hand sides: each winding at 1 A, then the background.
    let mut area = vec![0.0; d.region_count];
    for (c, l) in loc.iter().enumerate() {
        area[d.cell_region[c] as usize] += l.area;
    }
    let zero = c64::new(0.0, 0.0);
    let scale = if axi { TAU } else { 1.0 };
    let mut rhs: Vec<Vec<c64>> = Vec::new();
    let mut densities = Vec::new();
    for (w, wd) in p.windings.iter().enumerate() {
        let mut f = vec![zero; n];
        let mut dens = Vec::new();
        for wr in &wd.regions {
            match wr.spread {
                Spread::Uniform => {
                    let a = area[wr.region as usize];
                    if a.is_nan() || a <= 0.0 {
                        return Err(SolveError::EmptyWinding {
                            winding: wd.name.clone(),
                            region: wr.region,
                        });
                    }
                    let de = Density {
                        region: wr.region,
                        coef: wr.turns / a,
                        inverse_r: false,
                    };
                    for (c, l) in loc
                        .iter()
                        .enumerate()
                        .filter(|(c, _)| d.cell_region[*c] == wr.region)
                    {
                        for (i, &node) in d.cell(c).iter().enumerate() {
                            let dof = d.node_dof[node as usize];
                            if dof != FIXED {
                                f[dof as usize] += c64::new(l.load[i] * de.coef, 0.0);
                            }
                        }
                    }
                    dens.push(de);
                }
                Spread::Solid => {
                    let k = constraints
                        .iter()
                        .position(|k| k.winding == Some(w))
                        .expect("constraint");
                    f[d.n_dofs + k] += c64::new(wr.turns * scale, 0.0);
                }
            }
        }
        densities.push(dens);
        rhs.push(f);
    }
    if let Some(b) = p.background {
        let nu0 = 1.0 / MU0;
        let mut f = vec![zero; n];
        for (c, l) in loc.iter().enumerate() {
            if Some(d.cell_region[c]) == image {
                continue;
            }
            let r = d.cell_region[c] as usize;
            let nu_c = p.materials[r].nu;
            let s = sigma[r];
            let magnetic = (nu_c - nu0).abs() > 1e-12 * nu0;
            if !magnetic && s == 0.0 {
                continue;
            }
            let nodes = d.cell(c);
            let ab: Vec<f64> = nodes
                .iter()
                .map(|&nd| background_potential(p.formulation, b, d.points[nd as usize]))
                .collect();
            for i in 0..N {
                let dof = d.node_dof[nodes[i] as usize];
                if dof == FIXED {
                    continue;
                }
                let ka: f64 = (0..N).map(|j| l.stiffness[i][j] * ab[j]).sum();
                let ma: f64 = (0..N).map(|j| l.mass[i][j] * ab[j]).sum();
                f[dof as usize] -= c64::new((nu_c - nu0) / nu_c * ka, omega * s * ma);
            }
            if extra[c] != FIXED {
                let bb = border(l, s);
                let sum: f64 = (0..N).map(|i| bb[i] * ab[i]).sum();
                f[extra[c] as usize] += jw * sum;
            }
        }
        rhs.push(f);
    }
    t.assemble = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let sym = SymbolicSparseColMatRef::new_checked(n, n, &pattern.col_ptr, None, &pattern.row_idx);
    let symbolic = SymbolicLu::try_new(sym)
        .map_err(|e| SolveError::Factorisation(format!("symbolic LU: {e:?}")))?;
    t.symbolic = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let mat = SparseColMatRef::new(sym, &values);
    let lu = Lu::try_new_with_symbolic(symbolic, mat).map_err(|_| SolveError::Singular)?;
    t.factor = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let xs: Vec<Vec<c64>> = rhs
        .iter()
        .map(|b| {
            let mut x = Mat::<c64>::from_fn(n, 1, |i, _| b[i]);
            lu.solve_in_place(x.as_mut());
            (0..n).map(|i| x[(i, 0)]).collect()
        })
        .collect();
    t.solve = t0.elapsed().as_secs_f64();
    let mut max_residual: f64 = 0.0;
    for (x, b) in xs.iter().zip(&rhs) {
        let ax = pattern.mul(&values, x);
        let num: f64 = ax
            .iter()
            .zip(b)
            .map(|(a, b)| (a - b).norm_sqr())
            .sum::<f64>()
            .sqrt();
        let den: f64 = b.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
        let r = if den > 0.0 { num / den } else { num };
        max_residual = max_residual.max(r);
        if r.is_nan() || r > RESIDUAL_TOLERANCE {
            return Err(SolveError::Residual {
                residual: r,
                tolerance: RESIDUAL_TOLERANCE,
            });
        }
    }
    let nu = Arc::new(nu);
    let disc = Arc::new(d);
    let locator = Arc::new(Locator::new(&disc));
    let expand = |x: &[c64], bg: Option<[f64; 2]>| -> Result<([Field; 2], Vec<c64>), SolveError> {
        let mut re = vec![0.0; disc.points.len()];
        let mut im = vec![0.0; disc.points.len()];
        for nd in 0..disc.points.len() {
            let dof = disc.node_dof[nd];
            if dof != FIXED {
                re[nd] = x[dof as usize].re;
                im[nd] = x[dof as usize].im;
            }
        }
        if let Some(b) = bg {
            for c in (0..disc.n_cells()).filter(|&c| !disc.is_image(c)) {
                for &nd in disc.cell(c) {
                    let nd = nd as usize;
                    let dof = disc.node_dof[nd];
                    let reaction = if dof == FIXED {
                        0.0
                    } else {
                        x[dof as usize].re
                    };
                    re[nd] = reaction + background_potential(disc.formulation, b, disc.points[nd]);
                }
            }
        }
        for c in 0..disc.n_cells() {
            for &nd in disc.cell(c) {
                if !(re[nd as usize].is_finite() && im[nd as usize].is_finite()) {
                    return Err(SolveError::NotFinite {
                        region: disc.cell_region[c],
                    });
                }
            }
        }
        let mk = |a| Field {
            disc: disc.clone(),
            locator: locator.clone(),
            nu: nu.clone(),
            a,
        };
        Ok(([mk(re), mk(im)], x[disc.n_dofs..].to_vec()))
    };
    let mut unit = Vec::new();
    let mut unit_psi = Vec::new();
    for x in xs.iter().take(p.windings.len()) {
        let (f, psi) = expand(x, None)?;
        unit.push(f);
        unit_psi.push(psi);
    }
    let (background, background_psi) = match p.background {
        Some(b) => {
            let (f, psi) = expand(&xs[p.windings.len()], Some(b))?;
            (Some(f), psi)
        }
        None => (None, vec![]),
    };
    Ok(HarmonicSolution {
        frequency,
        disc,
        locator,
        nu,
        sigma,
        constraints,
        unit,
        unit_psi,
        background,
        background_psi,
        densities,
        timings: t,
        nnz: pattern.nnz(),
        max_residual,
    })
}
