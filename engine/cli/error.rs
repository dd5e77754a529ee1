//! The command line's error: the engine's typed errors, and the edge's own
//! (a result that could not be written). Rendered once, in
//! [`crate::cli::run_from`]; the exit code is chosen by variant
//! ([`Error::exit_code`]).

use foothold_report::atomic::WriteError;
use thiserror::Error;

/// Any error a command reports.
#[derive(Debug, Error)]
pub enum Error {
    /// The engine refused the input (data, model, starting values, problem).
    #[error(transparent)]
    Engine(#[from] foothold::error::Error),
    /// A result that could not be written (standard output or a file).
    #[error(transparent)]
    Write(#[from] WriteError),
    /// Options that do not fit together, or name what is not there.
    #[error("{0}")]
    Usage(String),
}

impl Error {
    /// The process exit code for this error: [`super::EXIT_WRITE`] when a
    /// result could not be written, else [`super::EXIT_USAGE`] (bad input or usage).
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Write(_) => super::EXIT_WRITE,
            Error::Engine(_) | Error::Usage(_) => super::EXIT_USAGE,
        }
    }
}

/// Each stage's typed error reaches the edge through the engine's error.
macro_rules! through_engine {
    ($($t:ty),*) => {$(
        impl From<$t> for Error {
            fn from(e: $t) -> Self {
                Error::Engine(e.into())
            }
        }
    )*};
}

through_engine!(
    foothold::symbolic::ModelError,
    foothold::data::DataError,
    foothold::fit::problem::ProblemError,
    foothold::starts::StartError
);
