//! fluxpick: finite-element field solver for inductive pickups that harvest or measure the
//! 50/60 Hz leakage field beside power conductors.
//!
//! Data flows one way: case file ([`case`]) → model ([`build`]) → mesh (fluxpick-mesh) →
//! solve (fluxpick-solver) → figures (fluxpick-postproc, [`study`]) → files ([`output`]).
//! Studies of many solves are in [`sweep`]. The command-line front end is [`cli`];
//! `src/main.rs` only calls it.

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
pub use case::schema;
pub mod settings;
pub mod starters;
pub mod sweep;
