//! fluxpick: finite-element field solver for inductive pickups that harvest or measure the
//! 50/60 Hz leakage field beside power conductors.
//!
//! One solve is a pipeline of named stages ([`pipeline`]): case file ([`case`], resolved
//! and typed) → model ([`build`]) → mesh (fluxpick-mesh) → fields (fluxpick-solver) →
//! estimates and figures (fluxpick-postproc) → results → warnings → files ([`output`],
//! [`picture`]). Commands are loops over it: [`sweep`], [`compare`], [`map`]. They take the
//! run's [`settings`] as a value and return records or typed errors ([`error`]); only the
//! command line ([`cli`]) prints and chooses exit statuses. `src/main.rs` only calls it.
//!
//! ```
//! let case = fluxpick::case::load_case_str("rod.toml", r#"
//! [model]
//! title = "air-cored coil in a uniform field"
//! symmetry = "axisymmetric"
//! frequency = 50
//! [domain]
//! rect = { min = [0, -60], max = [60, 60] }
//! boundary = "open"
//! mesh_size = 10
//! [background]
//! b = 1e-6
//! direction = [0, 1]
//! [[coil]]
//! name = "pickup"
//! turns = 100
//! wire = "awg30"
//! rect = { min = [10, -5], max = [12, 5] }
//! "#).unwrap();
//! let run = fluxpick::pipeline::run(&case, &Default::default()).unwrap();
//! let emf = run.results.coils["pickup"].emf_v.value;
//! // Faraday: ω N B π r̄² for a thin coil of mean radius 11 mm (approximately)
//! let approx = 2.0 * std::f64::consts::PI * 50.0 * 100.0 * 1e-6 * std::f64::consts::PI * 0.011f64.powi(2);
//! assert!((emf / approx - 1.0).abs() < 0.05, "{emf} vs {approx}");
//! ```

pub mod build;
pub mod case;
pub mod cli;
pub mod compare;
pub mod error;
pub mod format;
pub mod interrupt;
pub mod limits;
pub mod lint;
pub mod map;
pub mod output;
pub mod picture;
pub mod pipeline;
pub mod sanity;
pub mod settings;
pub mod starters;
pub mod sweep;

pub use case::schema;
