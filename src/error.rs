//! The crate-level error: one variant per boundary, each carrying its own
//! typed error with the file, line, key or value that was wrong.
//!
//! The binary maps [`Error::exit_status`] to the process exit code: 2 for
//! bad input or usage, 1 for anything else (the documented interface; README).

use thiserror::Error as ThisError;

/// Any failure the library reports to the command line.
#[derive(Debug, ThisError)]
pub enum Error {
    /// A vehicle file could not be read or describes an impossible vehicle.
    #[error(transparent)]
    Vehicle(#[from] crate::vehicle::VehicleError),
    /// A road profile could not be read, generated or classified.
    #[error(transparent)]
    Profile(#[from] crate::road::ProfileError),
    /// A run could not be completed.
    #[error(transparent)]
    Solve(#[from] crate::solve::SolveError),
    /// A result could not be written.
    #[error(transparent)]
    Export(#[from] crate::report::ExportError),
    /// A measured acceleration record or its evaluation was refused.
    #[error(transparent)]
    Comfort(#[from] crate::comfort::ComfortError),
    /// A usage file, a partial result or a case of a lifetime run was refused.
    #[error(transparent)]
    Lifetime(#[from] crate::lifetime::LifetimeError),
    /// A command-line value was malformed (option name and value in the text).
    #[error("{0}")]
    Usage(String),
    /// A run finished but its result cannot be right (see
    /// [`crate::plausibility`]); nothing was printed or kept.
    #[error("the result cannot be right, so it was not printed and no file was written:\n  {}", .0.join("\n  "))]
    Implausible(Vec<String>),
    /// Some cases of a sweep failed (no row) or gave a result that cannot
    /// be right (row flagged in its `checks` column); the other rows were
    /// written. Each has already been reported on its own line.
    #[error("{}", cases_failed_text(*failed, *implausible, *total))]
    CasesFailed {
        /// Cases that failed.
        failed: usize,
        /// Cases whose rows are flagged implausible.
        implausible: usize,
        /// Cases tried.
        total: usize,
    },
}

/// Exit status for an input file that could not be read: 2 when the path
/// itself is the problem (missing, a directory, not text), 1 for trouble of
/// the system (permissions, a failing disk).
pub fn read_failure_status(e: &std::io::Error) -> u8 {
    use std::io::ErrorKind::{InvalidData, IsADirectory, NotADirectory, NotFound};
    match e.kind() {
        NotFound | InvalidData | IsADirectory | NotADirectory => 2,
        _ => 1,
    }
}

/// A CSV reader's complaint in words (never the library's debug text).
pub(crate) fn csv_message(kind: &csv::ErrorKind) -> String {
    match kind {
        csv::ErrorKind::Utf8 { err, .. } => format!(
            "field {} is not UTF-8 text (invalid byte after {} valid bytes); save the file as UTF-8",
            err.field() + 1,
            err.valid_up_to()
        ),
        csv::ErrorKind::UnequalLengths {
            expected_len, len, ..
        } => format!("{len} fields where the header has {expected_len}"),
        csv::ErrorKind::Io(e) => format!("cannot read: {e}"),
        _ => "malformed CSV".to_string(),
    }
}

fn cases_failed_text(failed: usize, implausible: usize, total: usize) -> String {
    match (failed, implausible) {
        (f, 0) => format!("{f} of {total} cases failed; the other rows were written"),
        (0, i) => format!(
            "{i} of {total} cases gave results that cannot be right (flagged implausible in the checks column); the other rows are results"
        ),
        (f, i) => format!(
            "{f} of {total} cases failed and {i} gave results that cannot be right (flagged implausible in the checks column); the other rows are results"
        ),
    }
}

impl Error {
    /// Exit status for the command line: 2 for bad input, 1 otherwise.
    pub fn exit_status(&self) -> u8 {
        match self {
            Error::Vehicle(e) => e.exit_status(),
            Error::Profile(e) => e.exit_status(),
            Error::Solve(e) => e.exit_status(),
            Error::Export(e) => e.exit_status(),
            Error::Comfort(e) => e.exit_status(),
            Error::Lifetime(e) => e.exit_status(),
            Error::Usage(_) => 2,
            Error::CasesFailed { .. } => 1,
            Error::Implausible(_) => 1,
        }
    }
}
