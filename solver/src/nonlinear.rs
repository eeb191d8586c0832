//! Magnetostatics with nonlinear (B-H curve) regions by Newton–Raphson.
//!
//! Unknown: the reaction potential x (A = A_b + x in the physical domain, A = x in the
//! exterior image), as in the linear solve. Residual, for every test function N_i:
//!
//! `R_i = Σ_cells ∫ [ν(|B|²) c(A) − ν0 c(A_b)]·c(N_i) w − ∫ J N_i w`
//!
//! (in air the bracket is ν0 c(x); the applied field's own ν0 term integrates to zero, as in
//! the linear solve). The Jacobian is `J_ij = ∫ [ν c_i·c_j + 2 ν'(|B|²)(B·c_i)(B·c_j)] w`,
//! symmetric and positive definite when dH/dB > 0, so the real Cholesky factorises it. The
//! Jacobian has the pattern of the static stiffness: the starting linear solve and every
//! iteration share the [`SolverSetup`]'s one ordering and one symbolic analysis, and each
//! iteration refills the Jacobian's values on its pattern. Each step is damped by a backtracking line search on
//! ‖R‖; the iteration stops when ‖R‖ and the update are both below tolerance, and reports
//! failure with its history otherwise.

use crate::assembly::{scatter_vector, Pattern};
use crate::bh::BhCurve;
use crate::discretisation::{Discretisation, Order, FIXED};
use crate::element::{point_basis, Basis, Geometry, Reluctivity, P1, P2};
use crate::field::Field;
use crate::linsolve::CholeskyAnalysis;
use crate::problem::{Problem, RegionMaterial};
use crate::quadrature::DEGREE5;
use crate::setup::SolverSetup;
use crate::statics::{add_source, background_potential, Density, SourceFn, StaticSolution};
use crate::{SolveError, MU0};

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NewtonOptions {
    pub max_iterations: usize,
    /// Relative residual ‖R‖/‖R₀‖ and relative update ‖δ‖/‖x‖ to stop at.
    pub tolerance: f64,
}

impl Default for NewtonOptions {
    fn default() -> Self {
        NewtonOptions {
            max_iterations: 40,
            tolerance: 1e-9,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct NewtonReport {
    pub iterations: usize,
    /// ‖R‖/‖R₀‖ after each iteration (index 0: the starting point).
    pub residual_history: Vec<f64>,
}

#[derive(Debug, thiserror::Error)]
pub enum NonlinearError {
    #[error(transparent)]
    Solve(#[from] SolveError),
    #[error("Newton did not converge in {iterations} iterations; relative residuals {history:?}")]
    NotConverged {
        iterations: usize,
        history: Vec<f64>,
    },
}

/// The converged total field and the linear solve it started from.
pub struct NonlinearSolution {
    pub field: Field,
    pub report: NewtonReport,
    /// The linear solve (with the materials' own ν) that gave the starting point; its
    /// densities are the windings' current densities per ampere.
    pub linear: StaticSolution,
    pub densities: Vec<Vec<Density>>,
}

/// Reluctivity law of a region in the Newton solve.
#[derive(Clone, Debug)]
enum Law {
    Linear(Reluctivity),
    Curve(BhCurve),
}

struct System<'a, const N: usize> {
    d: &'a Discretisation,
    laws: Vec<Law>,
    /// A_b at every node (0 when there is no applied field, and in the image).
    ab: Vec<f64>,
    f: Vec<f64>,
    /// The set-up whose pattern the Jacobian is assembled on.
    setup: &'a SolverSetup,
}

impl<const N: usize> System<'_, N> {
    /// Nodal total potential of cell c from the unknowns.
    fn nodal(&self, c: usize, x: &[f64]) -> [f64; N] {
        let mut a = [0.0; N];
        for (i, &n) in self.d.cell(c).iter().enumerate() {
            let dof = self.d.node_dof[n as usize];
            let r = if dof == FIXED { 0.0 } else { x[dof as usize] };
            a[i] = r + if self.d.is_image(c) {
                0.0
            } else {
                self.ab[n as usize]
            };
        }
        a
    }

    /// Local residual (and Jacobian when asked) of cell c.
    fn local<B: Basis<N>>(&self, c: usize, x: &[f64], jac: bool) -> ([f64; N], Vec<f64>) {
        let g = Geometry::new(self.d.vertices(c));
        let a = self.nodal(c, x);
        let image = self.d.is_image(c);
        let ab: [f64; N] = {
            let mut v = [0.0; N];
            if !image {
                for (i, &n) in self.d.cell(c).iter().enumerate() {
                    v[i] = self.ab[n as usize];
                }
            }
            v
        };
        let law = &self.laws[self.d.cell_region[c] as usize];
        let nu0 = 1.0 / MU0;
        let mut r = [0.0; N];
        let mut k = if jac { vec![0.0; N * N] } else { vec![] };
        for q in &DEGREE5 {
            let pb = point_basis::<N, B>(&g, q.l, self.d.formulation);
            let dw = q.w * g.area * pb.weight;
            let mut bv = [0.0; 2];
            let mut bb = [0.0; 2];
            for i in 0..N {
                bv[0] += a[i] * pb.c[i][0];
                bv[1] += a[i] * pb.c[i][1];
                bb[0] += ab[i] * pb.c[i][0];
                bb[1] += ab[i] * pb.c[i][1];
            }
            let s = bv[0] * bv[0] + bv[1] * bv[1];
            let (nu, dnu) = match law {
                Law::Linear(l) => (l.at(pb.x, self.d.formulation), 0.0),
                Law::Curve(cv) => cv.nu(s),
            };
            // the applied field's ν0 term (physical cells only)
            let sub = if image { 0.0 } else { nu0 };
            for i in 0..N {
                let ci = pb.c[i];
                r[i] +=
                    dw * ((nu * bv[0] - sub * bb[0]) * ci[0] + (nu * bv[1] - sub * bb[1]) * ci[1]);
                if jac {
                    let bci = bv[0] * ci[0] + bv[1] * ci[1];
                    for j in 0..N {
                        let cj = pb.c[j];
                        let bcj = bv[0] * cj[0] + bv[1] * cj[1];
                        k[i * N + j] +=
                            dw * (nu * (ci[0] * cj[0] + ci[1] * cj[1]) + 2.0 * dnu * bci * bcj);
                    }
                }
            }
        }
        (r, k)
    }

    fn residual<B: Basis<N>>(&self, x: &[f64]) -> Vec<f64> {
        let mut res = vec![0.0; self.d.n_dofs];
        for c in 0..self.d.n_cells() {
            let (r, _) = self.local::<B>(c, x, false);
            scatter_vector(self.d, c, &r, &mut res);
        }
        for (a, b) in res.iter_mut().zip(&self.f) {
            *a -= b;
        }
        res
    }

    fn jacobian<B: Basis<N>>(&self, x: &[f64]) -> Vec<f64> {
        self.setup.assemble(|c| Some(self.local::<B>(c, x, true).1))
    }
}

/// Σ_w I_w ∫ j_w N_i w over the node unknowns (j_w: winding w's density per ampere).
fn source_vector<const N: usize, B: Basis<N>>(
    d: &Discretisation,
    densities: &[Vec<Density>],
    currents: &[f64],
) -> Vec<f64> {
    let mut f = vec![0.0; d.n_dofs];
    for c in 0..d.n_cells() {
        let g = Geometry::new(d.vertices(c));
        let mut v = [0.0; N];
        let mut any = false;
        for (w, dens) in densities.iter().enumerate() {
            let i_w = currents.get(w).copied().unwrap_or(0.0);
            for de in dens.iter().filter(|de| de.region == d.cell_region[c]) {
                any = true;
                for q in &DEGREE5 {
                    let pb = point_basis::<N, B>(&g, q.l, d.formulation);
                    let dw = q.w * g.area * pb.weight * i_w * de.at(pb.x);
                    for i in 0..N {
                        v[i] += dw * pb.n[i];
                    }
                }
            }
        }
        if any {
            scatter_vector(d, c, &v, &mut f);
        }
    }
    f
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// Solves with the windings carrying `currents` (A, DC) and the background of `p`, the
/// regions with a curve in `curves` (indexed by region id) nonlinear, the others with their
/// material's ν.
pub fn solve_nonlinear(
    p: &Problem,
    curves: &[Option<BhCurve>],
    currents: &[f64],
    opts: NewtonOptions,
) -> Result<NonlinearSolution, NonlinearError> {
    solve_nonlinear_with(p, curves, currents, &[], opts)
}

/// As [`solve_nonlinear`], with distributed current densities `sources` (A/m² as functions
/// of position) added to the windings' (for manufactured-solution tests).
pub fn solve_nonlinear_with(
    p: &Problem,
    curves: &[Option<BhCurve>],
    currents: &[f64],
    sources: &[SourceFn],
    opts: NewtonOptions,
) -> Result<NonlinearSolution, NonlinearError> {
    SolverSetup::new(p)?.solve_nonlinear_with(&p.materials, curves, currents, sources, opts)
}

impl SolverSetup {
    /// The Newton solve ([`solve_nonlinear`]) with these region materials (the starting
    /// point's ν, and ν of the regions without a curve). The starting linear solve and the
    /// iterations use the set-up's one ordering and symbolic analysis.
    pub fn solve_nonlinear(
        &self,
        materials: &[RegionMaterial],
        curves: &[Option<BhCurve>],
        currents: &[f64],
        opts: NewtonOptions,
    ) -> Result<NonlinearSolution, NonlinearError> {
        self.solve_nonlinear_with(materials, curves, currents, &[], opts)
    }

    /// As [`SolverSetup::solve_nonlinear`], with distributed current densities added.
    pub fn solve_nonlinear_with(
        &self,
        materials: &[RegionMaterial],
        curves: &[Option<BhCurve>],
        currents: &[f64],
        sources: &[SourceFn],
        opts: NewtonOptions,
    ) -> Result<NonlinearSolution, NonlinearError> {
        match self.discretisation().order {
            Order::Linear => solve_with::<3, P1>(self, materials, curves, currents, sources, opts),
            Order::Quadratic => {
                solve_with::<6, P2>(self, materials, curves, currents, sources, opts)
            }
        }
    }
}

/// Nodes of physical cells (they carry A_b in the fields of the linear solve).
fn physical_nodes(d: &Discretisation) -> Vec<bool> {
    let mut phys = vec![false; d.points.len()];
    for c in (0..d.n_cells()).filter(|&c| !d.is_image(c)) {
        for &n in d.cell(c) {
            phys[n as usize] = true;
        }
    }
    phys
}

/// The unknowns of the linear solution for these currents (the reaction potential).
fn starting_point(
    d: &Discretisation,
    linear: &StaticSolution,
    currents: &[f64],
    ab: &[f64],
    phys: &[bool],
) -> Vec<f64> {
    let mut x = vec![0.0; d.n_dofs];
    for (n, &dof) in d.node_dof.iter().enumerate() {
        if dof == FIXED {
            continue;
        }
        let mut v: f64 = linear
            .unit
            .iter()
            .zip(currents)
            .map(|(u, i)| i * u.a[n])
            .sum();
        if let Some(bg) = &linear.background {
            // the background field holds A_b + reaction on physical nodes
            v += if phys[n] { bg.a[n] - ab[n] } else { bg.a[n] };
        }
        x[dof as usize] = v;
    }
    x
}

fn solve_with<const N: usize, B: Basis<N>>(
    s: &SolverSetup,
    materials: &[RegionMaterial],
    curves: &[Option<BhCurve>],
    currents: &[f64],
    sources: &[SourceFn],
    opts: NewtonOptions,
) -> Result<NonlinearSolution, NonlinearError> {
    // The linear solve gives the densities and the starting point.
    let linear = s.solve_static(materials)?;
    let d: &Discretisation = s.discretisation();
    let laws: Vec<Law> = (0..d.region_count)
        .map(|r| match curves.get(r).and_then(|c| c.clone()) {
            Some(c) if d.exterior.as_ref().is_none_or(|e| e.region as usize != r) => Law::Curve(c),
            _ => Law::Linear(linear.nu[r]),
        })
        .collect();
    let mut ab = vec![0.0; d.points.len()];
    if let Some(b) = s.inner.background {
        for (n, v) in ab.iter_mut().enumerate() {
            *v = background_potential(d.formulation, b, d.points[n]);
        }
    }
    let mut f = source_vector::<N, B>(d, &linear.densities, currents);
    for src in sources {
        add_source::<N, B>(d, *src, &mut f);
    }
    let sys = System::<N> {
        d,
        laws,
        ab,
        f,
        setup: s,
    };
    let phys = physical_nodes(d);
    let x = starting_point(d, &linear, currents, &sys.ab, &phys);
    let (x, report) = iterate::<N, B>(&sys, s.analysis()?, x, opts)?;
    // the total field (A_b added on physical nodes, as the linear solve's fields are)
    let mut a = vec![0.0; d.points.len()];
    for (n, v) in a.iter_mut().enumerate() {
        let dof = d.node_dof[n];
        if dof != FIXED {
            *v = x[dof as usize];
        }
    }
    if s.inner.background.is_some() {
        for (n, v) in a.iter_mut().enumerate() {
            if phys[n] {
                *v += sys.ab[n];
            }
        }
    }
    let field = Field {
        disc: s.discretisation().clone(),
        locator: linear.locator.clone(),
        nu: linear.nu.clone(),
        a,
    };
    let densities = linear.densities.clone();
    Ok(NonlinearSolution {
        field,
        report,
        linear,
        densities,
    })
}

/// Newton–Raphson from `x` with a backtracking line search on ‖R‖.
fn iterate<const N: usize, B: Basis<N>>(
    sys: &System<'_, N>,
    analysis: &CholeskyAnalysis,
    mut x: Vec<f64>,
    opts: NewtonOptions,
) -> Result<(Vec<f64>, NewtonReport), NonlinearError> {
    let d = sys.d;
    let pattern = sys.setup.pattern();
    let mut res = sys.residual::<B>(&x);
    let scale = norm(&sys.residual::<B>(&vec![0.0; d.n_dofs]))
        .max(norm(&sys.f))
        .max(1e-300);
    let mut history = vec![norm(&res) / scale];
    let mut iterations = 0;
    loop {
        let rel = *history.last().expect("history");
        if rel <= opts.tolerance && iterations > 0 {
            break;
        }
        if iterations >= opts.max_iterations {
            return Err(NonlinearError::NotConverged {
                iterations,
                history,
            });
        }
        let jac = sys.jacobian::<B>(&x);
        let chol = analysis.factor(pattern, &jac)?;
        let neg: Vec<f64> = res.iter().map(|v| -v).collect();
        let delta = chol.solve(&[neg]).pop().expect("one solve");
        // backtracking line search on ‖R‖
        let r0 = norm(&res);
        let mut alpha = 1.0;
        let mut trial;
        let mut xt;
        loop {
            xt = x
                .iter()
                .zip(&delta)
                .map(|(a, b)| a + alpha * b)
                .collect::<Vec<_>>();
            trial = sys.residual::<B>(&xt);
            if norm(&trial) <= (1.0 - 1e-4 * alpha) * r0 || alpha < 1e-3 {
                break;
            }
            alpha *= 0.5;
        }
        let step = alpha * norm(&delta) / norm(&xt).max(1e-300);
        x = xt;
        res = trial;
        iterations += 1;
        history.push(norm(&res) / scale);
        // NaN or infinite unknowns stop the run, naming the region where they appeared
        crate::sanity::check_finite_dofs(d, &x)?;
        if !x.iter().all(|v| v.is_finite()) {
            return Err(NonlinearError::NotConverged {
                iterations,
                history,
            });
        }
        if step <= opts.tolerance && *history.last().expect("history") <= opts.tolerance.sqrt() {
            break;
        }
    }
    Ok((
        x,
        NewtonReport {
            iterations,
            residual_history: history,
        },
    ))
}

/// The residual and Jacobian at a given unknown vector, for tests of the Jacobian against
/// finite differences.
pub fn residual_and_jacobian(
    p: &Problem,
    curves: &[Option<BhCurve>],
    currents: &[f64],
    x: &[f64],
) -> Result<(Vec<f64>, Vec<f64>, Pattern), SolveError> {
    let s = SolverSetup::new(p)?;
    let nu = s.reluctivities(&p.materials)?;
    let densities = s.static_densities()?;
    let d: &Discretisation = s.discretisation();
    macro_rules! go {
        ($n:literal, $b:ty) => {{
            let laws: Vec<Law> = (0..d.region_count)
                .map(|r| match curves.get(r).and_then(|c| c.clone()) {
                    Some(c) => Law::Curve(c),
                    None => Law::Linear(nu[r]),
                })
                .collect();
            let f = source_vector::<$n, $b>(d, &densities, currents);
            let sys = System::<$n> {
                d,
                laws,
                ab: vec![0.0; d.points.len()],
                f,
                setup: &s,
            };
            (sys.residual::<$b>(x), sys.jacobian::<$b>(x))
        }};
    }
    let (r, j) = match p.order {
        Order::Linear => go!(3, P1),
        Order::Quadratic => go!(6, P2),
    };
    Ok((r, j, s.pattern().clone()))
}
