//! Rainflow cycle counting per ASTM E1049-85 (reapproved 2011) 5.4.4: the
//! three-point method with the starting point counted as half cycles, and
//! the residue left at the end counted as half cycles. Streaming: samples go
//! through a turning-point (reversal) detector into the residue stack, and
//! every cycle is handed to the caller the moment it closes.
//!
//! Reversal detection follows the same rules as the PyPI `rainflow` package
//! (which the tests use as a reference): the first and last samples are
//! reversals, repeated equal samples are skipped, and a reversal is reported
//! at the last sample of a flat top. One deliberate difference: a series of
//! exactly two samples gives one half cycle here, none in that package.
//!
//! # The residue
//! What is left on the stack at the end (the residue: ranges growing then
//! shrinking) is closed in one of two ways ([`ResidueMethod`]):
//! - **half cycles** (the default): each range of the residue counts ½,
//!   as ASTM E1049-85 5.4.4 prescribes for a history counted once;
//! - **repeated**: the history is a block that repeats, so the residue
//!   joins the next repetition and closes into full cycles. The closing
//!   cycles are those of the residue counted by the rule of ASTM E1049-85
//!   5.4.5 for repeating histories (rearranged to start and end at its
//!   point of largest magnitude, every counted range a full cycle; clause
//!   number from memory). The half cycles the starting-point rule of 5.4.4
//!   would have counted along the way are held back as part of the
//!   residue instead, so the count is the steady-state count of one
//!   repetition: the closed cycles plus the residue's closing cycles
//!   (common practice, "residue method").
//!
//! Memory: the residue stack. Between closed cycles it holds a sequence of
//! reversals with growing then shrinking ranges; for stationary loading it
//! stays at a few tens of points whatever the record length (it grows only
//! while the load keeps reaching new extremes).

use std::collections::BTreeMap;
use std::io::{self, Write};

use super::StatsError;
use crate::report::fmt_grid;

/// One counted cycle (or half cycle).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cycle {
    /// Range `|from − to|`, in the units pushed.
    pub range: f64,
    /// Mean `(from + to)/2`.
    pub mean: f64,
    /// 1.0 for a full cycle, 0.5 for a half cycle.
    pub count: f64,
    /// Sample index of the reversal where the cycle starts.
    pub start_index: u64,
    /// Sample index of the reversal where it ends.
    pub end_index: u64,
}

fn cycle(a: (u64, f64), b: (u64, f64), count: f64) -> Cycle {
    Cycle {
        range: (a.1 - b.1).abs(),
        mean: 0.5 * (a.1 + b.1),
        count,
        start_index: a.0,
        end_index: b.0,
    }
}

/// How the residue left at the end of a history is counted (see the
/// module documentation).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ResidueMethod {
    /// Each residue range is half a cycle (ASTM E1049-85 5.4.4).
    #[default]
    HalfCycles,
    /// The history repeats: the residue closes into full cycles (ASTM
    /// E1049-85 5.4.5 applied to the residue).
    Repeated,
}

impl ResidueMethod {
    /// The name used on the command line and in JSON (`half`, `repeat`).
    pub fn name(self) -> &'static str {
        match self {
            ResidueMethod::HalfCycles => "half",
            ResidueMethod::Repeated => "repeat",
        }
    }
}

impl std::str::FromStr for ResidueMethod {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim() {
            "half" => Ok(ResidueMethod::HalfCycles),
            "repeat" => Ok(ResidueMethod::Repeated),
            other => Err(format!(
                "invalid residue method {other:?}: expected half (ASTM E1049-85 half cycles) or repeat (the history repeats: close the residue)"
            )),
        }
    }
}

/// Streaming rainflow counter.
#[derive(Debug, Clone, Default)]
pub struct Rainflow {
    n: u64,
    first: f64,
    x: f64,
    d_last: f64,
    last: f64,
    stack: Vec<(u64, f64)>,
    method: ResidueMethod,
    /// Starting points held back instead of counted as half cycles
    /// ([`ResidueMethod::Repeated`] only): the head of the residue.
    held: Vec<(u64, f64)>,
}

/// The reversal detector's state past the first two samples, in locals
/// for the block loops of [`Rainflow`].
struct Slope {
    /// Non-NaN samples so far.
    n: u64,
    /// The last sample that differed from its predecessor.
    prev: f64,
    /// The slope into `prev`.
    d_last: f64,
}

impl Slope {
    fn of(rf: &Rainflow) -> Self {
        Slope {
            n: rf.n,
            prev: rf.x,
            d_last: rf.d_last,
        }
    }

    fn store(self, rf: &mut Rainflow) {
        rf.n = self.n;
        rf.x = self.prev;
        rf.d_last = self.d_last;
        // The last sample: after a skipped equal sample it equals `prev`.
        rf.last = self.prev;
    }
}

impl Rainflow {
    /// An empty counter that closes the residue as half cycles.
    pub fn new() -> Self {
        Self::default()
    }

    /// An empty counter that closes the residue by `method`.
    pub fn with_residue(method: ResidueMethod) -> Self {
        Rainflow {
            method,
            ..Self::default()
        }
    }

    /// Adds one sample; closed cycles go to `sink`. NaN samples are skipped.
    pub fn push(&mut self, x: f64, sink: &mut impl FnMut(Cycle)) {
        if x.is_nan() {
            return;
        }
        let i = self.n;
        self.n += 1;
        self.last = x;
        match i {
            0 => {
                self.first = x;
                self.reversal((0, x), sink);
            }
            1 => {
                self.x = x;
                self.d_last = x - self.first;
            }
            _ => {
                if x == self.x {
                    return;
                }
                let d = x - self.x;
                if self.d_last * d < 0.0 {
                    self.reversal((i - 1, self.x), sink);
                }
                self.x = x;
                self.d_last = d;
            }
        }
    }

    /// Adds every sample of `xs` in order: the same cycles, in the same
    /// order, as [`Rainflow::push`] on each. Past the first two samples the
    /// loop is only the reversal test (slope changes sign) with its state in
    /// locals; the stack is touched at reversals only, a small fraction of
    /// the samples of a sampled ride signal.
    pub fn push_all(&mut self, xs: impl Iterator<Item = f64>, sink: &mut impl FnMut(Cycle)) {
        let mut xs = xs.filter(|x| !x.is_nan());
        while self.n < 2 {
            match xs.next() {
                Some(x) => self.push(x, sink),
                None => return,
            }
        }
        let mut slope = Slope::of(self);
        for x in xs {
            self.step(&mut slope, x, sink);
        }
        slope.store(self);
    }

    /// [`Rainflow::push_all`] on `value(row)` of every row, in order (the
    /// same cycles, bit for bit), with a cheap pre-filter: four samples that
    /// keep rising (or falling) with the slope before them hold no reversal,
    /// no flat and no NaN, so they only move the slope on. Only the blocks
    /// with a turn in them take the sample-by-sample test, and a sampled
    /// ride signal turns in few of them (at 1 kHz, about one sample in 30).
    #[inline(always)]
    pub fn push_rows<T>(
        &mut self,
        rows: &[T],
        value: impl Fn(&T) -> f64,
        sink: &mut impl FnMut(Cycle),
    ) {
        let mut rows = rows;
        while self.n < 2 {
            let Some((row, rest)) = rows.split_first() else {
                return;
            };
            self.push(value(row), sink);
            rows = rest;
        }
        let mut slope = Slope::of(self);
        let mut blocks = rows.chunks_exact(4);
        for b in &mut blocks {
            let x = [value(&b[0]), value(&b[1]), value(&b[2]), value(&b[3])];
            let d = [x[0] - slope.prev, x[1] - x[0], x[2] - x[1], x[3] - x[2]];
            // A product of neighbouring slopes > 0: the two have one sign
            // and neither is zero (a flat) or NaN, so there is no reversal
            // (`d_last·d < 0`) and no sample to skip. `&`, not `&&`: the four
            // tests side by side, no branch between them. A product that
            // underflows to zero only sends the block the slow way.
            let p = [slope.d_last * d[0], d[0] * d[1], d[1] * d[2], d[2] * d[3]];
            let clean = (p[0] > 0.0) & (p[1] > 0.0) & (p[2] > 0.0) & (p[3] > 0.0);
            if clean {
                slope.n += 4;
                slope.prev = x[3];
                slope.d_last = d[3];
            } else {
                x.into_iter().for_each(|x| self.step(&mut slope, x, sink));
            }
        }
        for row in blocks.remainder() {
            self.step(&mut slope, value(row), sink);
        }
        slope.store(self);
    }

    /// One sample past the first two: the body of [`Rainflow::push`] with
    /// its state in `slope`.
    #[inline(always)]
    fn step(&mut self, slope: &mut Slope, x: f64, sink: &mut impl FnMut(Cycle)) {
        if x.is_nan() {
            return;
        }
        slope.n += 1;
        // Equal samples are skipped; `prev` already equals `x`.
        if x == slope.prev {
            return;
        }
        let d = x - slope.prev;
        if slope.d_last * d < 0.0 {
            // `prev` was sample n − 2 (0-based) of the non-NaN ones.
            self.reversal((slope.n - 2, slope.prev), sink);
        }
        slope.prev = x;
        slope.d_last = d;
    }

    /// The three-point rule of ASTM E1049-85 5.4.4 on a new reversal.
    fn reversal(&mut self, p: (u64, f64), sink: &mut impl FnMut(Cycle)) {
        self.stack.push(p);
        while self.stack.len() >= 3 {
            let k = self.stack.len();
            let (x1, x2, x3) = (
                self.stack[k - 3].1,
                self.stack[k - 2].1,
                self.stack[k - 1].1,
            );
            let (range_x, range_y) = ((x3 - x2).abs(), (x2 - x1).abs());
            if range_x < range_y {
                break;
            }
            if k == 3 {
                // Y holds the starting point: half a cycle, drop the start
                // (held as the residue's head when the history repeats).
                match self.method {
                    ResidueMethod::HalfCycles => sink(cycle(self.stack[0], self.stack[1], 0.5)),
                    ResidueMethod::Repeated => self.held.push(self.stack[0]),
                }
                self.stack.remove(0);
            } else {
                sink(cycle(self.stack[k - 3], self.stack[k - 2], 1.0));
                self.stack.drain(k - 3..k - 1);
            }
        }
    }

    /// Ends the series: the last sample is a reversal, and the residue is
    /// counted by the counter's [`ResidueMethod`].
    pub fn finish(mut self, sink: &mut impl FnMut(Cycle)) {
        if self.n >= 2 {
            self.reversal((self.n - 1, self.last), sink);
        }
        match self.method {
            ResidueMethod::HalfCycles => {
                for w in self.stack.windows(2) {
                    sink(cycle(w[0], w[1], 0.5));
                }
            }
            ResidueMethod::Repeated => {
                let mut residue = std::mem::take(&mut self.held);
                residue.extend_from_slice(&self.stack);
                close_repeated(&residue, sink);
            }
        }
    }

    /// Reversals currently held in the residue.
    pub fn residue_len(&self) -> usize {
        self.stack.len() + self.held.len()
    }
}

/// The full cycles that close a residue when the history repeats: ASTM
/// E1049-85 5.4.5 (repeating histories) on the residue as a closed loop.
/// The loop's turning points are rearranged to start at the point of
/// largest magnitude and end with it again, then counted by the
/// three-point rule with every counted range a full cycle.
fn close_repeated(residue: &[(u64, f64)], sink: &mut impl FnMut(Cycle)) {
    let loop_points = cyclic_turning_points(residue);
    let Some(start) = (0..loop_points.len()).max_by(|&a, &b| {
        // The first of equal magnitudes, for a deterministic start.
        loop_points[a]
            .1
            .abs()
            .total_cmp(&loop_points[b].1.abs())
            .then(b.cmp(&a))
    }) else {
        return;
    };
    let n = loop_points.len();
    let mut stack: Vec<(u64, f64)> = Vec::with_capacity(n + 1);
    for k in 0..=n {
        stack.push(loop_points[(start + k) % n]);
        while stack.len() >= 3 {
            let k = stack.len();
            let (x1, x2, x3) = (stack[k - 3].1, stack[k - 2].1, stack[k - 1].1);
            if (x3 - x2).abs() < (x2 - x1).abs() {
                break;
            }
            sink(cycle(stack[k - 3], stack[k - 2], 1.0));
            stack.drain(k - 3..k - 1);
        }
    }
}

/// The turning points of `points` read as a closed loop (the last point
/// followed by the first): equal neighbours merged, points on a flank
/// dropped. Fewer than two distinct values give no turning point.
fn cyclic_turning_points(points: &[(u64, f64)]) -> Vec<(u64, f64)> {
    let mut distinct: Vec<(u64, f64)> = Vec::with_capacity(points.len());
    for &p in points {
        if distinct.last().is_none_or(|q| q.1 != p.1) {
            distinct.push(p);
        }
    }
    while distinct.len() > 1 && distinct[0].1 == distinct[distinct.len() - 1].1 {
        distinct.pop();
    }
    let n = distinct.len();
    if n < 2 {
        return Vec::new();
    }
    (0..n)
        .filter(|&i| {
            let (prev, here, next) = (
                distinct[(i + n - 1) % n].1,
                distinct[i].1,
                distinct[(i + 1) % n].1,
            );
            (here - prev) * (next - here) < 0.0
        })
        .map(|i| distinct[i])
        .collect()
}

/// All cycles of a series (convenience for short series and tests).
pub fn count_cycles(series: &[f64]) -> Vec<Cycle> {
    let mut out = Vec::new();
    let mut rf = Rainflow::new();
    let mut sink = |c: Cycle| out.push(c);
    for &x in series {
        rf.push(x, &mut sink);
    }
    rf.finish(&mut sink);
    out
}

/// Streaming damage-equivalent range for an S–N exponent `m`:
/// `S_eq = (Σ nᵢ·Sᵢ^m / N_eq)^(1/m)` (Palmgren–Miner summation with a
/// Basquin curve `N·S^m = const`).
#[derive(Debug, Clone)]
pub struct DamageEquivalent {
    m: f64,
    sum: f64,
    cycles: f64,
}

impl DamageEquivalent {
    /// An accumulator for exponent `m` (> 0).
    pub fn new(m: f64) -> Result<Self, StatsError> {
        if !(m > 0.0 && m.is_finite()) {
            return Err(StatsError::Parameter(format!(
                "S–N exponent m must be positive and finite, got {m}"
            )));
        }
        Ok(DamageEquivalent {
            m,
            sum: 0.0,
            cycles: 0.0,
        })
    }

    /// Adds one cycle.
    pub fn add(&mut self, c: &Cycle) {
        self.sum += c.count * c.range.powf(self.m);
        self.cycles += c.count;
    }

    /// The S–N exponent m.
    pub fn exponent(&self) -> f64 {
        self.m
    }

    /// Cycles counted so far (halves included).
    pub fn cycles(&self) -> f64 {
        self.cycles
    }

    /// The Palmgren–Miner sum `Σ nᵢ·Sᵢ^m` so far (damage up to the constant
    /// of the S–N curve).
    pub fn sum(&self) -> f64 {
        self.sum
    }

    /// The range that, applied `n_eq` times, does the same damage.
    pub fn range(&self, n_eq: f64) -> f64 {
        (self.sum / n_eq).powf(1.0 / self.m)
    }
}

/// `(Σ nᵢ·Sᵢ^m / N_eq)^(1/m)` over `cycles`.
pub fn damage_equivalent_range(cycles: &[Cycle], m: f64, n_eq: f64) -> Result<f64, StatsError> {
    let mut d = DamageEquivalent::new(m)?;
    cycles.iter().for_each(|c| d.add(c));
    Ok(d.range(n_eq))
}

/// Cycle counts binned by range and mean (a rainflow matrix). Bins are
/// `[k·w, (k+1)·w)`; only occupied cells are stored, so memory is bounded by
/// the number of distinct cells the load reaches.
#[derive(Debug, Clone)]
pub struct RangeMeanTable {
    range_bin: f64,
    mean_bin: f64,
    cells: BTreeMap<(i64, i64), f64>,
}

impl RangeMeanTable {
    /// A table with the given bin widths (> 0).
    pub fn new(range_bin: f64, mean_bin: f64) -> Result<Self, StatsError> {
        for (name, v) in [("range bin width", range_bin), ("mean bin width", mean_bin)] {
            if !(v > 0.0 && v.is_finite()) {
                return Err(StatsError::Parameter(format!(
                    "rainflow table {name} must be positive and finite, got {v}"
                )));
            }
        }
        Ok(RangeMeanTable {
            range_bin,
            mean_bin,
            cells: BTreeMap::new(),
        })
    }

    /// Adds one cycle to its cell.
    pub fn add(&mut self, c: &Cycle) {
        let key = (
            (c.range / self.range_bin).floor() as i64,
            (c.mean / self.mean_bin).floor() as i64,
        );
        *self.cells.entry(key).or_insert(0.0) += c.count;
    }

    /// Adds `count` cycles to the cell with range index `range_k` and mean
    /// index `mean_k` (bins `[k·w, (k+1)·w)`).
    pub fn add_to_cell(&mut self, range_k: i64, mean_k: i64, count: f64) {
        *self.cells.entry((range_k, mean_k)).or_insert(0.0) += count;
    }

    /// Total cycles in the table.
    pub fn total(&self) -> f64 {
        self.cells.values().sum()
    }

    /// The bin widths (range, mean).
    pub fn bins(&self) -> (f64, f64) {
        (self.range_bin, self.mean_bin)
    }

    /// The occupied cells `((range index, mean index), cycles)`, ascending
    /// by range then mean.
    pub fn cells(&self) -> impl Iterator<Item = ((i64, i64), f64)> + '_ {
        self.cells.iter().map(|(k, n)| (*k, *n))
    }

    /// Writes `range_lower,range_upper,mean_lower,mean_upper,cycles` rows,
    /// ascending by range then mean; `range_col`/`mean_col` name the
    /// quantity with its unit (e.g. `range_n`, `mean_n`) and get `_lower`,
    /// `_upper` appended.
    pub fn write_csv(
        &self,
        out: &mut dyn Write,
        range_col: &str,
        mean_col: &str,
    ) -> io::Result<()> {
        writeln!(
            out,
            "{range_col}_lower,{range_col}_upper,{mean_col}_lower,{mean_col}_upper,cycles"
        )?;
        for (&(r, m), &n) in &self.cells {
            let (r0, m0) = (r as f64 * self.range_bin, m as f64 * self.mean_bin);
            writeln!(
                out,
                "{},{},{},{},{n}",
                fmt_grid(r0),
                fmt_grid(r0 + self.range_bin),
                fmt_grid(m0),
                fmt_grid(m0 + self.mean_bin)
            )?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Totals per range, sorted by range.
    fn by_range(cycles: &[Cycle]) -> Vec<(f64, f64)> {
        let mut m: BTreeMap<u64, f64> = BTreeMap::new();
        for c in cycles {
            *m.entry(c.range.to_bits()).or_insert(0.0) += c.count;
        }
        let mut v: Vec<(f64, f64)> = m.into_iter().map(|(k, n)| (f64::from_bits(k), n)).collect();
        v.sort_by(|a, b| a.0.total_cmp(&b.0));
        v
    }

    #[test]
    fn astm_e1049_fig_6_example() {
        // ASTM E1049-85 Fig. 6: −2, 1, −3, 5, −1, 3, −4, 4, −2 gives
        // range 3: ½, 4: 1½, 6: ½, 8: 1, 9: ½.
        let cycles = count_cycles(&[-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0]);
        assert_eq!(
            by_range(&cycles),
            vec![(3.0, 0.5), (4.0, 1.5), (6.0, 0.5), (8.0, 1.0), (9.0, 0.5)]
        );
        // The only full cycle closes between −1 and 3 (range 4, mean 1); the
        // range 8 is two half cycles (5 to −3 and −4 to 4).
        let full: Vec<(f64, f64)> = cycles
            .iter()
            .filter(|c| c.count == 1.0)
            .map(|c| (c.range, c.mean))
            .collect();
        assert_eq!(full, vec![(4.0, 1.0)]);
    }

    #[test]
    fn intermediate_samples_and_flats_do_not_change_the_count() {
        // Points on a flank and repeated values are not reversals
        // (ASTM E1049-85 5.4.1: counting uses peaks and valleys only).
        let a = count_cycles(&[-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0]);
        let b = count_cycles(&[
            -2.0, -1.0, 1.0, 1.0, 0.0, -3.0, -3.0, 0.0, 5.0, 2.0, -1.0, 3.0, 3.0, -4.0, 0.0, 4.0,
            -2.0,
        ]);
        assert_eq!(by_range(&a), by_range(&b));
    }

    /// All cycles of `series`, pushed `block` samples at a time through
    /// [`Rainflow::push_all`].
    fn count_in_blocks(series: &[f64], block: usize) -> Vec<Cycle> {
        let mut out = Vec::new();
        let mut rf = Rainflow::new();
        let mut sink = |c: Cycle| out.push(c);
        for c in series.chunks(block) {
            rf.push_all(c.iter().copied(), &mut sink);
        }
        rf.finish(&mut sink);
        out
    }

    /// Cycles as bits (a cycle between +∞ and −∞ has a NaN mean).
    fn bit_keys(cycles: &[Cycle]) -> Vec<[u64; 5]> {
        cycles
            .iter()
            .map(|c| {
                let b = |x: f64| x.to_bits();
                [
                    b(c.range),
                    b(c.mean),
                    b(c.count),
                    c.start_index,
                    c.end_index,
                ]
            })
            .collect()
    }

    /// All cycles of `series`, pushed `block` samples at a time through
    /// [`Rainflow::push_rows`] (as the second field of each row).
    fn count_rows(series: &[f64], block: usize, method: ResidueMethod) -> Vec<Cycle> {
        let rows: Vec<(u8, f64)> = series.iter().map(|&x| (0, x)).collect();
        let mut out = Vec::new();
        let mut rf = Rainflow::with_residue(method);
        let mut sink = |c: Cycle| out.push(c);
        for c in rows.chunks(block) {
            rf.push_rows(c, |r| r.1, &mut sink);
        }
        rf.finish(&mut sink);
        out
    }

    #[test]
    fn the_row_pre_filter_gives_the_sample_by_sample_cycles_on_smooth_series() {
        // Reference: `push` sample by sample. A sampled ride-like signal (long
        // monotone runs, which the four-sample pre-filter skips) with flats,
        // NaN, ±∞, −0 and slopes whose products underflow to zero (1e-170
        // apart: no reversal by the product test) dropped in at places that
        // fall on every position of a block.
        let mut series: Vec<f64> = (0..20_000)
            .map(|i| {
                let t = i as f64 * 1e-3;
                (2.0 * std::f64::consts::PI * 1.3 * t).sin()
                    + 0.3 * (2.0 * std::f64::consts::PI * 11.7 * t).sin()
            })
            .collect();
        for (k, i) in (101..19_000).step_by(613).enumerate() {
            match k % 6 {
                0 => series[i] = f64::NAN,
                1 => series[i] = series[i - 1],
                2 => series[i] = f64::INFINITY,
                3 => {
                    series[i] = -0.0;
                    series[i + 1] = 0.0;
                }
                4 => {
                    series[i] = 1e-170;
                    series[i + 1] = 0.0;
                    series[i + 2] = 1e-170;
                }
                _ => series[i] = f64::NEG_INFINITY,
            }
        }
        for method in [ResidueMethod::HalfCycles, ResidueMethod::Repeated] {
            let want = count_with(&series, method);
            assert!(want.len() > 100);
            for block in [1, 3, 4, 7, 1024, series.len()] {
                assert_eq!(
                    bit_keys(&count_rows(&series, block, method)),
                    bit_keys(&want),
                    "{method:?}, block {block}"
                );
            }
        }
        for n in 0..6 {
            let s = &[1.0, f64::NAN, 3.0, 4.0, 5.0, 2.0][..n];
            let want = bit_keys(&count_cycles(s));
            assert_eq!(bit_keys(&count_rows(s, 1, ResidueMethod::HalfCycles)), want);
            assert_eq!(bit_keys(&count_rows(s, 6, ResidueMethod::HalfCycles)), want);
        }
    }

    #[test]
    fn block_counting_gives_the_sample_by_sample_cycles() {
        // Reference: `push` sample by sample (checked against the PyPI
        // `rainflow` package below), on series with flats, NaN and ±∞, and
        // with both residue methods.
        for seed in [1, 2, 3] {
            let series = crate::stats::awkward_series(10_000, seed);
            for method in [ResidueMethod::HalfCycles, ResidueMethod::Repeated] {
                let want = count_with(&series, method);
                assert!(want.len() > 100);
                assert!(want.iter().any(|c| c.range.is_infinite()));
                for block in [1, 2, 3, 1024, series.len()] {
                    let mut got = Vec::new();
                    let mut rf = Rainflow::with_residue(method);
                    let mut sink = |c: Cycle| got.push(c);
                    for c in series.chunks(block) {
                        rf.push_all(c.iter().copied(), &mut sink);
                    }
                    rf.finish(&mut sink);
                    assert_eq!(
                        bit_keys(&got),
                        bit_keys(&want),
                        "seed {seed}, {method:?}, block {block}"
                    );
                    assert_eq!(
                        bit_keys(&count_rows(&series, block, method)),
                        bit_keys(&want),
                        "rows: seed {seed}, {method:?}, block {block}"
                    );
                }
            }
        }
        // Fewer than three samples, split every way.
        for n in 0..4 {
            let s = &[1.0, f64::NAN, 3.0, 2.0][..n];
            let want = bit_keys(&count_cycles(s));
            assert_eq!(bit_keys(&count_in_blocks(s, 1)), want, "{n} samples");
        }
    }

    #[test]
    fn random_series_match_the_pypi_rainflow_package() {
        // Reference: rainflow.extract_cycles (PyPI `rainflow`, ASTM E1049-85
        // 5.4.4), run by tests/reference/rainflow_check.py. Continuous values
        // and coarse integer values (many ties) are both checked, cycle by
        // cycle including the reversal indices.
        let mut rng = ChaCha8Rng::seed_from_u64(2024);
        for case in 0..6 {
            let n = [50, 500, 5000, 3, 20_000, 777][case];
            let series: Vec<f64> = (0..n)
                .map(|_| {
                    if case % 2 == 0 {
                        rng.random_range(-10.0..10.0)
                    } else {
                        rng.random_range(-4i32..=4) as f64
                    }
                })
                .collect();
            let input = serde_json::json!({ "series": series, "m": 4.0, "n_eq": 1e6,
                                             "percentiles": [] });
            let Some(out) = crate::stats::pyref::run("rainflow_check.py", &input) else {
                return;
            };
            let theirs: Vec<Vec<f64>> = serde_json::from_value(out["cycles"].clone()).unwrap();
            let ours = count_cycles(&series);
            // The block path gives the same cycles in the same order.
            for block in [1, 7, 1024] {
                assert_eq!(count_in_blocks(&series, block), ours, "case {case}");
            }
            assert_eq!(ours.len(), theirs.len(), "case {case}: cycle count");
            for (a, b) in ours.iter().zip(&theirs) {
                assert!(
                    (a.range - b[0]).abs() < 1e-12
                        && (a.mean - b[1]).abs() < 1e-12
                        && a.count == b[2]
                        && a.start_index as f64 == b[3]
                        && a.end_index as f64 == b[4],
                    "case {case}: ours {a:?}, rainflow package {b:?}"
                );
            }
            let deq = damage_equivalent_range(&ours, 4.0, 1e6).unwrap();
            let theirs_deq = out["damage_equivalent_range"].as_f64().unwrap();
            assert!(
                (deq / theirs_deq - 1.0).abs() < 1e-12,
                "{deq} vs {theirs_deq}"
            );
        }
    }

    #[test]
    fn damage_equivalent_range_of_equal_cycles_is_analytic() {
        // k cycles of range S: S_eq = S·(k/N_eq)^(1/m) (analytic).
        let c = Cycle {
            range: 2.0,
            mean: 0.0,
            count: 1.0,
            start_index: 0,
            end_index: 1,
        };
        let cycles = vec![c; 1000];
        let s = damage_equivalent_range(&cycles, 5.0, 1e5).unwrap();
        assert!((s - 2.0 * (1e-2f64).powf(0.2)).abs() < 1e-12);
        assert!(damage_equivalent_range(&cycles, 0.0, 1.0).is_err());
    }

    #[test]
    fn residue_stays_small_for_a_long_stationary_series() {
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let mut rf = Rainflow::new();
        let mut n = 0.0;
        let mut worst = 0;
        for _ in 0..1_000_000 {
            rf.push(rng.random_range(-1.0..1.0), &mut |c: Cycle| n += c.count);
            worst = worst.max(rf.residue_len());
        }
        // The residue (ranges growing, then shrinking) holds the series'
        // alternating record highs and lows, forward and backward in time;
        // n i.i.d. continuous values have H_n = Σ 1/k ≈ ln n + 0.577 records
        // of each kind on average (Rényi's record theorem; Arnold,
        // Balakrishnan & Nagaraja, "Records", 1998), 14.4 for n = 10⁶. A
        // Python simulation of this setup (ASTM E1049-85 three-point stack)
        // gave a largest residue of 30–33 over 12 seeds; 64 is twice that.
        assert!(worst < 64, "residue reached {worst}");
        assert!(n > 1e5);
    }

    #[test]
    fn range_mean_table_conserves_cycles_and_writes_csv() {
        let cycles = count_cycles(&[-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0]);
        let mut t = RangeMeanTable::new(2.0, 1.0).unwrap();
        cycles.iter().for_each(|c| t.add(c));
        // Fig. 6 totals: ½ + 1½ + ½ + 1 + ½ = 4 cycles.
        assert_eq!(t.total(), 4.0);
        let mut buf = Vec::new();
        t.write_csv(&mut buf, "range_n", "mean_n").unwrap();
        let text = String::from_utf8(buf).unwrap();
        assert!(text.starts_with("range_n_lower,range_n_upper,mean_n_lower,mean_n_upper,cycles\n"));
        let sum: f64 = text
            .lines()
            .skip(1)
            .map(|l| l.rsplit(',').next().unwrap().parse::<f64>().unwrap())
            .sum();
        assert_eq!(sum, 4.0);
        assert!(RangeMeanTable::new(0.0, 1.0).is_err());
    }

    /// All cycles of a series counted with `method`.
    fn count_with(series: &[f64], method: ResidueMethod) -> Vec<Cycle> {
        let mut out = Vec::new();
        let mut rf = Rainflow::with_residue(method);
        let mut sink = |c: Cycle| out.push(c);
        for &x in series {
            rf.push(x, &mut sink);
        }
        rf.finish(&mut sink);
        out
    }

    #[test]
    fn a_repeated_block_closes_its_residue_by_hand() {
        // The ASTM E1049-85 Fig. 6 history −2, 1, −3, 5, −1, 3, −4, 4, −2
        // taken as a block that repeats. Its last point (−2) joins the next
        // block's first (−2), so the loop's turning points are
        // −2, 1, −3, 5, −1, 3, −4, 4. Worked by hand with E1049-85 5.4.5
        // (repeating histories): start at the largest magnitude, 5, and end
        // there: 5, −1, 3, −4, 4, −2, 1, −3, 5.
        //   5, −1, 3:      X = 4 < Y = 6
        //   −1, 3, −4:     X = 7 ≥ Y = 4   → count −1..3: range 4, mean 1
        //   5, −4, 4:      X = 8 < Y = 9
        //   4, −2, 1:      X = 3 < Y = 6
        //   −2, 1, −3:     X = 4 ≥ Y = 3   → count −2..1: range 3, mean −0.5
        //   −4, 4, −3:     X = 7 < Y = 8
        //   4, −3, 5:      X = 8 ≥ Y = 7   → count 4..−3: range 7, mean 0.5
        //   5, −4, 5:      X = 9 ≥ Y = 9   → count 5..−4: range 9, mean 0.5
        // One repetition: four full cycles, ranges 3, 4, 7, 9 (against the
        // single-pass count ½·3 + 1½·4 + ½·6 + 1·8 + ½·9 of Fig. 6: the same
        // 4 cycles, but the residue's 6, 8 and 9 halves pair into 7 and 9).
        let block = [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0];
        let cycles = count_with(&block, ResidueMethod::Repeated);
        assert!(cycles.iter().all(|c| c.count == 1.0), "{cycles:?}");
        let mut got: Vec<(f64, f64)> = cycles.iter().map(|c| (c.range, c.mean)).collect();
        got.sort_by(|a, b| a.0.total_cmp(&b.0));
        assert_eq!(got, vec![(3.0, -0.5), (4.0, 1.0), (7.0, 0.5), (9.0, 0.5)]);
        // Half cycles (the default) keep the Fig. 6 count.
        assert_eq!(
            by_range(&count_with(&block, ResidueMethod::HalfCycles)),
            vec![(3.0, 0.5), (4.0, 1.5), (6.0, 0.5), (8.0, 1.0), (9.0, 0.5)]
        );
    }

    #[test]
    fn the_closed_residue_is_what_each_further_repetition_adds() {
        // Independent of the closing rule: count the block repeated 2 and 3
        // times in one pass (ASTM E1049-85 5.4.4, half cycles); the third
        // block adds exactly one repetition's cycles, which the repeated
        // count of a single block must equal range for range.
        let mut rng = ChaCha8Rng::seed_from_u64(77);
        for case in 0..40 {
            let n = 5 + case * 7;
            let block: Vec<f64> = (0..n)
                .map(|_| {
                    if case % 2 == 0 {
                        rng.random_range(-10.0..10.0)
                    } else {
                        rng.random_range(-3i32..=3) as f64
                    }
                })
                .collect();
            let twice: Vec<f64> = block.iter().chain(&block).copied().collect();
            let thrice: Vec<f64> = twice.iter().chain(&block).copied().collect();
            let mut added: BTreeMap<u64, f64> = BTreeMap::new();
            for c in count_cycles(&thrice) {
                *added.entry(c.range.to_bits()).or_insert(0.0) += c.count;
            }
            for c in count_cycles(&twice) {
                *added.entry(c.range.to_bits()).or_insert(0.0) -= c.count;
            }
            added.retain(|_, n| *n != 0.0);
            let mut ours: BTreeMap<u64, f64> = BTreeMap::new();
            for c in count_with(&block, ResidueMethod::Repeated) {
                *ours.entry(c.range.to_bits()).or_insert(0.0) += c.count;
            }
            assert_eq!(ours, added, "case {case}: block {block:?}");
        }
    }
}
