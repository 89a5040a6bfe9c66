//! Level-crossing counting: how often a signal crosses each given level
//! upwards. An up-crossing of level `L` is counted between consecutive
//! samples `x[i−1] < L ≤ x[i]` (ASTM E1049-85 5.1 counts level crossings on
//! the rising flank; this is that rule applied to every level, common
//! practice). Memory: the levels and one sample.

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
}
