//! The piecewise-exact path for piecewise-linear vehicles (asymmetric
//! dampers, stops, tyre lift-off).
//!
//! Between switches — a damper changing from bump to rebound, a stop
//! engaging or releasing, a tyre (or, without a tyre, the spring) leaving
//! or touching the road — the element model is affine:
//! `ẋ = A_r x + B₀ w + B₁ ẇ + c_r`, with the regime's element rates and a
//! constant term `c_r` (a stop's offset `∓k_s c`, a lifted tyre's
//! `−static load`), assembled by [`Vehicle::state_space_in`] from the same
//! element-by-element assembly as the linear model. Each regime is
//! discretised exactly like the exact path (Van Loan's exponential with a
//! first-order hold on the road, the harmonic force integrated exactly),
//! plus the constant column `P c_r` (`P = ∫₀ʰ e^{Aσ} dσ`).
//!
//! # Regimes and their cache
//! A regime is one [`AxleRegime`] per axle (damper side, stop, on/off the
//! road). The first time a regime is met, its whole-interval update and
//! its continuous form are stored for the run.
//!
//! # Locating a switch
//! Each output interval is first taken with the whole-interval update of
//! the regime it starts in; when the regime read from the element model at
//! its end (the same comparisons as
//! [`crate::vehicle::ElementModel::evaluate_with`]) is the one it started
//! in, that is the step (so one regime gives the exact path's samples bit
//! for bit). Otherwise the interval is walked along the regime's exact
//! solution written as its Taylor series about the current state (the
//! inputs are polynomials there: the hold's straight line, or the
//! harmonic force's own series), summed to rounding over the rest of the
//! interval (a piece is halved while its series would need more than
//! [`MAX_TERMS`] terms). The switching functions that differ between the
//! two regimes (travel rate, travel past a clearance, contact margin) are
//! then scalar functions of time; the earliest root of each is found by
//! the Illinois method to 2⁻⁴⁰ of the output interval (about 10⁻¹⁵ s at
//! 1 kHz), the state there is committed, the new regime read, and the walk
//! continues from there. Every switch of this model is force-continuous (a
//! kink: damper force 0 at travel rate 0, stop force 0 at the clearance,
//! tyre force −static load at lift-off), so an instant off by δ moves the
//! rates by the jump in acceleration times δ (about 10⁻¹³ m/s here) and the
//! positions by far less.
//!
//! **Limit:** a switching function that crosses zero twice inside the rest
//! of an interval (e.g. a hop shorter than one output interval) with the
//! same sign at both ends is not seen; its effect then is that of a kink
//! lasting under one output interval.
//!
//! # Chattering
//! Because the vector field is continuous across every switch, there is no
//! sliding mode; repeated switching can only come from grazing (a
//! switching function tangent to zero, e.g. a tyre at zero load or a
//! one-sided damper at travel rate 0). Each located switch moves time
//! forward, and past [`MAX_SWITCHES_PER_INTERVAL`] switches in one output
//! interval, switches are no longer located: the rest of the interval is
//! taken in 16 equal pieces, each in the regime read at the end of the one
//! before, so nothing can loop. Such intervals are counted
//! (`chattering_intervals` in the run info).

use super::exact::{discretise_state_space, harmonic_columns, hold_inputs};
use super::{Excitation, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, sample_count};
#[cfg(test)]
use crate::vehicle::AxleKinematics;
use crate::vehicle::{
    AxleRegime, Contact, DamperSide, ElementModel, MAX_DOF, RoadState, StopSide, Vehicle,
};

/// Switches located per output interval before the rest is taken without
/// locating them (see the module doc).
pub const MAX_SWITCHES_PER_INTERVAL: u32 = 64;

/// What the piecewise-exact path did, for the run info.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, serde::Serialize)]
pub struct PiecewiseStats {
    /// Distinct linear regimes met (each discretised once).
    pub regimes: u64,
    /// Regime switches located.
    pub switches: u64,
    /// Times a stop engaged (front, rear).
    pub stop_engagements: [u64; 2],
    /// Times a tyre (or spring) left the road (front, rear).
    pub lift_offs: [u64; 2],
    /// Output intervals where switching past the cap was not located.
    pub chattering_intervals: u64,
}

/// The whole output interval's update `x' = Φ x + G₀ w₀ + G₁ w₁ + g_c` in
/// fixed-size, column-major arrays, summed in the order of
/// [`super::Step::advance`].
#[derive(Debug, Clone, Copy)]
struct Update<const N: usize> {
    phi: [[f64; N]; N],
    g0: [[f64; N]; 3],
    g1: [[f64; N]; 3],
    gc: Option<[f64; N]>,
}

impl<const N: usize> Update<N> {
    /// The update; `unforced` leaves out the force columns (their input is
    /// 0.0 then, and `y + a·0.0` has the bits of `y` here, as in
    /// [`super::Step::advance_unforced`]).
    #[inline(always)]
    fn advance(&self, x: &[f64; N], w0: &[f64; 3], w1: &[f64; 3], unforced: bool) -> [f64; N] {
        if unforced {
            self.advance_first::<2>(x, w0, w1)
        } else {
            self.advance_first::<3>(x, w0, w1)
        }
    }

    /// The update with only the first `M` input columns.
    #[inline(always)]
    fn advance_first<const M: usize>(
        &self,
        x: &[f64; N],
        w0: &[f64; 3],
        w1: &[f64; 3],
    ) -> [f64; N] {
        let mut y = [0.0; N];
        for (col, &xj) in self.phi.iter().zip(x) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * xj;
            }
        }
        for (col, &wj) in self.g0.iter().zip(w0).take(M) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        for (col, &wj) in self.g1.iter().zip(w1).take(M) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        if let Some(gc) = &self.gc {
            for (yi, &a) in y.iter_mut().zip(gc) {
                *yi += a;
            }
        }
        y
    }
}

/// A regime's continuous form `ẋ = A x + B u + c` in fixed-size,
/// column-major arrays; `u = [r_f, r_r, ṙ_f, ṙ_r, F]` as in
/// [`crate::vehicle::StateSpace`].
#[derive(Debug, Clone, Copy)]
struct Flow<const N: usize> {
    a: [[f64; N]; N],
    b: [[f64; N]; 5],
    c: [f64; N],
    /// Whether the first half of the rows is the kinematic `q̇ = q̇`
    /// (`A = [[0, I], [·, ·]]`, no input or constant there), as
    /// [`Vehicle::state_space_in`] builds it: those rows of `A v` are then
    /// the second half of `v`, with the same bits as the dense product
    /// (`0 + 0·v + … + 1·v_j + …` is `v_j` for finite `v`).
    kinematic: bool,
}

impl<const N: usize> Flow<N> {
    fn new(ss: &crate::vehicle::StateSpace, c: &nalgebra::DVector<f64>) -> Flow<N> {
        let mut f = Flow {
            a: [[0.0; N]; N],
            b: [[0.0; N]; 5],
            c: [0.0; N],
            kinematic: false,
        };
        for r in 0..N {
            for col in 0..N {
                f.a[col][r] = ss.a[(r, col)];
            }
            for col in 0..5 {
                f.b[col][r] = ss.b[(r, col)];
            }
            f.c[r] = c[r];
        }
        let n = N / 2;
        f.kinematic = (0..n).all(|r| {
            (0..N).all(|col| f.a[col][r] == if col == n + r { 1.0 } else { 0.0 })
                && (0..5).all(|col| f.b[col][r] == 0.0)
                && f.c[r] == 0.0
        });
        f
    }

    /// `A v`.
    #[inline(always)]
    fn times(&self, v: &[f64; N]) -> [f64; N] {
        let mut y = [0.0; N];
        if self.kinematic {
            for i in 0..N / 2 {
                y[i] = v[N / 2 + i];
            }
            let (_, bottom) = y.split_at_mut(N / 2);
            for (col, &vj) in self.a.iter().zip(v) {
                for (yi, &a) in bottom.iter_mut().zip(&col[N / 2..]) {
                    *yi += a * vj;
                }
            }
            return y;
        }
        for (col, &vj) in self.a.iter().zip(v) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * vj;
            }
        }
        y
    }

    /// `B u`, plus `c` when `with_constant`.
    #[inline(always)]
    fn input(&self, u: &[f64; 5], with_constant: bool) -> [f64; N] {
        let mut y = if with_constant { self.c } else { [0.0; N] };
        let from = if self.kinematic { N / 2 } else { 0 };
        for (col, &uj) in self.b.iter().zip(u) {
            if uj != 0.0 {
                for i in from..N {
                    y[i] += col[i] * uj;
                }
            }
        }
        y
    }
}

/// A regime met in the run: its whole-interval update and its flow.
struct Regime<const N: usize> {
    update: Update<N>,
    flow: Flow<N>,
}

/// Everything a run needs to build and look up regimes.
struct Cache<'a, const N: usize> {
    vehicle: &'a Vehicle,
    force_x_m: f64,
    /// Frequency of a harmonic body force integrated exactly, if any.
    harmonic_hz: Option<f64>,
    h_s: f64,
    slots: Vec<Option<Box<Regime<N>>>>,
    met: u64,
}

/// Codes per axle: 3 damper sides × 3 stops × 2 contacts.
const AXLE_CODES: usize = 18;

#[cfg(test)]
fn axle_code(r: &AxleRegime) -> usize {
    let d = match r.damper {
        DamperSide::Mean => 0,
        DamperSide::Bump => 1,
        DamperSide::Rebound => 2,
    };
    let s = match r.stop {
        StopSide::Free => 0,
        StopSide::Bump => 1,
        StopSide::Rebound => 2,
    };
    d + 3 * s + 9 * usize::from(!r.on_road)
}

#[cfg(test)]
fn regime_key(r: &[AxleRegime; 2]) -> usize {
    axle_code(&r[0]) + AXLE_CODES * axle_code(&r[1])
}

/// The regime of a [`regime_key`].
fn regime_of_key(key: usize) -> [AxleRegime; 2] {
    let axle = |code: usize| AxleRegime {
        damper: [DamperSide::Mean, DamperSide::Bump, DamperSide::Rebound][code % 3],
        stop: [StopSide::Free, StopSide::Bump, StopSide::Rebound][code / 3 % 3],
        on_road: code < 9,
    };
    [axle(key % AXLE_CODES), axle(key / AXLE_CODES)]
}

impl<const N: usize> Cache<'_, N> {
    /// The regime of `key` ([`regime_key`]), discretised the first time it
    /// is met.
    #[inline(always)]
    fn regime(&mut self, key: usize) -> &Regime<N> {
        if self.slots[key].is_none() {
            self.fill(key);
        }
        match self.slots[key].as_deref() {
            Some(r) => r,
            None => unreachable!("filled above"),
        }
    }

    #[cold]
    #[inline(never)]
    fn fill(&mut self, key: usize) {
        let r = regime_of_key(key);
        let (ss, c) = self.vehicle.state_space_in(&r, self.force_x_m);
        // The whole output interval as the exact path discretises it,
        // so that one regime gives its samples bit for bit.
        let (mut d, p) = discretise_state_space(&ss, self.h_s);
        if let Some(f) = self.harmonic_hz {
            harmonic_columns(&ss, f, self.h_s, &mut d);
        }
        let gc = c.iter().any(|v| *v != 0.0).then(|| &p * &c);
        self.slots[key] = Some(Box::new(Regime {
            update: fixed(&d, gc.as_ref()),
            flow: Flow::new(&ss, &c),
        }));
        self.met += 1;
    }
}

fn fixed<const N: usize>(d: &super::Discrete, gc: Option<&nalgebra::DVector<f64>>) -> Update<N> {
    let mut u = Update {
        phi: [[0.0; N]; N],
        g0: [[0.0; N]; 3],
        g1: [[0.0; N]; 3],
        gc: None,
    };
    for r in 0..N {
        for c in 0..N {
            u.phi[c][r] = d.phi[(r, c)];
        }
        for c in 0..3 {
            u.g0[c][r] = d.g0[(r, c)];
            u.g1[c][r] = d.g1[(r, c)];
        }
    }
    u.gc = gc.map(|c| {
        let mut g = [0.0; N];
        g.copy_from_slice(c.as_slice());
        g
    });
    u
}

/// The regime the element model is in at `el` (same comparisons as the
/// element model: damper bump at travel rate ≥ 0, a stop past its
/// clearance, contact as the model found it).
#[cfg(test)]
pub(crate) fn regime_of(vehicle: &Vehicle, el: &AxleKinematics) -> [AxleRegime; 2] {
    let mut out = [AxleRegime::LINEAR; 2];
    for (i, axle) in vehicle.axles.iter().enumerate() {
        let r = &mut out[i];
        if axle.damper.is_asymmetric() {
            r.damper = if el.travel_rate_m_s[i] >= 0.0 {
                DamperSide::Bump
            } else {
                DamperSide::Rebound
            };
        }
        if let Some(s) = &axle.stops {
            let travel = el.travel_m[i];
            if s.bump_clearance_m.is_some_and(|c| travel > c) {
                r.stop = StopSide::Bump;
            } else if s.rebound_clearance_m.is_some_and(|c| travel < -c) {
                r.stop = StopSide::Rebound;
            }
        }
        r.on_road = el.in_contact[i];
    }
    out
}

/// The held inputs of one output interval: road and force at its ends.
struct Interval {
    t0_s: f64,
    w0: [f64; 3],
    w1: [f64; 3],
    /// Road rates over the interval (the hold's slope), m/s.
    rate_m_s: [f64; 2],
}

/// Evaluates the inputs inside an interval.
struct Inputs {
    h_s: f64,
    /// Amplitude (N) and angular frequency (rad/s) of a harmonic force
    /// integrated exactly; otherwise the force is held like the road.
    harmonic: Option<(f64, f64)>,
}

/// Taylor coefficients of the inputs `u = [r_f, r_r, ṙ_f, ṙ_r, F]` about a
/// point of an interval: `u(σ) = Σ u_j σ^j`; past `j = 1` only a harmonic
/// force contributes, `F^{(j)}/j!`.
struct InputSeries {
    u0: [f64; 5],
    u1: [f64; 5],
    /// `(A sin ωt, A cos ωt, ω)` of a harmonic force at the point.
    harmonic: Option<(f64, f64, f64)>,
}

impl Inputs {
    /// Road elevations and force `s_s` into the interval.
    #[inline]
    fn at(&self, iv: &Interval, s_s: f64) -> [f64; 3] {
        let f = s_s / self.h_s;
        let lerp = |a: f64, b: f64| a + f * (b - a);
        let force_n = match self.harmonic {
            Some((amp, w)) => amp * (w * (iv.t0_s + s_s)).sin(),
            None => lerp(iv.w0[2], iv.w1[2]),
        };
        [lerp(iv.w0[0], iv.w1[0]), lerp(iv.w0[1], iv.w1[1]), force_n]
    }

    /// Axle `i`'s road elevation `s_s` into the interval, as [`Inputs::at`]
    /// gives it (the same expression, so the same bits).
    #[inline(always)]
    fn elevation_at(&self, iv: &Interval, s_s: f64, i: usize) -> f64 {
        let f = s_s / self.h_s;
        iv.w0[i] + f * (iv.w1[i] - iv.w0[i])
    }

    fn series_at(&self, iv: &Interval, s_s: f64) -> InputSeries {
        let w = self.at(iv, s_s);
        let [rf, rr] = iv.rate_m_s;
        let (force_rate, harmonic) = match self.harmonic {
            Some((amp, om)) => {
                let (sin, cos) = (om * (iv.t0_s + s_s)).sin_cos();
                (amp * om * cos, Some((amp * sin, amp * cos, om)))
            }
            None => ((iv.w1[2] - iv.w0[2]) / self.h_s, None),
        };
        InputSeries {
            u0: [w[0], w[1], rf, rr, w[2]],
            u1: [rf, rr, 0.0, 0.0, force_rate],
            harmonic,
        }
    }
}

/// Taylor terms kept at most; a piece whose series has not converged by
/// then is halved.
const MAX_TERMS: usize = 40;
/// A term is negligible below this fraction of its component's largest.
const TERM_TOL: f64 = 1e-17;
/// Halvings of a piece whose series does not converge, at most.
const MAX_HALVINGS: u32 = 40;

/// A regime's exact trajectory over one piece as its Taylor polynomial
/// `x(σ) = Σ e_k σ^k`, from `k e_k = A e_{k−1} + B u_{k−1} (+ c at k = 1)`
/// (the series of `e^{Aσ}` and of the input integrals, summed for this
/// state and these inputs; e.g. Moler & Van Loan, "Nineteen dubious ways
/// to compute the exponential of a matrix", SIAM Review 20(4), 1978,
/// method 1, which is accurate while `‖A‖σ` is small, as for a piece of
/// an output interval). Its value and its zeros can be found at any
/// instant for a few multiplications.
struct Series<const N: usize> {
    e: [[f64; N]; MAX_TERMS],
    terms: usize,
}

impl<const N: usize> Series<N> {
    fn new() -> Box<Self> {
        Box::new(Series {
            e: [[0.0; N]; MAX_TERMS],
            terms: 1,
        })
    }

    /// Fills the terms for `x` and `inputs`; returns the longest piece
    /// (`len_s`, halved as needed) over which they have converged.
    #[inline(always)]
    fn build(&mut self, flow: &Flow<N>, x: &[f64; N], inputs: &InputSeries, len_s: f64) -> f64 {
        let s = self;
        s.terms = MAX_TERMS;
        s.e[0] = *x;
        // ω^j/j! for the harmonic force's terms.
        let mut om_pow = 1.0;
        let mut watch = Convergence::new(len_s);
        watch.push(&s.e[0]);
        for k in 1..MAX_TERMS {
            let j = k - 1;
            let mut v = flow.times(&s.e[j]);
            let add = match (j, inputs.harmonic) {
                (0, _) => Some(flow.input(&inputs.u0, true)),
                (1, _) => Some(flow.input(&inputs.u1, false)),
                // F^{(j)}/j! = A ω^j sin(ωt + jπ/2)/j!
                (_, Some((a_sin, a_cos, _))) => {
                    let cyc = [a_sin, a_cos, -a_sin, -a_cos][j % 4];
                    Some(flow.input(&[0.0, 0.0, 0.0, 0.0, cyc * om_pow], false))
                }
                _ => None,
            };
            if let Some((_, _, om)) = inputs.harmonic {
                om_pow *= om / k as f64;
            }
            if let Some(a) = add {
                for (vi, ai) in v.iter_mut().zip(a) {
                    *vi += ai;
                }
            }
            let kf = k as f64;
            for vi in &mut v {
                *vi /= kf;
            }
            s.e[k] = v;
            if watch.push(&s.e[k]) {
                s.terms = k + 1;
                return len_s;
            }
        }
        let mut len = len_s;
        for _ in 0..MAX_HALVINGS {
            len *= 0.5;
            if let Some(t) = converged_terms(&s.e, len) {
                s.terms = t;
                return len;
            }
        }
        len
    }

    /// The series of the components `j` of the state, side by side.
    fn fill_part(&self, p: &mut Part, j: [usize; 3]) {
        p.terms = self.terms;
        for (pk, ek) in p.e.iter_mut().zip(&self.e[..self.terms]) {
            *pk = j.map(|j| ek[j]);
        }
    }

    /// `x(σ)` by Horner's rule.
    #[inline]
    fn eval(&self, sigma_s: f64) -> [f64; N] {
        let mut y = self.e[self.terms - 1];
        for k in (0..self.terms - 1).rev() {
            for (yi, &ei) in y.iter_mut().zip(&self.e[k]) {
                *yi = *yi * sigma_s + ei;
            }
        }
        y
    }
}

/// A few components of a [`Series`], side by side.
struct Part {
    e: [[f64; 3]; MAX_TERMS],
    terms: usize,
}

impl Part {
    /// The components at `σ`, each by Horner's rule as in [`Series::eval`]
    /// (so with the same bits).
    #[inline]
    fn eval(&self, sigma_s: f64) -> [f64; 3] {
        let mut v = self.e[self.terms - 1];
        for e in self.e[..self.terms - 1].iter().rev() {
            for (v, &ek) in v.iter_mut().zip(e) {
                *v = *v * sigma_s + ek;
            }
        }
        v
    }
}

/// Terms needed over `len_s`: the first `k` past which two terms in a row
/// are below [`TERM_TOL`] of each component's largest term, if any.
fn converged_terms<const N: usize>(e: &[[f64; N]], len_s: f64) -> Option<usize> {
    let mut watch = Convergence::new(len_s);
    e.iter().position(|term| watch.push(term)).map(|k| k + 1)
}

/// The test of [`converged_terms`] taken one term at a time as the terms
/// are built, so building `K` terms checks `K` terms, not `K²/2`.
struct Convergence<const N: usize> {
    /// Each component's largest term so far, scaled to the piece's end.
    largest: [f64; N],
    /// Terms in a row below the tolerance.
    small_run: u32,
    /// `len^k` for the next term `k`.
    scale: f64,
    len_s: f64,
    k: usize,
}

impl<const N: usize> Convergence<N> {
    fn new(len_s: f64) -> Self {
        Convergence {
            largest: [0.0; N],
            small_run: 0,
            scale: 1.0,
            len_s,
            k: 0,
        }
    }

    /// Takes the next term; true once two terms in a row were negligible.
    #[inline]
    fn push(&mut self, term: &[f64; N]) -> bool {
        let mut large = 0usize;
        for (m, &t) in self.largest.iter_mut().zip(term) {
            let size = t.abs() * self.scale;
            large |= usize::from(size > TERM_TOL * *m);
            // `m.max(size)`, as `m` is never NaN (a NaN size leaves it).
            *m = if size > *m { size } else { *m };
        }
        let small = self.k > 1 && large == 0;
        self.small_run = if small { self.small_run + 1 } else { 0 };
        self.scale *= self.len_s;
        self.k += 1;
        self.small_run == 2
    }
}

/// One switching function of an axle: a number whose sign decides one
/// part of the regime, as [`regime_of`] reads it.
#[derive(Debug, Clone, Copy)]
enum Switching {
    /// Travel rate (damper bump side at ≥ 0).
    Rate(usize),
    /// Travel past the bump clearance (engaged above 0).
    BumpStop(usize, f64),
    /// Travel past the rebound clearance (engaged above 0).
    ReboundStop(usize, f64),
    /// Contact margin (on the road unless below 0).
    Contact(usize),
}

impl Switching {
    fn axle(self) -> usize {
        match self {
            Switching::Rate(i)
            | Switching::BumpStop(i, _)
            | Switching::ReboundStop(i, _)
            | Switching::Contact(i) => i,
        }
    }

    /// The components of the state [`Switching::value`] reads, for an axle
    /// whose wheel stands on a tyre: travel reads the body's and wheel's
    /// positions, travel rate their rates, the tyre's margin the wheel's
    /// position and rate (read twice here)
    /// ([`ElementModel::axle_margins_of_state`]). `None` otherwise: then
    /// the whole state is read.
    fn reads<const N: usize>(self, probe: &Probe<'_>) -> Option<[usize; 3]> {
        let n = N / 2;
        let w = probe.tyred[self.axle()].filter(|t| t.wheel < n)?.wheel;
        Some(match self {
            Switching::Rate(_) => [n, n + 1, n + w],
            Switching::BumpStop(..) | Switching::ReboundStop(..) => [0, 1, w],
            Switching::Contact(_) => [w, n + w, w],
        })
    }

    /// [`Switching::value`] for an axle whose wheel stands on tyre `t`,
    /// from the components [`Switching::reads`] names, in the element
    /// model's arithmetic term for term (`ElementModel::axle_margins_by`),
    /// so with the same bits; `road` gives the axle's road elevation and
    /// rate (read only for the contact margin).
    #[inline(always)]
    fn value_on_tyre(self, t: &TyreAxle, y: [f64; 3], road: impl Fn() -> (f64, f64)) -> f64 {
        // Body point then wheel: `(z_w − (z_0 + x θ))`, positions or rates.
        let relative = || y[2] - (y[0] + t.x_m * y[1]);
        match self {
            Switching::Rate(_) => relative(),
            Switching::BumpStop(_, c) => relative() - c,
            Switching::ReboundStop(_, c) => -relative() - c,
            Switching::Contact(_) => {
                let (elevation_m, rate_m_s) = road();
                let ft = t.rate_n_m * (elevation_m - y[0]) + t.damping_n_s_m * (rate_m_s - y[1]);
                ft + t.static_n
            }
        }
    }

    fn value<const N: usize>(
        self,
        model: &ElementModel<'_>,
        x: &[f64; N],
        road: &RoadState,
    ) -> f64 {
        let axle = match self {
            Switching::Rate(i)
            | Switching::BumpStop(i, _)
            | Switching::ReboundStop(i, _)
            | Switching::Contact(i) => i,
        };
        let (travel, rate, margin) = model.axle_margins_of_state(axle, x, road);
        match self {
            Switching::Rate(_) => rate,
            Switching::BumpStop(_, c) => travel - c,
            Switching::ReboundStop(_, c) => -travel - c,
            Switching::Contact(_) => margin,
        }
    }

    /// The side of the switch `value` lies on, as [`regime_of`] decides it.
    fn side(self, value: f64) -> bool {
        match self {
            Switching::Rate(_) => value >= 0.0,
            Switching::BumpStop(..) | Switching::ReboundStop(..) => value > 0.0,
            Switching::Contact(_) => !(value < 0.0),
        }
    }
}

/// The switching functions that can explain a change from `a` to `b`.
fn candidates(vehicle: &Vehicle, a: &[AxleRegime; 2], b: &[AxleRegime; 2]) -> Candidates {
    let mut out = Candidates {
        f: [Switching::Rate(0); 8],
        count: 0,
    };
    for (i, axle) in vehicle.axles.iter().enumerate() {
        if a[i].damper != b[i].damper {
            out.push(Switching::Rate(i));
        }
        if let (true, Some(s)) = (a[i].stop != b[i].stop, &axle.stops) {
            let involves = |side| a[i].stop == side || b[i].stop == side;
            if let (true, Some(c)) = (involves(StopSide::Bump), s.bump_clearance_m) {
                out.push(Switching::BumpStop(i, c));
            }
            if let (true, Some(c)) = (involves(StopSide::Rebound), s.rebound_clearance_m) {
                out.push(Switching::ReboundStop(i, c));
            }
        }
        if a[i].on_road != b[i].on_road {
            out.push(Switching::Contact(i));
        }
    }
    out
}

/// At most four switching functions per axle, without a heap allocation.
struct Candidates {
    f: [Switching; 8],
    count: usize,
}

impl Candidates {
    fn push(&mut self, f: Switching) {
        self.f[self.count] = f;
        self.count += 1;
    }

    fn as_slice(&self) -> &[Switching] {
        &self.f[..self.count]
    }
}

/// The regime test of [`regime_of`] with each axle's damper and stops read
/// once per run: at every interval end it reads travel, travel rate and
/// contact margin from the state in place
/// ([`ElementModel::axle_margins_of_state`], the element model's
/// arithmetic) and compares them as `regime_of` does.
struct Probe<'a> {
    model: ElementModel<'a>,
    /// Per axle: whether the damper is one-sided.
    asymmetric: [bool; 2],
    /// Per axle: bump and rebound clearances (infinite when absent, which
    /// no travel passes, as `regime_of` never engages an absent stop).
    clearance_m: [(f64, f64); 2],
    /// Per axle: its wheel and tyre, when it has them.
    tyred: [Option<TyreAxle>; 2],
    /// Both, when both axles have them.
    tyred_both: Option<[TyreAxle; 2]>,
}

impl<'a> Probe<'a> {
    fn new(vehicle: &'a Vehicle) -> Self {
        let axle = |i: usize| &vehicle.axles[i];
        let clearance = |i: usize| {
            axle(i).stops.map_or((f64::INFINITY, f64::INFINITY), |s| {
                (
                    s.bump_clearance_m.unwrap_or(f64::INFINITY),
                    s.rebound_clearance_m.unwrap_or(f64::INFINITY),
                )
            })
        };
        let tyred = [0, 1].map(|i| {
            let t = axle(i).tyre?;
            Some(TyreAxle {
                x_m: axle(i).x_m,
                wheel: vehicle.wheel_dof(i)?,
                rate_n_m: t.rate_n_m,
                damping_n_s_m: t.damping_n_s_m,
                static_n: vehicle.static_contact_n()[i],
            })
        });
        Probe {
            model: vehicle.element_model(),
            asymmetric: [0, 1].map(|i| axle(i).damper.is_asymmetric()),
            clearance_m: [clearance(0), clearance(1)],
            tyred,
            tyred_both: match tyred {
                [Some(f), Some(r)] => Some([f, r]),
                _ => None,
            },
        }
    }

    /// The regime at `x` with held inputs `w` (road rates of the hold).
    #[cfg(test)]
    fn regime<const N: usize>(
        &self,
        x: &[f64; N],
        w: &[f64; 3],
        rate_m_s: [f64; 2],
    ) -> [AxleRegime; 2] {
        regime_of_key(self.key(x, w, rate_m_s))
    }

    /// The [`regime_key`] of the regime at `x` with held inputs `w` (road
    /// rates of the hold).
    #[inline(always)]
    fn key<const N: usize>(&self, x: &[f64; N], w: &[f64; 3], rate_m_s: [f64; 2]) -> usize {
        self.keys(x, w, rate_m_s, rate_m_s).0
    }

    /// [`Probe::key`] at one state and elevation for two road rates: the
    /// end of an interval and the start of the next (the state-only
    /// arithmetic is done once).
    #[inline(always)]
    fn keys<const N: usize>(
        &self,
        x: &[f64; N],
        w: &[f64; 3],
        rate_m_s: [f64; 2],
        next_rate_m_s: [f64; 2],
    ) -> (usize, usize) {
        if let Some(t) = self
            .tyred_both
            .as_ref()
            .filter(|t| t[0].wheel.max(t[1].wheel) < N / 2)
        {
            let (a0, b0) = self.tyre_codes(0, &t[0], x, w, rate_m_s, next_rate_m_s);
            let (a1, b1) = self.tyre_codes(1, &t[1], x, w, rate_m_s, next_rate_m_s);
            return (a0 + AXLE_CODES * a1, b0 + AXLE_CODES * b1);
        }
        let (a0, b0) = self.axle_codes(0, x, w, rate_m_s, next_rate_m_s);
        let (a1, b1) = self.axle_codes(1, x, w, rate_m_s, next_rate_m_s);
        (a0 + AXLE_CODES * a1, b0 + AXLE_CODES * b1)
    }

    /// [`Probe::axle_codes`] of axle `i`, whose wheel stands on tyre `t`:
    /// `ElementModel::axle_margins_by` term for term (so bit for bit), the
    /// tyre's elastic part shared by the two rates.
    #[inline(always)]
    fn tyre_codes<const N: usize>(
        &self,
        i: usize,
        t: &TyreAxle,
        x: &[f64; N],
        w: &[f64; 3],
        rate_m_s: [f64; 2],
        next_rate_m_s: [f64; 2],
    ) -> (usize, usize) {
        let n = N / 2;
        let zb = x[0] + t.x_m * x[1];
        let vb = x[n] + t.x_m * x[n + 1];
        let (zw, vw) = (x[t.wheel], x[n + t.wheel]);
        let side = self.side_code(i, zw - zb, vw - vb);
        let elastic_n = t.rate_n_m * (w[i] - zw);
        let off =
            |r: f64| 9 * usize::from(elastic_n + t.damping_n_s_m * (r - vw) + t.static_n < 0.0);
        (side + off(rate_m_s[i]), side + off(next_rate_m_s[i]))
    }

    /// Axle `i`'s [`axle_code`] for the two road rates.
    #[inline(always)]
    fn axle_codes<const N: usize>(
        &self,
        i: usize,
        x: &[f64; N],
        w: &[f64; 3],
        rate_m_s: [f64; 2],
        next_rate_m_s: [f64; 2],
    ) -> (usize, usize) {
        if let Some(t) = self.tyred[i].as_ref().filter(|t| t.wheel < N / 2) {
            return self.tyre_codes(i, t, x, w, rate_m_s, next_rate_m_s);
        }
        let code = |rate: [f64; 2]| {
            let road = road(w, rate);
            let (travel, rate, margin) = self.model.axle_margins_of_state(i, x, &road);
            self.side_code(i, travel, rate) + 9 * usize::from(margin < 0.0)
        };
        (code(rate_m_s), code(next_rate_m_s))
    }

    /// The damper and stop part of [`axle_code`] of axle `i` from its
    /// travel and travel rate, compared as [`regime_of`] compares them.
    #[inline(always)]
    fn side_code(&self, i: usize, travel: f64, rate: f64) -> usize {
        // Bump at a rate ≥ 0, rebound below (or NaN), for a one-sided damper.
        let damper = usize::from(self.asymmetric[i]) * (1 + usize::from(!(rate >= 0.0)));
        let (bump_m, rebound_m) = self.clearance_m[i];
        // Past the bump clearance, else past the rebound clearance.
        let bump = travel > bump_m;
        let stop = usize::from(bump) + 2 * usize::from(!bump & (travel < -rebound_m));
        damper + 3 * stop
    }
}

/// An axle whose wheel stands on a tyre, as the element model reads it.
#[derive(Debug, Clone, Copy)]
struct TyreAxle {
    x_m: f64,
    wheel: usize,
    rate_n_m: f64,
    damping_n_s_m: f64,
    static_n: f64,
}

fn road(w: &[f64; 3], rate_m_s: [f64; 2]) -> RoadState {
    RoadState {
        elevation_m: [w[0], w[1]],
        rate_m_s,
    }
}

pub(super) fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    super::by_model_size!(
        vehicle.dof_count(),
        "piecewise-exact",
        run_fixed_fastest(vehicle, excitation, plan, sink)
    )
}

/// [`run_fixed`] compiled for AVX where the processor has it, otherwise as
/// built: the per-interval loop (the whole-interval update and the probe),
/// not the walk across a switch ([`Walk::across`], compiled apart). As for
/// the exact path, each lane is the same multiply then add in the same
/// order, with no fused multiply–add, so the numbers are the same bit for
/// bit on either path.
fn run_fixed_fastest<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx") {
        // SAFETY: the processor has AVX, checked just above.
        return unsafe { run_fixed_avx::<N, D>(vehicle, excitation, plan, sink) };
    }
    run_fixed::<N, D>(vehicle, excitation, plan, sink)
}

fn has_avx() -> bool {
    #[cfg(target_arch = "x86_64")]
    return std::arch::is_x86_feature_detected!("avx");
    #[cfg(not(target_arch = "x86_64"))]
    false
}

/// [`run_fixed`] with AVX enabled (see [`run_fixed_fastest`]).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx")]
fn run_fixed_avx<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    run_fixed::<N, D>(vehicle, excitation, plan, sink)
}

/// State of the stepping across intervals.
struct Walk<'a, const N: usize> {
    cache: Cache<'a, N>,
    probe: Probe<'a>,
    inputs: Inputs,
    stats: PiecewiseStats,
    /// The series' storage, reused from switch to switch.
    series: Option<Box<Series<N>>>,
    /// No body force: the update leaves out its columns.
    unforced: bool,
    /// The processor has AVX.
    avx: bool,
}

impl<const N: usize> Walk<'_, N> {
    /// Counts the events of a switch from `a` to `b`.
    fn count(&mut self, a: &[AxleRegime; 2], b: &[AxleRegime; 2]) {
        self.stats.switches += 1;
        for i in 0..2 {
            if a[i].stop == StopSide::Free && b[i].stop != StopSide::Free {
                self.stats.stop_engagements[i] += 1;
            }
            if a[i].on_road && !b[i].on_road {
                self.stats.lift_offs[i] += 1;
            }
        }
    }

    /// Advances `x` across one output interval that starts in the regime
    /// of key `start`; returns the key of the regime the next interval
    /// starts in (read with its road rates `next_rate_m_s`, if there is a
    /// next one). The whole-interval update is tried first; only when the
    /// regime at its end differs is the interval walked along the series.
    #[inline(always)]
    fn interval(
        &mut self,
        x: &mut [f64; N],
        iv: &Interval,
        start: usize,
        next_rate_m_s: Option<[f64; 2]>,
    ) -> usize {
        let unforced = self.unforced;
        let x_try = self
            .cache
            .regime(start)
            .update
            .advance(x, &iv.w0, &iv.w1, unforced);
        let (end, next) = match next_rate_m_s {
            Some(r) => self.probe.keys(&x_try, &iv.w1, iv.rate_m_s, r),
            None => {
                let end = self.probe.key(&x_try, &iv.w1, iv.rate_m_s);
                (end, end)
            }
        };
        if end == start {
            *x = x_try;
            return next;
        }
        let end = self.across(x, iv, start, end);
        match next_rate_m_s {
            Some(r) => self.probe.key(x, &iv.w1, r),
            None => end,
        }
    }

    /// Walks an interval that has a switch: piece by piece along each
    /// regime's series, each switch located on its switching function.
    #[cold]
    #[inline(never)]
    fn across(&mut self, x: &mut [f64; N], iv: &Interval, regime: usize, end: usize) -> usize {
        #[cfg(target_arch = "x86_64")]
        if self.avx {
            // SAFETY: `avx` is set only where the processor has AVX.
            return unsafe { self.across_avx(x, iv, regime, end) };
        }
        self.across_as_built(x, iv, regime, end)
    }

    /// [`Walk::across`] with AVX enabled (same multiply-then-add order,
    /// no FMA, so the same bits).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn across_avx(&mut self, x: &mut [f64; N], iv: &Interval, regime: usize, end: usize) -> usize {
        self.across_as_built(x, iv, regime, end)
    }

    #[inline(always)]
    fn across_as_built(
        &mut self,
        x: &mut [f64; N],
        iv: &Interval,
        regime: usize,
        end: usize,
    ) -> usize {
        let mut series = self.series.take().unwrap_or_else(Series::new);
        let end = self.walk(&mut series, x, iv, regime, end);
        self.series = Some(series);
        end
    }

    #[inline(always)]
    fn walk(
        &mut self,
        series: &mut Series<N>,
        x: &mut [f64; N],
        iv: &Interval,
        mut regime: usize,
        whole_end: usize,
    ) -> usize {
        let h_s = self.cache.h_s;
        // The regime at the end of the whole-interval update (which differs
        // from `regime`): that of the first piece's end when the piece is
        // the whole interval (the same solution, up to rounding), so that
        // end is not read again.
        let mut whole_end = Some(whole_end);
        let (mut s0, mut switches) = (0.0f64, 0u32);
        // Past the cap, pieces of a fixed length, not located.
        let mut capped_piece_s: Option<f64> = None;
        loop {
            let remaining = h_s - s0;
            let want = capped_piece_s.map_or(remaining, |p| p.min(remaining));
            let inputs = self.inputs.series_at(iv, s0);
            let flow = &self.cache.regime(regime).flow;
            let len = series.build(flow, x, &inputs, want);
            let last = len >= remaining;
            let w_end = if last {
                iv.w1
            } else {
                self.inputs.at(iv, s0 + len)
            };
            let piece_s = if last { remaining } else { len };
            let end = match whole_end.take() {
                Some(end) if last => end,
                _ => self.probe.key(&series.eval(piece_s), &w_end, iv.rate_m_s),
            };
            if end == regime || capped_piece_s.is_some() {
                *x = series.eval(piece_s);
                regime = end;
                if last {
                    return regime;
                }
                s0 += len;
                continue;
            }
            let (from, to) = (regime_of_key(regime), regime_of_key(end));
            let sigma = self.locate(series, iv, s0, len.min(remaining), &from, &to);
            let at_end = last && sigma >= remaining;
            let w = if at_end {
                iv.w1
            } else {
                self.inputs.at(iv, s0 + sigma)
            };
            *x = series.eval(sigma);
            let new = self.probe.key(x, &w, iv.rate_m_s);
            switches += 1;
            if new != regime {
                self.count(&from, &regime_of_key(new));
            }
            regime = new;
            if at_end {
                return regime;
            }
            s0 += sigma;
            if switches == MAX_SWITCHES_PER_INTERVAL {
                self.stats.chattering_intervals += 1;
                capped_piece_s = Some((h_s - s0) / CAPPED_PIECES);
            }
        }
    }

    /// Switching function `f` at `sigma` into the piece of `series`, which
    /// is `at_s` into the interval: from `part` (its components) where the
    /// axle stands on a tyre, otherwise from the whole state.
    #[inline(always)]
    fn switching_value(
        &self,
        f: Switching,
        part: Option<&Part>,
        series: &Series<N>,
        iv: &Interval,
        at_s: f64,
        sigma: f64,
    ) -> f64 {
        let i = f.axle();
        match (part, &self.probe.tyred[i]) {
            (Some(p), Some(t)) => f.value_on_tyre(t, p.eval(sigma), || {
                (self.inputs.elevation_at(iv, at_s, i), iv.rate_m_s[i])
            }),
            _ => self.switching_value_of_state(f, series, iv, at_s, sigma),
        }
    }

    /// [`Walk::switching_value`] from the whole state.
    #[inline(never)]
    fn switching_value_of_state(
        &self,
        f: Switching,
        series: &Series<N>,
        iv: &Interval,
        at_s: f64,
        sigma: f64,
    ) -> f64 {
        let w = self.inputs.at(iv, at_s);
        f.value(
            &self.probe.model,
            &series.eval(sigma),
            &road(&w, iv.rate_m_s),
        )
    }

    /// The first instant in `(0, len]` after `s0` at which one of the
    /// switching functions that differ between `from` and `to` changes
    /// side, to [`LOCATE_WIDTH`]: the earliest of their roots, each found by the
    /// Illinois variant of regula falsi on the series (Dowell & Jarratt,
    /// BIT 11, 1971), returned on the new side of the bracket.
    #[inline(always)]
    fn locate(
        &self,
        series: &Series<N>,
        iv: &Interval,
        s0: f64,
        len: f64,
        from: &[AxleRegime; 2],
        to: &[AxleRegime; 2],
    ) -> f64 {
        let mut first = len;
        let mut part = Part {
            e: [[0.0; 3]; MAX_TERMS],
            terms: 0,
        };
        for &f in candidates(self.probe.model.vehicle(), from, to).as_slice() {
            let reads = match f.reads::<N>(&self.probe) {
                Some(j) => {
                    series.fill_part(&mut part, j);
                    Some(&part)
                }
                None => None,
            };
            let g0 = self.switching_value(f, reads, series, iv, s0, 0.0);
            let g1 = self.switching_value(f, reads, series, iv, s0 + first, first);
            if f.side(g0) == f.side(g1) {
                continue;
            }
            first = illinois(
                |s| self.switching_value(f, reads, series, iv, s0 + s, s),
                |g| f.side(g) == f.side(g0),
                (0.0, g0),
                (first, g1),
                LOCATE_WIDTH * self.cache.h_s,
            );
        }
        first
    }
}

/// Width, relative to the output interval, to which a switching instant is
/// bracketed (2⁻⁴⁰). Every switch of this model is a kink (force
/// continuous), so an error δ in the instant moves rates by about
/// Δa·δ and positions by Δa·δ²/2 (Δa the jump in acceleration).
const LOCATE_WIDTH: f64 = 1.0 / (1u64 << 40) as f64;

/// Pieces the rest of an interval is cut into past the switch cap.
const CAPPED_PIECES: f64 = 16.0;

/// Root of `g` bracketed by `lo` (on the old side: `old(g)` true) and `hi`
/// (not): the Illinois method, bisecting when a step would leave the
/// bracket; returns the bracket's new-side end once the bracket is a few
/// rounding units wide.
#[inline(always)]
fn illinois(
    g: impl Fn(f64) -> f64,
    old: impl Fn(f64) -> bool,
    (mut lo, mut g_lo): (f64, f64),
    (mut hi, mut g_hi): (f64, f64),
    width_s: f64,
) -> f64 {
    let mut kept = 0i8; // which end stayed last: -1 lo, 1 hi
    for _ in 0..100 {
        if hi - lo <= width_s.max(4.0 * f64::EPSILON * hi) {
            break;
        }
        let mut m = lo - g_lo * (hi - lo) / (g_hi - g_lo);
        if !(m > lo && m < hi) {
            m = 0.5 * (lo + hi);
        }
        let gm = g(m);
        if old(gm) {
            lo = m;
            g_lo = gm;
            if kept == 1 {
                g_hi *= 0.5;
            }
            kept = 1;
        } else {
            hi = m;
            g_hi = gm;
            if kept == -1 {
                g_lo *= 0.5;
            }
            kept = -1;
        }
    }
    hi
}

#[inline(always)]
fn run_fixed<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    let dt = 1.0 / plan.output_rate_hz;
    let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
    let n = D;
    let force_x_m = excitation.force_x_m();
    // As the exact path: a harmonic force below the Nyquist frequency is
    // integrated exactly (every sub-step is shorter, so also below it).
    let harmonic_hz = excitation
        .force
        .map(|f| f.frequency_hz)
        .filter(|f| *f > 0.0 && f * dt < 0.5);
    let mut walk = Walk::<N> {
        cache: Cache {
            vehicle,
            force_x_m,
            harmonic_hz,
            h_s: dt,
            slots: (0..AXLE_CODES * AXLE_CODES).map(|_| None).collect(),
            met: 0,
        },
        probe: Probe::new(vehicle),
        inputs: Inputs {
            h_s: dt,
            harmonic: harmonic_hz.and_then(|f_hz| {
                let amp = excitation.force.map(|f| f.amplitude_n)?;
                Some((amp, 2.0 * std::f64::consts::PI * f_hz))
            }),
        },
        stats: PiecewiseStats::default(),
        series: None,
        unforced: excitation.force.is_none(),
        avx: has_avx(),
    };
    let mut x = [0.0; N];
    let road = excitation.profile.reader();
    let at = |k: usize| excitation.at_with(&road, k as f64 * dt);
    let rate_of = |w0: &[f64; 3], w1: &[f64; 3]| [(w1[0] - w0[0]) / dt, (w1[1] - w0[1]) / dt];
    let last = total - 1;
    let mut inputs = at(0);
    // The inputs of the next sample too, so that the end of each interval
    // also reads the regime the next one starts in.
    let mut next = at(last.min(1));
    // The hold's road rates over the next interval.
    let mut rate_m_s = rate_of(&hold_inputs(&inputs), &hold_inputs(&next));
    let mut start = walk.probe.key(&x, &hold_inputs(&inputs), rate_m_s);
    for k in 0..total {
        let t = k as f64 * dt;
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q[..n].copy_from_slice(&x[..n]);
        qd[..n].copy_from_slice(&x[n..]);
        let sample = Sample::from_inputs(
            &walk.probe.model,
            force_x_m,
            t,
            inputs,
            q,
            qd,
            Contact::LiftOff,
        );
        super::check_block(k, &x, t, vehicle)?;
        sink.accept(&sample)?;
        if k < last {
            let after = excitation.at_with(&road, last.min(k + 2) as f64 * dt);
            let (w0, w1, w2) = (
                hold_inputs(&inputs),
                hold_inputs(&next),
                hold_inputs(&after),
            );
            let iv = Interval {
                t0_s: t,
                w0,
                w1,
                rate_m_s,
            };
            let next_rate = (k + 1 < last).then(|| rate_of(&w1, &w2));
            start = walk.interval(&mut x, &iv, start, next_rate);
            rate_m_s = next_rate.unwrap_or(rate_m_s);
            inputs = next;
            next = after;
        }
    }
    super::check_finite(&x, (total - 1) as f64 * dt, vehicle)?;
    let mut stats = walk.stats;
    stats.regimes = walk.cache.met;
    Ok(RunInfo {
        solver: SolverKind::Piecewise,
        samples: total,
        output_rate_hz: plan.output_rate_hz,
        steps_accepted: 0,
        steps_rejected: 0,
        fallback: None,
        bonded_pull_samples: [0, 0],
        piecewise: Some(stats),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::vehicle::parse_vehicle;

    #[test]
    fn the_probe_reads_the_regime_regime_of_reads_from_the_element_model() {
        // Self-check (no outside reference): the per-run probe must give
        // the regime `regime_of` reads from the full kinematics, bit for
        // bit, or switches would be taken at other instants. The demo van
        // with stops and one-sided dampers, and the hatchback without
        // them, over states past the stops and off the road.
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/vehicles");
        let mut seed = 0x9e37_79b9_7f4a_7c15u64;
        let mut next = |scale: f64| {
            // Knuth's MMIX linear congruential generator.
            seed = seed
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            scale * ((seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5)
        };
        let mut seen = std::collections::HashSet::new();
        for file in ["demo_van_stops.toml", "demo_hatchback.toml"] {
            let path = dir.join(file);
            let text = std::fs::read_to_string(&path).expect("demo vehicle");
            let vehicle = parse_vehicle(&text, &path).expect("demo vehicle parses");
            assert_eq!(vehicle.dof_count(), 4, "{file}: a half car with wheels");
            let probe = Probe::new(&vehicle);
            let model = vehicle.element_model();
            for _ in 0..20_000 {
                let x: [f64; 8] = std::array::from_fn(|j| next(if j < 4 { 0.3 } else { 3.0 }));
                let w = [next(0.3), next(0.3), 0.0];
                let rate = [next(3.0), next(3.0)];
                let mut q = [0.0; MAX_DOF];
                let mut qd = [0.0; MAX_DOF];
                q[..4].copy_from_slice(&x[..4]);
                qd[..4].copy_from_slice(&x[4..]);
                let want = regime_of(&vehicle, &model.axle_kinematics(&q, &qd, &road(&w, rate)));
                let got = probe.regime(&x, &w, rate);
                assert_eq!(got, want, "{file}: {x:?} {w:?} {rate:?}");
                seen.insert(regime_key(&got));
            }
        }
        assert!(
            seen.len() > 40,
            "the states must reach many regimes: {}",
            seen.len()
        );
    }
}
