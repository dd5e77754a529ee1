//! Output: tables, JSON and other formats, plots and the HTML report.

pub mod html;
pub mod plot;
