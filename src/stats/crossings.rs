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
#[derive(Debug, Clone)]
pub struct LevelCrossings {
    levels: Vec<f64>,
    counts: Vec<u64>,
    prev: Option<f64>,
}

impl LevelCrossings {
    /// Counters for `levels` (any order; reported in the order given).
    pub fn new(levels: Vec<f64>) -> Self {
        let counts = vec![0; levels.len()];
        LevelCrossings {
            levels,
            counts,
            prev: None,
        }
    }

    /// Adds one sample. NaN samples are skipped.
    #[inline]
    pub fn push(&mut self, x: f64) {
        if x.is_nan() {
            return;
        }
        if let Some(p) = self.prev {
            if x > p {
                for (l, c) in self.levels.iter().zip(self.counts.iter_mut()) {
                    if p < *l && *l <= x {
                        *c += 1;
                    }
                }
            }
        }
        self.prev = Some(x);
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
}
