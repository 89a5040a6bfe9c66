//! Output: human tables, JSON, CSV and SVG, and the one way files are
//! written (atomically: a temporary file beside the target, renamed on
//! success, so a failed or interrupted run never leaves a partial file and
//! never clobbers a good one).

pub mod table;

pub use table::{Table, sig};

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use thiserror::Error;

/// A result could not be written.
#[derive(Debug, Error)]
pub enum ExportError {
    /// The temporary file beside the target could not be created, written or renamed.
    #[error("cannot write {path}: {source}")]
    Io {
        /// The file the user asked for.
        path: PathBuf,
        /// What the operating system said.
        source: io::Error,
    },
    /// Serialising a result failed (a bug: the result types are plain data).
    #[error("cannot serialise {what}: {message}")]
    Serialise {
        /// What was being written.
        what: String,
        /// The serialiser's message.
        message: String,
    },
}

/// Writes `path` atomically: `fill` writes into a temporary file in the same
/// directory, which is flushed, synced and renamed over `path` only when
/// `fill` succeeds. On any error the temporary file is removed and an
/// existing `path` is left untouched.
pub fn write_atomic<E>(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    let io_err = |source: io::Error| ExportError::Io {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let tmp = tempfile::Builder::new()
        .prefix(&format!(".{name}."))
        .suffix(".partial")
        .tempfile_in(dir)
        .map_err(io_err)?;
    let (file, tmp_path) = tmp.into_parts();
    let mut writer = io::BufWriter::new(file);
    // `tmp_path` deletes the file when dropped, so every early return below
    // removes the partial file.
    fill(&mut writer)?;
    let file = writer
        .into_inner()
        .map_err(|e| io_err(e.into_error()))?;
    file.sync_all().map_err(io_err)?;
    drop(file);
    tmp_path.persist(path).map_err(|e| io_err(e.error))?;
    Ok(())
}

/// Writes to `path` atomically, or to stdout when `path` is `None` or `-`.
pub fn write_to<E>(
    path: Option<&Path>,
    fill: impl FnOnce(&mut dyn Write) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    match path {
        Some(p) if p != Path::new("-") => write_atomic(p, fill),
        _ => {
            let stdout = io::stdout();
            let mut lock = io::BufWriter::new(stdout.lock());
            fill(&mut lock)?;
            lock.flush().map_err(|source| ExportError::Io {
                path: PathBuf::from("<stdout>"),
                source,
            })?;
            Ok(())
        }
    }
}

/// Serialises `value` as one JSON object on one line followed by a newline
/// (the contract's `--json` output).
pub fn json_line<T: serde::Serialize>(value: &T, what: &str) -> Result<String, ExportError> {
    serde_json::to_string(value)
        .map(|s| s + "\n")
        .map_err(|e| ExportError::Serialise {
            what: what.to_string(),
            message: e.to_string(),
        })
}

/// Wraps an I/O error while writing `path` (use inside `fill` closures).
pub fn io_error(path: &Path, source: io::Error) -> ExportError {
    ExportError::Io {
        path: path.to_path_buf(),
        source,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_failed_write_leaves_the_previous_file_and_no_partial_file() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "good\n").unwrap();
        let r: Result<(), ExportError> = write_atomic(&target, |w| {
            w.write_all(b"half").map_err(|e| io_error(&target, e))?;
            Err(io_error(&target, io::Error::other("simulated failure")))
        });
        assert!(r.is_err());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "good\n");
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names.len(), 1, "left behind: {names:?}");
    }

    #[test]
    fn a_successful_write_replaces_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "old\n").unwrap();
        write_atomic::<ExportError>(&target, |w| {
            w.write_all(b"new\n").map_err(|e| io_error(&target, e))
        })
        .unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new\n");
    }
}
