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
use rayon::prelude::*;

use crate::assembly::Pattern;
use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{local_matrices, Basis, Local, Reluctivity, P1, P2};
use crate::field::{Field, Locator};
use crate::krylov::gmres_batch;
use crate::linsolve::{CholeskyAnalysis, RESIDUAL_TOLERANCE};
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
    /// Preconditioned GMRES iterations over all inner solves, and the number of solves.
    pub krylov_iterations: usize,
    pub krylov_solves: usize,
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

    /// Time-average induced (and, in solid conductors, total) loss ∫|J|²/σ dV per region id:
    /// W per metre of depth (planar) or W (axisymmetric).
    pub fn region_losses(&self, field: &[Field; 2], psi: &[c64]) -> Vec<f64> {
        let mut loss = vec![0.0; self.sigma.len()];
        for c in 0..self.disc.n_cells() {
            let r = self.disc.cell_region[c] as usize;
            let s = self.sigma[r];
            if s <= 0.0 || self.disc.is_image(c) {
                continue;
            }
            let area = crate::element::Geometry::new(self.disc.vertices(c)).area;
            for q in crate::quadrature::DEGREE6.iter() {
                let (j, w, _) = self.eddy_density(field, psi, c, q.l);
                loss[r] += j.norm_sqr() / s * q.w * area * w;
            }
        }
        loss
    }

    /// Current density phasor at the centroid of every cell (0 where σ = 0; stranded
    /// windings' imposed density is not included).
    pub fn cell_current_density(&self, field: &[Field; 2], psi: &[c64]) -> Vec<c64> {
        (0..self.disc.n_cells())
            .map(|c| {
                let r = self.disc.cell_region[c] as usize;
                if self.sigma[r] <= 0.0 || self.disc.is_image(c) {
                    c64::new(0.0, 0.0)
                } else {
                    self.eddy_density(field, psi, c, [1.0 / 3.0; 3]).0
                }
            })
            .collect()
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

/// Relative residual asked of each inner GMRES solve.
pub const INNER_TOLERANCE: f64 = 1e-11;

/// Gaussian elimination with partial pivoting of a small dense complex system.
fn dense_solve(mut a: Vec<Vec<c64>>, b: &mut [c64]) -> Option<Vec<c64>> {
    let n = b.len();
    for k in 0..n {
        let p = (k..n).max_by(|&i, &j| a[i][k].norm().total_cmp(&a[j][k].norm()))?;
        if a[p][k].norm() == 0.0 {
            return None;
        }
        a.swap(k, p);
        b.swap(k, p);
        for i in k + 1..n {
            let f = a[i][k] / a[k][k];
            for j in k..n {
                let t = a[k][j];
                a[i][j] -= f * t;
            }
            let t = b[k];
            b[i] -= f * t;
        }
    }
    let mut x = vec![c64::new(0.0, 0.0); n];
    for i in (0..n).rev() {
        let mut s = b[i];
        for j in i + 1..n {
            s -= a[i][j] * x[j];
        }
        x[i] = s / a[i][i];
    }
    Some(x)
}

/// One solve at one frequency.
pub fn solve_harmonic(p: &Problem, frequency: f64) -> Result<HarmonicSolution, SolveError> {
    HarmonicPlan::new(p)?.solve(frequency)
}

/// The applied field's parts of the right-hand side: b, −(ν−ν0)/ν K A_b, σM A_b (node
/// part), b_kᵀ A_b (constraints).
type BackgroundRhs = ([f64; 2], Vec<f64>, Vec<f64>, Vec<f64>);

/// Everything of a time-harmonic problem that does not depend on the frequency: the
/// discretisation, the stiffness and conductivity-mass matrices on a fixed pattern, the
/// symbolic Cholesky analysis, the constraint borders and the source vectors. A frequency
/// sweep builds it once and calls [`HarmonicPlan::solve`] per frequency (numeric
/// factorisation and solves only).
pub struct HarmonicPlan {
    disc: Arc<Discretisation>,
    locator: Arc<Locator>,
    nu: Arc<Vec<Reluctivity>>,
    sigma: Vec<f64>,
    constraints: Vec<Constraint>,
    pattern: Pattern,
    /// Stiffness K and conductivity mass σM values on the pattern.
    kvals: Vec<f64>,
    mvals: Vec<f64>,
    analysis: CholeskyAnalysis,
    /// Constraint borders b_k (over the node unknowns) and d_k.
    bvec: Vec<Vec<f64>>,
    dk: Vec<f64>,
    /// Per winding: node and constraint right-hand sides at 1 A.
    winding_rhs: Vec<(Vec<f64>, Vec<f64>)>,
    /// Applied field: b, −(ν−ν0)/ν K A_b, M_σ A_b (node part), b_kᵀ A_b (constraints).
    background: Option<BackgroundRhs>,
    densities: Vec<Vec<Density>>,
    setup: Timings,
}

impl HarmonicPlan {
    pub fn new(p: &Problem) -> Result<Self, SolveError> {
        match p.order {
            Order::Linear => plan_with::<3, P1>(p),
            Order::Quadratic => plan_with::<6, P2>(p),
        }
    }

    pub fn n_dofs(&self) -> usize {
        self.disc.n_dofs + self.constraints.len()
    }

    /// Solves at `frequency` (Hz, > 0) reusing the symbolic analysis.
    pub fn solve(&self, frequency: f64) -> Result<HarmonicSolution, SolveError> {
        solve_plan(self, frequency)
    }
}

fn plan_with<const N: usize, B: Basis<N>>(p: &Problem) -> Result<HarmonicPlan, SolveError> {
    let mut t = Timings::default();
    let t0 = Instant::now();
    let d = Discretisation::new(p.mesh, p.formulation, p.order, &p.dirichlet);
    if d.n_dofs == 0 {
        return Err(SolveError::NoUnknowns);
    }
    crate::sanity::check_reference(&d)?;
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
    // Constraint index of every cell (FIXED when its region carries none).
    let mut extra = vec![FIXED; d.n_cells()];
    for c in 0..d.n_cells() {
        if let Some(k) = constraints
            .iter()
            .position(|k| k.region == d.cell_region[c])
        {
            extra[c] = k as u32;
        }
    }
    let nk = constraints.len();
    let nd = d.n_dofs;
    t.setup = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    // the ordering needs only the mesh: it runs beside the assembly
    let (ordering, (pattern, loc, kvals, mvals)) = rayon::join(
        || crate::ordering::nested_dissection(&d),
        || {
            let mut pattern = Pattern::new(&d);
            let loc: Vec<Local<N>> = (0..d.n_cells())
                .into_par_iter()
                .map(|c| {
                    local_matrices::<N, B>(
                        &d.vertices(c),
                        nu[d.cell_region[c] as usize],
                        d.formulation,
                    )
                })
                .collect();
            // K and σM on the node pattern (K + jωσM and K + ωσM are formed per frequency).
            let kvals: Vec<f64> = pattern.assemble(d.n_cells(), |c| {
                let l = &loc[c];
                let mut m = vec![0.0; N * N];
                for i in 0..N {
                    for j in 0..N {
                        m[i * N + j] = l.stiffness[i][j];
                    }
                }
                Some(m)
            });
            let mvals: Vec<f64> = pattern.assemble(d.n_cells(), |c| {
                let l = &loc[c];
                let s = sigma[d.cell_region[c] as usize];
                if s == 0.0 {
                    return None;
                }
                let mut m = vec![0.0; N * N];
                for i in 0..N {
                    for j in 0..N {
                        m[i * N + j] = s * l.mass[i][j];
                    }
                }
                Some(m)
            });
            // K and σM are all a frequency needs (K + jωσM is formed from them)
            pattern.release_assembly_map();
            (pattern, loc, kvals, mvals)
        },
    );
    let axi = p.formulation == Formulation::Axisymmetric;
    let border = |l: &Local<N>, s: f64| -> [f64; N] {
        let mut b = if axi { l.load_inv_r } else { l.load };
        for x in b.iter_mut() {
            *x *= s;
        }
        b
    };
    // Border: the constraint rows −jω b_kᵀ A + jω d_k ψ_k, b_k = ∫σ N g w, d_k = ∫σ g² w.
    let mut bvec = vec![vec![0.0; nd]; nk];
    let mut dk = vec![0.0; nk];
    for c in 0..d.n_cells() {
        if extra[c] == FIXED {
            continue;
        }
        let k = extra[c] as usize;
        let l = &loc[c];
        let s = sigma[d.cell_region[c] as usize];
        let b = border(l, s);
        for (i, &node) in d.cell(c).iter().enumerate() {
            let dof = d.node_dof[node as usize];
            if dof != FIXED {
                bvec[k][dof as usize] += b[i];
            }
        }
        dk[k] += s * l.measure_inv_r2;
    }
    // Right-hand sides (node part, constraint part): each winding at 1 A, then the
    // background.
    let mut area = vec![0.0; d.region_count];
    for (c, l) in loc.iter().enumerate() {
        area[d.cell_region[c] as usize] += l.area;
    }
    let scale = if axi { TAU } else { 1.0 };
    let mut rhs: Vec<(Vec<f64>, Vec<f64>)> = Vec::new();
    let mut densities = Vec::new();
    for (w, wd) in p.windings.iter().enumerate() {
        let mut f = vec![0.0; nd];
        let mut g = vec![0.0; nk];
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
                                f[dof as usize] += l.load[i] * de.coef;
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
                    g[k] += wr.turns * scale;
                }
            }
        }
        densities.push(dens);
        rhs.push((f, g));
    }
    let mut background = None;
    if let Some(b) = p.background {
        let nu0 = 1.0 / MU0;
        let mut fk = vec![0.0; nd];
        let mut fm = vec![0.0; nd];
        let mut g = vec![0.0; nk];
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
                fk[dof as usize] -= (nu_c - nu0) / nu_c * ka;
                fm[dof as usize] += s * ma;
            }
            if extra[c] != FIXED {
                let bb = border(l, s);
                let sum: f64 = (0..N).map(|i| bb[i] * ab[i]).sum();
                g[extra[c] as usize] += sum;
            }
        }
        background = Some((b, fk, fm, g));
    }
    t.assemble = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let analysis = CholeskyAnalysis::with_ordering(&pattern, ordering?)?;
    t.symbolic = t0.elapsed().as_secs_f64();
    let disc = Arc::new(d);
    let locator = Arc::new(Locator::new(&disc));
    Ok(HarmonicPlan {
        disc,
        locator,
        nu: Arc::new(nu),
        sigma,
        constraints,
        pattern,
        kvals,
        mvals,
        analysis,
        bvec,
        dk,
        winding_rhs: rhs,
        background,
        densities,
        setup: t,
    })
}

fn solve_plan(plan: &HarmonicPlan, frequency: f64) -> Result<HarmonicSolution, SolveError> {
    let omega = TAU * frequency;
    let jw = c64::new(0.0, omega);
    let zero = c64::new(0.0, 0.0);
    let mut t = plan.setup;
    let (pattern, bvec, dk) = (&plan.pattern, &plan.bvec, &plan.dk);
    let nd = plan.disc.n_dofs;
    let nk = plan.constraints.len();
    let t0 = Instant::now();
    let values: Vec<c64> = plan
        .kvals
        .iter()
        .zip(&plan.mvals)
        .map(|(k, m)| c64::new(*k, omega * m))
        .collect();
    let pvalues: Vec<f64> = plan
        .kvals
        .iter()
        .zip(&plan.mvals)
        .map(|(k, m)| k + omega * m)
        .collect();
    let mut rhs: Vec<(Vec<c64>, Vec<c64>)> = plan
        .winding_rhs
        .iter()
        .map(|(f, g)| {
            (
                f.iter().map(|v| c64::new(*v, 0.0)).collect(),
                g.iter().map(|v| c64::new(*v, 0.0)).collect(),
            )
        })
        .collect();
    if let Some((_, fk, fm, g)) = &plan.background {
        rhs.push((
            fk.iter()
                .zip(fm)
                .map(|(k, m)| c64::new(*k, -omega * m))
                .collect(),
            g.iter().map(|v| jw * *v).collect(),
        ));
    }
    t.assemble += t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let chol = plan.analysis.factor(pattern, &pvalues)?;
    t.factor = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let apply = |x: &[c64]| pattern.mul(&values, x);
    // P⁻¹ for a batch of complex vectors: their real and imaginary parts as the columns
    // of one block solve.
    let precond = |vs: &[&[c64]]| -> Vec<Vec<c64>> {
        let n = nd;
        let mut block = vec![0.0; 2 * n * vs.len()];
        for (j, v) in vs.iter().enumerate() {
            let (re, im) = block[2 * j * n..2 * (j + 1) * n].split_at_mut(n);
            for (i, z) in v.iter().enumerate() {
                re[i] = z.re;
                im[i] = z.im;
            }
        }
        // the columns in at least two blocks of at most 8, the blocks in parallel: the
        // sweeps are memory-bound, but one thread does not use all the bandwidth (one
        // complex vector, 288k unknowns: 0.12 s as one block of two columns, 0.07 s as two
        // blocks of one). The width depends on the column count only, not on the thread
        // count, so neither do the results.
        let cols = 2 * vs.len();
        let width = cols.div_ceil(2).clamp(1, 8);
        block
            .par_chunks_mut(width * n)
            .for_each(|chunk| chol.solve_block(chunk, chunk.len() / n));
        block
            .chunks(2 * n)
            .map(|c| {
                let (re, im) = c.split_at(n);
                re.iter().zip(im).map(|(a, b)| c64::new(*a, *b)).collect()
            })
            .collect()
    };
    // Schur complement of the constraints, C = −jω b: Y_k = Ã⁻¹ (jω b_k) so that
    // A = X0 + Σ Y_k ψ_k, and S ψ = g − Cᵀ X0 with S = D + Cᵀ Y. All the inner solves
    // (one per constraint, one per right-hand side) are independent: run them together,
    // one block solve of the preconditioner per iteration for all of them.
    let mut cols: Vec<Vec<c64>> = bvec
        .iter()
        .map(|b| b.iter().map(|v| jw * *v).collect())
        .collect();
    cols.extend(rhs.iter().map(|(f, _)| f.clone()));
    let solved: Vec<(Vec<c64>, usize, f64)> =
        gmres_batch(&cols, apply, precond, INNER_TOLERANCE, 40, 3000)
            .into_iter()
            .map(|(x, rep)| (x, rep.iterations, rep.relative_residual))
            .collect();
    drop(cols);
    let mut iterations = 0;
    let mut sols = Vec::with_capacity(solved.len());
    for (x, it, res) in solved {
        iterations += it;
        if res.is_nan() || res > INNER_TOLERANCE * 10.0 {
            return Err(SolveError::Residual {
                residual: res,
                tolerance: INNER_TOLERANCE,
            });
        }
        sols.push(x);
    }
    let x0s = sols.split_off(nk);
    let ys = sols;
    let row = |k: usize, x: &[c64]| -> c64 {
        bvec[k].iter().zip(x).fold(zero, |s, (b, x)| s + x * *b) * (-jw)
    };
    let mut schur = vec![vec![zero; nk]; nk];
    for i in 0..nk {
        for j in 0..nk {
            schur[i][j] = if i == j { jw * dk[i] } else { zero } + row(i, &ys[j]);
        }
    }
    let mut xs: Vec<Vec<c64>> = Vec::with_capacity(rhs.len());
    for (x0, (_, g)) in x0s.into_iter().zip(&rhs) {
        let mut r: Vec<c64> = (0..nk).map(|k| g[k] - row(k, &x0)).collect();
        let psi = dense_solve(schur.clone(), &mut r).ok_or(SolveError::Singular)?;
        let mut x = x0;
        for (k, y) in ys.iter().enumerate() {
            for (xi, yi) in x.iter_mut().zip(y) {
                *xi += psi[k] * yi;
            }
        }
        x.extend_from_slice(&psi);
        xs.push(x);
    }
    t.solve = t0.elapsed().as_secs_f64();
    // Residual of the whole bordered system.
    let mut max_residual: f64 = 0.0;
    for (x, (f, g)) in xs.iter().zip(&rhs) {
        let (a, psi) = x.split_at(nd);
        let mut ra = pattern.mul(&values, a);
        for (k, b) in bvec.iter().enumerate() {
            for (ri, bi) in ra.iter_mut().zip(b) {
                *ri -= jw * *bi * psi[k];
            }
        }
        let mut num: f64 = ra.iter().zip(f).map(|(a, b)| (a - b).norm_sqr()).sum();
        for k in 0..nk {
            num += (row(k, a) + jw * dk[k] * psi[k] - g[k]).norm_sqr();
        }
        let den: f64 = f.iter().chain(g).map(|v| v.norm_sqr()).sum::<f64>().sqrt();
        let r = if den > 0.0 {
            num.sqrt() / den
        } else {
            num.sqrt()
        };
        max_residual = max_residual.max(r);
        if r.is_nan() || r > RESIDUAL_TOLERANCE {
            return Err(SolveError::Residual {
                residual: r,
                tolerance: RESIDUAL_TOLERANCE,
            });
        }
    }
    let krylov_iterations = iterations;
    let krylov_solves = nk + rhs.len();
    let (disc, locator, nu) = (&plan.disc, &plan.locator, &plan.nu);
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
    let nw = plan.winding_rhs.len();
    for x in xs.iter().take(nw) {
        let (f, psi) = expand(x, None)?;
        unit.push(f);
        unit_psi.push(psi);
    }
    let (background, background_psi) = match &plan.background {
        Some((b, ..)) => {
            let (f, psi) = expand(&xs[nw], Some(*b))?;
            (Some(f), psi)
        }
        None => (None, vec![]),
    };
    Ok(HarmonicSolution {
        frequency,
        disc: disc.clone(),
        locator: locator.clone(),
        nu: nu.clone(),
        sigma: plan.sigma.clone(),
        constraints: plan.constraints.clone(),
        unit,
        unit_psi,
        background,
        background_psi,
        densities: plan.densities.clone(),
        timings: t,
        nnz: pattern.nnz(),
        max_residual,
        krylov_iterations,
        krylov_solves,
    })
}
