//! The plausible range of every physical input, in one table.
//!
//! Each value a user gives (a vehicle file key, a profile or record column,
//! a command-line option) is checked against its [`Range`] where it is
//! read, and refused with the range in the message when it falls outside.
//! The ranges are generous (from a small robot to a mining truck, from a
//! laser profilometer's spacing to a 10,000 km road) but finite, so that
//! no accepted input can overflow the arithmetic downstream (1e300 squared
//! is infinite) or make a run take forever. They are physical judgement
//! (common practice), not values from a standard; the README lists them,
//! and a test keeps that list equal to [`ALL`].

/// A closed interval of accepted values, with where it applies.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Range {
    /// The key, column or option it applies to, as the user writes it.
    pub name: &'static str,
    /// Unit of the bounds (SI), or "" for a pure number.
    pub unit: &'static str,
    /// Smallest accepted value.
    pub min: f64,
    /// Largest accepted value.
    pub max: f64,
}

impl Range {
    /// Whether `v` is accepted (a NaN never is).
    pub fn contains(&self, v: f64) -> bool {
        v >= self.min && v <= self.max
    }

    /// `v` when accepted, otherwise a message giving the range and `v`.
    pub fn check(&self, v: f64) -> Result<f64, String> {
        if self.contains(v) {
            Ok(v)
        } else if !v.is_finite() {
            Err(format!(
                "must be a finite number between {}, got {}",
                self.span(),
                show(v)
            ))
        } else {
            Err(format!("must lie between {}, got {}", self.span(), show(v)))
        }
    }

    /// `MIN and MAX UNIT`, as the messages and the README write it.
    pub fn span(&self) -> String {
        let unit = if self.unit.is_empty() {
            String::new()
        } else {
            format!(" {}", self.unit)
        };
        format!("{} and {}{unit}", show(self.min), show(self.max))
    }
}

/// A number for a message: the shortest form that reads back to the same
/// value, with an exponent when it is very large or small (`1e300`, not a
/// 301-digit decimal).
pub fn show(x: f64) -> String {
    let a = x.abs();
    if x != 0.0 && x.is_finite() && !(1e-4..1e6).contains(&a) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

const fn r(name: &'static str, unit: &'static str, min: f64, max: f64) -> Range {
    Range {
        name,
        unit,
        min,
        max,
    }
}

// The vehicle file.
/// `body.mass`.
pub const BODY_MASS: Range = r("body.mass", "kg", 1.0, 1e6);
/// `body.pitch_inertia`.
pub const PITCH_INERTIA: Range = r("body.pitch_inertia", "kg m^2", 0.01, 1e8);
/// `cg_distance` of an axle.
pub const CG_DISTANCE: Range = r("cg_distance", "m", 0.01, 30.0);
/// `spring_rate` of an axle.
pub const SPRING_RATE: Range = r("spring_rate", "N/m", 1.0, 1e9);
/// `damping`, `damping_bump`, `damping_rebound`.
pub const DAMPING: Range = r("damping, damping_bump, damping_rebound", "N s/m", 0.0, 1e8);
/// `unsprung_mass` (when given; omit it for a body on springs).
pub const UNSPRUNG_MASS: Range = r("unsprung_mass", "kg", 0.01, 1e5);
/// `tyre_rate`.
pub const TYRE_RATE: Range = r("tyre_rate", "N/m", 10.0, 1e10);
/// `tyre_damping`.
pub const TYRE_DAMPING: Range = r("tyre_damping", "N s/m", 0.0, 1e8);
/// `bump_clearance`, `rebound_clearance`.
pub const CLEARANCE: Range = r("bump_clearance, rebound_clearance", "m", 1e-4, 10.0);
/// `stop_rate`.
pub const STOP_RATE: Range = r("stop_rate", "N/m", 1.0, 1e10);
/// A seat's `x`, and `--force`'s X (ahead of the CG).
pub const BODY_X: Range = r("seat x, --force X, --force-x", "m", -50.0, 50.0);
/// A seat's `height` above the CG (a point below it is not modelled).
pub const SEAT_HEIGHT: Range = r("seat height", "m", 0.0, 20.0);
/// `seat.suspension.mass` (also below `body.mass`).
pub const SEAT_MASS: Range = r("seat suspension mass", "kg", 0.1, 1e5);
/// `seat.suspension.rate`.
pub const SEAT_RATE: Range = r("seat suspension rate", "N/m", 1.0, 1e9);
/// `seat.suspension.damping`.
pub const SEAT_DAMPING: Range = r("seat suspension damping", "N s/m", 0.0, 1e8);

// Road profiles, generated and read.
/// `distance_m` of a profile row.
pub const DISTANCE: Range = r("distance_m", "m", -1e9, 1e9);
/// `elevation_m` of a profile row (relative or absolute altitude).
pub const ELEVATION: Range = r("elevation_m", "m", -1e4, 1e4);
/// Spacing of a profile's rows, and `--spacing`.
pub const SPACING: Range = r("profile spacing, --spacing", "m", 1e-5, 10.0);
/// `--length` of a generated or flat road.
pub const ROAD_LENGTH: Range = r("--length", "m", 1e-3, 1e7);
/// `--gd-n0`.
pub const GD_N0: Range = r("--gd-n0", "m^3", 1e-12, 1.0);
/// `--n-min`, `--n-max`.
pub const WAVENUMBER: Range = r("--n-min, --n-max", "cycle/m", 1e-12, 1e4);
/// `--waviness`.
pub const WAVINESS: Range = r("--waviness", "", 0.0, 6.0);
/// Obstacle height or depth.
pub const OBSTACLE_HEIGHT: Range = r("obstacle HEIGHT, DEPTH", "m", -10.0, 10.0);
/// `classify --segment`.
pub const SEGMENT: Range = r("--segment", "m", 0.01, 1e7);

// Runs.
/// `--speed`, `--speeds`.
pub const SPEED: Range = r("--speed, --speeds", "m/s", 0.01, 300.0);
/// `--rate`.
pub const OUTPUT_RATE: Range = r("--rate", "Hz", 1.0, 1e6);
/// `--rtol`.
pub const RTOL: Range = r("--rtol", "", 1e-15, 0.5);
/// `--atol`.
pub const ATOL: Range = r("--atol", "", 1e-20, 1.0);
/// `--travel-bin`.
pub const TRAVEL_BIN: Range = r("--travel-bin", "m", 1e-6, 1.0);
/// `--sn-exponent`.
pub const SN_EXPONENT: Range = r("--sn-exponent", "", 1.0, 20.0);
/// `--force` amplitude.
pub const FORCE_AMPLITUDE: Range = r("--force AMPLITUDE", "N", -1e7, 1e7);
/// `--force` frequency (also below half of `--rate`).
pub const FORCE_FREQUENCY: Range = r("--force FREQUENCY", "Hz", 1e-3, 1e4);
/// `--exposure`.
pub const EXPOSURE: Range = r("--exposure", "s", 1.0, 86_400.0);
/// `frf --freqs`.
pub const FRF_FREQUENCY: Range = r("frf --freqs", "Hz", 0.0, 1e4);
/// `sweep --seeds`.
pub const SEEDS: Range = r("--seeds", "", 1.0, 100_000.0);

// Acceleration records (`comfort`).
/// `time_s` of a record row.
pub const RECORD_TIME: Range = r("time_s", "s", -1e9, 1e9);
/// The evaluated acceleration column.
pub const ACCELERATION: Range = r("acceleration column", "m/s^2", -1e5, 1e5);
/// A record's sample rate.
pub const RECORD_RATE: Range = r("record sample rate", "Hz", 1.0, 1e6);

/// Every range, in the order the README lists them.
pub const ALL: &[Range] = &[
    BODY_MASS,
    PITCH_INERTIA,
    CG_DISTANCE,
    SPRING_RATE,
    DAMPING,
    UNSPRUNG_MASS,
    TYRE_RATE,
    TYRE_DAMPING,
    CLEARANCE,
    STOP_RATE,
    BODY_X,
    SEAT_HEIGHT,
    SEAT_MASS,
    SEAT_RATE,
    SEAT_DAMPING,
    DISTANCE,
    ELEVATION,
    SPACING,
    ROAD_LENGTH,
    GD_N0,
    WAVENUMBER,
    WAVINESS,
    OBSTACLE_HEIGHT,
    SEGMENT,
    SPEED,
    OUTPUT_RATE,
    RTOL,
    ATOL,
    TRAVEL_BIN,
    SN_EXPONENT,
    FORCE_AMPLITUDE,
    FORCE_FREQUENCY,
    EXPOSURE,
    FRF_FREQUENCY,
    SEEDS,
    RECORD_TIME,
    ACCELERATION,
    RECORD_RATE,
];

/// The README's table of [`ALL`] (one row per range).
pub fn markdown_table() -> String {
    let mut s = String::from("| input | unit | from | to |\n|---|---|---|---|\n");
    for r in ALL {
        s.push_str(&format!(
            "| {} | {} | {} | {} |\n",
            r.name,
            if r.unit.is_empty() { "–" } else { r.unit },
            show(r.min),
            show(r.max)
        ));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_in_messages_stay_short() {
        assert_eq!(show(1e300), "1e300");
        assert_eq!(show(-2.5e-300), "-2.5e-300");
        assert_eq!(show(1000.0), "1000");
        assert_eq!(show(0.05), "0.05");
        assert_eq!(show(0.0), "0");
        assert_eq!(show(f64::NAN), "NaN");
        assert_eq!(show(f64::INFINITY), "inf");
        for x in [1e300, 5e-324, 123456789.0, 1e-5] {
            assert_eq!(show(x).parse::<f64>().unwrap(), x, "reads back");
            assert!(show(x).len() < 24);
        }
    }

    #[test]
    fn the_readme_lists_every_range_as_checked() {
        let readme = std::fs::read_to_string(
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md"),
        )
        .unwrap();
        let table = markdown_table();
        assert!(
            readme.contains(&table),
            "README.md should hold, verbatim:\n{table}"
        );
    }

    #[test]
    fn ranges_refuse_what_lies_outside_and_say_the_range() {
        assert_eq!(BODY_MASS.check(1250.0), Ok(1250.0));
        let e = BODY_MASS.check(1e300).unwrap_err();
        assert_eq!(e, "must lie between 1 and 1e6 kg, got 1e300");
        assert!(BODY_MASS.check(f64::NAN).is_err());
        assert!(DAMPING.check(0.0).is_ok());
        for r in ALL {
            assert!(
                r.min < r.max && r.min.is_finite() && r.max.is_finite(),
                "{r:?}"
            );
        }
    }
}
