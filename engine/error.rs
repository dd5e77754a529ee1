//! The engine's error type: one enum wrapping each stage's typed errors, rendered once at the CLI edge.

use thiserror::Error;

/// Any error the engine reports.
#[derive(Debug, Error)]
pub enum Error {
    #[error(transparent)]
    Model(#[from] crate::symbolic::ModelError),
    #[error(transparent)]
    Data(#[from] crate::data::DataError),
    #[error(transparent)]
    Problem(#[from] crate::fit::problem::ProblemError),
    #[error("{0}")]
    Usage(String),
    /// A result that could not be written (standard output or a file).
    #[error(transparent)]
    Write(#[from] crate::report::atomic::WriteError),
}

/// Result with the engine's error.
pub type Result<T> = std::result::Result<T, Error>;
