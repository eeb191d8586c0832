//! Linear magnetostatic solve: one assembly and one Cholesky factorisation, then one
//! right-hand side per winding (unit current) and one for the applied field.

use std::sync::Arc;
use std::time::Instant;

use crate::assembly::{scatter_vector, Pattern};
use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{local_matrices, point_basis, Basis, Geometry, Local, Reluctivity, P1, P2};
use crate::field::{Field, Locator};
use crate::linsolve::{relative_residual, CholeskyAnalysis, RESIDUAL_TOLERANCE};
use crate::problem::{Problem, Spread};
use crate::quadrature::DEGREE6;
use crate::{Formulation, SolveError, MU0};

/// Wall-clock seconds per stage.
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

fn locals<const N: usize, B: Basis<N>>(nu: &[Reluctivity], d: &Discretisation) -> Vec<Local<N>> {
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
    match p.order {
        Order::Linear => solve_with::<3, P1>(p, sources),
        Order::Quadratic => solve_with::<6, P2>(p, sources),
    }
}

fn solve_with<const N: usize, B: Basis<N>>(
    p: &Problem,
    sources: &[SourceFn],
) -> Result<StaticSolution, SolveError> {
    let mut t = Timings::default();
    let t0 = Instant::now();
    let d = Discretisation::new(p.mesh, p.formulation, p.order, &p.dirichlet);
    if d.n_dofs == 0 {
        return Err(SolveError::NoUnknowns);
    }
    crate::sanity::check_reference(&d)?;
    let nu: Vec<Reluctivity> = (0..d.region_count)
        .map(|r| match &d.exterior {
            Some(e) if e.region as usize == r => Ok(Reluctivity::KelvinImage {
                nu0: 1.0 / MU0,
                center: [e.center[0] + e.offset[0], e.center[1] + e.offset[1]],
                radius: e.radius,
            }),
            _ => Ok(Reluctivity::Constant(
                p.materials
                    .get(r)
                    .ok_or(SolveError::MissingMaterial { region: r as u32 })?
                    .nu,
            )),
        })
        .collect::<Result<_, SolveError>>()?;
    let nu = Arc::new(nu);
    t.setup = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    // the ordering needs only the mesh: it runs beside the assembly
    let (ordering, (pattern, loc, values)) = rayon::join(
        || crate::ordering::nested_dissection(&d),
        || {
            let mut pattern = Pattern::new(&d);
            let loc = locals::<N, B>(&nu, &d);
            let values = pattern.assemble(d.n_cells(), |c| {
                Some(loc[c].stiffness.iter().flatten().copied().collect())
            });
            pattern.release_assembly_map();
            (pattern, loc, values)
        },
    );
    // Region measures for the winding densities.
    let mut area = vec![0.0; d.region_count];
    let mut inv_r = vec![0.0; d.region_count];
    for (c, l) in loc.iter().enumerate() {
        let r = d.cell_region[c] as usize;
        area[r] += l.area;
        inv_r[r] += l.area_inv_r;
    }
    let mut densities = Vec::new();
    for w in &p.windings {
        let mut dens = Vec::new();
        for wr in &w.regions {
            let r = wr.region as usize;
            let inverse_r =
                wr.spread == Spread::Solid && p.formulation == Formulation::Axisymmetric;
            let measure = if inverse_r { inv_r[r] } else { area[r] };
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
    // Right-hand sides.
    let mut rhs: Vec<Vec<f64>> = Vec::new();
    for dens in &densities {
        let mut f = vec![0.0; d.n_dofs];
        for (c, l) in loc.iter().enumerate() {
            for de in dens.iter().filter(|de| de.region == d.cell_region[c]) {
                let v: Vec<f64> = if de.inverse_r {
                    l.load_inv_r.iter().map(|x| x * de.coef).collect()
                } else {
                    l.load.iter().map(|x| x * de.coef).collect()
                };
                scatter_vector(&d, c, &v, &mut f);
            }
        }
        rhs.push(f);
    }
    if let Some(b) = p.background {
        let nu0 = 1.0 / MU0;
        let mut f = vec![0.0; d.n_dofs];
        for (c, l) in loc.iter().enumerate() {
            if d.is_image(c) {
                continue;
            }
            let nu = p.materials[d.cell_region[c] as usize].nu;
            if (nu - nu0).abs() <= 1e-12 * nu0 {
                continue;
            }
            // −∫(ν − ν0) c_b·c_i w = −(ν − ν0)/ν · Σ_j K_ij a_b,j (K exact on linear A_b)
            let nodes = d.cell(c);
            let ab: Vec<f64> = nodes
                .iter()
                .map(|&n| background_potential(p.formulation, b, d.points[n as usize]))
                .collect();
            let v: Vec<f64> = (0..N)
                .map(|i| {
                    let ka: f64 = (0..N).map(|j| l.stiffness[i][j] * ab[j]).sum();
                    -(nu - nu0) / nu * ka
                })
                .collect();
            scatter_vector(&d, c, &v, &mut f);
        }
        rhs.push(f);
    }
    // the element matrices are done with: free them before the factorisation
    drop(loc);
    for src in sources {
        let mut f = vec![0.0; d.n_dofs];
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
            scatter_vector(&d, c, &v, &mut f);
        }
        rhs.push(f);
    }
    t.assemble = t0.elapsed().as_secs_f64();

    let t0 = Instant::now();
    let analysis = CholeskyAnalysis::with_ordering(&pattern, ordering?)?;
    t.symbolic = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let chol = analysis.factor(&pattern, &values)?;
    t.factor = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    let xs = chol.solve(&rhs);
    t.solve = t0.elapsed().as_secs_f64();
    let mut max_residual: f64 = 0.0;
    for (x, b) in xs.iter().zip(&rhs) {
        let r = relative_residual(&pattern, &values, x, b);
        max_residual = max_residual.max(r);
        if r.is_nan() || r > RESIDUAL_TOLERANCE {
            return Err(SolveError::Residual {
                residual: r,
                tolerance: RESIDUAL_TOLERANCE,
            });
        }
    }
    let disc = Arc::new(d);
    let locator = Arc::new(Locator::new(&disc));
    let expand = |x: &[f64], bg: Option<[f64; 2]>| -> Result<Field, SolveError> {
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
    };
    let mut unit = Vec::new();
    for x in xs.iter().take(p.windings.len()) {
        unit.push(expand(x, None)?);
    }
    let nb = usize::from(p.background.is_some());
    let background = match p.background {
        Some(b) => Some(expand(&xs[p.windings.len()], Some(b))?),
        None => None,
    };
    let mut distributed = Vec::new();
    for x in xs.iter().skip(p.windings.len() + nb) {
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
