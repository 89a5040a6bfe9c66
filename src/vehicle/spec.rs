//! The vehicle file (TOML) of the documented interface (`profiles/reference.md`), parsed with serde
//! and validated into a [`Vehicle`]: every number finite and in range,
//! every combination of keys meaningful. Errors name the file, the key
//! (e.g. `front.tyre_rate`) and what was wrong.

use std::path::{Path, PathBuf};

use serde::Deserialize;
use thiserror::Error;

use super::{Axle, Damper, MAX_SUSPENDED_SEATS, Seat, SeatSuspension, Stops, Tyre, Vehicle};
use crate::limits::{self, Range};

/// What a seat's fore-aft history column adds to its name (before the
/// unit `_accel_m_s2`).
pub const FORE_AFT_SUFFIX: &str = "_fore_aft";

/// What a suspended seat's floor history column adds to its name (before
/// the unit `_accel_m_s2`).
pub const FLOOR_SUFFIX: &str = "_floor";

/// Longest vehicle or seat name, characters.
pub const MAX_NAME_CHARS: usize = 120;

/// A vehicle file was unreadable or described an impossible vehicle.
#[derive(Debug, Error)]
pub enum VehicleError {
    /// The file could not be read.
    #[error("{path}: cannot read: {source}")]
    Read {
        /// The vehicle file.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// The TOML is malformed or has an unknown or mistyped key.
    #[error("{path}: {message}")]
    Syntax {
        /// The vehicle file.
        path: PathBuf,
        /// The TOML parser's message (with line and column).
        message: String,
    },
    /// A key holds an impossible value, or keys contradict each other.
    #[error("{path}: `{key}` {message}")]
    Invalid {
        /// The vehicle file.
        path: PathBuf,
        /// The dotted key, e.g. `front.tyre_rate`.
        key: String,
        /// What was wrong.
        message: String,
    },
}

impl VehicleError {
    /// Exit status for the command line: 2 for bad input, 1 for I/O trouble.
    pub fn exit_status(&self) -> u8 {
        match self {
            VehicleError::Read { source, .. } => crate::error::read_failure_status(source),
            _ => 2,
        }
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawVehicle {
    name: Option<String>,
    body: RawBody,
    front: RawAxle,
    rear: RawAxle,
    #[serde(default)]
    seat: Vec<RawSeat>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBody {
    mass: f64,
    pitch_inertia: f64,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAxle {
    cg_distance: f64,
    spring_rate: f64,
    damping: Option<f64>,
    damping_bump: Option<f64>,
    damping_rebound: Option<f64>,
    unsprung_mass: Option<f64>,
    tyre_rate: Option<f64>,
    tyre_damping: Option<f64>,
    bump_clearance: Option<f64>,
    rebound_clearance: Option<f64>,
    stop_rate: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeat {
    x: f64,
    height: Option<f64>,
    name: Option<String>,
    suspension: Option<RawSeatSuspension>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeatSuspension {
    mass: Option<f64>,
    rate: Option<f64>,
    damping: Option<f64>,
}

/// Largest vehicle file read, bytes: a real one is well under 10 kB, and
/// the cap keeps `--vehicle /dev/zero` from reading forever.
pub const MAX_VEHICLE_FILE_BYTES: u64 = 1 << 20;

/// Reads and validates a vehicle file.
pub fn read_vehicle(path: &Path) -> Result<Vehicle, VehicleError> {
    use std::io::Read;
    let read_error = |source| VehicleError::Read {
        path: path.to_path_buf(),
        source,
    };
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_VEHICLE_FILE_BYTES + 1).read_to_end(&mut bytes))
        .map_err(read_error)?;
    let syntax = |message: String| VehicleError::Syntax {
        path: path.to_path_buf(),
        message,
    };
    if bytes.len() as u64 > MAX_VEHICLE_FILE_BYTES {
        return Err(syntax(format!(
            "larger than {} KiB: not a vehicle file",
            MAX_VEHICLE_FILE_BYTES >> 10
        )));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        syntax(format!(
            "not a text file: the byte after the first {} is not UTF-8",
            e.utf8_error().valid_up_to()
        ))
    })?;
    parse_vehicle(&text, path)
}

/// Parses and validates vehicle TOML; `path` names it in messages.
pub fn parse_vehicle(text: &str, path: &Path) -> Result<Vehicle, VehicleError> {
    let raw: RawVehicle = toml::from_str(text).map_err(|e| VehicleError::Syntax {
        path: path.to_path_buf(),
        message: e.to_string().trim_end().replace('\n', "\n  "),
    })?;
    let v = Validator { path };
    let body_mass_kg = v.within("body.mass", &limits::BODY_MASS, raw.body.mass)?;
    let pitch_inertia_kg_m2 = v.within(
        "body.pitch_inertia",
        &limits::PITCH_INERTIA,
        raw.body.pitch_inertia,
    )?;
    let front = v.axle("front", &raw.front, 1.0)?;
    let rear = v.axle("rear", &raw.rear, -1.0)?;
    let seats = v.seats(&raw.seat, body_mass_kg)?;
    let name = match &raw.name {
        Some(n) => v.name("name", n, false)?,
        None => path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default(),
    };
    Ok(Vehicle {
        name,
        body_mass_kg,
        pitch_inertia_kg_m2,
        axles: [front, rear],
        seats,
    })
}

struct Validator<'a> {
    path: &'a Path,
}

impl Validator<'_> {
    fn invalid(&self, key: &str, message: impl Into<String>) -> VehicleError {
        VehicleError::Invalid {
            path: self.path.to_path_buf(),
            key: key.to_string(),
            message: message.into(),
        }
    }

    /// `value` when it lies in `range`; the message says the range.
    fn within(&self, key: &str, range: &Range, value: f64) -> Result<f64, VehicleError> {
        if !value.is_finite() {
            return Err(self.invalid(
                key,
                format!(
                    "must be a finite number (between {}), got {}",
                    range.span(),
                    limits::show(value)
                ),
            ));
        }
        if range.min > 0.0 && value <= 0.0 {
            return Err(self.invalid(
                key,
                format!(
                    "must be positive (between {}), got {}",
                    range.span(),
                    limits::show(value)
                ),
            ));
        }
        range.check(value).map_err(|m| self.invalid(key, m))
    }

    /// A name for tables: 1 to [`MAX_NAME_CHARS`] characters, no control
    /// characters; a seat's name also heads CSV columns, so `in_csv` also
    /// refuses commas and double quotes.
    fn name(&self, key: &str, name: &str, in_csv: bool) -> Result<String, VehicleError> {
        let n = name.chars().count();
        if n == 0 || n > MAX_NAME_CHARS {
            return Err(self.invalid(
                key,
                format!("must have 1 to {MAX_NAME_CHARS} characters, has {n}"),
            ));
        }
        let bad = |c: &char| c.is_control() || (in_csv && (*c == ',' || *c == '"'));
        if let Some(c) = name.chars().find(bad) {
            let why = if in_csv {
                "seat names head CSV columns"
            } else {
                "names head tables"
            };
            return Err(self.invalid(key, format!("must not contain {c:?} ({why})")));
        }
        Ok(name.to_string())
    }

    /// The `[[seat]]` entries: at least one, each name its own (and not
    /// clashing with another seat's history columns).
    fn seats(&self, raw: &[RawSeat], body_mass_kg: f64) -> Result<Vec<Seat>, VehicleError> {
        if raw.is_empty() {
            return Err(self.invalid(
                "seat",
                "is missing: give at least one [[seat]] with its x (m, positive ahead of the CG)",
            ));
        }
        let mut seats: Vec<Seat> = Vec::with_capacity(raw.len());
        for (i, s) in raw.iter().enumerate() {
            let x_m = self.within(&format!("seat[{i}].x"), &limits::BODY_X, s.x)?;
            let height_m = self.within(
                &format!("seat[{i}].height"),
                &limits::SEAT_HEIGHT,
                s.height.unwrap_or(0.0),
            )?;
            let key = format!("seat[{i}].name");
            let name = match &s.name {
                Some(n) => self.name(&key, n, true)?,
                None => format!("seat{}", i + 1),
            };
            // Seat names head the history's columns: each must be its own.
            if let Some(j) = seats.iter().position(|o| o.name == name) {
                return Err(self.invalid(
                    &key,
                    format!(
                        "{name:?} is already the name of seat[{j}]; give each seat its own name"
                    ),
                ));
            }
            // `A_fore_aft_accel_m_s2` is seat A's fore-aft column and would
            // also be the vertical column of a seat named `A_fore_aft`.
            let clash = |a: &str, b: &str| a.strip_suffix(FORE_AFT_SUFFIX) == Some(b);
            if let Some(j) = seats
                .iter()
                .position(|o| clash(&name, &o.name) || clash(&o.name, &name))
            {
                return Err(self.invalid(
                    &key,
                    format!(
                        "{name:?} and seat[{j}]'s name {:?} would head the same history column \
                     (a seat's fore-aft column is NAME{FORE_AFT_SUFFIX}_accel_m_s2); rename one",
                        seats[j].name
                    ),
                ));
            }
            let suspension = s
                .suspension
                .as_ref()
                .map(|p| self.seat_suspension(i, p, body_mass_kg))
                .transpose()?;
            if suspension.is_some()
                && seats.iter().filter(|s| s.suspension.is_some()).count() >= MAX_SUSPENDED_SEATS
            {
                return Err(self.invalid(
                    &format!("seat[{i}].suspension"),
                    format!(
                        "is one too many: at most {MAX_SUSPENDED_SEATS} seats can have a suspension (one degree of freedom each)"
                    ),
                ));
            }
            seats.push(Seat {
                x_m,
                height_m,
                name,
                suspension,
            });
        }
        self.floor_columns_apart(&seats)?;
        Ok(seats)
    }

    /// `[seat.suspension]` of seat `i`: mass and rate required, damping
    /// 0 unless given; the moving mass lighter than the body.
    fn seat_suspension(
        &self,
        i: usize,
        raw: &RawSeatSuspension,
        body_mass_kg: f64,
    ) -> Result<SeatSuspension, VehicleError> {
        let key = |k: &str| format!("seat[{i}].suspension.{k}");
        let required = |k: &str, v: Option<f64>, what: &str| {
            v.ok_or_else(|| {
                self.invalid(
                    &key(k),
                    format!("is missing: a seat suspension needs its {what}"),
                )
            })
        };
        let mass = required("mass", raw.mass, "moving mass (kg, occupant and seat top)")?;
        let rate = required("rate", raw.rate, "spring rate (N/m)")?;
        let mass_kg = self.within(&key("mass"), &limits::SEAT_MASS, mass)?;
        if mass_kg >= body_mass_kg {
            return Err(self.invalid(
                &key("mass"),
                format!(
                    "({mass_kg} kg) must be less than body.mass ({body_mass_kg} kg): the seat rides on the body"
                ),
            ));
        }
        Ok(SeatSuspension {
            mass_kg,
            rate_n_m: self.within(&key("rate"), &limits::SEAT_RATE, rate)?,
            damping_n_s_m: self.within(
                &key("damping"),
                &limits::SEAT_DAMPING,
                raw.damping.unwrap_or(0.0),
            )?,
        })
    }

    /// A suspended seat's floor column `NAME_floor_accel_m_s2` must not be
    /// another seat's vertical column.
    fn floor_columns_apart(&self, seats: &[Seat]) -> Result<(), VehicleError> {
        for (i, s) in seats.iter().enumerate() {
            if s.suspension.is_none() {
                continue;
            }
            let floor = format!("{}{FLOOR_SUFFIX}", s.name);
            if let Some(j) = seats.iter().position(|o| o.name == floor) {
                return Err(self.invalid(
                    &format!("seat[{j}].name"),
                    format!(
                        "{floor:?} would head the same history column as seat[{i}]'s floor acceleration \
                         (a suspended seat's floor column is NAME{FLOOR_SUFFIX}_accel_m_s2); rename one"
                    ),
                ));
            }
        }
        Ok(())
    }

    /// `sign` is +1 for the front axle (ahead of the CG), −1 for the rear.
    fn axle(&self, which: &str, raw: &RawAxle, sign: f64) -> Result<Axle, VehicleError> {
        let key = |k: &str| format!("{which}.{k}");
        let distance = self.within(&key("cg_distance"), &limits::CG_DISTANCE, raw.cg_distance)?;
        let spring_n_m = self.within(&key("spring_rate"), &limits::SPRING_RATE, raw.spring_rate)?;
        Ok(Axle {
            x_m: sign * distance,
            spring_n_m,
            damper: self.damper(which, raw)?,
            tyre: self.tyre(which, raw)?,
            stops: self.stops(which, raw)?,
        })
    }

    /// The axle's damper: one linear rate, or bump and rebound rates.
    fn damper(&self, which: &str, raw: &RawAxle) -> Result<Damper, VehicleError> {
        let key = |k: &str| format!("{which}.{k}");
        let damping = |k: &str, c: f64| self.within(&key(k), &limits::DAMPING, c);
        let damper = match (raw.damping, raw.damping_bump, raw.damping_rebound) {
            (Some(c), None, None) => {
                let c = damping("damping", c)?;
                Damper {
                    bump_n_s_m: c,
                    rebound_n_s_m: c,
                }
            }
            (None, Some(b), Some(r)) => Damper {
                bump_n_s_m: damping("damping_bump", b)?,
                rebound_n_s_m: damping("damping_rebound", r)?,
            },
            (Some(_), _, _) => {
                return Err(self.invalid(
                    &key("damping"),
                    "cannot be combined with damping_bump/damping_rebound: give either one linear damping or both asymmetric rates",
                ));
            }
            (None, Some(_), None) => {
                return Err(self.invalid(
                    &key("damping_rebound"),
                    "is missing: damping_bump needs damping_rebound",
                ));
            }
            (None, None, Some(_)) => {
                return Err(self.invalid(
                    &key("damping_bump"),
                    "is missing: damping_rebound needs damping_bump",
                ));
            }
            (None, None, None) => {
                return Err(self.invalid(
                    &key("damping"),
                    "is missing: give damping (N s/m) or damping_bump and damping_rebound",
                ));
            }
        };
        Ok(damper)
    }

    /// The axle's tyre, if it has a wheel (an unsprung mass).
    fn tyre(&self, which: &str, raw: &RawAxle) -> Result<Option<Tyre>, VehicleError> {
        let key = |k: &str| format!("{which}.{k}");
        // Omitted or 0 (the documented interface allows both): no wheel.
        let unsprung = raw
            .unsprung_mass
            .filter(|m| *m != 0.0)
            .map(|m| self.within(&key("unsprung_mass"), &limits::UNSPRUNG_MASS, m))
            .transpose()?;
        let tyre = if let Some(unsprung) = unsprung {
            let rate = raw.tyre_rate.ok_or_else(|| {
                self.invalid(
                    &key("tyre_rate"),
                    format!(
                        "is missing: it is required when unsprung_mass is given ({unsprung} kg)"
                    ),
                )
            })?;
            Some(Tyre {
                unsprung_mass_kg: unsprung,
                rate_n_m: self.within(&key("tyre_rate"), &limits::TYRE_RATE, rate)?,
                damping_n_s_m: self.within(
                    &key("tyre_damping"),
                    &limits::TYRE_DAMPING,
                    raw.tyre_damping.unwrap_or(0.0),
                )?,
            })
        } else {
            let why = if raw.unsprung_mass.is_some() {
                "is given but unsprung_mass is 0, which means no wheel"
            } else {
                "is given but unsprung_mass is missing"
            };
            for (k, v) in [
                ("tyre_rate", raw.tyre_rate),
                ("tyre_damping", raw.tyre_damping),
            ] {
                if v.is_some() {
                    return Err(self.invalid(
                        &key(k),
                        format!("{why}: a tyre needs an unsprung mass (give unsprung_mass in kg, or drop the tyre keys for a body on springs)"),
                    ));
                }
            }
            None
        };
        Ok(tyre)
    }

    /// The axle's bump and rebound stops, if any clearance is given.
    fn stops(&self, which: &str, raw: &RawAxle) -> Result<Option<Stops>, VehicleError> {
        let key = |k: &str| format!("{which}.{k}");
        let stops = match (raw.bump_clearance, raw.rebound_clearance, raw.stop_rate) {
            (None, None, None) => None,
            (_, _, None) => {
                return Err(self.invalid(
                    &key("stop_rate"),
                    "is missing: a clearance needs a stop_rate (N/m)",
                ));
            }
            (None, None, Some(_)) => {
                return Err(self.invalid(
                    &key("stop_rate"),
                    "is given without bump_clearance or rebound_clearance",
                ));
            }
            (b, r, Some(rate)) => Some(Stops {
                bump_clearance_m: b
                    .map(|b| self.within(&key("bump_clearance"), &limits::CLEARANCE, b))
                    .transpose()?,
                rebound_clearance_m: r
                    .map(|r| self.within(&key("rebound_clearance"), &limits::CLEARANCE, r))
                    .transpose()?,
                rate_n_m: self.within(&key("stop_rate"), &limits::STOP_RATE, rate)?,
            }),
        };
        Ok(stops)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::vehicle::tests::HALF_CAR as CAR;

    fn parse(text: &str) -> Result<Vehicle, VehicleError> {
        parse_vehicle(text, Path::new("car.toml"))
    }

    #[test]
    fn reads_the_documented_example() {
        let v = parse(CAR).unwrap();
        assert_eq!(v.name, "documented example");
        assert_eq!(v.axles[0].x_m, 1.15);
        assert_eq!(v.axles[1].x_m, -1.45);
        assert_eq!(v.axles[1].tyre.as_ref().unwrap().unsprung_mass_kg, 75.0);
        assert_eq!(v.seats[0].x_m, 0.35);
        assert!(v.is_linear());
    }

    fn expect_error(text: &str, fragment: &str) {
        let e = parse(text).unwrap_err().to_string();
        assert!(e.contains(fragment), "expected {fragment:?} in {e:?}");
        assert!(e.starts_with("car.toml"), "{e}");
    }

    #[test]
    fn names_the_key_and_the_problem() {
        expect_error(
            &CAR.replace("mass = 1250.0", "mass = -1.0"),
            "`body.mass` must be positive",
        );
        expect_error(
            &CAR.replacen("tyre_rate = 420000.0\n", "", 1),
            "`front.tyre_rate` is missing",
        );
        expect_error(
            &CAR.replace("[[seat]]\nx = 0.35\n", ""),
            "`seat` is missing",
        );
        expect_error(
            &CAR.replace("damping = 2900.0", "dampng = 2900.0"),
            "unknown field",
        );
        expect_error(
            &CAR.replace("damping = 2900.0", "damping = 2900.0\ndamping_bump = 1.0"),
            "`rear.damping` cannot be combined",
        );
        expect_error(
            &CAR.replace(
                "damping = 2900.0",
                "damping = 2900.0\nbump_clearance = 0.05",
            ),
            "`rear.stop_rate` is missing",
        );
        expect_error(
            &CAR.replace("cg_distance = 1.45", "cg_distance = nan"),
            "finite",
        );
    }
}
