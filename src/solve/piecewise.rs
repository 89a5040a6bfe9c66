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
//! road). Its discretisations for the dyadic sub-steps `h, h/2, …, h/2^M`
//! (`h` the output interval, `M` = [`MAX_LEVEL`]) are computed lazily, the
//! first time the regime needs that sub-step, and kept for the run.
//!
//! # Locating a switch
//! Inside an output interval the inputs are linear in time (the hold), so
//! the road at any sub-step end is an exact interpolation of the two
//! output samples, and each sub-step is exact for its regime. A sub-step is
//! committed when the regime read from the element model at its end (the
//! same comparisons as [`crate::vehicle::ElementModel::evaluate_with`]) is
//! the one it was taken in; otherwise it is halved, down to `h/2^M`. The
//! finest sub-step across the switch is then committed in the old regime and
//! the run continues in the new one. This is bisection on the switching
//! functions along the regime's exact solution: the switch time is known to
//! `h/2^M` (1 ns at 1 kHz with `M` = 20). Every switch of this model is
//! force-continuous (a kink: damper force 0 at travel rate 0, stop force 0
//! at the clearance, tyre force −static load at lift-off), so the state
//! error of one located switch is second order in that.
//!
//! **Limit:** a switching function that crosses zero twice inside one
//! sub-step (e.g. a hop shorter than the sub-step tried) is not seen; the
//! first sub-step tried is the whole output interval, so events shorter
//! than one output interval can be missed (their effect then is that of a
//! kink lasting under one output interval).
//!
//! # Chattering
//! Because the vector field is continuous across every switch, there is no
//! sliding mode; repeated switching can only come from grazing (a
//! switching function tangent to zero, e.g. a tyre at zero load or a
//! one-sided damper at travel rate 0). Each located switch commits at least
//! one finest sub-step, so nothing can loop; in addition, past
//! [`MAX_SWITCHES_PER_INTERVAL`] switches in one output interval, switches
//! are no longer located: the rest of the interval is taken in the
//! coarsest aligned sub-steps (at most `M` of them), each in the regime
//! read at the end of the one before. Such intervals are counted
//! (`chattering_intervals` in the run info).

use nalgebra::DMatrix;

use super::exact::{discretise_state_space, harmonic_columns, hold_inputs};
use super::{Excitation, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, sample_count};
use crate::vehicle::{
    AxleKinematics, AxleRegime, Contact, DamperSide, ElementModel, MAX_DOF, RoadState, StopSide,
    Vehicle,
};

/// Finest sub-step: the output interval over 2^MAX_LEVEL.
pub const MAX_LEVEL: u32 = 20;
/// Switches located per output interval before the rest is taken without
/// locating them (see the module doc).
pub const MAX_SWITCHES_PER_INTERVAL: u32 = 64;
/// Sub-step positions in an interval are counted in units of h/2^MAX_LEVEL.
const FULL: u32 = 1 << MAX_LEVEL;

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

/// One sub-step's update `x' = Φ x + G₀ w₀ + G₁ w₁ + g_c` in fixed-size,
/// column-major arrays, summed in the order of [`super::Step::advance`].
#[derive(Debug, Clone, Copy)]
struct Update<const N: usize> {
    phi: [[f64; N]; N],
    g0: [[f64; N]; 3],
    g1: [[f64; N]; 3],
    gc: Option<[f64; N]>,
}

impl<const N: usize> Update<N> {
    #[inline(always)]
    fn advance(&self, x: &[f64; N], w0: &[f64; 3], w1: &[f64; 3]) -> [f64; N] {
        let mut y = [0.0; N];
        for (col, &xj) in self.phi.iter().zip(x) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * xj;
            }
        }
        for (col, &wj) in self.g0.iter().zip(w0) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        for (col, &wj) in self.g1.iter().zip(w1) {
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

/// A regime's first-order form and its lazily filled sub-step updates.
struct Regime<const N: usize> {
    ss: crate::vehicle::StateSpace,
    constant: Option<nalgebra::DVector<f64>>,
    levels: Vec<Option<Box<Update<N>>>>,
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

fn regime_key(r: &[AxleRegime; 2]) -> usize {
    axle_code(&r[0]) + AXLE_CODES * axle_code(&r[1])
}

impl<const N: usize> Cache<'_, N> {
    /// The update of regime `r` for sub-step level `level`.
    fn update(&mut self, r: &[AxleRegime; 2], level: u32) -> &Update<N> {
        let key = regime_key(r);
        if self.slots[key].is_none() {
            let (ss, c) = self.vehicle.state_space_in(r, self.force_x_m);
            let constant = (c.iter().any(|v| *v != 0.0)).then_some(c);
            self.slots[key] = Some(Box::new(Regime {
                ss,
                constant,
                levels: vec![None; MAX_LEVEL as usize + 1],
            }));
            self.met += 1;
        }
        let (h_s, harmonic_hz) = (self.h_s, self.harmonic_hz);
        let Some(regime) = self.slots[key].as_deref_mut() else {
            unreachable!("filled above")
        };
        let slot = &mut regime.levels[level as usize];
        if slot.is_none() {
            let h = h_s / f64::from(1u32 << level);
            // The whole output interval as the exact path discretises it
            // (one regime gives its samples bit for bit); the sub-steps,
            // met only when locating switches, by the smaller exponential.
            let (mut d, gc) = if level == 0 {
                let (d, p) = discretise_state_space(&regime.ss, h);
                let gc = regime.constant.as_ref().map(|c| p * c);
                (d, gc)
            } else {
                discretise_compact(&regime.ss, regime.constant.as_ref(), h)
            };
            if let Some(f) = harmonic_hz {
                harmonic_columns(&regime.ss, f, h, &mut d);
            }
            *slot = Some(Box::new(fixed(&d, gc.as_ref())));
        }
        match slot {
            Some(u) => u,
            None => unreachable!("filled above"),
        }
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

/// The first-order-hold discretisation of `ẋ = A x + B₀ w + B₁ ẇ + c`
/// over `h_s` from one exponential of the `(n + 7)`-square matrix
/// `[[A, B₀, B₁, c], [0, 0, I, 0], [0, 0, 0, 0], [0, 0, 0, 0]]·h`, whose
/// first block row is `[Φ, Γ₁, Γ₂, Γ_c]` (Van Loan, "Computing integrals
/// involving the matrix exponential", IEEE Trans. Autom. Control 23(3),
/// 1978; the hold as in Franklin, Powell & Workman, *Digital Control of
/// Dynamic Systems*, 3rd ed., §6.3): with `w` linear from `w₀` to `w₁`,
/// `x(h) = Φ x₀ + Γ₁ w₀ + Γ₂ (w₁ − w₀)/h + Γ_c`, so `G₀ = Γ₁ − Γ₂/h`,
/// `G₁ = Γ₂/h`. The same update as [`discretise_state_space`]'s `3n`-square
/// form (`Γ₁ = P B₀`, `Γ₂ = h Q B₀ + P B₁`) to rounding, at about a fifth
/// of the cost for the half car (15 instead of 24 rows).
pub(super) fn discretise_compact(
    ss: &crate::vehicle::StateSpace,
    constant: Option<&nalgebra::DVector<f64>>,
    h_s: f64,
) -> (super::Discrete, Option<nalgebra::DVector<f64>>) {
    let n = ss.a.nrows();
    let m = n + 7;
    let mut big = DMatrix::zeros(m, m);
    big.view_mut((0, 0), (n, n)).copy_from(&(&ss.a * h_s));
    // B₀ acts on [r_f, r_r, F]; B₁ on their rates [ṙ_f, ṙ_r, 0].
    for r in 0..n {
        big[(r, n)] = ss.b[(r, 0)] * h_s;
        big[(r, n + 1)] = ss.b[(r, 1)] * h_s;
        big[(r, n + 2)] = ss.b[(r, 4)] * h_s;
        big[(r, n + 3)] = ss.b[(r, 2)] * h_s;
        big[(r, n + 4)] = ss.b[(r, 3)] * h_s;
        if let Some(c) = constant {
            big[(r, n + 6)] = c[r] * h_s;
        }
    }
    for j in 0..3 {
        big[(n + j, n + 3 + j)] = h_s; // the held inputs' rates
    }
    let e = big.exp();
    let gamma1 = e.view((0, n), (n, 3)).into_owned();
    let gamma2 = e.view((0, n + 3), (n, 3)).into_owned() / h_s;
    let d = super::Discrete {
        phi: e.view((0, 0), (n, n)).into_owned(),
        g0: &gamma1 - &gamma2,
        g1: gamma2,
    };
    let gc = constant.map(|_| e.view((0, n + 6), (n, 1)).column(0).into_owned());
    (d, gc)
}

/// The regime the element model is in at `el` (same comparisons as the
/// element model: damper bump at travel rate ≥ 0, a stop past its
/// clearance, contact as the model found it).
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

/// Evaluates inputs inside an interval (position `p` in units of h/2^M).
struct Inputs<'a> {
    excitation: &'a Excitation<'a>,
    h_s: f64,
    harmonic: bool,
}

impl Inputs<'_> {
    #[inline]
    fn at(&self, iv: &Interval, p: u32) -> [f64; 3] {
        if p == 0 {
            return iv.w0;
        }
        if p == FULL {
            return iv.w1;
        }
        let s = f64::from(p) / f64::from(FULL);
        let lerp = |a: f64, b: f64| a + s * (b - a);
        let force_n = if self.harmonic {
            self.excitation.at(iv.t0_s + s * self.h_s).force_n
        } else {
            lerp(iv.w0[2], iv.w1[2])
        };
        [lerp(iv.w0[0], iv.w1[0]), lerp(iv.w0[1], iv.w1[1]), force_n]
    }
}

/// The regime at `x` with held inputs `w` (road rates of the hold): travel,
/// travel rate and contact only, as the element model computes them
/// ([`ElementModel::axle_kinematics`]), not the whole element state.
#[inline]
fn regime_at<const N: usize>(
    model: &ElementModel<'_>,
    x: &[f64; N],
    w: &[f64; 3],
    rate_m_s: [f64; 2],
) -> [AxleRegime; 2] {
    let n = N / 2;
    let mut q = [0.0; MAX_DOF];
    let mut qd = [0.0; MAX_DOF];
    q[..n].copy_from_slice(&x[..n]);
    qd[..n].copy_from_slice(&x[n..]);
    let road = RoadState {
        elevation_m: [w[0], w[1]],
        rate_m_s,
    };
    regime_of(model.vehicle(), &model.axle_kinematics(&q, &qd, &road))
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
        run_fixed(vehicle, excitation, plan, sink)
    )
}

/// State of the stepping across intervals.
struct Walk<'a, const N: usize> {
    cache: Cache<'a, N>,
    model: ElementModel<'a>,
    inputs: Inputs<'a>,
    stats: PiecewiseStats,
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

    /// Advances `x` across one output interval; returns the regime at its end.
    fn interval(&mut self, x: &mut [f64; N], iv: &Interval) -> [AxleRegime; 2] {
        let mut regime = regime_at(&self.model, x, &iv.w0, iv.rate_m_s);
        let (mut p, mut level, mut switches) = (0u32, 0u32, 0u32);
        while p < FULL {
            let step = FULL >> level;
            let (w0, w1) = (self.inputs.at(iv, p), self.inputs.at(iv, p + step));
            let x_try = self.cache.update(&regime, level).advance(x, &w0, &w1);
            let end = regime_at(&self.model, &x_try, &w1, iv.rate_m_s);
            let locating = switches < MAX_SWITCHES_PER_INTERVAL;
            if end != regime && locating && level < MAX_LEVEL {
                level += 1; // halve: the switch lies in this sub-step
                continue;
            }
            *x = x_try;
            p += step;
            if end != regime {
                if locating {
                    switches += 1;
                    self.count(&regime, &end);
                    if switches == MAX_SWITCHES_PER_INTERVAL {
                        self.stats.chattering_intervals += 1;
                    }
                }
                regime = end;
            }
            // Coarsen while the position allows the longer sub-step.
            while level > 0 && p % (FULL >> (level - 1)) == 0 {
                level -= 1;
            }
        }
        regime
    }
}

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
        model: vehicle.element_model(),
        inputs: Inputs {
            excitation,
            h_s: dt,
            harmonic: harmonic_hz.is_some(),
        },
        stats: PiecewiseStats::default(),
    };
    let mut x = [0.0; N];
    let mut inputs = excitation.at(0.0);
    for k in 0..total {
        let t = k as f64 * dt;
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q[..n].copy_from_slice(&x[..n]);
        qd[..n].copy_from_slice(&x[n..]);
        let sample =
            Sample::from_inputs(&walk.model, force_x_m, t, inputs, q, qd, Contact::LiftOff);
        super::check_block(k, &x, t, vehicle)?;
        sink.accept(&sample)?;
        if k + 1 < total {
            let next = excitation.at((k + 1) as f64 * dt);
            let (w0, w1) = (hold_inputs(&inputs), hold_inputs(&next));
            let iv = Interval {
                t0_s: t,
                w0,
                w1,
                rate_m_s: [(w1[0] - w0[0]) / dt, (w1[1] - w0[1]) / dt],
            };
            walk.interval(&mut x, &iv);
            inputs = next;
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
