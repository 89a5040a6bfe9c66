//! The life's spectra: each case's counts scaled by (its distance in the
//! life) / (its simulated length) and summed in case order, per axle and
//! quantity (travel, suspension force, tyre load), for the whole life and
//! per part; then the report ([`LifeReport`]) and the CSV files.
//!
//! - Range–mean matrix: the scaled rainflow cells (bins of the rainflow
//!   table, `[k·w, (k+1)·w)`).
//! - Exceedance: cycles with a range at or above each bin's lower edge,
//!   from the matrix (exact at those edges).
//! - Level crossings: scaled up-crossings of every level `k·w`.
//! - Damage-equivalent range for S–N exponent m over `N_ref` cycles:
//!   `S_eq = (Σ nᵢ·Sᵢ^m / N_ref)^(1/m)` (Palmgren–Miner summation with a
//!   Basquin curve `N·S^m = const`: common practice), from the exact ranges
//!   (each case's `Σ nᵢ·Sᵢ^m`, scaled), not from the bins.
//! - Damage shares: a part's `Σ nᵢ·Sᵢ^m` over the life's, per exponent.
//! - Times past the stops and off the ground: fraction × duration, scaled.
//! - Seats: aw as the energy average over the part's driving time
//!   (ISO 2631-1 6.1: r.m.s. over the exposure), VDV from the fourth-power
//!   sum of its cases (ISO 2631-1 6.3.2: VDVs of several periods combine as
//!   the fourth root of the sum of fourth powers).

use std::collections::BTreeMap;
use std::io::{self, Write};

use serde::Serialize;
use serde::ser::SerializeMap;

use super::cases::{Case, CaseResult, QuantityCounts, Settings, life_distance_m};
use super::usage::{PartRoad, Usage};
use crate::comfort::{HEALTH_CAUTION, Measures, seat_guidance};
use crate::report::fmt_grid;
use crate::stats::RangeMeanTable;
use crate::stats::durability::{Quantity, write_table_rows};
use crate::vehicle::AXLE_NAMES;

/// The scaled counts of one quantity.
#[derive(Debug, Clone)]
struct Load {
    matrix: RangeMeanTable,
    damage: Vec<f64>,
    upcrossings: BTreeMap<i64, f64>,
}

impl Load {
    fn add(&mut self, counts: &QuantityCounts, f: f64) {
        for &(r, m, n) in &counts.cells {
            self.matrix.add_to_cell(r, m, n * f);
        }
        for (d, s) in self.damage.iter_mut().zip(&counts.damage_sums) {
            *d += s * f;
        }
        for &(k, n) in &counts.upcrossings {
            *self.upcrossings.entry(k).or_insert(0.0) += n as f64 * f;
        }
    }

    /// `(range lower edge, cycles with range ≥ it)`, ascending by range.
    fn exceedance(&self) -> Vec<(f64, f64)> {
        let mut by_range: BTreeMap<i64, f64> = BTreeMap::new();
        for ((r, _), n) in self.matrix.cells() {
            *by_range.entry(r).or_insert(0.0) += n;
        }
        let w = self.matrix.bins().0;
        let mut above = 0.0;
        let mut out: Vec<(f64, f64)> = by_range
            .iter()
            .rev()
            .map(|(k, n)| {
                above += n;
                (grid(*k, w), above)
            })
            .collect();
        out.reverse();
        out
    }
}

/// `k·w` without the multiplication's rounding noise.
fn grid(k: i64, w: f64) -> f64 {
    let x = k as f64 * w;
    let r = (x * 1e12).round() / 1e12;
    if r == 0.0 { 0.0 } else { r }
}

/// Scaled times, s: past the bump stop, past the rebound stop (None when
/// no case's vehicle has that stop), off the ground.
#[derive(Debug, Clone, Default)]
struct Times {
    bump_s: Option<f64>,
    rebound_s: Option<f64>,
    off_ground_s: f64,
}

/// The scaled counts of a set of cases (the life, or one part).
#[derive(Debug, Clone)]
struct Counts {
    /// `[axle][quantity]`.
    loads: Vec<Vec<Load>>,
    times: [Times; 2],
}

impl Counts {
    fn new(settings: &Settings) -> Self {
        let d = &settings.run.durability;
        let load = |q: Quantity| Load {
            matrix: RangeMeanTable::new(d.bin(q), d.bin(q))
                .unwrap_or_else(|e| panic!("rainflow bins were validated by the run: {e}")),
            damage: vec![0.0; d.sn_exponents.len()],
            upcrossings: BTreeMap::new(),
        };
        Counts {
            loads: (0..2)
                .map(|_| Quantity::ALL.iter().map(|q| load(*q)).collect())
                .collect(),
            times: Default::default(),
        }
    }

    fn add(&mut self, r: &CaseResult, f: f64) {
        for (a, axle) in r.axles.iter().enumerate() {
            for (load, counts) in self.loads[a].iter_mut().zip(&axle.quantities) {
                load.add(counts, f);
            }
            let t = &mut self.times[a];
            let scaled = |fraction: f64| fraction * r.duration_s * f;
            if let Some(x) = axle.past_bump_fraction {
                *t.bump_s.get_or_insert(0.0) += scaled(x);
            }
            if let Some(x) = axle.past_rebound_fraction {
                *t.rebound_s.get_or_insert(0.0) += scaled(x);
            }
            t.off_ground_s += scaled(axle.off_ground_fraction);
        }
    }
}

/// One seat of a part, summed over its cases.
#[derive(Debug, Clone, Default)]
struct SeatSums {
    weighting: String,
    /// Σ life time, s.
    time_s: f64,
    /// Σ aw²·time.
    aw2_time: f64,
    /// Σ VDV⁴ (scaled: VDV⁴ grows linearly with time).
    vdv4: f64,
    /// The same two sums fore and aft.
    fore_aft_aw2_time: f64,
    fore_aft_vdv4: f64,
}

/// One part, summed over its cases.
#[derive(Debug, Clone)]
struct PartSums {
    counts: Counts,
    seats: Vec<SeatSums>,
    cases: usize,
    simulated_m: f64,
}

/// The life so far: every case added in case order.
#[derive(Debug, Clone)]
pub struct LifeTotals {
    total: Counts,
    parts: Vec<PartSums>,
    cases: usize,
    simulated_m: f64,
    fallbacks: usize,
    tyre_tension: [u64; 2],
}

impl LifeTotals {
    /// Empty totals for `usage`.
    pub fn new(usage: &Usage, settings: &Settings) -> Self {
        LifeTotals {
            total: Counts::new(settings),
            parts: usage
                .parts
                .iter()
                .map(|_| PartSums {
                    counts: Counts::new(settings),
                    seats: Vec::new(),
                    cases: 0,
                    simulated_m: 0.0,
                })
                .collect(),
            cases: 0,
            simulated_m: 0.0,
            fallbacks: 0,
            tyre_tension: [0; 2],
        }
    }

    /// Adds case `case` (call in case order for a deterministic sum).
    pub fn add(&mut self, usage: &Usage, case: &Case, r: &CaseResult) {
        let f = life_distance_m(usage, case) / r.length_m;
        self.total.add(r, f);
        let part = &mut self.parts[case.part];
        part.counts.add(r, f);
        if part.seats.len() < r.seats.len() {
            part.seats.resize(r.seats.len(), SeatSums::default());
        }
        for (sum, seat) in part.seats.iter_mut().zip(&r.seats) {
            let time_s = seat.duration_s * f;
            sum.weighting.clone_from(&seat.weighting);
            sum.time_s += time_s;
            sum.aw2_time += seat.aw * seat.aw * time_s;
            sum.vdv4 += seat.vdv.powi(4) * f;
            sum.fore_aft_aw2_time += seat.fore_aft_aw * seat.fore_aft_aw * time_s;
            sum.fore_aft_vdv4 += seat.fore_aft_vdv.powi(4) * f;
        }
        part.cases += 1;
        part.simulated_m += r.length_m;
        self.cases += 1;
        self.simulated_m += r.length_m;
        self.fallbacks += usize::from(r.fallback.is_some());
        for (b, n) in self.tyre_tension.iter_mut().zip(r.tyre_tension_samples) {
            *b += n;
        }
    }

    /// Cases added.
    pub fn cases(&self) -> usize {
        self.cases
    }

    /// Writes the life's range–mean matrices in the columns of `simulate
    /// --rainflow`: `axle,quantity,range_lower,range_upper,mean_lower,
    /// mean_upper,cycles` (cycles over the life).
    pub fn write_matrix(&self, out: &mut dyn Write) -> io::Result<()> {
        crate::stats::durability::write_rainflow_header(out)?;
        for (a, name) in AXLE_NAMES.iter().enumerate() {
            for (q, load) in Quantity::ALL.iter().zip(&self.total.loads[a]) {
                write_table_rows(&load.matrix, name, q.column(), out)?;
            }
        }
        Ok(())
    }

    /// Writes the exceedance spectra, one series per part and the total:
    /// `axle,quantity,series,range,cycles_at_or_above`.
    pub fn write_exceedance(&self, usage: &Usage, out: &mut dyn Write) -> io::Result<()> {
        writeln!(out, "axle,quantity,series,range,cycles_at_or_above")?;
        for (a, name) in AXLE_NAMES.iter().enumerate() {
            for (qi, q) in Quantity::ALL.iter().enumerate() {
                let series = usage
                    .parts
                    .iter()
                    .zip(&self.parts)
                    .map(|(p, s)| (p.name.as_str(), &s.counts))
                    .chain([("total", &self.total)]);
                for (label, counts) in series {
                    for (range, n) in counts.loads[a][qi].exceedance() {
                        writeln!(out, "{name},{},{label},{},{n}", q.column(), fmt_grid(range))?;
                    }
                }
            }
        }
        Ok(())
    }

    /// Writes the life's level-crossing spectra:
    /// `axle,quantity,level,upcrossings`.
    pub fn write_crossings(&self, out: &mut dyn Write) -> io::Result<()> {
        writeln!(out, "axle,quantity,level,upcrossings")?;
        for (a, name) in AXLE_NAMES.iter().enumerate() {
            for (q, load) in Quantity::ALL.iter().zip(&self.total.loads[a]) {
                let w = load.matrix.bins().0;
                for (k, n) in &load.upcrossings {
                    writeln!(out, "{name},{},{},{n}", q.column(), fmt_grid(grid(*k, w)))?;
                }
            }
        }
        Ok(())
    }
}

/// How the report is computed from the totals.
#[derive(Debug, Clone)]
pub struct ReportSettings {
    /// The S–N exponents as written on the command line (JSON keys).
    pub exponent_names: Vec<String>,
    /// Reference cycle count N_ref of the damage-equivalent ranges.
    pub reference_cycles: f64,
    /// Daily exposure for the seats' guidance, s.
    pub exposure_s: f64,
}

/// Values keyed by S–N exponent, serialised as an object in command-line order.
#[derive(Debug, Clone, PartialEq)]
pub struct ByExponent(pub Vec<(String, f64)>);

impl Serialize for ByExponent {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut map = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            map.serialize_entry(k, v)?;
        }
        map.end()
    }
}

/// The lifetime result (`roughride lifetime --json`).
#[derive(Debug, Clone, Serialize)]
pub struct LifeReport {
    /// The usage file as given.
    pub usage: String,
    /// Its title, if any.
    pub title: Option<String>,
    /// The life, km.
    pub target_km: f64,
    /// Whether the usage file's shares were scaled to add up to 1.
    pub normalised: bool,
    /// How the rainflow residue of each run was closed (`half`, `repeat`).
    pub residue: &'static str,
    /// N_ref of the damage-equivalent ranges.
    pub reference_cycles: f64,
    /// The S–N exponents, as written.
    pub sn_exponents: Vec<String>,
    /// Runs (part × speed × road).
    pub cases: usize,
    /// Road simulated, km.
    pub simulated_km: f64,
    /// Per part, in file order.
    pub parts: Vec<PartReport>,
    /// The life per axle.
    pub axles: Axles<AxleReport>,
    /// Daily exposure of the seats' guidance, s.
    pub exposure_s: f64,
    /// Notes on the runs (solver fallbacks, bonded tyres).
    pub warnings: Vec<String>,
    /// Estimates, not measurements.
    pub caution: &'static str,
}

/// Front and rear.
#[derive(Debug, Clone, Serialize)]
pub struct Axles<T> {
    /// Front axle.
    pub front: T,
    /// Rear axle.
    pub rear: T,
}

/// One axle over the life.
#[derive(Debug, Clone, Serialize)]
pub struct AxleReport {
    /// Suspension travel, m.
    pub travel: LoadReport,
    /// Suspension force, N.
    pub force: LoadReport,
    /// Tyre load, N.
    pub tyre_load: LoadReport,
    /// Time past the bump stop (null without one).
    pub time_past_bump: Option<TimeReport>,
    /// Time past the rebound stop (null without one).
    pub time_past_rebound: Option<TimeReport>,
    /// Time with the tyre off the road.
    pub time_off_ground: TimeReport,
}

/// One quantity of one axle over the life.
#[derive(Debug, Clone, Serialize)]
pub struct LoadReport {
    /// Unit of ranges and levels.
    pub unit: &'static str,
    /// Bin width of the matrix and level spacing.
    pub bin: f64,
    /// Rainflow cycles over the life.
    pub cycles: f64,
    /// `(Σ nᵢ·Sᵢ^m / N_ref)^(1/m)` per exponent, in `unit`.
    pub damage_equivalent_range: ByExponent,
    /// `[range, cycles with range ≥ it]`, ascending.
    pub exceedance: Vec<[f64; 2]>,
    /// `[level, up-crossings]`, ascending.
    pub level_crossings: Vec<[f64; 2]>,
}

/// A time over the life.
#[derive(Debug, Clone, Serialize)]
pub struct TimeReport {
    /// Per 1000 km driven, s.
    pub per_1000km_s: f64,
    /// Over the whole distance, s.
    pub life_s: f64,
}

/// One part of the life.
#[derive(Debug, Clone, Serialize)]
pub struct PartReport {
    /// Its name.
    pub name: String,
    /// Fraction of the life distance.
    pub share: f64,
    /// Its distance in the life, km.
    pub km: f64,
    /// Its vehicle file, as written in the usage file.
    pub vehicle: String,
    /// Its roads.
    pub road: RoadReport,
    /// Its speeds.
    pub speeds: Vec<SpeedReport>,
    /// Runs.
    pub cases: usize,
    /// Road simulated, km.
    pub simulated_km: f64,
    /// Per axle: this part's cycles, damage-equivalent ranges and share of
    /// the life's damage.
    pub axles: Axles<PartAxleReport>,
    /// Seat exposure on this part.
    pub seats: Vec<SeatReport>,
}

/// The roads of a part.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum RoadReport {
    /// Generated ISO 8608 roads.
    Class {
        /// The class.
        class: String,
        /// Seeds `first_seed .. first_seed + seeds`.
        seeds: u64,
        /// The first seed.
        first_seed: u64,
        /// Each road's length, m.
        length_m: f64,
        /// Sample spacing, m.
        spacing_m: f64,
    },
    /// Profile files.
    Profiles {
        /// As written.
        profiles: Vec<String>,
    },
}

/// A speed of a part.
#[derive(Debug, Clone, Serialize)]
pub struct SpeedReport {
    /// As written.
    pub speed: String,
    /// m/s.
    pub speed_m_s: f64,
    /// Fraction of the part's distance.
    pub share: f64,
}

/// One axle on one part.
#[derive(Debug, Clone, Serialize)]
pub struct PartAxleReport {
    /// Travel.
    pub travel: PartLoadReport,
    /// Suspension force.
    pub force: PartLoadReport,
    /// Tyre load.
    pub tyre_load: PartLoadReport,
    /// Time past the bump stop on this part (null without one).
    pub time_past_bump: Option<TimeReport>,
    /// Time past the rebound stop on this part (null without one).
    pub time_past_rebound: Option<TimeReport>,
    /// Time off the ground on this part.
    pub time_off_ground: TimeReport,
}

/// One quantity on one part.
#[derive(Debug, Clone, Serialize)]
pub struct PartLoadReport {
    /// Cycles of this part over the life.
    pub cycles: f64,
    /// This part's damage-equivalent range over N_ref cycles.
    pub damage_equivalent_range: ByExponent,
    /// This part's fraction of the life's `Σ nᵢ·Sᵢ^m`, per exponent.
    pub damage_share: ByExponent,
}

/// One seat on one part: estimates, not measurements.
#[derive(Debug, Clone, Serialize)]
pub struct SeatReport {
    /// Seat name.
    pub name: String,
    /// The weighting.
    pub weighting: String,
    /// aw over the part's driving, m/s² (vertical, at the seat surface of
    /// a suspended seat).
    pub aw: f64,
    /// The fore-aft (Wd) aw over the part's driving, m/s².
    pub fore_aft_aw: f64,
    /// The vibration total value for comfort of those two (ISO 2631-1 6.5,
    /// seat factors 1), m/s²: the comfort reaction is read from it.
    pub total_value: f64,
    /// The axis the health guidance (A(8), VDV) follows: `vertical`, or
    /// `fore_aft` when 1.4 × its aw is the larger (ISO 2631-1 7.2.3).
    pub health_axis: &'static str,
    /// VDV of a daily exposure spent on this part, m/s^1.75.
    pub vdv_exposure: f64,
    /// A(8) of that day, m/s².
    pub a8: f64,
    /// ISO 2631-1 Annex C reaction.
    pub comfort: String,
    /// A(8) against the Directive 2002/44/EC values.
    pub a8_status: &'static str,
    /// Daily VDV against the Directive values.
    pub vdv_status: &'static str,
}

impl LifeTotals {
    /// The report of a complete life.
    pub fn report(&self, usage: &Usage, settings: &Settings, rs: &ReportSettings) -> LifeReport {
        let deq = |sums: &[f64]| ByExponent(equivalent_ranges(sums, settings, rs));
        let axle = |a: usize| {
            let load = |q: usize| {
                let l = &self.total.loads[a][q];
                LoadReport {
                    unit: Quantity::ALL[q].unit(),
                    bin: l.matrix.bins().0,
                    cycles: l.matrix.total(),
                    damage_equivalent_range: deq(&l.damage),
                    exceedance: l.exceedance().into_iter().map(|(r, n)| [r, n]).collect(),
                    level_crossings: l
                        .upcrossings
                        .iter()
                        .map(|(k, n)| [grid(*k, l.matrix.bins().0), *n])
                        .collect(),
                }
            };
            let t = &self.total.times[a];
            AxleReport {
                travel: load(0),
                force: load(1),
                tyre_load: load(2),
                time_past_bump: t.bump_s.map(|s| time(s, usage.target_km)),
                time_past_rebound: t.rebound_s.map(|s| time(s, usage.target_km)),
                time_off_ground: time(t.off_ground_s, usage.target_km),
            }
        };
        LifeReport {
            usage: usage.file.display().to_string(),
            title: usage.title.clone(),
            target_km: usage.target_km,
            normalised: usage.normalised,
            residue: settings.run.durability.residue.name(),
            reference_cycles: rs.reference_cycles,
            sn_exponents: rs.exponent_names.clone(),
            cases: self.cases,
            simulated_km: self.simulated_m / 1000.0,
            parts: (0..usage.parts.len())
                .map(|p| self.part_report(usage, p, settings, rs))
                .collect(),
            axles: Axles {
                front: axle(0),
                rear: axle(1),
            },
            exposure_s: rs.exposure_s,
            warnings: self.warnings(),
            caution: HEALTH_CAUTION,
        }
    }

    fn part_report(
        &self,
        usage: &Usage,
        p: usize,
        settings: &Settings,
        rs: &ReportSettings,
    ) -> PartReport {
        let part = &usage.parts[p];
        let sums = &self.parts[p];
        let km = usage.target_km * part.share;
        let axle = |a: usize| self.part_axle(p, a, km, settings, rs);
        let vehicle = &usage.vehicles[part.vehicle];
        PartReport {
            name: part.name.clone(),
            share: part.share,
            km,
            vehicle: vehicle.label.clone(),
            road: road_report(&part.road),
            speeds: part
                .speeds
                .iter()
                .map(|s| SpeedReport {
                    speed: s.text.clone(),
                    speed_m_s: s.speed_m_s,
                    share: s.share,
                })
                .collect(),
            cases: sums.cases,
            simulated_km: sums.simulated_m / 1000.0,
            axles: Axles {
                front: axle(0),
                rear: axle(1),
            },
            seats: vehicle
                .vehicle
                .seats
                .iter()
                .zip(&sums.seats)
                .map(|(seat, s)| seat_report(&seat.name, s, rs.exposure_s))
                .collect(),
        }
    }

    /// Axle `a` on part `p` (`km` of the life).
    fn part_axle(
        &self,
        p: usize,
        a: usize,
        km: f64,
        settings: &Settings,
        rs: &ReportSettings,
    ) -> PartAxleReport {
        let counts = &self.parts[p].counts;
        let load = |q: usize| {
            let mine = &counts.loads[a][q];
            let all = &self.total.loads[a][q];
            PartLoadReport {
                cycles: mine.matrix.total(),
                damage_equivalent_range: ByExponent(equivalent_ranges(&mine.damage, settings, rs)),
                damage_share: ByExponent(
                    rs.exponent_names
                        .iter()
                        .zip(mine.damage.iter().zip(&all.damage))
                        .map(|(k, (d, t))| (k.clone(), if *t > 0.0 { d / t } else { 0.0 }))
                        .collect(),
                ),
            }
        };
        let t = &counts.times[a];
        PartAxleReport {
            travel: load(0),
            force: load(1),
            tyre_load: load(2),
            time_past_bump: t.bump_s.map(|s| time(s, km)),
            time_past_rebound: t.rebound_s.map(|s| time(s, km)),
            time_off_ground: time(t.off_ground_s, km),
        }
    }

    fn warnings(&self) -> Vec<String> {
        let mut w = Vec::new();
        if self.fallbacks > 0 {
            w.push(format!(
                "{} of {} runs had a tyre leave the road and were repeated with the piecewise-exact solver (which models lift-off)",
                self.fallbacks, self.cases
            ));
        }
        for (axle, n) in AXLE_NAMES.iter().zip(self.tyre_tension) {
            if n > 0 {
                w.push(format!(
                    "the exact solver keeps tyres bonded to the road; the {axle} tyre was in tension (pulling the wheel onto the road) in {n} samples over the runs, where a real tyre would have lifted off (use --solver auto or adaptive for that)"
                ));
            }
        }
        w
    }
}

/// `(Σ nᵢ·Sᵢ^m / N_ref)^(1/m)` for each exponent.
fn equivalent_ranges(sums: &[f64], settings: &Settings, rs: &ReportSettings) -> Vec<(String, f64)> {
    rs.exponent_names
        .iter()
        .zip(&settings.run.durability.sn_exponents)
        .zip(sums)
        .map(|((name, m), d)| (name.clone(), (d / rs.reference_cycles).powf(1.0 / m)))
        .collect()
}

fn time(life_s: f64, km: f64) -> TimeReport {
    TimeReport {
        per_1000km_s: if km > 0.0 { life_s / km * 1000.0 } else { 0.0 },
        life_s,
    }
}

fn road_report(road: &PartRoad) -> RoadReport {
    match road {
        PartRoad::Class {
            class,
            seeds,
            first_seed,
            length_m,
            spacing_m,
        } => RoadReport::Class {
            class: class.to_string(),
            seeds: *seeds,
            first_seed: *first_seed,
            length_m: *length_m,
            spacing_m: *spacing_m,
        },
        PartRoad::Profiles(p) => RoadReport::Profiles {
            profiles: p.iter().map(|p| p.label.clone()).collect(),
        },
    }
}

/// A seat's exposure on a part, with the ISO 2631-1 / Directive guidance
/// for a day of `exposure_s` spent on it.
fn seat_report(name: &str, s: &SeatSums, exposure_s: f64) -> SeatReport {
    let energy_mean = |aw2_time: f64| {
        if s.time_s > 0.0 {
            (aw2_time / s.time_s).sqrt()
        } else {
            0.0
        }
    };
    // The part's driving as one record per axis: aw, VDV and duration; the
    // guidance extends the VDV to the exposure by the fourth power of time.
    let record = |weighting: &str, aw: f64, vdv4: f64| Measures {
        weighting: weighting.to_string(),
        accel_rms: f64::NAN,
        aw,
        vdv: vdv4.powf(0.25),
        mtvv: f64::NAN,
        crest_factor: f64::NAN,
        peak_weighted: f64::NAN,
        duration_s: s.time_s,
        mtvv_ratio: f64::NAN,
        vdv_ratio: f64::NAN,
        additional_methods_advised: false,
    };
    let aw = energy_mean(s.aw2_time);
    let vertical = record(&s.weighting, aw, s.vdv4);
    let fore_aft = record("Wd", energy_mean(s.fore_aft_aw2_time), s.fore_aft_vdv4);
    // As `simulate`: comfort from the total value, health from the dominant
    // axis; with no fore-aft motion this is the vertical guidance exactly.
    let g = seat_guidance(&vertical, &fore_aft, exposure_s);
    SeatReport {
        name: name.to_string(),
        weighting: s.weighting.clone(),
        aw,
        fore_aft_aw: fore_aft.aw,
        total_value: g.comfort_value_m_s2.unwrap_or(aw),
        health_axis: g.health_axis.unwrap_or("vertical"),
        vdv_exposure: g.vdv_exposure_m_s175,
        a8: g.a8_m_s2,
        comfort: g.comfort_label,
        a8_status: g.a8_status,
        vdv_status: g.vdv_status,
    }
}
