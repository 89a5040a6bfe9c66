//! The profile CSV of the documented interface (`profiles/reference.md`): a header row, then rows
//! `distance_m,elevation_m` (other columns ignored), strictly increasing in
//! distance. Rows that are not uniformly spaced are resampled onto a uniform
//! grid (with a warning) unless a gap is too large to bridge honestly.

use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use super::{Profile, ProfileError};

mod streamed;
use crate::limits::{self, DISTANCE, ELEVATION, SPACING};

/// Relative spacing deviation tolerated without resampling (rounding in the
/// file's printed distances).
const UNIFORM_TOLERANCE: f64 = 1e-6;
/// Absolute spacing deviation tolerated without resampling, m: two units of
/// the 1 µm to which [`write_profile_csv`] prints distances, so a file this
/// crate wrote at any spacing reads back without resampling.
const UNIFORM_TOLERANCE_M: f64 = 2e-6;
/// Files at least this large are parsed on two threads, bytes.
const PARALLEL_PARSE_BYTES: usize = 1 << 20;
/// A gap wider than this many median spacings is refused rather than bridged.
const MAX_GAP_FACTOR: f64 = 4.0;

/// Reads a profile CSV. Warnings (resampling) are returned beside the profile
/// so the caller decides where they go.
pub fn read_profile_csv(path: &Path) -> Result<(Profile, Vec<String>), ProfileError> {
    let read_error = |source| ProfileError::Read {
        path: path.to_path_buf(),
        source,
    };
    let file = std::fs::File::open(path).map_err(read_error)?;
    if let Some(profile) = read_streamed(&file) {
        return Ok((profile, Vec::new()));
    }
    let bytes = std::fs::read(path).map_err(read_error)?;
    read_profile_bytes(&bytes, path)
}

/// A large plain file read block by block ([`streamed`]); `None` leaves
/// the file to be read whole.
#[cfg(any(unix, windows))]
fn read_streamed(file: &std::fs::File) -> Option<Profile> {
    let len = file.metadata().ok()?.len();
    (len >= PARALLEL_PARSE_BYTES as u64)
        .then(|| streamed::read_plain_streamed(file, len, streamed::BLOCK_BYTES))
        .flatten()
}

#[cfg(not(any(unix, windows)))]
fn read_streamed(_file: &std::fs::File) -> Option<Profile> {
    None
}

/// Reads a profile CSV from any reader; `path` names it in messages.
pub fn read_profile_from(
    mut reader: impl Read,
    path: &Path,
) -> Result<(Profile, Vec<String>), ProfileError> {
    let mut bytes = Vec::new();
    reader
        .read_to_end(&mut bytes)
        .map_err(|source| ProfileError::Read {
            path: path.to_path_buf(),
            source,
        })?;
    read_profile_bytes(&bytes, path)
}

/// The plain, uniformly spaced file takes the direct reader; anything else
/// (quotes, comments, blank lines, bad values, uneven spacing) goes through
/// the general CSV reader, which gives the same numbers and the messages.
fn read_profile_bytes(bytes: &[u8], path: &Path) -> Result<(Profile, Vec<String>), ProfileError> {
    match read_plain(bytes) {
        Some(profile) => Ok((profile, Vec::new())),
        None => read_general(bytes, path),
    }
}

/// Reads the common case without the general CSV machinery: unquoted
/// comma-separated rows, `\n` or `\r\n` line ends, plain decimal numbers,
/// distances strictly increasing and uniformly spaced. Returns `None` at
/// the first thing outside that case, so the general reader decides.
/// Numbers go through the same `str::parse::<f64>` as the general reader,
/// so the profile is the same, bit for bit.
fn read_plain(bytes: &[u8]) -> Option<Profile> {
    // `memchr` scans a word (or vector) at a time: these two passes over a
    // large file cost as much as a fifth of the parsing with `contains`.
    if memchr::memchr(b'"', bytes).is_some() {
        return None;
    }
    let has_cr = memchr::memchr(b'\r', bytes).is_some();
    let header_end = bytes.iter().position(|&b| b == b'\n')?;
    let columns = plain_header(&bytes[..header_end], has_cr)?;
    let body = &bytes[header_end + 1..];
    let body = body.strip_suffix(b"\n").unwrap_or(body);
    let mut rows = PlainRows::with_capacity(row_estimate(body.len()));
    // A large file is parsed in two halves split at a line end, one per
    // core, then joined: the same rows in the same order.
    let split = (body.len() >= PARALLEL_PARSE_BYTES)
        .then(|| body[body.len() / 2..].iter().position(|&b| b == b'\n'))
        .flatten()
        .map(|i| body.len() / 2 + i);
    if let Some(split) = split {
        let second = std::thread::scope(|scope| {
            let second = scope.spawn(|| {
                let tail = &body[split + 1..];
                let mut rows = PlainRows::with_capacity(row_estimate(tail.len()));
                plain_rows(tail, columns, has_cr, &mut rows).map(|()| rows)
            });
            let first = plain_rows(&body[..split], columns, has_cr, &mut rows);
            first.and(second.join().ok().flatten())
        })?;
        rows.append(second)?;
    } else {
        plain_rows(body, columns, has_cr, &mut rows)?;
    }
    rows.into_profile()
}

/// Which fields of a plain file hold the distance and the elevation, and
/// how many fields a row may have, from its header line (without the
/// `\n`); `None` for a header the plain reader does not take.
fn plain_header(header: &[u8], has_cr: bool) -> Option<PlainColumns> {
    let header = line_of(has_cr, std::str::from_utf8(header).ok()?)?;
    if header.starts_with('#') {
        return None;
    }
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    let col = |name: &str| {
        names
            .iter()
            .position(|h| h.trim_start_matches('\u{feff}') == name)
    };
    Some(PlainColumns {
        distance: col("distance_m")?,
        elevation: col("elevation_m")?,
        width: names.len(),
    })
}

/// Field positions of a plain file ([`plain_header`]).
#[derive(Debug, Clone, Copy)]
struct PlainColumns {
    distance: usize,
    elevation: usize,
    width: usize,
}

/// Rows expected in `bytes` of body: rows printed by `write_profile_csv`
/// take about 25 bytes, so this rarely falls short.
fn row_estimate(bytes: usize) -> usize {
    bytes / 20 + 1
}

/// The rows read so far by the plain reader: the elevations, and of the
/// distances only what the checks need (first, last, and the smallest and
/// largest gap between neighbours), so the distances are never stored.
#[derive(Debug, Default)]
struct PlainRows {
    elevation_m: Vec<f64>,
    first_m: f64,
    last_m: f64,
    gap_min_m: f64,
    gap_max_m: f64,
}

impl PlainRows {
    fn with_capacity(rows: usize) -> Self {
        PlainRows {
            elevation_m: Vec::with_capacity(rows),
            gap_min_m: f64::INFINITY,
            gap_max_m: f64::NEG_INFINITY,
            ..Default::default()
        }
    }

    /// The next row, or `None` when its distance does not increase.
    #[inline(always)]
    fn push(&mut self, x_m: f64, z_m: f64) -> Option<()> {
        if self.elevation_m.is_empty() {
            self.first_m = x_m;
        } else {
            if x_m <= self.last_m {
                return None;
            }
            self.gap(x_m - self.last_m);
        }
        self.last_m = x_m;
        self.elevation_m.push(z_m);
        Some(())
    }

    #[inline(always)]
    fn gap(&mut self, gap_m: f64) {
        self.gap_min_m = self.gap_min_m.min(gap_m);
        self.gap_max_m = self.gap_max_m.max(gap_m);
    }

    /// The rows of `next`, which follow these in the file.
    fn append(&mut self, next: PlainRows) -> Option<()> {
        if next.elevation_m.is_empty() {
            return Some(());
        }
        if self.elevation_m.is_empty() {
            *self = next;
            return Some(());
        }
        if next.first_m <= self.last_m {
            return None;
        }
        self.gap(next.first_m - self.last_m);
        self.gap(next.gap_min_m);
        self.gap(next.gap_max_m);
        self.last_m = next.last_m;
        self.elevation_m.extend_from_slice(&next.elevation_m);
        Some(())
    }

    /// The profile, when there are two rows or more, uniformly spaced
    /// (the test of [`uniform_spacing`]: every gap's deviation from the
    /// nominal spacing is a monotone function of the gap, so the smallest
    /// and the largest gap decide for all of them) at a spacing in range.
    fn into_profile(mut self) -> Option<Profile> {
        let n = self.elevation_m.len();
        if n < 2 {
            return None;
        }
        let nominal = (self.last_m - self.first_m) / (n - 1) as f64;
        let uniform =
            within_uniform(self.gap_min_m, nominal) && within_uniform(self.gap_max_m, nominal);
        (uniform && SPACING.contains(nominal)).then_some(())?;
        // The capacity was a guess from the file size: the profile, held for
        // the whole run, keeps only its samples.
        self.elevation_m.shrink_to_fit();
        Some(Profile::new(self.first_m, nominal, self.elevation_m))
    }
}

/// The rows of `body` (whole lines, no trailing line end, at most `width`
/// fields each) added to `rows`, or `None` as for [`read_plain`].
fn plain_rows(
    body: &[u8],
    columns: PlainColumns,
    has_cr: bool,
    rows: &mut PlainRows,
) -> Option<()> {
    let PlainColumns {
        distance: ix,
        elevation: iz,
        width,
    } = columns;
    let two_columns = width == 2 && ix == 0 && iz == 1;
    let mut start = 0;
    while start <= body.len() {
        let (x, z, next) = match two_columns.then(|| bare_row(body, start)).flatten() {
            Some(row) => row,
            None => {
                // Line ends found with `memchr` (word-at-a-time), not
                // `str::split`, whose per-character search is slower.
                let end = memchr::memchr(b'\n', &body[start..]).map_or(body.len(), |i| start + i);
                let text = std::str::from_utf8(&body[start..end]).ok()?;
                let line = line_of(has_cr, text)?;
                if line.is_empty() || line.starts_with('#') {
                    return None;
                }
                let (x, z) = row_values(line, ix, iz, width)?;
                (x, z, end + 1)
            }
        };
        start = next;
        rows.push(x, z)?;
    }
    Some(())
}

/// The row at `start` when it is exactly `DISTANCE,ELEVATION` followed by
/// `\n`, `\r\n` or the end (no spaces, both in range): its values and the
/// start of the next row. Anything else gives `None` and the row goes to
/// [`row_values`], which decides. Numbers are read by `fast_float2`, which
/// rounds correctly as `str::parse` does, so a value read here is the same
/// bit for bit (test `bare_rows_read_what_str_parse_reads`); reading each
/// number where it stands, without first cutting the line into fields,
/// halves the cost of a row.
#[inline]
fn bare_row(body: &[u8], start: usize) -> Option<(f64, f64, usize)> {
    let (x, n) = bare_number(&body[start..])?;
    let z_start = start + n + 1;
    (body.get(start + n) == Some(&b',')).then_some(())?;
    let (z, m) = bare_number(body.get(z_start..)?)?;
    let end = z_start + m;
    // `\r` ends a row only before `\n` or at the very end (see `line_of`).
    let next = match (body.get(end), body.get(end + 1)) {
        (None | Some(b'\n'), _) => end + 1,
        (Some(b'\r'), Some(b'\n')) => end + 2,
        (Some(b'\r'), None) => end + 2,
        _ => return None,
    };
    (DISTANCE.contains(x) && ELEVATION.contains(z)).then_some((x, z, next))
}

/// A finite number at the start of `bytes` that begins with a digit, a
/// point or a minus sign, and how many bytes it takes.
#[inline]
fn bare_number(bytes: &[u8]) -> Option<(f64, usize)> {
    // A leading `+`, `i` or `n` (signs and words `str::parse` may read
    // differently) goes to the field reader.
    let first = *bytes.first()?;
    if !(first.is_ascii_digit() || first == b'-' || first == b'.') {
        return None;
    }
    let (v, n): (f64, usize) = fast_float2::parse_partial(bytes).ok()?;
    v.is_finite().then_some((v, n))
}

/// Distance and elevation of one row (fields `ix` and `iz`, at most `width`).
#[inline]
fn row_values(line: &str, ix: usize, iz: usize, width: usize) -> Option<(f64, f64)> {
    let (mut x, mut z) = (None, None);
    let bytes = line.as_bytes();
    let mut field_start = 0;
    for i in 0..width {
        let field_end =
            memchr::memchr(b',', &bytes[field_start..]).map_or(bytes.len(), |k| field_start + k);
        let field = &line[field_start..field_end];
        if i == ix {
            x = Some(plain_number(field).filter(|v| DISTANCE.contains(*v))?);
        } else if i == iz {
            z = Some(plain_number(field).filter(|v| ELEVATION.contains(*v))?);
        }
        if field_end == bytes.len() {
            return Some((x?, z?));
        }
        field_start = field_end + 1;
    }
    None // more fields than the header: refused by the general reader
}

/// One line without its `\r` (before the `\n`), or `None` when a `\r`
/// stands anywhere else (the general reader ends a record there).
#[inline]
fn line_of(has_cr: bool, line: &str) -> Option<&str> {
    if !has_cr {
        return Some(line);
    }
    let line = line.strip_suffix('\r').unwrap_or(line);
    (!line.contains('\r')).then_some(line)
}

/// A finite number written with digits, sign, point and exponent only,
/// between optional spaces or tabs. `str::parse` takes nothing else but
/// the words `inf`, `infinity` and `nan`, which are not finite: so no
/// separate pass over the characters is needed.
#[inline]
fn plain_number(field: &str) -> Option<f64> {
    let v: f64 = field.trim_ascii().parse().ok()?;
    v.is_finite().then_some(v)
}

/// The general reader: any CSV the `csv` crate accepts, with line numbers
/// in every message.
fn read_general(bytes: &[u8], path: &Path) -> Result<(Profile, Vec<String>), ProfileError> {
    let p = || path.to_path_buf();
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .flexible(true)
        .from_reader(bytes);
    let headers = rdr.headers().map_err(|e| csv_error(p(), 1, e))?.clone();
    let col = |name: &str| -> Result<usize, ProfileError> {
        headers
            .iter()
            .position(|h| h.trim_start_matches('\u{feff}') == name)
            .ok_or_else(|| ProfileError::MissingColumn {
                path: p(),
                column: name.to_string(),
            })
    };
    let columns = (col("distance_m")?, col("elevation_m")?);
    let width = headers.len();
    let (mut xs, mut zs, mut lines) = (Vec::new(), Vec::new(), Vec::new());
    let mut record = csv::StringRecord::new();
    loop {
        match rdr.read_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let line = e.position().map(|q| q.line()).unwrap_or(0);
                return Err(csv_error(p(), line, e));
            }
        }
        let line = record.position().map(|q| q.line()).unwrap_or(0);
        let (x, z) = general_row(&record, width, columns, path, line)?;
        if let Some(&prev) = xs.last() {
            if x <= prev {
                return Err(ProfileError::BadRow {
                    path: p(),
                    line,
                    message: format!("distance_m must increase strictly: {x} follows {prev}"),
                });
            }
        }
        xs.push(x);
        zs.push(z);
        lines.push(line);
    }
    if xs.len() < 2 {
        return Err(ProfileError::Unusable {
            path: p(),
            message: format!("a profile needs at least two data rows, found {}", xs.len()),
        });
    }
    to_uniform(&xs, &zs, &lines, path)
}

/// One data row of the general reader: (distance, elevation), each
/// checked against its plausible range; a row wider than the header is
/// refused.
fn general_row(
    record: &csv::StringRecord,
    width: usize,
    (ix, iz): (usize, usize),
    path: &Path,
    line: u64,
) -> Result<(f64, f64), ProfileError> {
    let bad = |message: String| ProfileError::BadRow {
        path: path.to_path_buf(),
        line,
        message,
    };
    if record.len() > width {
        return Err(bad(format!(
            "{} fields where the header has {width}: a stray comma, or a row of another file?",
            record.len()
        )));
    }
    let field = |i: usize, range: &limits::Range| -> Result<f64, ProfileError> {
        let name = range.name;
        let s = record
            .get(i)
            .ok_or_else(|| bad(format!("missing value for `{name}`")))?;
        let v: f64 = s
            .parse()
            .map_err(|_| bad(format!("`{name}` is not a number: {s:?}")))?;
        range.check(v).map_err(|m| bad(format!("`{name}` {m}")))
    };
    Ok((field(ix, &DISTANCE)?, field(iz, &ELEVATION)?))
}

fn csv_error(path: PathBuf, line: u64, e: csv::Error) -> ProfileError {
    match e.into_kind() {
        csv::ErrorKind::Io(source) => ProfileError::Read { path, source },
        kind => ProfileError::BadRow {
            path,
            line,
            message: crate::error::csv_message(&kind),
        },
    }
}

/// The spacing of rows that are uniform within the tolerances, or `None`.
fn uniform_spacing(xs: &[f64]) -> Option<f64> {
    let n = xs.len();
    let nominal = (xs[n - 1] - xs[0]) / (n - 1) as f64;
    xs.windows(2)
        .all(|w| within_uniform(w[1] - w[0], nominal))
        .then_some(nominal)
}

/// Whether a gap between neighbouring rows is the nominal spacing within
/// the tolerances.
#[inline]
fn within_uniform(gap_m: f64, nominal_m: f64) -> bool {
    (gap_m - nominal_m).abs() <= UNIFORM_TOLERANCE * nominal_m + UNIFORM_TOLERANCE_M
}

/// Puts the rows on a uniform grid: as they are when already uniform,
/// otherwise by linear interpolation at the median spacing.
fn to_uniform(
    xs: &[f64],
    zs: &[f64],
    lines: &[u64],
    path: &Path,
) -> Result<(Profile, Vec<String>), ProfileError> {
    let n = xs.len();
    let span = xs[n - 1] - xs[0];
    let spacing_ok = |s: f64| {
        SPACING
            .check(s)
            .map(|_| ())
            .map_err(|m| ProfileError::Unusable {
                path: path.to_path_buf(),
                message: format!("the rows are {} m apart; the spacing {m}", limits::show(s)),
            })
    };
    if let Some(nominal) = uniform_spacing(xs) {
        spacing_ok(nominal)?;
        return Ok((Profile::new(xs[0], nominal, zs.to_vec()), Vec::new()));
    }
    let mut gaps: Vec<f64> = xs.windows(2).map(|w| w[1] - w[0]).collect();
    gaps.sort_by(f64::total_cmp);
    let median = gaps[gaps.len() / 2];
    spacing_ok(median)?;
    for (i, w) in xs.windows(2).enumerate() {
        if w[1] - w[0] > MAX_GAP_FACTOR * median {
            return Err(ProfileError::BadRow {
                path: path.to_path_buf(),
                line: lines[i + 1],
                message: format!(
                    "gap of {:.4} m after distance {} is more than {MAX_GAP_FACTOR} times the median spacing ({median:.4} m); \
                     fill the gap or split the profile",
                    w[1] - w[0],
                    w[0]
                ),
            });
        }
    }
    let count = (span / median).round() as usize + 1;
    let spacing = span / (count - 1) as f64;
    let mut out = Vec::with_capacity(count);
    let mut j = 0;
    for i in 0..count {
        let x = xs[0] + i as f64 * spacing;
        while j + 2 < n && xs[j + 1] <= x {
            j += 1;
        }
        let f = ((x - xs[j]) / (xs[j + 1] - xs[j])).clamp(0.0, 1.0);
        out.push(zs[j] + f * (zs[j + 1] - zs[j]));
    }
    let warning = format!(
        "{}: rows are not uniformly spaced; resampled {n} rows to {count} at {spacing:.6} m by linear interpolation",
        path.display()
    );
    Ok((Profile::new(xs[0], spacing, out), vec![warning]))
}

/// Writes a profile as the documented CSV. Distances are printed from the
/// sample index so they carry no accumulated rounding.
pub fn write_profile_csv(profile: &Profile, out: &mut dyn Write) -> std::io::Result<()> {
    writeln!(out, "distance_m,elevation_m")?;
    for (i, z) in profile.elevation_m.iter().enumerate() {
        writeln!(
            out,
            "{},{:e}",
            crate::report::fmt_micro(profile.distance_m(i)),
            z
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<(Profile, Vec<String>), ProfileError> {
        read_profile_from(text.as_bytes(), Path::new("road.csv"))
    }

    /// A profile and its CSV as `write_profile_csv` prints it.
    fn written(p: Profile) -> (Profile, Vec<u8>) {
        let mut csv = Vec::new();
        write_profile_csv(&p, &mut csv).unwrap();
        (p, csv)
    }

    #[test]
    fn reads_uniform_rows_and_ignores_other_columns() {
        let (p, w) =
            read("distance_m,elevation_m,note\n0,0.0,a\n0.5,0.01,b\n1.0,0.02,c\n").unwrap();
        assert!(w.is_empty());
        assert_eq!(p.len(), 3);
        assert!((p.spacing_m - 0.5).abs() < 1e-12);
        assert_eq!(p.elevation_m[2], 0.02);
    }

    #[test]
    fn refuses_non_increasing_distance_naming_the_line() {
        let e = read("distance_m,elevation_m\n0,0\n1,0\n1,0\n").unwrap_err();
        let msg = e.to_string();
        assert!(msg.contains("road.csv: line 4"), "{msg}");
        assert!(msg.contains("increase"), "{msg}");
    }

    #[test]
    fn refuses_nan_and_text() {
        let e = read("distance_m,elevation_m\n0,0\n1,NaN\n").unwrap_err();
        assert!(e.to_string().contains("line 3"), "{e}");
        let e = read("distance_m,elevation_m\n0,0\n1,abc\n").unwrap_err();
        assert!(e.to_string().contains("not a number"), "{e}");
    }

    #[test]
    fn refuses_a_single_row_and_a_missing_column() {
        assert!(
            read("distance_m,elevation_m\n0,0\n")
                .unwrap_err()
                .to_string()
                .contains("two data rows")
        );
        let e = read("x,elevation_m\n0,0\n1,0\n").unwrap_err();
        assert!(e.to_string().contains("distance_m"), "{e}");
    }

    #[test]
    fn resamples_slightly_irregular_rows_with_a_warning() {
        let (p, w) = read("distance_m,elevation_m\n0,0\n0.9,0.9\n2.1,2.1\n3,3\n").unwrap();
        assert_eq!(w.len(), 1);
        assert!((p.end_m() - 3.0).abs() < 1e-12);
        // A linear road stays linear after resampling.
        for (i, z) in p.elevation_m.iter().enumerate() {
            assert!((z - p.distance_m(i)).abs() < 1e-12);
        }
    }

    #[test]
    fn reads_back_a_spacing_that_prints_inexactly_without_resampling() {
        // 1/30 m prints to 1 µm with up to 0.5 µm error per row.
        let p = Profile::new(
            0.0,
            1.0 / 30.0,
            (0..3001).map(|i| (i as f64 * 0.01).sin()).collect(),
        );
        let mut buf = Vec::new();
        write_profile_csv(&p, &mut buf).unwrap();
        let (q, w) = read(std::str::from_utf8(&buf).unwrap()).unwrap();
        assert!(w.is_empty(), "{w:?}");
        assert_eq!(p.elevation_m, q.elevation_m);
        assert!((q.spacing_m - p.spacing_m).abs() < 1e-9);
    }

    #[test]
    fn refuses_large_gaps() {
        let e = read("distance_m,elevation_m\n0,0\n1,0\n2,0\n10,0\n11,0\n").unwrap_err();
        assert!(e.to_string().contains("gap"), "{e}");
    }

    #[test]
    fn writes_what_it_reads() {
        let p = Profile::new(0.0, 0.05, vec![0.001, -0.002, 0.0031]);
        let mut buf = Vec::new();
        write_profile_csv(&p, &mut buf).unwrap();
        let (q, _) = read(std::str::from_utf8(&buf).unwrap()).unwrap();
        assert_eq!(p.elevation_m, q.elevation_m);
        assert!((p.spacing_m - q.spacing_m).abs() < 1e-12);
    }

    #[test]
    fn bare_rows_read_what_str_parse_reads() {
        // Reference: `str::parse::<f64>` (correctly rounded, Rust standard
        // library). Wherever the in-place reader takes a whole field it must
        // give the same bits; where it declines, the field reader decides.
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let mut fields: Vec<String> = [
            "0",
            "-0",
            "0e0",
            "1.",
            ".5",
            "-.5",
            "+1",
            "1e",
            "1e+",
            "1e-",
            "-",
            ".",
            "e5",
            "inf",
            "-inf",
            "nan",
            "infinity",
            "1e400",
            "-1e400",
            "1e-400",
            "0x10",
            "1_0",
            "9007199254740993",
            "9007199254740992.5",
            "2.2250738585072011e-308",
            "0.1000000000000000055511151231257827021181583404541015625",
            "1.00000000000000011102230246251565404236316680908203125",
            "123456789012345678901234567890e-20",
            "4.9e-324",
            "1.7976931348623157e308",
            "00000000000000000000001.5",
            "1.5000000000000000000000000000001",
        ]
        .map(String::from)
        .to_vec();
        for _ in 0..20_000 {
            let v = f64::from_bits(rng.random::<u64>());
            let e = rng.random_range(-1e-2..1e-2) * 10f64.powi(rng.random_range(-6..4));
            for x in [v, e, e * 1e3] {
                fields.push(format!("{x}"));
                fields.push(format!("{x:e}"));
                fields.push(format!("{x:.3}"));
                fields.push(format!("{x:.25e}"));
            }
        }
        let mut taken = 0;
        for f in &fields {
            let row = format!("{f},");
            match bare_number(row.as_bytes()) {
                Some((v, n)) if n == f.len() => {
                    let std = plain_number(f).unwrap_or_else(|| panic!("{f:?}: std refuses"));
                    assert_eq!(v.to_bits(), std.to_bits(), "{f:?}");
                    taken += 1;
                }
                // Declined, or took only part of the field: the row is then
                // not of the bare shape and goes to the field reader.
                _ => {}
            }
        }
        assert!(taken > fields.len() / 2, "{taken} of {}", fields.len());
    }

    #[test]
    fn the_direct_reader_gives_what_the_csv_crate_gives() {
        // Reference: the general reader built on the `csv` crate. Every plain
        // variant must come out bit for bit the same through the direct path.
        let plain = [
            "distance_m,elevation_m\n0,0e0\n0.05,-1.5494715572999945e-3\n0.1,2.5e-3\n",
            "distance_m,elevation_m\r\n0,0.001\r\n0.5,0.002\r\n1,-0.003",
            "note,elevation_m,distance_m\nx,1.5,10\ny,-2.25,10.25\nz,3,10.5\n",
            "\u{feff}distance_m , elevation_m\n 0 ,\t1e-3 \n1, 2E-3\n2,+3.0e-3\n",
            "distance_m,elevation_m\r\n0,1e-3\r\n1,2e-3\r\n2,+3e-3\r\n3,4e-3\r",
            "distance_m,elevation_m\n0,1e-3\n1,2e-3\n2, 3e-3\n3,4e-3 \n4,.5",
        ];
        for text in plain {
            let direct = read_plain(text.as_bytes()).expect("plain file takes the direct path");
            let (general, w) = read_general(text.as_bytes(), Path::new("road.csv")).unwrap();
            assert!(w.is_empty());
            assert_eq!(direct, general, "{text:?}");
            assert_eq!(read(text).unwrap().0, general);
        }
        // A file large enough to be parsed in two halves.
        let (p, big) = written(Profile::new(
            0.0,
            0.05,
            (0..60_000)
                .map(|i| 1e-3 * (i as f64 * 0.37).sin())
                .collect(),
        ));
        assert!(big.len() >= PARALLEL_PARSE_BYTES);
        let direct = read_plain(&big).expect("plain file takes the direct path");
        let (general, _) = read_general(&big, Path::new("road.csv")).unwrap();
        assert_eq!(direct, general);
        assert_eq!(direct.elevation_m, p.elevation_m);
        // Anything else is left to the general reader.
        let other = [
            "distance_m,elevation_m\n\"0\",0\n1,0\n",
            "# comment\ndistance_m,elevation_m\n0,0\n1,0\n",
            "distance_m,elevation_m\n0,0\n\n1,0\n",
            "distance_m,elevation_m\n0,0\r1,0\n",
            "distance_m,elevation_m\n0,0\n1,inf\n",
            "distance_m,elevation_m\n0,0\n1,0\n1,0\n",
            "distance_m,elevation_m\n0,0\n0.9,0.9\n2.1,2.1\n3,3\n",
            "distance_m,elevation_m\n0,0\n",
        ];
        for text in other {
            assert!(read_plain(text.as_bytes()).is_none(), "{text:?}");
        }
    }

    #[test]
    fn the_block_reader_gives_what_the_whole_file_readers_give() {
        // Reference: the general reader built on the `csv` crate, and the
        // plain reader on the whole file. Read in blocks of any size that
        // holds a line, every plain file without `\r` gives the same
        // profile bit for bit; a `\r`, a quote, a line longer than a
        // block or anything the plain reader refuses gives `None` (the
        // file is then read whole).
        let streamed = |text: &[u8], block: usize| {
            streamed::read_plain_streamed(text, text.len() as u64, block)
        };
        let plain = [
            "distance_m,elevation_m\n0,0e0\n0.05,-1.5494715572999945e-3\n0.1,2.5e-3\n",
            "note,elevation_m,distance_m\nx,1.5,10\ny,-2.25,10.25\nz,3,10.5\n",
            "\u{feff}distance_m , elevation_m\n 0 ,\t1e-3 \n1, 2E-3\n2,+3.0e-3\n",
            "distance_m,elevation_m\n0,1e-3\n1,2e-3\n2, 3e-3\n3,4e-3 \n4,.5",
        ];
        for text in plain {
            let (general, _) = read_general(text.as_bytes(), Path::new("road.csv")).unwrap();
            for block in [40, 41, 57, 64, 1000] {
                assert_eq!(
                    streamed(text.as_bytes(), block),
                    Some(general.clone()),
                    "{text:?} {block}"
                );
            }
            assert_eq!(
                streamed(text.as_bytes(), 12),
                None,
                "a line longer than a block"
            );
        }
        let cr = "distance_m,elevation_m\r\n0,0.001\r\n0.5,0.002\r\n1,-0.003";
        assert!(read_plain(cr.as_bytes()).is_some());
        assert_eq!(streamed(cr.as_bytes(), 64), None);
        let other = [
            "distance_m,elevation_m\n\"0\",0\n1,0\n",
            "# comment\ndistance_m,elevation_m\n0,0\n1,0\n",
            "distance_m,elevation_m\n0,0\n\n1,0\n",
            "distance_m,elevation_m\n0,0\n1,0\n\n",
            "distance_m,elevation_m\n0,0\n1,inf\n",
            "distance_m,elevation_m\n0,0\n1,0\n1,0\n",
            "distance_m,elevation_m\n0,0\n0.9,0.9\n2.1,2.1\n3,3\n",
            "distance_m,elevation_m\n0,0\n",
            "distance_m,elevation_m\n",
            "distance_m,elevation_m",
        ];
        for text in other {
            assert!(read_plain(text.as_bytes()).is_none(), "{text:?}");
            for block in [40, 64, 1000] {
                assert_eq!(streamed(text.as_bytes(), block), None, "{text:?} {block}");
            }
        }
        // Large enough to be cut in two halves, and cut into many blocks.
        let (_, big) = written(Profile::new(
            3.0,
            0.05,
            (0..60_000)
                .map(|i| 1e-3 * (i as f64 * 0.37).sin())
                .collect(),
        ));
        assert!(big.len() >= PARALLEL_PARSE_BYTES + 64);
        let (general, _) = read_general(&big, Path::new("road.csv")).unwrap();
        for block in [4096, 65_537, streamed::BLOCK_BYTES] {
            assert_eq!(streamed(&big, block), Some(general.clone()), "{block}");
        }
        // A row out of order in the second half, and one across the cut.
        let text = String::from_utf8(big.clone()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        for at in [45_000, lines.len() / 2, lines.len() / 2 + 1] {
            let mut swapped = lines.clone();
            swapped.swap(at, at + 1);
            let bad = swapped.join("\n");
            assert!(read_plain(bad.as_bytes()).is_none());
            assert_eq!(
                streamed(bad.as_bytes(), 4096),
                None,
                "rows {at} and {}",
                at + 1
            );
        }
    }

    #[test]
    fn the_smallest_and_largest_gap_decide_uniform_spacing_as_every_gap_does() {
        // Reference: `uniform_spacing`, which tests every gap. The block
        // reader keeps only the extremes; on rows jittered around the
        // tolerance both must agree on every sequence.
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
        let (mut uniform, mut not) = (0, 0);
        for _ in 0..4000 {
            let n = rng.random_range(2..40);
            let spacing = 10f64.powi(rng.random_range(-3..1));
            let jitter = 10f64.powf(rng.random_range(-7.0..-5.0));
            let xs: Vec<f64> = (0..n)
                .map(|i| 1.5 + i as f64 * spacing + rng.random_range(-jitter..jitter))
                .collect();
            if xs.windows(2).any(|w| w[1] <= w[0]) {
                continue;
            }
            let mut rows = PlainRows::with_capacity(n);
            for &x in &xs {
                rows.push(x, 0.0).unwrap();
            }
            let reference = uniform_spacing(&xs).filter(|s| SPACING.contains(*s));
            let got = rows.into_profile().map(|p| p.spacing_m);
            assert_eq!(got.map(f64::to_bits), reference.map(f64::to_bits), "{xs:?}");
            if reference.is_some() {
                uniform += 1;
            } else {
                not += 1;
            }
        }
        assert!(uniform > 500 && not > 500, "{uniform} uniform, {not} not");
    }

    #[test]
    fn a_large_file_on_disk_reads_as_the_general_reader_reads_it() {
        // Reference: the general reader (`csv` crate) on the same bytes.
        let (_, big) = written(Profile::new(
            0.0,
            0.1,
            (0..50_000)
                .map(|i| 2e-3 * (i as f64 * 0.11).cos())
                .collect(),
        ));
        let path =
            std::env::temp_dir().join(format!("roughride-csv-io-{}.csv", std::process::id()));
        std::fs::write(&path, &big).unwrap();
        let read = read_profile_csv(&path);
        std::fs::remove_file(&path).unwrap();
        let (general, _) = read_general(&big, Path::new("road.csv")).unwrap();
        assert!(big.len() as u64 >= PARALLEL_PARSE_BYTES as u64);
        assert_eq!(read.unwrap().0, general);
    }
}
