//! Time-domain runs of a [`Vehicle`] over a road at constant speed.
//!
//! Three solvers share one model and one output grid:
//! - **adaptive**: Dormand–Prince 5(4) with error control on the full
//!   nonlinear element model ([`Vehicle::evaluate`]), one integration from
//!   start to end with steps ending on the road's sample points, and dense
//!   output onto the grid. Works for any element characteristic.
//! - **exact**: for linear vehicles, the state-space model discretised once
//!   per run (matrix exponential with a first-order hold on the inputs,
//!   Franklin, Powell & Workman, *Digital Control of Dynamic Systems*,
//!   3rd ed., §6.3), then one matrix–vector update per output sample.
//! - **piecewise**: for piecewise-linear vehicles (asymmetric dampers,
//!   stops, tyre lift-off), the exact update of each linear regime,
//!   discretised when first met and cached, with every switch located
//!   inside the output interval by bisection on dyadic sub-steps (see
//!   `piecewise.rs`).
//!
//! Under `auto`, a linear vehicle runs exact and, if a tyre leaves the
//! road, is re-run piecewise; any other piecewise-linear vehicle runs
//! piecewise; the adaptive solver is kept for anything else and on request.
//!
//! The choice is made first, as a plain [`Plan`] value ([`plan`]), and run
//! second ([`run`]). Results stream out sample by sample to a caller's
//! sink, so memory stays bounded however long the road.
//!
//! # Road input
//! The front wheel is at `x = x₀ + v·t` (x₀ the profile's first distance),
//! the rear wheel at `x − (a + b)`. The rear wheel sees the first sample
//! until it reaches the profile start. Elevations are taken relative to the
//! first sample (static equilibrium there), so the run starts at rest. A run
//! lasts until the front wheel reaches the last sample.

mod adaptive;
mod dopri5;
mod exact;
mod piecewise;

pub use exact::{Discrete, Step, discretise, discretise_harmonic};
pub use piecewise::{MAX_SWITCHES_PER_INTERVAL, PiecewiseStats};

use thiserror::Error;

use crate::road::{Profile, ProfileReader};
use crate::vehicle::{
    AXLE_NAMES, Contact, ElementModel, ElementState, MAX_DOF, RoadState, Vehicle,
};

/// Default output rate, Hz: 1 kHz resolves wheel hop (10–15 Hz) and the
/// ISO 2631-1 weightings up to their 100 Hz band limit.
pub const DEFAULT_OUTPUT_RATE_HZ: f64 = 1000.0;
/// Highest output rate accepted, Hz (1 MHz: far above any ride frequency).
pub const MAX_OUTPUT_RATE_HZ: f64 = 1.0e6;
/// Most output samples one run may have (10⁹: about 12 days of driving at 1 kHz).
pub const MAX_SAMPLES: usize = 1_000_000_000;
/// Default relative tolerance of the adaptive solver.
pub const DEFAULT_RTOL: f64 = 1e-7;
/// Default absolute tolerance of the adaptive solver (states in m, rad, m/s).
pub const DEFAULT_ATOL: f64 = 1e-9;

/// A sinusoidal vertical force on the body, `F(t) = f0·sin(2π f t)`, e.g.
/// an engine imbalance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HarmonicForce {
    /// Amplitude, N (positive up).
    pub amplitude_n: f64,
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Point of application ahead of the CG, m.
    pub x_m: f64,
}

/// What drives the vehicle: a road at a speed, and optionally a body force.
#[derive(Debug, Clone, Copy)]
pub struct Excitation<'a> {
    /// The road under both axles.
    pub profile: &'a Profile,
    /// Forward speed, m/s (> 0).
    pub speed_m_s: f64,
    /// Distance from the front to the rear axle, m.
    pub wheelbase_m: f64,
    /// Optional harmonic body force.
    pub force: Option<HarmonicForce>,
}

/// Inputs at one instant.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Inputs {
    /// Front axle position along the profile, m.
    pub distance_m: f64,
    /// Road under each axle.
    pub road: RoadState,
    /// Body force, N.
    pub force_n: f64,
}

impl Excitation<'_> {
    /// `(last distance − first distance) / speed`, s (the documented `duration_s`).
    pub fn duration_s(&self) -> f64 {
        self.profile.length_m() / self.speed_m_s
    }

    /// Point of application of the body force (0 when there is none).
    pub fn force_x_m(&self) -> f64 {
        self.force.map_or(0.0, |f| f.x_m)
    }

    /// Inputs at time `t_s`.
    #[inline(always)]
    pub fn at(&self, t_s: f64) -> Inputs {
        self.at_with(&self.profile.reader(), t_s)
    }

    /// [`Excitation::at`] through `road`, this excitation's
    /// [`Profile::reader`] made once for a loop over many instants.
    #[inline(always)]
    pub fn at_with(&self, road: &ProfileReader<'_>, t_s: f64) -> Inputs {
        let p = self.profile;
        let z0 = p.elevation_m[0];
        let x_front = p.start_m + self.speed_m_s * t_s;
        let x_rear = x_front - self.wheelbase_m;
        // One segment lookup per axle for both elevation and slope.
        let (e_front, s_front) = road.elevation_and_slope_at(x_front);
        let (e_rear, s_rear) = road.elevation_and_slope_at(x_rear);
        let road = RoadState {
            elevation_m: [e_front - z0, e_rear - z0],
            rate_m_s: [s_front * self.speed_m_s, s_rear * self.speed_m_s],
        };
        let force_n = self.force.map_or(0.0, |f| {
            f.amplitude_n * (2.0 * std::f64::consts::PI * f.frequency_hz * t_s).sin()
        });
        Inputs {
            distance_m: x_front,
            road,
            force_n,
        }
    }
}

/// Which solver the user asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SolverChoice {
    /// Exact for linear vehicles (re-run piecewise if a tyre leaves the
    /// road), piecewise for piecewise-linear ones, adaptive otherwise.
    #[default]
    Auto,
    /// Always the exact discrete path (refused for nonlinear vehicles).
    Exact,
    /// Always the piecewise-exact path (refused unless piecewise linear).
    Piecewise,
    /// Always the adaptive Dormand–Prince path.
    Adaptive,
}

impl std::str::FromStr for SolverChoice {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.to_ascii_lowercase().as_str() {
            "auto" => Ok(SolverChoice::Auto),
            "exact" => Ok(SolverChoice::Exact),
            "adaptive" => Ok(SolverChoice::Adaptive),
            "piecewise" => Ok(SolverChoice::Piecewise),
            _ => Err(format!(
                "unknown solver {s:?}: use auto, exact, piecewise or adaptive"
            )),
        }
    }
}

/// The solver that actually runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum SolverKind {
    /// Discrete state transition (linear vehicles).
    Exact,
    /// Dormand–Prince 5(4) with error control.
    Adaptive,
    /// Exact update per linear regime, switches located (piecewise-linear vehicles).
    Piecewise,
}

impl SolverKind {
    /// The name used in tables, JSON and `--solver`.
    pub fn name(self) -> &'static str {
        match self {
            SolverKind::Exact => "exact",
            SolverKind::Adaptive => "adaptive",
            SolverKind::Piecewise => "piecewise",
        }
    }
}

/// User-settable solver options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolverSettings {
    /// Which solver.
    pub choice: SolverChoice,
    /// Output grid rate, Hz.
    pub output_rate_hz: f64,
    /// Relative tolerance (adaptive).
    pub rtol: f64,
    /// Absolute tolerance (adaptive).
    pub atol: f64,
    /// Restart the adaptive integrator every this many seconds (`None`: one
    /// integration). Not a user option: the tests use it to show that the
    /// results do not depend on where the integration is restarted.
    pub restart_interval_s: Option<f64>,
}

impl Default for SolverSettings {
    fn default() -> Self {
        SolverSettings {
            choice: SolverChoice::Auto,
            output_rate_hz: DEFAULT_OUTPUT_RATE_HZ,
            rtol: DEFAULT_RTOL,
            atol: DEFAULT_ATOL,
            restart_interval_s: None,
        }
    }
}

/// A decided run: which solver, on which grid, with which tolerances.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Plan {
    /// The solver to run first.
    pub kind: SolverKind,
    /// Whether an exact run that finds a tyre off the road is re-run on the
    /// piecewise-exact path (which models lift-off).
    pub fallback_on_lift_off: bool,
    /// Output grid rate, Hz.
    pub output_rate_hz: f64,
    /// Relative tolerance (adaptive).
    pub rtol: f64,
    /// Absolute tolerance (adaptive).
    pub atol: f64,
    /// Largest adaptive step, s: one road sample interval at this speed,
    /// so no road feature is stepped over unseen.
    pub max_step_s: f64,
    /// Restart the adaptive integrator (fresh first step, no controller
    /// memory) every this many seconds; `None` integrates in one go. See
    /// [`SolverSettings::restart_interval_s`].
    pub restart_interval_s: Option<f64>,
}

/// Decides how to run `vehicle` over `excitation`.
pub fn plan(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    settings: &SolverSettings,
) -> Result<Plan, SolveError> {
    check_settings(settings)?;
    check_duration(excitation, settings)?;
    let bad = |m: String| Err(SolveError::Settings(m));
    let (kind, fallback) = match settings.choice {
        SolverChoice::Auto if vehicle.is_linear() => (SolverKind::Exact, true),
        SolverChoice::Auto if vehicle.is_piecewise_linear() => (SolverKind::Piecewise, false),
        SolverChoice::Auto | SolverChoice::Adaptive => (SolverKind::Adaptive, false),
        SolverChoice::Piecewise if vehicle.is_piecewise_linear() => (SolverKind::Piecewise, false),
        SolverChoice::Piecewise => {
            return bad(
                "--solver piecewise needs a piecewise-linear vehicle; use adaptive or auto"
                    .to_string(),
            );
        }
        SolverChoice::Exact if vehicle.is_linear() => (SolverKind::Exact, false),
        SolverChoice::Exact => {
            return bad(
                "--solver exact needs a linear vehicle (no damping_bump/damping_rebound, no stops); use adaptive or auto"
                    .to_string(),
            );
        }
    };
    Ok(Plan {
        kind,
        fallback_on_lift_off: fallback,
        output_rate_hz: settings.output_rate_hz,
        rtol: settings.rtol,
        atol: settings.atol,
        max_step_s: excitation.profile.spacing_m / excitation.speed_m_s,
        restart_interval_s: settings.restart_interval_s.filter(|s| *s > 0.0),
    })
}

/// The solver settings and the speed within what the solvers can do.
fn check_settings(settings: &SolverSettings) -> Result<(), SolveError> {
    let bad = |m: String| Err(SolveError::Settings(m));
    if !(settings.output_rate_hz.is_finite() && settings.output_rate_hz > 0.0) {
        return bad(format!(
            "--rate must be positive, got {}",
            settings.output_rate_hz
        ));
    }
    // DOPRI5 itself refuses a relative tolerance at or below 10 ε: no step
    // can be checked that finely in double precision (Hairer, Nørsett &
    // Wanner's code, "tolerances are too small").
    let rtol_min = 10.0 * f64::EPSILON;
    if !(settings.rtol > rtol_min && settings.rtol < 1.0) {
        return bad(format!(
            "--rtol must be between {rtol_min:.1e} (10 machine epsilons) and 1, got {:e}",
            settings.rtol
        ));
    }
    if !(settings.atol > 0.0 && settings.atol.is_finite()) {
        return bad(format!("--atol must be positive, got {}", settings.atol));
    }
    if settings.output_rate_hz > MAX_OUTPUT_RATE_HZ {
        return bad(format!(
            "--rate {} Hz is above the {MAX_OUTPUT_RATE_HZ} Hz this tool samples at",
            settings.output_rate_hz
        ));
    }
    Ok(())
}

/// A run of at least one and at most [`MAX_SAMPLES`] output samples.
fn check_duration(
    excitation: &Excitation<'_>,
    settings: &SolverSettings,
) -> Result<(), SolveError> {
    let bad = |m: String| Err(SolveError::Settings(m));
    if !(excitation.speed_m_s.is_finite() && excitation.speed_m_s > 0.0) {
        return bad(format!(
            "--speed must be positive, got {} m/s",
            excitation.speed_m_s
        ));
    }
    // Count in floating point: an absurd duration must be refused, not
    // wrap the integer sample count.
    let samples = excitation.duration_s() * settings.output_rate_hz;
    if !(samples < MAX_SAMPLES as f64) {
        return bad(format!(
            "the run would need {samples:.3e} output samples ({:.3e} s at {} Hz); at most {MAX_SAMPLES:.0e}: check --speed, the road length and --rate",
            excitation.duration_s(),
            settings.output_rate_hz
        ));
    }
    if samples < 1.0 {
        return bad(format!(
            "the run lasts {:.3e} s, less than one output interval at {} Hz: the road is too short for this speed",
            excitation.duration_s(),
            settings.output_rate_hz
        ));
    }
    Ok(())
}

/// One output sample.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Sample {
    /// Time, s.
    pub time_s: f64,
    /// Inputs at this time (front axle distance, road, body force).
    pub inputs: Inputs,
    /// Generalised coordinates `q` (heave m, pitch rad, wheels m).
    pub q: [f64; MAX_DOF],
    /// Their rates.
    pub qd: [f64; MAX_DOF],
    /// Their accelerations (dynamic).
    pub qdd: [f64; MAX_DOF],
    /// Element forces and travel.
    pub elements: ElementState,
}

impl Sample {
    /// Builds the sample for state `(q, q̇)` at `t_s` under `contact`.
    #[inline]
    pub fn at(
        vehicle: &Vehicle,
        excitation: &Excitation<'_>,
        time_s: f64,
        q: [f64; MAX_DOF],
        qd: [f64; MAX_DOF],
        contact: Contact,
    ) -> Sample {
        Sample::from_inputs(
            &vehicle.element_model(),
            excitation.force_x_m(),
            time_s,
            excitation.at(time_s),
            q,
            qd,
            contact,
        )
    }

    /// [`Sample::at`] for inputs already evaluated at `time_s` and a
    /// prepared element model (the solvers' hot loops).
    #[inline(always)]
    pub(crate) fn from_inputs(
        model: &ElementModel<'_>,
        force_x_m: f64,
        time_s: f64,
        inputs: Inputs,
        q: [f64; MAX_DOF],
        qd: [f64; MAX_DOF],
        contact: Contact,
    ) -> Sample {
        let mut qdd = [0.0; MAX_DOF];
        let elements = model.evaluate_with(
            &q,
            &qd,
            &inputs.road,
            inputs.force_n,
            force_x_m,
            contact,
            &mut qdd,
        );
        Sample {
            time_s,
            inputs,
            q,
            qd,
            qdd,
            elements,
        }
    }

    /// [`Sample::from_inputs`] written field by field into `self` (a
    /// sink's slot), so no whole sample is built elsewhere and copied in.
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn fill_from_inputs(
        &mut self,
        model: &ElementModel<'_>,
        force_x_m: f64,
        time_s: f64,
        inputs: Inputs,
        q: &[f64; MAX_DOF],
        qd: &[f64; MAX_DOF],
        contact: Contact,
    ) {
        self.time_s = time_s;
        self.inputs = inputs;
        self.q = *q;
        self.qd = *qd;
        self.elements = model.evaluate_with(
            q,
            qd,
            &inputs.road,
            inputs.force_n,
            force_x_m,
            contact,
            &mut self.qdd,
        );
    }

    /// Vertical acceleration of a body point at `x_m`: `z̈ + x·θ̈`, m/s².
    #[inline]
    pub fn body_point_accel_m_s2(&self, x_m: f64) -> f64 {
        self.qdd[0] + x_m * self.qdd[1]
    }
}

/// What a run did. In JSON the tyre-tension counts are
/// `tyre_tension_samples`, and also, for one release, under their former
/// name `bonded_pull_samples` (see [`RunInfoJson`]).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[serde(into = "RunInfoJson")]
pub struct RunInfo {
    /// The solver whose samples were delivered.
    pub solver: SolverKind,
    /// Samples delivered.
    pub samples: usize,
    /// Output rate, Hz.
    pub output_rate_hz: f64,
    /// Accepted adaptive steps (0 for exact).
    pub steps_accepted: u64,
    /// Rejected adaptive steps (0 for exact).
    pub steps_rejected: u64,
    /// Why the exact path handed over to the adaptive one, if it did.
    pub fallback: Option<String>,
    /// Samples in which a tyre of the linear model pulled on the road
    /// (front, rear): non-zero only for `--solver exact`, whose linear model
    /// keeps the tyre bonded; the physical model would have lifted it.
    pub bonded_pull_samples: [u64; 2],
    /// Regimes, switches and events of a piecewise-exact run (`None` for
    /// the other solvers).
    pub piecewise: Option<PiecewiseStats>,
}

/// [`RunInfo`] as written to JSON.
#[derive(serde::Serialize)]
pub struct RunInfoJson {
    solver: SolverKind,
    samples: usize,
    output_rate_hz: f64,
    steps_accepted: u64,
    steps_rejected: u64,
    fallback: Option<String>,
    /// Samples (front, rear) in which the linear tyre was in tension,
    /// pulling the wheel down onto the road, where a real tyre would have
    /// lifted off (non-zero only with `--solver exact`).
    tyre_tension_samples: [u64; 2],
    /// The same counts under their former name, kept for one release.
    bonded_pull_samples: [u64; 2],
    /// Piecewise-exact runs only: regimes met, switches located, stop
    /// engagements and lift-offs per axle, chattering intervals.
    #[serde(skip_serializing_if = "Option::is_none")]
    piecewise: Option<PiecewiseStats>,
}

impl From<RunInfo> for RunInfoJson {
    fn from(r: RunInfo) -> Self {
        // Destructured in full so a new field cannot be left out of the JSON.
        let RunInfo {
            solver,
            samples,
            output_rate_hz,
            steps_accepted,
            steps_rejected,
            fallback,
            bonded_pull_samples,
            piecewise,
        } = r;
        RunInfoJson {
            solver,
            samples,
            output_rate_hz,
            steps_accepted,
            steps_rejected,
            fallback,
            tyre_tension_samples: bonded_pull_samples,
            bonded_pull_samples,
            piecewise,
        }
    }
}

/// A run could not be completed.
#[derive(Debug, Error)]
pub enum SolveError {
    /// A solver option is out of range.
    #[error("{0}")]
    Settings(String),
    /// The state became NaN or infinite.
    #[error("the run became unstable (a state was not finite at t = {time_s:.4} s); {hint}")]
    NonFinite {
        /// When it was found.
        time_s: f64,
        /// The likely cause.
        hint: String,
    },
    /// The adaptive solver could not keep its tolerance.
    #[error("the adaptive solver gave up at t = {time_s:.4} s ({what}); {hint}")]
    Integration {
        /// Where it stopped.
        time_s: f64,
        /// The solver's own account.
        what: String,
        /// The likely cause.
        hint: String,
    },
    /// A tyre left the road during an exact (linear) run under `auto`
    /// (handled by re-running adaptively; never reaches the user).
    #[error("the {axle} tyre left the road at t = {time_s:.4} s")]
    LiftOff {
        /// Which axle.
        axle: &'static str,
        /// When.
        time_s: f64,
    },
    /// The user interrupted the run (Ctrl-C, SIGTERM, SIGHUP).
    #[error("interrupted; no output file was written")]
    Interrupted,
    /// The consumer of the samples failed (e.g. a history file write).
    #[error(transparent)]
    Output(#[from] crate::report::ExportError),
}

impl SolveError {
    /// Exit status: 2 for bad settings, 1 for a run that failed.
    pub fn exit_status(&self) -> u8 {
        match self {
            SolveError::Settings(_) => 2,
            SolveError::Interrupted => 130,
            _ => 1,
        }
    }
}

static CANCELLED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// Asks every run in progress to stop at its next check (called from the
/// binary's signal handler). Runs then fail with [`SolveError::Interrupted`],
/// so their output files are discarded, never left half-written.
pub fn request_cancel() {
    CANCELLED.store(true, std::sync::atomic::Ordering::Relaxed);
}

/// Whether [`request_cancel`] was called.
pub fn cancel_requested() -> bool {
    CANCELLED.load(std::sync::atomic::Ordering::Relaxed)
}

/// Samples between two checks for cancellation in the exact path.
pub(crate) const CANCEL_CHECK_SAMPLES: usize = 4096;

/// Receives samples in time order. Returning an error stops the run.
pub trait SampleSink {
    /// Called once before a run (and again before a fallback re-run, which
    /// must discard everything received so far).
    fn start(&mut self, solver: SolverKind) -> Result<(), SolveError>;
    /// One sample.
    fn accept(&mut self, sample: &Sample) -> Result<(), SolveError>;
    /// A place where a sink that keeps its samples lets the solver build
    /// the next one, saving the copy that [`SampleSink::accept`] makes;
    /// `None` (the default) means: build it elsewhere and call `accept`.
    /// The slot counts as received only once [`SampleSink::accept_slot`]
    /// is called; until then the solver may leave it, and the next call
    /// hands out the same slot again.
    fn next_slot(&mut self) -> Option<&mut Sample> {
        None
    }
    /// Receives the sample built in the slot of [`SampleSink::next_slot`]
    /// (only called after it returned `Some`).
    fn accept_slot(&mut self) -> Result<(), SolveError> {
        Err(SolveError::Settings(
            "internal: a sample slot was accepted by a sink that has none".to_string(),
        ))
    }
}

/// Number of output samples: `t_i = i / rate` for `i = 0..=N` with
/// `t_N ≤ duration` (a sample landing on the end within rounding is kept).
pub fn sample_count(duration_s: f64, output_rate_hz: f64) -> usize {
    (duration_s * output_rate_hz * (1.0 + 1e-12)).floor() as usize + 1
}

/// Runs the plan, streaming samples into `sink`.
pub fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    match plan.kind {
        SolverKind::Adaptive => {
            sink.start(SolverKind::Adaptive)?;
            adaptive::run(vehicle, excitation, plan, sink)
        }
        SolverKind::Piecewise => {
            sink.start(SolverKind::Piecewise)?;
            piecewise::run(vehicle, excitation, plan, sink)
        }
        SolverKind::Exact => {
            sink.start(SolverKind::Exact)?;
            match exact::run(vehicle, excitation, plan, sink) {
                Err(SolveError::LiftOff { axle, time_s }) if plan.fallback_on_lift_off => {
                    sink.start(SolverKind::Piecewise)?;
                    let mut info = piecewise::run(vehicle, excitation, plan, sink)?;
                    info.fallback = Some(format!(
                        "the {axle} tyre left the road at t = {time_s:.3} s, so the run was repeated with the piecewise-exact solver (which models lift-off)"
                    ));
                    Ok(info)
                }
                other => other,
            }
        }
    }
}

/// A guess at why a run went unstable, from the vehicle's rates.
pub(crate) fn instability_hint(vehicle: &Vehicle) -> String {
    for (i, axle) in vehicle.axles.iter().enumerate() {
        if let Some(s) = &axle.stops {
            let reference = axle.tyre.map_or(axle.spring_n_m, |t| t.rate_n_m);
            if s.rate_n_m > 100.0 * reference {
                return format!(
                    "likely cause: {}.stop_rate ({:.3e} N/m) is far stiffer than the {} ({:.3e} N/m); soften the stop or tighten --rtol",
                    AXLE_NAMES[i],
                    s.rate_n_m,
                    if axle.tyre.is_some() {
                        "tyre"
                    } else {
                        "spring"
                    },
                    reference
                );
            }
        }
    }
    "likely cause: extreme rates or masses in the vehicle file, or a road step far too sharp for the speed; check the vehicle and tighten --rtol".to_string()
}

/// Checks a state for NaN or infinity.
#[inline]
pub(crate) fn all_finite(values: &[f64]) -> bool {
    values.iter().all(|v| v.is_finite())
}

/// A non-finite state `x` at `time_s` as the error that names the likely
/// cause.
#[inline]
pub(crate) fn check_finite(x: &[f64], time_s: f64, vehicle: &Vehicle) -> Result<(), SolveError> {
    if all_finite(x) {
        Ok(())
    } else {
        Err(SolveError::NonFinite {
            time_s,
            hint: instability_hint(vehicle),
        })
    }
}

/// The fixed-step solvers' check once per block of
/// [`CANCEL_CHECK_SAMPLES`] samples (first at sample 1, right after the
/// first update): a non-finite state or a cancellation ends the run. A
/// discrete update of a damped linear model cannot diverge, so a non-finite
/// state can only come from the inputs; checking once per block keeps the
/// loops short.
#[inline(always)]
pub(crate) fn check_block(
    k: usize,
    x: &[f64],
    time_s: f64,
    vehicle: &Vehicle,
) -> Result<(), SolveError> {
    if k % CANCEL_CHECK_SAMPLES != 1 {
        return Ok(());
    }
    check_finite(x, time_s, vehicle)?;
    if cancel_requested() {
        return Err(SolveError::Interrupted);
    }
    Ok(())
}

/// Calls `$run::<N, D>($args)` for the vehicle's `$dof` degrees of freedom
/// (`D`, 2 to [`MAX_DOF`]) and state length `N = 2·D`: one monomorphised
/// loop per model size, so every size inside is a constant and the loops
/// unroll. Any other size is a settings error naming `$solver`.
macro_rules! by_model_size {
    ($dof:expr, $solver:literal, $run:ident ( $($arg:expr),* $(,)? )) => {
        match $dof {
            2 => $run::<4, 2>($($arg),*),
            3 => $run::<6, 3>($($arg),*),
            4 => $run::<8, 4>($($arg),*),
            5 => $run::<10, 5>($($arg),*),
            6 => $run::<12, 6>($($arg),*),
            n => Err(SolveError::Settings(format!(
                "the {} solver handles 2 to {} degrees of freedom; this vehicle has {n}",
                $solver,
                crate::vehicle::MAX_DOF
            ))),
        }
    };
}
pub(crate) use by_model_size;
// The arms above list every size up to MAX_DOF.
const _: () = assert!(crate::vehicle::MAX_DOF == 6);

#[cfg(test)]
mod tests;
