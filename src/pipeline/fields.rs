//! The fields stage: the case's model and mesh solved by the solver the case needs
//! (static, time-harmonic, or Newton for B-H curves at 0 Hz; at 50/60 Hz with B-H curves an
//! effective permeability per region, iterated), handed over as [`Fields`].

use std::f64::consts::SQRT_2;

use fluxpick_mesh::Mesh;
use fluxpick_postproc::fields::{Fields, Solved};
use fluxpick_postproc::figures::region_flux;
use fluxpick_solver::bh::BhCurve;
use fluxpick_solver::nonlinear::{solve_nonlinear, NewtonOptions, NonlinearError};
use fluxpick_solver::{solve_harmonic, solve_static, Problem, RegionMaterial};
use num_complex::Complex64 as C;

use crate::build::{has_eddy_currents, Model, Owner};
use crate::case::Case;

use super::StudyError;

/// Most passes of the effective-permeability iteration at f > 0.
const EFFECTIVE_PASSES: usize = 60;
/// The iteration stops when no region's reluctivity changes by more than this (relative).
const EFFECTIVE_TOLERANCE: f64 = 1e-5;

/// How the fields were solved, for the figures and the warnings.
#[derive(Clone, Debug, PartialEq)]
pub struct SolveNotes {
    /// At f > 0 with B-H curves: the effective-permeability iteration's passes and whether
    /// it converged.
    pub effective: Option<(usize, bool)>,
}

/// The B-H curve of each region's material (None for linear ones).
pub fn curves(case: &Case, model: &Model) -> Result<Vec<Option<BhCurve>>, StudyError> {
    model
        .owners
        .iter()
        .map(|o| {
            let mat = match o {
                Owner::Part(i) => Some(&case.parts[*i].material),
                Owner::Conductor(i) => Some(&case.conductors[*i].material),
                _ => None,
            }?;
            let pts = case.materials.get(mat)?.bh.as_ref()?;
            Some(BhCurve::new(pts).map_err(|e| (mat.clone(), e)))
        })
        .map(|c| c.transpose())
        .collect::<Result<_, _>>()
        .map_err(|(m, e)| StudyError::Curve(m, e))
}

/// The windings' rms phasor currents (coils first, then conductors) and the applied field's
/// phasor coefficient.
fn sources(case: &Case) -> (Vec<C>, Option<C>) {
    let currents = case
        .coils
        .iter()
        .map(|c| C::from_polar(c.current, c.phase_deg.to_radians()))
        .chain(
            case.conductors
                .iter()
                .map(|c| C::from_polar(c.current, c.phase_deg.to_radians())),
        )
        .collect();
    let bg = case
        .background
        .as_ref()
        .map(|b| C::from_polar(1.0, b.phase_deg.to_radians()));
    (currents, bg)
}

/// One linear solve of `problem` (harmonic when the case has eddy currents).
fn linear(case: &Case, problem: &Problem) -> Result<Fields, StudyError> {
    let solved = if has_eddy_currents(case) {
        Solved::Harmonic(solve_harmonic(problem, case.frequency)?)
    } else {
        Solved::Static(solve_static(problem)?)
    };
    let (currents, bg) = sources(case);
    Ok(Fields::new(solved, currents, bg)?)
}

/// At f > 0: an effective (energy-equivalent) reluctivity per saturating region, from the
/// region's mean flux density, iterated to a fixed point; per region a bracket [lo, hi] on
/// ν closed by bisection in log ν (the plain fixed-point iteration oscillates once the core
/// saturates). Returns the materials, the passes made and whether it converged.
fn effective_materials(
    case: &Case,
    problem: &Problem,
    curves: &[Option<BhCurve>],
) -> Result<(Vec<RegionMaterial>, usize, bool), StudyError> {
    let mut mats = problem.materials.clone();
    let mut brackets = vec![(0.0f64, f64::INFINITY); mats.len()];
    for pass in 1..=EFFECTIVE_PASSES {
        let p = Problem {
            materials: mats.clone(),
            ..problem.clone()
        };
        let tot = linear(case, &p)?.total;
        let mut change: f64 = 0.0;
        for (r, c) in curves.iter().enumerate() {
            let Some(c) = c else { continue };
            let b_mean = region_flux(&[&tot.f[0], &tot.f[1]], &[r as u32]).b_mean;
            let target = c.effective_nu(SQRT_2 * b_mean);
            let nu = mats[r].nu;
            let (lo, hi) = &mut brackets[r];
            if target > nu {
                *lo = nu;
            } else {
                *hi = nu;
            }
            let new = if lo.is_finite() && hi.is_finite() && *lo > 0.0 {
                (*lo * *hi).sqrt()
            } else {
                target
            };
            change = change
                .max((new / nu - 1.0).abs())
                .max((target / nu - 1.0).abs());
            mats[r].nu = new;
        }
        if change < EFFECTIVE_TOLERANCE {
            return Ok((mats, pass, true));
        }
    }
    Ok((mats, EFFECTIVE_PASSES, false))
}

/// Solves the case on `mesh`: the fields at the case's currents and applied field.
pub fn solve(
    case: &Case,
    model: &Model,
    mesh: &Mesh,
    curves: &[Option<BhCurve>],
) -> Result<(Fields, SolveNotes), StudyError> {
    let ac = case.frequency > 0.0;
    let saturating = curves.iter().any(|c| c.is_some());
    let mut problem = Problem {
        mesh,
        formulation: model.formulation,
        order: model.order,
        materials: model.materials(case)?,
        windings: model.windings(case),
        background: case
            .background
            .as_ref()
            .map(|b| [b.b * b.direction[0], b.b * b.direction[1]]),
        dirichlet: model.dirichlet.clone(),
    };
    let mut notes = SolveNotes { effective: None };
    if ac && saturating {
        let (mats, passes, converged) = effective_materials(case, &problem, curves)?;
        problem.materials = mats;
        notes.effective = Some((passes, converged));
    }
    if ac || !saturating {
        return Ok((linear(case, &problem)?, notes));
    }
    let currents: Vec<f64> = case
        .coils
        .iter()
        .map(|c| c.current)
        .chain(case.conductors.iter().map(|c| c.current))
        .collect();
    let nl = solve_nonlinear(&problem, curves, &currents, NewtonOptions::default()).map_err(
        |e| match e {
            NonlinearError::Solve(s) => StudyError::Solve(s),
            e => StudyError::Newton(e.to_string()),
        },
    )?;
    let (currents, bg) = sources(case);
    let fields = Fields::new(Solved::Static(nl.linear), currents, bg)?;
    Ok((fields.with_newton(nl.field, nl.report), notes))
}
