//! Atomic, durable file output: every file foothold writes is first written
//! to a temporary file in the same directory (`tempfile::NamedTempFile`),
//! flushed to disk, renamed into place, and the directory flushed too, so an
//! interrupted or failed run never leaves a truncated output behind. On any
//! failure the temporary file is removed (it is deleted when dropped).
//!
//! A target that exists but is not a regular file (`/dev/stdout`, a named
//! pipe, `/dev/full`) cannot be replaced by a rename; it is written directly.

use std::io::Write;
use std::path::{Path, PathBuf};
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

/// The directory a file is written in (`.` for a bare file name).
fn directory_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// A fresh temporary file beside `path` that keeps its extension (PNG
/// encoders choose the format by extension), e.g. `dir/.fit.png.Ab3xYz.tmp.png`,
/// created with the permissions any new file gets (0666 less the umask), not
/// the owner-only default of temporary files, since it becomes the output.
fn temporary_beside(path: &Path) -> std::io::Result<tempfile::NamedTempFile> {
    let name = path
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let ext = path
        .extension()
        .map(|e| format!(".{}", e.to_string_lossy()))
        .unwrap_or_default();
    let (prefix, suffix) = (format!(".{name}."), format!(".tmp{ext}"));
    let mut builder = tempfile::Builder::new();
    builder.prefix(&prefix).suffix(&suffix);
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    builder.tempfile_in(directory_of(path))
}

/// True when `path` exists and is something other than a regular file or a
/// directory (a device, a named pipe, a socket): it is written in place.
fn is_special(path: &Path) -> bool {
    std::fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir())
}

/// Writes `bytes` straight into a special file such as `/dev/stdout`.
fn write_in_place(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let mut f = std::fs::OpenOptions::new().write(true).open(path)?;
    f.write_all(bytes)?;
    f.flush()
}

/// Flushes the directory entry of a rename to disk. Some file systems cannot
/// sync a directory (the call fails with `EINVAL`); the file itself is synced.
fn sync_directory(dir: &Path) -> std::io::Result<()> {
    match std::fs::File::open(dir).and_then(|d| d.sync_all()) {
        Err(e) if e.kind() == std::io::ErrorKind::InvalidInput => Ok(()),
        other => other,
    }
}

/// Runs `write` on a temporary path beside `path`, flushes the result to
/// disk, renames it into place and flushes the directory. On any failure the
/// temporary file is removed and `path` is left as it was.
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
    let tmp = temporary_beside(path).map_err(|e| fail(e.to_string()))?;
    // `tmp` is deleted when dropped on every early return below.
    write(tmp.path()).map_err(|e| fail(e.to_string()))?;
    // The writer may have replaced the file at the path (an encoder that
    // creates its file): sync whatever the path now names.
    std::fs::File::open(tmp.path())
        .and_then(|f| f.sync_all())
        .map_err(|e| fail(e.to_string()))?;
    tmp.persist(path).map_err(|e| fail(e.error.to_string()))?;
    sync_directory(&directory_of(path)).map_err(|e| fail(e.to_string()))
}

/// Writes `bytes` to `path` atomically and durably (temporary file, flushed
/// to disk, renamed, directory flushed); a special file is written in place.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    if is_special(path) {
        return write_in_place(path, bytes).map_err(|e| WriteError {
            path: path.display().to_string(),
            message: e.to_string(),
        });
    }
    write_atomic_with(path, |tmp| -> std::io::Result<()> {
        let mut f = std::fs::OpenOptions::new().write(true).open(tmp)?;
        f.write_all(bytes)?;
        f.flush()
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
        #[cfg(unix)]
        {
            // The output gets the permissions of any new file, not 0600.
            use std::os::unix::fs::PermissionsExt;
            std::fs::write(d.join("plain"), b"").unwrap();
            let mode = |f: &str| std::fs::metadata(d.join(f)).unwrap().permissions().mode();
            assert_eq!(mode("out.csv"), mode("plain"));
            std::fs::remove_file(d.join("plain")).unwrap();
        }
        let t = temporary_beside(&p).unwrap();
        assert_eq!(t.path().parent(), Some(d.as_path()));
        let name = t.path().file_name().unwrap().to_string_lossy().into_owned();
        assert!(
            name.starts_with(".out.csv.") && name.ends_with(".tmp.csv"),
            "{name}"
        );
        drop(t);
        assert_eq!(entries(&d), vec!["out.csv"]);
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

    #[test]
    fn special_files_are_written_in_place_and_errors_reported() {
        // /dev/full takes no bytes: the error is reported and the device stays one.
        let full = Path::new("/dev/full");
        let e = write_atomic(full, b"x").unwrap_err().to_string();
        assert!(e.starts_with("cannot write /dev/full:"), "{e}");
        assert!(is_special(full));
        write_atomic(Path::new("/dev/null"), b"gone").unwrap();
        assert!(is_special(Path::new("/dev/null")));
    }
}
