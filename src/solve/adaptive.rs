//! The adaptive path: Dormand–Prince 5(4) ([`super::dopri5`]) on the full
//! element model, in one integration from start to end, with the order-4
//! dense output of each accepted step sampled on the output grid.
//!
//! The road is linear between its samples, so its slope (and with it the
//! damper and tyre-damping inputs) jumps at every sample point. Steps are
//! made to end exactly on those points, for each axle, and within a step
//! each axle sees the one linear piece it is on: the right-hand side is
//! smooth inside every step except where the vehicle's own elements switch
//! (stops engaging, a damper changing direction, a tyre lifting), which the
//! error control handles by rejecting and shrinking steps. Each output
//! sample is read from the interpolant of the step that contains it, never
//! extrapolated beyond a step.

use super::dopri5::{self, Derivative, Dopri5, StepFailure};
use super::{
    Excitation, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, all_finite,
    instability_hint, sample_count,
};
use crate::road::Profile;
use crate::vehicle::{Contact, ElementModel, MAX_DOF, RoadState, Vehicle};

/// Coordinates of the small state: up to two wheels, no suspended seat.
/// Vehicles that fit it integrate a state of `2·SMALL_DOF` entries, as
/// before suspended seats existed, so their runs are unchanged bit for bit
/// (the error norm is an r.m.s. over the whole state).
const SMALL_DOF: usize = 4;

/// Steps between two checks for cancellation.
const CANCEL_CHECK_STEPS: u64 = 1024;

/// The road under one axle on one piece: `z(x) = z + slope·(x − x)`.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Piece {
    x_m: f64,
    z_m: f64,
    slope: f64,
}

impl Piece {
    #[inline(always)]
    fn at(&self, x_m: f64) -> (f64, f64) {
        (self.z_m + self.slope * (x_m - self.x_m), self.slope)
    }
}

/// Which piece of the profile an axle is on. Segment `k` runs from sample
/// `k` to `k + 1`; `-1` is before the profile (the rear wheel, held at the
/// first sample) and `len − 1` beyond it (held at the last sample).
fn piece(profile: &Profile, k: i64) -> Piece {
    let z0 = profile.elevation_m[0];
    let last = profile.len() as i64 - 1;
    if k < 0 {
        return Piece {
            x_m: profile.start_m,
            z_m: 0.0,
            slope: 0.0,
        };
    }
    if k >= last {
        return Piece {
            x_m: profile.end_m(),
            z_m: profile.elevation_m[last as usize] - z0,
            slope: 0.0,
        };
    }
    let (a, b) = (
        profile.elevation_m[k as usize],
        profile.elevation_m[k as usize + 1],
    );
    Piece {
        x_m: profile.distance_m(k as usize),
        z_m: a - z0,
        slope: (b - a) / profile.spacing_m,
    }
}

/// The equations of motion on the current road pieces, with `D`
/// coordinates in a state `[q; q̇]` of `N = 2·D` entries.
struct Equations<'a, const D: usize> {
    model: ElementModel<'a>,
    excitation: &'a Excitation<'a>,
    pieces: [Piece; 2],
}

impl<const D: usize, const N: usize> Derivative<N> for Equations<'_, D> {
    #[inline]
    fn derivative(&self, t: f64, y: &[f64; N], dy: &mut [f64; N]) {
        let ex = self.excitation;
        let x_front = ex.profile.start_m + ex.speed_m_s * t;
        let (zf, sf) = self.pieces[0].at(x_front);
        let (zr, sr) = self.pieces[1].at(x_front - ex.wheelbase_m);
        let road = RoadState {
            elevation_m: [zf, zr],
            rate_m_s: [sf * ex.speed_m_s, sr * ex.speed_m_s],
        };
        let force_n = ex.force.map_or(0.0, |f| {
            f.amplitude_n * (2.0 * std::f64::consts::PI * f.frequency_hz * t).sin()
        });
        let (q, qd) = split::<D, N>(y);
        let mut qdd = [0.0; D];
        self.model.evaluate_with(
            &q,
            &qd,
            &road,
            force_n,
            ex.force_x_m(),
            Contact::LiftOff,
            &mut qdd,
        );
        dy[..D].copy_from_slice(&qd);
        dy[D..].copy_from_slice(&qdd);
    }
}

/// `[q; q̇]` into `q` and `q̇` (`N = 2·D`).
#[inline(always)]
fn split<const D: usize, const N: usize>(y: &[f64; N]) -> ([f64; D], [f64; D]) {
    let mut q = [0.0; D];
    let mut qd = [0.0; D];
    q.copy_from_slice(&y[..D]);
    qd.copy_from_slice(&y[D..]);
    (q, qd)
}

/// `a` padded with zeros to a sample's [`MAX_DOF`] entries.
#[inline(always)]
fn widen<const D: usize>(a: &[f64; D]) -> [f64; MAX_DOF] {
    let mut out = [0.0; MAX_DOF];
    out[..D].copy_from_slice(a);
    out
}

/// Where each axle is on the profile and when it moves to its next piece.
struct Track<'a> {
    excitation: &'a Excitation<'a>,
    /// Segment of each axle (see [`piece`]).
    segment: [i64; 2],
    /// Time each axle leaves its segment, s.
    leaves_s: [f64; 2],
}

impl<'a> Track<'a> {
    fn new(excitation: &'a Excitation<'a>) -> Self {
        let mut t = Track {
            excitation,
            // The front wheel starts on the first sample, the rear wheel a
            // wheelbase behind it, before the profile.
            segment: [0, -1],
            leaves_s: [0.0; 2],
        };
        t.leaves_s = [t.leave_time(0), t.leave_time(1)];
        t
    }

    /// When axle `i` leaves its current segment: the front axle passes
    /// sample `k + 1` at `(k + 1)·s / v`, the rear one a wheelbase later.
    /// Computed from the integer index each time, so no error accumulates.
    fn leave_time(&self, i: usize) -> f64 {
        let ex = self.excitation;
        let last = ex.profile.len() as i64 - 1;
        let k = self.segment[i];
        if k >= last {
            return f64::INFINITY;
        }
        let along_m = (k + 1) as f64 * ex.profile.spacing_m;
        let offset_m = if i == 0 { 0.0 } else { ex.wheelbase_m };
        (along_m + offset_m) / ex.speed_m_s
    }

    fn pieces(&self) -> [Piece; 2] {
        let p = self.excitation.profile;
        [piece(p, self.segment[0]), piece(p, self.segment[1])]
    }

    fn next_change_s(&self) -> f64 {
        self.leaves_s[0].min(self.leaves_s[1])
    }

    /// Moves every axle whose segment ends at `t` on; true if any did.
    /// An axle due within rounding of `t` (both axles on sample points at
    /// once) moves too, rather than leave a step of a few ulps.
    fn advance(&mut self, t: f64) -> bool {
        let mut moved = false;
        let near = t + 1e-12 * t.abs().max(1.0);
        for i in 0..2 {
            if self.leaves_s[i] <= near {
                self.segment[i] += 1;
                self.leaves_s[i] = self.leave_time(i);
                moved = true;
            }
        }
        moved
    }
}

pub(super) fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    const _: () = assert!(2 * SMALL_DOF == 8 && 2 * MAX_DOF == 12);
    if vehicle.dof_count() <= SMALL_DOF {
        run_sized::<SMALL_DOF, 8>(vehicle, excitation, plan, sink)
    } else {
        run_sized::<MAX_DOF, 12>(vehicle, excitation, plan, sink)
    }
}

/// The run with `D` coordinates in a state of `N = 2·D` entries.
fn run_sized<const D: usize, const N: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    debug_assert!(N == 2 * D && D <= MAX_DOF && vehicle.dof_count() <= D);
    let mut out = Output::new(vehicle, excitation, plan);
    let mut track = Track::new(excitation);
    let mut equations = Equations::<D> {
        model: out.model,
        excitation,
        pieces: track.pieces(),
    };
    // Static equilibrium on the first sample: the run starts at rest.
    sink.accept(&Sample::at(
        vehicle,
        excitation,
        0.0,
        [0.0; MAX_DOF],
        [0.0; MAX_DOF],
        Contact::LiftOff,
    ))?;
    let settings = dopri5::Settings {
        rtol: plan.rtol,
        atol: plan.atol,
        h_max: plan.max_step_s,
    };
    let mut solver = Dopri5::<N>::new(&equations, 0.0, [0.0; N], settings);
    let restart_every_s = plan.restart_interval_s.unwrap_or(f64::INFINITY);
    let mut next_restart_s = restart_every_s;
    // A generous ceiling that only a runaway integration reaches.
    let max_steps = 200 * (out.total as u64 + excitation.profile.len() as u64) + 1_000_000;
    let mut iterations = 0u64;
    while out.next < out.total {
        let limit = track.next_change_s().min(next_restart_s).min(out.t_end);
        let step = solver
            .step(&equations, limit)
            .map_err(|e| step_error(e, vehicle))?;
        out.emit::<D, N>(&step, sink)?;
        if step.t1 == limit {
            // A road sample passed under an axle, or a restart is due: the
            // integrator must not carry its last derivative across either.
            let moved = track.advance(limit);
            if moved {
                equations.pieces = track.pieces();
            }
            if limit >= next_restart_s {
                next_restart_s += restart_every_s;
                solver.restart(&equations);
            } else if moved {
                solver.refresh(&equations);
            }
        }
        iterations += 1;
        check_progress(iterations, &solver, max_steps, vehicle)?;
    }
    Ok(run_info(&solver, &out, plan))
}

/// The output grid and where the run is on it.
struct Output<'a> {
    vehicle: &'a Vehicle,
    excitation: &'a Excitation<'a>,
    model: ElementModel<'a>,
    force_x_m: f64,
    dt: f64,
    total: usize,
    t_end: f64,
    /// Index of the next output sample.
    next: usize,
}

impl<'a> Output<'a> {
    fn new(vehicle: &'a Vehicle, excitation: &'a Excitation<'a>, plan: &Plan) -> Self {
        let dt = 1.0 / plan.output_rate_hz;
        let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
        Output {
            vehicle,
            excitation,
            model: vehicle.element_model(),
            force_x_m: excitation.force_x_m(),
            dt,
            total,
            t_end: (total - 1) as f64 * dt,
            next: 1,
        }
    }

    /// Streams the output samples inside `step` (dense output only within
    /// the step just taken, never extrapolated past it).
    fn emit<const D: usize, const N: usize>(
        &mut self,
        step: &dopri5::DenseStep<N>,
        sink: &mut dyn SampleSink,
    ) -> Result<(), SolveError> {
        while self.next < self.total {
            let t = self.next as f64 * self.dt;
            if t > step.t1 {
                break;
            }
            let state = step.at(t);
            if !all_finite(&state) {
                return Err(SolveError::NonFinite {
                    time_s: t,
                    hint: instability_hint(self.vehicle),
                });
            }
            let (q, qd) = split::<D, N>(&state);
            sink.accept(&Sample::from_inputs(
                &self.model,
                self.force_x_m,
                t,
                self.excitation.at(t),
                widen(&q),
                widen(&qd),
                Contact::LiftOff,
            ))?;
            self.next += 1;
        }
        Ok(())
    }
}

/// Stops a run that was interrupted or has taken more steps than any sane
/// integration needs.
fn check_progress<const N: usize>(
    iterations: u64,
    solver: &Dopri5<N>,
    max_steps: u64,
    vehicle: &Vehicle,
) -> Result<(), SolveError> {
    if iterations % CANCEL_CHECK_STEPS == 0 && super::cancel_requested() {
        return Err(SolveError::Interrupted);
    }
    let counts = solver.counts();
    if counts.accepted + counts.rejected > max_steps {
        return Err(SolveError::Integration {
            time_s: solver.time(),
            what: format!("more than {max_steps} steps"),
            hint: instability_hint(vehicle),
        });
    }
    Ok(())
}

fn run_info<const N: usize>(solver: &Dopri5<N>, out: &Output<'_>, plan: &Plan) -> RunInfo {
    let counts = solver.counts();
    RunInfo {
        solver: SolverKind::Adaptive,
        samples: out.total,
        output_rate_hz: plan.output_rate_hz,
        steps_accepted: counts.accepted,
        steps_rejected: counts.rejected,
        fallback: None,
        bonded_pull_samples: [0; 2],
        piecewise: None,
    }
}

fn step_error(e: StepFailure, vehicle: &Vehicle) -> SolveError {
    match e {
        StepFailure::Underflow { t, h } => SolveError::Integration {
            time_s: t,
            what: format!("the step fell to {h:.3e} s, below what the tolerance can resolve"),
            hint: instability_hint(vehicle),
        },
        StepFailure::NonFinite { t } => SolveError::NonFinite {
            time_s: t,
            hint: instability_hint(vehicle),
        },
    }
}
