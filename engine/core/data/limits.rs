//! Bounded reading: inputs larger than a fixed limit are refused before (or,
//! for a stream, while) they are read, so memory stays bounded on huge input.

use super::DataError;
use std::io::Read;

/// Largest input accepted: 256 MiB.
pub const MAX_INPUT_BYTES: u64 = 256 * 1024 * 1024;
/// Largest number of cells (rows × columns) accepted: 10 million.
pub const MAX_CELLS: usize = 10_000_000;

/// Checks that `path` is an existing regular file no larger than `max_bytes`.
pub(crate) fn check_file(path: &str, max_bytes: u64) -> Result<(), DataError> {
    let meta = std::fs::metadata(path).map_err(|e| io_error(path, &e))?;
    if meta.is_dir() {
        return Err(DataError::IsDirectory {
            path: path.to_string(),
        });
    }
    if meta.len() > max_bytes {
        return Err(DataError::TooLarge {
            path: path.to_string(),
            limit: max_bytes,
        });
    }
    Ok(())
}

/// Reads a whole text file, refusing more than `max_bytes` and binary content.
pub(crate) fn read_file_text(path: &str, max_bytes: u64) -> Result<String, DataError> {
    let file = std::fs::File::open(path).map_err(|e| io_error(path, &e))?;
    read_stream(file, path, max_bytes)
}

/// Reads a stream to its end, stopping with an error as soon as it passes `max_bytes`.
pub(crate) fn read_stream<R: Read>(
    reader: R,
    label: &str,
    max_bytes: u64,
) -> Result<String, DataError> {
    let mut bytes = Vec::new();
    reader
        .take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| io_error(label, &e))?;
    if bytes.len() as u64 > max_bytes {
        return Err(DataError::TooLarge {
            path: label.to_string(),
            limit: max_bytes,
        });
    }
    bytes_to_text(bytes, label)
}

/// Turns bytes into text, refusing NUL bytes and invalid UTF-8 (binary files).
pub(crate) fn bytes_to_text(bytes: Vec<u8>, label: &str) -> Result<String, DataError> {
    if let Some(at) = bytes.iter().position(|&b| b == 0) {
        return Err(DataError::Binary {
            path: label.to_string(),
            detail: format!("NUL byte at byte {}", at + 1),
        });
    }
    String::from_utf8(bytes).map_err(|e| DataError::Binary {
        path: label.to_string(),
        detail: format!("invalid UTF-8 at byte {}", e.utf8_error().valid_up_to() + 1),
    })
}

/// Maps an OS error to the data error that names it best.
pub(crate) fn io_error(path: &str, e: &std::io::Error) -> DataError {
    match e.kind() {
        std::io::ErrorKind::NotFound => DataError::NotFound {
            path: path.to_string(),
        },
        std::io::ErrorKind::IsADirectory => DataError::IsDirectory {
            path: path.to_string(),
        },
        _ => DataError::Io {
            path: path.to_string(),
            reason: e.to_string(),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stream_over_the_limit_is_refused_without_reading_on() {
        // An endless stream: the reader must stop at limit + 1 bytes.
        let endless = std::io::repeat(b'1');
        let e = read_stream(endless, "standard input", 1000).unwrap_err();
        assert_eq!(
            e,
            DataError::TooLarge {
                path: "standard input".into(),
                limit: 1000
            }
        );
    }

    #[test]
    fn stream_within_the_limit_is_read() {
        let t = read_stream(&b"x,y\n1,2\n"[..], "s", 8).unwrap();
        assert_eq!(t, "x,y\n1,2\n");
    }

    #[test]
    fn nul_and_bad_utf8_are_binary() {
        let e = bytes_to_text(b"x,y\n1\0".to_vec(), "f").unwrap_err();
        assert!(e.to_string().contains("NUL byte at byte 6"), "{e}");
        let e = bytes_to_text(vec![b'x', 0xff, b'y'], "f").unwrap_err();
        assert!(e.to_string().contains("invalid UTF-8 at byte 2"), "{e}");
    }
}
