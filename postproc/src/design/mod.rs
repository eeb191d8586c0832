//! The figures of one solve that a pickup designer reads, each a pure function of the
//! [`Fields`](crate::fields::Fields), the [`ErrorModel`](crate::errors::ErrorModel) and a
//! plain description of the item (its regions, material data, winding), which the caller
//! makes from its case: parts, conductors, coils and probes.

pub mod coils;
pub mod conductors;
pub mod parts;
pub mod probes;
pub mod whole;

pub use coils::{coil_figures, CoilFigures, CoilSpec, CorePart, Harvest, Storage};
pub use conductors::{conductor_figures, ConductorFigures, ConductorSpec};
pub use parts::{part_figures, PartFigures, PartSpec, Section};
pub use probes::{field_ellipse, probe_figures, Ellipse, ProbeFigures};
pub use whole::{inductance_matrix, mesh_figures, stored_energy, InductanceMatrix, MeshFigures};

use std::f64::consts::TAU;

/// What every figure of one solve shares.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Context {
    /// The case frequency (Hz; 0 when static).
    pub frequency: f64,
    /// Planar figures are for this depth (m); 1 in axisymmetric form.
    pub depth: f64,
    pub axisymmetric: bool,
}

impl Context {
    pub fn omega(&self) -> f64 {
        TAU * self.frequency
    }

    pub fn ac(&self) -> bool {
        self.frequency > 0.0
    }
}

/// Skin depth δ = √(2/(ωμσ)) (m).
pub fn skin_depth(frequency: f64, mu_r: f64, sigma: f64) -> f64 {
    (2.0 / (TAU * frequency * fluxpick_solver::MU0 * mu_r * sigma)).sqrt()
}
