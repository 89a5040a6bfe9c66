//! Output: human tables, JSON, CSV and SVG, and the one way files are
//! written (atomically: a temporary file beside the target, renamed on
//! success, so a failed or interrupted run never leaves a partial file and
//! never clobbers a good one).

pub mod plot;
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

/// A file being written: the bytes go to a temporary file beside the
/// target, which [`AtomicFile::commit`] flushes, syncs and renames over the
/// target. Dropping it uncommitted deletes the temporary file, leaving any
/// existing target untouched.
pub struct AtomicFile {
    target: PathBuf,
    writer: io::BufWriter<std::fs::File>,
    tmp_path: tempfile::TempPath,
}

impl AtomicFile {
    /// Starts writing `path`.
    pub fn create(path: &Path) -> Result<Self, ExportError> {
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
            .map_err(|e| io_error(path, e))?;
        let (file, tmp_path) = tmp.into_parts();
        // Temporary files are created private (0600); give the result the
        // permissions of the file it replaces, or the usual 0644.
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let perms = std::fs::metadata(path)
                .map(|m| m.permissions())
                .unwrap_or_else(|_| std::fs::Permissions::from_mode(0o644));
            file.set_permissions(perms).map_err(|e| io_error(path, e))?;
        }
        Ok(AtomicFile {
            target: path.to_path_buf(),
            writer: io::BufWriter::with_capacity(1 << 16, file),
            tmp_path,
        })
    }

    /// The file the user asked for.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Discards everything written so far (for a run that starts over).
    pub fn rewind(&mut self) -> Result<(), ExportError> {
        use std::io::Seek;
        let target = self.target.clone();
        self.writer.flush().map_err(|e| io_error(&target, e))?;
        let f = self.writer.get_mut();
        f.set_len(0).map_err(|e| io_error(&target, e))?;
        f.seek(io::SeekFrom::Start(0))
            .map_err(|e| io_error(&target, e))?;
        Ok(())
    }

    /// Flushes, syncs and renames the temporary file over the target.
    pub fn commit(self) -> Result<(), ExportError> {
        let AtomicFile {
            target,
            writer,
            tmp_path,
        } = self;
        let file = writer
            .into_inner()
            .map_err(|e| io_error(&target, e.into_error()))?;
        file.sync_all().map_err(|e| io_error(&target, e))?;
        drop(file);
        tmp_path
            .persist(&target)
            .map_err(|e| io_error(&target, e.error))?;
        Ok(())
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.writer.write(buf)
    }
    fn flush(&mut self) -> io::Result<()> {
        self.writer.flush()
    }
}

/// Writes `path` atomically: `fill` writes into an [`AtomicFile`], which is
/// committed only when `fill` succeeds. On any error the temporary file is
/// removed and an existing `path` is left untouched.
pub fn write_atomic<E>(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    let mut file = AtomicFile::create(path)?;
    fill(&mut file)?;
    file.commit()?;
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

/// A bin edge or grid value `k·w` without the rounding noise of the
/// multiplication (`0.036000000000000004` → `0.036`): rounded to 12 decimal
/// places, printed in Rust's shortest round-trip form (deterministic).
pub fn fmt_grid(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    let r = (x * 1e12).round() / 1e12;
    format!("{}", if r == 0.0 { 0.0 } else { r })
}

/// `x` to 6 decimals without trailing zeros (`20.5`, `0.001`, `3`): times
/// to 1 µs and distances to 1 µm in the CSVs, deterministic.
pub fn fmt_micro(x: f64) -> String {
    let s = format!("{x:.6}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
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
