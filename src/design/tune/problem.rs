//! What a tune minimises: the parameters and their bounds, the cases
//! (roads × speeds), the objective and the limits, parsed from the
//! command-line texts and checked before anything runs.

use std::sync::Arc;

use serde::Serialize;

use crate::design::vary::{Amount, Key, VehicleDocument, round_12, split_assignment};
use crate::road::Profile;
use crate::road::iso8608::RoadClass;
use crate::vehicle::AXLE_NAMES;

/// One tuned parameter: a vehicle-file key within bounds.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    /// The key.
    pub key: Key,
    /// Lower bound (SI, as in the file).
    pub lo: f64,
    /// Upper bound.
    pub hi: f64,
    /// The starting value: the file's, clamped into the bounds (the middle
    /// when the file does not give the key).
    pub start: f64,
    /// The option as given, for messages.
    pub text: String,
}

impl Parameter {
    /// The value at unit-cube coordinate `u` (0 at `lo`, 1 at `hi`), rounded
    /// to 12 significant digits so the tuned file reads as typed.
    pub fn at(&self, u: f64) -> f64 {
        round_12(self.lo + u.clamp(0.0, 1.0) * (self.hi - self.lo))
    }

    /// The unit-cube coordinate of `x`.
    pub fn unit(&self, x: f64) -> f64 {
        ((x - self.lo) / (self.hi - self.lo)).clamp(0.0, 1.0)
    }
}

fn usage(arg: &str, why: impl std::fmt::Display) -> crate::Error {
    crate::Error::Usage(format!("--vary {arg}: {why}"))
}

/// Parses `KEY=LO:HI` (LO and HI absolute, or `*F` relative to the file's
/// value) and checks that the vehicle file accepts both bounds.
pub fn parse_parameter(doc: &VehicleDocument, arg: &str) -> Result<Parameter, crate::Error> {
    let (key, bounds) = split_assignment("--vary", arg)?;
    let (lo, hi) = bounds.split_once(':').ok_or_else(|| {
        usage(
            arg,
            "tune takes bounds LO:HI (e.g. rear.damping=1000:4000 or *0.5:*2)",
        )
    })?;
    if hi.contains(':') {
        return Err(usage(
            arg,
            "tune takes two bounds LO:HI, not a range with a step",
        ));
    }
    let file_value = doc
        .value_of(&key)
        .map_err(|e| usage(arg, format!("{}: {e}", doc.path().display())))?;
    let bound = |t: &str| {
        Amount::parse(t)
            .and_then(|a| a.resolve(file_value))
            .map(round_12)
            .map_err(|e| usage(arg, e))
    };
    let (lo, hi) = (bound(lo)?, bound(hi)?);
    if lo > hi {
        return Err(usage(
            arg,
            format!("the bounds are reversed: {lo} is above {hi}"),
        ));
    }
    if lo == hi {
        return Err(usage(
            arg,
            format!("the bounds are equal ({lo}): nothing to tune"),
        ));
    }
    for b in [lo, hi] {
        doc.edited(&[(&key, b)])
            .map_err(|e| usage(arg, format!("the bound {b} is refused: {e}")))?;
    }
    let start = file_value.map_or(0.5 * (lo + hi), |v| v.clamp(lo, hi));
    Ok(Parameter {
        key,
        lo,
        hi,
        start,
        text: arg.trim().to_string(),
    })
}

/// Parses every `--vary KEY=LO:HI` (see [`parse_parameter`]); a key given
/// twice is refused.
pub fn parse_parameters(
    doc: &VehicleDocument,
    args: &[String],
) -> Result<Vec<Parameter>, crate::Error> {
    let mut out: Vec<Parameter> = Vec::with_capacity(args.len());
    for arg in args {
        let p = parse_parameter(doc, arg)?;
        if out.iter().any(|q| q.key == p.key) {
            return Err(usage(arg, format!("`{}` is given twice", p.key)));
        }
        out.push(p);
    }
    Ok(out)
}

/// A road of the study.
#[derive(Debug, Clone)]
pub enum StudyRoad {
    /// An ISO 8608 class, generated with seeds `1..=seeds` as `sweep` does.
    Class(RoadClass),
    /// A measured profile (the label is the file as given).
    Profile {
        /// The file as given.
        label: String,
        /// The profile.
        profile: Arc<Profile>,
    },
}

/// The cases every design is judged on.
#[derive(Debug, Clone)]
pub struct Study {
    /// Roads: classes, then profiles.
    pub roads: Vec<StudyRoad>,
    /// Seeds per generated road (`1..=seeds`).
    pub seeds: u64,
    /// Length of generated roads, m.
    pub length_m: f64,
    /// Spacing of generated roads, m.
    pub spacing_m: f64,
    /// Speeds, m/s, with their weights in the mean (all 1 unless given).
    pub speeds: Vec<(f64, f64)>,
    /// The spatial band of the spectral prediction, cycle/m; `None` for the
    /// band the generated roads have (ISO 8608 defaults of
    /// [`crate::road::iso8608::RoadSpec::from_class`]). A wider band serves
    /// checks against closed forms for unbounded white spectra.
    pub spectral_band_cycle_m: Option<(f64, f64)>,
}

/// The comfort measure minimised.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Measure {
    /// Weighted r.m.s. acceleration aw (ISO 2631-1, 6.1), m/s².
    Aw,
    /// Vibration dose value (ISO 2631-1, 6.3.2), m/s^1.75 (time domain only).
    Vdv,
    /// The vibration total value for comfort (ISO 2631-1, 6.5 with the
    /// seat factors of 8.2, k = 1 on every axis): `√(aw_x² + aw_z²)` of
    /// the fore-aft (Wd) and vertical (Wk) aw, the lateral axis not
    /// modelled; `simulate`'s `seats[i].total_value`, m/s².
    TotalValue,
}

/// How the cases combine.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Over {
    /// The weighted mean over the cases (speed weights; every road and seed alike).
    Mean,
    /// The largest case.
    Worst,
}

/// The objective: a seat's measure, combined over the cases.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Objective {
    /// Seat index (0-based, file order).
    pub seat: usize,
    /// Seat name.
    pub seat_name: String,
    /// Measure.
    pub measure: Measure,
    /// Combination.
    pub over: Over,
}

impl Objective {
    /// Resolves `--seat` (name or 1-based position; default the first seat).
    pub fn new(
        doc: &VehicleDocument,
        seat: Option<&str>,
        measure: Measure,
        over: Over,
    ) -> Result<Objective, crate::Error> {
        let seats = &doc.vehicle().seats;
        let i = match seat {
            None => 0,
            Some(s) => match s.parse::<usize>() {
                Ok(n) if (1..=seats.len()).contains(&n) => n - 1,
                _ => seats.iter().position(|x| x.name == s).ok_or_else(|| {
                    let names: Vec<&str> = seats.iter().map(|x| x.name.as_str()).collect();
                    crate::Error::Usage(format!(
                        "--seat {s}: no such seat; the seats are {} (or 1..={})",
                        names.join(", "),
                        seats.len()
                    ))
                })?,
            },
        };
        Ok(Objective {
            seat: i,
            seat_name: seats[i].name.clone(),
            measure,
            over,
        })
    }

    /// In words, e.g. "mean aw of seat driver".
    pub fn describe(&self) -> String {
        let m = match self.measure {
            Measure::Aw => "aw",
            Measure::Vdv => "VDV",
            Measure::TotalValue => "total value",
        };
        let o = match self.over {
            Over::Mean => "mean",
            Over::Worst => "largest",
        };
        format!("{o} {m} of seat {} over the cases", self.seat_name)
    }
}

/// What a limit bounds (per axle, 0 front, 1 rear).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Travel r.m.s., m.
    TravelRms(usize),
    /// 99th percentile of travel (compression), m.
    TravelP99(usize),
    /// Fraction of time past the bump stop.
    TimePastBump(usize),
    /// Dynamic load coefficient.
    LoadCoefficient(usize),
    /// Fraction of time with the tyre off the road.
    OffGround(usize),
}

/// An upper limit on a quantity in every case (the largest case counts).
#[derive(Debug, Clone, PartialEq)]
pub struct Limit {
    /// The name, as the sweep column (`travel_p99_rear_m`).
    pub name: String,
    /// What it bounds.
    pub quantity: Quantity,
    /// The limit.
    pub max: f64,
}

impl Limit {
    /// The limit names a tune accepts (the sweep's column names).
    pub fn names() -> Vec<String> {
        let mut v = Vec::new();
        for a in AXLE_NAMES {
            v.push(format!("travel_rms_{a}_m"));
            v.push(format!("travel_p99_{a}_m"));
            v.push(format!("time_past_bump_fraction_{a}"));
            v.push(format!("dynamic_load_coefficient_{a}"));
            v.push(format!("time_off_ground_fraction_{a}"));
        }
        v
    }

    /// Parses `NAME=MAX` for `doc`'s vehicle (a bump-stop limit needs a
    /// bump stop on that axle).
    pub fn parse(doc: &VehicleDocument, arg: &str) -> Result<Limit, crate::Error> {
        let bad = |why: String| crate::Error::Usage(format!("--limit {arg}: {why}"));
        let (name, max) = arg
            .split_once('=')
            .ok_or_else(|| bad("expected NAME=MAX, e.g. travel_p99_rear_m=0.05".into()))?;
        let name = name.trim();
        let quantity = AXLE_NAMES
            .iter()
            .enumerate()
            .find_map(|(i, a)| {
                let q = [
                    (format!("travel_rms_{a}_m"), Quantity::TravelRms(i)),
                    (format!("travel_p99_{a}_m"), Quantity::TravelP99(i)),
                    (
                        format!("time_past_bump_fraction_{a}"),
                        Quantity::TimePastBump(i),
                    ),
                    (
                        format!("dynamic_load_coefficient_{a}"),
                        Quantity::LoadCoefficient(i),
                    ),
                    (
                        format!("time_off_ground_fraction_{a}"),
                        Quantity::OffGround(i),
                    ),
                ];
                q.into_iter().find(|(n, _)| n == name).map(|(_, q)| q)
            })
            .ok_or_else(|| {
                bad(format!(
                    "unknown limit; the limits are {}",
                    Limit::names().join(", ")
                ))
            })?;
        let max: f64 = max
            .trim()
            .parse()
            .ok()
            .filter(|m: &f64| m.is_finite() && *m >= 0.0)
            .ok_or_else(|| {
                bad(format!(
                    "{:?} is not a number ≥ 0 (SI: m, or a fraction)",
                    max.trim()
                ))
            })?;
        if let Quantity::TimePastBump(i) = quantity {
            let has = doc.vehicle().axles[i]
                .stops
                .as_ref()
                .is_some_and(|s| s.bump_clearance_m.is_some());
            if !has {
                return Err(bad(format!(
                    "the {} axle has no bump stop (bump_clearance) in {}",
                    AXLE_NAMES[i],
                    doc.path().display()
                )));
            }
        }
        Ok(Limit {
            name: name.to_string(),
            quantity,
            max,
        })
    }

    /// How far `value` is past the limit: `value/max − 1` (a limit of 0
    /// counts the value itself).
    pub fn excess(&self, value: f64) -> f64 {
        if !value.is_finite() {
            return f64::INFINITY;
        }
        if self.max > 0.0 {
            value / self.max - 1.0
        } else {
            value
        }
    }
}
