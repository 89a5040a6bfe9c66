//! The exact path for linear vehicles: `ẋ = A x + B₀ w + B₁ ẇ` with
//! `w = [r_f, r_r, F]` taken linear between output samples (first-order
//! hold), discretised once per run:
//!
//! `x_{k+1} = Φ x_k + G₀ w_k + G₁ w_{k+1}`, with `Φ = e^{Ah}`,
//! `P = ∫₀ʰ e^{Aσ} dσ`, `Q = (1/h)∫₀ʰ e^{Aσ}(h − σ) dσ`,
//! `G₀ = (P − Q) B₀ − P B₁ / h`, `G₁ = Q B₀ + P B₁ / h`.
//!
//! `Φ`, `P` and `hQ` are blocks of one matrix exponential,
//! `exp([[A, I, 0], [0, 0, I], [0, 0, 0]]·h)` (Van Loan, *Computing
//! integrals involving the matrix exponential*, IEEE TAC 23(3), 1978).
//!
//! The model is the linear one: tyres stay bonded to the road. Under
//! `--solver auto` a sample where a tyre would pull hands the run to the
//! adaptive solver; under `--solver exact` the run goes on and counts such
//! samples, so the user sees how far the linear model was stretched.
//!
//! The result is exact for inputs that are linear between output samples.
//! The road itself is linear between its own samples, so when those fall
//! between output samples the hold smooths the road by at most one output
//! interval; at the default 1 kHz and usual spacings this is far below the
//! adaptive solver's tolerance (a test compares the two).

use nalgebra::{DMatrix, DVector};

use super::{
    Excitation, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, all_finite,
    instability_hint, sample_count,
};
use crate::vehicle::{AXLE_NAMES, Contact, MAX_DOF, Vehicle};

/// The discrete model for one output interval.
#[derive(Debug, Clone)]
pub struct Discrete {
    /// State transition `Φ`.
    pub phi: DMatrix<f64>,
    /// Input matrix for `w_k`.
    pub g0: DMatrix<f64>,
    /// Input matrix for `w_{k+1}`.
    pub g1: DMatrix<f64>,
}

/// Discretises `vehicle` (body force at `force_x_m`) for step `h_s`.
pub fn discretise(vehicle: &Vehicle, force_x_m: f64, h_s: f64) -> Discrete {
    let ss = vehicle.state_space(force_x_m);
    let n = ss.a.nrows();
    // B₀ acts on [r_f, r_r, F]; B₁ on their rates [ṙ_f, ṙ_r, 0].
    let mut b0 = DMatrix::zeros(n, 3);
    let mut b1 = DMatrix::zeros(n, 3);
    for r in 0..n {
        b0[(r, 0)] = ss.b[(r, 0)];
        b0[(r, 1)] = ss.b[(r, 1)];
        b0[(r, 2)] = ss.b[(r, 4)];
        b1[(r, 0)] = ss.b[(r, 2)];
        b1[(r, 1)] = ss.b[(r, 3)];
    }
    let mut big = DMatrix::zeros(3 * n, 3 * n);
    big.view_mut((0, 0), (n, n)).copy_from(&(&ss.a * h_s));
    big.view_mut((0, n), (n, n)).fill_with_identity();
    big.view_mut((n, 2 * n), (n, n)).fill_with_identity();
    // Scale the identity blocks by h so the exponent is the whole [..]·h.
    for i in 0..n {
        big[(i, n + i)] = h_s;
        big[(n + i, 2 * n + i)] = h_s;
    }
    let e = big.exp();
    let phi = e.view((0, 0), (n, n)).into_owned();
    let p = e.view((0, n), (n, n)).into_owned();
    let q = e.view((0, 2 * n), (n, n)).into_owned() / h_s;
    let g0 = (&p - &q) * &b0 - &p * &b1 / h_s;
    let g1 = &q * &b0 + &p * &b1 / h_s;
    Discrete { phi, g0, g1 }
}

pub(super) fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    let dt = 1.0 / plan.output_rate_hz;
    let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
    let n = vehicle.dof_count();
    let d = discretise(vehicle, excitation.force_x_m(), dt);
    let mut x = DVector::<f64>::zeros(2 * n);
    let mut next = DVector::<f64>::zeros(2 * n);
    let inputs_vec = |t: f64| {
        let i = excitation.at(t);
        DVector::from_column_slice(&[i.road.elevation_m[0], i.road.elevation_m[1], i.force_n])
    };
    let mut w_k = inputs_vec(0.0);
    let mut w_next = w_k.clone();
    let mut pulls = [0u64; 2];
    for k in 0..total {
        let t = k as f64 * dt;
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q[..n].copy_from_slice(&x.as_slice()[..n]);
        qd[..n].copy_from_slice(&x.as_slice()[n..]);
        let sample = Sample::at(vehicle, excitation, t, q, qd, Contact::Bonded);
        for (i, in_contact) in sample.elements.in_contact.iter().enumerate() {
            if !in_contact {
                if plan.fallback_to_adaptive {
                    return Err(SolveError::LiftOff {
                        axle: AXLE_NAMES[i],
                        time_s: t,
                    });
                }
                pulls[i] += 1;
            }
        }
        if !all_finite(x.as_slice()) {
            return Err(SolveError::NonFinite {
                time_s: t,
                hint: instability_hint(vehicle),
            });
        }
        sink.accept(&sample)?;
        if k % super::CANCEL_CHECK_SAMPLES == 0 && super::cancel_requested() {
            return Err(SolveError::Interrupted);
        }
        if k + 1 < total {
            let i = excitation.at((k + 1) as f64 * dt);
            w_next[0] = i.road.elevation_m[0];
            w_next[1] = i.road.elevation_m[1];
            w_next[2] = i.force_n;
            // next = Φ x + G₀ w_k + G₁ w_{k+1}, without allocating.
            next.gemv(1.0, &d.phi, &x, 0.0);
            next.gemv(1.0, &d.g0, &w_k, 1.0);
            next.gemv(1.0, &d.g1, &w_next, 1.0);
            std::mem::swap(&mut x, &mut next);
            std::mem::swap(&mut w_k, &mut w_next);
        }
    }
    Ok(RunInfo {
        solver: SolverKind::Exact,
        samples: total,
        output_rate_hz: plan.output_rate_hz,
        steps_accepted: 0,
        steps_rejected: 0,
        fallback: None,
        bonded_pull_samples: pulls,
    })
}
