//! Where results go: standard output or a file written atomically, and the
//! plot files of `--plots DIR`.

use foothold::error::Error;
use foothold_report::atomic::{write_atomic, write_atomic_with};
use foothold_report::plot::{
    fit_sheet_png, fit_sheet_svg, survey_sheet_png, survey_sheet_svg, FitSheet, Panel,
};
use std::io::Write;
use std::path::Path;

/// Writes `text` to `path` atomically when given, otherwise to `out`.
pub fn emit(text: &str, path: Option<&Path>, out: &mut dyn Write) -> Result<(), Error> {
    match path {
        Some(p) => write_atomic(p, text.as_bytes()).map_err(|e| Error::Usage(e.to_string())),
        None => {
            let _ = out.write_all(text.as_bytes());
            Ok(())
        }
    }
}

/// Writes `survey.svg`, `survey.png`, `fit.svg` and `fit.png` into `dir`
/// (created when missing), each atomically.
pub fn write_plots(dir: &Path, survey: &[Panel], sheet: &FitSheet) -> Result<(), Error> {
    let fail = |e: String| Error::Usage(e);
    std::fs::create_dir_all(dir).map_err(|e| {
        fail(format!(
            "cannot create plot directory {}: {e}",
            dir.display()
        ))
    })?;
    write_atomic(&dir.join("survey.svg"), survey_sheet_svg(survey).as_bytes())
        .map_err(|e| fail(e.to_string()))?;
    write_atomic(&dir.join("fit.svg"), fit_sheet_svg(sheet).as_bytes())
        .map_err(|e| fail(e.to_string()))?;
    write_atomic_with(&dir.join("survey.png"), |tmp| survey_sheet_png(survey, tmp))
        .map_err(|e| fail(e.to_string()))?;
    write_atomic_with(&dir.join("fit.png"), |tmp| fit_sheet_png(sheet, tmp))
        .map_err(|e| fail(e.to_string()))?;
    Ok(())
}
