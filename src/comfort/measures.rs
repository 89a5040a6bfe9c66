//! The ISO 2631-1 measures of one acceleration channel, computed while the
//! samples stream past: basic r.m.s. `aw` (clause 6.1), MTVV from the 1 s
//! running r.m.s. (6.3.1, eq. 4–5), VDV (6.3.2, eq. 6), crest factor (6.2.1)
//! and the ratios that advise the additional methods (6.3.3).
//!
//! The running r.m.s. is the *linear* form of eq. 4, integrated over the
//! last τ = 1 s: a ring buffer of `round(fs·1 s)` squared weighted samples
//! (8 kB at 1000 Hz). The linear form was chosen over the exponential one
//! because it is exactly the "1 s running r.m.s." of the documented
//! interface (`profiles/reference.md`), has a closed form for bursts (used in the tests) and needs no
//! choice of how to start the exponential integrator. Memory is that buffer
//! plus a few sums, whatever the record length.

use serde::Serialize;

use super::{ComfortError, Weighting, WeightingFilter};
use crate::lanes::F2;

/// Integration time of the running r.m.s., s (ISO 2631-1 6.3.1: τ = 1 s for MTVV).
pub const RUNNING_RMS_TAU_S: f64 = 1.0;
/// Crest factor up to which the basic method normally suffices (ISO 2631-1
/// 6.2.1: 9; from memory).
pub const CREST_FACTOR_LIMIT: f64 = 9.0;
/// MTVV/aw above which the additional methods apply (ISO 2631-1 6.3.3, eq. 7).
pub const MTVV_RATIO_LIMIT: f64 = 1.5;
/// VDV/(aw·T^¼) above which the additional methods apply (ISO 2631-1 6.3.3, eq. 8).
pub const VDV_RATIO_LIMIT: f64 = 1.75;

/// The evaluation of one channel. Units: m/s², VDV m/s^1.75, s.
#[derive(Debug, Clone, Serialize)]
pub struct Measures {
    /// The weighting applied ("Wk", …, "none").
    pub weighting: String,
    /// R.m.s. of the unweighted record as given (mean not removed), m/s².
    pub accel_rms: f64,
    /// R.m.s. of the weighted acceleration, m/s² (ISO 2631-1 eq. 1).
    pub aw: f64,
    /// Vibration dose value `(∫ aw⁴ dt)^¼`, m/s^1.75 (eq. 6).
    pub vdv: f64,
    /// Maximum transient vibration value: largest 1 s running r.m.s., m/s².
    pub mtvv: f64,
    /// Peak |weighted acceleration| / aw (0 when aw is 0).
    pub crest_factor: f64,
    /// Peak |weighted acceleration|, m/s².
    pub peak_weighted: f64,
    /// Record duration, samples / sample rate, s.
    pub duration_s: f64,
    /// MTVV / aw (eq. 7; 0 when aw is 0).
    pub mtvv_ratio: f64,
    /// VDV / (aw·T^¼) (eq. 8; 0 when aw is 0).
    pub vdv_ratio: f64,
    /// True when the crest factor exceeds 9 or a ratio exceeds its limit:
    /// report MTVV and VDV beside aw (ISO 2631-1 6.3.3).
    pub additional_methods_advised: bool,
}

/// Streaming evaluation of one acceleration channel.
#[derive(Debug, Clone)]
pub struct Meter {
    filter: WeightingFilter,
    dt_s: f64,
    // Running r.m.s.: ring of squared weighted samples over the last τ.
    ring: Vec<f64>,
    sums: Sums,
}

/// The scalar state of a [`Meter`] besides its filter and ring: `Copy`, so
/// [`Meter::push_all`] works on a local copy the compiler keeps in registers.
#[derive(Debug, Clone, Copy, Default)]
struct Sums {
    n: u64,
    sum_x2: f64,
    sum_w2: f64,
    sum_w4: f64,
    peak_w: f64,
    ring_pos: usize,
    ring_sum: f64,
    // Largest window sum seen (divided by the window length only in
    // `finish`: division by a positive constant keeps the order, so the
    // maximum of the quotients is the quotient of the maximum).
    max_window_sum: f64,
}

impl Sums {
    /// Takes one sample `x` and its weighted value `w` (m/s²).
    #[inline(always)]
    fn add(&mut self, ring: &mut [f64], x: f64, w: f64) {
        let w2 = w * w;
        self.n += 1;
        self.sum_x2 += x * x;
        self.sum_w2 += w2;
        self.sum_w4 += w2 * w2;
        // Branches rather than `f64::max`: a new peak is rare, and a NaN
        // compares false and is skipped as `max` would skip it.
        if w.abs() > self.peak_w {
            self.peak_w = w.abs();
        }

        let len = ring.len();
        let old = std::mem::replace(&mut ring[self.ring_pos], w2);
        self.ring_pos += 1;
        self.ring_sum += w2 - old;
        if self.ring_pos == len {
            self.ring_pos = 0;
            // Re-add the window once per window length (each time the ring
            // wraps) so subtraction rounding cannot accumulate over a long
            // record.
            self.ring_sum = ring.iter().sum();
        }
        if self.n >= len as u64 {
            // The maximum is never negative, so a sum rounded below zero
            // (or NaN) leaves it as `max(sum, 0)` would.
            if self.ring_sum > self.max_window_sum {
                self.max_window_sum = self.ring_sum;
            }
        }
    }
}

/// Two meters' [`Sums`] side by side, for [`Meter::push_all_pair`]: the
/// shared count and ring position, the rest as lanes.
struct PairSums {
    n: u64,
    sum_x2: F2,
    sum_w2: F2,
    sum_w4: F2,
    peak_w: F2,
    ring_pos: usize,
    ring_sum: F2,
    max_window_sum: F2,
}

impl PairSums {
    fn of(a: &Sums, b: &Sums) -> Self {
        let pair = |f: fn(&Sums) -> f64| F2::new(f(a), f(b));
        PairSums {
            n: a.n,
            sum_x2: pair(|s| s.sum_x2),
            sum_w2: pair(|s| s.sum_w2),
            sum_w4: pair(|s| s.sum_w4),
            peak_w: pair(|s| s.peak_w),
            ring_pos: a.ring_pos,
            ring_sum: pair(|s| s.ring_sum),
            max_window_sum: pair(|s| s.max_window_sum),
        }
    }

    fn store(&self, a: &mut Sums, b: &mut Sums) {
        for (lane, s) in [a, b].into_iter().enumerate() {
            s.n = self.n;
            s.sum_x2 = self.sum_x2.lanes()[lane];
            s.sum_w2 = self.sum_w2.lanes()[lane];
            s.sum_w4 = self.sum_w4.lanes()[lane];
            s.peak_w = self.peak_w.lanes()[lane];
            s.ring_pos = self.ring_pos;
            s.ring_sum = self.ring_sum.lanes()[lane];
            s.max_window_sum = self.max_window_sum.lanes()[lane];
        }
    }

    /// [`Sums::add`] on both lanes (the same operations in the same order;
    /// its two branches on a new maximum are [`F2::greater_or`]).
    ///
    /// # Safety
    /// Both rings have one length, above `ring_pos` (which this keeps so).
    #[inline(always)]
    unsafe fn add(&mut self, ring_a: &mut [f64], ring_b: &mut [f64], x: F2, w: F2) {
        let w2 = w * w;
        self.n += 1;
        self.sum_x2 = self.sum_x2 + x * x;
        self.sum_w2 = self.sum_w2 + w2;
        self.sum_w4 = self.sum_w4 + w2 * w2;
        self.peak_w = w.abs().greater_or(self.peak_w);

        let len = ring_a.len();
        let [wa, wb] = w2.lanes();
        // SAFETY: `ring_pos < len` (the caller's promise), and it wraps to 0
        // on reaching `len` below.
        let old = unsafe {
            F2::new(
                std::mem::replace(ring_a.get_unchecked_mut(self.ring_pos), wa),
                std::mem::replace(ring_b.get_unchecked_mut(self.ring_pos), wb),
            )
        };
        self.ring_pos += 1;
        self.ring_sum = self.ring_sum + (w2 - old);
        if self.ring_pos == len {
            self.ring_pos = 0;
            self.ring_sum = F2::new(ring_a.iter().sum(), ring_b.iter().sum());
        }
        if self.n >= len as u64 {
            self.max_window_sum = self.ring_sum.greater_or(self.max_window_sum);
        }
    }
}

impl Meter {
    /// A meter for weighting `w` at `sample_rate_hz` (refused below the
    /// weighting's minimum rate).
    pub fn new(w: Weighting, sample_rate_hz: f64) -> Result<Self, ComfortError> {
        let filter = WeightingFilter::new(w, sample_rate_hz)?;
        let window = ((sample_rate_hz * RUNNING_RMS_TAU_S).round() as usize).max(1);
        Ok(Meter {
            filter,
            dt_s: 1.0 / sample_rate_hz,
            ring: vec![0.0; window],
            sums: Sums::default(),
        })
    }

    /// Adds one sample, m/s².
    #[inline]
    pub fn push(&mut self, accel_m_s2: f64) {
        let w = self.filter.process(accel_m_s2);
        self.sums.add(&mut self.ring, accel_m_s2, w);
    }

    /// Adds every sample of `accel_m_s2` in order: the same as calling
    /// [`Meter::push`] on each, bit for bit, with the filter state and the
    /// sums held in locals for the whole loop.
    #[inline(always)]
    pub fn push_all(&mut self, accel_m_s2: impl Iterator<Item = f64>) {
        let mut sums = self.sums;
        let ring = &mut self.ring[..];
        self.filter
            .process_all(accel_m_s2, |x, w| sums.add(ring, x, w));
        self.sums = sums;
    }

    /// [`Meter::push_all`] on two meters at once, `a` taking lane 0 of each
    /// pair of `accel_m_s2` and `b` lane 1: the same measures on each, bit
    /// for bit. Two meters of one weighting and rate that have taken the
    /// same number of samples (two seats) run side by side, one two-lane
    /// instruction doing both; any others run one after the other.
    #[inline(always)]
    pub fn push_all_pair(
        a: &mut Meter,
        b: &mut Meter,
        accel_m_s2: impl Iterator<Item = [f64; 2]> + Clone,
    ) {
        let in_step = a.filter.same_design(&b.filter)
            && a.ring.len() == b.ring.len()
            && a.sums.n == b.sums.n
            && a.sums.ring_pos == b.sums.ring_pos
            && a.sums.ring_pos < a.ring.len();
        if !in_step {
            a.push_all(accel_m_s2.clone().map(|x| x[0]));
            b.push_all(accel_m_s2.map(|x| x[1]));
            return;
        }
        let mut sums = PairSums::of(&a.sums, &b.sums);
        let (ring_a, ring_b) = (&mut a.ring[..], &mut b.ring[..]);
        WeightingFilter::process_all_pair(&mut a.filter, &mut b.filter, accel_m_s2, |x, w| {
            // SAFETY: the rings have one length, above `ring_pos` (checked
            // in `in_step`).
            unsafe { sums.add(ring_a, ring_b, x, w) }
        });
        sums.store(&mut a.sums, &mut b.sums);
    }

    /// The measures so far. A record shorter than the 1 s window has no full
    /// window: its MTVV is then the r.m.s. of the whole record (= aw).
    pub fn finish(&self) -> Measures {
        let n = self.sums.n.max(1) as f64;
        let duration_s = self.sums.n as f64 * self.dt_s;
        let aw = (self.sums.sum_w2 / n).sqrt();
        let vdv = (self.sums.sum_w4 * self.dt_s).powf(0.25);
        let mtvv = if self.sums.n >= self.ring.len() as u64 {
            (self.sums.max_window_sum / self.ring.len() as f64).sqrt()
        } else {
            aw
        };
        let ratio = |num: f64, den: f64| if den > 0.0 { num / den } else { 0.0 };
        let crest_factor = ratio(self.sums.peak_w, aw);
        let mtvv_ratio = ratio(mtvv, aw);
        let vdv_ratio = ratio(vdv, aw * duration_s.powf(0.25));
        Measures {
            weighting: self.filter.weighting().to_string(),
            accel_rms: (self.sums.sum_x2 / n).sqrt(),
            aw,
            vdv,
            mtvv,
            crest_factor,
            peak_weighted: self.sums.peak_w,
            duration_s,
            mtvv_ratio,
            vdv_ratio,
            additional_methods_advised: crest_factor > CREST_FACTOR_LIMIT
                || mtvv_ratio > MTVV_RATIO_LIMIT
                || vdv_ratio > VDV_RATIO_LIMIT,
        }
    }

    /// Number of samples pushed.
    pub fn samples(&self) -> u64 {
        self.sums.n
    }

    /// Adds `count` samples of zero acceleration, giving what `count` calls
    /// of `push(0.0)` would. While the meter has seen nothing but zeros (its
    /// filter at rest, every sum zero) zeros change only the sample count and
    /// the ring position, so they are taken without filtering: a seat at
    /// height 0 has a fore-aft acceleration of +0 throughout, and filtering a
    /// million zeros per run cost about a sixth of the evaluators' time.
    pub fn push_zeros(&mut self, count: u64) {
        let at_rest = self.filter.is_at_rest()
            && self.sums.sum_x2 == 0.0
            && self.sums.sum_w2 == 0.0
            && self.sums.sum_w4 == 0.0
            && self.sums.peak_w == 0.0
            && self.sums.ring_sum == 0.0
            && self.sums.max_window_sum == 0.0;
        if !at_rest {
            (0..count).for_each(|_| self.push(0.0));
            return;
        }
        let len = self.ring.len() as u64;
        self.sums.n += count;
        self.sums.ring_pos = ((self.sums.ring_pos as u64 + count) % len) as usize;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn run(w: Weighting, fs: f64, n: usize, x: impl Fn(f64) -> f64) -> Measures {
        let mut m = Meter::new(w, fs).unwrap();
        for i in 0..n {
            m.push(x(i as f64 / fs));
        }
        m.finish()
    }

    fn rel(a: f64, b: f64) -> f64 {
        (a / b - 1.0).abs()
    }

    /// `push_zeros` must be indistinguishable from pushing the zeros: at
    /// rest (the fast path) and after a signal (the slow path).
    #[test]
    fn pushing_zeros_in_bulk_equals_pushing_them_one_by_one() {
        let fs = 1000.0;
        for signal in [0usize, 1500] {
            let mut bulk = Meter::new(Weighting::Wd, fs).unwrap();
            let mut single = bulk.clone();
            for i in 0..signal {
                let x = (i as f64 * 0.037).sin();
                bulk.push(x);
                single.push(x);
            }
            bulk.push_zeros(2345);
            (0..2345).for_each(|_| single.push(0.0));
            let (b, s) = (bulk.finish(), single.finish());
            assert_eq!(bulk.samples(), single.samples());
            for (x, y) in [
                (b.aw, s.aw),
                (b.vdv, s.vdv),
                (b.mtvv, s.mtvv),
                (b.crest_factor, s.crest_factor),
                (b.accel_rms, s.accel_rms),
                (b.duration_s, s.duration_s),
            ] {
                assert_eq!(x.to_bits(), y.to_bits(), "signal {signal}: {x} vs {y}");
            }
        }
    }

    /// Every figure of a meter's measures, as bits.
    fn measure_bits(m: &Meter) -> Vec<u64> {
        let r = m.finish();
        let figures = [
            r.accel_rms,
            r.aw,
            r.vdv,
            r.mtvv,
            r.crest_factor,
            r.peak_weighted,
            r.duration_s,
            r.mtvv_ratio,
            r.vdv_ratio,
        ];
        let mut v: Vec<u64> = figures.iter().map(|x| x.to_bits()).collect();
        v.push(m.samples());
        v.push(r.additional_methods_advised as u64);
        v
    }

    #[test]
    fn a_block_push_gives_the_one_by_one_measures_bit_for_bit() {
        // Reference: `push` sample by sample, for weightings with 0, 3 and 4
        // filter stages; a ride-like signal (several full 1 s windows, so the
        // running r.m.s. re-adds its ring), in blocks that do and do not
        // divide the window.
        let fs = 1000.0;
        let signal: Vec<f64> = (0..7500)
            .map(|i| {
                let t = i as f64 / fs;
                (2.0 * PI * 1.3 * t).sin() + 0.4 * (2.0 * PI * 11.0 * t).sin() * (t * 0.7).cos()
            })
            .collect();
        for w in [
            Weighting::Unweighted,
            Weighting::Wd,
            Weighting::Wk,
            Weighting::Wf,
        ] {
            let mut one = Meter::new(w, fs).unwrap();
            signal.iter().for_each(|&x| one.push(x));
            for block in [1, 7, 1000, 1024, signal.len()] {
                let mut all = Meter::new(w, fs).unwrap();
                signal
                    .chunks(block)
                    .for_each(|c| all.push_all(c.iter().copied()));
                assert_eq!(measure_bits(&all), measure_bits(&one), "{w}, block {block}");
            }
        }
    }

    #[test]
    fn two_meters_side_by_side_give_the_one_by_one_measures_bit_for_bit() {
        // Reference: `push` sample by sample on each meter. Two different
        // signals (one with a NaN and a burst that sets the peak), every
        // weighting's stage count, blocks that do and do not divide the
        // window, and meters out of step (different weightings, different
        // sample counts), which take the one-at-a-time path.
        let fs = 1000.0;
        let a: Vec<f64> = (0..5300)
            .map(|i| (i as f64 * 0.0081).sin() + 0.3 * (i as f64 * 0.071).cos())
            .collect();
        let mut b: Vec<f64> = (0..5300).map(|i| 0.7 * (i as f64 * 0.013).cos()).collect();
        b[2200] = f64::NAN;
        b[3100] = 40.0;
        let pairs = |n: usize| -> Vec<[f64; 2]> { (0..n).map(|i| [a[i], b[i]]).collect() };
        let both = pairs(a.len());
        for (wa, wb, skip) in [
            (Weighting::Wk, Weighting::Wk, 0),
            (Weighting::Wd, Weighting::Wd, 0),
            (Weighting::Unweighted, Weighting::Unweighted, 0),
            (Weighting::Wk, Weighting::Wd, 0),
            (Weighting::Wk, Weighting::Wk, 3),
        ] {
            let mut one = (Meter::new(wa, fs).unwrap(), Meter::new(wb, fs).unwrap());
            a.iter().for_each(|&x| one.0.push(x));
            b.iter().skip(skip).for_each(|&x| one.1.push(x));
            for block in [1, 7, 1000, 1024, both.len()] {
                let mut two = (Meter::new(wa, fs).unwrap(), Meter::new(wb, fs).unwrap());
                // A meter `skip` samples behind the other.
                two.0.push_all(a[..skip].iter().copied());
                let rest = &both[skip..];
                for c in rest.chunks(block) {
                    Meter::push_all_pair(&mut two.0, &mut two.1, c.iter().copied());
                }
                let what = format!("{wa} {wb} skip {skip} block {block}");
                assert_eq!(measure_bits(&two.0), measure_bits(&one.0), "{what}");
                assert_eq!(measure_bits(&two.1), measure_bits(&one.1), "{what}");
            }
        }
    }

    #[test]
    fn aw_of_a_sine_is_the_table_factor_over_root_two() {
        // ISO 2631-1 Table 3 (Wk, nominal centres):
        // a sine of amplitude 1 m/s² has aw = factor/√2; 3 % allowed (nominal vs
        // exact centre, table rounding, start-up transient).
        let table = [
            (0.5, 0.418),
            (1.0, 0.482),
            (2.0, 0.531),
            (4.0, 0.967),
            (5.0, 1.039),
            (6.3, 1.054),
            (8.0, 1.036),
            (16.0, 0.768),
        ];
        let fs = 1000.0;
        for (f, factor) in table {
            let m = run(Weighting::Wk, fs, (120.0 * fs) as usize, |t| {
                (2.0 * PI * f * t).sin()
            });
            let want = factor / 2f64.sqrt();
            assert!(rel(m.aw, want) < 0.03, "{f} Hz: aw {} vs {want}", m.aw);
            // Unweighted r.m.s. of a unit sine: 1/√2 (analytic).
            assert!(rel(m.accel_rms, 1.0 / 2f64.sqrt()) < 0.01);
        }
    }

    #[test]
    fn vdv_of_a_sine_is_the_analytic_value() {
        // ∫₀ᵀ (A sin ωt)⁴ dt = 3T/8·A⁴ over whole periods, so
        // VDV = (3T/8)^¼·A_w (analytic). Unweighted: exact to sampling;
        // Wk at 8 Hz: A_w = |Wk(8 Hz)| from the analog definition, 1.5 %
        // (start-up transient, 0.1 % filter error).
        let fs = 1000.0;
        let (f, a, t) = (8.0, 2.0, 60.0);
        let n = (t * fs) as usize;
        let m = run(Weighting::Unweighted, fs, n, |x| {
            a * (2.0 * PI * f * x).sin()
        });
        let want = (3.0 * t / 8.0).powf(0.25) * a;
        assert!(rel(m.vdv, want) < 1e-6, "{} vs {want}", m.vdv);
        // Sine: VDV/(aw·T^¼) = (3/8)^¼·√2 ≈ 1.107 (analytic).
        assert!(rel(m.vdv_ratio, (3.0f64 / 8.0).powf(0.25) * 2f64.sqrt()) < 1e-6);
        let m = run(Weighting::Wk, fs, n, |x| a * (2.0 * PI * f * x).sin());
        let want = (3.0 * t / 8.0).powf(0.25) * a * Weighting::Wk.magnitude(f);
        assert!(rel(m.vdv, want) < 0.015, "{} vs {want}", m.vdv);
    }

    #[test]
    fn mtvv_of_a_burst_is_the_analytic_value() {
        // A sine burst of amplitude A lasting d inside silence: with d ≥ 1 s
        // the fullest 1 s window holds only burst, MTVV = A/√2; with d < 1 s,
        // MTVV = A/√2·√(d/1 s); aw over the record of length T is
        // A/√2·√(d/T) (analytic, whole periods).
        let fs = 1000.0;
        let (f, a, t) = (10.0, 3.0, 20.0);
        for d in [0.5, 3.0] {
            let burst = |x: f64| {
                if (5.0..5.0 + d).contains(&x) {
                    a * (2.0 * PI * f * (x - 5.0)).sin()
                } else {
                    0.0
                }
            };
            let m = run(Weighting::Unweighted, fs, (t * fs) as usize, burst);
            let want = a / 2f64.sqrt() * (d.min(1.0)).sqrt();
            assert!(
                rel(m.mtvv, want) < 1e-3,
                "d = {d}: MTVV {} vs {want}",
                m.mtvv
            );
            assert!(rel(m.aw, a / 2f64.sqrt() * (d / t).sqrt()) < 1e-3);
            assert!(
                m.additional_methods_advised,
                "a burst in silence is transient"
            );
            // Through Wk at 10 Hz the burst keeps its shape apart from the
            // filter's start-up, so MTVV ≈ |Wk(10)|·A/√2·√min(d,1): 3 %.
            let m = run(Weighting::Wk, fs, (t * fs) as usize, burst);
            let want = want * Weighting::Wk.magnitude(f);
            assert!(
                rel(m.mtvv, want) < 0.03,
                "Wk d = {d}: MTVV {} vs {want}",
                m.mtvv
            );
        }
    }

    #[test]
    fn crest_factor_of_a_single_shock_is_root_n() {
        // One sample of height P among N samples: aw = P/√N, peak P, so the
        // crest factor is √N (analytic).
        let fs = 500.0;
        let n = 10_000;
        let m = run(Weighting::Unweighted, fs, n, |t| {
            if (t - 7.0).abs() < 1e-9 { 5.0 } else { 0.0 }
        });
        assert!(
            rel(m.crest_factor, (n as f64).sqrt()) < 1e-9,
            "{}",
            m.crest_factor
        );
        assert_eq!(m.peak_weighted, 5.0);
        assert!(m.additional_methods_advised);
        // A half-sine shock (10 ms, 20 m/s²) on a 0.5 m/s² 5 Hz ride through Wk:
        // crest factor well above 9 (ISO 2631-1 6.2.1 threshold, from memory).
        let m = run(Weighting::Wk, 1000.0, 60_000, |t| {
            let shock = if (30.0..30.01).contains(&t) {
                20.0 * (PI * (t - 30.0) / 0.01).sin()
            } else {
                0.0
            };
            0.5 * (2.0 * PI * 5.0 * t).sin() + shock
        });
        assert!(m.crest_factor > 9.0, "{}", m.crest_factor);
        assert!(rel(m.crest_factor, m.peak_weighted / m.aw) < 1e-12);
    }

    #[test]
    fn a_record_shorter_than_the_window_reports_aw_as_mtvv() {
        let m = run(Weighting::Unweighted, 1000.0, 300, |t| {
            (2.0 * PI * 10.0 * t).sin()
        });
        assert_eq!(m.mtvv, m.aw);
        assert!((m.duration_s - 0.3).abs() < 1e-12);
    }

    #[test]
    fn silence_gives_zeros_not_nan() {
        let m = run(Weighting::Wk, 1000.0, 3000, |_| 0.0);
        for v in [
            m.aw,
            m.vdv,
            m.mtvv,
            m.crest_factor,
            m.mtvv_ratio,
            m.vdv_ratio,
        ] {
            assert_eq!(v, 0.0);
        }
        assert!(!m.additional_methods_advised);
    }
}
