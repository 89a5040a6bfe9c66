//! Dormand–Prince 5(4) with its continuous extension, written for this
//! crate so that the caller controls every step end.
//!
//! Coefficients, error estimate, step-size controller (PI, β = 0.04) and the
//! order-4 dense output are those of Hairer, Nørsett & Wanner, *Solving
//! Ordinary Differential Equations I*, 2nd ed., §II.4–II.6 and their DOPRI5
//! code. What differs from a general-purpose driver is the interface:
//!
//! - [`Dopri5::step`] takes one accepted step that ends *at or before* a
//!   limit the caller gives and lands exactly on it when it reaches it, so
//!   the caller can put step ends on the road's sample points (where the
//!   piecewise-linear road has kinks) and on nothing else;
//! - every accepted step hands back its interpolant ([`DenseStep`]), which
//!   is only ever evaluated inside its own step (0 ≤ θ ≤ 1). Evaluating a
//!   step's interpolant beyond its end is what once made restarted runs
//!   blow up, so [`DenseStep::at`] refuses to.
//!
//! The state is a fixed-size array, so nothing here allocates.

/// A system `ẏ = f(t, y)`.
pub(crate) trait Derivative<const N: usize> {
    /// Writes `f(t, y)` into `dy`.
    fn derivative(&self, t: f64, y: &[f64; N], dy: &mut [f64; N]);
}

// Butcher tableau (Hairer, Nørsett & Wanner, Table II.5.2).
const C2: f64 = 1.0 / 5.0;
const C3: f64 = 3.0 / 10.0;
const C4: f64 = 4.0 / 5.0;
const C5: f64 = 8.0 / 9.0;
const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
const A71: f64 = 35.0 / 384.0;
const A73: f64 = 500.0 / 1113.0;
const A74: f64 = 125.0 / 192.0;
const A75: f64 = -2187.0 / 6784.0;
const A76: f64 = 11.0 / 84.0;
// Error coefficients: 5th-order weights minus the embedded 4th-order ones.
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;
// Dense output (Hairer's DOPRI5, subroutine CONTD5).
const D1: f64 = -12715105075.0 / 11282082432.0;
const D3: f64 = 87487479700.0 / 32700410799.0;
const D4: f64 = -10690763975.0 / 1880347072.0;
const D5: f64 = 701980252875.0 / 199316789632.0;
const D6: f64 = -1453857185.0 / 822651844.0;
const D7: f64 = 69997945.0 / 29380423.0;

// Step-size control (DOPRI5 defaults).
const SAFETY: f64 = 0.9;
const BETA: f64 = 0.04;
const ALPHA: f64 = 0.2 - BETA * 0.75;
/// Largest shrink per step: h_new ≥ h / 5.
const SHRINK_LIMIT: f64 = 5.0;
/// Largest growth per step: h_new ≤ 10 h.
const GROW_LIMIT: f64 = 0.1;

/// Tolerances and limits of one integration.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Settings {
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance (state units).
    pub atol: f64,
    /// Largest step, s.
    pub h_max: f64,
}

/// Why a step could not be taken.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum StepFailure {
    /// The step needed fell below what floating point can resolve at `t`.
    Underflow { t: f64, h: f64 },
    /// The state or its derivative stopped being finite.
    NonFinite { t: f64 },
}

/// One accepted step and its interpolant.
#[derive(Debug, Clone, Copy)]
pub(crate) struct DenseStep<const N: usize> {
    /// Start of the step.
    pub t0: f64,
    /// End of the step (exactly the caller's limit when it was reached).
    pub t1: f64,
    r: [[f64; N]; 5],
}

impl<const N: usize> DenseStep<N> {
    /// The interpolated state at `t` (order 4), for `t0 ≤ t ≤ t1`.
    ///
    /// # Panics
    /// When `t` lies outside the step by more than rounding: extrapolating
    /// an interpolant is never right, so it is a bug in the caller.
    #[inline]
    pub fn at(&self, t: f64) -> [f64; N] {
        let h = self.t1 - self.t0;
        let slack = 1e-9 * h.abs().max(f64::MIN_POSITIVE);
        assert!(
            t >= self.t0 - slack && t <= self.t1 + slack,
            "dense output asked at t = {t} outside its step [{}, {}]",
            self.t0,
            self.t1
        );
        let theta = if h > 0.0 {
            ((t - self.t0) / h).clamp(0.0, 1.0)
        } else {
            1.0
        };
        let theta1 = 1.0 - theta;
        let r = &self.r;
        std::array::from_fn(|i| {
            r[0][i] + theta * (r[1][i] + theta1 * (r[2][i] + theta * (r[3][i] + theta1 * r[4][i])))
        })
    }
}

/// Counters of one integration.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(crate) struct Counts {
    /// Accepted steps.
    pub accepted: u64,
    /// Rejected steps.
    pub rejected: u64,
}

/// The integrator's state between steps.
#[derive(Debug, Clone)]
pub(crate) struct Dopri5<const N: usize> {
    settings: Settings,
    t: f64,
    y: [f64; N],
    /// `f(t, y)`, kept between steps (first same as last).
    k1: [f64; N],
    /// Step to try next.
    h: f64,
    /// Previous accepted error (the PI controller's memory).
    err_old: f64,
    /// The last attempt was rejected.
    rejected_last: bool,
    counts: Counts,
}

impl<const N: usize> Dopri5<N> {
    /// Starts at `(t0, y0)`, choosing the first step as DOPRI5's `HINIT`.
    pub fn new(system: &impl Derivative<N>, t0: f64, y0: [f64; N], settings: Settings) -> Self {
        let mut me = Dopri5 {
            settings,
            t: t0,
            y: y0,
            k1: [0.0; N],
            h: 0.0,
            err_old: 1e-4,
            rejected_last: false,
            counts: Counts::default(),
        };
        me.restart(system);
        me
    }

    /// Current time.
    pub fn time(&self) -> f64 {
        self.t
    }

    /// Current state.
    #[cfg(test)]
    pub fn state(&self) -> &[f64; N] {
        &self.y
    }

    /// Steps taken so far.
    pub fn counts(&self) -> Counts {
        self.counts
    }

    /// Forgets the step history and chooses a new first step from the
    /// current state, as at the start. Needed when the right-hand side
    /// changes at the current time (a new road segment): the kept `f(t, y)`
    /// belongs to the old one.
    pub fn restart(&mut self, system: &impl Derivative<N>) {
        system.derivative(self.t, &self.y, &mut self.k1);
        self.h = self.initial_step(system);
        self.err_old = 1e-4;
        self.rejected_last = false;
    }

    /// Re-evaluates `f(t, y)` for a right-hand side that changed at the
    /// current time, keeping the step size (cheaper than [`Self::restart`];
    /// the controller adapts if the new piece is harder).
    pub fn refresh(&mut self, system: &impl Derivative<N>) {
        system.derivative(self.t, &self.y, &mut self.k1);
    }

    /// DOPRI5's `HINIT` (Hairer, Nørsett & Wanner, §II.4): an explicit Euler
    /// step guess from `‖y‖/‖f‖`, refined by an estimate of `‖f′‖`.
    fn initial_step(&self, system: &impl Derivative<N>) -> f64 {
        let Settings { rtol, atol, h_max } = self.settings;
        let scale = |i: usize| atol + rtol * self.y[i].abs();
        let norm = |v: &[f64; N]| {
            (v.iter()
                .enumerate()
                .map(|(i, x)| (x / scale(i)).powi(2))
                .sum::<f64>()
                / N as f64)
                .sqrt()
        };
        let d0 = norm(&self.y);
        let d1 = norm(&self.k1);
        let h0 = if d0 < 1e-5 || d1 < 1e-5 {
            1e-6
        } else {
            0.01 * d0 / d1
        }
        .min(h_max);
        let y1: [f64; N] = std::array::from_fn(|i| self.y[i] + h0 * self.k1[i]);
        let mut f1 = [0.0; N];
        system.derivative(self.t + h0, &y1, &mut f1);
        let diff: [f64; N] = std::array::from_fn(|i| f1[i] - self.k1[i]);
        let d2 = norm(&diff) / h0;
        let h1 = if d1.max(d2) <= 1e-15 {
            (h0 * 1e-3).max(1e-6)
        } else {
            (0.01 / d1.max(d2)).powf(0.2)
        };
        (100.0 * h0).min(h1).min(h_max)
    }

    /// Takes one accepted step ending at or before `t_limit` (> current
    /// time); a step that reaches the limit ends on it exactly. Rejected
    /// attempts are retried with a smaller step.
    pub fn step(
        &mut self,
        system: &impl Derivative<N>,
        t_limit: f64,
    ) -> Result<DenseStep<N>, StepFailure> {
        loop {
            let proposed = self.h.min(self.settings.h_max);
            let mut h = proposed;
            // As DOPRI5: stretch a step by up to 1 % rather than leave a sliver.
            let reaches = self.t + 1.01 * h >= t_limit;
            if reaches {
                h = t_limit - self.t;
            }
            if h <= 10.0 * f64::EPSILON * self.t.abs().max(1.0) {
                if reaches && h > 0.0 {
                    // A sliver left by rounding: land on the limit.
                } else {
                    return Err(StepFailure::Underflow { t: self.t, h });
                }
            }
            let (y_new, k, err) = self.attempt(system, h);
            if !err.is_finite() || !y_new.iter().all(|v| v.is_finite()) {
                // A non-finite trial is a step far too large (or a model that
                // diverged): shrink hard, and give up only at underflow.
                self.counts.rejected += 1;
                self.rejected_last = true;
                self.h = h / SHRINK_LIMIT;
                if self.h <= 10.0 * f64::EPSILON * self.t.abs().max(1.0) {
                    return Err(StepFailure::NonFinite { t: self.t });
                }
                continue;
            }
            let fac11 = err.powf(ALPHA);
            if err <= 1.0 {
                let fac =
                    (fac11 / self.err_old.powf(BETA) / SAFETY).clamp(GROW_LIMIT, SHRINK_LIMIT);
                let mut h_new = (h / fac).min(self.settings.h_max);
                if self.rejected_last {
                    h_new = h_new.min(h);
                } else if h < proposed {
                    // Shortened to land on the limit: that says nothing
                    // against the step the controller had proposed.
                    h_new = h_new.max(proposed);
                }
                self.err_old = err.max(1e-4);
                self.rejected_last = false;
                self.counts.accepted += 1;
                let t0 = self.t;
                let t1 = if reaches { t_limit } else { self.t + h };
                let dense = self.dense(h, t0, t1, &y_new, &k);
                self.t = t1;
                self.y = y_new;
                self.k1 = k[6];
                self.h = h_new;
                return Ok(dense);
            }
            self.counts.rejected += 1;
            self.rejected_last = true;
            self.h = h / (fac11 / SAFETY).min(SHRINK_LIMIT);
        }
    }

    /// One Dormand–Prince step of size `h` from the current state: the
    /// 5th-order solution, the seven stages and the scaled error norm.
    #[allow(clippy::needless_range_loop)]
    fn attempt(&self, system: &impl Derivative<N>, h: f64) -> ([f64; N], [[f64; N]; 7], f64) {
        let (t, y) = (self.t, &self.y);
        let mut k = [[0.0; N]; 7];
        k[0] = self.k1;
        let mut yt = [0.0; N];
        for i in 0..N {
            yt[i] = y[i] + h * A21 * k[0][i];
        }
        system.derivative(t + C2 * h, &yt, &mut k[1]);
        for i in 0..N {
            yt[i] = y[i] + h * (A31 * k[0][i] + A32 * k[1][i]);
        }
        system.derivative(t + C3 * h, &yt, &mut k[2]);
        for i in 0..N {
            yt[i] = y[i] + h * (A41 * k[0][i] + A42 * k[1][i] + A43 * k[2][i]);
        }
        system.derivative(t + C4 * h, &yt, &mut k[3]);
        for i in 0..N {
            yt[i] = y[i] + h * (A51 * k[0][i] + A52 * k[1][i] + A53 * k[2][i] + A54 * k[3][i]);
        }
        system.derivative(t + C5 * h, &yt, &mut k[4]);
        for i in 0..N {
            yt[i] = y[i]
                + h * (A61 * k[0][i]
                    + A62 * k[1][i]
                    + A63 * k[2][i]
                    + A64 * k[3][i]
                    + A65 * k[4][i]);
        }
        system.derivative(t + h, &yt, &mut k[5]);
        let mut y_new = [0.0; N];
        for i in 0..N {
            y_new[i] = y[i]
                + h * (A71 * k[0][i]
                    + A73 * k[2][i]
                    + A74 * k[3][i]
                    + A75 * k[4][i]
                    + A76 * k[5][i]);
        }
        system.derivative(t + h, &y_new, &mut k[6]);
        let Settings { rtol, atol, .. } = self.settings;
        let mut sum = 0.0;
        for i in 0..N {
            let e = h
                * (E1 * k[0][i]
                    + E3 * k[2][i]
                    + E4 * k[3][i]
                    + E5 * k[4][i]
                    + E6 * k[5][i]
                    + E7 * k[6][i]);
            let sc = atol + rtol * y[i].abs().max(y_new[i].abs());
            sum += (e / sc) * (e / sc);
        }
        (y_new, k, (sum / N as f64).sqrt())
    }

    /// The continuous extension of an accepted step (CONTD5's coefficients).
    fn dense(&self, h: f64, t0: f64, t1: f64, y_new: &[f64; N], k: &[[f64; N]; 7]) -> DenseStep<N> {
        let y = &self.y;
        let mut r = [[0.0; N]; 5];
        for i in 0..N {
            let dy = y_new[i] - y[i];
            let bspl = h * k[0][i] - dy;
            r[0][i] = y[i];
            r[1][i] = dy;
            r[2][i] = bspl;
            r[3][i] = dy - h * k[6][i] - bspl;
            r[4][i] = h
                * (D1 * k[0][i]
                    + D3 * k[2][i]
                    + D4 * k[3][i]
                    + D5 * k[4][i]
                    + D6 * k[5][i]
                    + D7 * k[6][i]);
        }
        DenseStep { t0, t1, r }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Harmonic oscillator ÿ = −ω²y: the exact solution is known.
    struct Oscillator(f64);
    impl Derivative<2> for Oscillator {
        fn derivative(&self, _t: f64, y: &[f64; 2], dy: &mut [f64; 2]) {
            dy[0] = y[1];
            dy[1] = -self.0 * self.0 * y[0];
        }
    }

    fn settings(rtol: f64) -> Settings {
        Settings {
            rtol,
            atol: rtol * 1e-3,
            h_max: f64::INFINITY,
        }
    }

    /// Global error at the end and the largest dense-output error over a
    /// fine grid, for y(0) = 1, ẏ(0) = 0 (analytic: cos ωt).
    fn errors(rtol: f64, limits: &[f64]) -> (f64, f64, Counts) {
        let w = 2.0 * std::f64::consts::PI;
        let sys = Oscillator(w);
        let mut s = Dopri5::new(&sys, 0.0, [1.0, 0.0], settings(rtol));
        let mut worst_dense: f64 = 0.0;
        let mut n = 0usize;
        for &limit in limits {
            while s.time() < limit {
                let d = s.step(&sys, limit).unwrap();
                assert!(d.t1 <= limit);
                while (n as f64) * 1e-3 <= d.t1 {
                    let t = n as f64 * 1e-3;
                    worst_dense = worst_dense.max((d.at(t)[0] - (w * t).cos()).abs());
                    n += 1;
                }
            }
            assert_eq!(s.time(), limit, "a step that reaches the limit lands on it");
        }
        let t = s.time();
        (
            (s.state()[0] - (w * t).cos()).abs(),
            worst_dense,
            s.counts(),
        )
    }

    #[test]
    fn converges_on_the_harmonic_oscillator_as_the_tolerance_tightens() {
        // Analytic solution cos(2πt); the error must fall with the
        // tolerance (order 5 global, order 4 dense output).
        let mut last = f64::INFINITY;
        for rtol in [1e-4, 1e-6, 1e-8, 1e-10] {
            let (end, dense, _) = errors(rtol, &[10.0]);
            assert!(end < last, "rtol {rtol}: end error {end:e} did not fall");
            assert!(end < 100.0 * rtol, "rtol {rtol}: end error {end:e}");
            assert!(dense < 100.0 * rtol, "rtol {rtol}: dense error {dense:e}");
            last = end;
        }
    }

    #[test]
    fn limits_split_steps_without_changing_the_solution_beyond_tolerance() {
        // Many step ends imposed (as road sample points are) versus none.
        let limits: Vec<f64> = (1..=1000).map(|i| i as f64 * 0.01).collect();
        let (a, _, ca) = errors(1e-9, &[10.0]);
        let (b, _, cb) = errors(1e-9, &limits);
        assert!(a < 1e-7 && b < 1e-7, "{a:e} {b:e}");
        assert!(cb.accepted >= 1000 && ca.accepted < cb.accepted);
    }

    #[test]
    fn dense_output_refuses_to_extrapolate() {
        let sys = Oscillator(1.0);
        let mut s = Dopri5::new(&sys, 0.0, [1.0, 0.0], settings(1e-6));
        let d = s.step(&sys, 1.0).unwrap();
        let beyond = d.t1 + 0.5 * (d.t1 - d.t0);
        assert!(std::panic::catch_unwind(|| d.at(beyond)).is_err());
    }
}
