//! The adaptive path: Dormand–Prince 5(4) (`ode_solvers::Dopri5`, after
//! Hairer, Nørsett & Wanner, *Solving ODEs I*, §II.5) on the full element
//! model, with its order-4 dense output sampled on the output grid.
//!
//! The run is integrated in chunks of one second of output so that memory
//! stays bounded (the solver keeps every dense-output point of a call). All
//! nonlinear forces are continuous in the state (stops and lift-off clamp,
//! dampers switch rate at zero velocity), so each kink costs only rejected
//! steps; the step is also capped at one road sample interval so that no
//! road feature is stepped over unseen.

use nalgebra::SVector;
use ode_solvers::{Dopri5, OutputType, System};

use super::{
    Excitation, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, all_finite,
    instability_hint, sample_count,
};
use crate::vehicle::{Contact, ElementModel, MAX_DOF, Vehicle};

type State = SVector<f64, { 2 * MAX_DOF }>;

/// Output samples per integration chunk.
const CHUNK_SAMPLES: usize = 1000;

struct Equations<'a> {
    model: ElementModel<'a>,
    excitation: &'a Excitation<'a>,
}

impl System<f64, State> for Equations<'_> {
    #[inline]
    fn system(&self, t: f64, y: &State, dy: &mut State) {
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q.copy_from_slice(&y.as_slice()[..MAX_DOF]);
        qd.copy_from_slice(&y.as_slice()[MAX_DOF..]);
        let inputs = self.excitation.at(t);
        let mut qdd = [0.0; MAX_DOF];
        self.model.evaluate_with(
            &q,
            &qd,
            &inputs.road,
            inputs.force_n,
            self.excitation.force_x_m(),
            Contact::LiftOff,
            &mut qdd,
        );
        for j in 0..MAX_DOF {
            dy[j] = qd[j];
            dy[MAX_DOF + j] = qdd[j];
        }
    }
}

pub(super) fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    let dt = 1.0 / plan.output_rate_hz;
    let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
    let mut y = State::zeros();
    let split = |y: &State| {
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q.copy_from_slice(&y.as_slice()[..MAX_DOF]);
        qd.copy_from_slice(&y.as_slice()[MAX_DOF..]);
        (q, qd)
    };
    let model = vehicle.element_model();
    let force_x_m = excitation.force_x_m();
    let (q0, qd0) = split(&y);
    sink.accept(&Sample::at(
        vehicle,
        excitation,
        0.0,
        q0,
        qd0,
        Contact::LiftOff,
    ))?;
    let mut info = RunInfo {
        solver: SolverKind::Adaptive,
        samples: 1,
        output_rate_hz: plan.output_rate_hz,
        steps_accepted: 0,
        steps_rejected: 0,
        fallback: None,
        bonded_pull_samples: [0; 2],
    };
    let mut done = 0usize; // index of the last delivered sample
    while done + 1 < total {
        if super::cancel_requested() {
            return Err(SolveError::Interrupted);
        }
        let count = CHUNK_SAMPLES.min(total - 1 - done);
        let t0 = done as f64 * dt;
        let t1 = (done + count) as f64 * dt;
        let system = Equations {
            model: vehicle.element_model(),
            excitation,
        };
        let mut stepper = Dopri5::from_param(
            system,
            t0,
            t1,
            dt,
            y,
            plan.rtol,
            plan.atol,
            0.9,
            0.04,
            0.2,
            10.0,
            plan.max_step_s,
            0.0,
            1_000_000,
            1000,
            OutputType::Dense,
        );
        let stats = stepper.integrate().map_err(|e| {
            let time_s = match e {
                ode_solvers::dop_shared::IntegrationError::MaxNumStepReached { x, .. }
                | ode_solvers::dop_shared::IntegrationError::StepSizeUnderflow { x }
                | ode_solvers::dop_shared::IntegrationError::StiffnessDetected { x } => x,
            };
            SolveError::Integration {
                time_s,
                what: e.to_string(),
                hint: instability_hint(vehicle),
            }
        })?;
        info.steps_accepted += u64::from(stats.accepted_steps);
        info.steps_rejected += u64::from(stats.rejected_steps);
        let ys = stepper.y_out();
        if ys.len() < count + 1 {
            return Err(SolveError::Integration {
                time_s: t1,
                what: format!(
                    "dense output gave {} points where {} were expected",
                    ys.len(),
                    count + 1
                ),
                hint: "this is a bug; please report it with the vehicle and road".to_string(),
            });
        }
        // ys[0] is the chunk's start state, already delivered.
        for (k, state) in ys.iter().enumerate().skip(1).take(count) {
            let t = (done + k) as f64 * dt;
            if !all_finite(state.as_slice()) {
                return Err(SolveError::NonFinite {
                    time_s: t,
                    hint: instability_hint(vehicle),
                });
            }
            let (q, qd) = split(state);
            let inputs = excitation.at(t);
            sink.accept(&Sample::from_inputs(
                &model,
                force_x_m,
                t,
                inputs,
                q,
                qd,
                Contact::LiftOff,
            ))?;
        }
        y = ys[count];
        done += count;
        info.samples += count;
    }
    Ok(info)
}
