//! Command-line values with units and ranges: speeds (`20`, `72kmh`),
//! speed ranges (`10:40:5`, `36kmh:108kmh:36kmh`), durations (`8h`,
//! `30min`, `3600s`), plain quantities checked against their
//! [`crate::limits`] range, harmonic forces and shard specs (`2/8`).
//! Parsed here once, into SI.
//!
//! Range values are computed as `start + i·step` (never by repeated
//! addition) so they do not drift, and the end is included when it lies on
//! the grid within rounding.

use thiserror::Error;

use crate::limits::{self, Range};
use crate::solve::HarmonicForce;

/// Largest number of values a range may expand to.
pub const MAX_RANGE_VALUES: usize = 10_000;

/// A malformed value, with the text that was given.
#[derive(Debug, Error, PartialEq)]
#[error("invalid {what} {text:?}: {why}")]
pub struct ValueError {
    /// Which kind of value (e.g. "speed").
    pub what: &'static str,
    /// What the user typed.
    pub text: String,
    /// What was wrong.
    pub why: String,
}

fn err(what: &'static str, text: &str, why: impl Into<String>) -> ValueError {
    ValueError {
        what,
        text: text.to_string(),
        why: why.into(),
    }
}

/// Parses a speed: m/s by default, km/h with a `kmh` suffix. Must be > 0.
pub fn parse_speed_m_s(text: &str) -> Result<f64, ValueError> {
    let t = text.trim();
    let (number, factor) = match t.strip_suffix("kmh").or_else(|| t.strip_suffix("km/h")) {
        Some(n) => (n.trim(), 1.0 / 3.6),
        None => (t.strip_suffix("m/s").unwrap_or(t).trim(), 1.0),
    };
    let v: f64 = number.parse().map_err(|_| {
        err(
            "speed",
            text,
            "expected a number in m/s, or km/h with a kmh suffix (e.g. 20 or 72kmh)",
        )
    })?;
    let speed = v * factor;
    if !limits::SPEED.contains(speed) {
        return Err(err(
            "speed",
            text,
            format!(
                "must lie between {} ({} to {} km/h)",
                limits::SPEED.span(),
                // fmt_grid: 0.01 m/s is 0.036 km/h, not 0.036000000000000004.
                crate::report::fmt_grid(limits::SPEED.min * 3.6),
                crate::report::fmt_grid(limits::SPEED.max * 3.6)
            ),
        ));
    }
    Ok(speed)
}

/// Parses `start:end:step` (inclusive) or a comma list of speeds, in m/s.
pub fn parse_speed_list_m_s(text: &str) -> Result<Vec<f64>, ValueError> {
    let t = text.trim();
    if t.contains(':') {
        let parts: Vec<&str> = t.split(':').collect();
        if parts.len() != 3 {
            return Err(err(
                "speed range",
                text,
                "expected start:end:step, e.g. 10:40:5 or 36kmh:108kmh:36kmh",
            ));
        }
        let start = parse_speed_m_s(parts[0]).map_err(|e| err("speed range", text, e.why))?;
        let end = parse_speed_m_s(parts[1]).map_err(|e| err("speed range", text, e.why))?;
        let step = parse_speed_m_s(parts[2])
            .map_err(|_| err("speed range", text, "the step must be a positive speed"))?;
        expand_range(start, end, step).map_err(|why| err("speed range", text, why))
    } else {
        t.split(',').map(parse_speed_m_s).collect()
    }
}

/// The values `start + i·step` (never by repeated addition, so they do not
/// drift) from `start` up to `end` inclusive, the end included when it lies
/// on the grid within rounding. `step` must be positive; at most
/// [`MAX_RANGE_VALUES`] values. The error says what was wrong.
pub fn expand_range(start: f64, end: f64, step: f64) -> Result<Vec<f64>, String> {
    if !(start.is_finite() && end.is_finite()) {
        return Err("the start and end must be finite".into());
    }
    if !(step.is_finite() && step > 0.0) {
        return Err("the step must be positive".into());
    }
    if end < start {
        return Err("the end is below the start".into());
    }
    // Count in floating point first: a tiny step must be refused, not
    // saturate or wrap the integer conversion.
    let intervals = ((end - start) / step * (1.0 + 1e-9) + 1e-9).floor();
    if intervals.is_nan() || intervals + 1.0 > MAX_RANGE_VALUES as f64 {
        return Err(format!(
            "expands to {:.3e} values; at most {MAX_RANGE_VALUES}",
            intervals + 1.0
        ));
    }
    let count = intervals as usize + 1;
    Ok((0..count).map(|i| start + i as f64 * step).collect())
}

/// Parses a daily exposure duration with its unit (`8h`, `30min`,
/// `3600s`, also `1.5 h` or `90 minutes`) into seconds, within
/// [`limits::EXPOSURE`] (up to a day). A bare number is refused: `8` could
/// mean hours or seconds.
pub fn parse_duration_s(text: &str) -> Result<f64, ValueError> {
    let t = text.trim();
    let split = t
        .find(|c: char| c.is_ascii_alphabetic() && c != 'e' && c != 'E')
        .ok_or_else(|| {
            err(
                "duration",
                text,
                "has no unit: write e.g. 8h, 30min or 3600s",
            )
        })?;
    let (number, unit) = (t[..split].trim(), t[split..].trim());
    let factor = match unit.to_ascii_lowercase().as_str() {
        "h" | "hr" | "hrs" | "hour" | "hours" => 3600.0,
        "min" | "mins" | "minute" | "minutes" => 60.0,
        "s" | "sec" | "secs" | "second" | "seconds" => 1.0,
        _ => {
            return Err(err(
                "duration",
                text,
                format!("unknown unit {unit:?}: use h, min or s (e.g. 8h, 30min, 3600s)"),
            ));
        }
    };
    let v: f64 = number
        .parse()
        .map_err(|_| err("duration", text, format!("{number:?} is not a number")))?;
    let s = v * factor;
    if !limits::EXPOSURE.contains(s) {
        return Err(err(
            "duration",
            text,
            format!("must lie between {} (1 s to 24 h)", limits::EXPOSURE.span()),
        ));
    }
    Ok(s)
}

/// Parses a plain number for the option or key `range` is named after and
/// checks it against the range.
pub fn parse_quantity(text: &str, range: &Range) -> Result<f64, ValueError> {
    let v: f64 = text.trim().parse().map_err(|_| {
        let unit = if range.unit.is_empty() {
            String::new()
        } else {
            format!(" in {}", range.unit)
        };
        err("value", text, format!("expected a number{unit}"))
    })?;
    range.check(v).map_err(|m| err("value", text, m))
}

/// Parses `AMPLITUDE_N,FREQUENCY_HZ,X_M` (e.g. `150,25,1.3`), each within
/// its range.
pub fn parse_force(text: &str) -> Result<HarmonicForce, ValueError> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let [a, f, x] = parts[..] else {
        return Err(err(
            "--force",
            text,
            "expected AMPLITUDE_N,FREQUENCY_HZ,X_M, e.g. 150,25,1.3",
        ));
    };
    let part = |t: &str, range: &Range| {
        parse_quantity(t, range)
            .map_err(|e| err("--force", text, format!("{}: {}", range.name, e.why)))
    };
    Ok(HarmonicForce {
        amplitude_n: part(a, &limits::FORCE_AMPLITUDE)?,
        frequency_hz: part(f, &limits::FORCE_FREQUENCY)?,
        x_m: part(x, &limits::BODY_X)?,
    })
}

/// Refuses a harmonic force the output grid cannot resolve: at or above
/// the Nyquist frequency (half the output rate) the sampled force aliases
/// onto a lower frequency (sampling theorem; common practice to stay well
/// below it).
pub fn check_force_against_rate(
    force: &HarmonicForce,
    output_rate_hz: f64,
) -> Result<(), ValueError> {
    let nyquist = 0.5 * output_rate_hz;
    if force.frequency_hz >= nyquist {
        return Err(err(
            "--force",
            &limits::show(force.frequency_hz),
            format!(
                "{} Hz is at or above the Nyquist frequency of the output, {} Hz (half of --rate {} Hz): \
                 the sampled force would alias; raise --rate above {} Hz",
                limits::show(force.frequency_hz),
                limits::show(nyquist),
                limits::show(output_rate_hz),
                limits::show(2.0 * force.frequency_hz)
            ),
        ));
    }
    Ok(())
}

/// Most worker threads a sweep accepts: far beyond the cores of any one
/// machine, low enough that the threads' stacks (2 MiB each reserved) stay
/// within an ordinary process's address space and a signal is seen in time.
pub const MAX_JOBS: usize = 1024;

/// Parses `--jobs`: a whole number from 1 to [`MAX_JOBS`].
pub fn parse_jobs(text: &str) -> Result<usize, ValueError> {
    let n: usize = text.trim().parse().map_err(|_| {
        err(
            "--jobs",
            text,
            "expected a whole number of worker threads, e.g. 4",
        )
    })?;
    if !(1..=MAX_JOBS).contains(&n) {
        return Err(err(
            "--jobs",
            text,
            format!(
                "must lie between 1 and {MAX_JOBS} (more threads than cases are never started)"
            ),
        ));
    }
    Ok(n)
}

/// A slice of a grid: the `index`-th (1-based) of `count` disjoint slices.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based slice number.
    pub index: usize,
    /// Number of slices.
    pub count: usize,
}

impl Shard {
    /// The whole grid.
    pub const ALL: Shard = Shard { index: 1, count: 1 };

    /// Parses `K/N` with `1 ≤ K ≤ N`.
    pub fn parse(text: &str) -> Result<Shard, ValueError> {
        let (k, n) = text.trim().split_once('/').ok_or_else(|| {
            err(
                "shard",
                text,
                "expected K/N, e.g. 3/8 for the third of eight slices",
            )
        })?;
        let k: usize = k
            .trim()
            .parse()
            .map_err(|_| err("shard", text, "K must be a whole number"))?;
        let n: usize = n
            .trim()
            .parse()
            .map_err(|_| err("shard", text, "N must be a whole number"))?;
        if n == 0 || k == 0 || k > n {
            return Err(err("shard", text, "need 1 ≤ K ≤ N"));
        }
        Ok(Shard { index: k, count: n })
    }

    /// Whether case number `case` (0-based, in grid order) belongs to this
    /// slice. Contiguous blocks, so the slices' outputs concatenate in order.
    pub fn contains(&self, case: usize, total: usize) -> bool {
        let (lo, hi) = self.bounds(total);
        (lo..hi).contains(&case)
    }

    /// The half-open range of case numbers in this slice.
    pub fn bounds(&self, total: usize) -> (usize, usize) {
        let lo = total * (self.index - 1) / self.count;
        let hi = total * self.index / self.count;
        (lo, hi)
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_speed_out_of_range_names_the_range_in_km_h_without_rounding_noise() {
        // Found by tests/cli_fuzz.rs: the message read "0.036000000000000004
        // to 1080 km/h". 0.01 m/s × 3.6 = 0.036 km/h (exact arithmetic).
        let e = super::parse_speed_m_s("1e300").unwrap_err().to_string();
        assert!(e.contains("(0.036 to 1080 km/h)"), "{e}");
    }

    use super::*;

    #[test]
    fn speeds_in_m_s_and_kmh() {
        assert_eq!(parse_speed_m_s("20").unwrap(), 20.0);
        assert!((parse_speed_m_s("72kmh").unwrap() - 20.0).abs() < 1e-12);
        assert!(parse_speed_m_s("0").is_err());
        assert!(parse_speed_m_s("-3").is_err());
        let e = parse_speed_m_s("1e300").unwrap_err().to_string();
        assert!(
            e.contains("between 0.01 and 300 m/s") && e.contains("1e300"),
            "{e}"
        );
        assert!(
            parse_speed_m_s("fast")
                .unwrap_err()
                .to_string()
                .contains("\"fast\"")
        );
    }

    #[test]
    fn ranges_are_inclusive_and_do_not_drift() {
        assert_eq!(
            parse_speed_list_m_s("10:40:5").unwrap(),
            vec![10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0]
        );
        let v = parse_speed_list_m_s("36kmh:108kmh:36kmh").unwrap();
        assert_eq!(v.len(), 3);
        assert!((v[2] - 30.0).abs() < 1e-12);
        let v = parse_speed_list_m_s("0.1:1.0:0.1").unwrap();
        assert_eq!(v.len(), 10);
        assert_eq!(
            parse_speed_list_m_s("10,20,25").unwrap(),
            vec![10.0, 20.0, 25.0]
        );
        assert!(parse_speed_list_m_s("40:10:5").is_err());
        assert!(parse_speed_list_m_s("10:40:0").is_err());
        assert!(parse_speed_list_m_s("10:40").is_err());
        assert!(parse_speed_list_m_s("1:100000:0.001").is_err());
    }

    #[test]
    fn durations_need_a_unit_and_stay_within_a_day() {
        assert_eq!(parse_duration_s("8h").unwrap(), 28800.0);
        assert_eq!(parse_duration_s("30min").unwrap(), 1800.0);
        assert_eq!(parse_duration_s("90s").unwrap(), 90.0);
        assert_eq!(parse_duration_s("1.5 h").unwrap(), 5400.0);
        assert_eq!(parse_duration_s("1e1min").unwrap(), 600.0);
        assert!(parse_duration_s("8 days").is_err());
        let e = parse_duration_s("8").unwrap_err().to_string();
        assert!(e.contains("no unit"), "{e}");
        assert!(parse_duration_s("-1h").is_err());
        assert!(parse_duration_s("25h").is_err());
        assert!(
            parse_duration_s("1e300s")
                .unwrap_err()
                .to_string()
                .contains("24 h")
        );
    }

    #[test]
    fn forces_are_bounded_and_must_stay_below_the_nyquist_frequency() {
        let f = parse_force("150, 25, 1.3").unwrap();
        assert_eq!((f.amplitude_n, f.frequency_hz, f.x_m), (150.0, 25.0, 1.3));
        assert!(
            parse_force("1e300,25,1")
                .unwrap_err()
                .to_string()
                .contains("AMPLITUDE")
        );
        assert!(parse_force("150,0,1").is_err());
        assert!(parse_force("150,25").is_err());
        assert!(check_force_against_rate(&f, 1000.0).is_ok());
        let e = check_force_against_rate(&f, 50.0).unwrap_err().to_string();
        assert!(e.contains("Nyquist") && e.contains("25 Hz"), "{e}");
    }

    #[test]
    fn shards_partition_the_grid() {
        for total in [0, 1, 7, 10, 101] {
            for n in 1..6 {
                let mut seen = vec![0; total];
                for k in 1..=n {
                    let s = Shard { index: k, count: n };
                    for (c, count) in seen.iter_mut().enumerate() {
                        if s.contains(c, total) {
                            *count += 1;
                        }
                    }
                }
                assert!(seen.iter().all(|c| *c == 1));
            }
        }
        assert!(Shard::parse("0/3").is_err());
        assert!(Shard::parse("4/3").is_err());
        assert_eq!(Shard::parse("2/3").unwrap(), Shard { index: 2, count: 3 });
    }
}
