//! Fixed-width histograms that conserve counts (every pushed value lands in
//! a bin, the underflow, the overflow or the not-a-number count), their CSV
//! writer, and percentiles: exact from a sorted buffer, or from the
//! histogram with a resolution of one bin width.

use std::io::{self, Write};

use super::StatsError;

/// A histogram of `bins` equal bins `[lower + i·w, lower + (i+1)·w)`.
#[derive(Debug, Clone)]
pub struct Histogram {
    lower: f64,
    bin_width: f64,
    // 1 / bin_width: binning multiplies (a value within rounding of an
    // edge may land in the neighbouring bin, inside the stated resolution).
    per_bin: f64,
    counts: Vec<u64>,
    underflow: u64,
    overflow: u64,
    not_a_number: u64,
}

/// `K` histograms taking a block of values together, their loop state in
/// locals (for a caller's own loop over the block): the same counts as
/// [`Histogram::push`] on each. One range test per value covers NaN too (a
/// NaN `x` gives a NaN `u`, which fails both bounds), and the bin counts as
/// `f64` are worked out once. The outside counts reach the histograms in
/// [`HistogramBlock::finish`].
pub(crate) struct HistogramBlock<'h, const K: usize> {
    lower: [f64; K],
    per_bin: [f64; K],
    len_f: [f64; K],
    /// The bits of `len_f` ([`HistogramBlock::push`]).
    len_bits: [u64; K],
    // Outside counts in locals: a store through `counts` could alias them.
    outside: [[u64; 3]; K],
    parts: [(&'h mut [u64], [&'h mut u64; 3]); K],
}

impl<'h, const K: usize> HistogramBlock<'h, K> {
    #[inline(always)]
    pub(crate) fn new(histograms: [&'h mut Histogram; K]) -> Self {
        let lower: [f64; K] = std::array::from_fn(|k| histograms[k].lower);
        let per_bin: [f64; K] = std::array::from_fn(|k| histograms[k].per_bin);
        let len_f: [f64; K] = std::array::from_fn(|k| histograms[k].counts.len() as f64);
        let parts = histograms.map(|h| {
            let Histogram {
                counts,
                underflow,
                overflow,
                not_a_number,
                ..
            } = h;
            (&mut counts[..], [underflow, overflow, not_a_number])
        });
        HistogramBlock {
            lower,
            per_bin,
            len_f,
            len_bits: len_f.map(f64::to_bits),
            outside: [[0; 3]; K],
            parts,
        }
    }

    /// Adds `x` to each histogram.
    #[inline(always)]
    pub(crate) fn push(&mut self, x: f64) {
        for k in 0..K {
            let u = (x - self.lower[k]) * self.per_bin[k];
            // `0 ≤ u < len` as one integer comparison: the bits of
            // non-negative floats order as the floats do, while a negative u
            // (sign bit set) and a NaN (bits above those of ∞) compare above
            // the bits of any finite len. Only −0, in bin 0 by `u >= 0.0`,
            // fails it wrongly; it takes the full test.
            if u.to_bits() < self.len_bits[k] || (u >= 0.0 && u < self.len_f[k]) {
                // SAFETY: 0 ≤ u < len ≤ 10⁷ here (checked just above), so u
                // truncates to an integer that fits an i64, which is all
                // `to_int_unchecked` asks; it spares the saturating cast's
                // clamps. Truncating u < len gives at most len − 1 (len is
                // exact as f64), so the index is in bounds.
                unsafe {
                    let i = u.to_int_unchecked::<i64>() as usize;
                    *self.parts[k].0.get_unchecked_mut(i) += 1;
                }
            } else {
                // Underflow, overflow, or NaN (fails every comparison).
                let class = if u < 0.0 {
                    0
                } else if u >= self.len_f[k] {
                    1
                } else {
                    2
                };
                self.outside[k][class] += 1;
            }
        }
    }

    /// Adds the outside counts to the histograms.
    #[inline(always)]
    pub(crate) fn finish(self) {
        let mut parts = self.parts;
        for (k, (_, totals)) in parts.iter_mut().enumerate() {
            for (total, n) in totals.iter_mut().zip(self.outside[k]) {
                **total += n;
            }
        }
    }
}

impl Histogram {
    /// Bins of width `bin_width` from `lower` up to at least `upper` (the last
    /// edge is `lower + bins·bin_width ≥ upper`). At most 10⁷ bins.
    pub fn new(lower: f64, upper: f64, bin_width: f64) -> Result<Self, StatsError> {
        if !(bin_width > 0.0 && bin_width.is_finite()) {
            return Err(StatsError::Parameter(format!(
                "histogram bin width must be positive and finite, got {bin_width}"
            )));
        }
        if !(lower.is_finite() && upper.is_finite() && upper > lower) {
            return Err(StatsError::Parameter(format!(
                "histogram range must satisfy lower < upper (finite), got {lower} .. {upper}"
            )));
        }
        // The small allowance keeps (1.0 − 0.0)/0.1 from becoming 11 bins.
        let bins = ((upper - lower) / bin_width * (1.0 - 1e-12))
            .ceil()
            .max(1.0);
        if bins > 1e7 {
            return Err(StatsError::Parameter(format!(
                "histogram would need {bins} bins (range {lower} .. {upper}, width {bin_width}); \
                 the limit is 10^7: widen the bins"
            )));
        }
        Ok(Histogram {
            lower,
            bin_width,
            per_bin: 1.0 / bin_width,
            counts: vec![0; bins as usize],
            underflow: 0,
            overflow: 0,
            not_a_number: 0,
        })
    }

    /// Adds one value.
    #[inline]
    pub fn push(&mut self, x: f64) {
        if x.is_nan() {
            self.not_a_number += 1;
            return;
        }
        let u = (x - self.lower) * self.per_bin;
        if u < 0.0 {
            self.underflow += 1;
        } else if u >= self.counts.len() as f64 {
            self.overflow += 1;
        } else {
            // u < len, so the index is in range even after rounding.
            // At most 10⁷ bins, so u < 2³²: the u32 cast is exact here and
            // cheaper than the saturating cast to usize.
            let i = (u as u32 as usize).min(self.counts.len() - 1);
            self.counts[i] += 1;
        }
    }

    /// Adds every value of `xs`: the same counts as [`Histogram::push`] on
    /// each.
    #[inline]
    pub fn push_all(&mut self, xs: impl Iterator<Item = f64>) {
        Histogram::push_all_into([self], xs);
    }

    /// Adds every value of `xs` to each of `histograms` (one pass over the
    /// values for all of them): the same counts as [`Histogram::push`] on
    /// each ([`HistogramBlock`]).
    #[inline(always)]
    pub fn push_all_into<const K: usize>(
        histograms: [&mut Histogram; K],
        xs: impl Iterator<Item = f64>,
    ) {
        let mut block = HistogramBlock::new(histograms);
        xs.for_each(|x| block.push(x));
        block.finish();
    }

    /// Bin width.
    pub fn bin_width(&self) -> f64 {
        self.bin_width
    }

    /// Edges `(lower, upper)` of bin `i`.
    pub fn edges(&self, i: usize) -> (f64, f64) {
        (
            self.lower + i as f64 * self.bin_width,
            self.lower + (i + 1) as f64 * self.bin_width,
        )
    }

    /// Counts per bin.
    pub fn counts(&self) -> &[u64] {
        &self.counts
    }

    /// Values below the first edge.
    pub fn underflow(&self) -> u64 {
        self.underflow
    }

    /// Values at or above the last edge (and +∞).
    pub fn overflow(&self) -> u64 {
        self.overflow
    }

    /// NaN values pushed (kept out of every bin and percentile).
    pub fn not_a_number(&self) -> u64 {
        self.not_a_number
    }

    /// Every value pushed: bins + underflow + overflow + NaN.
    pub fn total(&self) -> u64 {
        self.counts.iter().sum::<u64>() + self.underflow + self.overflow + self.not_a_number
    }

    /// The `p`-th percentile (0–100) of the non-NaN values, from the
    /// histogram: the value where the cumulative count reaches `p/100·n`,
    /// interpolated linearly inside its bin. Resolution one bin width: the
    /// result lies within one bin width (plus the local spacing of the
    /// samples) of [`percentile_sorted`]. `None` when empty, when `p` is out
    /// of 0–100, or when the target falls in the underflow or overflow.
    pub fn percentile(&self, p: f64) -> Option<f64> {
        let n = self.total() - self.not_a_number;
        if n == 0 || !(0.0..=100.0).contains(&p) {
            return None;
        }
        let target = p / 100.0 * n as f64;
        let mut below = self.underflow as f64;
        if target < below || (target == below && self.underflow > 0 && p > 0.0) {
            return None;
        }
        for (i, &c) in self.counts.iter().enumerate() {
            let c = c as f64;
            if c > 0.0 && target <= below + c {
                let (lo, _) = self.edges(i);
                return Some(lo + (target - below) / c * self.bin_width);
            }
            below += c;
        }
        if self.overflow > 0 {
            None
        } else {
            // p = 100 with no overflow: the top edge of the last filled bin.
            let last = self.counts.iter().rposition(|&c| c > 0)?;
            Some(self.edges(last).1)
        }
    }

    /// Writes `lower,upper,count,fraction` rows with the caller's column names
    /// for the edges (e.g. `bin_lower_m_s2`, `bin_upper_m_s2`). The underflow
    /// and overflow rows come first and last with `-inf` / `inf` edges, so the
    /// counts in the file add up to [`Histogram::total`] less the NaN count;
    /// fractions are of that sum.
    pub fn write_csv(
        &self,
        out: &mut dyn Write,
        lower_col: &str,
        upper_col: &str,
    ) -> io::Result<()> {
        let n = (self.total() - self.not_a_number).max(1) as f64;
        writeln!(out, "{lower_col},{upper_col},count,fraction")?;
        let (first, _) = self.edges(0);
        let (_, last) = self.edges(self.counts.len() - 1);
        writeln!(
            out,
            "-inf,{first},{},{}",
            self.underflow,
            self.underflow as f64 / n
        )?;
        for (i, &c) in self.counts.iter().enumerate() {
            let (lo, hi) = self.edges(i);
            writeln!(out, "{lo},{hi},{c},{}", c as f64 / n)?;
        }
        writeln!(
            out,
            "{last},inf,{},{}",
            self.overflow,
            self.overflow as f64 / n
        )?;
        Ok(())
    }
}

/// The `p`-th percentile (0–100) of sorted, NaN-free values, interpolating
/// linearly between order statistics at rank `(n − 1)·p/100` (Hyndman &
/// Fan 1996, definition 7; numpy's default). `None` when empty or `p` is out
/// of range.
pub fn percentile_sorted(sorted: &[f64], p: f64) -> Option<f64> {
    if sorted.is_empty() || !(0.0..=100.0).contains(&p) {
        return None;
    }
    let h = (sorted.len() - 1) as f64 * p / 100.0;
    let i = h.floor() as usize;
    let f = h - i as f64;
    let lo = sorted[i];
    let hi = sorted[(i + 1).min(sorted.len() - 1)];
    Some(lo + f * (hi - lo))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;
    use rand_distr::{Distribution, Normal};

    #[test]
    fn counts_are_conserved_including_out_of_range_and_nan() {
        let mut h = Histogram::new(-1.0, 1.0, 0.1).unwrap();
        assert_eq!(h.counts().len(), 20);
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        let mut pushed = 0u64;
        for _ in 0..50_000 {
            h.push(rng.random_range(-1.5..1.5));
            pushed += 1;
        }
        for x in [
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            -1.0,
            1.0,
            0.999_999_999,
        ] {
            h.push(x);
            pushed += 1;
        }
        assert_eq!(h.total(), pushed);
        assert_eq!(h.not_a_number(), 1);
        // The edges: −1.0 is in the first bin, 1.0 overflows (bins are [lo, hi)).
        let mut g = Histogram::new(-1.0, 1.0, 0.1).unwrap();
        g.push(-1.0);
        g.push(1.0);
        assert_eq!((g.counts()[0], g.overflow()), (1, 1));
        // The CSV rows add up to every non-NaN value.
        let mut buf = Vec::new();
        h.write_csv(&mut buf, "bin_lower_m_s2", "bin_upper_m_s2")
            .unwrap();
        let text = String::from_utf8(buf).unwrap();
        let mut lines = text.lines();
        assert_eq!(
            lines.next(),
            Some("bin_lower_m_s2,bin_upper_m_s2,count,fraction")
        );
        let (mut sum, mut frac) = (0u64, 0.0);
        for l in lines {
            let cells: Vec<&str> = l.split(',').collect();
            sum += cells[2].parse::<u64>().unwrap();
            frac += cells[3].parse::<f64>().unwrap();
        }
        assert_eq!(sum, pushed - 1);
        assert!((frac - 1.0).abs() < 1e-9);
    }

    #[test]
    fn histogram_percentiles_are_within_one_bin_of_the_sorted_reference() {
        // Reference: the exact percentile of the sorted sample (definition 7).
        let mut rng = ChaCha8Rng::seed_from_u64(11);
        let normal = Normal::new(0.3, 1.2).unwrap();
        let xs: Vec<f64> = (0..200_000).map(|_| normal.sample(&mut rng)).collect();
        let mut h = Histogram::new(-8.0, 8.0, 0.05).unwrap();
        xs.iter().for_each(|&x| h.push(x));
        let mut sorted = xs.clone();
        sorted.sort_by(f64::total_cmp);
        for p in [0.0, 1.0, 5.0, 25.0, 50.0, 75.0, 95.0, 99.0, 99.9, 100.0] {
            let exact = percentile_sorted(&sorted, p).unwrap();
            let approx = h.percentile(p).unwrap();
            assert!(
                (approx - exact).abs() <= h.bin_width() + 1e-3,
                "p{p}: histogram {approx}, sorted {exact}"
            );
        }
        // Normal quantiles (analytic): median = μ, p97.5 ≈ μ + 1.959964·σ.
        assert!((percentile_sorted(&sorted, 50.0).unwrap() - 0.3).abs() < 0.02);
        assert!((percentile_sorted(&sorted, 97.5).unwrap() - (0.3 + 1.959964 * 1.2)).abs() < 0.03);
    }

    #[test]
    fn percentile_sorted_follows_definition_7_on_a_hand_example() {
        // numpy.percentile([1, 2, 3, 4], 40) = 1 + 0.4·3·(2 − 1)... = 2.2
        // (rank (n − 1)·p = 1.2, between 2 and 3).
        let v = [1.0, 2.0, 3.0, 4.0];
        assert!((percentile_sorted(&v, 40.0).unwrap() - 2.2).abs() < 1e-12);
        assert_eq!(percentile_sorted(&v, 0.0), Some(1.0));
        assert_eq!(percentile_sorted(&v, 100.0), Some(4.0));
        assert_eq!(percentile_sorted(&[], 50.0), None);
    }

    #[test]
    fn percentiles_outside_the_range_are_unknown() {
        let mut h = Histogram::new(0.0, 1.0, 0.1).unwrap();
        for x in [-5.0, 0.5, 0.5, 7.0] {
            h.push(x);
        }
        assert_eq!(h.percentile(10.0), None);
        assert_eq!(h.percentile(90.0), None);
        assert!(h.percentile(50.0).is_some());
    }

    #[test]
    fn the_largest_allowed_histogram_bins_values_at_their_floor_index() {
        // 10^7 unit bins (the limit): the value k + 0.5 belongs to bin k by
        // the definition of a bin [k, k+1) — checked near both ends, where
        // the index cast would first go wrong.
        let mut h = Histogram::new(0.0, 1e7, 1.0).unwrap();
        let last = h.counts().len() - 1;
        assert_eq!(last, 9_999_999);
        for k in [0usize, 1, 4_294_967 % last, last - 1, last] {
            h.push(k as f64 + 0.5);
        }
        h.push(1e7); // the upper edge is outside the last bin
        for k in [0usize, 1, 4_294_967 % last, last - 1, last] {
            assert_eq!(h.counts()[k], 1, "bin {k}");
        }
        assert_eq!(h.overflow(), 1);
        assert_eq!(h.total(), 6);
    }

    #[test]
    fn refuses_bad_parameters() {
        assert!(Histogram::new(0.0, 1.0, 0.0).is_err());
        assert!(Histogram::new(1.0, 1.0, 0.1).is_err());
        assert!(Histogram::new(0.0, 1e9, 1e-3).is_err());
    }

    #[test]
    fn a_block_push_counts_signed_zeros_and_edges_as_pushing_one_by_one() {
        // Reference: `push` value by value. A range starting at 0 (where −0
        // falls in bin 0 and fails the block loop's integer test), values on
        // and a rounding unit either side of the edges, subnormals of both
        // signs (a negative one times the bins per unit can round to −0),
        // ±∞ and NaN.
        let mut data = vec![-0.0, 0.0, -1e-320, 1e-320, f64::NAN, f64::INFINITY];
        data.extend([f64::NEG_INFINITY, 1.0, -1.0, 2.0, 0.5, -5e-324]);
        for k in 0..=20 {
            let edge = k as f64 * 0.05;
            data.extend([edge, edge.next_up(), edge.next_down()]);
        }
        for per in [0.05, 1e300] {
            let mut one = Histogram::new(0.0, 1.0, per).unwrap();
            let mut all = one.clone();
            data.iter().for_each(|&x| one.push(x));
            all.push_all(data.iter().copied());
            assert_eq!(all.counts(), one.counts(), "bin {per}");
            let outside = |h: &Histogram| (h.underflow(), h.overflow(), h.not_a_number());
            assert_eq!(outside(&all), outside(&one), "bin {per}");
            assert!(one.counts()[0] >= 2, "{:?}", one.counts());
        }
    }

    #[test]
    fn a_block_push_counts_as_pushing_one_by_one() {
        // Reference: `push` value by value; the awkward series (NaN, ±∞,
        // values on bin edges) scaled so that some values fall outside.
        let data: Vec<f64> = crate::stats::awkward_series(20_000, 5)
            .into_iter()
            .map(|x| x * 0.3)
            .collect();
        for block in [1, 3, 1024, data.len()] {
            let mut one = Histogram::new(-0.5, 0.5, 0.01).unwrap();
            let mut all = one.clone();
            data.iter().for_each(|&x| one.push(x));
            data.chunks(block)
                .for_each(|c| all.push_all(c.iter().copied()));
            assert_eq!(all.counts(), one.counts(), "block {block}");
            let outside = |h: &Histogram| (h.underflow(), h.overflow(), h.not_a_number());
            assert_eq!(outside(&all), outside(&one), "block {block}");
            assert!(one.underflow() > 0 && one.overflow() > 0 && one.not_a_number() > 0);
            // Several histograms in one pass: each as if alone.
            let mut other_one = Histogram::new(-2.0, 0.1, 0.003).unwrap();
            let mut other_all = other_one.clone();
            data.iter().for_each(|&x| other_one.push(x));
            let mut again = Histogram::new(-0.5, 0.5, 0.01).unwrap();
            for c in data.chunks(block) {
                Histogram::push_all_into([&mut again, &mut other_all], c.iter().copied());
            }
            for (a, o) in [(&again, &one), (&other_all, &other_one)] {
                assert_eq!(a.counts(), o.counts(), "block {block}");
                assert_eq!(outside(a), outside(o), "block {block}");
            }
        }
    }
}
