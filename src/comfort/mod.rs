//! Human response to whole-body vibration per ISO 2631-1:1997: frequency
//! weightings (Annex A), the basic evaluation (aw), the additional methods
//! (running r.m.s./MTVV, VDV), crest factor, and the comfort and health
//! guidance of Annexes B and C with the EU Directive 2002/44/EC values.
//!
//! Units: accelerations in m/s², VDV in m/s^1.75, times in s, frequencies in
//! Hz. A channel is evaluated by [`Meter`] (streaming, bounded memory) after
//! the digital [`WeightingFilter`]; [`guidance`] turns the measures into the
//! Annex B/C and Directive statements, always with [`HEALTH_CAUTION`].

mod guidance;
mod measures;
mod record;
mod weighting;

pub use guidance::{
    COMFORT_BANDS, COMFORT_SEAT_K, CautionZone, ComfortBand, Guidance, HEALTH_CAUTION,
    HEALTH_SEAT_K, SeatTotals, guidance, seat_guidance, seat_totals, total_value,
};
pub use measures::{Measures, Meter};
pub use record::{Record, read_record, read_record_from};
pub use weighting::{Weighting, WeightingFilter};

use std::path::PathBuf;

/// The weighting of a seat's fore-aft acceleration: Wd (ISO 2631-1
/// Table 3 / clause 8.2: x and y on the seat surface, health and comfort).
pub const FORE_AFT_WEIGHTING: Weighting = Weighting::Wd;

use thiserror::Error;

/// A measured acceleration record or its evaluation was refused.
#[derive(Debug, Error)]
pub enum ComfortError {
    /// The record file could not be read.
    #[error("{path}: cannot read: {source}")]
    Read {
        /// The record file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// A row or column of the record is malformed.
    #[error("{path}: line {line}: {message}")]
    BadRow {
        /// The record file.
        path: PathBuf,
        /// 1-based line number (the header is line 1).
        line: u64,
        /// What was wrong.
        message: String,
    },
    /// The record or parameter cannot be evaluated (sample rate too low, …).
    #[error("{0}")]
    Unusable(String),
}

impl ComfortError {
    /// Exit status for the command line: 2 for bad input, 1 for I/O trouble.
    pub fn exit_status(&self) -> u8 {
        match self {
            ComfortError::Read { source, .. } => crate::error::read_failure_status(source),
            _ => 2,
        }
    }
}
