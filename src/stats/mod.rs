//! Durability statistics of a time history: streaming moments and extremes,
//! distributions and histograms, level crossings and rainflow cycle counts
//! (ASTM E1049-85).
//!
//! Everything here is streaming: values are pushed one at a time and memory
//! stays bounded by the bin count (histograms, range–mean tables), the level
//! count (crossings) or the rainflow residue (see [`rainflow`]), never by the
//! record length. Units are whatever the caller pushes; writers take the
//! column names (with units) from the caller.

mod crossings;
pub mod durability;
mod histogram;
pub mod rainflow;

pub use crossings::{LevelCrossings, LevelSpectrum};
pub use histogram::{Histogram, percentile_sorted};
pub use rainflow::{
    Cycle, DamageEquivalent, Rainflow, RangeMeanTable, ResidueMethod, damage_equivalent_range,
};

use thiserror::Error;

use crate::lanes::F2;

/// A statistics parameter was out of range.
#[derive(Debug, Error)]
pub enum StatsError {
    /// A bin width, range or exponent is unusable (name and value in the text).
    #[error("{0}")]
    Parameter(String),
}

/// Streaming count, mean, r.m.s. and standard deviation (no extremes: see
/// [`Moments`] for those).
///
/// Sums of the deviations from the first value pushed (the shifted-data
/// algorithm: Chan, Golub & LeVeque, "Algorithms for computing the sample
/// variance", The American Statistician 37(3), 1983): no division per value,
/// unlike Welford's update, and no catastrophic cancellation as long as the
/// first value is not far from the mean compared with the spread — true of
/// every dynamic quantity of a run, which starts at rest at zero.
#[derive(Debug, Clone, Copy, Default)]
pub struct SecondMoments {
    n: u64,
    shift: f64,
    sum_d: f64,
    sum_d2: f64,
}

/// A streaming accumulator of one column of values, for [`push_columns`].
pub trait Column: Copy {
    /// Adds one value.
    fn push(&mut self, x: f64);
    /// Adds a value to an accumulator that already holds one (no first-value
    /// test): `push` without its first branch.
    fn push_more(&mut self, x: f64);
}

/// Pushes `K` columns at once, row by row: `accumulators[k]` gets `row[k]`
/// of every row, in order, exactly as `push` on each would give. The
/// accumulators are copied into locals for the loop and the first-value
/// test is taken once, so each value costs its arithmetic and little else
/// (and neighbouring columns can share vector instructions).
#[inline]
pub fn push_columns<M: Column, const K: usize>(
    accumulators: [&mut M; K],
    rows: impl Iterator<Item = [f64; K]>,
) {
    let mut rows = rows;
    let Some(first) = rows.next() else {
        return;
    };
    let mut local: [M; K] = std::array::from_fn(|k| *accumulators[k]);
    for k in 0..K {
        local[k].push(first[k]);
    }
    for row in rows {
        for k in 0..K {
            local[k].push_more(row[k]);
        }
    }
    for (a, l) in accumulators.into_iter().zip(local) {
        *a = l;
    }
}

/// A [`Column`] that can also run as one lane of a pair of columns side by
/// side ([`F2`]), for [`push_column_pairs`].
pub(crate) trait PairColumn: Column {
    /// Two accumulators' state as lanes.
    type Lanes: Copy;
    /// `a` in lane 0, `b` in lane 1.
    fn to_lanes(a: &Self, b: &Self) -> Self::Lanes;
    /// The two accumulators back.
    fn from_lanes(lanes: &Self::Lanes) -> [Self; 2];
    /// [`Column::push_more`] on both lanes: the same operations in the
    /// same order, lane by lane.
    fn push_more_lanes(lanes: &mut Self::Lanes, x: F2);
}

/// [`push_columns`] with the columns in pairs, each pair's accumulators run
/// side by side in two lanes ([`F2`]): `accumulators[p][l]` gets
/// `row[p][l]` of every row, in order, exactly as `push` on each would give.
#[inline(always)]
pub(crate) fn push_column_pairs<M: PairColumn, const P: usize>(
    accumulators: [[&mut M; 2]; P],
    rows: impl Iterator<Item = [[f64; 2]; P]>,
) {
    let mut rows = rows;
    let Some(first) = rows.next() else {
        return;
    };
    let mut accumulators = accumulators;
    for (pair, x) in accumulators.iter_mut().zip(first) {
        pair[0].push(x[0]);
        pair[1].push(x[1]);
    }
    let mut local: [M::Lanes; P] =
        std::array::from_fn(|p| M::to_lanes(accumulators[p][0], accumulators[p][1]));
    for row in rows {
        for p in 0..P {
            M::push_more_lanes(&mut local[p], F2::new(row[p][0], row[p][1]));
        }
    }
    for (pair, lanes) in accumulators.into_iter().zip(local) {
        let [a, b] = M::from_lanes(&lanes);
        let [pa, pb] = pair;
        (*pa, *pb) = (a, b);
    }
}

/// Two [`SecondMoments`] as lanes.
#[derive(Clone, Copy)]
pub(crate) struct SecondLanes {
    n: [u64; 2],
    shift: F2,
    sum_d: F2,
    sum_d2: F2,
}

impl PairColumn for SecondMoments {
    type Lanes = SecondLanes;

    fn to_lanes(a: &Self, b: &Self) -> SecondLanes {
        SecondLanes {
            n: [a.n, b.n],
            shift: F2::new(a.shift, b.shift),
            sum_d: F2::new(a.sum_d, b.sum_d),
            sum_d2: F2::new(a.sum_d2, b.sum_d2),
        }
    }

    fn from_lanes(l: &SecondLanes) -> [Self; 2] {
        let (shift, sum_d, sum_d2) = (l.shift.lanes(), l.sum_d.lanes(), l.sum_d2.lanes());
        [0, 1].map(|i| SecondMoments {
            n: l.n[i],
            shift: shift[i],
            sum_d: sum_d[i],
            sum_d2: sum_d2[i],
        })
    }

    #[inline(always)]
    fn push_more_lanes(l: &mut SecondLanes, x: F2) {
        l.n[0] += 1;
        l.n[1] += 1;
        let d = x - l.shift;
        l.sum_d = l.sum_d + d;
        l.sum_d2 = l.sum_d2 + d * d;
    }
}

impl SecondMoments {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one value.
    #[inline]
    pub fn push(&mut self, x: f64) {
        Column::push(self, x);
    }

    /// Number of values pushed.
    pub fn count(&self) -> u64 {
        self.n
    }

    /// Arithmetic mean (0 when empty).
    pub fn mean(&self) -> f64 {
        if self.n == 0 {
            0.0
        } else {
            self.shift + self.sum_d / self.n as f64
        }
    }

    /// `Σ(x − mean)²`: the shifted sums' `Σd² − (Σd)²/n`, never negative.
    fn sum_sq_dev(&self) -> f64 {
        if self.n == 0 {
            0.0
        } else {
            (self.sum_d2 - self.sum_d * self.sum_d / self.n as f64).max(0.0)
        }
    }

    /// Population variance `Σ(x − mean)²/n` (0 when empty).
    pub fn variance(&self) -> f64 {
        if self.n == 0 {
            0.0
        } else {
            self.sum_sq_dev() / self.n as f64
        }
    }

    /// Population standard deviation (divisor n; 0 when empty).
    pub fn std(&self) -> f64 {
        self.variance().sqrt()
    }

    /// Sample standard deviation (divisor n − 1; 0 with fewer than two values).
    pub fn sample_std(&self) -> f64 {
        if self.n < 2 {
            0.0
        } else {
            (self.sum_sq_dev() / (self.n - 1) as f64).sqrt()
        }
    }

    /// Root mean square `√(Σx²/n) = √(mean² + variance)` (0 when empty).
    pub fn rms(&self) -> f64 {
        let mean = self.mean();
        (mean * mean + self.variance()).sqrt()
    }
}

impl Column for SecondMoments {
    #[inline]
    fn push(&mut self, x: f64) {
        if self.n == 0 {
            self.shift = x;
        }
        self.push_more(x);
    }

    #[inline(always)]
    fn push_more(&mut self, x: f64) {
        self.n += 1;
        let d = x - self.shift;
        self.sum_d += d;
        self.sum_d2 += d * d;
    }
}

/// Streaming count, mean, r.m.s., standard deviation, minimum and maximum:
/// [`SecondMoments`] and the extremes.
#[derive(Debug, Clone, Copy, Default)]
pub struct Moments {
    sums: SecondMoments,
    min: f64,
    max: f64,
}

impl Column for Moments {
    #[inline]
    fn push(&mut self, x: f64) {
        if self.sums.n == 0 {
            self.min = f64::INFINITY;
            self.max = f64::NEG_INFINITY;
        }
        self.sums.push(x);
        self.extremes(x);
    }

    #[inline(always)]
    fn push_more(&mut self, x: f64) {
        self.sums.push_more(x);
        self.extremes(x);
    }
}

/// Two [`Moments`] as lanes.
#[derive(Clone, Copy)]
pub(crate) struct MomentLanes {
    sums: SecondLanes,
    min: F2,
    max: F2,
}

impl PairColumn for Moments {
    type Lanes = MomentLanes;

    fn to_lanes(a: &Self, b: &Self) -> MomentLanes {
        MomentLanes {
            sums: SecondMoments::to_lanes(&a.sums, &b.sums),
            min: F2::new(a.min, b.min),
            max: F2::new(a.max, b.max),
        }
    }

    fn from_lanes(l: &MomentLanes) -> [Self; 2] {
        let sums = SecondMoments::from_lanes(&l.sums);
        let (min, max) = (l.min.lanes(), l.max.lanes());
        [0, 1].map(|i| Moments {
            sums: sums[i],
            min: min[i],
            max: max[i],
        })
    }

    #[inline(always)]
    fn push_more_lanes(l: &mut MomentLanes, x: F2) {
        SecondMoments::push_more_lanes(&mut l.sums, x);
        // [`Moments::extremes`]: `minpd`/`maxpd` are its two branches.
        l.min = x.less_or(l.min);
        l.max = x.greater_or(l.max);
    }
}

impl Moments {
    /// An empty accumulator.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one value.
    #[inline]
    pub fn push(&mut self, x: f64) {
        Column::push(self, x);
    }

    /// Adds every value of `xs` in order: the same as [`Moments::push`] on
    /// each, bit for bit.
    #[inline]
    pub fn push_all(&mut self, xs: impl Iterator<Item = f64>) {
        push_columns([self], xs.map(|x| [x]));
    }

    #[inline(always)]
    fn extremes(&mut self, x: f64) {
        // A NaN compares false and is skipped, as `f64::min`/`max` skip it.
        self.min = if x < self.min { x } else { self.min };
        self.max = if x > self.max { x } else { self.max };
    }

    /// Number of values pushed.
    pub fn count(&self) -> u64 {
        self.sums.count()
    }

    /// Arithmetic mean (0 when empty).
    pub fn mean(&self) -> f64 {
        self.sums.mean()
    }

    /// Population variance `Σ(x − mean)²/n` (0 when empty).
    pub fn variance(&self) -> f64 {
        self.sums.variance()
    }

    /// Population standard deviation (divisor n; 0 when empty).
    pub fn std(&self) -> f64 {
        self.sums.std()
    }

    /// Sample standard deviation (divisor n − 1; 0 with fewer than two values).
    pub fn sample_std(&self) -> f64 {
        self.sums.sample_std()
    }

    /// Root mean square `√(Σx²/n) = √(mean² + variance)` (0 when empty).
    pub fn rms(&self) -> f64 {
        self.sums.rms()
    }

    /// Smallest value (NaN when empty or every value was NaN).
    pub fn min(&self) -> f64 {
        if self.sums.n == 0 || self.min > self.max {
            f64::NAN
        } else {
            self.min
        }
    }

    /// Largest value (NaN when empty or every value was NaN).
    pub fn max(&self) -> f64 {
        if self.sums.n == 0 || self.min > self.max {
            f64::NAN
        } else {
            self.max
        }
    }
}

/// An awkward test series for the block (`push_all`) paths: a random walk on
/// a grid of `1/100` (levels such as 0.03 hit exactly, flats of repeated
/// values), with NaN, −0 and ±∞ sprinkled in.
#[cfg(test)]
pub(crate) fn awkward_series(n: usize, seed: u64) -> Vec<f64> {
    use rand::{Rng, SeedableRng};
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let mut k = 0i64;
    (0..n)
        .map(|i| {
            k += rng.random_range(-3i64..=3);
            match (i % 997, rng.random_range(0..400)) {
                (500, _) => f64::INFINITY,
                (900, _) => f64::NEG_INFINITY,
                (_, 0) => f64::NAN,
                _ if k == 0 && i % 2 == 0 => -0.0,
                _ => k as f64 / 100.0,
            }
        })
        .collect()
}

#[cfg(test)]
pub(crate) mod pyref {
    //! Runs a reference script under tests/reference/ with python3, feeding
    //! JSON on stdin and reading one JSON object from stdout.

    use std::io::Write;
    use std::process::{Command, Stdio};

    const HINT: &str = "run `pip install -r tests/reference/requirements.txt` \
        (or set ROUGHRIDE_SKIP_PYTHON=1 to skip the Python cross-checks)";

    /// `None` when ROUGHRIDE_SKIP_PYTHON=1 (prints that it skipped); panics
    /// with the install hint when python3 or a package is missing.
    pub fn run(script: &str, input: &serde_json::Value) -> Option<serde_json::Value> {
        if std::env::var("ROUGHRIDE_SKIP_PYTHON").as_deref() == Ok("1") {
            println!("skipped the Python cross-check {script}: ROUGHRIDE_SKIP_PYTHON=1");
            return None;
        }
        let path = format!("{}/tests/reference/{script}", env!("CARGO_MANIFEST_DIR"));
        let mut child = match Command::new("python3")
            .arg(&path)
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
        {
            Ok(c) => c,
            Err(e) => panic!("cannot start python3 ({e}): {HINT}"),
        };
        let text = input.to_string();
        if let Some(mut stdin) = child.stdin.take() {
            stdin.write_all(text.as_bytes()).expect("write to python3");
        }
        let out = child.wait_with_output().expect("wait for python3");
        if !out.status.success() {
            panic!(
                "{script} failed: {}\n{HINT}",
                String::from_utf8_lossy(&out.stderr)
            );
        }
        Some(serde_json::from_slice(&out.stdout).expect("reference script printed JSON"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_match_the_two_pass_definitions() {
        // Reference: the textbook two-pass formulas on the same data.
        let xs: Vec<f64> = (0..1000)
            .map(|i| ((i * 37 % 101) as f64 - 40.0) * 0.1 + 1e6)
            .collect();
        let mut m = Moments::new();
        xs.iter().for_each(|&x| m.push(x));
        let n = xs.len() as f64;
        let mean = xs.iter().sum::<f64>() / n;
        let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n;
        let rms = (xs.iter().map(|x| x * x).sum::<f64>() / n).sqrt();
        assert_eq!(m.count(), 1000);
        assert!((m.mean() - mean).abs() < 1e-9);
        assert!(
            (m.std() - var.sqrt()).abs() < 1e-6,
            "{} {}",
            m.std(),
            var.sqrt()
        );
        assert!((m.sample_std() - (var * n / (n - 1.0)).sqrt()).abs() < 1e-6);
        assert!((m.rms() / rms - 1.0).abs() < 1e-12);
        assert_eq!(m.min(), xs.iter().cloned().fold(f64::INFINITY, f64::min));
        assert_eq!(
            m.max(),
            xs.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        );
        assert!(Moments::new().min().is_nan());
        // NaN values are skipped by the extremes as the std `f64::min`/`max`
        // folds skip them; all-NaN data has no extremes.
        for data in [[f64::NAN, 2.0, 1.0], [3.0, f64::NAN, -1.0], [f64::NAN; 3]] {
            let mut m = Moments::new();
            data.iter().for_each(|&x| m.push(x));
            let lo = data.iter().cloned().fold(f64::NAN, f64::min);
            let hi = data.iter().cloned().fold(f64::NAN, f64::max);
            assert!(
                m.min() == lo || (m.min().is_nan() && lo.is_nan()),
                "{data:?}"
            );
            assert!(
                m.max() == hi || (m.max().is_nan() && hi.is_nan()),
                "{data:?}"
            );
        }
        assert_eq!(Moments::new().rms(), 0.0);
    }

    /// The bits of `x`, any NaN as one: the sign of a NaN sum depends on
    /// which operand the compiler puts first, and nothing reports it.
    fn b(x: f64) -> u64 {
        if x.is_nan() {
            f64::NAN.to_bits()
        } else {
            x.to_bits()
        }
    }

    fn bits(m: &Moments) -> [u64; 8] {
        [
            m.count(),
            b(m.mean()),
            b(m.variance()),
            b(m.std()),
            b(m.sample_std()),
            b(m.rms()),
            b(m.min()),
            b(m.max()),
        ]
    }

    fn bits2(m: &SecondMoments) -> [u64; 6] {
        [
            m.count(),
            b(m.mean()),
            b(m.variance()),
            b(m.std()),
            b(m.sample_std()),
            b(m.rms()),
        ]
    }

    #[test]
    fn block_pushes_give_the_one_by_one_results_bit_for_bit() {
        // Reference: `push` value by value (itself checked against the
        // two-pass definitions above), on finite data and on data with NaN,
        // −0 and ±∞, in blocks of several sizes.
        let awkward = awkward_series(5000, 3);
        let finite: Vec<f64> = awkward.iter().map(|x| x.clamp(-5.0, 5.0)).collect();
        let finite: Vec<f64> = finite.into_iter().filter(|x| !x.is_nan()).collect();
        for data in [&awkward, &finite] {
            let (mut one, mut one_sums, mut one_neg) =
                (Moments::new(), SecondMoments::new(), SecondMoments::new());
            for &x in data.iter() {
                one.push(x);
                one_sums.push(x);
                one_neg.push(-x);
            }
            for block in [1, 2, 7, 1024, data.len()] {
                let mut all = Moments::new();
                let (mut a, mut b) = (SecondMoments::new(), SecondMoments::new());
                // The same as lane pairs: Moments (x, −x), SecondMoments (x, −x).
                let (mut pm, mut nm) = (Moments::new(), Moments::new());
                let (mut pa, mut na) = (SecondMoments::new(), SecondMoments::new());
                for c in data.chunks(block) {
                    all.push_all(c.iter().copied());
                    push_columns([&mut a, &mut b], c.iter().map(|&x| [x, -x]));
                    push_column_pairs([[&mut pm, &mut nm]], c.iter().map(|&x| [[x, -x]]));
                    push_column_pairs([[&mut pa, &mut na]], c.iter().map(|&x| [[x, -x]]));
                }
                assert_eq!(bits(&all), bits(&one), "block {block}");
                assert_eq!(bits2(&a), bits2(&one_sums), "block {block}");
                assert_eq!(bits2(&b), bits2(&one_neg), "block {block}");
                assert_eq!(bits(&pm), bits(&one), "pairs, block {block}");
                assert_eq!(bits2(&pa), bits2(&one_sums), "pairs, block {block}");
                assert_eq!(bits2(&na), bits2(&one_neg), "pairs, block {block}");
                let mut one_neg_m = Moments::new();
                data.iter().for_each(|&x| one_neg_m.push(-x));
                assert_eq!(bits(&nm), bits(&one_neg_m), "pairs, block {block}");
            }
        }
        // The finite data's extremes and r.m.s. as a plain fold gives them.
        let mut m = Moments::new();
        m.push_all(finite.iter().copied());
        assert_eq!(
            m.min(),
            finite.iter().cloned().fold(f64::INFINITY, f64::min)
        );
        assert_eq!(
            m.max(),
            finite.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
        );
        let mut empty = Moments::new();
        empty.push_all(std::iter::empty());
        assert_eq!(empty.count(), 0);
        assert!(empty.min().is_nan());
    }
}
