//! The command line: argument parsing, the subcommands, and the one place
//! errors are rendered (`foothold: error: <message>` on stderr) and exit codes chosen.
//!
//! Exit codes: 0 success; 1 the fit did not converge; 2 bad input or usage,
//! or a result that could not be written. A closed pipe on standard output
//! (`| head -1`) is not an error: the output ends there, with no message.

pub mod args;
pub mod batch;
pub mod batch_report;
pub mod fit_cmd;
pub mod infer_cmd;
pub mod model_arg;
pub mod models_cmd;
pub mod output;
pub mod prepare;
pub mod provenance;
pub mod rank_cmd;
pub mod report_cmd;
pub mod starts;

use args::{Cli, Command};
use clap::error::ErrorKind;
use clap::Parser;
use std::ffi::OsString;
use std::io::Write;

/// Exit code: success.
pub const EXIT_OK: i32 = 0;
/// Exit code: the fit ran but did not converge.
pub const EXIT_NOT_CONVERGED: i32 = 1;
/// Exit code: bad input or usage, or a result that could not be written.
pub const EXIT_USAGE: i32 = 2;

/// How a command that ran without error ended.
#[derive(Debug, Clone, PartialEq)]
pub enum Outcome {
    /// Done; exit 0.
    Success,
    /// The fit stopped without converging; the message explains, exit 1.
    NotConverged(String),
}

/// Runs the command line of this process and returns the exit code.
///
/// Standard error is passed unlocked: each message takes the lock only while
/// it is written, so the batch progress bar, drawn from worker threads, never
/// waits on a lock the main thread holds for the whole run (that froze every
/// batch on a terminal).
pub fn run() -> i32 {
    let stdout = std::io::stdout();
    run_from(std::env::args_os(), &mut stdout.lock(), &mut std::io::stderr())
}

/// Runs a command line (`args[0]` is the program name) with the given
/// output streams and returns the exit code.
pub fn run_from<I, T>(args: I, out: &mut dyn Write, err: &mut dyn Write) -> i32
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let args: Vec<OsString> = args.into_iter().map(Into::into).collect();
    let run = provenance::Run::new(
        args.iter()
            .skip(1)
            .map(|a| a.to_string_lossy().into_owned())
            .collect(),
    );
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => return clap_exit(e, out, err),
    };
    // Wide layouts (--y COLUMNS, --wide-groups) are applied to the arguments
    // here, so every command reads the table in long form.
    let layout = prepare::layout_args;
    let result = match &cli.command {
        Command::Fit(a) => layout(&a.input, a.by.as_ref(), true).and_then(|(input, by)| {
            let a = args::FitArgs { input, by, ..a.clone() };
            fit_cmd::run_fit(&a, &run, out, err)
        }),
        Command::Infer(a) => layout(&a.input, None, false).and_then(|(input, _)| {
            let a = args::InferArgs { input, ..a.clone() };
            infer_cmd::run_infer(&a, &run, out, err)
        }),
        Command::Rank(a) => {
            layout(&a.input, a.search.by.as_ref(), false).and_then(|(input, by)| {
                let search = args::SearchArgs { by, ..a.search.clone() };
                let a = args::RankArgs { input, search, ..a.clone() };
                rank_cmd::run_rank(&a, &run, out, err)
            })
        }
        Command::Report(a) => {
            layout(&a.input, a.search.by.as_ref(), true).and_then(|(input, by)| {
                let search = args::SearchArgs { by, ..a.search.clone() };
                let a = args::ReportArgs { input, search, ..a.clone() };
                report_cmd::run_report(&a, &run, out, err)
            })
        }
        Command::Models(a) => models_cmd::run_models(a, out),
    };
    match result {
        Ok(Outcome::Success) => EXIT_OK,
        Ok(Outcome::NotConverged(msg)) => {
            let _ = writeln!(err, "foothold: error: {msg}");
            EXIT_NOT_CONVERGED
        }
        Err(e) => {
            let _ = writeln!(err, "foothold: error: {e}");
            EXIT_USAGE
        }
    }
}

/// Help and version go to `out` with exit 0; usage errors to `err` with exit 2.
fn clap_exit(e: clap::Error, out: &mut dyn Write, err: &mut dyn Write) -> i32 {
    let text = e.render().to_string();
    match e.kind() {
        ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
            match output::write_stdout(text.as_bytes(), out) {
                Ok(()) => EXIT_OK,
                Err(e) => {
                    let _ = writeln!(err, "foothold: error: {e}");
                    EXIT_USAGE
                }
            }
        }
        ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
            let _ = err.write_all(text.as_bytes());
            EXIT_USAGE
        }
        _ => {
            let body = text.strip_prefix("error: ").unwrap_or(&text);
            let _ = write!(err, "foothold: error: {body}");
            if !body.ends_with('\n') {
                let _ = writeln!(err);
            }
            EXIT_USAGE
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn run_args(args: &[&str]) -> (i32, String, String) {
        let (mut out, mut err) = (Vec::new(), Vec::new());
        let code = run_from(
            std::iter::once("foothold").chain(args.iter().copied()),
            &mut out,
            &mut err,
        );
        (
            code,
            String::from_utf8_lossy(&out).into_owned(),
            String::from_utf8_lossy(&err).into_owned(),
        )
    }

    #[test]
    fn help_and_version_exit_zero() {
        let (code, out, _) = run_args(&["--help"]);
        assert_eq!(code, 0);
        assert!(out.contains("fit") && out.contains("infer"), "{out}");
        let (code, out, _) = run_args(&["fit", "--help"]);
        assert_eq!(code, 0);
        assert!(out.contains("--start") && out.contains("--sheet"), "{out}");
        let (code, out, _) = run_args(&["--version"]);
        assert_eq!(code, 0);
        assert!(out.starts_with("foothold "), "{out}");
    }

    #[test]
    fn usage_errors_exit_two_with_one_prefix() {
        let (code, _, err) = run_args(&[]);
        assert_eq!(code, 2);
        assert!(err.contains("Usage: foothold <COMMAND>"), "{err}");
        for args in [
            vec!["fly"],
            vec!["fit"],
            vec!["fit", "d.csv"],
            vec!["fit", "d.csv", "--model", "a*x", "--format", "xml"],
        ] {
            let (code, _, err) = run_args(&args);
            assert_eq!(code, 2, "{args:?}");
            assert!(err.starts_with("foothold: error: "), "{args:?}: {err}");
            assert!(!err.contains("error: error"), "{err}");
        }
    }

    #[test]
    fn rank_options_parse_and_models_lists_the_library() {
        let args = [
            "rank", "d.csv", "--model", "a*x", "--starts", "50", "--seed", "7", "--top", "3",
        ];
        let (code, _, err) = run_args(&args);
        assert_eq!(code, 2, "{args:?}");
        assert!(err.contains("d.csv: no such file"), "{args:?}: {err}");
        let (code, out, _) = run_args(&["models"]);
        assert_eq!(code, 0);
        assert!(
            out.contains("michaelis-menten") && out.contains("vmax*x/(km + x)"),
            "{out}"
        );
    }
}
