//! fluxpick-solver: finite elements for the magnetic vector potential in planar (A_z) and
//! axisymmetric (A_φ) cross-sections.
//!
//! Weak forms (docs/physics.md, "Two formulations in one unknown"), w = 1 planar, w = 2πr axisymmetric:
//! `∫ ν c(A)·c(v) w dS = ∫ J v w dS`, with c(A) = ∇A (planar) or (∂A/∂r + A/r, ∂A/∂z)
//! (axisymmetric). A uniform applied field enters as a known potential A_b (planar
//! A_b = B0 × position, axisymmetric A_b = B0 r/2); the unknown is the reaction potential
//! A − A_b, held at 0 on fixed boundaries and on the axis, and driven by
//! `−∫ (ν − ν0) c(A_b)·c(v) w dS` in magnetic regions. An open boundary is an exterior image
//! (Kelvin inversion ρ' = R²/ρ) glued to the circular outer boundary: in planar form the
//! image is plain air; in axisymmetric form it has ν' = ν0 (ρ'/R)².
//!
//! The three solves (static [`solve_static`], time-harmonic [`solve_harmonic`], Newton
//! [`nonlinear::solve_nonlinear`]) share one [`SolverSetup`]: the discretisation, the sparsity
//! pattern, its fill-reducing ordering and symbolic Cholesky analysis, the winding
//! densities. The free functions make one per solve; keep one to solve again with other
//! region materials, which refills values only.
//!
//! ```
//! use fluxpick_mesh::{BoundaryEdge, Mesh, Side};
//! use fluxpick_solver::{solve_static, Formulation, Order, Problem, RegionMaterial, Winding,
//!     WindingRegion, Spread};
//! // one square [0,1]² of two triangles, a uniform source, potential held on every side
//! let mesh = Mesh {
//!     points: vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
//!     triangles: vec![[0, 1, 2], [0, 2, 3]],
//!     triangle_region: vec![0, 0],
//!     boundary_edges: vec![
//!         BoundaryEdge { nodes: [0, 1], side: Side::Bottom },
//!         BoundaryEdge { nodes: [1, 2], side: Side::Right },
//!         BoundaryEdge { nodes: [2, 3], side: Side::Top },
//!         BoundaryEdge { nodes: [3, 0], side: Side::Left },
//!     ],
//!     region_count: 1,
//!     exterior: None,
//!     identified: vec![],
//! };
//! let problem = Problem {
//!     mesh: &mesh,
//!     formulation: Formulation::Planar,
//!     order: Order::Quadratic,
//!     materials: vec![RegionMaterial::from_mu_r(1.0, 0.0)],
//!     windings: vec![Winding { name: "w".into(), regions: vec![WindingRegion {
//!         region: 0, turns: 1.0, spread: Spread::Uniform }] }],
//!     background: None,
//!     dirichlet: vec![Side::Left, Side::Right, Side::Bottom, Side::Top],
//! };
//! let sol = solve_static(&problem).unwrap();
//! assert_eq!(sol.disc.n_dofs, 1); // only the centre midpoint is free
//! ```

pub mod assembly;
pub mod bh;
pub mod discretisation;
pub mod element;
pub mod estimate;
pub mod export;
pub mod field;
pub mod harmonic;
pub mod krylov;
pub mod linsolve;
pub mod nonlinear;
pub mod ordering;
pub mod problem;
pub mod quadrature;
pub mod sanity;
pub mod setup;
pub mod statics;

pub use discretisation::{Discretisation, Order};
pub use export::{ExportError, StaticSystem};
pub use field::{Field, Locator};
pub use harmonic::{solve_harmonic, HarmonicPlan, HarmonicSolution};
pub use problem::{Problem, RegionMaterial, Spread, Winding, WindingRegion};
pub use setup::{SetupStats, SolverSetup};
pub use statics::{
    solve_static, solve_static_with, static_system, SourceFn, StaticSolution, Timings,
};

/// Magnetic constant μ0 in H/m (4π·10⁻⁷, the pre-2019 exact value; the 2019 SI value differs
/// by 5·10⁻¹⁰ relative).
pub const MU0: f64 = 4.0e-7 * std::f64::consts::PI;

/// Planar (translation-invariant, unknown A_z) or axisymmetric (unknown A_φ, x = r ≥ 0).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Formulation {
    Planar,
    Axisymmetric,
}

#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum SolveError {
    #[error("the system is singular: some region has no reference potential (a floating region, or no boundary condition holds the potential)")]
    Singular,
    /// Found before factorising ([`sanity::check_reference`]): no node of a connected piece
    /// of the mesh is held, so the potential there is defined up to a constant. `regions`
    /// are the region ids of the piece; `whole_domain` when it is the whole mesh (no
    /// boundary condition holds the potential anywhere).
    #[error("the system is singular: no boundary condition holds the potential in region(s) {regions:?}{}", if *whole_domain { " (the whole domain)" } else { " (a floating piece)" })]
    NoReference {
        regions: Vec<u32>,
        whole_domain: bool,
    },
    #[error("sparse factorisation failed: {0}")]
    Factorisation(String),
    #[error("the linear solve did not reach its tolerance: relative residual {residual:.3e} > {tolerance:.1e}")]
    Residual { residual: f64, tolerance: f64 },
    #[error("the solution is not finite in region {region}")]
    NotFinite { region: u32 },
    #[error("winding `{winding}` has no area in the mesh (region {region})")]
    EmptyWinding { winding: String, region: u32 },
    #[error("solid conductor `{winding}` has no conductivity: give its material a conductivity, or make it stranded")]
    SolidWithoutConductivity { winding: String },
    #[error("no material given for region {region}")]
    MissingMaterial { region: u32 },
    #[error("the model has no unknowns")]
    NoUnknowns,
}
