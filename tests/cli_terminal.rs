//! Batch commands as a user meets them: under a pseudo-terminal (`script`
//! from util-linux, stdin from /dev/null) with a watchdog, `fit --by` and
//! `report --by --out` finish, exit 0 and print their result (a frozen
//! progress bar once hung them); and with `--verbose` and stderr not a
//! terminal, progress lines every interval (`FOOTHOLD_PROGRESS_INTERVAL_MS`,
//! a knob for tests) giving groups done/total, rate and time left.

mod common;

use common::cli::scratch;

use std::io::Read;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Longest a run may take before the watchdog kills it and the test fails.
const WATCHDOG: Duration = Duration::from_secs(120);

const BIN: &str = env!("CARGO_BIN_EXE_foothold");

/// The six compounds of demo-data/plate_dose_response.csv (invented).
const COMPOUNDS: [&str; 6] = ["KX-101", "KX-102", "KX-117", "LT-4a", "LT-4b", "ref std"];

/// Quotes a word for `sh -c`.
fn quoted(a: &str) -> String {
    format!("'{}'", a.replace('\'', r"'\''"))
}

/// Runs the binary with `args` under a pseudo-terminal (`script -qec CMD
/// /dev/null`, stdin from /dev/null), killing it after [`WATCHDOG`]:
/// (exit code, everything the terminal showed, with `\r` removed).
fn under_terminal(args: &[&str]) -> (i32, String) {
    let cmd = std::iter::once(BIN)
        .chain(args.iter().copied())
        .map(quoted)
        .collect::<Vec<_>>()
        .join(" ");
    let mut child = Command::new("script")
        .args(["-qec", &cmd, "/dev/null"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("`script` (util-linux) is needed for the terminal tests");
    let mut pipe = child.stdout.take().unwrap();
    let reader = std::thread::spawn(move || {
        let mut v = Vec::new();
        let _ = pipe.read_to_end(&mut v);
        v
    });
    let clock = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if clock.elapsed() > WATCHDOG {
            let _ = child.kill();
            let _ = child.wait();
            panic!("`foothold {}` still running after {WATCHDOG:?} under a terminal: killed", args.join(" "));
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    let shown = String::from_utf8_lossy(&reader.join().unwrap()).replace('\r', "");
    (status.code().unwrap_or(-1), shown)
}

const PLATE: [&str; 10] = [
    "demo-data/plate_dose_response.csv",
    "--model",
    "logistic-3",
    "--x",
    "log_dose",
    "--y",
    "response",
    "--by",
    "compound",
    "--seed",
];

#[test]
fn fit_by_finishes_on_a_terminal_and_prints_every_group() {
    let mut args = vec!["fit"];
    args.extend(PLATE);
    args.push("1");
    let (code, shown) = under_terminal(&args);
    assert_eq!(code, 0, "{shown}");
    assert!(shown.contains("groups     6 by compound"), "{shown}");
    let header: Vec<&str> = shown
        .lines()
        .find(|l| l.starts_with("compound  status"))
        .unwrap_or_else(|| panic!("no table header:\n{shown}"))
        .split_whitespace()
        .collect();
    let asym_at = header.iter().position(|h| *h == "asym").unwrap() - 1;
    for c in COMPOUNDS {
        // e.g. "KX-101    converged    22  ..."
        let row = shown
            .lines()
            .find(|l| l.starts_with(c) && l.contains("converged"))
            .unwrap_or_else(|| panic!("no row for {c}:\n{shown}"));
        let cells: Vec<&str> = row[c.len()..].split_whitespace().collect();
        assert_eq!(cells[0], "converged", "{row}");
        assert_eq!(cells[1], "22", "22 rows per compound: {row}");
        let asym: f64 = cells[asym_at].parse().unwrap();
        assert!((60.0..110.0).contains(&asym), "plateau of {c}: {row}");
    }
}

#[test]
fn report_by_finishes_on_a_terminal_and_writes_the_page() {
    let d = scratch("report");
    let page = d.join("batch.html");
    let mut args = vec!["report"];
    args.extend(PLATE);
    args.extend(["1", "--out", page.to_str().unwrap()]);
    let (code, shown) = under_terminal(&args);
    assert_eq!(code, 0, "{shown}");
    assert!(!shown.contains("error"), "{shown}");
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    for c in COMPOUNDS {
        assert!(html.contains(&format!("<td>{c}</td>")), "row of {c}");
    }
    assert_eq!(common::cli::file_names(&d), vec!["batch.html"]);
    let _ = std::fs::remove_dir_all(&d);
}

/// Invented: y = a*exp(-k*x) for 240 groups, 8 rows each, a and k varying by group.
fn many_groups() -> String {
    let mut text = String::from("g,x,y\n");
    for g in 0..240 {
        let (a, k) = (2.0 + (g % 7) as f64, 0.2 + 0.05 * (g % 5) as f64);
        for i in 0..8 {
            let x = i as f64 * 0.5;
            text += &format!("G{g},{x},{:.10}\n", a * (-k * x).exp());
        }
    }
    text
}

#[test]
fn verbose_batches_print_progress_lines_when_stderr_is_not_a_terminal() {
    let data = common::cli::scratch_file("progress", &many_groups());
    let o = Command::new(BIN)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args([
            "fit",
            data.to_str().unwrap(),
            "--model",
            "a*exp(-k*x)",
            "--by",
            "g",
            "--starts",
            "8",
            "--verbose",
            "--format",
            "csv",
        ])
        .env("FOOTHOLD_PROGRESS_INTERVAL_MS", "25")
        .stdin(Stdio::null())
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{err}");
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(stdout.lines().count(), 241, "header and 240 groups");
    let lines: Vec<&str> = err
        .lines()
        .filter_map(|l| l.strip_prefix("foothold: progress: "))
        .collect();
    assert!(!lines.is_empty(), "no progress line:\n{err}");
    let mut last = 0;
    for l in &lines {
        // "37/240 groups, 12.3 groups/s, about 35 s left"
        let parts: Vec<&str> = l.split(", ").collect();
        assert_eq!(parts.len(), 3, "{l}");
        let (done, total) = parts[0]
            .strip_suffix(" groups")
            .and_then(|c| c.split_once('/'))
            .unwrap_or_else(|| panic!("{l}"));
        let (done, total): (usize, usize) = (done.parse().unwrap(), total.parse().unwrap());
        assert_eq!(total, 240, "{l}");
        assert!(done >= last && done <= total, "{l}");
        last = done;
        let rate: f64 = parts[1].strip_suffix(" groups/s").unwrap().parse().unwrap();
        assert!(rate >= 0.0, "{l}");
        if done > 0 && parts[2] == "less than a second left" {
            assert!(rate > 0.0, "{l}");
        } else if done > 0 {
            assert!(rate > 0.0, "{l}");
            let left = parts[2]
                .strip_prefix("about ")
                .and_then(|t| t.strip_suffix(" left"))
                .unwrap_or_else(|| panic!("{l}"));
            assert!(
                left.ends_with(" s") || left.ends_with(" min"),
                "'N s', 'M min SS s' or 'H h MM min': {l}"
            );
        } else {
            assert_eq!(parts[2], "time left unknown", "{l}");
        }
    }
    // Without --verbose, or on a plain run, no progress lines.
    let o = Command::new(BIN)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args([
            "fit",
            data.to_str().unwrap(),
            "--model",
            "a*exp(-k*x)",
            "--by",
            "g",
            "--starts",
            "8",
            "--format",
            "csv",
        ])
        .env("FOOTHOLD_PROGRESS_INTERVAL_MS", "25")
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    assert!(!String::from_utf8_lossy(&o.stderr).contains("progress"));
}
