//! Atomic file output: every file foothold writes is first written to a
//! temporary file in the same directory and then renamed into place, so an
//! interrupted run never leaves a truncated output behind.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use thiserror::Error;

/// Why a file could not be written.
#[derive(Debug, Error)]
#[error("cannot write {path}: {message}")]
pub struct WriteError {
    /// The file that was to be written.
    pub path: String,
    /// What went wrong.
    pub message: String,
}

/// A temporary path next to `path` that keeps its extension (PNG encoders
/// choose the format by extension), e.g. `dir/.fit.png.1234-0.tmp.png`.
pub fn temporary_path(path: &Path) -> PathBuf {
    static COUNTER: AtomicU64 = AtomicU64::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let name = path
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let ext = path
        .extension()
        .map(|e| format!(".{}", e.to_string_lossy()))
        .unwrap_or_default();
    let tmp = format!(".{name}.{}-{n}.tmp{ext}", std::process::id());
    match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.join(tmp),
        _ => PathBuf::from(tmp),
    }
}

/// Runs `write` on a temporary path beside `path`, then renames the result
/// into place. On any failure the temporary file is removed and `path` is
/// left as it was.
pub fn write_atomic_with<F, E>(path: &Path, write: F) -> Result<(), WriteError>
where
    F: FnOnce(&Path) -> Result<(), E>,
    E: std::fmt::Display,
{
    let fail = |message: String| WriteError {
        path: path.display().to_string(),
        message,
    };
    if path.is_dir() {
        return Err(fail("it is a directory".into()));
    }
    let tmp = temporary_path(path);
    if let Err(e) = write(&tmp) {
        let _ = std::fs::remove_file(&tmp);
        return Err(fail(e.to_string()));
    }
    if let Err(e) = std::fs::rename(&tmp, path) {
        let _ = std::fs::remove_file(&tmp);
        return Err(fail(e.to_string()));
    }
    Ok(())
}

/// Writes `bytes` to `path` atomically (temporary file, flushed to disk, renamed).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    write_atomic_with(path, |tmp| -> std::io::Result<()> {
        use std::io::Write;
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(tmp)?;
        f.write_all(bytes)?;
        f.sync_all()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("foothold-atomic-{}-{name}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    fn entries(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .flatten()
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn writes_replace_the_file_and_leave_no_temporary() {
        let d = scratch("ok");
        let p = d.join("out.csv");
        write_atomic(&p, b"first\n").unwrap();
        write_atomic(&p, b"second\n").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "second\n");
        assert_eq!(entries(&d), vec!["out.csv"]);
        let t = temporary_path(&p);
        assert_eq!(t.parent(), Some(d.as_path()));
        assert!(t.to_string_lossy().ends_with(".tmp.csv"), "{}", t.display());
        let _ = std::fs::remove_dir_all(&d);
    }

    #[test]
    fn a_failed_write_keeps_the_old_file() {
        let d = scratch("fail");
        let p = d.join("report.html");
        write_atomic(&p, b"old").unwrap();
        let e = write_atomic_with(&p, |tmp| {
            std::fs::write(tmp, b"half").map_err(|e| e.to_string())?;
            Err::<(), _>("interrupted".to_string())
        })
        .unwrap_err();
        assert!(e.to_string().contains("interrupted"), "{e}");
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "old");
        assert_eq!(entries(&d), vec!["report.html"]);
        let e = write_atomic(&d, b"x").unwrap_err();
        assert!(e.to_string().contains("directory"), "{e}");
        let e = write_atomic(&d.join("missing/dir/f.txt"), b"x").unwrap_err();
        assert!(e.to_string().starts_with("cannot write"), "{e}");
        let _ = std::fs::remove_dir_all(&d);
    }
}
