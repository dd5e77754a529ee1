//! Running the real `foothold` binary and scratch files for the CLI tests.

#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

/// Runs the binary from the project root: (exit code, stdout, stderr).
pub fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_foothold"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// The scratch folder of one test of this test binary (not emptied).
fn scratch_dir(test: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!(
        "foothold-{}-{}-{test}",
        env!("CARGO_CRATE_NAME"),
        std::process::id()
    ));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A fresh, empty scratch folder for one test.
pub fn scratch(test: &str) -> PathBuf {
    let d = scratch_dir(test);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Writes `text` as `data.csv` in the test's scratch folder.
pub fn scratch_file(test: &str, text: &str) -> PathBuf {
    let p = scratch_dir(test).join("data.csv");
    std::fs::write(&p, text).unwrap();
    p
}

/// The names of the files in `dir`, sorted.
pub fn file_names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}
