//! The profile CSV of the documented interface (`profiles/reference.md`): a header row, then rows
//! `distance_m,elevation_m` (other columns ignored), strictly increasing in
//! distance. Rows that are not uniformly spaced are resampled onto a uniform
//! grid (with a warning) unless a gap is too large to bridge honestly.

use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use super::{Profile, ProfileError};
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
    let bytes = std::fs::read(path).map_err(|source| ProfileError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    read_profile_bytes(&bytes, path)
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
    let header = line_of(has_cr, std::str::from_utf8(&bytes[..header_end]).ok()?)?;
    if header.starts_with('#') {
        return None;
    }
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    let col = |name: &str| {
        names
            .iter()
            .position(|h| h.trim_start_matches('\u{feff}') == name)
    };
    let (ix, iz) = (col("distance_m")?, col("elevation_m")?);
    let width = names.len();
    let body = &bytes[header_end + 1..];
    let body = body.strip_suffix(b"\n").unwrap_or(body);
    let (mut xs, mut zs);
    // A large file is parsed in two halves split at a line end, one per
    // core, then joined: the same rows in the same order.
    let split = (body.len() >= PARALLEL_PARSE_BYTES)
        .then(|| body[body.len() / 2..].iter().position(|&b| b == b'\n'))
        .flatten()
        .map(|i| body.len() / 2 + i);
    if let Some(split) = split {
        let (first, second) = std::thread::scope(|scope| {
            let second = scope.spawn(|| plain_rows(&body[split + 1..], ix, iz, width, has_cr));
            let first = plain_rows(&body[..split], ix, iz, width, has_cr);
            (first, second.join().ok().flatten())
        });
        (xs, zs) = first?;
        let (xs2, zs2) = second?;
        if xs2
            .first()
            .is_some_and(|&x| xs.last().is_some_and(|&prev| x <= prev))
        {
            return None;
        }
        xs.extend_from_slice(&xs2);
        zs.extend_from_slice(&zs2);
    } else {
        (xs, zs) = plain_rows(body, ix, iz, width, has_cr)?;
    }
    if xs.len() < 2 {
        return None;
    }
    let spacing = uniform_spacing(&xs).filter(|s| SPACING.contains(*s))?;
    let start = xs[0];
    drop(xs);
    // The capacity was a guess from the file size: the profile, held for
    // the whole run, keeps only its samples.
    zs.shrink_to_fit();
    Some(Profile::new(start, spacing, zs))
}

/// The rows of `body` (whole lines, no trailing line end, at most `width`
/// fields each): distances and elevations, or `None` as for [`read_plain`].
fn plain_rows(
    body: &[u8],
    ix: usize,
    iz: usize,
    width: usize,
    has_cr: bool,
) -> Option<(Vec<f64>, Vec<f64>)> {
    // Rows printed by `write_profile_csv` take about 25 bytes.
    let mut xs = Vec::with_capacity(body.len() / 20 + 1);
    let mut zs = Vec::with_capacity(body.len() / 20 + 1);
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
        if xs.last().is_some_and(|&prev| x <= prev) {
            return None;
        }
        xs.push(x);
        zs.push(z);
    }
    Some((xs, zs))
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
        .all(|w| {
            ((w[1] - w[0]) - nominal).abs() <= UNIFORM_TOLERANCE * nominal + UNIFORM_TOLERANCE_M
        })
        .then_some(nominal)
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
        let p = Profile::new(
            0.0,
            0.05,
            (0..60_000)
                .map(|i| 1e-3 * (i as f64 * 0.37).sin())
                .collect(),
        );
        let mut big = Vec::new();
        write_profile_csv(&p, &mut big).unwrap();
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
}
