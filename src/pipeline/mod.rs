//! One solve of a case as a pipeline of named stages, each with a typed input and output:
//!
//! | stage | function | hands over |
//! | --- | --- | --- |
//! | model | [`Model::new`](crate::build::Model::new) | `Model` (mesh spec, region owners, materials, windings) |
//! | mesh | [`mesh::mesh`] | `fluxpick_mesh::Mesh` |
//! | fields | [`fields::solve`] | `fluxpick_postproc::fields::Fields` (unit solutions, phasor total, Newton field) |
//! | estimates | `ErrorModel::new` | `fluxpick_postproc::errors::ErrorModel` (one error model) |
//! | figures | [`figures::figures`] | [`figures::Figures`] (parts, conductors, coils, probes, inductance matrix, energy) |
//! | results | [`figures::results`] | [`Results`] |
//! | warnings | [`warnings::warnings`] | the results' `warnings` |
//!
//! [`run`] solves on one mesh, or with an accuracy target adaptively ([`adapt`]), and then
//! passes over the results for warnings. The case's names are resolved to region ids in the
//! model and to plain descriptions in the figures stage; the library crates see neither the
//! case nor the command line.

pub mod adapt;
pub mod fields;
pub mod figures;
pub mod mesh;
pub mod results;
pub mod warnings;

use std::time::Instant;

use fluxpick_mesh::SizeMap;
use fluxpick_postproc::errors::ErrorModel;
use fluxpick_postproc::fields::Solved;
use fluxpick_solver::SolveError;

use crate::build::{BuildError, Model};
use crate::case::Case;
use crate::settings::Settings;

pub use crate::build::has_eddy_currents;
pub use fields::SolveNotes;
pub use figures::{mean_turn_length, shape_bbox};
pub use mesh::mesh_model;
pub use results::{Results, Run, SkinFigures, SolveFigures};

/// Why a solve of a case failed.
#[derive(Debug, thiserror::Error)]
pub enum StudyError {
    #[error(transparent)]
    Build(#[from] BuildError),
    #[error("material `{0}`: {1}")]
    Curve(String, fluxpick_solver::bh::BhError),
    #[error("the saturating solve failed: {0}")]
    Newton(String),
    #[error("meshing failed: {0}")]
    Mesh(#[from] fluxpick_mesh::MeshError),
    #[error("`{0}` is wholly covered by entries drawn after it (parts, then conductors, then coils, each in file order), so nothing of it is left to mesh")]
    Hidden(String),
    #[error("solve failed: {0}")]
    Solve(#[from] SolveError),
    /// Refused before meshing: over the triangle or memory limit ([`crate::limits`]).
    #[error(transparent)]
    Limit(#[from] crate::limits::TooLarge),
    /// A sanity failure of the solve, named in the case's terms ([`crate::sanity`]).
    #[error(transparent)]
    Physics(#[from] crate::sanity::PhysicsError),
}

/// Solves a case: on one mesh, or with an accuracy target (`settings.accuracy`, else
/// `model.accuracy`) adaptively; then the warnings pass.
pub fn run(case: &Case, settings: &Settings) -> Result<Run, StudyError> {
    let (mut run, notes) = match settings.accuracy.or(case.accuracy) {
        None => solve_on(case, settings, None),
        Some(target) => adapt::run_adaptive(case, settings, target),
    }
    .map_err(|e| match &e {
        StudyError::Solve(s) => crate::sanity::name_regions(case, s).map_or(e, StudyError::Physics),
        _ => e,
    })?;
    run.results.warnings = warnings::warnings(case, &run.results, &notes);
    Ok(run)
}

/// One solve, on the case's mesh or (with `map`) on a mesh refined to the map's sizes:
/// model, mesh, fields, estimates, figures, results (warnings are [`run`]'s last stage).
pub fn solve_on(
    case: &Case,
    settings: &Settings,
    map: Option<&SizeMap>,
) -> Result<(Run, SolveNotes), StudyError> {
    let model = Model::new(case)?;
    let t0 = Instant::now();
    let mesh = mesh::mesh(case, &model, settings, map)?;
    let mesh_s = t0.elapsed().as_secs_f64();
    let curves = fields::curves(case, &model)?;
    let (fields, notes) = fields::solve(case, &model, &mesh, &curves)?;
    let t0 = Instant::now();
    let errors = ErrorModel::new(&fields, mesh.exterior.as_ref().map(|e| e.region));
    let figures = figures::figures(case, &model, &fields, &errors, &curves);
    let current_density = fields.current_density();
    let solve = solve_figures(&fields, &notes, mesh_s, t0.elapsed().as_secs_f64());
    let results = figures::results(case, &model, &mesh, &fields, &errors, figures, solve);
    let run = Run {
        model,
        mesh,
        disc: fields.disc.clone(),
        field: fields.total.f.clone(),
        current_density,
        error_indicator: errors.est.cell_indicator,
        results,
    };
    Ok((run, notes))
}

/// The case's assembled magnetostatic system (stiffness K with the materials' own μr, one
/// right-hand side per winding at 1 A and one for the applied field), for a user who studies
/// the system itself (exported as Matrix Market by `solve --matrix-market`). At f > 0 this is
/// the K of the time-harmonic system, without its jωσ terms.
pub fn static_system(
    case: &Case,
    settings: &Settings,
) -> Result<fluxpick_solver::StaticSystem, StudyError> {
    let model = Model::new(case)?;
    let mesh = mesh::mesh(case, &model, settings, None)?;
    Ok(fluxpick_solver::static_system(&fields::problem(
        case, &model, &mesh,
    ))?)
}

/// The solver's own figures: times per stage, matrix size, residual, method.
fn solve_figures(
    fields: &fluxpick_postproc::fields::Fields,
    notes: &SolveNotes,
    mesh_s: f64,
    post_s: f64,
) -> SolveFigures {
    let (timings, nnz, max_residual, method, iterations) = match &fields.solved {
        Solved::Static(s) => (
            s.timings,
            s.nnz,
            s.max_residual,
            "supernodal Cholesky (real)",
            None,
        ),
        Solved::Harmonic(h) => (
            h.timings,
            h.nnz,
            h.max_residual,
            "GMRES preconditioned by the Cholesky of K + ωσM",
            Some(h.krylov_iterations),
        ),
    };
    SolveFigures {
        mesh_s,
        assemble_s: notes.setup_s + timings.setup + timings.assemble,
        factor_s: timings.symbolic + timings.factor,
        solve_s: timings.solve,
        post_s,
        nonzeros: nnz,
        max_relative_residual: max_residual,
        method: method.into(),
        krylov_iterations: iterations,
        newton_iterations: fields.newton.as_ref().map(|n| n.iterations),
        residual_history: fields.newton.as_ref().map(|n| n.residual_history.clone()),
    }
}
