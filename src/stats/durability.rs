//! Durability statistics of one axle's suspension, streamed sample by
//! sample: travel distribution and percentiles, time past the stop
//! clearances, level crossings of travel, and rainflow counts (ASTM
//! E1049-85) of travel and suspension force with damage-equivalent ranges.
//! With [`DurabilitySettings::load_spectra`] the tyre load is counted too,
//! and every quantity gets its level-crossing spectrum (what a lifetime
//! load spectrum is built from).
//! Memory is bounded by the bin counts and the rainflow residue.

use std::io::{self, Write};

use serde::Serialize;

use crate::report::fmt_grid;

use super::histogram::HistogramBlock;
use super::{
    Cycle, DamageEquivalent, Histogram, LevelCrossings, LevelSpectrum, Rainflow, RangeMeanTable,
    ResidueMethod, StatsError,
};

/// Travel range covered by the histograms, m (±): wider than any road
/// vehicle's suspension; anything beyond lands in the under/overflow counts.
pub const TRAVEL_SPAN_M: f64 = 0.5;
/// Bin width of the histogram the percentiles come from, m: percentiles are
/// exact to this resolution.
pub const PERCENTILE_BIN_M: f64 = 1e-4;
/// Range of the wide histogram that percentiles beyond ±[`TRAVEL_SPAN_M`]
/// come from, m (±): only a run gone wrong travels further.
pub const WIDE_SPAN_M: f64 = 50.0;
/// Bin width of the wide histogram, m: percentiles beyond ±0.5 m are exact
/// to this resolution.
pub const WIDE_BIN_M: f64 = 5e-3;
/// Travel levels whose up-crossings are counted, m: every 10 mm to ±50 mm.
pub const CROSSING_LEVELS_M: [f64; 11] = [
    -0.05, -0.04, -0.03, -0.02, -0.01, 0.0, 0.01, 0.02, 0.03, 0.04, 0.05,
];
/// Percentiles reported, %.
pub const PERCENTILES: [f64; 5] = [1.0, 5.0, 50.0, 95.0, 99.0];

/// A load quantity of one axle, as counted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Quantity {
    /// Dynamic suspension travel (compression +), m.
    Travel,
    /// Dynamic suspension force (compression +), N.
    SuspensionForce,
    /// Dynamic tyre (road contact) load (compression +), N.
    TyreLoad,
}

impl Quantity {
    /// Every quantity, in output order.
    pub const ALL: [Quantity; 3] = [
        Quantity::Travel,
        Quantity::SuspensionForce,
        Quantity::TyreLoad,
    ];

    /// The name with its unit, as in the `quantity` column of the rainflow
    /// CSV (`travel_m`, `suspension_force_n`, `tyre_load_n`).
    pub fn column(self) -> &'static str {
        match self {
            Quantity::Travel => "travel_m",
            Quantity::SuspensionForce => "suspension_force_n",
            Quantity::TyreLoad => "tyre_load_n",
        }
    }

    /// The short JSON key (`travel`, `force`, `tyre_load`).
    pub fn key(self) -> &'static str {
        match self {
            Quantity::Travel => "travel",
            Quantity::SuspensionForce => "force",
            Quantity::TyreLoad => "tyre_load",
        }
    }

    /// The SI unit.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::Travel => "m",
            Quantity::SuspensionForce | Quantity::TyreLoad => "N",
        }
    }

    /// The quantity whose [`Quantity::column`] is `name`.
    pub fn from_column(name: &str) -> Option<Quantity> {
        Quantity::ALL.into_iter().find(|q| q.column() == name)
    }
}

/// Settings of the durability evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct DurabilitySettings {
    /// Bin width of the travel histogram written as CSV, m.
    pub travel_bin_m: f64,
    /// Range bin width of the travel rainflow table, m (mean bins the same).
    pub rainflow_travel_bin_m: f64,
    /// Range bin width of the force rainflow table, N (mean bins the same).
    pub rainflow_force_bin_n: f64,
    /// Range bin width of the tyre-load rainflow table, N (mean bins the same).
    pub rainflow_tyre_bin_n: f64,
    /// S–N (Basquin) exponents for the damage-equivalent ranges.
    pub sn_exponents: Vec<f64>,
    /// How the rainflow residue is closed.
    pub residue: ResidueMethod,
    /// Also count the tyre load, and the level-crossing spectrum of every
    /// quantity on the levels of its rainflow bins.
    pub load_spectra: bool,
}

impl Default for DurabilitySettings {
    fn default() -> Self {
        DurabilitySettings {
            travel_bin_m: 0.002,
            rainflow_travel_bin_m: 0.002,
            rainflow_force_bin_n: 100.0,
            rainflow_tyre_bin_n: 100.0,
            // m = 3 (welded steel) and 5 (e.g. rubber mounts, forgings):
            // common practice, from memory.
            sn_exponents: vec![3.0, 5.0],
            residue: ResidueMethod::HalfCycles,
            load_spectra: false,
        }
    }
}

impl DurabilitySettings {
    /// The rainflow bin width of `q` (range and mean), in its unit.
    pub fn bin(&self, q: Quantity) -> f64 {
        match q {
            Quantity::Travel => self.rainflow_travel_bin_m,
            Quantity::SuspensionForce => self.rainflow_force_bin_n,
            Quantity::TyreLoad => self.rainflow_tyre_bin_n,
        }
    }
}

/// Rainflow (and optionally level-crossing) counting of one quantity.
#[derive(Debug, Clone)]
struct Channel {
    rainflow: Rainflow,
    table: RangeMeanTable,
    damage: Vec<DamageEquivalent>,
    levels: Option<LevelSpectrum>,
}

impl Channel {
    fn new(settings: &DurabilitySettings, q: Quantity) -> Result<Self, StatsError> {
        let bin = settings.bin(q);
        Ok(Channel {
            rainflow: Rainflow::with_residue(settings.residue),
            table: RangeMeanTable::new(bin, bin)?,
            damage: settings
                .sn_exponents
                .iter()
                .map(|m| DamageEquivalent::new(*m))
                .collect::<Result<_, _>>()?,
            levels: if settings.load_spectra {
                Some(LevelSpectrum::new(bin)?)
            } else {
                None
            },
        })
    }

    #[inline]
    fn push(&mut self, x: f64) {
        if let Some(l) = &mut self.levels {
            l.push(x);
        }
        let (table, damage) = (&mut self.table, &mut self.damage);
        self.rainflow.push(x, &mut |c: Cycle| {
            table.add(&c);
            damage.iter_mut().for_each(|d| d.add(&c));
        });
    }

    /// [`Channel::push`] on `value(row)` of every row, in order.
    #[inline(always)]
    fn push_rows<T>(&mut self, rows: &[T], value: impl Fn(&T) -> f64 + Copy) {
        if let Some(l) = &mut self.levels {
            rows.iter().for_each(|r| l.push(value(r)));
        }
        let (table, damage) = (&mut self.table, &mut self.damage);
        self.rainflow.push_rows(rows, value, &mut |c: Cycle| {
            table.add(&c);
            damage.iter_mut().for_each(|d| d.add(&c));
        });
    }

    /// Closes the residue.
    fn finish(&mut self) {
        let (table, damage) = (&mut self.table, &mut self.damage);
        std::mem::take(&mut self.rainflow).finish(&mut |c: Cycle| {
            table.add(&c);
            damage.iter_mut().for_each(|d| d.add(&c));
        });
    }

    fn counts(&self) -> LoadCounts {
        LoadCounts {
            table: self.table.clone(),
            damage_sums: self.damage.iter().map(DamageEquivalent::sum).collect(),
            upcrossings: self.levels.as_ref().map_or_else(Vec::new, |l| l.counts()),
        }
    }
}

/// Streaming durability statistics of one axle.
#[derive(Debug, Clone)]
pub struct AxleDurability {
    clearances_m: (Option<f64>, Option<f64>),
    fine: Histogram,
    /// Percentiles that fall outside `fine` (coarser, much wider).
    wide: Histogram,
    coarse: Histogram,
    crossings: LevelCrossings,
    past_bump: u64,
    past_rebound: u64,
    travel: Channel,
    force: Channel,
    tyre: Option<Channel>,
}

/// The counts of one quantity of a finished run: what a lifetime load
/// spectrum is built from.
#[derive(Debug, Clone)]
pub struct LoadCounts {
    /// Rainflow range–mean table (half cycles count ½), on the bins of
    /// [`DurabilitySettings::bin`].
    pub table: RangeMeanTable,
    /// `Σ nᵢ·Sᵢ^m` of the exact (unbinned) ranges, one per S–N exponent of
    /// the settings, in their order.
    pub damage_sums: Vec<f64>,
    /// `(k, up-crossings of the level k·bin)`, ascending (empty unless
    /// [`DurabilitySettings::load_spectra`]).
    pub upcrossings: Vec<(i64, u64)>,
}

/// One damage-equivalent entry.
#[derive(Debug, Clone, Serialize)]
pub struct DamageEquivalentRange {
    /// S–N exponent m.
    pub sn_exponent: f64,
    /// Constant-amplitude travel range doing the same damage over the same
    /// number of cycles as counted, m: `(Σ nᵢ Sᵢ^m / Σ nᵢ)^(1/m)`.
    pub travel_range_m: f64,
    /// The same for the suspension force, N.
    pub force_range_n: f64,
    /// The same for the tyre load, N (only when the tyre load is counted).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tyre_load_range_n: Option<f64>,
}

/// The results of one axle.
#[derive(Debug, Clone, Serialize)]
pub struct DurabilitySummary {
    /// Travel percentiles 1, 5, 50, 95, 99 %, m (resolution 0.1 mm within
    /// ±0.5 m, 5 mm beyond; NaN only past ±50 m).
    pub travel_percentiles_m: Vec<(f64, f64)>,
    /// Fraction of samples past the bump clearance (None without a bump stop).
    pub time_past_bump_fraction: Option<f64>,
    /// Fraction of samples past the rebound clearance (None without one).
    pub time_past_rebound_fraction: Option<f64>,
    /// Up-crossings of travel levels: (level m, count).
    pub travel_level_crossings: Vec<(f64, u64)>,
    /// Rainflow cycles of travel (half cycles count ½).
    pub travel_cycles: f64,
    /// Rainflow cycles of suspension force.
    pub force_cycles: f64,
    /// Rainflow cycles of tyre load (only when the tyre load is counted).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tyre_load_cycles: Option<f64>,
    /// Damage-equivalent ranges per S–N exponent.
    pub damage_equivalent: Vec<DamageEquivalentRange>,
}

impl AxleDurability {
    /// An evaluator for an axle with the given stop clearances (bump, rebound), m.
    pub fn new(
        settings: &DurabilitySettings,
        clearances_m: (Option<f64>, Option<f64>),
    ) -> Result<Self, StatsError> {
        Ok(AxleDurability {
            clearances_m,
            fine: Histogram::new(-TRAVEL_SPAN_M, TRAVEL_SPAN_M, PERCENTILE_BIN_M)?,
            wide: Histogram::new(-WIDE_SPAN_M, WIDE_SPAN_M, WIDE_BIN_M)?,
            coarse: Histogram::new(-TRAVEL_SPAN_M, TRAVEL_SPAN_M, settings.travel_bin_m)?,
            crossings: LevelCrossings::new(CROSSING_LEVELS_M.to_vec()),
            past_bump: 0,
            past_rebound: 0,
            travel: Channel::new(settings, Quantity::Travel)?,
            force: Channel::new(settings, Quantity::SuspensionForce)?,
            tyre: if settings.load_spectra {
                Some(Channel::new(settings, Quantity::TyreLoad)?)
            } else {
                None
            },
        })
    }

    /// Adds one sample: travel (compression +), m; suspension force and
    /// tyre load (compression +), N.
    #[inline]
    pub fn push(&mut self, travel_m: f64, force_n: f64, tyre_load_n: f64) {
        self.fine.push(travel_m);
        self.wide.push(travel_m);
        self.coarse.push(travel_m);
        self.crossings.push(travel_m);
        if self.clearances_m.0.is_some_and(|c| travel_m > c) {
            self.past_bump += 1;
        }
        if self.clearances_m.1.is_some_and(|c| travel_m < -c) {
            self.past_rebound += 1;
        }
        self.travel.push(travel_m);
        self.force.push(force_n);
        if let Some(t) = &mut self.tyre {
            t.push(tyre_load_n);
        }
    }

    /// [`AxleDurability::push`] on every row of a block, the quantities read
    /// from each row by `travel_m`, `force_n` and `tyre_load_n`: each
    /// counter takes its whole column in one tight loop, and the results are
    /// the same, bit for bit.
    #[inline(always)]
    pub fn push_rows<T>(
        &mut self,
        rows: &[T],
        travel_m: impl Fn(&T) -> f64 + Copy,
        force_n: impl Fn(&T) -> f64 + Copy,
        tyre_load_n: impl Fn(&T) -> f64 + Copy,
    ) {
        // Without stops nothing is past them: the loop without the tests.
        let (bump, rebound) = match self.clearances_m {
            (None, None) => self.push_travel::<false, T>(rows, travel_m),
            _ => self.push_travel::<true, T>(rows, travel_m),
        };
        self.past_bump += bump;
        self.past_rebound += rebound;
        self.travel.push_rows(rows, travel_m);
        self.force.push_rows(rows, force_n);
        if let Some(t) = &mut self.tyre {
            t.push_rows(rows, tyre_load_n);
        }
    }

    /// The travel's histograms, level crossings and (with `STOPS`) time
    /// past the stops in one loop over the block; returns the samples past
    /// the bump and the rebound clearance.
    #[inline(always)]
    fn push_travel<const STOPS: bool, T>(
        &mut self,
        rows: &[T],
        travel_m: impl Fn(&T) -> f64,
    ) -> (u64, u64) {
        // No stop: a clearance of ∞, which no travel (nor NaN) passes.
        let bump_m = self.clearances_m.0.unwrap_or(f64::INFINITY);
        let rebound_m = self.clearances_m.1.unwrap_or(f64::INFINITY);
        let (mut bump, mut rebound) = (0, 0);
        let mut histograms =
            HistogramBlock::new([&mut self.fine, &mut self.wide, &mut self.coarse]);
        let mut crossings = self.crossings.block();
        for t in rows.iter().map(travel_m) {
            histograms.push(t);
            crossings.push(t);
            if STOPS {
                bump += (t > bump_m) as u64;
                rebound += (t < -rebound_m) as u64;
            }
        }
        histograms.finish();
        crossings.finish();
        (bump, rebound)
    }

    /// Closes the rainflow residues (by the settings' method) and returns
    /// the results.
    pub fn finish(&mut self) -> DurabilitySummary {
        self.travel.finish();
        self.force.finish();
        if let Some(t) = &mut self.tyre {
            t.finish();
        }
        let n = self.fine.total().max(1) as f64;
        let per_cycle = |d: &DamageEquivalent| d.range(d.cycles().max(f64::MIN_POSITIVE));
        DurabilitySummary {
            travel_percentiles_m: PERCENTILES
                .iter()
                .map(|p| {
                    let v = self
                        .fine
                        .percentile(*p)
                        .or_else(|| self.wide.percentile(*p));
                    (*p, v.unwrap_or(f64::NAN))
                })
                .collect(),
            time_past_bump_fraction: self.clearances_m.0.map(|_| self.past_bump as f64 / n),
            time_past_rebound_fraction: self.clearances_m.1.map(|_| self.past_rebound as f64 / n),
            travel_level_crossings: self
                .crossings
                .levels()
                .iter()
                .copied()
                .zip(self.crossings.counts().iter().copied())
                .collect(),
            travel_cycles: self.travel.table.total(),
            force_cycles: self.force.table.total(),
            tyre_load_cycles: self.tyre.as_ref().map(|t| t.table.total()),
            damage_equivalent: (0..self.travel.damage.len())
                .map(|i| DamageEquivalentRange {
                    sn_exponent: self.travel.damage[i].exponent(),
                    travel_range_m: per_cycle(&self.travel.damage[i]),
                    force_range_n: per_cycle(&self.force.damage[i]),
                    tyre_load_range_n: self.tyre.as_ref().map(|t| per_cycle(&t.damage[i])),
                })
                .collect(),
        }
    }

    /// The counts of `q` (after [`AxleDurability::finish`]); `None` for the
    /// tyre load unless [`DurabilitySettings::load_spectra`] is set.
    pub fn load_counts(&self, q: Quantity) -> Option<LoadCounts> {
        match q {
            Quantity::Travel => Some(self.travel.counts()),
            Quantity::SuspensionForce => Some(self.force.counts()),
            Quantity::TyreLoad => self.tyre.as_ref().map(Channel::counts),
        }
    }

    /// Samples past the bump and rebound clearances.
    pub fn samples_past_stops(&self) -> (u64, u64) {
        (self.past_bump, self.past_rebound)
    }

    /// The travel histogram at the settings' bin width.
    pub fn travel_histogram(&self) -> &Histogram {
        &self.coarse
    }

    /// Writes the rainflow range–mean tables of this axle as CSV rows
    /// `axle,quantity,range_lower,range_upper,mean_lower,mean_upper,cycles`
    /// (header written by [`write_rainflow_header`]): travel and suspension
    /// force, and the tyre load when it is counted.
    pub fn write_rainflow_rows(&self, axle: &str, out: &mut dyn Write) -> io::Result<()> {
        for q in Quantity::ALL {
            let table = match q {
                Quantity::Travel => &self.travel.table,
                Quantity::SuspensionForce => &self.force.table,
                Quantity::TyreLoad => match &self.tyre {
                    Some(t) => &t.table,
                    None => continue,
                },
            };
            write_table_rows(table, axle, q.column(), out)?;
        }
        Ok(())
    }
}

/// Writes one range–mean table as rows of the rainflow CSV (no header).
pub fn write_table_rows(
    table: &RangeMeanTable,
    axle: &str,
    quantity: &str,
    out: &mut dyn Write,
) -> io::Result<()> {
    let mut buf = Vec::new();
    table.write_csv(&mut buf, "range", "mean")?;
    for line in String::from_utf8_lossy(&buf).lines().skip(1) {
        writeln!(out, "{axle},{quantity},{line}")?;
    }
    Ok(())
}

/// Header of the rainflow CSV.
pub fn write_rainflow_header(out: &mut dyn Write) -> io::Result<()> {
    writeln!(
        out,
        "axle,quantity,range_lower,range_upper,mean_lower,mean_upper,cycles"
    )
}

/// Writes the travel histograms of both axles side by side:
/// `travel_lower_m,travel_upper_m,front_count,rear_count`. The rows are
/// contiguous, each starting where the one before ends: first `-inf` up to
/// the first bin with a count (the samples below the binned range), then
/// every bin from there to the last bin with a count (empty ones too), then
/// from there up to `inf` (the samples above it). Counts add up to the
/// samples of each axle.
pub fn write_travel_histograms(
    front: &Histogram,
    rear: &Histogram,
    out: &mut dyn Write,
) -> io::Result<()> {
    writeln!(out, "travel_lower_m,travel_upper_m,front_count,rear_count")?;
    let occupied = |h: &Histogram| {
        let c = h.counts();
        (
            c.iter().position(|&n| n > 0),
            c.iter().rposition(|&n| n > 0),
        )
    };
    let (f0, f1) = occupied(front);
    let (r0, r1) = occupied(rear);
    let lo = [f0, r0].into_iter().flatten().min();
    let hi = [f1, r1].into_iter().flatten().max();
    let bins = front.counts().len();
    // Nothing inside the binned range: one empty row spans it.
    let (lo, hi) = match (lo, hi) {
        (Some(lo), Some(hi)) => (lo, hi),
        _ => (0, bins - 1),
    };
    let (first, _) = front.edges(lo);
    let (_, last) = front.edges(hi);
    writeln!(
        out,
        "-inf,{},{},{}",
        fmt_grid(first),
        front.underflow(),
        rear.underflow()
    )?;
    if occupied(front).0.is_none() && occupied(rear).0.is_none() {
        writeln!(out, "{},{},0,0", fmt_grid(first), fmt_grid(last))?;
    } else {
        for i in lo..=hi {
            let (a, b) = front.edges(i);
            writeln!(
                out,
                "{},{},{},{}",
                fmt_grid(a),
                fmt_grid(b),
                front.counts()[i],
                rear.counts()[i]
            )?;
        }
    }
    writeln!(
        out,
        "{},inf,{},{}",
        fmt_grid(last),
        front.overflow(),
        rear.overflow()
    )?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_are_conserved_and_percentiles_match_a_sorted_reference() {
        let mut d =
            AxleDurability::new(&DurabilitySettings::default(), (Some(0.03), Some(0.04))).unwrap();
        let mut values = Vec::new();
        for i in 0..20_000 {
            let t = i as f64 * 1e-3;
            let x = 0.03 * (2.0 * std::f64::consts::PI * 1.3 * t).sin()
                + 0.012 * (2.0 * std::f64::consts::PI * 7.1 * t).sin();
            values.push(x);
            d.push(x, 30_000.0 * x, 0.0);
        }
        let s = d.finish();
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        for (p, v) in &s.travel_percentiles_m {
            let exact = super::super::percentile_sorted(&sorted, *p).unwrap();
            assert!(
                (v - exact).abs() <= PERCENTILE_BIN_M,
                "p{p}: {v} vs {exact}"
            );
        }
        let past_bump = values.iter().filter(|x| **x > 0.03).count() as f64 / values.len() as f64;
        assert_eq!(s.time_past_bump_fraction, Some(past_bump));
        assert_eq!(
            s.time_past_rebound_fraction,
            Some(values.iter().filter(|x| **x < -0.04).count() as f64 / values.len() as f64)
        );
        let mut csv = Vec::new();
        write_travel_histograms(d.travel_histogram(), d.travel_histogram(), &mut csv).unwrap();
        let total: u64 = String::from_utf8(csv)
            .unwrap()
            .lines()
            .skip(1)
            .map(|l| l.split(',').nth(2).unwrap().parse::<u64>().unwrap())
            .sum();
        assert_eq!(total, values.len() as u64);
    }

    #[test]
    fn a_force_proportional_to_travel_has_proportional_rainflow_ranges() {
        // Rainflow is linear in the load (ASTM E1049-85 counts ranges of the
        // sequence itself), so a force k·travel gives ranges k times larger.
        let mut d = AxleDurability::new(&DurabilitySettings::default(), (None, None)).unwrap();
        let mut s = 7u64;
        for _ in 0..5000 {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1);
            let x = ((s >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 0.05;
            d.push(x, 25_000.0 * x, 0.0);
        }
        let r = d.finish();
        assert_eq!(r.travel_cycles, r.force_cycles);
        for e in &r.damage_equivalent {
            assert!((e.force_range_n / e.travel_range_m - 25_000.0).abs() < 1e-6 * 25_000.0);
        }
        assert!(r.time_past_bump_fraction.is_none());
    }

    /// What a finished axle evaluator reports, as text: the summary, the
    /// load counts of every quantity, the rainflow rows and the histogram.
    fn report(mut d: AxleDurability) -> String {
        let summary = serde_json::to_string(&d.finish()).unwrap();
        let mut out = Vec::new();
        d.write_rainflow_rows("front", &mut out).unwrap();
        let counts: Vec<String> = Quantity::ALL
            .iter()
            .map(|q| format!("{:?}", d.load_counts(*q)))
            .collect();
        let h = d.travel_histogram();
        format!(
            "{summary}\n{}\n{counts:?}\n{:?} {} {} {}\n{:?}",
            String::from_utf8(out).unwrap(),
            h.counts(),
            h.underflow(),
            h.overflow(),
            h.not_a_number(),
            d.samples_past_stops()
        )
    }

    #[test]
    fn a_block_push_gives_the_sample_by_sample_results() {
        // Reference: `push` sample by sample. Travel, force and tyre load
        // from awkward series (flats, NaN, ±∞), with and without stops, with
        // the tyre load and level spectra counted and both residue methods.
        let travel = crate::stats::awkward_series(12_000, 8);
        let force: Vec<f64> = crate::stats::awkward_series(12_000, 9)
            .iter()
            .map(|x| x * 3e4)
            .collect();
        let tyre: Vec<f64> = force.iter().map(|x| 4000.0 - 0.7 * x).collect();
        let spectra = DurabilitySettings {
            load_spectra: true,
            residue: ResidueMethod::Repeated,
            ..Default::default()
        };
        for settings in [DurabilitySettings::default(), spectra] {
            for clearances in [(None, None), (Some(0.05), Some(0.08))] {
                let mut one = AxleDurability::new(&settings, clearances).unwrap();
                for i in 0..travel.len() {
                    one.push(travel[i], force[i], tyre[i]);
                }
                let want = report(one);
                assert!(
                    clearances.0.is_none() || !want.ends_with("(0, 0)"),
                    "{want}"
                );
                for block in [1, 5, 1024, travel.len()] {
                    let mut all = AxleDurability::new(&settings, clearances).unwrap();
                    let rows: Vec<[f64; 3]> = (0..travel.len())
                        .map(|i| [travel[i], force[i], tyre[i]])
                        .collect();
                    for c in rows.chunks(block) {
                        all.push_rows(c, |r| r[0], |r| r[1], |r| r[2]);
                    }
                    assert_eq!(
                        report(all),
                        want,
                        "{settings:?} {clearances:?} block {block}"
                    );
                }
            }
        }
    }
}
