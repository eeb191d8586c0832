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
//! part); in axisymmetric form u = 0 (closed loops).
//!
//! Cholesky and LDLᴴ assume a Hermitian matrix and would silently return a wrong answer
//! here. The node block K + jωM is solved by GMRES ([`crate::krylov`]) preconditioned with
//! the real Cholesky factorisation of K + ωσM, which bounds the spectrum of the
//! preconditioned matrix to the segment from 1 to j whatever the mesh; the conductor
//! unknowns ψ are eliminated through a small dense Schur complement (one more inner solve
//! per conductor), all the inner solves run as one batch. K + ωσM has the pattern of the
//! static stiffness, so its ordering and symbolic analysis are the [`SolverSetup`]'s: a
//! frequency sweep ([`HarmonicPlan::solve`]) refactorises numerically only, and so does a
//! plan made with other materials through the same set-up ([`SolverSetup::harmonic_plan`]).

use std::f64::consts::TAU;
use std::sync::Arc;
use std::time::Instant;

use faer::c64;
use rayon::prelude::*;

use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{Basis, Local, Reluctivity, P1, P2};
use crate::field::{Field, Locator};
use crate::krylov::gmres_batch;
use crate::linsolve::{Cholesky, RESIDUAL_TOLERANCE};
use crate::problem::{Problem, RegionMaterial, Spread};
use crate::setup::SolverSetup;
use crate::statics::{background_potential, locals, Density, Timings};
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
/// set-up (discretisation, pattern, symbolic Cholesky analysis), the stiffness and
/// conductivity-mass matrices on the pattern, the constraint borders and the source vectors.
/// A frequency sweep builds it once and calls [`HarmonicPlan::solve`] per frequency
/// (numeric factorisation and solves only).
pub struct HarmonicPlan {
    setup: SolverSetup,
    nu: Arc<Vec<Reluctivity>>,
    sigma: Vec<f64>,
    constraints: Vec<Constraint>,
    /// Stiffness K and conductivity mass σM values on the pattern.
    kvals: Vec<f64>,
    mvals: Vec<f64>,
    /// Constraint borders b_k (over the node unknowns) and d_k.
    bvec: Vec<Vec<f64>>,
    dk: Vec<f64>,
    /// Per winding: node and constraint right-hand sides at 1 A.
    winding_rhs: RealRhs,
    /// Applied field: b, −(ν−ν0)/ν K A_b, M_σ A_b (node part), b_kᵀ A_b (constraints).
    background: Option<BackgroundRhs>,
    densities: Vec<Vec<Density>>,
    timings: Timings,
}

impl HarmonicPlan {
    /// The plan of `p` with its own set-up (use [`SolverSetup::harmonic_plan`] to share one).
    pub fn new(p: &Problem) -> Result<Self, SolveError> {
        let setup = SolverSetup::new(p)?;
        let mut plan = setup.harmonic_plan(&p.materials)?;
        drop(setup);
        plan.timings.setup += plan.setup.setup_seconds();
        // K and σM are all a frequency needs (K + jωσM is formed from them)
        plan.setup.release_assembly_map();
        Ok(plan)
    }

    pub fn n_dofs(&self) -> usize {
        self.setup.n_dofs() + self.constraints.len()
    }

    /// Solves at `frequency` (Hz, > 0) reusing the symbolic analysis.
    pub fn solve(&self, frequency: f64) -> Result<HarmonicSolution, SolveError> {
        solve_plan(self, frequency)
    }
}

impl SolverSetup {
    /// The frequency-independent part of a time-harmonic solve with these region materials
    /// (ν and σ per region id): K and σM refilled on the set-up's pattern, whose ordering and
    /// symbolic analysis serve K + ωσM at every frequency.
    pub fn harmonic_plan(&self, materials: &[RegionMaterial]) -> Result<HarmonicPlan, SolveError> {
        match self.discretisation().order {
            Order::Linear => plan_with::<3, P1>(self, materials),
            Order::Quadratic => plan_with::<6, P2>(self, materials),
        }
    }

    /// The time-harmonic solve ([`solve_harmonic`]) at `frequency` with these materials.
    pub fn solve_harmonic(
        &self,
        materials: &[RegionMaterial],
        frequency: f64,
    ) -> Result<HarmonicSolution, SolveError> {
        self.harmonic_plan(materials)?.solve(frequency)
    }
}

/// Reluctivity and conductivity per region, and the constraints.
type Conductors = (Vec<Reluctivity>, Vec<f64>, Vec<Constraint>);

/// Reluctivity and conductivity per region, and the regions whose voltage is an unknown:
/// stranded windings carry no eddy currents; solid ones are constraints, and so (in planar
/// form) is every other conductive region.
fn conductors(s: &SolverSetup, materials: &[RegionMaterial]) -> Result<Conductors, SolveError> {
    let d = s.discretisation();
    let nu = s.reluctivities(materials)?;
    let image = d.exterior.as_ref().map(|e| e.region);
    let mut sigma = vec![0.0; d.region_count];
    for (r, sg) in sigma.iter_mut().enumerate() {
        if Some(r as u32) != image {
            *sg = materials[r].sigma;
        }
    }
    let mut constraints = Vec::new();
    let mut in_winding = vec![false; d.region_count];
    for (w, wd) in s.inner.windings.iter().enumerate() {
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
    if d.formulation == Formulation::Planar {
        for r in 0..d.region_count {
            if sigma[r] > 0.0 && !in_winding[r] {
                constraints.push(Constraint {
                    region: r as u32,
                    winding: None,
                });
            }
        }
    }
    Ok((nu, sigma, constraints))
}

fn plan_with<const N: usize, B: Basis<N>>(
    s: &SolverSetup,
    materials: &[RegionMaterial],
) -> Result<HarmonicPlan, SolveError> {
    let mut t = Timings::default();
    let t0 = Instant::now();
    let d: &Discretisation = s.discretisation();
    let (nu, sigma, constraints) = conductors(s, materials)?;
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
    t.setup = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let work = || {
        let loc: Vec<Local<N>> = locals::<N, B>(&nu, d);
        // K and σM on the node pattern (K + jωσM and K + ωσM are formed per frequency).
        let kvals: Vec<f64> = s.assemble(|c| {
            let l = &loc[c];
            let mut m = vec![0.0; N * N];
            for i in 0..N {
                for j in 0..N {
                    m[i * N + j] = l.stiffness[i][j];
                }
            }
            Some(m)
        });
        let mvals: Vec<f64> = s.assemble(|c| {
            let l = &loc[c];
            let sg = sigma[d.cell_region[c] as usize];
            if sg == 0.0 {
                return None;
            }
            let mut m = vec![0.0; N * N];
            for i in 0..N {
                for j in 0..N {
                    m[i * N + j] = sg * l.mass[i][j];
                }
            }
            Some(m)
        });
        (loc, kvals, mvals)
    };
    // the ordering and the analysis need only the pattern: they run beside the assembly
    let ((loc, kvals, mvals), waited) = s.analysis_beside(work);
    t.symbolic = waited;
    let (bvec, dk) = borders(d, &loc, &sigma, &extra, constraints.len());
    let (winding_rhs, densities) = winding_rhs(s, &loc, &constraints)?;
    let background = s
        .inner
        .background
        .map(|b| background_rhs(d, &loc, materials, &sigma, &extra, constraints.len(), b));
    t.assemble = (t0.elapsed().as_secs_f64() - waited).max(0.0);
    s.analysis()?;
    Ok(HarmonicPlan {
        setup: s.clone(),
        nu: Arc::new(nu),
        sigma,
        constraints,
        kvals,
        mvals,
        bvec,
        dk,
        winding_rhs,
        background,
        densities,
        timings: t,
    })
}

/// A solid conductor's local border ∫σ N g w (g = 1/r axisymmetric, 1 planar).
fn border<const N: usize>(l: &Local<N>, s: f64, axi: bool) -> [f64; N] {
    let mut b = if axi { l.load_inv_r } else { l.load };
    for x in b.iter_mut() {
        *x *= s;
    }
    b
}

/// The constraint rows −jω b_kᵀ A + jω d_k ψ_k: b_k = ∫σ N g w over the node unknowns and
/// d_k = ∫σ g² w.
fn borders<const N: usize>(
    d: &Discretisation,
    loc: &[Local<N>],
    sigma: &[f64],
    extra: &[u32],
    nk: usize,
) -> (Vec<Vec<f64>>, Vec<f64>) {
    let axi = d.formulation == Formulation::Axisymmetric;
    let mut bvec = vec![vec![0.0; d.n_dofs]; nk];
    let mut dk = vec![0.0; nk];
    for c in 0..d.n_cells() {
        if extra[c] == FIXED {
            continue;
        }
        let k = extra[c] as usize;
        let l = &loc[c];
        let s = sigma[d.cell_region[c] as usize];
        let b = border(l, s, axi);
        for (i, &node) in d.cell(c).iter().enumerate() {
            let dof = d.node_dof[node as usize];
            if dof != FIXED {
                bvec[k][dof as usize] += b[i];
            }
        }
        dk[k] += s * l.measure_inv_r2;
    }
    (bvec, dk)
}

/// Real right-hand sides (node part, constraint part), one per winding.
type RealRhs = Vec<(Vec<f64>, Vec<f64>)>;

/// Right-hand sides (node part, constraint part) of each winding at 1 A, and the current
/// densities per ampere of the stranded ones.
fn winding_rhs<const N: usize>(
    s: &SolverSetup,
    loc: &[Local<N>],
    constraints: &[Constraint],
) -> Result<(RealRhs, Vec<Vec<Density>>), SolveError> {
    let d = s.discretisation();
    let (nd, nk) = (d.n_dofs, constraints.len());
    let scale = if d.formulation == Formulation::Axisymmetric {
        TAU
    } else {
        1.0
    };
    let mut rhs: RealRhs = Vec::new();
    let mut densities = Vec::new();
    for (w, wd) in s.inner.windings.iter().enumerate() {
        let mut f = vec![0.0; nd];
        let mut g = vec![0.0; nk];
        let mut dens = Vec::new();
        for wr in &wd.regions {
            match wr.spread {
                Spread::Uniform => {
                    let a = s.region_area(wr.region);
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
    Ok((rhs, densities))
}

/// The applied field's parts of the right-hand side (see [`BackgroundRhs`]).
fn background_rhs<const N: usize>(
    d: &Discretisation,
    loc: &[Local<N>],
    materials: &[RegionMaterial],
    sigma: &[f64],
    extra: &[u32],
    nk: usize,
    b: [f64; 2],
) -> BackgroundRhs {
    let axi = d.formulation == Formulation::Axisymmetric;
    let image = d.exterior.as_ref().map(|e| e.region);
    let nu0 = 1.0 / MU0;
    let nd = d.n_dofs;
    let mut fk = vec![0.0; nd];
    let mut fm = vec![0.0; nd];
    let mut g = vec![0.0; nk];
    for (c, l) in loc.iter().enumerate() {
        if Some(d.cell_region[c]) == image {
            continue;
        }
        let r = d.cell_region[c] as usize;
        let nu_c = materials[r].nu;
        let s = sigma[r];
        let magnetic = (nu_c - nu0).abs() > 1e-12 * nu0;
        if !magnetic && s == 0.0 {
            continue;
        }
        let nodes = d.cell(c);
        let ab: Vec<f64> = nodes
            .iter()
            .map(|&nd| background_potential(d.formulation, b, d.points[nd as usize]))
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
            let bb = border(l, s, axi);
            let sum: f64 = (0..N).map(|i| bb[i] * ab[i]).sum();
            g[extra[c] as usize] += sum;
        }
    }
    (b, fk, fm, g)
}

/// Right-hand sides (node part, constraint part) at one frequency.
type Rhs = Vec<(Vec<c64>, Vec<c64>)>;

fn solve_plan(plan: &HarmonicPlan, frequency: f64) -> Result<HarmonicSolution, SolveError> {
    let omega = TAU * frequency;
    let jw = c64::new(0.0, omega);
    let mut t = plan.timings;
    let pattern = plan.setup.pattern();
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
    let mut rhs: Rhs = plan
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
    let chol = plan.setup.analysis()?.factor(pattern, &pvalues)?;
    t.factor = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let (xs, krylov_iterations) = bordered_solve(plan, &chol, &values, &rhs, jw)?;
    t.solve = t0.elapsed().as_secs_f64();
    let max_residual = bordered_residual(plan, &values, &xs, &rhs, jw)?;
    let krylov_solves = plan.constraints.len() + rhs.len();
    let disc = plan.setup.discretisation();
    let locator = plan.setup.locator();
    let mut unit = Vec::new();
    let mut unit_psi = Vec::new();
    let nw = plan.winding_rhs.len();
    for x in xs.iter().take(nw) {
        let (f, psi) = expand(disc, &locator, &plan.nu, x, None)?;
        unit.push(f);
        unit_psi.push(psi);
    }
    let (background, background_psi) = match &plan.background {
        Some((b, ..)) => {
            let (f, psi) = expand(disc, &locator, &plan.nu, &xs[nw], Some(*b))?;
            (Some(f), psi)
        }
        None => (None, vec![]),
    };
    Ok(HarmonicSolution {
        frequency,
        disc: disc.clone(),
        locator: locator.clone(),
        nu: plan.nu.clone(),
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

/// −jω b_kᵀ x: constraint k's border row applied to the node part x.
fn border_row(bvec: &[Vec<f64>], jw: c64, k: usize, x: &[c64]) -> c64 {
    let zero = c64::new(0.0, 0.0);
    bvec[k].iter().zip(x).fold(zero, |s, (b, x)| s + x * *b) * (-jw)
}

/// Solves the bordered system for every right-hand side: the node block by preconditioned
/// GMRES, the constraints by their Schur complement. Returns the solutions (node part, then
/// ψ) and the GMRES iterations over all inner solves.
fn bordered_solve(
    plan: &HarmonicPlan,
    chol: &Cholesky<'_>,
    values: &[c64],
    rhs: &Rhs,
    jw: c64,
) -> Result<(Vec<Vec<c64>>, usize), SolveError> {
    let zero = c64::new(0.0, 0.0);
    let (pattern, bvec, dk) = (plan.setup.pattern(), &plan.bvec, &plan.dk);
    let nd = plan.setup.n_dofs();
    let nk = plan.constraints.len();
    let apply = |x: &[c64]| pattern.mul(values, x);
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
    let row = |k: usize, x: &[c64]| border_row(bvec, jw, k, x);
    let mut schur = vec![vec![zero; nk]; nk];
    for i in 0..nk {
        for j in 0..nk {
            schur[i][j] = if i == j { jw * dk[i] } else { zero } + row(i, &ys[j]);
        }
    }
    let mut xs: Vec<Vec<c64>> = Vec::with_capacity(rhs.len());
    for (x0, (_, g)) in x0s.into_iter().zip(rhs) {
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
    Ok((xs, iterations))
}

/// The largest relative residual of the whole bordered system over the solutions; an error
/// above [`RESIDUAL_TOLERANCE`].
fn bordered_residual(
    plan: &HarmonicPlan,
    values: &[c64],
    xs: &[Vec<c64>],
    rhs: &Rhs,
    jw: c64,
) -> Result<f64, SolveError> {
    let (pattern, bvec, dk) = (plan.setup.pattern(), &plan.bvec, &plan.dk);
    let nd = plan.setup.n_dofs();
    let nk = plan.constraints.len();
    let mut max_residual: f64 = 0.0;
    for (x, (f, g)) in xs.iter().zip(rhs) {
        let (a, psi) = x.split_at(nd);
        let mut ra = pattern.mul(values, a);
        for (k, b) in bvec.iter().enumerate() {
            for (ri, bi) in ra.iter_mut().zip(b) {
                *ri -= jw * *bi * psi[k];
            }
        }
        let mut num: f64 = ra.iter().zip(f).map(|(a, b)| (a - b).norm_sqr()).sum();
        for k in 0..nk {
            num += (border_row(bvec, jw, k, a) + jw * dk[k] * psi[k] - g[k]).norm_sqr();
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
    Ok(max_residual)
}

/// The re/im fields of a solution (the applied potential added on the physical nodes when
/// `bg` is given) and its constraint values ψ.
fn expand(
    disc: &Arc<Discretisation>,
    locator: &Arc<Locator>,
    nu: &Arc<Vec<Reluctivity>>,
    x: &[c64],
    bg: Option<[f64; 2]>,
) -> Result<([Field; 2], Vec<c64>), SolveError> {
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
}
