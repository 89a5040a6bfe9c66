//! Sweeps: grids of vehicle × road × speed × seed, run in parallel with a
//! deterministic output order, sliceable into shards for job arrays.
//!
//! The stages, in order: [`grid`] lists the cases (each with its own road
//! seed), [`values::Shard`] picks a contiguous slice of them, [`run`] runs
//! the slice on a thread pool through [`crate::pipeline::simulate`] and hands
//! results back in case order, and [`row`] turns each into a CSV line or a
//! JSON Lines object. [`write_sweep`] strings them together. Command-line
//! value parsing (speeds, ranges, durations, shards) lives in [`values`].
//!
//! # Guarantees
//! - A row holds exactly the values of the single run of that case
//!   (`roughride simulate` with the same vehicle, road, seed, speed and
//!   solver options): both go through the same function with the same
//!   inputs, and numbers are printed in a form that reads back exactly.
//! - Output bytes do not depend on the number of threads.
//! - Shards are contiguous, so the outputs of shards `1/N … N/N`, with the
//!   header only in shard 1, concatenate to the unsharded output.

pub mod grid;
pub mod ordered;
pub mod row;
pub mod run;
pub mod values;

use std::io::Write;
use std::path::Path;

pub use grid::{Case, Grid, RoadGeometry, RoadSource, SweepVehicle};
pub use run::{CaseFailure, Runner};
pub use values::Shard;

use crate::report::io_error;

/// The output format of a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Comma-separated values, one header line (optional) then one line per case.
    Csv,
    /// One JSON object per line, keys as the CSV columns.
    JsonLines,
}

/// How a sweep's rows are written.
#[derive(Debug, Clone, Copy)]
pub struct OutputSpec<'a> {
    /// CSV or JSON Lines.
    pub format: Format,
    /// Whether to write the CSV header line (shard 1 only, so shards concatenate).
    pub header: bool,
    /// The output's name in write errors (a file, or `<stdout>`).
    pub target: &'a Path,
}

/// What a finished sweep did.
#[derive(Debug)]
pub struct SweepReport {
    /// Cases in the full grid.
    pub total_cases: usize,
    /// The slice of case numbers this shard ran.
    pub bounds: (usize, usize),
    /// Rows written (cases that completed).
    pub rows: usize,
    /// Cases that failed, in case order.
    pub failures: Vec<CaseFailure>,
    /// Cases whose row carries plausibility findings (warnings or a result
    /// that cannot be right), in case order.
    pub flagged: Vec<FlaggedCase>,
}

/// A case whose row was written with plausibility findings.
#[derive(Debug, Clone)]
pub struct FlaggedCase {
    /// Vehicle, road, seed and speed in words.
    pub description: String,
    /// What the checks found.
    pub findings: Vec<crate::plausibility::Finding>,
}

impl SweepReport {
    /// Cases whose result cannot be right (their rows are flagged).
    pub fn implausible(&self) -> usize {
        self.flagged
            .iter()
            .filter(|f| crate::plausibility::any_implausible(&f.findings))
            .count()
    }
}

/// Runs shard `shard` of `grid` with `runner` and writes one row per
/// completed case to `out` in case order (a CSV header first when
/// `spec.header` is set and the format is CSV). `on_case` is called once per case, in order, with whether it completed
/// (for a progress display). Failed cases are collected in the report, not
/// returned as an error; an error means the sweep itself stopped (output
/// could not be written, or the run was interrupted).
pub fn write_sweep(
    grid: &Grid,
    shard: Shard,
    runner: &Runner,
    spec: OutputSpec<'_>,
    out: &mut dyn Write,
    mut on_case: impl FnMut(&Case, bool),
) -> Result<SweepReport, crate::Error> {
    grid.validate()?;
    runner.preflight(grid)?;
    let total_cases = grid.len();
    let bounds = shard.bounds(total_cases);
    let cases = grid.cases(bounds.0, bounds.1);
    let seats = row::seat_columns(grid);
    let columns = row::columns(seats, &grid.varied_keys);
    if spec.header && spec.format == Format::Csv {
        out.write_all(row::csv_header(&columns).as_bytes())
            .map_err(|e| io_error(spec.target, e))?;
    }
    let mut rows = 0;
    let mut failures = Vec::new();
    let mut flagged = Vec::new();
    runner.run(grid, &cases, |case, result| {
        let completed = result.is_ok();
        match result {
            Ok(summary) => {
                if !summary.checks.findings.is_empty() {
                    flagged.push(FlaggedCase {
                        description: grid.describe(case),
                        findings: summary.checks.findings.clone(),
                    });
                }
                let cells = row::cells(grid, case, &summary, seats);
                let line = match spec.format {
                    Format::Csv => row::csv_line(&cells),
                    Format::JsonLines => row::json_line(&columns, &cells),
                };
                out.write_all(line.as_bytes())
                    .map_err(|e| io_error(spec.target, e))?;
                rows += 1;
            }
            Err(error) => failures.push(CaseFailure {
                case: *case,
                description: grid.describe(case),
                error,
            }),
        }
        on_case(case, completed);
        Ok(())
    })?;
    Ok(SweepReport {
        total_cases,
        bounds,
        rows,
        failures,
        flagged,
    })
}
