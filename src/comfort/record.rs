//! Measured acceleration records: a CSV with a header row naming `time_s`
//! and the acceleration column (m/s²); other columns are ignored, `#` starts
//! a comment line.
//!
//! Sampling must be uniform. Each time step may differ from the nominal
//! (median) step by at most [`JITTER_TOLERANCE`] = 1 % of it,
//! which absorbs printed rounding and logger clock jitter; anything more
//! (dropped samples, restarts) is refused with the line where it happens,
//! because resampling would invent content the weighting then evaluates.

use std::io::Read;
use std::path::{Path, PathBuf};

use super::ComfortError;
use crate::limits::{self, ACCELERATION, RECORD_RATE, RECORD_TIME, Range};

/// Largest tolerated deviation of a time step from the nominal step,
/// as a fraction of the nominal step.
pub const JITTER_TOLERANCE: f64 = 0.01;

/// A uniformly sampled acceleration record.
#[derive(Debug, Clone, PartialEq)]
pub struct Record {
    /// Time of the first sample, s.
    pub start_s: f64,
    /// Samples per second, Hz (rows − 1 over the time span).
    pub sample_rate_hz: f64,
    /// The acceleration samples, m/s².
    pub accel_m_s2: Vec<f64>,
}

impl Record {
    /// Record duration as evaluated: samples / sample rate, s.
    pub fn duration_s(&self) -> f64 {
        self.accel_m_s2.len() as f64 / self.sample_rate_hz
    }
}

/// Reads `column` (and `time_s`) from the CSV file at `path`.
pub fn read_record(path: &Path, column: &str) -> Result<Record, ComfortError> {
    let file = std::fs::File::open(path).map_err(|source| ComfortError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    read_record_from(file, path, column)
}

/// Reads a record from any reader; `path` names it in messages.
pub fn read_record_from(
    reader: impl Read,
    path: &Path,
    column: &str,
) -> Result<Record, ComfortError> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .flexible(true)
        .from_reader(reader);
    let (it, ia, width) = column_indices(&mut rdr, path, column)?;
    let rows = read_rows(&mut rdr, path, (it, ia, width), column)?;
    let n = rows.times.len();
    if n < 2 {
        return Err(ComfortError::Unusable(format!(
            "{}: a record needs at least two data rows, found {n}",
            path.display()
        )));
    }
    check_uniform(&rows, path)?;
    let times = &rows.times;
    // The mean step over the record: jitter averages out.
    let sample_rate_hz = (n - 1) as f64 / (times[n - 1] - times[0]);
    if !RECORD_RATE.contains(sample_rate_hz) {
        return Err(ComfortError::Unusable(format!(
            "{}: the record is sampled at {} Hz; the sample rate must lie between {}",
            path.display(),
            limits::show(sample_rate_hz),
            RECORD_RATE.span()
        )));
    }
    Ok(Record {
        start_s: times[0],
        sample_rate_hz,
        accel_m_s2: rows.accel,
    })
}

fn bad_row(path: &Path, line: u64, message: String) -> ComfortError {
    ComfortError::BadRow {
        path: path.to_path_buf(),
        line,
        message,
    }
}

/// Positions of `time_s` and `column` in the header (a UTF-8 byte-order
/// mark on the first name is ignored), and the number of columns.
fn column_indices<R: Read>(
    rdr: &mut csv::Reader<R>,
    path: &Path,
    column: &str,
) -> Result<(usize, usize, usize), ComfortError> {
    let headers = rdr
        .headers()
        .map_err(|e| csv_error(path.to_path_buf(), 1, e))?
        .clone();
    let header_line = headers.position().map(|p| p.line()).unwrap_or(1);
    let names: Vec<&str> = headers
        .iter()
        .map(|h| h.trim_start_matches('\u{feff}'))
        .collect();
    let find = |name: &str| {
        names.iter().position(|h| *h == name).ok_or_else(|| {
            bad_row(
                path,
                header_line,
                format!(
                    "no column `{name}` in the header (columns: {})",
                    names.join(", ")
                ),
            )
        })
    };
    Ok((find("time_s")?, find(column)?, names.len()))
}

/// The data rows: times (strictly increasing), their file lines, and the
/// accelerations.
struct Rows {
    times: Vec<f64>,
    lines: Vec<u64>,
    accel: Vec<f64>,
}

fn read_rows<R: Read>(
    rdr: &mut csv::Reader<R>,
    path: &Path,
    (it, ia, width): (usize, usize, usize),
    column: &str,
) -> Result<Rows, ComfortError> {
    let mut rows = Rows {
        times: Vec::new(),
        lines: Vec::new(),
        accel: Vec::new(),
    };
    let mut rec = csv::StringRecord::new();
    loop {
        match rdr.read_record(&mut rec) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let line = e.position().map(|q| q.line()).unwrap_or(0);
                return Err(csv_error(path.to_path_buf(), line, e));
            }
        }
        let line = rec.position().map(|q| q.line()).unwrap_or(0);
        if rec.len() > width {
            return Err(bad_row(
                path,
                line,
                format!(
                    "{} fields where the header has {width}: a stray comma, or a row of another file?",
                    rec.len()
                ),
            ));
        }
        let t = field_in(&rec, (it, "time_s"), &RECORD_TIME, path, line)?;
        let a = field_in(&rec, (ia, column), &ACCELERATION, path, line)?;
        if let Some(&prev) = rows.times.last() {
            if t <= prev {
                return Err(bad_row(
                    path,
                    line,
                    format!("column `time_s`: must increase strictly: {t} follows {prev}"),
                ));
            }
        }
        rows.times.push(t);
        rows.lines.push(line);
        rows.accel.push(a);
    }
    Ok(rows)
}

/// Field `i` (named `name`) of a row as a number within `range`.
fn field_in(
    rec: &csv::StringRecord,
    (i, name): (usize, &str),
    range: &Range,
    path: &Path,
    line: u64,
) -> Result<f64, ComfortError> {
    let s = rec
        .get(i)
        .ok_or_else(|| bad_row(path, line, format!("column `{name}`: value missing")))?;
    let v: f64 = s
        .parse()
        .map_err(|_| bad_row(path, line, format!("column `{name}`: not a number: {s:?}")))?;
    range
        .check(v)
        .map_err(|m| bad_row(path, line, format!("column `{name}`: {m}")))
}

/// Refuses a step that differs from the nominal (median) step by more than
/// [`JITTER_TOLERANCE`], naming its line. The median is the nominal step so
/// that a single gap is reported where it is rather than skewing every
/// other step.
fn check_uniform(rows: &Rows, path: &Path) -> Result<(), ComfortError> {
    let times = &rows.times;
    let mut steps: Vec<f64> = times.windows(2).map(|w| w[1] - w[0]).collect();
    steps.sort_by(f64::total_cmp);
    let step = steps[steps.len() / 2];
    for (i, w) in times.windows(2).enumerate() {
        let d = w[1] - w[0];
        if (d - step).abs() > JITTER_TOLERANCE * step {
            return Err(bad_row(
                path,
                rows.lines[i + 1],
                format!(
                    "column `time_s`: step {d} s after {} s differs from the nominal {step} s by more \
                     than {}% (sampling must be uniform; split or resample the record)",
                    w[0],
                    JITTER_TOLERANCE * 100.0
                ),
            ));
        }
    }
    Ok(())
}

fn csv_error(path: PathBuf, line: u64, e: csv::Error) -> ComfortError {
    match e.into_kind() {
        csv::ErrorKind::Io(source) => ComfortError::Read { path, source },
        kind => ComfortError::BadRow {
            path,
            line,
            message: crate::error::csv_message(&kind),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str, col: &str) -> Result<Record, ComfortError> {
        read_record_from(text.as_bytes(), Path::new("rec.csv"), col)
    }

    #[test]
    fn reads_the_named_column_and_the_rate() {
        let r = read("time_s,ax,az\n0,1,2\n0.002,3,4\n0.004,5,6\n", "az").unwrap();
        assert_eq!(r.accel_m_s2, vec![2.0, 4.0, 6.0]);
        assert!((r.sample_rate_hz - 500.0).abs() < 1e-9);
        assert!((r.duration_s() - 0.006).abs() < 1e-12);
    }

    #[test]
    fn tolerates_small_jitter_and_refuses_a_gap_naming_the_line() {
        assert!(read("time_s,a\n0,0\n0.01,0\n0.02005,0\n0.03,0\n", "a").is_ok());
        let e = read("time_s,a\n0,0\n0.01,0\n0.02,0\n0.04,0\n0.05,0\n", "a")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("rec.csv") && e.contains("line 5") && e.contains("time_s"),
            "{e}"
        );
    }

    #[test]
    fn errors_name_file_line_and_column() {
        let e = read("time_s,a\n0,0\n0.01,x\n", "a")
            .unwrap_err()
            .to_string();
        assert!(e.contains("rec.csv: line 3") && e.contains("`a`"), "{e}");
        let e = read("time_s,a\n0,0\n0.01,1\n", "az")
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 1") && e.contains("`az`"), "{e}");
        let e = read("time_s,a\n0,0\n0,1\n", "a").unwrap_err().to_string();
        assert!(e.contains("line 3") && e.contains("increase"), "{e}");
        let e = read("time_s,a\n0,0\n", "a").unwrap_err().to_string();
        assert!(e.contains("two data rows"), "{e}");
        let e = read("time_s,a\n0,0\n0.1,NaN\n", "a")
            .unwrap_err()
            .to_string();
        assert!(e.contains("finite"), "{e}");
    }
}
