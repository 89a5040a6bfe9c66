//! Level-crossing counting: how often a signal crosses each given level
//! upwards. An up-crossing of level `L` is counted between consecutive
//! samples `x[i−1] < L ≤ x[i]` (ASTM E1049-85 5.1 counts level crossings on
//! the rising flank; this is that rule applied to every level, common
//! practice). Memory: the levels and one sample.
//!
//! [`LevelSpectrum`] counts the same up-crossings on every level of a grid
//! `k·w` at once (the level-crossing spectrum of a load), in constant time
//! per sample, over whatever span the signal covers.

/// Streaming up-crossing counts for a set of levels.
///
/// The levels are also kept sorted, with the rank of the previous sample
/// among them (how many levels lie at or below it): a rising step from `p`
/// to `x` up-crosses exactly the sorted levels from rank(p) to rank(x), so
/// a sample costs a comparison or two against its neighbouring levels
/// instead of a pass over all of them (a signal moves past a level rarely).
#[derive(Debug, Clone)]
pub struct LevelCrossings {
    levels: Vec<f64>,
    counts: Vec<u64>,
    /// The non-NaN levels ascending, each with its index in `levels` (a NaN
    /// level is never crossed: every comparison with it is false).
    sorted: Vec<(f64, usize)>,
    prev: Option<f64>,
    /// Number of `sorted` levels at or below `prev`.
    rank: usize,
}

impl LevelCrossings {
    /// Counters for `levels` (any order; reported in the order given).
    pub fn new(levels: Vec<f64>) -> Self {
        let counts = vec![0; levels.len()];
        let mut sorted: Vec<(f64, usize)> = levels
            .iter()
            .enumerate()
            .filter(|(_, l)| !l.is_nan())
            .map(|(i, &l)| (l, i))
            .collect();
        sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
        LevelCrossings {
            levels,
            counts,
            sorted,
            prev: None,
            rank: 0,
        }
    }

    /// Number of sorted levels `≤ x`, walking from `rank` (the rank of a
    /// nearby value). Ascending in total order means non-decreasing under
    /// `<=` (−0 and +0 compare equal), so the levels `≤ x` are a prefix.
    #[inline(always)]
    fn rank_from(&self, mut rank: usize, x: f64) -> usize {
        while rank < self.sorted.len() && self.sorted[rank].0 <= x {
            rank += 1;
        }
        while rank > 0 && self.sorted[rank - 1].0 > x {
            rank -= 1;
        }
        rank
    }

    /// Counts the levels of sorted ranks `from..to`: those in `(p, x]`.
    #[inline(always)]
    fn count_ranks(&mut self, from: usize, to: usize) {
        for &(_, i) in &self.sorted[from..to] {
            self.counts[i] += 1;
        }
    }

    /// Adds one sample. NaN samples are skipped.
    #[inline]
    pub fn push(&mut self, x: f64) {
        if x.is_nan() {
            return;
        }
        let rank = self.rank_from(self.rank, x);
        // rank(x) > rank(p) only when x > p and a level lies in (p, x]:
        // the rule `p < l ≤ x` of the module doc.
        if self.prev.is_some() && rank > self.rank {
            self.count_ranks(self.rank, rank);
        }
        self.prev = Some(x);
        self.rank = rank;
    }

    /// The levels around rank `rank`: `(below, above)` with
    /// `below ≤ x < above` exactly when `x` has that rank (−∞ and +∞ stand
    /// for no level; an `x` of +∞ fails the test and takes the full walk).
    #[inline(always)]
    fn bracket(&self, rank: usize) -> (f64, f64) {
        let below = rank
            .checked_sub(1)
            .map_or(f64::NEG_INFINITY, |r| self.sorted[r].0);
        let above = self.sorted.get(rank).map_or(f64::INFINITY, |l| l.0);
        (below, above)
    }

    /// Adds every sample of `xs` in order (the same counts as
    /// [`LevelCrossings::push`] on each). A sample between the levels
    /// around the previous one costs two comparisons (a NaN fails both and
    /// is skipped on the slow side).
    #[inline(always)]
    pub fn push_all(&mut self, xs: impl Iterator<Item = f64>) {
        let mut block = self.block();
        xs.for_each(|x| block.push(x));
        block.finish();
    }

    /// A block of samples to be pushed one by one by the caller's own loop
    /// ([`CrossingBlock`]).
    #[inline(always)]
    pub(crate) fn block(&mut self) -> CrossingBlock<'_> {
        let rank = self.rank;
        // Before the first sample no value lies in the bracket, so it takes
        // the slow way and starts the count.
        let (below, above) = match self.prev {
            Some(_) => self.bracket(rank),
            None => (f64::INFINITY, f64::NEG_INFINITY),
        };
        CrossingBlock {
            counter: self,
            rank,
            below,
            above,
            last: f64::NAN,
        }
    }

    /// The levels, as given.
    pub fn levels(&self) -> &[f64] {
        &self.levels
    }

    /// Up-crossings per level, in the order of [`LevelCrossings::levels`].
    pub fn counts(&self) -> &[u64] {
        &self.counts
    }
}

/// [`LevelCrossings::push_all`] for a caller's own loop: `push` each sample
/// in order, then `finish`; the same counts. A sample between the levels
/// around the previous one costs two comparisons (a NaN fails both and is
/// skipped on the slow side).
pub(crate) struct CrossingBlock<'c> {
    counter: &'c mut LevelCrossings,
    rank: usize,
    below: f64,
    above: f64,
    /// The last non-NaN sample of the block (NaN while there is none).
    last: f64,
}

impl CrossingBlock<'_> {
    /// Adds one sample. NaN samples are skipped.
    #[inline(always)]
    pub(crate) fn push(&mut self, x: f64) {
        if x >= self.below && x < self.above {
            self.last = x;
            return;
        }
        self.slow(x);
    }

    /// A sample outside the bracket (or NaN, or the first of the count).
    #[inline]
    fn slow(&mut self, x: f64) {
        if x.is_nan() {
            return;
        }
        self.last = x;
        let c = &mut *self.counter;
        if c.prev.is_none() {
            c.push(x);
            self.rank = c.rank;
        } else {
            let r = c.rank_from(self.rank, x);
            if r > self.rank {
                c.count_ranks(self.rank, r);
            }
            self.rank = r;
        }
        (self.below, self.above) = c.bracket(self.rank);
    }

    /// Hands the state back to the counter.
    #[inline(always)]
    pub(crate) fn finish(self) {
        if !self.last.is_nan() {
            self.counter.prev = Some(self.last);
            self.counter.rank = self.rank;
        }
    }
}

/// Largest level index magnitude a [`LevelSpectrum`] keeps: values beyond
/// `±2^18` bin widths are counted at the outermost level, which bounds its
/// memory (4 MiB) whatever the signal does.
pub const MAX_LEVEL_INDEX: i64 = 1 << 18;

/// Streaming up-crossing counts of every level `k·w` (k any integer).
///
/// A sample `x` lies in level bin `j(x) = ⌊x/w⌋`; a rising step from `p`
/// to `x` up-crosses the levels `k·w` with `j(p) < k ≤ j(x)`, i.e.
/// `p < k·w ≤ x` (the rule of [`LevelCrossings`], on the bins of the
/// rainflow range–mean table). Each step costs one division and, when
/// rising, two additions to a difference array; the counts come out by a
/// prefix sum at the end.
#[derive(Debug, Clone)]
pub struct LevelSpectrum {
    bin: f64,
    prev: Option<i64>,
    /// Index of `diff[0]`.
    lo: i64,
    /// `diff[k − lo]`: up-crossings starting at level k minus those ending below it.
    diff: Vec<i64>,
}

impl LevelSpectrum {
    /// A spectrum on levels `k·bin` (`bin` > 0 and finite).
    pub fn new(bin: f64) -> Result<Self, super::StatsError> {
        if !(bin > 0.0 && bin.is_finite()) {
            return Err(super::StatsError::Parameter(format!(
                "level-crossing bin width must be positive and finite, got {bin}"
            )));
        }
        Ok(LevelSpectrum {
            bin,
            prev: None,
            lo: 0,
            diff: Vec::new(),
        })
    }

    /// The level spacing.
    pub fn bin(&self) -> f64 {
        self.bin
    }

    /// Adds one sample. NaN samples are skipped.
    #[inline]
    pub fn push(&mut self, x: f64) {
        if x.is_nan() {
            return;
        }
        let j = ((x / self.bin).floor() as i64).clamp(-MAX_LEVEL_INDEX, MAX_LEVEL_INDEX);
        if let Some(p) = self.prev {
            if j > p {
                self.add(p + 1, j + 1);
            }
        }
        self.prev = Some(j);
    }

    /// One up-crossing of every level in `from..to`.
    fn add(&mut self, from: i64, to: i64) {
        if self.diff.is_empty() {
            self.lo = from;
        }
        if from < self.lo {
            let grow = (self.lo - from) as usize;
            self.diff.splice(0..0, std::iter::repeat_n(0, grow));
            self.lo = from;
        }
        let top = (to - self.lo) as usize;
        if top >= self.diff.len() {
            self.diff.resize(top + 1, 0);
        }
        self.diff[(from - self.lo) as usize] += 1;
        self.diff[top] -= 1;
    }

    /// `(k, up-crossings of level k·bin)` for every level crossed at least
    /// once, ascending by level.
    pub fn counts(&self) -> Vec<(i64, u64)> {
        let mut running = 0i64;
        let mut out = Vec::new();
        for (i, d) in self.diff.iter().enumerate() {
            running += d;
            if running > 0 {
                out.push((self.lo + i as i64, running as u64));
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn a_sine_crosses_each_inner_level_once_per_period() {
        // Analytic: A·sin(2πft) over k whole periods (starting just after
        // the zero up-crossing) crosses every level in (−A, A) upwards k
        // times, and none outside.
        let (a, k, per) = (2.0, 37, 400);
        let mut lc = LevelCrossings::new(vec![-2.5, -1.9, -1.0, 0.5, 1.0, 1.99, 2.5]);
        for i in 1..=k * per {
            lc.push(a * (2.0 * PI * i as f64 / per as f64).sin());
        }
        assert_eq!(lc.counts(), &[0, 37, 37, 37, 37, 37, 0]);
    }

    #[test]
    fn hand_example_with_touching_and_repeated_values() {
        // x[i−1] < L ≤ x[i]: touching the level from below counts, leaving it
        // upwards from exactly L does not.
        let mut lc = LevelCrossings::new(vec![1.0]);
        for x in [0.0, 1.0, 1.0, 2.0, 0.0, 3.0, f64::NAN, 0.5, 0.9, 1.0] {
            lc.push(x);
        }
        assert_eq!(lc.counts(), &[3]);
    }

    #[test]
    fn the_spectrum_equals_counting_each_level_alone() {
        // Reference: LevelCrossings (x[i−1] < L ≤ x[i]) on each level of the
        // grid separately, on a random walk with repeated values and
        // levels hit exactly (multiples of the bin width).
        let w = 0.25;
        let mut s = 11u64;
        let mut x = 0.0;
        let mut series = Vec::new();
        for _ in 0..5000 {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            x += ((s >> 33) % 9) as f64 * 0.125 - 0.5;
            series.push(x);
        }
        let mut spectrum = LevelSpectrum::new(w).unwrap();
        series.iter().for_each(|&v| spectrum.push(v));
        let counts = spectrum.counts();
        let lo = series.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = series.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        let mut checked = 0;
        for k in ((lo / w).floor() as i64 - 2)..=((hi / w).ceil() as i64 + 2) {
            let mut one = LevelCrossings::new(vec![k as f64 * w]);
            series.iter().for_each(|&v| one.push(v));
            let ours = counts.iter().find(|c| c.0 == k).map_or(0, |c| c.1);
            assert_eq!(ours, one.counts()[0], "level {k}");
            checked += (ours > 0) as usize;
        }
        assert!(checked > 20, "only {checked} levels crossed");
        assert!(LevelSpectrum::new(0.0).is_err());
    }

    /// The rule of the module doc, level by level and step by step.
    fn naive(levels: &[f64], xs: &[f64]) -> Vec<u64> {
        let xs: Vec<f64> = xs.iter().copied().filter(|x| !x.is_nan()).collect();
        levels
            .iter()
            .map(|&l| xs.windows(2).filter(|w| w[0] < l && l <= w[1]).count() as u64)
            .collect()
    }

    #[test]
    fn ranked_counting_in_blocks_equals_testing_every_level() {
        // Reference: `x[i−1] < L ≤ x[i]` tested for every level at every
        // step. Levels unsorted, repeated, NaN, ±∞ and −0; samples with
        // NaN, ±∞, −0 and flats, hitting levels exactly.
        let levels = vec![
            0.03,
            -0.05,
            0.0,
            f64::NAN,
            0.03,
            -0.0,
            f64::INFINITY,
            0.1,
            f64::NEG_INFINITY,
            -0.2,
            0.25,
        ];
        for seed in [1, 2] {
            let data = crate::stats::awkward_series(20_000, seed);
            let want = naive(&levels, &data);
            assert!(want[0] > 10 && want[6] > 0, "{want:?}");
            let mut one = LevelCrossings::new(levels.clone());
            data.iter().for_each(|&x| one.push(x));
            assert_eq!(one.counts(), &want[..]);
            for block in [1, 2, 5, 1024, data.len()] {
                let mut all = LevelCrossings::new(levels.clone());
                data.chunks(block)
                    .for_each(|c| all.push_all(c.iter().copied()));
                assert_eq!(all.counts(), &want[..], "block {block}");
            }
        }
    }
}
