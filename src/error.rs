//! Why a command's study could not run, as a typed value; the command line renders it and
//! chooses the exit status (the `cli` module).

use crate::case::CaseError;
use crate::pipeline::StudyError;

#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// A case file that does not resolve (rendered with its source span).
    #[error(transparent)]
    Case(Box<CaseError>),
    /// Arguments or cases that do not fit the command (what is wrong and how to fix it).
    #[error("{0}")]
    Input(String),
    /// A solve of the named case file failed.
    #[error("{file}: {source}")]
    Study { file: String, source: StudyError },
    /// An output could not be written.
    #[error("{0}")]
    Write(String),
}

impl From<CaseError> for RunError {
    fn from(e: CaseError) -> Self {
        RunError::Case(Box::new(e))
    }
}
