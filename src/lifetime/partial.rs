//! Partial results of a shard (`lifetime --shard K/N --partial FILE`) and
//! their combination (`lifetime --combine FILE…`).
//!
//! A partial-result file is JSON Lines: a header object, then one
//! [`CaseResult`] per line in case order (the unscaled counts of each run).
//! Numbers are written in the shortest form that reads back to the same
//! value, and read back exactly, so combining shards replays precisely the
//! cases the unsharded run would sum, in the same order: the result is the
//! same bit for bit.
//!
//! The header carries a fingerprint of the inputs (the usage file, its
//! vehicle files, its profiles' values) and of the settings that change the
//! counts (solver, weighting, S–N exponents, residue method, bins): a
//! partial result of other inputs is refused, and so is a set of files
//! that leaves a case out or holds one twice.

use std::io::{BufRead, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::LifetimeError;
use super::cases::{CaseResult, Settings};
use super::usage::{Fnv1a, Usage};

/// The first line of a partial-result file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Header {
    /// Format name and version: `roughride lifetime partial 2` (2 added the
    /// seats' fore-aft aw and VDV).
    pub format: String,
    /// The usage file, as given (for people; the fingerprint decides).
    pub usage: String,
    /// Hex fingerprint of the inputs and settings.
    pub fingerprint: String,
    /// Cases in the whole life.
    pub cases_total: usize,
    /// The slice held: cases `first_case .. end_case`.
    pub first_case: usize,
    /// One past the last case held.
    pub end_case: usize,
}

/// The format line of the header.
pub const FORMAT: &str = "roughride lifetime partial 2";

/// What every version of [`FORMAT`] starts with.
const FORMAT_FAMILY: &str = "roughride lifetime partial ";

/// The fingerprint of `usage` run with `settings`.
pub fn fingerprint(usage: &Usage, settings: &Settings) -> String {
    let mut h = Fnv1a::new();
    h.bytes(&usage.fingerprint.to_le_bytes());
    h.bytes(settings.fingerprint_text().as_bytes());
    format!("{:016x}", h.finish())
}

/// Writes partial results as they come: the header first, then
/// [`PartialWriter::case`] per case in order.
pub struct PartialWriter<'w> {
    out: &'w mut dyn Write,
    path: PathBuf,
    next: usize,
    end: usize,
}

impl<'w> PartialWriter<'w> {
    /// Starts a partial file for cases `bounds.0 .. bounds.1`.
    pub fn start(
        out: &'w mut dyn Write,
        path: &Path,
        usage: &Usage,
        settings: &Settings,
        cases_total: usize,
        bounds: (usize, usize),
    ) -> Result<Self, crate::Error> {
        let header = Header {
            format: FORMAT.to_string(),
            usage: usage.file.display().to_string(),
            fingerprint: fingerprint(usage, settings),
            cases_total,
            first_case: bounds.0,
            end_case: bounds.1,
        };
        let mut w = PartialWriter {
            out,
            path: path.to_path_buf(),
            next: bounds.0,
            end: bounds.1,
        };
        w.line(&header)?;
        Ok(w)
    }

    fn line<T: Serialize>(&mut self, value: &T) -> Result<(), crate::Error> {
        let text = crate::report::json_line(value, "partial lifetime result")?;
        self.out
            .write_all(text.as_bytes())
            .map_err(|e| crate::report::io_error(&self.path, e).into())
    }

    /// Writes the next case (in case order).
    pub fn case(&mut self, r: &CaseResult) -> Result<(), crate::Error> {
        assert!(
            r.index == self.next && r.index < self.end,
            "partial file: case {} out of order (expected {} below {})",
            r.index,
            self.next,
            self.end
        );
        self.next += 1;
        self.line(r)
    }
}

/// Reads partial files, checks they belong to `usage` with `settings` and
/// cover every case exactly once, and hands the cases to `each` in case
/// order (files may be given in any order).
pub fn combine(
    paths: &[PathBuf],
    usage: &Usage,
    settings: &Settings,
    cases_total: usize,
    mut each: impl FnMut(CaseResult) -> Result<(), crate::Error>,
) -> Result<(), crate::Error> {
    let want = fingerprint(usage, settings);
    let mut files = Vec::with_capacity(paths.len());
    for p in paths {
        let (header, lines) = open(p)?;
        let bad = |message: String| LifetimeError::Partial {
            path: p.clone(),
            message,
        };
        if header.fingerprint != want {
            return Err(bad(format!(
                "was made from other inputs or settings than {} with these options (fingerprint {} here, {want} now): rerun the shard, or combine with the same usage, vehicle and profile files and the same --solver, --rate, --rtol, --atol, --weighting, --sn-exponent and --residue",
                usage.file.display(),
                header.fingerprint
            ))
            .into());
        }
        if header.cases_total != cases_total
            || header.first_case > header.end_case
            || header.end_case > cases_total
        {
            return Err(bad(format!(
                "holds cases {}..{} of {}, but the usage has {cases_total} cases",
                header.first_case, header.end_case, header.cases_total
            ))
            .into());
        }
        files.push((p.clone(), header, lines));
    }
    files.sort_by_key(|f| (f.1.first_case, f.1.end_case));
    let mut next = 0usize;
    for (path, header, lines) in files {
        if header.first_case == header.end_case {
            continue;
        }
        if header.first_case != next {
            return Err(coverage_error(&path, usage, next, header.first_case).into());
        }
        read_cases(&path, &header, lines, &mut each)?;
        next = header.end_case;
    }
    if next != cases_total {
        return Err(LifetimeError::Partial {
            path: usage.file.clone(),
            message: format!(
                "the partial files cover cases 0..{next} of {cases_total}: cases {next}..{cases_total} are missing (run the missing shards)"
            ),
        }
        .into());
    }
    Ok(())
}

type Lines = std::io::Lines<std::io::BufReader<std::fs::File>>;

fn open(path: &Path) -> Result<(Header, Lines), crate::Error> {
    let file = std::fs::File::open(path).map_err(|source| LifetimeError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    let mut lines = std::io::BufReader::new(file).lines();
    let first = lines
        .next()
        .transpose()
        .map_err(|source| LifetimeError::Read {
            path: path.to_path_buf(),
            source,
        })?
        .unwrap_or_default();
    let header: Option<Header> = serde_json::from_str(&first).ok();
    let header = match header {
        Some(h) if h.format == FORMAT => h,
        // Same family, another version: say so rather than "not a partial".
        Some(h) if h.format.starts_with(FORMAT_FAMILY) => {
            return Err(crate::Error::Lifetime(LifetimeError::Partial {
                path: path.to_path_buf(),
                message: format!(
                    "line 1: format \"{}\" was written by another roughride version; this one reads \"{FORMAT}\": run that shard again (`roughride lifetime --shard K/N --partial FILE`)",
                    h.format
                ),
            }));
        }
        _ => {
            return Err(crate::Error::Lifetime(LifetimeError::Partial {
                path: path.to_path_buf(),
                message: format!(
                    "line 1: not a partial lifetime result (written by `roughride lifetime --shard K/N --partial FILE`; the first line names the format \"{FORMAT}\")"
                ),
            }));
        }
    };
    Ok((header, lines))
}

fn coverage_error(path: &Path, usage: &Usage, next: usize, first: usize) -> LifetimeError {
    LifetimeError::Partial {
        path: path.to_path_buf(),
        message: if first < next {
            format!(
                "starts at case {first}, which another partial file already holds (cases up to {next}): give each shard once"
            )
        } else {
            format!(
                "starts at case {first}: cases {next}..{first} of {} are missing (run the missing shards)",
                usage.file.display()
            )
        },
    }
}

fn read_cases(
    path: &Path,
    header: &Header,
    lines: Lines,
    each: &mut impl FnMut(CaseResult) -> Result<(), crate::Error>,
) -> Result<(), crate::Error> {
    let mut expect = header.first_case;
    for (n, line) in lines.enumerate() {
        let bad = |message: String| LifetimeError::Partial {
            path: path.to_path_buf(),
            message: format!("line {}: {message}", n + 2),
        };
        let line = line.map_err(|source| LifetimeError::Read {
            path: path.to_path_buf(),
            source,
        })?;
        let r: CaseResult = serde_json::from_str(&line).map_err(|e| bad(e.to_string()))?;
        if r.index != expect || r.index >= header.end_case {
            return Err(bad(format!("holds case {}, expected case {expect}", r.index)).into());
        }
        expect += 1;
        each(r)?;
    }
    if expect != header.end_case {
        return Err(LifetimeError::Partial {
            path: path.to_path_buf(),
            message: format!(
                "ends after case {} of its cases {}..{}: the file is incomplete",
                expect as i64 - 1,
                header.first_case,
                header.end_case
            ),
        }
        .into());
    }
    Ok(())
}
