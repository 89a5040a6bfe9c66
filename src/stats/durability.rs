//! Durability statistics of one axle's suspension, streamed sample by
//! sample: travel distribution and percentiles, time past the stop
//! clearances, level crossings of travel, and rainflow counts (ASTM
//! E1049-85) of travel and suspension force with damage-equivalent ranges.
//! Memory is bounded by the bin counts and the rainflow residue.

use std::io::{self, Write};

use serde::Serialize;

use crate::report::fmt_grid;

use super::{
    Cycle, DamageEquivalent, Histogram, LevelCrossings, Rainflow, RangeMeanTable, StatsError,
};

/// Travel range covered by the histograms, m (±): wider than any road
/// vehicle's suspension; anything beyond lands in the under/overflow counts.
pub const TRAVEL_SPAN_M: f64 = 0.5;
/// Bin width of the histogram the percentiles come from, m: percentiles are
/// exact to this resolution.
pub const PERCENTILE_BIN_M: f64 = 1e-4;
/// Travel levels whose up-crossings are counted, m: every 10 mm to ±50 mm.
pub const CROSSING_LEVELS_M: [f64; 11] = [
    -0.05, -0.04, -0.03, -0.02, -0.01, 0.0, 0.01, 0.02, 0.03, 0.04, 0.05,
];
/// Percentiles reported, %.
pub const PERCENTILES: [f64; 5] = [1.0, 5.0, 50.0, 95.0, 99.0];

/// Settings of the durability evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct DurabilitySettings {
    /// Bin width of the travel histogram written as CSV, m.
    pub travel_bin_m: f64,
    /// Range bin width of the travel rainflow table, m (mean bins the same).
    pub rainflow_travel_bin_m: f64,
    /// Range bin width of the force rainflow table, N (mean bins the same).
    pub rainflow_force_bin_n: f64,
    /// S–N (Basquin) exponents for the damage-equivalent ranges.
    pub sn_exponents: Vec<f64>,
}

impl Default for DurabilitySettings {
    fn default() -> Self {
        DurabilitySettings {
            travel_bin_m: 0.002,
            rainflow_travel_bin_m: 0.002,
            rainflow_force_bin_n: 100.0,
            // m = 3 (welded steel) and 5 (e.g. rubber mounts, forgings):
            // common practice, from memory.
            sn_exponents: vec![3.0, 5.0],
        }
    }
}

/// Streaming durability statistics of one axle.
#[derive(Debug, Clone)]
pub struct AxleDurability {
    clearances_m: (Option<f64>, Option<f64>),
    fine: Histogram,
    coarse: Histogram,
    crossings: LevelCrossings,
    past_bump: u64,
    past_rebound: u64,
    travel_rf: Rainflow,
    force_rf: Rainflow,
    travel_table: RangeMeanTable,
    force_table: RangeMeanTable,
    travel_deq: Vec<DamageEquivalent>,
    force_deq: Vec<DamageEquivalent>,
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
}

/// The results of one axle.
#[derive(Debug, Clone, Serialize)]
pub struct DurabilitySummary {
    /// Travel percentiles 1, 5, 50, 95, 99 %, m (resolution 0.1 mm).
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
    /// Damage-equivalent ranges per S–N exponent.
    pub damage_equivalent: Vec<DamageEquivalentRange>,
}

impl AxleDurability {
    /// An evaluator for an axle with the given stop clearances (bump, rebound), m.
    pub fn new(
        settings: &DurabilitySettings,
        clearances_m: (Option<f64>, Option<f64>),
    ) -> Result<Self, StatsError> {
        let deq = |_: ()| -> Result<Vec<DamageEquivalent>, StatsError> {
            settings
                .sn_exponents
                .iter()
                .map(|m| DamageEquivalent::new(*m))
                .collect()
        };
        Ok(AxleDurability {
            clearances_m,
            fine: Histogram::new(-TRAVEL_SPAN_M, TRAVEL_SPAN_M, PERCENTILE_BIN_M)?,
            coarse: Histogram::new(-TRAVEL_SPAN_M, TRAVEL_SPAN_M, settings.travel_bin_m)?,
            crossings: LevelCrossings::new(CROSSING_LEVELS_M.to_vec()),
            past_bump: 0,
            past_rebound: 0,
            travel_rf: Rainflow::new(),
            force_rf: Rainflow::new(),
            travel_table: RangeMeanTable::new(
                settings.rainflow_travel_bin_m,
                settings.rainflow_travel_bin_m,
            )?,
            force_table: RangeMeanTable::new(
                settings.rainflow_force_bin_n,
                settings.rainflow_force_bin_n,
            )?,
            travel_deq: deq(())?,
            force_deq: deq(())?,
        })
    }

    /// Adds one sample: travel (compression +), m; suspension force (compression +), N.
    #[inline]
    pub fn push(&mut self, travel_m: f64, force_n: f64) {
        self.fine.push(travel_m);
        self.coarse.push(travel_m);
        self.crossings.push(travel_m);
        if self.clearances_m.0.is_some_and(|c| travel_m > c) {
            self.past_bump += 1;
        }
        if self.clearances_m.1.is_some_and(|c| travel_m < -c) {
            self.past_rebound += 1;
        }
        let (table, deq) = (&mut self.travel_table, &mut self.travel_deq);
        self.travel_rf.push(travel_m, &mut |c: Cycle| {
            table.add(&c);
            deq.iter_mut().for_each(|d| d.add(&c));
        });
        let (table, deq) = (&mut self.force_table, &mut self.force_deq);
        self.force_rf.push(force_n, &mut |c: Cycle| {
            table.add(&c);
            deq.iter_mut().for_each(|d| d.add(&c));
        });
    }

    /// Closes the rainflow residues (as half cycles) and returns the results.
    pub fn finish(&mut self) -> DurabilitySummary {
        let (table, deq) = (&mut self.travel_table, &mut self.travel_deq);
        std::mem::take(&mut self.travel_rf).finish(&mut |c: Cycle| {
            table.add(&c);
            deq.iter_mut().for_each(|d| d.add(&c));
        });
        let (table, deq) = (&mut self.force_table, &mut self.force_deq);
        std::mem::take(&mut self.force_rf).finish(&mut |c: Cycle| {
            table.add(&c);
            deq.iter_mut().for_each(|d| d.add(&c));
        });
        let n = self.fine.total().max(1) as f64;
        DurabilitySummary {
            travel_percentiles_m: PERCENTILES
                .iter()
                .map(|p| (*p, self.fine.percentile(*p).unwrap_or(f64::NAN)))
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
            travel_cycles: self.travel_table.total(),
            force_cycles: self.force_table.total(),
            damage_equivalent: self
                .travel_deq
                .iter()
                .zip(&self.force_deq)
                .map(|(t, f)| DamageEquivalentRange {
                    sn_exponent: t.exponent(),
                    travel_range_m: t.range(t.cycles().max(f64::MIN_POSITIVE)),
                    force_range_n: f.range(f.cycles().max(f64::MIN_POSITIVE)),
                })
                .collect(),
        }
    }

    /// The travel histogram at the settings' bin width.
    pub fn travel_histogram(&self) -> &Histogram {
        &self.coarse
    }

    /// Writes both rainflow range–mean tables of this axle as CSV rows
    /// `axle,quantity,range_lower,range_upper,mean_lower,mean_upper,cycles`
    /// (header written by [`write_rainflow_header`]).
    pub fn write_rainflow_rows(&self, axle: &str, out: &mut dyn Write) -> io::Result<()> {
        for (quantity, table) in [
            ("travel_m", &self.travel_table),
            ("suspension_force_n", &self.force_table),
        ] {
            let mut buf = Vec::new();
            table.write_csv(&mut buf, "range", "mean")?;
            for line in String::from_utf8_lossy(&buf).lines().skip(1) {
                writeln!(out, "{axle},{quantity},{line}")?;
            }
        }
        Ok(())
    }
}

/// Header of the rainflow CSV.
pub fn write_rainflow_header(out: &mut dyn Write) -> io::Result<()> {
    writeln!(
        out,
        "axle,quantity,range_lower,range_upper,mean_lower,mean_upper,cycles"
    )
}

/// Writes the travel histograms of both axles side by side:
/// `travel_lower_m,travel_upper_m,front_count,rear_count`, from the first
/// to the last occupied bin, with the under/overflow rows (infinite edges)
/// first and last. Counts add up to the samples of each axle.
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
    let (first, _) = front.edges(0);
    let (_, last) = front.edges(front.counts().len() - 1);
    writeln!(
        out,
        "-inf,{first},{},{}",
        front.underflow(),
        rear.underflow()
    )?;
    if let (Some(lo), Some(hi)) = (lo, hi) {
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
            d.push(x, 30_000.0 * x);
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
            d.push(x, 25_000.0 * x);
        }
        let r = d.finish();
        assert_eq!(r.travel_cycles, r.force_cycles);
        for e in &r.damage_equivalent {
            assert!((e.force_range_n / e.travel_range_m - 25_000.0).abs() < 1e-6 * 25_000.0);
        }
        assert!(r.time_past_bump_fraction.is_none());
    }
}
