//! Sweeps: grids of vehicle × road × speed × seed, run in parallel with a
//! deterministic output order, sliceable into shards for job arrays.
//! Command-line value parsing (speeds, ranges, durations, shards) lives in
//! [`values`].

pub mod values;
