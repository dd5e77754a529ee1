//! The bad-input matrix: one table of inputs that must be refused, each run
//! through the real `foothold` binary under a watchdog. Every case must exit
//! with its code (2 for bad input), print nothing on stdout, never panic, and
//! print exactly one `foothold: error:` line on stderr that names the problem
//! and where (a formula error adds the caret block: the formula and a caret
//! under the character; a usage error from the argument parser adds its usage
//! lines). The test runs every case, prints `bad-input matrix: N tried, M
//! passed` and each failure, then asserts that all passed.

mod common;

use std::io::{Read, Write};
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// Longest a case may run before the watchdog kills it (a hang counts as a failure).
const WATCHDOG: Duration = Duration::from_secs(60);
/// Bytes piped into the stream case: 1 GiB, generated as it is written.
const STREAM_BYTES: u64 = 1 << 30;
/// Peak memory allowed while refusing the 1 GiB stream: the reader's 256 MiB
/// limit (engine/data/limits.rs) plus room for the program itself. A reader
/// that kept the whole stream would need 1 GiB.
const STREAM_PEAK_LIMIT_KIB: u64 = 512 * 1024;

/// A small valid table: the cases that are not about the file use it.
const GOOD: &[u8] = b"x,y\n1,2.1\n2,3.9\n3,6.2\n4,7.8\n";

/// What stderr must look like besides the one error line.
#[derive(Clone, Copy, PartialEq, Debug)]
enum Shape {
    /// Exactly one line.
    OneLine,
    /// The error line, the formula, and a caret under the stated character.
    Caret,
    /// The argument parser's error line followed by its usage lines.
    Usage,
}

/// What goes to the binary's standard input.
enum Stdin {
    Bytes(Vec<u8>),
    /// `x,y` then rows of `1,2`, generated lazily up to this many bytes.
    Endless(u64),
}

/// One row of the matrix. In `args`, `{file}` is replaced by the path of the
/// case's scratch file (holding `file`) and `{dir}` by its scratch folder.
struct Case {
    name: String,
    args: Vec<String>,
    file: Option<Vec<u8>>,
    stdin: Stdin,
    wants: Vec<String>,
    shape: Shape,
    code: i32,
    /// Standard output goes to /dev/full (every write fails: no space left).
    stdout_full: bool,
}

fn case(name: &str, args: &[&str], file: Option<&[u8]>, wants: &[&str]) -> Case {
    Case {
        name: name.to_string(),
        args: args.iter().map(|s| s.to_string()).collect(),
        file: file.map(|b| b.to_vec()),
        stdin: Stdin::Bytes(Vec::new()),
        wants: wants.iter().map(|s| s.to_string()).collect(),
        shape: Shape::OneLine,
        code: 2,
        stdout_full: false,
    }
}

/// `fit {file} --model MODEL [more args]` on `data`.
fn fit(name: &str, data: &[u8], model: &str, more: &[&str], wants: &[&str]) -> Case {
    let mut args = vec!["fit", "{file}", "--model", model];
    args.extend_from_slice(more);
    case(name, &args, Some(data), wants)
}

/// A formula case on the good table: caret block expected.
fn formula(name: &str, model: &str, wants: &[&str]) -> Case {
    let mut c = fit(name, GOOD, model, &[], wants);
    c.args[3] = format!("--model={model}");
    c.args.remove(2);
    c.shape = Shape::Caret;
    c
}

fn with_shape(mut c: Case, shape: Shape) -> Case {
    c.shape = shape;
    c
}

fn with_stdin(mut c: Case, stdin: Stdin) -> Case {
    c.stdin = stdin;
    c
}

/// The case with standard output on /dev/full.
fn to_full(mut c: Case) -> Case {
    c.stdout_full = true;
    c
}

/// Every case. Messages are matched by fragments naming the problem and where.
fn matrix() -> Vec<Case> {
    let m2 = "a*exp(-k*x)";
    let s = |v: &str| -> Vec<u8> { v.as_bytes().to_vec() };
    let long_formula = "x+".repeat(50_000) + "a";
    let deep_formula = "-".repeat(100_000) + "a*x";
    let deep_within_limit = "(".repeat(9_000) + "a*x" + &")".repeat(9_000);
    vec![
        // ---- files ----
        case(
            "missing file",
            &[
                "fit",
                "{dir}/absent.csv",
                "--model",
                "a*x",
                "--start",
                "a=1",
            ],
            None,
            &["absent.csv", "no such file"],
        ),
        case(
            "missing file (rank)",
            &["rank", "{dir}/no-such-file.csv", "--model", "a*x"],
            None,
            &["no-such-file.csv", "no such file"],
        ),
        case(
            "directory",
            &["fit", "{dir}", "--model", "a*x", "--start", "a=1"],
            None,
            &["is a directory"],
        ),
        fit(
            "empty file",
            b"",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "is empty"],
        ),
        fit(
            "only comments and blank lines",
            b"# nothing here\n\n",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "is empty"],
        ),
        fit(
            "binary file (NUL bytes)",
            b"x,y\n\x00\x00\x01",
            "a*x",
            &["--start", "a=1"],
            &[
                "{file}",
                "NUL byte at byte 5",
                "does not look like a text table",
            ],
        ),
        fit(
            "binary file (invalid UTF-8)",
            b"x,y\n1,2\n\xff\xfe",
            "a*x",
            &[],
            &["{file}", "invalid UTF-8 at byte 9"],
        ),
        fit(
            "workbook that is not one",
            b"not a zip archive",
            "a*x",
            &[],
            &["cannot read workbook", ".xlsx"],
        ),
        fit(
            "OpenDocument spreadsheet (refused: repeat counts can exhaust memory)",
            b"PK\x03\x04",
            "a*x",
            &[],
            &["{file}", ".ods", "save the sheet as .xlsx or CSV"],
        ),
        fit(
            "header only",
            b"x,y\n",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "no data rows"],
        ),
        fit(
            "no header line",
            b"1,2\n3,4\n",
            "a*x",
            &[],
            &["{file}", "line 1", "first line holds numbers"],
        ),
        fit(
            "ragged rows",
            b"x,y\n1,2\n2,3,4\n",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "line 3", "expected 2 cells", "found 3"],
        ),
        fit(
            "text in a numeric cell",
            b"x,y\n1,2\n# note\n2,abc\n",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "line 4", "column 'y'", "'abc' is not a number"],
        ),
        with_stdin(
            case(
                "text in a numeric cell on standard input",
                &["fit", "-", "--model", "a*x", "--start", "a=1"],
                None,
                &[
                    "standard input, line 3",
                    "column 'y'",
                    "'n/a' is not a number",
                ],
            ),
            Stdin::Bytes(s("x y\n1 2\n2 n/a\n")),
        ),
        fit(
            "NaN cell",
            b"x,y\n1,NaN\n",
            "a*x",
            &["--start", "a=1"],
            &[
                "{file}",
                "line 2",
                "column 'y'",
                "'NaN' is not a finite number",
            ],
        ),
        fit(
            "-inf cell",
            b"x\ty\n1\t2\n-inf\t3\n",
            "a*x",
            &["--start", "a=1"],
            &["line 3", "column 'x'", "'-inf' is not a finite number"],
        ),
        fit(
            "number beyond the double range",
            b"x,y\n1,2\n2,1e999\n",
            "a*x",
            &[],
            &["line 3", "column 'y'", "'1e999' is not a finite number"],
        ),
        fit(
            "duplicated column names",
            b"x,y,x\n1,2,3\n",
            "a*x",
            &["--start", "a=1"],
            &["{file}", "line 1", "'x' appears twice", "columns 1 and 3"],
        ),
        fit(
            "empty column name",
            b"x,,y\n1,2,3\n",
            "a*x",
            &["--start", "a=1"],
            &["line 1", "column 2 of the header has no name"],
        ),
        // ---- layouts (issue 17) ----
        fit(
            "ambiguous decimal marks in a ;-separated file",
            b"x;y\n1;2,5\n2;3.5\n3;4,5\n",
            "a*x",
            &[],
            &[
                "{file}",
                "decimal marks are ambiguous",
                "line 2, column 2 has a decimal comma",
                "line 3, column 2 a decimal point",
                "--decimal",
            ],
        ),
        fit(
            "decimal comma in a tab-separated file",
            b"x\ty\n1\t2,5\n2\t3,5\n",
            "a*x",
            &[],
            &["{file}", "line 2", "column 'y'", "'2,5' is not a number", "try --decimal ,"],
        ),
        fit(
            "--decimal , with a comma delimiter",
            GOOD,
            "a*x",
            &["--decimal", ","],
            &["{file}", "the comma cannot be both the delimiter and the decimal mark"],
        ),
        fit(
            "--y pattern matching no column",
            b"dose,rep1,rep2\n1,2,3\n2,4,5\n",
            "a*x",
            &["--x", "dose", "--y", "S*"],
            &["--y 'S*' matches no column of {file}", "columns: dose, rep1, rep2"],
        ),
        fit(
            "--wide-groups range past the last column",
            b"dose,S1,S2\n1,2,3\n2,4,5\n",
            "a*x",
            &["--x", "dose", "--wide-groups", "S1..S3"],
            &["column 'S3' is not in {file}", "columns: dose, S1, S2"],
        ),
        fit(
            "--header-row beyond the end",
            GOOD,
            "a*x",
            &["--header-row", "9"],
            &["{file}", "--header-row 9 is past the end of the table", "last row is 5"],
        ),
        fit(
            "--header-row on a blank line",
            b"Plate 3\n\nx,y\n1,2\n2,4\n",
            "a*x",
            &["--header-row", "2"],
            &["{file}", "--header-row 2 is a blank or comment row"],
        ),
        with_shape(
            fit(
                "--delimiter of two characters",
                GOOD,
                "a*x",
                &["--delimiter", ";;"],
                &["';;' is not a delimiter"],
            ),
            Shape::Usage,
        ),
        fit(
            "--wide-groups with --by",
            b"dose,S1,S2,plate\n1,2,3,1\n2,4,5,1\n",
            "a*x",
            &["--x", "dose", "--wide-groups", "S*", "--by", "plate"],
            &["--wide-groups makes the groups (one per column); drop --by"],
        ),
        case(
            "--wide-groups with rank",
            &["rank", "{file}", "--model", "a*x", "--wide-groups", "S*"],
            Some(b"x,S1,S2\n1,2,3\n2,4,5\n"),
            &["--wide-groups fits one curve per column; use it with fit or report"],
        ),
        fit(
            "no complete row in the used columns",
            b"x,y,z\n1,2,\n2,3,\n3,4,\n",
            "a*x + z",
            &[],
            &["{file}", "no row has values in all of x, z, y"],
        ),
        fit(
            "--sheet on a text file",
            GOOD,
            "a*x",
            &["--sheet", "2"],
            &["--sheet applies to workbooks", "{file}"],
        ),
        // ---- data that cannot carry the model ----
        fit(
            "too few rows for the parameters (inferred starts)",
            b"x,y\n1,2\n2,3\n",
            "a*exp(-k*x) + c",
            &[],
            &[
                "2 usable rows are too few for 3 parameters",
                "need at least 4",
            ],
        ),
        fit(
            "too few rows for the parameters (given starts)",
            b"x,y\n1,2\n2,3\n",
            "a*exp(-k*x) + c",
            &["--start", "a=1,k=1,c=1"],
            &["2 usable rows are too few for 3 parameters"],
        ),
        fit(
            "constant response, no --start",
            b"x,y\n1,5\n2,5\n3,5\n4,5\n5,5\n",
            m2,
            &[],
            &[
                "response 'y' is constant",
                "5 in all 5 rows",
                "give --start",
            ],
        ),
        case(
            "constant response (infer)",
            &["infer", "{file}", "--model", m2],
            Some(b"x,y\n1,5\n2,5\n3,5\n4,5\n5,5\n"),
            &["response 'y' is constant", "5 in all 5 rows"],
        ),
        fit(
            "log(y) response with y <= 0",
            b"x,y\n1,2\n2,-1\n3,4\n4,5\n",
            "log(y) = a + b*x",
            &[],
            &["log(y)", "data row 2", "column 'y' = -1"],
        ),
        fit(
            "a*log(x) with x = 0 (inferred starts)",
            b"x,y\n1,2\n,3\n0,3\n3,4\n4,5\n",
            "a*log(x) + b",
            &[],
            &["log(x) is undefined", "data row 3", "column 'x' = 0"],
        ),
        fit(
            "a*log(x) with x < 0 (given starts)",
            b"x,y\n1,2\n-2,3\n3,4\n4,5\n",
            "a*log(x) + b",
            &["--start", "a=1,b=1"],
            &["log(x) is undefined", "data row 2", "column 'x' = -2"],
        ),
        fit(
            "sqrt of a negative predictor",
            b"t,y\n1,2\n2,3\n-3,4\n4,5\n",
            "y = a*sqrt(t)",
            &[],
            &["sqrt(t) is undefined", "data row 3", "column 't' = -3"],
        ),
        fit(
            "division by a zero predictor",
            b"x,y\n1,2\n0,3\n3,4\n4,5\n",
            "a/x + b",
            &[],
            &["a/x is undefined", "data row 2", "column 'x' = 0"],
        ),
        // ---- columns ----
        fit(
            "unknown --x column",
            GOOD,
            "a*x",
            &["--x", "nope"],
            &["--x names column 'nope'", "{file}", "columns: x, y"],
        ),
        fit(
            "unknown --y column",
            GOOD,
            "a*x",
            &["--y", "height", "--start", "a=1"],
            &["--y names column 'height'", "columns: x, y"],
        ),
        fit(
            "unknown --by column",
            GOOD,
            "a*x",
            &["--by", "nope"],
            &["--by names column 'nope'", "columns: x, y"],
        ),
        fit(
            "left-hand side names no column",
            GOOD,
            "yy = a*x",
            &[],
            &["'yy' names no data column"],
        ),
        fit(
            "response column also a predictor",
            GOOD,
            "a*x + b*y",
            &["--start", "a=1,b=1"],
            &["response column 'y' is also used as a predictor"],
        ),
        fit(
            "--x naming the response",
            GOOD,
            "a*x",
            &["--x", "y"],
            &["response column 'y' is also used as a predictor"],
        ),
        // ---- formulas ----
        formula(
            "unbalanced '('",
            "a*exp(-k*x",
            &["unbalanced '('", "at character 6"],
        ),
        formula(
            "unbalanced ')'",
            "a*x)",
            &["unbalanced ')'", "at character 4"],
        ),
        formula(
            "dangling operator",
            "a*x+",
            &["ends too early", "at character 5"],
        ),
        formula("doubled operator", "a+*x", &["found '*'", "at character 3"]),
        formula("leading '='", "= a*x", &["found '='", "at character 1"]),
        formula("two '='", "y=a*x=b", &["at most one '='", "at character 6"]),
        formula(
            "missing right-hand side",
            "y = ",
            &["right-hand side after '='"],
        ),
        formula(
            "unknown function",
            "a*foo(x)",
            &["unknown function 'foo'", "at character 3"],
        ),
        formula("stray character", "a*x $ b", &["'$'", "at character 5"]),
        formula("number too large", "1e999*a*x", &["'1e999' is too large"]),
        formula("empty formula", "", &["formula is empty"]),
        formula("blank formula", "   ", &["formula is empty"]),
        formula(
            "error in a formula with a line break",
            "a*exp(\n-k*x",
            &["unbalanced '('", "at character 6"],
        ),
        fit(
            "formula with no parameters",
            GOOD,
            "2*x + 1",
            &[],
            &["has no parameters", "(x)"],
        ),
        fit(
            "formula with no data column",
            GOOD,
            "a*b",
            &[],
            &["uses no data column"],
        ),
        fit(
            "parameters on the left-hand side",
            GOOD,
            "a*x = y",
            &[],
            &["left-hand side must not contain parameters (a)"],
        ),
        fit(
            "misspelt library model",
            GOOD,
            "michaelis-menton",
            &[],
            &[
                "'michaelis-menton' is not a model",
                "did you mean michaelis-menten?",
            ],
        ),
        fit(
            "library name written with '_'",
            GOOD,
            "michaelis_menten",
            &[],
            &[
                "'michaelis_menten' is not a model",
                "did you mean michaelis-menten?",
            ],
        ),
        formula(
            "'~' instead of '='",
            "y ~ a*x",
            &["unexpected character '~'", "write '='", "at character 3"],
        ),
        // ---- starting values ----
        fit(
            "--start names no parameter",
            GOOD,
            m2,
            &["--start", "a=1,q=2"],
            &["'q', which is not a parameter", "(parameters: a, k)"],
        ),
        fit(
            "--start gives a parameter twice",
            GOOD,
            m2,
            &["--start", "a=1", "--start", "a=2,k=1"],
            &["'a' more than once"],
        ),
        fit(
            "--start value not a number",
            GOOD,
            m2,
            &["--start", "a=big,k=1"],
            &["'big' is not a finite number", "(parameters: a, k)"],
        ),
        fit(
            "--start value infinite",
            GOOD,
            m2,
            &["--start", "a=inf,k=1"],
            &["'inf' is not a finite number"],
        ),
        fit(
            "--start value NaN",
            GOOD,
            m2,
            &["--start", "a=1,k=nan"],
            &["'nan' is not a finite number"],
        ),
        fit(
            "--start value overflowing",
            GOOD,
            m2,
            &["--start", "a=1e999,k=1"],
            &["'1e999' is not a finite number"],
        ),
        fit(
            "--start misses a parameter",
            GOOD,
            m2,
            &["--start", "a=1"],
            &["no value for k", "(parameters: a, k)"],
        ),
        fit(
            "--start item not NAME=VALUE",
            GOOD,
            m2,
            &["--start", "a:1,k=1"],
            &["'a:1' is not NAME=VALUE"],
        ),
        // ---- options ----
        with_shape(
            case(
                "no data argument",
                &["fit", "--model", "a*x"],
                None,
                &["required"],
            ),
            Shape::Usage,
        ),
        with_shape(
            fit(
                "unknown output format",
                GOOD,
                "a*x",
                &["--format", "xml"],
                &["'xml'"],
            ),
            Shape::Usage,
        ),
        fit(
            "--plots with --by",
            GOOD,
            "a*x",
            &["--by", "x", "--plots", "{dir}/plots"],
            &["--plots draws one curve", "--by"],
        ),
        fit(
            "--out into a missing folder",
            GOOD,
            "a*x",
            &["--start", "a=1", "--out", "{dir}/missing/out.txt"],
            &["cannot write", "missing/out.txt"],
        ),
        // ---- output that cannot be written ----
        to_full(case(
            "models to a full standard output",
            &["models"],
            None,
            &["cannot write standard output", "No space left on device"],
        )),
        to_full(fit(
            "fit to a full standard output",
            GOOD,
            "a*x",
            &["--start", "a=1"],
            &["cannot write standard output", "No space left on device"],
        )),
        to_full(case(
            "infer to a full standard output",
            &["infer", "{file}", "--model", "a*x + b"],
            Some(GOOD),
            &["cannot write standard output", "No space left on device"],
        )),
        to_full(case(
            "rank to a full standard output",
            &["rank", "{file}", "--model", "a*x + b", "--starts", "4"],
            Some(GOOD),
            &["cannot write standard output", "No space left on device"],
        )),
        to_full(case(
            "report to a full standard output",
            &["report", "{file}", "--model", "a*x + b"],
            Some(GOOD),
            &["cannot write standard output", "No space left on device"],
        )),
        to_full(case(
            "batch fit to a full standard output",
            &["fit", "{file}", "--model", "a*x", "--by", "g"],
            Some(b"g,x,y\nA,1,2\nA,2,4.1\nB,1,3\nB,2,5.9\n"),
            &["cannot write standard output", "No space left on device"],
        )),
        fit(
            "--out on a full device",
            GOOD,
            "a*x",
            &["--start", "a=1", "--out", "/dev/full"],
            &["cannot write /dev/full", "No space left on device"],
        ),
        case(
            "report --out on a full device",
            &["report", "{file}", "--model", "a*x", "--out", "/dev/full"],
            Some(GOOD),
            &["cannot write /dev/full", "No space left on device"],
        ),
        fit(
            "--by column named like a summary column",
            b"status,x,y\nA,1,2\nA,2,4.1\nB,1,3\nB,2,5.9\n",
            "a*x",
            &["--by", "status"],
            &["--by status", "already one of its own columns"],
        ),
        case(
            "rank --by",
            &["rank", "{file}", "--model", "a*x", "--by", "x"],
            Some(GOOD),
            &["rank --by is not supported"],
        ),
        // ---- absurd sizes ----
        // Linux caps one argument at 128 KiB (MAX_ARG_STRLEN), so the longest
        // formula the binary can be given is ~131,000 characters; the parser's
        // own test (engine/symbolic/parse.rs) takes one of 10^7 characters.
        formula(
            "formula of 100,001 characters",
            &long_formula,
            &["100001 characters long", "the limit is 20000"],
        ),
        formula(
            "formula nested 10^5 deep (unary minus)",
            &deep_formula,
            &["100003 characters long", "the limit is 20000"],
        ),
        formula(
            "formula nested 9,000 deep within the length limit",
            &deep_within_limit,
            &["nested more than 500 levels deep"],
        ),
        with_stdin(
            case(
                "1 GiB on standard input",
                &["fit", "-", "--model", "a*x"],
                None,
                &["standard input is larger than the input limit", "(256 MiB)"],
            ),
            Stdin::Endless(STREAM_BYTES),
        ),
    ]
}

/// What one run of the binary gave.
struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
    elapsed: Duration,
    timed_out: bool,
    /// Peak resident memory in KiB and how it was measured, when measured.
    peak_kib: Option<(u64, &'static str)>,
    /// Bytes the binary took from standard input before it stopped reading.
    stdin_written: u64,
}

fn gnu_time() -> Option<&'static Path> {
    let p = Path::new("/usr/bin/time");
    let ok = Command::new(p)
        .args(["-v", "-o", "/dev/null", "true"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|s| s.success());
    ok.then_some(p)
}

/// Writes `x,y` then `1,2` rows until `total` bytes or the reader stops (EPIPE).
fn write_endless(mut w: impl Write, total: u64) -> u64 {
    let mut chunk = Vec::with_capacity(1 << 16);
    while chunk.len() + 4 <= 1 << 16 {
        chunk.extend_from_slice(b"1,2\n");
    }
    let mut written = 0u64;
    if w.write_all(b"x,y\n").is_err() {
        return 0;
    }
    written += 4;
    while written < total {
        match w.write_all(&chunk) {
            Ok(()) => written += chunk.len() as u64,
            Err(_) => break, // broken pipe: the binary stopped reading
        }
    }
    written
}

/// The peak resident set (VmHWM, KiB) of a running process, read from /proc.
fn vm_hwm(pid: u32) -> Option<u64> {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn run_case(c: &Case, dir: &Path, file: &Path) -> Run {
    let sub = |a: &str| {
        a.replace("{file}", file.to_str().unwrap())
            .replace("{dir}", dir.to_str().unwrap())
    };
    let args: Vec<String> = c.args.iter().map(|a| sub(a)).collect();
    let endless = matches!(c.stdin, Stdin::Endless(_));
    let time_out = dir.join("time.txt");
    let timer = if endless { gnu_time() } else { None };
    let mut cmd = match timer {
        Some(t) => {
            let mut cmd = Command::new(t);
            cmd.arg("-v").arg("-o").arg(&time_out);
            cmd.arg(env!("CARGO_BIN_EXE_foothold"));
            cmd
        }
        None => Command::new(env!("CARGO_BIN_EXE_foothold")),
    };
    let clock = Instant::now();
    let stdout = if c.stdout_full {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .expect("/dev/full (Linux) is needed by the output cases");
        Stdio::from(full)
    } else {
        Stdio::piped()
    };
    let mut child: Child = cmd
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(&args)
        .stdin(Stdio::piped())
        .stdout(stdout)
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary starts");
    let stdin = child.stdin.take().unwrap();
    let writer = match &c.stdin {
        Stdin::Bytes(b) => {
            let b = b.clone();
            std::thread::spawn(move || {
                let mut stdin = stdin;
                let _ = stdin.write_all(&b); // the binary may not read it
                b.len() as u64
            })
        }
        Stdin::Endless(total) => {
            let total = *total;
            std::thread::spawn(move || write_endless(stdin, total))
        }
    };
    let out_pipe = child.stdout.take();
    let mut err_pipe = child.stderr.take().unwrap();
    let out_reader = std::thread::spawn(move || {
        let mut v = Vec::new();
        if let Some(mut p) = out_pipe {
            let _ = p.read_to_end(&mut v);
        }
        v
    });
    let err_reader = std::thread::spawn(move || {
        let mut v = Vec::new();
        let _ = err_pipe.read_to_end(&mut v);
        v
    });
    let mut hwm: Option<u64> = None;
    let mut timed_out = false;
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break Some(s);
        }
        if endless && timer.is_none() {
            hwm = vm_hwm(child.id()).max(hwm);
        }
        if clock.elapsed() > WATCHDOG {
            let _ = child.kill();
            let _ = child.wait();
            timed_out = true;
            break None;
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    let elapsed = clock.elapsed();
    let stdin_written = writer.join().unwrap();
    let stdout = String::from_utf8_lossy(&out_reader.join().unwrap()).into_owned();
    let stderr = String::from_utf8_lossy(&err_reader.join().unwrap()).into_owned();
    let peak_kib = if !endless {
        None
    } else if timer.is_some() {
        std::fs::read_to_string(&time_out).ok().and_then(|t| {
            t.lines()
                .find(|l| l.contains("Maximum resident set size"))
                .and_then(|l| l.rsplit(':').next())
                .and_then(|v| v.trim().parse().ok())
                .map(|v| (v, "/usr/bin/time -v"))
        })
    } else {
        hwm.map(|v| (v, "VmHWM sampled from /proc"))
    };
    Run {
        code: status.and_then(|s| s.code()),
        stdout,
        stderr,
        elapsed,
        timed_out,
        peak_kib,
        stdin_written,
    }
}

/// The problems with one run, empty when the case passed.
fn check(c: &Case, r: &Run, file: &Path) -> Vec<String> {
    let mut bad = Vec::new();
    if r.timed_out {
        bad.push(format!("still running after {WATCHDOG:?}: killed"));
        return bad;
    }
    if r.code != Some(c.code) {
        bad.push(format!("exit code {:?}, want {}", r.code, c.code));
    }
    if !r.stdout.is_empty() {
        bad.push(format!("stdout not empty: {:.200}", r.stdout));
    }
    if r.stderr.contains("panicked") {
        bad.push("panicked".into());
    }
    let lines: Vec<&str> = r.stderr.lines().collect();
    let errors = lines
        .iter()
        .filter(|l| l.starts_with("foothold: error: "))
        .count();
    if errors != 1 || !r.stderr.starts_with("foothold: error: ") {
        bad.push(format!(
            "{errors} 'foothold: error:' lines, want exactly one, first"
        ));
    }
    match c.shape {
        Shape::OneLine if lines.len() != 1 => {
            bad.push(format!("{} stderr lines, want 1", lines.len()))
        }
        Shape::Caret => bad.extend(check_caret(c, &lines)),
        _ => {}
    }
    let first = lines.first().copied().unwrap_or("");
    for w in &c.wants {
        let w = w.replace("{file}", file.to_str().unwrap());
        if !first.contains(&w) {
            bad.push(format!("message lacks {w:?}"));
        }
    }
    if matches!(c.stdin, Stdin::Endless(_)) {
        bad.extend(check_stream(r));
    }
    if !bad.is_empty() {
        bad.push(format!("stderr was: {:.400}", r.stderr));
    }
    bad
}

/// A caret block: the formula (or the part of it around the error) on the
/// second line, and on the third a caret under the character the first line states.
fn check_caret(c: &Case, lines: &[&str]) -> Vec<String> {
    if lines.len() != 3 {
        return vec![format!(
            "{} stderr lines, want 3 (caret block)",
            lines.len()
        )];
    }
    let Some(stated) = lines[0]
        .split("at character ")
        .nth(1)
        .and_then(|t| t.split_whitespace().next())
        .and_then(|n| n.parse::<usize>().ok())
    else {
        return vec!["no 'at character N' in the message".into()];
    };
    let model = c
        .args
        .iter()
        .find_map(|a| a.strip_prefix("--model="))
        .unwrap_or("");
    let formula: Vec<char> = model.chars().collect();
    let shown: Vec<char> = lines[1].chars().collect();
    let Some(col) = lines[2].find('^') else {
        return vec!["no caret on the third line".into()];
    };
    let at_caret = shown.get(col).copied();
    let want = formula.get(stated - 1).copied();
    let want = match want {
        Some(ch) if ch.is_whitespace() => Some(' '),
        Some(ch) => Some(ch),
        None => Some(' '), // stated one past the end: the caret sits after the text
    };
    if at_caret.unwrap_or(' ') != want.unwrap_or(' ') {
        return vec![format!(
            "caret at column {col} is under {at_caret:?}, but character {stated} of the formula is {want:?}"
        )];
    }
    let plain: String = model
        .chars()
        .map(|ch| if ch.is_control() { ' ' } else { ch })
        .collect();
    if formula.len() <= 80 && lines[1].strip_prefix("  ") != Some(plain.as_str()) {
        return vec![format!(
            "the formula line is {:?}, want {plain:?}",
            lines[1]
        )];
    }
    if shown.len() > 200 {
        return vec![format!(
            "the formula line is {} characters: show the part around the error",
            shown.len()
        )];
    }
    Vec::new()
}

/// The 1 GiB stream: refused having read no more than the limit, with bounded memory.
fn check_stream(r: &Run) -> Vec<String> {
    let mut bad = Vec::new();
    let limit = foothold::data::MAX_INPUT_BYTES;
    // The pipe buffers a little beyond what the binary read.
    if r.stdin_written > limit + (16 << 20) {
        bad.push(format!(
            "the binary took {} bytes before stopping, limit {limit}",
            r.stdin_written
        ));
    }
    match r.peak_kib {
        Some((kib, how)) => {
            println!(
                "  1 GiB stream: refused after {} MiB written, peak memory {} MiB ({how}), {:.2} s",
                r.stdin_written >> 20,
                kib / 1024,
                r.elapsed.as_secs_f64()
            );
            if kib > STREAM_PEAK_LIMIT_KIB {
                bad.push(format!(
                    "peak memory {kib} KiB over {STREAM_PEAK_LIMIT_KIB} KiB"
                ));
            }
        }
        None => println!(
            "  1 GiB stream: peak memory not measured (neither /usr/bin/time nor /proc available); sub-check skipped"
        ),
    }
    bad
}

#[test]
fn every_bad_input_is_refused_clearly() {
    let cases = matrix();
    let root = common::cli::scratch("matrix");
    let mut failures = Vec::new();
    for (i, c) in cases.iter().enumerate() {
        let dir = root.join(format!("case{i:02}"));
        std::fs::create_dir_all(&dir).unwrap();
        let ext = if c.name.contains("OpenDocument") {
            "ods"
        } else if c.name.contains("workbook") {
            "xlsx"
        } else {
            "csv"
        };
        let file = dir.join(format!("data.{ext}"));
        if let Some(bytes) = &c.file {
            std::fs::write(&file, bytes).unwrap();
        }
        let r = run_case(c, &dir, &file);
        let problems = check(c, &r, &file);
        println!(
            "{} {:<55} exit {:?} in {:>7.1} ms",
            if problems.is_empty() { "ok  " } else { "FAIL" },
            c.name,
            r.code,
            r.elapsed.as_secs_f64() * 1e3
        );
        if !problems.is_empty() {
            failures.push(format!("{}:\n    {}", c.name, problems.join("\n    ")));
        }
    }
    let _ = std::fs::remove_dir_all(&root);
    let (n, m) = (cases.len(), cases.len() - failures.len());
    println!("bad-input matrix: {n} tried, {m} passed");
    for f in &failures {
        println!("FAILED {f}");
    }
    assert_eq!(m, n, "failures:\n{}", failures.join("\n"));
}

/// Data that are valid but drive the numerics to their limits: the binary may
/// fit (exit 0) or refuse (exit 1, 2) but must never panic (101), and must say
/// what went wrong. Issue 10: a finite Jacobian near 1e225 (x^100 at x = 86)
/// made nalgebra's SVD overflow to NaN and panic ("Singular value was NaN").
#[test]
fn numerical_extremes_never_panic() {
    let huge_jacobian = b"x,y\n0.18359375,86.3359375\n10.3359375,0.16796875\n0,0\n\
10.3828125,0\n86.0390625,0\n86.3359375,43.19921875\n86.17578125,43.16796875\n\
43.4765625,43.16796875\n86.16796875,21.16796875\n";
    let c = fit(
        "Jacobian near 1e225 (x^100)",
        huge_jacobian,
        "p1+p2+p3*x^p4+p5+p6",
        &["--start", "p1=0,p2=0,p3=1,p4=100,p5=0,p6=0"],
        &[],
    );
    let root = common::cli::scratch("matrix-numerics");
    std::fs::create_dir_all(&root).unwrap();
    let file = root.join("data.csv");
    std::fs::write(&file, c.file.as_ref().unwrap()).unwrap();
    let r = run_case(&c, &root, &file);
    let _ = std::fs::remove_dir_all(&root);
    assert!(!r.timed_out, "{}: killed by the watchdog", c.name);
    assert!(
        matches!(r.code, Some(0..=2)),
        "{}: exit {:?}\n{}",
        c.name,
        r.code,
        r.stderr
    );
    assert!(!r.stderr.contains("panicked"), "{}", r.stderr);
    // The sum of squares overflows there: the fit must not claim a minimum.
    assert!(r.stdout.contains("overflow"), "{}", r.stdout);
    assert!(!r.stdout.contains("(converged)"), "{}", r.stdout);
    assert!(
        r.stderr.contains("foothold: warning:"),
        "no warning: {}",
        r.stderr
    );
}
