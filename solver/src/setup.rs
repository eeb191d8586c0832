//! The set-up shared by the three solves (static, time-harmonic, Newton): everything that
//! depends on the mesh, the formulation, the element order, the windings, the applied field
//! and the boundary conditions, but not on the materials. That is the discretisation, the
//! sparsity pattern with its assembly map, the fill-reducing ordering and the symbolic
//! Cholesky analysis of the pattern, the region measures the winding densities come from,
//! and the point locator of the fields.
//!
//! The static stiffness K, the Newton Jacobians and the preconditioner K + ωσM of the
//! time-harmonic solve all live on the same pattern, so one ordering and one symbolic
//! analysis serve all of them. Solving again with other region materials (another ν per
//! region, another σ) only refills values on the pattern and refactorises numerically:
//! the effective-permeability loop at 50/60 Hz and the Newton iterations do that.
//!
//! The ordering and the analysis are made by the first solve that needs them, beside its
//! assembly (they need only the pattern), and kept. [`SolverSetup::stats`] counts them.

use std::sync::atomic::{AtomicUsize, Ordering as Relaxed};
use std::sync::{Arc, OnceLock};
use std::time::Instant;

use crate::assembly::Pattern;
use crate::discretisation::Discretisation;
use crate::element::{Geometry, Reluctivity};
use crate::field::Locator;
use crate::linsolve::CholeskyAnalysis;
use crate::problem::{Problem, RegionMaterial, Spread, Winding};
use crate::quadrature::DEGREE5;
use crate::statics::Density;
use crate::{Formulation, SolveError, MU0};

/// The material-independent part of a solve, made once from a [`Problem`] (its `materials`
/// are not used: each solve is given its own). Cheap to clone (shared), `Send` and `Sync`:
/// threads may solve through one set-up at once.
///
/// ```
/// # use fluxpick_mesh::{BoundaryEdge, Mesh, Side};
/// # use fluxpick_solver::{Formulation, Order, Problem, RegionMaterial, SolverSetup, Winding,
/// #     WindingRegion, Spread};
/// # let mesh = Mesh {
/// #     points: vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
/// #     triangles: vec![[0, 1, 2], [0, 2, 3]],
/// #     triangle_region: vec![0, 0],
/// #     boundary_edges: vec![
/// #         BoundaryEdge { nodes: [0, 1], side: Side::Bottom },
/// #         BoundaryEdge { nodes: [1, 2], side: Side::Right },
/// #         BoundaryEdge { nodes: [2, 3], side: Side::Top },
/// #         BoundaryEdge { nodes: [3, 0], side: Side::Left },
/// #     ],
/// #     region_count: 1,
/// #     exterior: None,
/// #     identified: vec![],
/// # };
/// # let problem = Problem {
/// #     mesh: &mesh,
/// #     formulation: Formulation::Planar,
/// #     order: Order::Quadratic,
/// #     materials: vec![RegionMaterial::from_mu_r(1.0, 0.0)],
/// #     windings: vec![Winding { name: "w".into(), regions: vec![WindingRegion {
/// #         region: 0, turns: 1.0, spread: Spread::Uniform }] }],
/// #     background: None,
/// #     dirichlet: vec![Side::Left, Side::Right, Side::Bottom, Side::Top],
/// # };
/// let setup = SolverSetup::new(&problem).unwrap();
/// let air = setup.solve_static(&problem.materials).unwrap();
/// let iron = setup.solve_static(&[RegionMaterial::from_mu_r(1000.0, 0.0)]).unwrap();
/// // the same current in a thousand times the permeability: a thousand times the potential
/// let peak = |a: &[f64]| a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
/// assert!((peak(&iron.unit[0].a) / peak(&air.unit[0].a) - 1000.0).abs() < 1e-9);
/// let stats = setup.stats();
/// assert_eq!((stats.orderings, stats.analyses, stats.assemblies), (1, 1, 2));
/// ```
#[derive(Clone)]
pub struct SolverSetup {
    pub(crate) inner: Arc<Inner>,
}

pub(crate) struct Inner {
    pub(crate) disc: Arc<Discretisation>,
    /// Made by the first solve, beside the ordering (both need only the mesh), or on first
    /// use.
    pattern: OnceLock<Pattern>,
    pub(crate) windings: Vec<Winding>,
    pub(crate) background: Option<[f64; 2]>,
    /// Per region: the cross-section area ∫dS and ∫dS/r (the area in planar form).
    area: Vec<f64>,
    area_inv_r: Vec<f64>,
    ordering: OnceLock<Result<Option<Vec<usize>>, SolveError>>,
    analysis: OnceLock<Result<CholeskyAnalysis, SolveError>>,
    locator: OnceLock<Arc<Locator>>,
    seconds: f64,
    orderings: AtomicUsize,
    analyses: AtomicUsize,
    assemblies: AtomicUsize,
}

// A sweep's threads share one set-up (and one frequency plan): both must stay Send + Sync.
const _: fn() = || {
    fn send_sync<T: Send + Sync>() {}
    send_sync::<SolverSetup>();
    send_sync::<crate::HarmonicPlan>();
};

/// What a set-up has made so far (for tests and reports).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct SetupStats {
    /// Fill-reducing orderings computed: nested dissection, or the decision to leave the
    /// ordering to the analysis' minimum degree (first order, small problems).
    pub orderings: usize,
    /// Symbolic Cholesky analyses of the pattern.
    pub analyses: usize,
    /// Matrices assembled on the pattern (each static solve one, each harmonic plan two: K
    /// and σM, each Newton iteration one Jacobian).
    pub assemblies: usize,
}

impl SolverSetup {
    /// The discretisation, the pattern and the region measures of `p` (its materials are not
    /// read). Fails when the model has no unknowns, when a planar piece of the mesh holds
    /// no potential ([`crate::sanity::check_reference`]), or when a winding names a region
    /// outside the mesh.
    pub fn new(p: &Problem) -> Result<Self, SolveError> {
        let t0 = Instant::now();
        let d = Discretisation::new(p.mesh, p.formulation, p.order, &p.dirichlet);
        if d.n_dofs == 0 {
            return Err(SolveError::NoUnknowns);
        }
        crate::sanity::check_reference(&d)?;
        for w in &p.windings {
            if let Some(wr) = w
                .regions
                .iter()
                .find(|wr| wr.region as usize >= d.region_count)
            {
                return Err(SolveError::EmptyWinding {
                    winding: w.name.clone(),
                    region: wr.region,
                });
            }
        }
        let (area, area_inv_r) = region_measures(&d);
        Ok(SolverSetup {
            inner: Arc::new(Inner {
                disc: Arc::new(d),
                pattern: OnceLock::new(),
                windings: p.windings.clone(),
                background: p.background,
                area,
                area_inv_r,
                ordering: OnceLock::new(),
                analysis: OnceLock::new(),
                locator: OnceLock::new(),
                seconds: t0.elapsed().as_secs_f64(),
                orderings: AtomicUsize::new(0),
                analyses: AtomicUsize::new(0),
                assemblies: AtomicUsize::new(0),
            }),
        })
    }

    pub fn discretisation(&self) -> &Arc<Discretisation> {
        &self.inner.disc
    }

    /// The sparsity pattern of the node unknowns (the static matrix, the Jacobians, K + ωσM).
    pub fn pattern(&self) -> &Pattern {
        self.inner
            .pattern
            .get_or_init(|| Pattern::new(&self.inner.disc))
    }

    /// Number of node unknowns.
    pub fn n_dofs(&self) -> usize {
        self.inner.disc.n_dofs
    }

    /// Wall-clock seconds [`SolverSetup::new`] took. Solutions made through a set-up do not
    /// count it in their [`crate::Timings`]; the one-shot functions ([`crate::solve_static`],
    /// [`crate::solve_harmonic`]) add it to `setup`.
    pub fn setup_seconds(&self) -> f64 {
        self.inner.seconds
    }

    pub fn stats(&self) -> SetupStats {
        SetupStats {
            orderings: self.inner.orderings.load(Relaxed::Relaxed),
            analyses: self.inner.analyses.load(Relaxed::Relaxed),
            assemblies: self.inner.assemblies.load(Relaxed::Relaxed),
        }
    }

    /// The fill-reducing ordering, made on first use and kept (an error too: it depends on
    /// the mesh alone).
    fn ordering(&self) -> Result<&Option<Vec<usize>>, SolveError> {
        let i = &self.inner;
        i.ordering
            .get_or_init(|| {
                i.orderings.fetch_add(1, Relaxed::Relaxed);
                crate::ordering::nested_dissection(&i.disc)
            })
            .as_ref()
            .map_err(Clone::clone)
    }

    /// The symbolic analysis, made (with its ordering) on first use and kept; an error of
    /// either is kept too (they depend on the pattern alone).
    pub(crate) fn analysis(&self) -> Result<&CholeskyAnalysis, SolveError> {
        let i = &self.inner;
        i.analysis
            .get_or_init(|| {
                let ordering = self.ordering()?.clone();
                i.analyses.fetch_add(1, Relaxed::Relaxed);
                CholeskyAnalysis::with_ordering(self.pattern(), ordering)
            })
            .as_ref()
            .map_err(Clone::clone)
    }

    /// Runs `work` (an assembly, which builds the pattern on first use) with the ordering
    /// made beside it when it is not made yet: it needs only the mesh, and METIS runs on one
    /// thread while the pattern and the assembly take the others. The symbolic analysis
    /// follows when a solve asks for it.
    /// Returns what `work` returned and the seconds spent waiting for the ordering after
    /// `work` was done.
    pub(crate) fn analysis_beside<T: Send>(&self, work: impl FnOnce() -> T + Send) -> (T, f64) {
        if self.inner.ordering.get().is_some() {
            return (work(), 0.0);
        }
        let t0 = Instant::now();
        let (_, (out, worked)) = rayon::join(
            || {
                // an error is kept and returned by the solve that asks for the analysis
                let _ = self.ordering();
            },
            || {
                let t = Instant::now();
                let out = work();
                (out, t.elapsed())
            },
        );
        (out, t0.elapsed().saturating_sub(worked).as_secs_f64())
    }

    /// Assembles Σ_cells local(c) on the pattern (see [`Pattern::assemble`]), counted.
    pub(crate) fn assemble<T, F>(&self, local: F) -> Vec<T>
    where
        T: Copy + Default + Send + std::ops::AddAssign,
        F: Fn(usize) -> Option<Vec<T>> + Sync,
    {
        self.inner.assemblies.fetch_add(1, Relaxed::Relaxed);
        self.pattern().assemble(self.inner.disc.n_cells(), local)
    }

    /// Frees the pattern's assembly map when this is the only handle on the set-up: the
    /// one-shot solves do that before their factorisation, where memory peaks. No further
    /// assembly may be made through it (they are not: the handle is private to them).
    pub(crate) fn release_assembly_map(&mut self) {
        if let Some(p) = Arc::get_mut(&mut self.inner).and_then(|i| i.pattern.get_mut()) {
            p.release_assembly_map();
        }
    }

    pub(crate) fn locator(&self) -> Arc<Locator> {
        self.inner
            .locator
            .get_or_init(|| Arc::new(Locator::new(&self.inner.disc)))
            .clone()
    }

    /// The reluctivity of every region: the material's ν, or the exterior image's law.
    pub(crate) fn reluctivities(
        &self,
        materials: &[RegionMaterial],
    ) -> Result<Vec<Reluctivity>, SolveError> {
        let d = &self.inner.disc;
        (0..d.region_count)
            .map(|r| match &d.exterior {
                Some(e) if e.region as usize == r => Ok(Reluctivity::KelvinImage {
                    nu0: 1.0 / MU0,
                    center: [e.center[0] + e.offset[0], e.center[1] + e.offset[1]],
                    radius: e.radius,
                }),
                _ => Ok(Reluctivity::Constant(
                    materials
                        .get(r)
                        .ok_or(SolveError::MissingMaterial { region: r as u32 })?
                        .nu,
                )),
            })
            .collect()
    }

    /// Cross-section area of region `r`.
    pub(crate) fn region_area(&self, r: u32) -> f64 {
        self.inner.area[r as usize]
    }

    /// Current density per ampere of every winding in the static solve: N/S, or N/(r ∫dS/r)
    /// for a solid conductor in axisymmetric form.
    pub(crate) fn static_densities(&self) -> Result<Vec<Vec<Density>>, SolveError> {
        let i = &self.inner;
        let mut densities = Vec::new();
        for w in &i.windings {
            let mut dens = Vec::new();
            for wr in &w.regions {
                let r = wr.region as usize;
                let inverse_r =
                    wr.spread == Spread::Solid && i.disc.formulation == Formulation::Axisymmetric;
                let measure = if inverse_r {
                    i.area_inv_r[r]
                } else {
                    i.area[r]
                };
                if measure.is_nan() || measure <= 0.0 {
                    return Err(SolveError::EmptyWinding {
                        winding: w.name.clone(),
                        region: wr.region,
                    });
                }
                dens.push(Density {
                    region: wr.region,
                    coef: wr.turns / measure,
                    inverse_r,
                });
            }
            densities.push(dens);
        }
        Ok(densities)
    }
}

/// Per region: Σ area and Σ ∫dS/r over its cells, summed in cell order, the latter by the
/// element kernel's rule (the same operations as `Local::area` and `Local::area_inv_r` of
/// [`crate::element::local_matrices`]).
fn region_measures(d: &Discretisation) -> (Vec<f64>, Vec<f64>) {
    let mut area = vec![0.0; d.region_count];
    let mut area_inv_r = vec![0.0; d.region_count];
    for c in 0..d.n_cells() {
        let g = Geometry::new(d.vertices(c));
        let mut inv_r_sum = 0.0;
        for q in &DEGREE5 {
            let inv_r = match d.formulation {
                Formulation::Planar => 1.0,
                Formulation::Axisymmetric => 1.0 / g.point(q.l)[0],
            };
            inv_r_sum += q.w * g.area * inv_r;
        }
        let r = d.cell_region[c] as usize;
        area[r] += g.area;
        area_inv_r[r] += inv_r_sum;
    }
    (area, area_inv_r)
}
