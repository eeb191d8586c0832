//! Linear magnetostatic solve: one assembly and one Cholesky factorisation, then one
//! right-hand side per winding (unit current) and one for the applied field. The free
//! functions make a [`SolverSetup`] for one solve; a set-up kept by the caller solves again
//! with other materials by refilling the values of its pattern.

use std::sync::Arc;
use std::time::Instant;

use crate::assembly::scatter_vector;
use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{local_matrices, point_basis, Basis, Geometry, Local, Reluctivity, P1, P2};
use crate::export::StaticSystem;
use crate::field::{Field, Locator};
use crate::linsolve::{relative_residual, RESIDUAL_TOLERANCE};
use crate::problem::{Problem, RegionMaterial};
use crate::quadrature::DEGREE6;
use crate::setup::SolverSetup;
use crate::{Formulation, SolveError, MU0};

/// Wall-clock seconds per stage. A solve through a kept [`SolverSetup`] counts only what it
/// did itself: `setup` is then the materials' part (the set-up's own construction is
/// [`SolverSetup::setup_seconds`], added by the one-shot functions), and `symbolic` is the
/// time spent waiting for the ordering and the symbolic analysis, which run beside the
/// assembly of the set-up's first solve (0 on later solves).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Timings {
    pub setup: f64,
    pub assemble: f64,
    pub symbolic: f64,
    pub factor: f64,
    pub solve: f64,
}

/// Current density per ampere of winding current in one region: `coef` (A/m² per A), or
/// `coef / r` when `inverse_r`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Density {
    pub region: u32,
    pub coef: f64,
    pub inverse_r: bool,
}

impl Density {
    pub fn at(&self, x: [f64; 2]) -> f64 {
        if self.inverse_r {
            self.coef / x[0]
        } else {
            self.coef
        }
    }
}

pub struct StaticSolution {
    pub disc: Arc<Discretisation>,
    pub locator: Arc<Locator>,
    pub nu: Arc<Vec<Reluctivity>>,
    /// Field of the applied background alone (with the parts' reaction), if any.
    pub background: Option<Field>,
    /// Field of each winding carrying 1 A (reaction only: no applied field).
    pub unit: Vec<Field>,
    /// Fields of the distributed sources passed to [`solve_static_with`].
    pub distributed: Vec<Field>,
    /// Current density per ampere of each winding.
    pub densities: Vec<Vec<Density>>,
    pub timings: Timings,
    pub nnz: usize,
    pub max_residual: f64,
}

/// The applied potential at a point (planar B0 × position, axisymmetric B0 r / 2).
pub fn background_potential(formulation: Formulation, b: [f64; 2], x: [f64; 2]) -> f64 {
    match formulation {
        Formulation::Planar => b[0] * x[1] - b[1] * x[0],
        Formulation::Axisymmetric => b[1] * x[0] / 2.0,
    }
}

pub(crate) fn locals<const N: usize, B: Basis<N>>(
    nu: &[Reluctivity],
    d: &Discretisation,
) -> Vec<Local<N>> {
    use rayon::prelude::*;
    (0..d.n_cells())
        .into_par_iter()
        .map(|c| {
            let v = d.vertices(c);
            local_matrices::<N, B>(&v, nu[d.cell_region[c] as usize], d.formulation)
        })
        .collect()
}

/// A current density given as a function of position (A/m²), e.g. a manufactured source.
pub type SourceFn<'a> = &'a (dyn Fn([f64; 2]) -> f64 + Sync);

/// Solves the linear static problem for every winding at 1 A and for the background.
pub fn solve_static(p: &Problem) -> Result<StaticSolution, SolveError> {
    solve_static_with(p, &[])
}

/// As [`solve_static`], plus one field per distributed source density (from the same
/// factorisation), in [`StaticSolution::distributed`].
pub fn solve_static_with(p: &Problem, sources: &[SourceFn]) -> Result<StaticSolution, SolveError> {
    let mut setup = SolverSetup::new(p)?;
    let mut asm = setup.assemble_static(&p.materials, sources, true)?;
    asm.timings.setup += setup.setup_seconds();
    // every matrix of this solve is assembled: free the map before the factorisation
    setup.release_assembly_map();
    setup.finish_static(asm)
}

/// The assembled stiffness matrix and right-hand sides of `p` (see
/// [`SolverSetup::static_system`]).
pub fn static_system(p: &Problem) -> Result<StaticSystem, SolveError> {
    SolverSetup::new(p)?.static_system(&p.materials)
}

/// A static system assembled on the set-up's pattern, not yet solved.
pub(crate) struct StaticAssembly {
    nu: Arc<Vec<Reluctivity>>,
    values: Vec<f64>,
    /// One per winding, then the background if any, then the distributed sources.
    rhs: Vec<Vec<f64>>,
    densities: Vec<Vec<Density>>,
    timings: Timings,
}

impl SolverSetup {
    /// The static solve ([`solve_static`]) with these region materials (indexed by region
    /// id; the image region's entry is ignored). Refills the values of the set-up's pattern
    /// and refactorises; the ordering and the symbolic analysis are made once per set-up.
    pub fn solve_static(&self, materials: &[RegionMaterial]) -> Result<StaticSolution, SolveError> {
        self.solve_static_with(materials, &[])
    }

    /// As [`SolverSetup::solve_static`], plus one field per distributed source density.
    pub fn solve_static_with(
        &self,
        materials: &[RegionMaterial],
        sources: &[SourceFn],
    ) -> Result<StaticSolution, SolveError> {
        let asm = self.assemble_static(materials, sources, true)?;
        self.finish_static(asm)
    }

    /// The static system K x = F with these materials, assembled as in
    /// [`SolverSetup::solve_static`] but not solved (no ordering, analysis or factorisation
    /// is made for it): K over the node unknowns, one right-hand side per winding at 1 A
    /// and one for the applied field. See [`StaticSystem`] for the layout and the Matrix
    /// Market export.
    pub fn static_system(&self, materials: &[RegionMaterial]) -> Result<StaticSystem, SolveError> {
        let asm = self.assemble_static(materials, &[], false)?;
        let d = self.discretisation();
        let mut columns: Vec<String> = self.inner.windings.iter().map(|w| w.name.clone()).collect();
        if self.inner.background.is_some() {
            columns.push("background".into());
        }
        Ok(StaticSystem::new(
            d,
            self.pattern().to_csmat(asm.values),
            &asm.rhs,
            columns,
        ))
    }

    /// Assembles K and the right-hand sides; with `analyse`, the ordering and the symbolic
    /// analysis are made beside the assembly if the set-up has none yet.
    pub(crate) fn assemble_static(
        &self,
        materials: &[RegionMaterial],
        sources: &[SourceFn],
        analyse: bool,
    ) -> Result<StaticAssembly, SolveError> {
        match self.discretisation().order {
            Order::Linear => assemble_with::<3, P1>(self, materials, sources, analyse),
            Order::Quadratic => assemble_with::<6, P2>(self, materials, sources, analyse),
        }
    }

    /// Factorises, solves every right-hand side, checks the residuals and expands the
    /// solutions to fields.
    pub(crate) fn finish_static(&self, asm: StaticAssembly) -> Result<StaticSolution, SolveError> {
        let StaticAssembly {
            nu,
            values,
            rhs,
            densities,
            timings: mut t,
        } = asm;
        let pattern = self.pattern();
        let t0 = Instant::now();
        let analysis = self.analysis()?;
        t.symbolic += t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        let chol = analysis.factor(pattern, &values)?;
        t.factor = t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        let xs = chol.solve(&rhs);
        t.solve = t0.elapsed().as_secs_f64();
        let mut max_residual: f64 = 0.0;
        for (x, b) in xs.iter().zip(&rhs) {
            let r = relative_residual(pattern, &values, x, b);
            max_residual = max_residual.max(r);
            if r.is_nan() || r > RESIDUAL_TOLERANCE {
                return Err(SolveError::Residual {
                    residual: r,
                    tolerance: RESIDUAL_TOLERANCE,
                });
            }
        }
        let disc = self.discretisation().clone();
        let locator = self.locator();
        let nw = self.inner.windings.len();
        let expand = |x: &[f64], bg| expand(&disc, &locator, &nu, x, bg);
        let mut unit = Vec::new();
        for x in xs.iter().take(nw) {
            unit.push(expand(x, None)?);
        }
        let bg = self.inner.background;
        let nb = usize::from(bg.is_some());
        let background = match bg {
            Some(b) => Some(expand(&xs[nw], Some(b))?),
            None => None,
        };
        let mut distributed = Vec::new();
        for x in xs.iter().skip(nw + nb) {
            distributed.push(expand(x, None)?);
        }
        Ok(StaticSolution {
            disc,
            locator,
            nu,
            background,
            unit,
            distributed,
            densities,
            timings: t,
            nnz: pattern.nnz(),
            max_residual,
        })
    }
}

fn assemble_with<const N: usize, B: Basis<N>>(
    s: &SolverSetup,
    materials: &[RegionMaterial],
    sources: &[SourceFn],
    analyse: bool,
) -> Result<StaticAssembly, SolveError> {
    let mut t = Timings::default();
    let t0 = Instant::now();
    let d: &Discretisation = s.discretisation();
    let nu = Arc::new(s.reluctivities(materials)?);
    t.setup = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let work = || {
        let loc = locals::<N, B>(&nu, d);
        let values = s.assemble(|c| Some(loc[c].stiffness.iter().flatten().copied().collect()));
        (loc, values)
    };
    // the ordering and the analysis need only the pattern: they run beside the assembly
    let ((loc, values), waited) = if analyse {
        s.analysis_beside(work)
    } else {
        (work(), 0.0)
    };
    t.symbolic = waited;
    let densities = s.static_densities()?;
    // Right-hand sides.
    let mut rhs: Vec<Vec<f64>> = densities
        .iter()
        .map(|dens| winding_rhs(d, &loc, dens))
        .collect();
    if let Some(b) = s.inner.background {
        rhs.push(background_rhs(d, &loc, materials, b));
    }
    // the element matrices are done with: free them before the factorisation
    drop(loc);
    for src in sources {
        rhs.push(source_rhs::<N, B>(d, *src));
    }
    t.assemble = (t0.elapsed().as_secs_f64() - waited).max(0.0);
    Ok(StaticAssembly {
        nu,
        values,
        rhs,
        densities,
        timings: t,
    })
}

/// ∫ j N_i w of one winding's density per ampere.
fn winding_rhs<const N: usize>(d: &Discretisation, loc: &[Local<N>], dens: &[Density]) -> Vec<f64> {
    let mut f = vec![0.0; d.n_dofs];
    for (c, l) in loc.iter().enumerate() {
        for de in dens.iter().filter(|de| de.region == d.cell_region[c]) {
            let v: Vec<f64> = if de.inverse_r {
                l.load_inv_r.iter().map(|x| x * de.coef).collect()
            } else {
                l.load.iter().map(|x| x * de.coef).collect()
            };
            scatter_vector(d, c, &v, &mut f);
        }
    }
    f
}

/// The applied field's drive −∫(ν − ν0) c(A_b)·c(N_i) w in magnetic regions.
fn background_rhs<const N: usize>(
    d: &Discretisation,
    loc: &[Local<N>],
    materials: &[RegionMaterial],
    b: [f64; 2],
) -> Vec<f64> {
    let nu0 = 1.0 / MU0;
    let mut f = vec![0.0; d.n_dofs];
    for (c, l) in loc.iter().enumerate() {
        if d.is_image(c) {
            continue;
        }
        let nu = materials[d.cell_region[c] as usize].nu;
        if (nu - nu0).abs() <= 1e-12 * nu0 {
            continue;
        }
        // −∫(ν − ν0) c_b·c_i w = −(ν − ν0)/ν · Σ_j K_ij a_b,j (K exact on linear A_b)
        let nodes = d.cell(c);
        let ab: Vec<f64> = nodes
            .iter()
            .map(|&n| background_potential(d.formulation, b, d.points[n as usize]))
            .collect();
        let v: Vec<f64> = (0..N)
            .map(|i| {
                let ka: f64 = (0..N).map(|j| l.stiffness[i][j] * ab[j]).sum();
                -(nu - nu0) / nu * ka
            })
            .collect();
        scatter_vector(d, c, &v, &mut f);
    }
    f
}

/// ∫ J N_i w of a distributed density, by the degree-6 rule.
pub(crate) fn source_rhs<const N: usize, B: Basis<N>>(
    d: &Discretisation,
    src: SourceFn,
) -> Vec<f64> {
    let mut f = vec![0.0; d.n_dofs];
    add_source::<N, B>(d, src, &mut f);
    f
}

/// Adds ∫ J N_i w of a distributed density to `f`, by the degree-6 rule.
pub(crate) fn add_source<const N: usize, B: Basis<N>>(
    d: &Discretisation,
    src: SourceFn,
    f: &mut [f64],
) {
    for c in 0..d.n_cells() {
        let g = Geometry::new(d.vertices(c));
        let mut v = [0.0; N];
        for q in &DEGREE6 {
            let pb = point_basis::<N, B>(&g, q.l, d.formulation);
            let dw = q.w * g.area * pb.weight * src(pb.x);
            for i in 0..N {
                v[i] += dw * pb.n[i];
            }
        }
        scatter_vector(d, c, &v, f);
    }
}

/// The field of a solution vector: the reaction on the unknowns, plus the applied potential
/// on the physical nodes when `bg` is given.
fn expand(
    disc: &Arc<Discretisation>,
    locator: &Arc<Locator>,
    nu: &Arc<Vec<Reluctivity>>,
    x: &[f64],
    bg: Option<[f64; 2]>,
) -> Result<Field, SolveError> {
    let mut a = vec![0.0; disc.points.len()];
    for (n, v) in a.iter_mut().enumerate() {
        let dof = disc.node_dof[n];
        if dof != FIXED {
            *v = x[dof as usize];
        }
    }
    if let Some(b) = bg {
        for c in 0..disc.n_cells() {
            if disc.is_image(c) {
                continue;
            }
            for &n in disc.cell(c) {
                // written once per node per cell; idempotent
                let n = n as usize;
                let reaction = if disc.node_dof[n] == FIXED {
                    0.0
                } else {
                    x[disc.node_dof[n] as usize]
                };
                a[n] = reaction + background_potential(disc.formulation, b, disc.points[n]);
            }
        }
    }
    for c in 0..disc.n_cells() {
        for &n in disc.cell(c) {
            if !a[n as usize].is_finite() {
                return Err(SolveError::NotFinite {
                    region: disc.cell_region[c],
                });
            }
        }
    }
    Ok(Field {
        disc: disc.clone(),
        locator: locator.clone(),
        nu: nu.clone(),
        a,
    })
}
