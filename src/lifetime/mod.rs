//! Lifetime load spectra: a vehicle's life as parts of road, speed and
//! load (the [`usage`] file), every part run through the same pipeline as
//! `simulate`, and the counts scaled to the life and summed.
//!
//! The stages, in order: [`usage`] reads and validates the usage file;
//! [`cases`] lists the runs (part × speed × road, road fastest) and runs one
//! through [`crate::pipeline::simulate_detailed`] into a [`CaseResult`]
//! (unscaled counts); [`run_cases`] runs a slice of them on a thread pool;
//! [`spectra`] scales each case by (its distance in the life) / (its
//! simulated distance) and sums them in case order into the life's
//! range–mean matrices, exceedance and level-crossing spectra and
//! damage-equivalent ranges; [`partial`] writes and reads the partial
//! results of a shard, so shards combine into exactly the unsharded result.
//!
//! # Scaling
//! A case of part `p`, speed `s` and road `r` stands for
//! `target_km · share_p · share_s / roads_p` km of the life; its cycles,
//! level crossings, Palmgren–Miner sums and times are multiplied by that
//! distance over its simulated length. Cycles are scaled, never damage
//! ranges, and the residue is closed before scaling (by
//! [`crate::stats::ResidueMethod`]).
//!
//! # Determinism
//! Cases are summed in case order whatever the thread count or sharding,
//! so the result is the same bit for bit.

pub mod cases;
pub mod partial;
pub mod spectra;
pub mod tables;
pub mod usage;

use std::path::PathBuf;

use thiserror::Error;

pub use cases::{Case, CaseResult, Settings, cases, run_case};
pub use spectra::{LifeReport, LifeTotals};
pub use usage::{Part, PartRoad, Usage, read_usage};

use crate::batch::ordered::Pool;

/// A usage file or a partial-result file was unreadable or wrong.
#[derive(Debug, Error)]
pub enum LifetimeError {
    /// The file could not be read.
    #[error("{path}: cannot read: {source}")]
    Read {
        /// The file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// The TOML is malformed or has an unknown or mistyped key.
    #[error("{path}: {message}")]
    Syntax {
        /// The usage file.
        path: PathBuf,
        /// The TOML parser's message (with line and column).
        message: String,
    },
    /// A key holds an impossible value, or keys contradict each other.
    #[error("{path}: {}`{key}` {message}", line.map_or(String::new(), |l| format!("line {l}: ")))]
    Invalid {
        /// The usage file.
        path: PathBuf,
        /// 1-based line of the value (or its table), when known.
        line: Option<usize>,
        /// The dotted key, e.g. `part[1].share` (parts counted from 0).
        key: String,
        /// What was wrong.
        message: String,
    },
    /// A file the usage file names (vehicle, profile) was refused.
    #[error("{path}: {}`{key}`: {source}", line.map_or(String::new(), |l| format!("line {l}: ")))]
    Input {
        /// The usage file.
        path: PathBuf,
        /// 1-based line of the key.
        line: Option<usize>,
        /// The key naming the file.
        key: String,
        /// Why the file was refused.
        source: Box<crate::Error>,
    },
    /// A case (one run of a part) failed.
    #[error("{path}: {case}: {source}")]
    Case {
        /// The usage file.
        path: PathBuf,
        /// The case in words: part, speed, road.
        case: String,
        /// Why it failed.
        source: Box<crate::Error>,
    },
    /// A partial-result file does not belong to this usage, or the set of
    /// partial results is not complete.
    #[error("{path}: {message}")]
    Partial {
        /// The partial-result file (or the usage file, for a missing case).
        path: PathBuf,
        /// What was wrong.
        message: String,
    },
}

impl LifetimeError {
    /// Exit status for the command line: 2 for bad input, 1 for I/O trouble.
    pub fn exit_status(&self) -> u8 {
        match self {
            LifetimeError::Read { source, .. } if source.kind() != std::io::ErrorKind::NotFound => {
                1
            }
            LifetimeError::Input { source, .. } | LifetimeError::Case { source, .. } => {
                source.exit_status()
            }
            _ => 2,
        }
    }
}

/// Runs cases `lo..hi` of `usage` on `pool` and hands each result to
/// `emit` in case order (for summing, writing a partial file, progress).
/// The first case that fails stops the run: a life spectrum with a case
/// missing would be wrong, so its error is returned with the case named.
pub fn run_cases(
    usage: &Usage,
    settings: &Settings,
    bounds: (usize, usize),
    pool: &Pool,
    mut emit: impl FnMut(CaseResult) -> Result<(), crate::Error>,
) -> Result<(), crate::Error> {
    let all = cases(usage);
    let slice = &all[bounds.0..bounds.1];
    pool.run(
        "roughride-lifetime",
        slice.len(),
        |i| run_case(usage, &slice[i], settings),
        |i, result| match result {
            Ok(r) => emit(r),
            Err(e) => Err(LifetimeError::Case {
                path: usage.file.clone(),
                case: cases::describe(usage, &slice[i]),
                source: Box::new(e),
            }
            .into()),
        },
    )
}
