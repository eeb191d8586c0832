//! The fields stage: the case's model and mesh solved by the solver the case needs
//! (static, time-harmonic, or Newton for B-H curves at 0 Hz; at 50/60 Hz with B-H curves an
//! effective permeability per region, iterated), handed over as [`Fields`]. One
//! [`SolverSetup`] (discretisation, pattern, ordering, symbolic analysis) serves every solve
//! of the stage: the effective-permeability passes and Newton's iterations refill values.

use std::f64::consts::SQRT_2;

use fluxpick_mesh::Mesh;
use fluxpick_postproc::fields::{Fields, Solved};
use fluxpick_postproc::figures::region_flux;
use fluxpick_solver::bh::BhCurve;
use fluxpick_solver::nonlinear::{NewtonOptions, NonlinearError};
use fluxpick_solver::{Problem, RegionMaterial, SolverSetup};
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
    /// Seconds spent on the shared set-up (discretisation, pattern, ordering, analysis).
    pub setup_s: f64,
    /// With B-H curves: what the shared set-up made (orderings, analyses, assemblies).
    pub setup: Option<fluxpick_solver::SetupStats>,
}

/// The B-H curve of each region's material (None for linear ones).
pub fn curves(case: &Case, model: &Model) -> Result<Vec<Option<BhCurve>>, StudyError> {
    model
        .owners
        .iter()
        .map(|o| {
            let mat = match o {
                Owner::Part(i) => Some(case.material(case.parts[*i].material)),
                Owner::Conductor(i) => Some(case.material(case.conductors[*i].material)),
                _ => None,
            }?;
            let pts = mat.bh.as_ref()?;
            Some(BhCurve::new(pts).map_err(|e| (mat.name.clone(), e)))
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

/// One linear solve with `materials` (harmonic when the case has eddy currents): only the
/// values are refilled on the set-up's pattern.
fn linear(
    case: &Case,
    setup: &SolverSetup,
    materials: &[RegionMaterial],
) -> Result<Fields, StudyError> {
    let solved = if has_eddy_currents(case) {
        Solved::Harmonic(setup.solve_harmonic(materials, case.frequency)?)
    } else {
        Solved::Static(setup.solve_static(materials)?)
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
    setup: &SolverSetup,
    materials: &[RegionMaterial],
    curves: &[Option<BhCurve>],
) -> Result<(Vec<RegionMaterial>, usize, bool), StudyError> {
    let mut mats = materials.to_vec();
    let mut brackets = vec![(0.0f64, f64::INFINITY); mats.len()];
    for pass in 1..=EFFECTIVE_PASSES {
        let tot = linear(case, setup, &mats)?.total;
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

/// The solver's problem of the case on `mesh`, with the materials' own (unsaturated)
/// permeabilities.
pub fn problem<'a>(case: &Case, model: &Model, mesh: &'a Mesh) -> Problem<'a> {
    Problem {
        mesh,
        formulation: model.formulation,
        order: model.order,
        materials: model.materials(case),
        windings: model.windings(case),
        background: case
            .background
            .as_ref()
            .map(|b| [b.b * b.direction[0], b.b * b.direction[1]]),
        dirichlet: model.dirichlet.clone(),
    }
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
    let problem = problem(case, model, mesh);
    if !saturating {
        // one solve: the one-shot solver frees the pattern's assembly map before the
        // factorisation, where memory peaks (a kept set-up holds it for later refills)
        let solved = if has_eddy_currents(case) {
            Solved::Harmonic(fluxpick_solver::solve_harmonic(&problem, case.frequency)?)
        } else {
            Solved::Static(fluxpick_solver::solve_static(&problem)?)
        };
        let (currents, bg) = sources(case);
        let notes = SolveNotes {
            effective: None,
            setup_s: 0.0,
            setup: None,
        };
        return Ok((Fields::new(solved, currents, bg)?, notes));
    }
    let setup = SolverSetup::new(&problem)?;
    let mut notes = SolveNotes {
        effective: None,
        setup_s: setup.setup_seconds(),
        setup: None,
    };
    let mut materials = problem.materials.clone();
    if ac && saturating {
        let (mats, passes, converged) = effective_materials(case, &setup, &materials, curves)?;
        materials = mats;
        notes.effective = Some((passes, converged));
    }
    if ac {
        let fields = linear(case, &setup, &materials)?;
        notes.setup = Some(setup.stats());
        return Ok((fields, notes));
    }
    let currents: Vec<f64> = case
        .coils
        .iter()
        .map(|c| c.current)
        .chain(case.conductors.iter().map(|c| c.current))
        .collect();
    let nl = setup
        .solve_nonlinear(&materials, curves, &currents, NewtonOptions::default())
        .map_err(|e| match e {
            NonlinearError::Solve(s) => StudyError::Solve(s),
            e => StudyError::Newton(e.to_string()),
        })?;
    notes.setup = Some(setup.stats());
    let (currents, bg) = sources(case);
    let fields = Fields::new(Solved::Static(nl.linear), currents, bg)?;
    Ok((fields.with_newton(nl.field, nl.report), notes))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A ferrite rod in an axial field at `frequency` with an invented saturating curve.
    fn rod(b: f64, frequency: f64) -> Case {
        let text = format!(
            r#"
[model]
title = "saturating rod"
symmetry = "axisymmetric"
frequency = {frequency}
[domain]
rect = {{ min = [0, -300], max = [300, 300] }}
boundary = "open"
mesh_size = 30
[background]
b = {b}
direction = [0, 1]
[materials.ferrite]
mu_r = 1989.4368
bh = [[0, 0], [10, 0.025], [25, 0.06], [50, 0.11], [100, 0.19], [200, 0.3], [500, 0.42], [2000, 0.48], [8000, 0.5]]
[[part]]
name = "rod"
material = "ferrite"
rect = {{ min = [0, -75], max = [12.5, 75] }}
mesh_size = 4
"#
        );
        crate::case::load_case_str("rod.toml", &text).expect("valid case")
    }

    fn stats(case: &Case) -> (SolveNotes, fluxpick_solver::SetupStats) {
        let model = Model::new(case).unwrap();
        let mesh = fluxpick_mesh::generate(&model.spec).unwrap();
        let curves = curves(case, &model).unwrap();
        let (_, notes) = solve(case, &model, &mesh, &curves).unwrap();
        let s = notes.setup.expect("a saturating solve keeps its set-up");
        (notes, s)
    }

    /// The effective-permeability passes at 50 Hz refill values on one pattern: one ordering
    /// and one symbolic analysis for every pass (wiring check of the stage; the physics of
    /// the passes is tested in tests/saturation.rs).
    #[test]
    fn effective_passes_share_one_ordering_and_analysis() {
        let (notes, s) = stats(&rod(3e-2, 50.0));
        let (passes, converged) = notes.effective.unwrap();
        assert!(converged && passes > 2, "{passes} passes");
        assert_eq!((s.orderings, s.analyses), (1, 1), "{s:?}");
        // every pass and the final solve assemble once
        assert_eq!(s.assemblies, passes + 1, "{s:?}");
    }

    /// Newton at 0 Hz makes one ordering and one analysis, its starting solve included.
    #[test]
    fn newton_makes_one_ordering_and_analysis() {
        let (_, s) = stats(&rod(3e-2, 0.0));
        assert_eq!((s.orderings, s.analyses), (1, 1), "{s:?}");
        assert!(s.assemblies > 2, "{s:?}");
    }
}
