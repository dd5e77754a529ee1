//! Output: tables, JSON and other formats, plots and the HTML report.

pub mod html;
pub mod plot;
pub mod fit_json;
pub mod fit_table;
