//! The vehicle file (TOML) of the documented interface (`profiles/reference.md`), parsed with serde
//! and validated into a [`Vehicle`]: every number finite and in range,
//! every combination of keys meaningful. Errors name the file, the key
//! (e.g. `front.tyre_rate`) and what was wrong.

use std::path::{Path, PathBuf};

use serde::Deserialize;
use thiserror::Error;

use super::{Axle, Damper, Seat, Stops, Tyre, Vehicle};

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
    name: Option<String>,
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
    let body_mass_kg = v.positive("body.mass", raw.body.mass)?;
    let pitch_inertia_kg_m2 = v.positive("body.pitch_inertia", raw.body.pitch_inertia)?;
    let front = v.axle("front", &raw.front, 1.0)?;
    let rear = v.axle("rear", &raw.rear, -1.0)?;
    if raw.seat.is_empty() {
        return Err(v.invalid(
            "seat",
            "is missing: give at least one [[seat]] with its x (m, positive ahead of the CG)",
        ));
    }
    let mut seats = Vec::with_capacity(raw.seat.len());
    for (i, s) in raw.seat.iter().enumerate() {
        let x_m = v.finite(&format!("seat[{i}].x"), s.x)?;
        seats.push(Seat {
            x_m,
            name: s.name.clone().unwrap_or_else(|| format!("seat{}", i + 1)),
        });
    }
    Ok(Vehicle {
        name: raw.name.unwrap_or_else(|| {
            path.file_stem()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_default()
        }),
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

    fn finite(&self, key: &str, value: f64) -> Result<f64, VehicleError> {
        if value.is_finite() {
            Ok(value)
        } else {
            Err(self.invalid(key, format!("must be a finite number, got {value}")))
        }
    }

    fn positive(&self, key: &str, value: f64) -> Result<f64, VehicleError> {
        let value = self.finite(key, value)?;
        if value > 0.0 {
            Ok(value)
        } else {
            Err(self.invalid(key, format!("must be positive, got {value}")))
        }
    }

    fn non_negative(&self, key: &str, value: f64) -> Result<f64, VehicleError> {
        let value = self.finite(key, value)?;
        if value >= 0.0 {
            Ok(value)
        } else {
            Err(self.invalid(key, format!("must not be negative, got {value}")))
        }
    }

    /// `sign` is +1 for the front axle (ahead of the CG), −1 for the rear.
    fn axle(&self, which: &str, raw: &RawAxle, sign: f64) -> Result<Axle, VehicleError> {
        let key = |k: &str| format!("{which}.{k}");
        let distance = self.positive(&key("cg_distance"), raw.cg_distance)?;
        let spring_n_m = self.positive(&key("spring_rate"), raw.spring_rate)?;
        let damper = match (raw.damping, raw.damping_bump, raw.damping_rebound) {
            (Some(c), None, None) => {
                let c = self.non_negative(&key("damping"), c)?;
                Damper {
                    bump_n_s_m: c,
                    rebound_n_s_m: c,
                }
            }
            (None, Some(b), Some(r)) => Damper {
                bump_n_s_m: self.non_negative(&key("damping_bump"), b)?,
                rebound_n_s_m: self.non_negative(&key("damping_rebound"), r)?,
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
        let unsprung =
            self.non_negative(&key("unsprung_mass"), raw.unsprung_mass.unwrap_or(0.0))?;
        let tyre = if unsprung > 0.0 {
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
                rate_n_m: self.positive(&key("tyre_rate"), rate)?,
                damping_n_s_m: self
                    .non_negative(&key("tyre_damping"), raw.tyre_damping.unwrap_or(0.0))?,
            })
        } else {
            for (k, v) in [
                ("tyre_rate", raw.tyre_rate),
                ("tyre_damping", raw.tyre_damping),
            ] {
                if v.is_some() {
                    return Err(self.invalid(
                        &key(k),
                        "is given but unsprung_mass is not: a tyre needs an unsprung mass (give unsprung_mass > 0, or drop the tyre keys for a body on springs)",
                    ));
                }
            }
            None
        };
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
                    .map(|b| self.positive(&key("bump_clearance"), b))
                    .transpose()?,
                rebound_clearance_m: r
                    .map(|r| self.positive(&key("rebound_clearance"), r))
                    .transpose()?,
                rate_n_m: self.positive(&key("stop_rate"), rate)?,
            }),
        };
        Ok(Axle {
            x_m: sign * distance,
            spring_n_m,
            damper,
            tyre,
            stops,
        })
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
