//! Checks that a finished run could be right, before anyone reads it as a
//! result.
//!
//! A run that is numerically wrong usually still produces numbers. Three
//! checks look at every run from the outside:
//!
//! - **Finite**: every number of the summary is finite
//!   ([`non_finite_fields`]); a NaN percentile or an infinite r.m.s. is never
//!   a result.
//! - **Energy**: the vehicle's elements are passive, so the energy stored in
//!   it (kinetic, springs, stops, tyres, and the gravity work of a wheel in
//!   the air) can only come from the work the road and the body force do on
//!   it, less what the dampers dissipate ([`EnergyLedger`]). The balance is
//!   integrated on the output grid; a solver that jumps a state, steps over
//!   a kink or diverges breaks it. The same balance bounds the travel: the
//!   spring and stop of an axle cannot hold more energy than was ever put in.
//! - **Spectral** (generated roads): a linear or nearly linear run must
//!   land near the frequency-domain prediction, within what the road's
//!   randomness and the record length explain ([`spectral_findings`]).
//!
//! A [`Finding`] is a warning (the result stands, with a reason to doubt
//! it) or implausible (the result cannot be right: `simulate` refuses to
//! print it and exits 1; a sweep flags the row and exits 1 at the end).

use serde::Serialize;

use crate::solve::{Sample, SolverKind};
use crate::vehicle::response::PredictedRms;
use crate::vehicle::{AXLE_NAMES, MAX_DOF, MAX_SUSPENDED_SEATS, Stops, Vehicle};

/// How much a finding matters.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// The result stands, with a stated reason to doubt it.
    Warning,
    /// The result cannot be right and must not be used.
    Implausible,
}

/// One thing a check found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    /// Warning or implausible.
    pub severity: Severity,
    /// Short machine-readable name (`non_finite`, `energy_balance`,
    /// `travel_beyond_energy`, `spectral_gap`).
    pub code: &'static str,
    /// What was found, with the numbers, and the likely cause.
    pub message: String,
}

impl Finding {
    /// A finding that is reported but does not refuse the result.
    pub fn warning(code: &'static str, message: String) -> Self {
        Finding {
            severity: Severity::Warning,
            code,
            message,
        }
    }

    fn implausible(code: &'static str, message: String) -> Self {
        Finding {
            severity: Severity::Implausible,
            code,
            message,
        }
    }
}

/// True if any finding says the result cannot be right.
pub fn any_implausible(findings: &[Finding]) -> bool {
    findings.iter().any(|f| f.severity == Severity::Implausible)
}

/// Energy-balance error (largest over the run, relative to the energy that
/// flowed through the vehicle) above which a run gets a warning. Measured
/// on 180 correct runs (the three demo vehicles, classes A–F, 30–110 km/h,
/// 1 km, two seeds) the balance closed within 0.23 % on the 1 kHz grid;
/// a solver fault that moves a state shows far above this.
pub const ENERGY_WARNING_FRACTION: f64 = 0.02;
/// Energy-balance error above which the run cannot be right.
pub const ENERGY_IMPLAUSIBLE_FRACTION: f64 = 0.10;

/// The energy bookkeeping of one axle's elements.
#[derive(Debug, Clone, Copy)]
struct AxleEnergy {
    spring_n_m: f64,
    /// `0.5 * spring_n_m` (and of the stop rate below): `0.5 * k * d * d`
    /// is `((0.5 * k) * d) * d`, so halving once gives the same bits.
    half_spring_n_m: f64,
    half_stop_n_m: f64,
    stops: Option<Stops>,
    /// Wheel coordinate, tyre rate and half the rate, for an axle with an
    /// unsprung mass.
    wheel: Option<(usize, f64, f64)>,
    /// Static force the contact carries (a tyre's, or the spring's without one), N.
    static_contact_n: f64,
    /// Where the contact lets go ([`AxleEnergy::release_point`]), worked
    /// out once: the divisions cost more per sample than the rest of a term.
    release_m: f64,
}

impl AxleEnergy {
    /// Spring plus stop force at travel `d` (compression positive).
    fn elastic_n(&self, d: f64) -> f64 {
        self.spring_n_m * d + self.stops.map_or(0.0, |s| s.force_n(d))
    }

    /// Energy stored in the spring and stop at travel `d`: `∫₀ᵈ (k x + stop(x)) dx`.
    fn suspension_j(&self, d: f64) -> f64 {
        let mut v = self.half_spring_n_m * d * d;
        if let Some(s) = &self.stops {
            if let Some(c) = s.bump_clearance_m.filter(|c| d > *c) {
                v += self.half_stop_n_m * (d - c) * (d - c);
            }
            if let Some(c) = s.rebound_clearance_m.filter(|c| d < -*c) {
                v += self.half_stop_n_m * (d + c) * (d + c);
            }
        }
        v
    }

    /// Deflection at which an elastic force `f(x)` (increasing, f(0) = 0)
    /// first reaches `-static` on the extension side.
    fn release_point(&self, tyre_rate: Option<f64>) -> f64 {
        let s = self.static_contact_n;
        if let Some(kt) = tyre_rate {
            return -s / kt;
        }
        let k = self.spring_n_m;
        match self
            .stops
            .and_then(|st| st.rebound_clearance_m.map(|c| (st.rate_n_m, c)))
        {
            // Past the rebound stop: k d + k_s (d + c) = −S.
            Some((ks, c)) if -s / k < -c => (-s - ks * c) / (k + ks),
            _ => -s / k,
        }
    }
}

/// Potential of a contact that can push but not pull: the elastic potential
/// `v(x)` while the clamped force `max(f(x), −S)` follows `f`, and a
/// constant force `−S` (gravity, in the dynamic coordinates) beyond the
/// release point `x*`: `v(x*) − S·(x − x*)` for `x < x*`.
fn clamped(x: f64, release: f64, static_n: f64, v: impl Fn(f64) -> f64) -> f64 {
    if x >= release {
        v(x)
    } else {
        v(release) - static_n * (x - release)
    }
}

/// Streams the energy balance of a run from its output samples.
///
/// Energy terms (dynamic coordinates, static equilibrium = 0):
/// `E = ½ q̇ᵀ M q̇ + Σ V_suspension(d) + Σ V_tyre(e) + Σ ½ k_s d_s²` (the last over
/// the seat suspensions, travel `d_s`), with the tyre
/// deflection `e = r − z_w`. `dE/dt = P_road + P_force − P_damping`, where
/// `P_road = Σ F_contact · ṙ`, `P_force = F·(ż + x_F θ̇)`, and the damping
/// power is the part of each element force that is not elastic times its
/// rate (the damper's `c·ḋ²`, the tyre damping's `c_t·ė²`, and the rest of
/// a clamped contact force; all ≥ 0). Powers are integrated by the
/// trapezoidal rule on the output grid.
#[derive(Debug, Clone)]
pub struct EnergyLedger {
    model: LedgerModel,
    /// Work terms of the previous and the current sample, used in turn
    /// ([`EnergyLedger::push`]), so neither is copied per sample.
    work: [Work; 2],
    /// Which of `work` holds the previous sample's terms.
    last: usize,
    /// Whether a previous sample exists.
    has_last: bool,
    sums: Sums,
}

/// One sample's part of the energy balance, apart from the running sums:
/// its stored energy and the work done on the vehicle and in its dampers
/// since the sample before (both 0 for a run's first sample), J.
#[derive(Debug, Clone, Copy, Default)]
pub struct LedgerStep {
    stored_j: f64,
    input_j: f64,
    damping_j: f64,
}

/// What the ledger knows of the vehicle, worked out once.
#[derive(Debug, Clone)]
struct LedgerModel {
    axles: [AxleEnergy; 2],
    /// Half of each mass (see [`AxleEnergy::half_spring_n_m`]), kg.
    half_masses_kg: [f64; MAX_DOF],
    /// Degrees of freedom: the masses past them are zero, so are their terms.
    dof_count: usize,
    /// Spring rate of each seat suspension (0 for an absent one), N/m.
    seat_rates_n_m: [f64; MAX_SUSPENDED_SEATS],
    /// Damping slots in use: the four of the axles plus one per suspended seat.
    damping_slots: usize,
    force_x_m: f64,
    /// Tyres kept on the road (the exact solver's linear model).
    bonded: bool,
    /// Whether the processor has AVX ([`EnergyLedger::push_block`]).
    avx: bool,
}

impl Sums {
    /// Follows the local balance; closes a window every [`LOCAL_WINDOW_S`].
    fn local(&mut self, t: f64, residual_j: f64, stored_j: f64) {
        let w = &mut self.window;
        let dev = (residual_j - w.residual0_j).abs();
        if !(dev <= w.deviation_j) {
            w.deviation_j = dev;
        }
        w.stored_max_j = w.stored_max_j.max(stored_j);
        if t - w.start_s >= LOCAL_WINDOW_S {
            let done = LocalBalance {
                start_s: w.start_s,
                deviation_j: w.deviation_j,
                scale_j: w.stored_max_j + (self.dissipated_j - w.dissipated0_j),
            };
            if !(done.fraction() <= self.worst_window.fraction()) {
                self.worst_window = done;
            }
            self.window = Window {
                start_s: t,
                residual0_j: residual_j,
                dissipated0_j: self.dissipated_j,
                deviation_j: 0.0,
                stored_max_j: stored_j,
            };
        }
    }
}

/// Forces and displacements of the work terms at one sample.
#[derive(Debug, Clone, Copy, Default)]
struct Work {
    /// Road under the front and rear axle, then the body force: forces, N.
    input_n: [f64; 3],
    /// Their displacements, m.
    input_m: [f64; 3],
    /// Damping part of the suspension and tyre forces of each axle, then
    /// of each seat suspension, N (a slot stays zero where there is no
    /// such element).
    damping_n: [f64; 4 + MAX_SUSPENDED_SEATS],
    /// Their displacements, m.
    damping_m: [f64; 4 + MAX_SUSPENDED_SEATS],
}

/// `½ (F₀ + F₁)(x₁ − x₀)`: one trapezoid of `∫ F dx`.
#[inline(always)]
fn trapezoid_j(f0_n: f64, f1_n: f64, x0_m: f64, x1_m: f64) -> f64 {
    0.5 * (f0_n + f1_n) * (x1_m - x0_m)
}

impl Work {
    /// Input work from `prev` to `self`: `Σ ½ (F₀ + F₁)(x₁ − x₀)`, summed in
    /// slot order.
    #[inline(always)]
    fn input_j(&self, prev: &Work) -> f64 {
        let t = |j: usize| {
            trapezoid_j(
                prev.input_n[j],
                self.input_n[j],
                prev.input_m[j],
                self.input_m[j],
            )
        };
        t(0) + t(1) + t(2)
    }

    /// Damping work from `prev` to `self` over the first `slots` slots.
    /// The slots left out are zero in both samples, so their terms are +0,
    /// and leaving a +0 out of a sum changes at most the sign of a zero sum,
    /// which the ledger's running totals (never −0) absorb: the bits of
    /// the totals are the same.
    #[inline(always)]
    fn damping_j(&self, prev: &Work, slots: usize) -> f64 {
        let t = |j: usize| {
            trapezoid_j(
                prev.damping_n[j],
                self.damping_n[j],
                prev.damping_m[j],
                self.damping_m[j],
            )
        };
        let mut sum = t(0) + t(1) + t(2) + t(3);
        for j in 4..slots.min(4 + MAX_SUSPENDED_SEATS) {
            sum += t(j);
        }
        sum
    }
}

/// What the ledger has added up so far.
#[derive(Debug, Clone, Copy, Default)]
struct Sums {
    input_j: f64,
    input_max_j: f64,
    dissipated_j: f64,
    stored_max_j: f64,
    residual_max_j: f64,
    residual_at_s: f64,
    window: Window,
    worst_window: LocalBalance,
}

/// One window of the local balance check (see [`LOCAL_WINDOW_S`]).
#[derive(Debug, Clone, Copy, Default)]
struct Window {
    start_s: f64,
    /// Residual at the window's start, J.
    residual0_j: f64,
    /// Dissipation at the window's start, J.
    dissipated0_j: f64,
    /// Largest |residual − residual0| so far, J.
    deviation_j: f64,
    /// Largest stored energy so far, J.
    stored_max_j: f64,
}

/// Length of the windows of the local balance, s: a state that jumps
/// (a solver restarted from a wrong state) changes the stored energy at once,
/// which is small beside a long run's total throughput but large beside the
/// energy that moves within a second.
pub const LOCAL_WINDOW_S: f64 = 1.0;

/// The worst window of the local balance.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct LocalBalance {
    /// Start of the window, s.
    pub start_s: f64,
    /// Largest change of the residual within it, J.
    pub deviation_j: f64,
    /// Energy that moved within it: largest stored energy plus what the
    /// dampers dissipated, J.
    pub scale_j: f64,
}

impl LocalBalance {
    /// Deviation relative to the window's energy.
    pub fn fraction(&self) -> f64 {
        if self.scale_j > 0.0 {
            self.deviation_j / self.scale_j
        } else if self.deviation_j == 0.0 {
            0.0
        } else {
            f64::INFINITY
        }
    }
}

/// The energy balance of a finished run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EnergyBalance {
    /// Largest work done on the vehicle so far (road and body force), J.
    pub input_max_j: f64,
    /// Energy the dampers dissipated over the run, J.
    pub dissipated_j: f64,
    /// Largest energy stored in the vehicle, J.
    pub stored_max_j: f64,
    /// Largest |stored − (input − dissipated)| over the run, J.
    pub residual_max_j: f64,
    /// When that largest residual occurred, s.
    pub residual_at_s: f64,
    /// The window of [`LOCAL_WINDOW_S`] where the balance was worst.
    pub worst_window: LocalBalance,
}

impl EnergyBalance {
    /// The residual relative to the energy that flowed through the vehicle.
    pub fn residual_fraction(&self) -> f64 {
        let scale = self
            .input_max_j
            .max(self.dissipated_j)
            .max(self.stored_max_j);
        if scale > 0.0 {
            self.residual_max_j / scale
        } else if self.residual_max_j == 0.0 {
            0.0
        } else {
            f64::INFINITY
        }
    }
}

impl EnergyLedger {
    /// A ledger for `vehicle` with the body force at `force_x_m`.
    pub fn new(vehicle: &Vehicle, force_x_m: f64) -> Self {
        let static_s = vehicle.static_suspension_n();
        let static_c = vehicle.static_contact_n();
        let axles = [0, 1].map(|i| {
            let a = &vehicle.axles[i];
            let wheel = vehicle
                .wheel_dof(i)
                .zip(a.tyre.as_ref())
                .map(|(w, t)| (w, t.rate_n_m, 0.5 * t.rate_n_m));
            let mut axle = AxleEnergy {
                spring_n_m: a.spring_n_m,
                half_spring_n_m: 0.5 * a.spring_n_m,
                half_stop_n_m: a.stops.map_or(0.0, |s| 0.5 * s.rate_n_m),
                stops: a.stops,
                wheel,
                static_contact_n: if wheel.is_some() {
                    static_c[i]
                } else {
                    static_s[i]
                },
                release_m: 0.0,
            };
            axle.release_m = axle.release_point(wheel.map(|(_, kt, _)| kt));
            axle
        });
        let model = LedgerModel {
            axles,
            half_masses_kg: vehicle.mass_diagonal().map(|m| 0.5 * m),
            seat_rates_n_m: {
                let mut k = [0.0; MAX_SUSPENDED_SEATS];
                for (slot, (_, p, _)) in k.iter_mut().zip(vehicle.suspended_seats()) {
                    *slot = p.rate_n_m;
                }
                k
            },
            damping_slots: 4 + vehicle.suspended_seat_count().min(MAX_SUSPENDED_SEATS),
            dof_count: vehicle.dof_count().min(MAX_DOF),
            force_x_m,
            bonded: false,
            avx: crate::lanes::has_avx(),
        };
        EnergyLedger {
            model,
            work: [Work::default(); 2],
            last: 0,
            has_last: false,
            sums: Sums::default(),
        }
    }

    /// Starts over for a run on `solver` (the exact path keeps tyres bonded
    /// to the road; the adaptive one lets them lift).
    pub fn start(&mut self, solver: SolverKind) {
        self.model.bonded = solver == SolverKind::Exact;
        self.work = [Work::default(); 2];
        self.has_last = false;
        self.sums = Sums::default();
    }

    /// Adds one output sample (in time order).
    ///
    /// Work is summed as `∫ F dx` over each element's own displacement
    /// (trapezoidal in `x`), not as `∫ F·ẋ dt`: the displacements are
    /// continuous where the road's slope jumps, so an output instant that
    /// falls on a road sample (taking the slope of the segment ahead) biases
    /// nothing.
    // Kept out of line: inlined, it crowds the sample-by-sample
    // evaluators' loop (runs take the chunk path, `push_block`, today).
    #[inline(never)]
    pub fn push(&mut self, s: &Sample) {
        let step = self.step_next(s);
        self.add(s.time_s, step);
    }

    /// One sample's terms ([`LedgerStep`]); its work slot is the one not
    /// holding the last sample's. A run's first sample did no work since
    /// a sample before: its work terms are +0, which leave the running
    /// sums (+0 then) with the same bits as not adding them.
    #[inline(always)]
    fn step_next(&mut self, s: &Sample) -> LedgerStep {
        let now = self.last ^ 1;
        let [w0, w1] = &mut self.work;
        let (work, prev) = if now == 0 { (w0, &*w1) } else { (w1, &*w0) };
        let stored_j = self.model.terms(s, work);
        let step = if self.has_last {
            LedgerStep {
                stored_j,
                input_j: work.input_j(prev),
                damping_j: work.damping_j(prev, self.model.damping_slots),
            }
        } else {
            LedgerStep {
                stored_j,
                input_j: 0.0,
                damping_j: 0.0,
            }
        };
        self.last = now;
        self.has_last = true;
        step
    }

    /// [`EnergyLedger::step_next`] for a sample after the first, whose
    /// terms go to slot `NOW` (the last sample's are in the other): the
    /// same arithmetic, with the slots known where it is compiled.
    #[inline(always)]
    fn step_at<const NOW: usize>(&mut self, s: &Sample) -> LedgerStep {
        let [w0, w1] = &mut self.work;
        let (work, prev) = if NOW == 0 { (w0, &*w1) } else { (w1, &*w0) };
        let stored_j = self.model.terms(s, work);
        self.last = NOW;
        LedgerStep {
            stored_j,
            input_j: work.input_j(prev),
            damping_j: work.damping_j(prev, self.model.damping_slots),
        }
    }

    /// Adds one sample's terms, taken at `time_s`, to the running sums.
    #[inline(always)]
    fn add(&mut self, time_s: f64, step: LedgerStep) {
        let m = &mut self.sums;
        m.input_j += step.input_j;
        m.dissipated_j += step.damping_j;
        let stored = step.stored_j;
        m.input_max_j = m.input_max_j.max(m.input_j);
        m.stored_max_j = m.stored_max_j.max(stored);
        let signed = stored - (m.input_j - m.dissipated_j);
        let residual = signed.abs();
        // `!(a <= b)` also catches a NaN residual.
        if !(residual <= m.residual_max_j) {
            m.residual_max_j = residual;
            m.residual_at_s = time_s;
        }
        m.local(time_s, signed, stored);
    }

    /// Adds output samples in time order, as [`EnergyLedger::push`] for
    /// each would, bit for bit (see [`EnergyLedger::for_each_step`]).
    pub fn push_block(&mut self, samples: &[Sample]) {
        #[cfg(target_arch = "x86_64")]
        if self.model.avx {
            // SAFETY: `avx` is true only where the processor has AVX.
            return unsafe { self.push_block_avx(samples) };
        }
        self.for_each_step(samples, |l, s, step| l.add(s.time_s, step));
    }

    /// [`EnergyLedger::push_block`] with AVX enabled.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn push_block_avx(&mut self, samples: &[Sample]) {
        self.for_each_step(samples, |l, s, step| l.add(s.time_s, step));
    }

    /// The per-sample half of [`EnergyLedger::push_block`]: each sample's
    /// terms written to `steps` (cleared first), the running sums left
    /// alone, so that another thread can add them in order with
    /// [`EnergyLedger::add_steps`]. This ledger then only serves to take
    /// terms; the one that adds them must see the same starts.
    pub fn steps_block(&mut self, samples: &[Sample], steps: &mut Vec<LedgerStep>) {
        steps.clear();
        #[cfg(target_arch = "x86_64")]
        if self.model.avx {
            // SAFETY: `avx` is true only where the processor has AVX.
            return unsafe { self.steps_block_avx(samples, steps) };
        }
        self.for_each_step(samples, |_, _, step| steps.push(step));
    }

    /// [`EnergyLedger::steps_block`] with AVX enabled.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn steps_block_avx(&mut self, samples: &[Sample], steps: &mut Vec<LedgerStep>) {
        self.for_each_step(samples, |_, _, step| steps.push(step));
    }

    /// Adds the terms [`EnergyLedger::steps_block`] took of `samples`, in
    /// order: the same sums, bit for bit, as [`EnergyLedger::push_block`].
    pub fn add_steps(&mut self, samples: &[Sample], steps: &[LedgerStep]) {
        for (s, &step) in samples.iter().zip(steps) {
            self.add(s.time_s, step);
        }
    }

    /// Each sample's terms handed to `f` in order: in pairs, so that each
    /// sample's work slot is fixed in the code rather than chosen per
    /// sample (about an eighth fewer instructions).
    #[inline(always)]
    fn for_each_step(
        &mut self,
        samples: &[Sample],
        mut f: impl FnMut(&mut Self, &Sample, LedgerStep),
    ) {
        let mut rest = samples;
        while let Some((s, tail)) = rest.split_first() {
            if self.has_last && self.last == 1 {
                break;
            }
            let step = self.step_next(s);
            f(self, s, step);
            rest = tail;
        }
        let mut pairs = rest.chunks_exact(2);
        for pair in &mut pairs {
            let step = self.step_at::<0>(&pair[0]);
            f(self, &pair[0], step);
            let step = self.step_at::<1>(&pair[1]);
            f(self, &pair[1], step);
        }
        if let [s] = pairs.remainder() {
            let step = self.step_at::<0>(s);
            f(self, s, step);
        }
    }

    /// The balance so far.
    pub fn balance(&self) -> EnergyBalance {
        let m = &self.sums;
        EnergyBalance {
            input_max_j: m.input_max_j,
            dissipated_j: m.dissipated_j,
            stored_max_j: m.stored_max_j,
            residual_max_j: m.residual_max_j,
            residual_at_s: m.residual_at_s,
            worst_window: m.worst_window,
        }
    }

    /// Energy the spring and stop of axle `i` hold at travel `d`, J.
    pub fn suspension_energy_j(&self, i: usize, d: f64) -> f64 {
        self.model.axles[i].suspension_j(d)
    }
}

impl LedgerModel {
    /// Stored energy at one sample, with the (force, displacement) pairs of
    /// the work terms written to `w`: inputs (road under each axle, body
    /// force), then the damping parts of each element force.
    #[inline(always)]
    fn terms(&self, s: &Sample, w: &mut Work) -> f64 {
        // Kinetic energy in coordinate order; the masses past the vehicle's
        // degrees of freedom are zero and their terms +0, which a sum of
        // non-negative terms does not feel.
        let kinetic = |stored: f64, j: usize| stored + self.half_masses_kg[j] * s.qd[j] * s.qd[j];
        let mut stored = self.half_masses_kg[0] * s.qd[0] * s.qd[0];
        // The half car with two wheels, unrolled where it is compiled.
        if self.dof_count == 4 {
            stored = (1..4).fold(stored, kinetic);
        } else {
            stored = (1..self.dof_count).fold(stored, kinetic);
        }
        let road = &s.inputs.road;
        let el = &s.elements;
        w.input_n[2] = s.inputs.force_n;
        w.input_m[2] = s.q[0] + self.force_x_m * s.q[1];
        for (i, a) in self.axles.iter().enumerate() {
            w.input_n[i] = el.contact_n[i];
            w.input_m[i] = road.elevation_m[i];
            stored = self.axle_terms(i, a, s, w, stored);
        }
        // Seat suspensions: linear, always in contact.
        for k in 0..self.damping_slots - 4 {
            let ks = self.seat_rates_n_m[k];
            if ks > 0.0 {
                let d = el.seat_travel_m[k];
                stored += 0.5 * ks * d * d;
                w.damping_n[4 + k] = el.seat_force_n[k] - ks * d;
                w.damping_m[4 + k] = d;
            }
        }
        stored
    }

    /// `stored_j` plus axle `i`'s stored energy (the suspension's, then the
    /// tyre's, added in that order), with its damping pairs written to `w`.
    #[inline(always)]
    fn axle_terms(&self, i: usize, a: &AxleEnergy, s: &Sample, w: &mut Work, stored_j: f64) -> f64 {
        let road = &s.inputs.road;
        let el = &s.elements;
        let d = el.travel_m[i];
        let s_n = a.static_contact_n;
        match a.wheel {
            Some((wdof, kt, half_kt)) => {
                let spring_j = a.suspension_j(d);
                w.damping_n[2 * i] = el.suspension_n[i] - a.elastic_n(d);
                w.damping_m[2 * i] = d;
                let e = road.elevation_m[i] - s.q[wdof];
                let (v, elastic) = if self.bonded {
                    (half_kt * e * e, kt * e)
                } else {
                    let release = a.release_m;
                    (
                        clamped(e, release, s_n, |x| half_kt * x * x),
                        (kt * e).max(-s_n),
                    )
                };
                w.damping_n[2 * i + 1] = el.contact_n[i] - elastic;
                w.damping_m[2 * i + 1] = e;
                stored_j + spring_j + v
            }
            None => {
                let (v, elastic) = if self.bonded {
                    (a.suspension_j(d), a.elastic_n(d))
                } else {
                    let release = a.release_m;
                    (
                        clamped(d, release, s_n, |x| a.suspension_j(x)),
                        a.elastic_n(d).max(-s_n),
                    )
                };
                w.damping_n[2 * i] = el.suspension_n[i] - elastic;
                w.damping_m[2 * i] = d;
                stored_j + v
            }
        }
    }
}

/// Findings of the energy balance and the travel it allows.
pub fn energy_findings(ledger: &EnergyLedger, travel_extremes_m: [[f64; 2]; 2]) -> Vec<Finding> {
    let b = ledger.balance();
    let mut out = Vec::new();
    let whole = b.residual_fraction();
    let local = b.worst_window.fraction();
    let text = if local >= whole {
        format!(
            "the energy balance does not close: within the second from t = {:.1} s the vehicle's energy moved {} J away from what the road and body force put in minus what the dampers dissipated ({:.1} % of the {} J that moved in that second); passive elements cannot do that, so the solver went wrong there (a state jumped)",
            b.worst_window.start_s,
            sig3(b.worst_window.deviation_j),
            100.0 * local,
            sig3(b.worst_window.scale_j),
        )
    } else {
        format!(
            "the energy balance does not close: at t = {:.3} s the vehicle held {} J more or less than the road and body force had put in minus what the dampers dissipated ({:.1} % of the {} J that flowed through it); passive elements cannot do that, so the solver went wrong",
            b.residual_at_s,
            sig3(b.residual_max_j),
            100.0 * whole,
            sig3(b.input_max_j.max(b.dissipated_j).max(b.stored_max_j)),
        )
    };
    // NaN in either (a broken run) must count as the worst.
    let worst = if whole.is_nan() || local.is_nan() {
        f64::NAN
    } else {
        whole.max(local)
    };
    // The balance is added up on the output grid: a road whose own samples
    // pass faster than the output rate (fine spacing, high speed) is not
    // resolved there, and neither is the run's response to it.
    let advice = " (if the road's samples pass faster than the output rate (spacing / speed below 1 / --rate), raise --rate; otherwise try --solver adaptive with a tighter --rtol, and report the case)";
    if !(worst <= ENERGY_IMPLAUSIBLE_FRACTION) {
        out.push(Finding::implausible("energy_balance", text + advice));
    } else if worst > ENERGY_WARNING_FRACTION {
        out.push(Finding::warning("energy_balance", text + advice));
    }
    // The spring and stop can hold at most what was ever put in (with the
    // balance's own tolerance on top).
    let budget_j = b.input_max_j * (1.0 + ENERGY_IMPLAUSIBLE_FRACTION);
    for (i, ext) in travel_extremes_m.iter().enumerate() {
        for &d in ext {
            let need_j = ledger.suspension_energy_j(i, d);
            if need_j > budget_j && need_j > 0.0 {
                out.push(Finding::implausible(
                    "travel_beyond_energy",
                    format!(
                        "{} travel reached {:.4} m, which stores {} J in the spring and stops, more than the {} J the road and body force ever put into the vehicle: the travel cannot be right",
                        AXLE_NAMES[i],
                        d,
                        sig3(need_j),
                        sig3(b.input_max_j)
                    ),
                ));
            }
        }
    }
    out
}

/// Three significant figures, without an exponent for everyday sizes.
fn sig3(x: f64) -> String {
    if x != 0.0 && (x.abs() >= 1e6 || x.abs() < 1e-3) {
        format!("{x:.2e}")
    } else {
        let digits = (2 - x.abs().log10().floor() as i32).max(0) as usize;
        format!("{x:.digits$}")
    }
}

/// How far a run went outside the linear model, as fractions of its samples.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Engagement {
    /// Largest fraction of time a tyre (or spring) was off the road.
    pub off_ground: f64,
    /// Largest fraction of time an axle was past a stop clearance.
    pub past_stops: f64,
    /// Largest ratio of rebound to bump damping (1 for symmetric dampers).
    pub damper_asymmetry: f64,
}

impl Engagement {
    /// Nearly linear: the stops and lift-off acted for under 0.5 % of the
    /// time and bump and rebound damping differ by at most 25 % (our own
    /// threshold). An asymmetric damper pulls the mean travel away from
    /// zero ("jacking"), which the linear prediction cannot show, so
    /// travel r.m.s. values then differ from it by design.
    pub fn nearly_linear(&self) -> bool {
        self.off_ground < 0.005 && self.past_stops < 0.005 && self.damper_asymmetry <= 1.25
    }
}

/// Relative scatter (one standard deviation) to expect between a
/// time-domain r.m.s. and the spectral prediction over `duration_s`.
///
/// With Rayleigh amplitudes the road is one realisation of a random
/// process: the normalised random error of an r.m.s. estimate is about
/// `1 / (2 √(B T))` for a response of effective bandwidth `B` over `T`
/// (Bendat & Piersol, *Random Data*, 4th ed., §8.2, for Gaussian
/// processes; `B` ≈ 1 Hz for body modes near 1–1.5 Hz with 20–40 %
/// damping, an assumption). With deterministic amplitudes only the phases
/// are random and the r.m.s. is nearly exact; 1 % stands for the start from
/// rest and the rear wheel's run-in over the wheelbase.
pub fn expected_scatter(duration_s: f64, random_amplitudes: bool) -> f64 {
    let t = duration_s.max(1e-9);
    if random_amplitudes {
        0.01 + 1.0 / (2.0 * t.sqrt())
    } else {
        0.01 + 0.5 / t
    }
}

/// One quantity compared with its prediction.
#[derive(Debug, Clone, PartialEq)]
pub struct Gap {
    /// What it is (e.g. "driver aw").
    pub what: String,
    /// Predicted value.
    pub predicted: f64,
    /// Time-domain value.
    pub simulated: f64,
}

impl Gap {
    /// |simulated − predicted| / predicted.
    pub fn relative(&self) -> f64 {
        (self.simulated - self.predicted).abs() / self.predicted.abs()
    }
}

/// The quantities a run and its prediction share.
pub fn gaps(summary: &crate::pipeline::RunSummary, p: &PredictedRms) -> Vec<Gap> {
    let mut out = Vec::new();
    for (s, ps) in summary.seats.iter().zip(&p.seats) {
        out.push(Gap {
            what: format!("{} aw", s.name),
            predicted: ps.aw,
            simulated: s.measures.aw,
        });
    }
    for (name, a, pa) in [
        ("front", &summary.axles.front, &p.axles.front),
        ("rear", &summary.axles.rear, &p.axles.rear),
    ] {
        out.push(Gap {
            what: format!("{name} travel r.m.s."),
            predicted: pa.travel_rms,
            simulated: a.travel_rms,
        });
        out.push(Gap {
            what: format!("{name} tyre load r.m.s."),
            predicted: pa.tyre_load_rms,
            simulated: a.tyre_load_rms,
        });
    }
    out
}

/// An honest account of the gap between a run and its spectral prediction,
/// and a warning when it is larger than the road's randomness explains.
pub fn spectral_findings(
    gaps: &[Gap],
    engagement: &Engagement,
    duration_s: f64,
    random_amplitudes: bool,
) -> (String, Vec<Finding>) {
    let worst = gaps
        .iter()
        .filter(|g| g.predicted > 0.0)
        .max_by(|a, b| a.relative().total_cmp(&b.relative()));
    let Some(worst) = worst else {
        return (String::new(), Vec::new());
    };
    let gap = worst.relative();
    let scatter = expected_scatter(duration_s, random_amplitudes);
    let allowed = (3.0 * scatter).max(0.05);
    let size = format!(
        "the largest gap is {:.1} % ({}); over {:.0} s of {} road about {:.1} % is statistical scatter",
        100.0 * gap,
        worst.what,
        duration_s,
        if random_amplitudes {
            "random-amplitude"
        } else {
            "deterministic-amplitude"
        },
        100.0 * scatter
    );
    if engagement.nearly_linear() {
        if gap > allowed {
            let text = format!(
                "{size}; the run is linear or nearly so (off the ground {:.2} %, past a stop {:.2} % of the time), so a gap this size points to the solver, not to the road: compare with --solver adaptive --rtol 1e-9",
                100.0 * engagement.off_ground,
                100.0 * engagement.past_stops
            );
            return (text.clone(), vec![Finding::warning("spectral_gap", text)]);
        }
        return (
            format!("{size}; the run is linear or nearly so and agrees within that"),
            Vec::new(),
        );
    }
    (
        format!(
            "{size}; the prediction is linear (mean damper rate, no stops, tyres on the road) while this run spent {:.2} % of the time with a tyre off the ground and {:.2} % past a stop, with dampers {} (which shifts the mean travel), so a gap is expected and the time-domain values are the ones to use",
            100.0 * engagement.off_ground,
            100.0 * engagement.past_stops,
            asymmetry_words(engagement.damper_asymmetry)
        ),
        Vec::new(),
    )
}

/// The dampers' rebound/bump asymmetry in words; a damper with no damping
/// in one direction has no finite ratio (found by the command-line fuzz).
fn asymmetry_words(ratio: f64) -> String {
    if ratio.is_finite() {
        format!("up to {ratio:.2}:1 between rebound and bump")
    } else {
        "undamped in one direction (bump or rebound damping 0)".to_string()
    }
}

/// Paths (`seats[0].vdv`, `axles.front.durability.travel_percentiles_m[4][1]`)
/// of every non-finite number in `value`'s serialised form. Options that are
/// `None` are not numbers and are not reported.
pub fn non_finite_fields<T: Serialize + ?Sized>(value: &T) -> Vec<String> {
    let mut scan = finite::Scanner::default();
    // The scanner never fails; a serialisation error would only mean a
    // type that refuses to serialise, which the summary types never do.
    let _ = value.serialize(&mut scan);
    scan.found
}

mod finite;

#[cfg(test)]
mod tests {
    use super::*;

    fn gap(predicted: f64, simulated: f64) -> Vec<Gap> {
        vec![Gap {
            what: "driver aw".into(),
            predicted,
            simulated,
        }]
    }

    const LINEAR: Engagement = Engagement {
        off_ground: 0.0,
        past_stops: 0.0,
        damper_asymmetry: 1.0,
    };

    #[test]
    fn the_expected_scatter_follows_the_random_error_of_an_rms_estimate() {
        // Bendat & Piersol: ε ≈ 1/(2√(B T)) for an r.m.s. estimate, B = 1 Hz
        // assumed, plus 1 % for the start from rest.
        assert!((expected_scatter(100.0, true) - (0.01 + 0.05)).abs() < 1e-12);
        assert!((expected_scatter(25.0, true) - (0.01 + 0.1)).abs() < 1e-12);
        // Deterministic amplitudes: far smaller, falling with the duration.
        assert!(expected_scatter(100.0, false) < 0.02);
        assert!(expected_scatter(10.0, false) > expected_scatter(100.0, false));
    }

    #[test]
    fn a_large_gap_on_a_linear_run_is_a_warning_that_names_its_size_and_cause() {
        // The gap once printed with a hint pointing elsewhere: 8883 %.
        let (note, found) = spectral_findings(&gap(0.823, 73.9), &LINEAR, 60.0, false);
        assert_eq!(found.len(), 1);
        assert_eq!(found[0].code, "spectral_gap");
        assert!(
            note.contains("8879.3 %") && note.contains("solver"),
            "{note}"
        );
        // Within the scatter: no warning, and the note says it agrees.
        let (note, found) = spectral_findings(&gap(0.823, 0.822), &LINEAR, 60.0, false);
        assert!(found.is_empty() && note.contains("agrees"), "{note}");
    }

    #[test]
    fn a_gap_on_a_clearly_nonlinear_run_is_explained_not_flagged() {
        let airborne = Engagement {
            off_ground: 0.2,
            ..LINEAR
        };
        let (note, found) = spectral_findings(&gap(1.0, 1.6), &airborne, 60.0, false);
        assert!(found.is_empty());
        assert!(
            note.contains("20.00 % of the time with a tyre off the ground"),
            "{note}"
        );
        let asymmetric = Engagement {
            damper_asymmetry: 2.4,
            ..LINEAR
        };
        assert!(!asymmetric.nearly_linear());
    }

    #[test]
    fn the_clamped_potential_is_continuous_and_grows_beyond_release() {
        // v(x) = ½ k x² until the force k x reaches −S at x* = −S/k, then
        // the constant force −S: continuous, and rising as x falls further.
        let (k, s) = (1000.0, 50.0);
        let release = -s / k;
        let v = |x: f64| clamped(x, release, s, |y| 0.5 * k * y * y);
        assert!((v(release - 1e-12) - v(release + 1e-12)).abs() < 1e-9);
        assert!(v(release - 0.1) > v(release));
        assert!((v(release - 0.1) - (0.5 * k * release * release + s * 0.1)).abs() < 1e-9);
    }
}
