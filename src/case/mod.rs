//! Case files: TOML text → raw serde structs ([`raw`]) → the typed, validated [`Case`] in SI
//! units ([`model`]). The format is the contract in docs/case-format.md.
//!
//! ```no_run
//! use std::collections::BTreeMap;
//! use std::path::Path;
//! // One step:
//! let case = fluxpick::case::load_case(Path::new("cases/rod-uniform-field.toml")).unwrap();
//! // Or two, to re-resolve the same raw case with a parameter overridden (sweeps):
//! let (raw, text) = fluxpick::case::load(Path::new("cases/rod-uniform-field.toml")).unwrap();
//! let src = fluxpick::case::SourceInfo::new("cases/rod-uniform-field.toml", text);
//! let overrides = BTreeMap::from([("L".to_string(), 100.0)]);
//! let longer = fluxpick::case::resolve(&raw, &src, &overrides).unwrap();
//! println!("{}", fluxpick::case::summary(&longer));
//! ```
//!
//! Errors are one [`CaseError`] type, a `miette` diagnostic that names the key path
//! (`part[2].circle.radius`, indices from 0) and underlines the offending text.

pub mod error;
pub mod expr;
pub mod model;
pub mod raw;
mod resolve;
pub mod schema;
mod summary;

use std::collections::BTreeMap;
use std::ops::Range;
use std::path::Path;

pub use error::{CaseError, CaseErrorKind};
pub use model::*;
pub use raw::RawCase;
pub(crate) use summary::{element_shares, Share};
pub use summary::{estimated_elements, summary};

/// The name and text of a case file, for error messages.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SourceInfo {
    pub name: String,
    pub text: String,
}

impl SourceInfo {
    pub fn new(name: impl Into<String>, text: impl Into<String>) -> Self {
        SourceInfo {
            name: name.into(),
            text: text.into(),
        }
    }

    pub(crate) fn error(
        &self,
        kind: CaseErrorKind,
        span: Option<Range<usize>>,
        key: impl Into<String>,
        message: impl Into<String>,
        help: impl Into<String>,
    ) -> CaseError {
        CaseError::new(kind, &self.name, &self.text, span, key, message, help)
    }
}

/// Reads and parses a case file into its raw form; returns the text too (for
/// [`SourceInfo`]). I/O, TOML syntax, unknown keys, missing keys and wrong types fail here.
pub fn load(path: &Path) -> Result<(RawCase, String), CaseError> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| {
        CaseError::new(
            CaseErrorKind::Io,
            &name,
            "",
            None,
            "",
            format!("cannot read the case file: {e}"),
            "check the path and the file's permissions",
        )
    })?;
    let raw = parse_str(&name, &text)?;
    Ok((raw, text))
}

/// Parses case text (named `name` in messages) into its raw form.
pub fn parse_str(name: &str, text: &str) -> Result<RawCase, CaseError> {
    toml::from_str::<RawCase>(text).map_err(|e| resolve::serde_error(name, text, &e))
}

/// Validates a raw case and converts it to SI units, with `overrides` replacing
/// `[parameters]` values (every override must name a parameter).
pub fn resolve(
    raw: &RawCase,
    src: &SourceInfo,
    overrides: &BTreeMap<String, f64>,
) -> Result<Case, CaseError> {
    resolve::resolve(raw, src, overrides)
}

/// Tries every sweep value on its own (the other parameters at their base values) and returns
/// the errors of those that do not resolve, message prefixed with the sweep point, so that
/// `fluxpick check` can warn before a sweep fails halfway. Combinations of several sweeps are
/// not tried. Not part of [`resolve`]: the format's own example sweeps a rod length down to
/// where its winding no longer fits, and must still be accepted.
pub fn check_sweep_points(raw: &RawCase, src: &SourceInfo, case: &Case) -> Vec<CaseError> {
    let mut out = Vec::new();
    for sweep in &case.sweeps {
        for v in &sweep.values {
            let one = BTreeMap::from([(sweep.parameter.clone(), *v)]);
            if let Err(mut e) = resolve::resolve(raw, src, &one) {
                e.message = format!("at sweep point {} = {v}: {}", sweep.parameter, e.message);
                out.push(e);
            }
        }
    }
    out
}

/// Loads, parses and resolves a case file without overrides.
pub fn load_case(path: &Path) -> Result<Case, CaseError> {
    let (raw, text) = load(path)?;
    let src = SourceInfo::new(path.display().to_string(), text);
    resolve(&raw, &src, &BTreeMap::new())
}

/// Parses and resolves case text without overrides (tests, embedded cases).
pub fn load_case_str(name: &str, text: &str) -> Result<Case, CaseError> {
    let raw = parse_str(name, text)?;
    resolve(&raw, &SourceInfo::new(name, text), &BTreeMap::new())
}
