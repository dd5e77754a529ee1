//! Output: tables, JSON and other formats, plots and the HTML report.

pub mod assemble;
pub mod atomic;
pub mod batch_html;
pub mod fit_json;
pub mod fit_table;
pub mod formats;
pub mod html;
pub mod plot;
