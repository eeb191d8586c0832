//! The results stage: one solve's figures as written to `results.json`, and the run that
//! holds them beside what the output files need.

use std::collections::BTreeMap;
use std::sync::Arc;

use fluxpick_mesh::Mesh;
use fluxpick_postproc::design::{
    CoilFigures, ConductorFigures, InductanceMatrix, MeshFigures, PartFigures, ProbeFigures,
};
use fluxpick_postproc::estimated::Estimated;
use fluxpick_solver::{Discretisation, Field};
use num_complex::Complex64 as C;
use serde::Serialize;

use crate::build::Model;

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SkinFigures {
    pub name: String,
    pub skin_depth_m: f64,
    /// Element size used at the surface.
    pub surface_element_m: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SolveFigures {
    pub mesh_s: f64,
    pub assemble_s: f64,
    pub factor_s: f64,
    pub solve_s: f64,
    pub post_s: f64,
    pub nonzeros: usize,
    pub max_relative_residual: f64,
    pub method: String,
    pub krylov_iterations: Option<usize>,
    /// With B-H curves: Newton iterations and the relative residual after each.
    pub newton_iterations: Option<usize>,
    pub residual_history: Option<Vec<f64>>,
}

fluxpick_postproc::figure_record! {
    #[derive(Clone, Debug, PartialEq)]
    pub struct Results {
        pub title: String,
        pub symmetry: String,
        pub frequency_hz: f64,
        /// Planar figures are for this depth (m); 2π rad in axisymmetric.
        pub depth_m: Option<f64>,
        pub mesh: MeshFigures,
        pub energy_j: Estimated<f64>,
        pub parts: BTreeMap<String, PartFigures>,
        pub conductors: BTreeMap<String, ConductorFigures>,
        pub coils: BTreeMap<String, CoilFigures>,
        pub inductance_matrix: InductanceMatrix,
        pub probes: BTreeMap<String, ProbeFigures>,
        pub skin_layers: Vec<SkinFigures>,
        pub solve: SolveFigures,
        /// The adaptive refinement (with `model.accuracy`), pass by pass.
        pub accuracy: Option<super::adapt::AccuracyReport>,
        pub warnings: Vec<String>,
    }
}

/// Everything one solve made: the figures and what the VTK writer needs.
pub struct Run {
    pub model: Model,
    pub mesh: Mesh,
    pub disc: Arc<Discretisation>,
    /// Real and imaginary parts of the total field (imaginary zero when static).
    pub field: [Field; 2],
    /// Current density per cell (A/m² rms phasor; every cell, the image's zero).
    pub current_density: Vec<C>,
    /// Per cell: the estimated relative error energy the cell contributes (the sum over the
    /// unit solutions of η_K²/a(u, u)); what the adaptive refinement marks by.
    pub error_indicator: Vec<f64>,
    pub results: Results,
}
