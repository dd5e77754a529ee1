//! The command line's shape (clap 4 derive): one struct per subcommand, built
//! from shared groups so that later commands extend them easily.

use crate::data::{parse_decimal, parse_separator, DecimalMark, Separator};
use clap::{Args, Parser, Subcommand, ValueEnum};
use std::path::PathBuf;

/// foothold: starting values for nonlinear regression, ranked multistart, converged fits.
#[derive(Debug, Parser)]
#[command(name = "foothold", version, about, max_term_width = 100)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Fit a model to data, one curve or one per group (--by); starting values are worked out
    /// unless given (--start).
    Fit(FitArgs),
    /// Work out starting values from the model and the data, with how each was obtained.
    Infer(InferArgs),
    /// Rank candidate starts by a multistart search: distinct minima with the starts that reach them.
    Rank(RankArgs),
    /// Write a full HTML report of a fit: data, features, starts (worked out unless given), estimates,
    /// plots.
    Report(ReportArgs),
    /// List the model library: names usable with --model.
    Models(ModelsArgs),
}

/// Where the data is and which model to fit.
#[derive(Debug, Clone, Args)]
pub struct InputArgs {
    /// Data: CSV, tab- or space-separated text with a header line; a workbook
    /// (.xlsx, .xlsm, .xlsb, .xls); or - for standard input (text).
    #[arg(value_name = "DATA")]
    pub data: String,
    /// Model formula, e.g. "y = a*exp(-k*x)" (names that are columns are
    /// variables, all other names are parameters), or the name of a library
    /// model, e.g. michaelis-menten (see `foothold models`). A formula may start with '-'.
    #[arg(long, short = 'm', value_name = "FORMULA|NAME", allow_hyphen_values = true)]
    pub model: String,
    /// Data column for the model's variable `x` (library models are written in x).
    #[arg(long = "x", value_name = "COLUMN")]
    pub x: Option<String>,
    /// Response column when the formula has no left-hand side [default: y]. Several
    /// replicate columns, as a list (rep1,rep2,rep3), a range (rep1..rep3) or a
    /// pattern (rep*), are pooled into one response (one observation per non-empty
    /// cell), named by the formula's left-hand side, else y.
    #[arg(long = "y", value_name = "COLUMN|COLUMNS")]
    pub y: Option<String>,
    /// Workbook sheet, by name or 1-based number [default: the first].
    #[arg(long, value_name = "SHEET")]
    pub sheet: Option<String>,
    /// Cell delimiter of a text file: one character such as ';' or '|', or tab, space
    /// (runs of spaces) [default: guessed from the first lines].
    #[arg(long, value_name = "CHAR", value_parser = parse_separator)]
    pub delimiter: Option<Separator>,
    /// Decimal mark of a text file: . or , [default: ., or , in a ';'-separated
    /// file whose numbers are written 1,5].
    #[arg(long, value_name = "MARK", value_parser = parse_decimal)]
    pub decimal: Option<DecimalMark>,
    /// Row of the column names: line of a text file or row of a sheet, 1-based
    /// [default: the first row of names followed by a row of numbers; rows above are titles].
    #[arg(long, value_name = "N")]
    pub header_row: Option<usize>,
    /// Wide layout with one column per sample: each column named (a list S1,S2, a
    /// range S1..S12 or a pattern S*) becomes a group of its own, fitted separately
    /// (fit and report); the groups are labelled `sample`.
    #[arg(long, value_name = "COLUMNS")]
    pub wide_groups: Option<String>,
    /// Replicate columns pooled into the response (set from `--y COLUMNS`).
    #[arg(skip)]
    pub pooled_y: Option<String>,
}

/// How results are printed.
#[derive(Debug, Clone, Args)]
pub struct OutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Print no warnings (errors are always printed).
    #[arg(long, short = 'q', conflicts_with = "verbose")]
    pub quiet: bool,
    /// Also print details of the run (stop reason, counts, timings) to stderr.
    #[arg(long, short = 'v')]
    pub verbose: bool,
}

/// Output formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned plain-text table.
    Table,
    /// JSON document.
    Json,
    /// YAML document (same fields as JSON).
    Yaml,
    /// Comma-separated values with a header line.
    Csv,
}

/// The budget and seed of the multistart search, shared by every command that runs it.
#[derive(Debug, Clone, Default, Args)]
pub struct SearchBudget {
    /// Number of candidate starts to refine [default: 64].
    #[arg(long, value_name = "N")]
    pub starts: Option<usize>,
    /// Seed of the quasi-random draws: the same seed gives the same result.
    #[arg(long, value_name = "N")]
    pub seed: Option<u64>,
    /// Stop the search after this many seconds (results then depend on speed).
    #[arg(long, value_name = "SECONDS")]
    pub time_limit: Option<f64>,
}

/// Options of the multistart search, shared by `rank` and `report`.
#[derive(Debug, Clone, Args)]
pub struct SearchArgs {
    #[command(flatten)]
    pub budget: SearchBudget,
    /// Fit each group of rows sharing a value of this column separately.
    #[arg(long, value_name = "COLUMN")]
    pub by: Option<String>,
}

/// `fit`: a local fit from the given starting values, or from those worked out.
#[derive(Debug, Clone, Args)]
pub struct FitArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Optional starting values, NAME=VALUE, comma-separated or repeated; when given, every
    /// parameter needs one. Without --start they are worked out (inference, then the multistart
    /// search).
    #[arg(long, value_name = "NAME=VALUE,...", value_delimiter = ',')]
    pub start: Vec<String>,
    /// The search that finds starts when none are given.
    #[command(flatten)]
    pub search: SearchBudget,
    /// Fit each group of rows sharing a value of this column (text labels or numbers) separately;
    /// one summary row per group.
    #[arg(long, value_name = "COLUMN")]
    pub by: Option<String>,
    /// Write the result to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write the survey and fit plots (survey.svg/png, fit.svg/png) into this directory.
    #[arg(long, value_name = "DIR")]
    pub plots: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `infer`: starting values with how each was obtained.
#[derive(Debug, Clone, Args)]
pub struct InferArgs {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `rank`: candidate starts ranked by a multistart search.
#[derive(Debug, Clone, Args)]
pub struct RankArgs {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub search: SearchArgs,
    /// Show the best N distinct minima.
    #[arg(long, value_name = "N")]
    pub top: Option<usize>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `report`: a full report of the fit written to a file.
#[derive(Debug, Clone, Args)]
pub struct ReportArgs {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub search: SearchArgs,
    /// Optional starting values, NAME=VALUE, comma-separated or repeated; when given, every
    /// parameter needs one. Without --start they are worked out (inference, then the multistart
    /// search).
    #[arg(long, value_name = "NAME=VALUE,...", value_delimiter = ',')]
    pub start: Vec<String>,
    /// HTML file to write [default: standard output].
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Also write the survey and fit plots (survey.svg/png, fit.svg/png) into this directory.
    #[arg(long, value_name = "DIR")]
    pub plots: Option<PathBuf>,
    /// Print no warnings.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

/// `models`: the model library.
#[derive(Debug, Clone, Args)]
pub struct ModelsArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}
