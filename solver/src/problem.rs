//! What the solver is asked: formulation, element order, material per region, windings
//! (sources with a unit current), the applied background field and the boundary conditions.
//! No case-file or CLI types: the caller resolves its own input into these.

use fluxpick_mesh::{Mesh, Side};

use crate::discretisation::Order;
use crate::Formulation;

/// Linear material of one region.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RegionMaterial {
    /// Reluctivity ν = 1/(μ0 μr) in m/H.
    pub nu: f64,
    /// Conductivity in S/m.
    pub sigma: f64,
}

impl RegionMaterial {
    pub fn from_mu_r(mu_r: f64, sigma: f64) -> Self {
        RegionMaterial {
            nu: 1.0 / (crate::MU0 * mu_r),
            sigma,
        }
    }
}

/// How a winding's current is spread over one of its regions.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Spread {
    /// Uniform current density N·I/S (stranded windings; any DC conductor in planar form).
    Uniform,
    /// A solid conductor with an imposed total current: at DC uniform in planar form and
    /// ∝ 1/r in axisymmetric form (the loop voltage drives E_φ = V/(2πr)); at f > 0 the
    /// density follows from J = σ(−jωA + u) with the voltage u an extra unknown.
    Solid,
}

/// One region of a winding: `turns` (signed by the sense of the current) times the
/// winding current flow through the region.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WindingRegion {
    pub region: u32,
    pub turns: f64,
    pub spread: Spread,
}

/// A winding: a set of regions that carry the same current (a coil with its sides, or one
/// conductor).
#[derive(Clone, Debug, PartialEq)]
pub struct Winding {
    pub name: String,
    pub regions: Vec<WindingRegion>,
}

#[derive(Clone, Debug)]
pub struct Problem<'m> {
    pub mesh: &'m Mesh,
    pub formulation: Formulation,
    pub order: Order,
    /// Indexed by region id (length `mesh.region_count`; the image region's entry is ignored).
    pub materials: Vec<RegionMaterial>,
    pub windings: Vec<Winding>,
    /// Applied uniform flux density vector (T), planar any direction, axisymmetric `[0, b]`.
    pub background: Option<[f64; 2]>,
    /// Sides where the potential is held at the background potential (0 without one);
    /// in axisymmetric models include the axis side.
    pub dirichlet: Vec<Side>,
}
