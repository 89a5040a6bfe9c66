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

use nalgebra::DMatrix;

use super::{
    Excitation, Inputs, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, all_finite,
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

/// The discrete update in fixed-size, column-major arrays, for a state of
/// at most `N` entries (`N = 2·ndof` in the hot loop, so the compiler
/// unrolls it; rows and columns past the model's size are zero).
///
/// The sum runs in the order of a column-by-column matrix–vector product:
/// `Φ x` first, then `G₀ w_k`, then `G₁ w_{k+1}`, so it gives the same
/// numbers as [`Discrete`] used through nalgebra's `gemv`.
#[derive(Debug, Clone, Copy)]
pub struct Step<const N: usize> {
    phi: [[f64; N]; N],
    g0: [[f64; N]; 3],
    g1: [[f64; N]; 3],
}

impl<const N: usize> Step<N> {
    /// The fixed-size form of `d`, or `None` when its state has more than
    /// `N` entries.
    pub fn new(d: &Discrete) -> Option<Self> {
        let n = d.phi.nrows();
        if n > N || d.g0.ncols() != 3 || d.g1.ncols() != 3 {
            return None;
        }
        let mut s = Step {
            phi: [[0.0; N]; N],
            g0: [[0.0; N]; 3],
            g1: [[0.0; N]; 3],
        };
        for r in 0..n {
            for c in 0..n {
                s.phi[c][r] = d.phi[(r, c)];
            }
            for c in 0..3 {
                s.g0[c][r] = d.g0[(r, c)];
                s.g1[c][r] = d.g1[(r, c)];
            }
        }
        Some(s)
    }

    /// `Φ x + G₀ w_k + G₁ w_{k+1}`.
    #[inline(always)]
    pub fn advance(&self, x: &[f64; N], w_k: &[f64; 3], w_next: &[f64; 3]) -> [f64; N] {
        let mut y = [0.0; N];
        for (col, &xj) in self.phi.iter().zip(x) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * xj;
            }
        }
        for (col, &wj) in self.g0.iter().zip(w_k) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        for (col, &wj) in self.g1.iter().zip(w_next) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        y
    }
}

/// The hold inputs `w = [r_f, r_r, F]` of one instant.
#[inline(always)]
pub(super) fn hold_inputs(i: &Inputs) -> [f64; 3] {
    [i.road.elevation_m[0], i.road.elevation_m[1], i.force_n]
}

pub(super) fn run(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
) -> Result<RunInfo, SolveError> {
    let dt = 1.0 / plan.output_rate_hz;
    let d = discretise(vehicle, excitation.force_x_m(), dt);
    // One monomorphised loop per model size (2, 3 or 4 degrees of freedom);
    // the last arm also takes any smaller model, padded with zeros.
    let out = match vehicle.dof_count() {
        2 => Step::<4>::new(&d).map(|s| run_fixed(vehicle, excitation, plan, sink, &s)),
        3 => Step::<6>::new(&d).map(|s| run_fixed(vehicle, excitation, plan, sink, &s)),
        _ => {
            Step::<{ 2 * MAX_DOF }>::new(&d).map(|s| run_fixed(vehicle, excitation, plan, sink, &s))
        }
    };
    out.unwrap_or_else(|| {
        Err(SolveError::Settings(format!(
            "the vehicle has {} degrees of freedom; the exact solver handles at most {MAX_DOF}",
            vehicle.dof_count()
        )))
    })
}

fn run_fixed<const N: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
    step: &Step<N>,
) -> Result<RunInfo, SolveError> {
    let dt = 1.0 / plan.output_rate_hz;
    let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
    let n = vehicle.dof_count();
    let force_x_m = excitation.force_x_m();
    let model = vehicle.element_model();
    let mut x = [0.0; N];
    // Inputs are evaluated once per sample: those of sample k+1 drive the
    // update and are then reused for that sample's output.
    let mut inputs = excitation.at(0.0);
    let mut pulls = [0u64; 2];
    for k in 0..total {
        let t = k as f64 * dt;
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        q[..n].copy_from_slice(&x[..n]);
        qd[..n].copy_from_slice(&x[n..2 * n]);
        let sample = Sample::from_inputs(&model, force_x_m, t, inputs, q, qd, Contact::Bonded);
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
        if !all_finite(&x) {
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
            let next = excitation.at((k + 1) as f64 * dt);
            x = step.advance(&x, &hold_inputs(&inputs), &hold_inputs(&next));
            inputs = next;
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
