//! foothold: starting values for nonlinear regression, earned from the model
//! and the data, ranked by a multistart search, refined to a converged fit.
//!
//! Data flows one way: parse → analyse → detect → match → scan → refine → rank.
//! This crate is the engine alone: no command line, no plots. The report
//! (tables, JSON, plots, HTML) is the `foothold-report` crate and the command
//! line the `foothold` binary, both thin layers over [`pipeline`].
//! - [`symbolic`]: model language, calculus, structural analysis, compiled evaluation.
//! - [`data`]: reading tables into columns.
//! - [`features`]: plateaus, intercepts, straight segments, peaks, periods in the data.
//! - [`infer`]: limits + features → starting values with their derivations.
//! - [`fit`]: the Levenberg–Marquardt fitter and the statistics of a fit.
//! - [`search`]: multistart global search, clustering and ranking of minima.
//! - [`auto_start`]: starting values when none are given: inference, then the search.
//! - [`library`]: the named models of the trade (`rules/models.yaml`).
//! - [`pipeline`]: the steps every edge shares: bind rows, assign starts, fit.
//! - [`starts`]: given starting values checked once for every edge.
//! - [`number_text`]: the one way numbers are written for people.
//! - [`api`]: the small library surface (`fit`, `infer`, `rank` on in-memory columns).

pub mod api;
pub mod auto_start;
pub mod data;
pub mod error;
pub mod features;
pub mod fit;
pub mod infer;
pub mod library;
pub mod number_text;
pub mod pipeline;
pub mod rules;
pub mod search;
pub mod starts;
pub mod symbolic;
