//! Where results go: standard output or a file written atomically, and the
//! plot files of `--plots DIR`. A write that fails is an error; a closed
//! pipe (the reader stopped early, as `| head -1` does) is not.

use crate::error::Error;
use crate::report::atomic::{write_atomic, write_atomic_with, WriteError};
use crate::report::plot::{
    fit_sheet_png, fit_sheet_svg, survey_sheet_png, survey_sheet_svg, FitSheet, Panel,
};
use std::io::Write;
use std::path::Path;

/// Writes `text` to `path` atomically when given, otherwise to `out`.
pub fn emit(text: &str, path: Option<&Path>, out: &mut dyn Write) -> Result<(), Error> {
    match path {
        Some(p) => write_atomic(p, text.as_bytes())?,
        None => write_stdout(text.as_bytes(), out)?,
    }
    Ok(())
}

/// Writes and flushes `bytes` to standard output (`out`). A closed pipe ends
/// the output quietly: the reader asked for no more, so it is not an error.
pub fn write_stdout(bytes: &[u8], out: &mut dyn Write) -> Result<(), WriteError> {
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => Err(WriteError {
            path: "standard output".into(),
            message: e.to_string(),
        }),
        _ => Ok(()),
    }
}

/// Writes `survey.svg`, `survey.png`, `fit.svg` and `fit.png` into `dir`
/// (created when missing), each atomically.
pub fn write_plots(dir: &Path, survey: &[Panel], sheet: &FitSheet) -> Result<(), Error> {
    std::fs::create_dir_all(dir).map_err(|e| {
        Error::Usage(format!(
            "cannot create plot directory {}: {e}",
            dir.display()
        ))
    })?;
    write_atomic(&dir.join("survey.svg"), survey_sheet_svg(survey).as_bytes())?;
    write_atomic(&dir.join("fit.svg"), fit_sheet_svg(sheet).as_bytes())?;
    write_atomic_with(&dir.join("survey.png"), |tmp| survey_sheet_png(survey, tmp))?;
    write_atomic_with(&dir.join("fit.png"), |tmp| fit_sheet_png(sheet, tmp))?;
    Ok(())
}
