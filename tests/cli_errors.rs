//! The real `foothold` binary on inputs that must fail before any fitting:
//! each exits with code 2 and one clear message (or a caret block for a
//! formula) that names the problem and where, and never panics.

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Stdio};

/// A scratch directory for one test, removed at the end.
struct Scratch(PathBuf);

impl Scratch {
    fn new(test: &str) -> Scratch {
        let dir =
            std::env::temp_dir().join(format!("foothold-cli-{}-{}", std::process::id(), test));
        std::fs::create_dir_all(&dir).unwrap();
        Scratch(dir)
    }
    fn file(&self, name: &str, bytes: &[u8]) -> String {
        let p = self.0.join(name);
        std::fs::write(&p, bytes).unwrap();
        p.to_str().unwrap().to_string()
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Runs the binary with `args` (and `stdin`), returning (exit code, stdout, stderr).
fn run(args: &[&str], stdin: &[u8]) -> (i32, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_foothold"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(stdin).unwrap();
    let out = child.wait_with_output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Asserts exit 2, nothing on stdout, no panic, a single `foothold: error:`
/// line containing every one of `wants`.
fn fails_with(args: &[&str], wants: &[&str]) {
    fails_with_stdin(args, b"", wants)
}

fn fails_with_stdin(args: &[&str], stdin: &[u8], wants: &[&str]) {
    let (code, out, err) = run(args, stdin);
    assert_eq!(code, 2, "{args:?}: stderr {err}");
    assert!(out.is_empty(), "{args:?}: stdout {out}");
    assert!(!err.contains("panicked"), "{args:?}: {err}");
    assert_eq!(err.lines().count(), 1, "{args:?}: want one line, got {err}");
    assert!(err.starts_with("foothold: error: "), "{args:?}: {err}");
    for w in wants {
        assert!(err.contains(w), "{args:?}: want {w:?} in {err}");
    }
}

const GOOD: &[u8] = b"x,y\n1,2.1\n2,3.9\n3,6.2\n4,7.8\n";

#[test]
fn missing_file() {
    let s = Scratch::new("missing");
    let p = s.0.join("absent.csv");
    let p = p.to_str().unwrap();
    fails_with(
        &["fit", p, "--model", "a*x", "--start", "a=1"],
        &[p, "no such file"],
    );
}

#[test]
fn directory_empty_binary_and_header_only_files() {
    let s = Scratch::new("files");
    let dir = s.0.to_str().unwrap().to_string();
    fails_with(
        &["fit", &dir, "--model", "a*x", "--start", "a=1"],
        &["is a directory"],
    );
    let p = s.file("empty.csv", b"");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "is empty"],
    );
    let p = s.file("comments.csv", b"# nothing here\n\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "is empty"],
    );
    let p = s.file("bin.csv", b"x,y\n\x00\x00\x01");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "NUL byte"],
    );
    let p = s.file("head.csv", b"x,y\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "no data rows"],
    );
}

#[test]
fn text_cell() {
    let s = Scratch::new("text");
    let p = s.file("t.csv", b"x,y\n1,2\n# note\n2,abc\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "line 4", "column 'y'", "'abc' is not a number"],
    );
}

#[test]
fn text_cell_on_standard_input() {
    fails_with_stdin(
        &["fit", "-", "--model", "a*x", "--start", "a=1"],
        b"x y\n1 2\n2 n/a\n",
        &[
            "standard input, line 3",
            "column 'y'",
            "'n/a' is not a number",
        ],
    );
}

#[test]
fn nan_and_infinite_cells() {
    let s = Scratch::new("nan");
    let p = s.file("n.csv", b"x,y\n1,NaN\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "line 2", "column 'y'", "'NaN' is not a finite number"],
    );
    let p = s.file("i.csv", b"x\ty\n1\t2\n-inf\t3\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &["line 3", "column 'x'", "'-inf' is not a finite number"],
    );
}

#[test]
fn ragged_row() {
    let s = Scratch::new("ragged");
    let p = s.file("r.csv", b"x,y\n1,2\n2,3,4\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "line 3", "expected 2 cells", "found 3"],
    );
}

#[test]
fn duplicated_and_empty_column_names() {
    let s = Scratch::new("dup");
    let p = s.file("d.csv", b"x,y,x\n1,2,3\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &[&p, "line 1", "'x' appears twice", "columns 1 and 3"],
    );
    let p = s.file("e.csv", b"x,,y\n1,2,3\n");
    fails_with(
        &["fit", &p, "--model", "a*x", "--start", "a=1"],
        &["column 2 of the header has no name"],
    );
}

#[test]
fn unknown_column_in_y() {
    let s = Scratch::new("ycol");
    let p = s.file("g.csv", GOOD);
    fails_with(
        &[
            "fit", &p, "--model", "a*x", "--y", "height", "--start", "a=1",
        ],
        &["--y names column 'height'", "columns: x, y"],
    );
}

#[test]
fn unparseable_formula_shows_a_caret() {
    let s = Scratch::new("caret");
    let p = s.file("g.csv", GOOD);
    let (code, out, err) = run(
        &["fit", &p, "--model", "a*exp(-k*x", "--start", "a=1,k=1"],
        b"",
    );
    assert_eq!(code, 2, "{err}");
    assert!(out.is_empty());
    assert!(!err.contains("panicked"), "{err}");
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 3, "{err}");
    assert!(lines[0].starts_with("foothold: error: "), "{err}");
    assert!(lines[0].contains("at character"), "{err}");
    assert_eq!(lines[1].trim(), "a*exp(-k*x", "{err}");
    // The caret sits under a character of the formula, at the stated position.
    let col = lines[2].find('^').unwrap();
    let start = lines[1].find('a').unwrap();
    let stated: usize = lines[0]
        .split("at character ")
        .nth(1)
        .and_then(|t| t.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap();
    assert_eq!(col - start + 1, stated, "{err}");
}

#[test]
fn unknown_function() {
    let s = Scratch::new("func");
    let p = s.file("g.csv", GOOD);
    let (code, _, err) = run(&["fit", &p, "--model", "a*foo(x)", "--start", "a=1"], b"");
    assert_eq!(code, 2, "{err}");
    assert!(err.starts_with("foothold: error: "), "{err}");
    assert!(err.contains("unknown function 'foo'"), "{err}");
    assert!(err.contains('^'), "{err}");
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn formula_without_parameters() {
    let s = Scratch::new("noparam");
    let p = s.file("g.csv", GOOD);
    fails_with(
        &["fit", &p, "--model", "2*x + 1"],
        &["has no parameters", "x"],
    );
}

#[test]
fn response_used_as_predictor() {
    let s = Scratch::new("resp");
    let p = s.file("g.csv", GOOD);
    fails_with(
        &["fit", &p, "--model", "a*x + b*y", "--start", "a=1,b=1"],
        &["response column 'y' is also used as a predictor"],
    );
}

#[test]
fn bad_starts() {
    let s = Scratch::new("starts");
    let p = s.file("g.csv", GOOD);
    let m = "a*exp(-k*x)";
    // No --start at all is not an error: inference supplies the starts.
    fails_with(
        &["fit", &p, "--model", m, "--start", "a=1,q=2"],
        &["'q', which is not a parameter", "(parameters: a, k)"],
    );
    fails_with(
        &[
            "fit", &p, "--model", m, "--start", "a=1", "--start", "a=2,k=1",
        ],
        &["'a' more than once"],
    );
    fails_with(
        &["fit", &p, "--model", m, "--start", "a=big,k=1"],
        &["'big' is not a finite number", "(parameters: a, k)"],
    );
    fails_with(
        &["fit", &p, "--model", m, "--start", "a=1"],
        &["no value for k", "(parameters: a, k)"],
    );
    fails_with(
        &["fit", &p, "--model", m, "--start", "a:1,k=1"],
        &["'a:1' is not NAME=VALUE"],
    );
}

#[test]
fn usage_errors() {
    let (code, _, err) = run(&["fit", "--model", "a*x"], b"");
    assert_eq!(code, 2);
    assert!(err.starts_with("foothold: error: "), "{err}");
    assert!(!err.contains("panicked"));
    fails_with(
        &["rank", "no-such-file.csv", "--model", "a*x"],
        &["no-such-file.csv"],
    );
}
