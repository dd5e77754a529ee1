//! Output that cannot be written, through the real binary: a full device on
//! standard output or as `--out` is an error (exit 2, one message); a closed
//! pipe (`| head -1`) ends quietly (exit as usual, nothing on stderr); a
//! failed write leaves no temporary file and keeps the old file.

mod common;

use common::cli::{file_names, scratch};

use std::io::{BufRead, BufReader, Read};
use std::process::{Command, Stdio};

const BIN: &str = env!("CARGO_BIN_EXE_foothold");

/// The plate demo's batch fit (invented data, demo-data/README.md).
const PLATE: [&str; 10] = [
    "fit",
    "demo-data/plate_dose_response.csv",
    "--model",
    "logistic-3",
    "--x",
    "log_dose",
    "--y",
    "response",
    "--by",
    "compound",
];

/// A fit of the cooling demo with given starts (fast, converges).
const COOLING: [&str; 6] = [
    "fit",
    "demo-data/part_cooling.csv",
    "--model",
    "temp = ambient + delta*exp(-k*minutes)",
    "--start",
    "ambient=20,delta=150,k=0.1",
];

fn command(args: &[&str]) -> Command {
    let mut c = Command::new(BIN);
    c.current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(args)
        .stdin(Stdio::null());
    c
}

/// Runs with standard output on /dev/full: (exit code, stderr).
fn to_full(args: &[&str]) -> (i32, String) {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full (Linux) is needed by this test");
    let o = command(args)
        .stdout(Stdio::from(full))
        .stderr(Stdio::piped())
        .output()
        .unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Exactly one line, the error, naming what could not be written and why.
fn assert_one_write_error(err: &str, what: &str) {
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 1, "one line: {err}");
    assert!(
        lines[0].starts_with(&format!("foothold: error: cannot write {what}: ")),
        "{err}"
    );
    assert!(lines[0].contains("No space left on device"), "{err}");
}

#[test]
fn a_full_standard_output_is_an_error() {
    for args in [
        &["models"][..],
        &["models", "--format", "json"][..],
        &COOLING[..],
        &PLATE[..],
        &["--help"][..],
    ] {
        let (code, err) = to_full(args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert_one_write_error(&err, "standard output");
    }
}

#[test]
fn a_full_out_file_is_an_error() {
    let mut args = PLATE.to_vec();
    args.extend(["--format", "csv", "--out", "/dev/full"]);
    let (code, err) = to_full(&args);
    assert_eq!(code, 2, "{err}");
    assert_one_write_error(&err, "/dev/full");
    // The device is written in place, never replaced by a renamed file.
    let meta = std::fs::metadata("/dev/full").unwrap();
    assert!(!meta.is_file(), "/dev/full is still a device");
    // A special file that takes the bytes works as --out.
    let mut args = COOLING.to_vec();
    args.extend(["--out", "/dev/null"]);
    let o = command(&args).output().unwrap();
    assert_eq!(o.status.code(), Some(0));
    assert!(o.stdout.is_empty() && o.stderr.is_empty());
}

/// Spawns with piped stdout and stderr, reads `lines` lines of stdout, then
/// closes the read end: (exit code, the lines read, stderr).
fn with_reader_closed_after(args: &[&str], lines: usize) -> (i32, Vec<String>, String) {
    let mut child = command(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut err_pipe = child.stderr.take().unwrap();
    let err_reader = std::thread::spawn(move || {
        let mut s = String::new();
        let _ = err_pipe.read_to_string(&mut s);
        s
    });
    let mut reader = BufReader::new(child.stdout.take().unwrap());
    let mut got = Vec::new();
    for _ in 0..lines {
        let mut l = String::new();
        reader.read_line(&mut l).unwrap();
        got.push(l);
    }
    drop(reader);
    let status = child.wait().unwrap();
    (
        status.code().unwrap_or(-1),
        got,
        err_reader.join().unwrap(),
    )
}

#[test]
fn a_closed_pipe_ends_quietly() {
    // The page is far larger than a pipe's buffer, so the writer meets the
    // closed pipe after the first line has been read.
    let (code, lines, err) = with_reader_closed_after(
        &[
            "report",
            "demo-data/part_cooling.csv",
            "--model",
            "temp = ambient + delta*exp(-k*minutes)",
        ],
        1,
    );
    assert_eq!(lines[0].trim_end(), "<!DOCTYPE html>");
    assert_eq!(code, 0, "{err}");
    assert_eq!(err, "", "nothing on stderr");
    // Closed before anything is written: the batch's table meets it at once.
    let (code, lines, err) = with_reader_closed_after(&PLATE, 0);
    assert!(lines.is_empty());
    assert_eq!(code, 0, "{err}");
    assert_eq!(err, "", "nothing on stderr");
}

/// Runs the binary under `sh` with the file size limited to a few blocks and
/// SIGXFSZ ignored, so a write past the limit fails with EFBIG mid-file.
fn with_small_file_limit(args: &[&str]) -> (i32, String) {
    let o = Command::new("sh")
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .arg("-c")
        .arg("trap '' XFSZ; ulimit -f 4; exec \"$0\" \"$@\"")
        .arg(BIN)
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap();
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn a_failed_write_leaves_no_temporary_file_and_keeps_the_old_one() {
    let d = scratch("efbig");
    let page = d.join("page.html");
    std::fs::write(&page, "old page\n").unwrap();
    let (code, err) = with_small_file_limit(&[
        "report",
        "demo-data/part_cooling.csv",
        "--model",
        "temp = ambient + delta*exp(-k*minutes)",
        "--out",
        page.to_str().unwrap(),
    ]);
    assert_eq!(code, 2, "{err}");
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 1, "{err}");
    assert!(
        lines[0].starts_with(&format!("foothold: error: cannot write {}: ", page.display())),
        "{err}"
    );
    assert!(lines[0].contains("too large"), "EFBIG: {err}");
    assert_eq!(file_names(&d), vec!["page.html"], "no temporary file left");
    assert_eq!(std::fs::read_to_string(&page).unwrap(), "old page\n");
    // Within the limit the same command replaces the file.
    let small = d.join("fit.csv");
    let mut args = COOLING.to_vec();
    args.extend(["--format", "csv", "--out", small.to_str().unwrap()]);
    let (code, err) = with_small_file_limit(&args);
    assert_eq!(code, 0, "{err}");
    assert_eq!(file_names(&d), vec!["fit.csv", "page.html"]);
    let csv = std::fs::read_to_string(&small).unwrap();
    assert!(csv.starts_with("name,estimate,"), "{csv}");
    let _ = std::fs::remove_dir_all(&d);
}
