//! The settings of a run, resolved once from the command line (or made by a library caller)
//! and passed down to every solve: no process-wide option state.

use crate::limits::Limits;

/// What decides how a case is solved besides the case itself.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Settings {
    /// `--accuracy`: the relative accuracy target of every solve, overriding
    /// `model.accuracy`.
    pub accuracy: Option<f64>,
    /// `--max-triangles`, `--max-memory` and the solves sharing them.
    pub limits: Limits,
}

impl Settings {
    /// The same settings for `n` solves at once (a sweep's threads share the memory).
    pub fn shared_by(&self, n: usize) -> Settings {
        Settings {
            limits: self.limits.shared_by(n),
            ..self.clone()
        }
    }
}
