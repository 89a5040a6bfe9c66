//! Output: human tables, JSON, CSV and SVG, and the one way files are
//! written ([`AtomicFile`]: complete or not at all, never replacing a FIFO,
//! device or link; see `files`), with the check that no output is one of
//! the command's inputs ([`FilePlan`]).

mod files;
mod leftovers;
pub mod life_plot;
pub mod plot;
mod same_file;
pub mod table;
pub mod tradeoff;
pub mod vehicle_plot;

pub use files::{AtomicFile, discard_unfinished, write_atomic, write_to};
pub use same_file::FilePlan;
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
    /// An output path was refused before the run (it names an input,
    /// another output, a directory, …); the message says which and why.
    #[error("{0}")]
    Refused(String),
    /// Serialising a result failed (a bug: the result types are plain data).
    #[error("cannot serialise {what}: {message}")]
    Serialise {
        /// What was being written.
        what: String,
        /// The serialiser's message.
        message: String,
    },
}

impl ExportError {
    /// Exit status for the command line: 2 for a refused output path (bad
    /// input), 1 for a write that failed.
    pub fn exit_status(&self) -> u8 {
        match self {
            ExportError::Refused(_) => 2,
            ExportError::Io { .. } | ExportError::Serialise { .. } => 1,
        }
    }
}

/// The name standard output goes by in messages.
pub const STDOUT_NAME: &str = "<stdout>";

/// Writes `text` to standard output and flushes it. A failure (a full
/// disk, a closed terminal) is an [`ExportError`] naming `<stdout>`, so the
/// command ends with a one-line message and exit status 1 instead of a
/// panic. A closed pipe never gets here: SIGPIPE's default disposition ends
/// the process quietly first (see `main.rs`).
pub fn print_stdout(text: &str) -> Result<(), ExportError> {
    if capture(text.as_bytes()) {
        return Ok(());
    }
    let mut out = io::stdout().lock();
    out.write_all(text.as_bytes())
        .and_then(|()| out.flush())
        .map_err(|e| io_error(Path::new(STDOUT_NAME), e))
}

thread_local! {
    /// This thread's captured standard output, while [`capture_stdout`] runs.
    static CAPTURED: std::cell::RefCell<Option<Vec<u8>>> = const { std::cell::RefCell::new(None) };
}

/// Runs `f` with everything [`print_stdout`] and [`write_to`] would print
/// on this thread collected instead, and returns it with `f`'s result: for
/// running commands in-process (the command-line fuzz test) and reading
/// what they print. The capture ends even when `f` panics.
pub fn capture_stdout<R>(f: impl FnOnce() -> R) -> (R, Vec<u8>) {
    struct Guard(Option<Vec<u8>>);
    impl Drop for Guard {
        fn drop(&mut self) {
            let previous = self.0.take();
            CAPTURED.with(|c| *c.borrow_mut() = previous);
        }
    }
    let guard = Guard(CAPTURED.with(|c| c.borrow_mut().replace(Vec::new())));
    let r = f();
    let out = CAPTURED.with(|c| c.borrow_mut().take()).unwrap_or_default();
    drop(guard);
    (r, out)
}

/// Whether [`capture_stdout`] is running on this thread.
fn capturing() -> bool {
    CAPTURED.with(|c| c.borrow().is_some())
}

/// Appends `bytes` to the capture and says so, if one is running.
fn capture(bytes: &[u8]) -> bool {
    CAPTURED.with(|c| match c.borrow_mut().as_mut() {
        Some(buf) => {
            buf.extend_from_slice(bytes);
            true
        }
        None => false,
    })
}

/// Serialises `value` as one JSON object on one line followed by a newline
/// (the documented `--json` output).
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

/// A rainflow cycle count (a multiple of ½: half cycles count ½) with one
/// decimal, always: `587.0`, `1146.5`, so every table prints counts alike.
pub fn fmt_cycles(n: f64) -> String {
    format!("{n:.1}")
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
    fn cycle_counts_print_with_one_decimal_whole_or_half() {
        assert_eq!(fmt_cycles(587.0), "587.0");
        assert_eq!(fmt_cycles(1146.0), "1146.0");
        assert_eq!(fmt_cycles(12454.5), "12454.5");
        assert_eq!(fmt_cycles(0.5), "0.5");
    }
}
