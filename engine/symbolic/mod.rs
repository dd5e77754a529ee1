//! The model language and its calculus: parsing, binding to data, simplification,
//! differentiation, compiled evaluation, and the structural analysis inference needs.

pub mod algebra;
pub mod diff;
pub mod expr;
pub mod functions;
pub mod limits;
pub mod linearity;
pub mod model;
pub mod parse;
pub mod poly;
pub mod roles;
pub mod simplify;
pub mod tape;
pub mod terms;
pub mod transform_rules;
pub mod transforms;

pub use diff::{diff_param, diff_var};
pub use expr::{BinOp, Expr, Func};
pub use model::{Model, ModelError};
pub use parse::{parse_formula, parse_formula_for, ParseError, ParsedFormula};
pub use simplify::simplify;
pub use tape::Tape;
