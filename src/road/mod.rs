//! Road profiles: the elevation a wheel sees, as a function of distance.
//!
//! Owns the [`Profile`] type (uniformly spaced elevations, metres), reading
//! and writing the profile CSV of the documented interface (`profiles/reference.md`)
//! (`distance_m,elevation_m`), ISO 8608 synthesis, discrete obstacles and
//! roughness classification (ISO 8608 class, IRI per ASTM E1926).
//!
//! Between samples the road is linear in distance; before the first sample
//! and after the last it is held at the end value.

pub mod classify;
mod csv_io;
pub mod iri;
pub mod iso8608;
pub mod obstacle;
pub mod psd;

pub use classify::{Classification, classify};
pub use csv_io::{read_profile_csv, read_profile_from, write_profile_csv};
pub use iri::{iri_m_per_km, iri_segments};
pub use iso8608::{RoadClass, RoadSpec, generate};
pub use obstacle::{Obstacle, check_obstacles, flat, lay};
pub use psd::{Spectrum, welch_psd};

use std::path::PathBuf;

use thiserror::Error;

/// A road profile on a uniform distance grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    /// Distance of the first sample, m.
    pub start_m: f64,
    /// Spacing between samples, m (> 0).
    pub spacing_m: f64,
    /// Elevation at `start_m + i·spacing_m`, m.
    pub elevation_m: Vec<f64>,
    /// `1 / spacing_m`, so the lookups at every solver stage multiply
    /// instead of divide.
    per_spacing_m: f64,
}

impl Profile {
    /// A profile from uniformly spaced samples. Panics on a non-positive
    /// spacing or fewer than two samples: callers validate user input first.
    pub fn new(start_m: f64, spacing_m: f64, elevation_m: Vec<f64>) -> Self {
        assert!(
            spacing_m > 0.0 && spacing_m.is_finite(),
            "profile spacing must be positive, got {spacing_m}"
        );
        assert!(
            elevation_m.len() >= 2,
            "a profile needs two samples, got {}",
            elevation_m.len()
        );
        Profile {
            start_m,
            spacing_m,
            elevation_m,
            per_spacing_m: 1.0 / spacing_m,
        }
    }

    /// Number of samples.
    pub fn len(&self) -> usize {
        self.elevation_m.len()
    }

    /// Always false: a profile holds at least two samples.
    pub fn is_empty(&self) -> bool {
        self.elevation_m.is_empty()
    }

    /// Distance of the last sample, m.
    pub fn end_m(&self) -> f64 {
        self.start_m + (self.len() - 1) as f64 * self.spacing_m
    }

    /// Length covered, m (last distance − first distance).
    pub fn length_m(&self) -> f64 {
        (self.len() - 1) as f64 * self.spacing_m
    }

    /// Distance of sample `i`, m.
    pub fn distance_m(&self, i: usize) -> f64 {
        self.start_m + i as f64 * self.spacing_m
    }

    /// Elevation at distance `x_m`, m: linear between samples, held at the
    /// end values outside the profile.
    #[inline]
    pub fn elevation_at(&self, x_m: f64) -> f64 {
        self.elevation_and_slope_at(x_m).0
    }

    /// Slope dz/dx at `x_m` (the segment to the right of a sample; zero
    /// outside the profile, where the road is held flat).
    #[inline]
    pub fn slope_at(&self, x_m: f64) -> f64 {
        self.elevation_and_slope_at(x_m).1
    }

    /// [`Profile::elevation_at`] and [`Profile::slope_at`] together, from
    /// one segment lookup (the same numbers as the two calls).
    #[inline(always)]
    pub fn elevation_and_slope_at(&self, x_m: f64) -> (f64, f64) {
        self.reader().elevation_and_slope_at(x_m)
    }

    /// The lookup constants of this profile, for a loop that reads the
    /// road at every sample (the end distance and the last index are then
    /// worked out once, not per lookup).
    #[inline(always)]
    pub fn reader(&self) -> ProfileReader<'_> {
        let last = self.len() - 1;
        ProfileReader {
            elevation_m: &self.elevation_m,
            start_m: self.start_m,
            per_spacing_m: self.per_spacing_m,
            end_m: self.end_m(),
            last,
            last_f: last as f64,
        }
    }

    /// R.m.s. elevation about the mean, m.
    pub fn rms_m(&self) -> f64 {
        let n = self.len() as f64;
        let mean = self.elevation_m.iter().sum::<f64>() / n;
        (self
            .elevation_m
            .iter()
            .map(|z| (z - mean).powi(2))
            .sum::<f64>()
            / n)
            .sqrt()
    }
}

/// A road profile could not be read, generated or classified.
/// A [`Profile`]'s segment lookup with its constants worked out once
/// ([`Profile::reader`]); the same arithmetic, so the same numbers.
#[derive(Debug, Clone, Copy)]
pub struct ProfileReader<'a> {
    elevation_m: &'a [f64],
    start_m: f64,
    per_spacing_m: f64,
    end_m: f64,
    /// Index of the last sample (≥ 1), and as f64.
    last: usize,
    last_f: f64,
}

impl ProfileReader<'_> {
    /// Index of the segment holding `x_m` and the fraction along it, with
    /// `x_m` clamped to the profile.
    #[inline(always)]
    fn locate(&self, x_m: f64) -> (usize, f64) {
        let u = (x_m - self.start_m) * self.per_spacing_m;
        let last = self.last;
        if u <= 0.0 || u.is_nan() {
            return (0, 0.0);
        }
        if u >= self.last_f {
            return (last - 1, 1.0);
        }
        // 0 < u < last here, so truncation is the floor (and needs no libm
        // call on targets without a rounding instruction). Through i64, which
        // the processor converts in one instruction each way (usize takes a
        // longer unsigned sequence); the value is the same. Unchecked, as
        // the saturating `as` adds range tests to every lookup.
        // SAFETY: u is not NaN and 0 < u < last_f (tested above), and
        // last_f is a Vec's length less one, at most isize::MAX, so `u`
        // truncated fits in an i64.
        let i: i64 = unsafe { u.to_int_unchecked() };
        ((i as usize).min(last - 1), u - i as f64)
    }

    /// See [`Profile::elevation_and_slope_at`].
    #[inline(always)]
    pub fn elevation_and_slope_at(&self, x_m: f64) -> (f64, f64) {
        let (i, f) = self.locate(x_m);
        let (a, b) = (self.elevation_m[i], self.elevation_m[i + 1]);
        let elevation = a + f * (b - a);
        let slope = if x_m < self.start_m || x_m >= self.end_m {
            0.0
        } else {
            (b - a) * self.per_spacing_m
        };
        (elevation, slope)
    }
}

#[derive(Debug, Error)]
pub enum ProfileError {
    /// The file could not be opened or read.
    #[error("{path}: cannot read: {source}")]
    Read {
        /// The profile file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// The header row lacks a required column.
    #[error(
        "{path}: line 1: missing column `{column}` (the header must name distance_m and elevation_m)"
    )]
    MissingColumn {
        /// The profile file.
        path: PathBuf,
        /// The missing column's name.
        column: String,
    },
    /// A row is malformed: not a number, NaN, not increasing, …
    #[error("{path}: line {line}: {message}")]
    BadRow {
        /// The profile file.
        path: PathBuf,
        /// 1-based line number in the file (the header is line 1).
        line: u64,
        /// What was wrong.
        message: String,
    },
    /// The profile as a whole is unusable (too short, gaps too large, …).
    #[error("{path}: {message}")]
    Unusable {
        /// The profile file (or a description of a generated road).
        path: PathBuf,
        /// What was wrong.
        message: String,
    },
    /// A generation or classification parameter is out of range.
    #[error("{0}")]
    Parameter(String),
}

impl ProfileError {
    /// Exit status for the command line: 2 for bad input, 1 for I/O trouble.
    pub fn exit_status(&self) -> u8 {
        match self {
            ProfileError::Read { source, .. } => crate::error::read_failure_status(source),
            _ => 2,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolation_is_linear_and_held_at_the_ends() {
        let p = Profile::new(10.0, 0.5, vec![0.0, 1.0, 3.0]);
        assert_eq!(p.end_m(), 11.0);
        assert_eq!(p.elevation_at(9.0), 0.0);
        assert_eq!(p.elevation_at(10.25), 0.5);
        assert_eq!(p.elevation_at(10.75), 2.0);
        assert_eq!(p.elevation_at(12.0), 3.0);
        assert_eq!(p.slope_at(10.1), 2.0);
        assert_eq!(p.slope_at(10.6), 4.0);
        assert_eq!(p.slope_at(11.0), 0.0);
        assert_eq!(p.slope_at(9.9), 0.0);
    }
}
