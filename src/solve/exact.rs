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
//! A harmonic body force `F(t) = A sin ωt` is not held: it is an analytic
//! input, so its part of the update is integrated exactly. Over a step,
//! `F(t_k + σ) = a cos ωσ + b sin ωσ` with `a = F(t_k)`, and `[a, b]` is the
//! state of the oscillator `ẏ = [[0, ω], [−ω, 0]] y`; appending it to the
//! vehicle's state, `exp([[A, B_F e₁ᵀ], [0, Ω]]·h)` gives in its top-right
//! block `Γ` with `x_{k+1} ∋ Γ [a, b]`. Since `F(t_{k+1}) = a cos ωh + b sin ωh`,
//! `b` follows from the two held samples, and the force columns of `G₀` and
//! `G₁` become `Γ₀ − Γ₁ cot ωh` and `Γ₁ / sin ωh` (ωh < π: a force at or
//! above the Nyquist frequency is refused before any run).
//!
//! The model is the linear one: tyres stay bonded to the road. Under
//! `--solver auto` a sample where a tyre would pull hands the run to the
//! piecewise-exact solver (`piecewise.rs`); under `--solver exact` the run goes on and counts such
//! samples, so the user sees how far the linear model was stretched.
//!
//! The result is exact for inputs that are linear between output samples.
//! The road itself is linear between its own samples, so when those fall
//! between output samples the hold smooths the road by at most one output
//! interval; at the default 1 kHz and usual spacings this is far below the
//! adaptive solver's tolerance (a test compares the two).

use nalgebra::DMatrix;

use super::{
    Excitation, Inputs, Plan, RunInfo, Sample, SampleSink, SolveError, SolverKind, sample_count,
};
use crate::vehicle::{AXLE_NAMES, Contact, MAX_DOF, StateSpace, Vehicle};

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
    discretise_state_space(&vehicle.state_space(force_x_m), h_s).0
}

/// [`discretise`] of a first-order form, with `P = ∫₀ʰ e^{Aσ} dσ` (which
/// maps a constant term of `ẋ` onto the update).
pub(super) fn discretise_state_space(ss: &StateSpace, h_s: f64) -> (Discrete, DMatrix<f64>) {
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
    (Discrete { phi, g0, g1 }, p)
}

/// As [`discretise`], with the body force a sinusoid of `force_hz`
/// integrated exactly (see the module doc) instead of held first-order.
/// `force_hz` must lie below the Nyquist frequency `1/(2h)`.
pub fn discretise_harmonic(vehicle: &Vehicle, force_x_m: f64, force_hz: f64, h_s: f64) -> Discrete {
    let mut d = discretise(vehicle, force_x_m, h_s);
    harmonic_columns(&vehicle.state_space(force_x_m), force_hz, h_s, &mut d);
    d
}

/// Replaces the force columns of `d` by those of a sinusoid of `force_hz`.
pub(super) fn harmonic_columns(ss: &StateSpace, force_hz: f64, h_s: f64, d: &mut Discrete) {
    let n = ss.a.nrows();
    let w = 2.0 * std::f64::consts::PI * force_hz;
    let mut big = DMatrix::zeros(n + 2, n + 2);
    big.view_mut((0, 0), (n, n)).copy_from(&ss.a);
    for r in 0..n {
        big[(r, n)] = ss.b[(r, 4)];
    }
    big[(n, n + 1)] = w;
    big[(n + 1, n)] = -w;
    let e = (big * h_s).exp();
    let (sin, cos) = (w * h_s).sin_cos();
    for r in 0..n {
        let (gamma_a, gamma_b) = (e[(r, n)], e[(r, n + 1)]);
        d.g0[(r, 2)] = gamma_a - gamma_b * cos / sin;
        d.g1[(r, 2)] = gamma_b / sin;
    }
}

/// The discrete update in fixed-size, column-major arrays for a state of
/// `N = 2·ndof` entries, so the compiler unrolls it.
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
    /// The fixed-size form of `d`, or `None` unless its state has `N`
    /// entries.
    pub fn new(d: &Discrete) -> Option<Self> {
        let n = d.phi.nrows();
        if n != N || d.g0.ncols() != 3 || d.g1.ncols() != 3 {
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
        self.advance_first::<3>(x, w_k, w_next)
    }

    /// [`Step::advance`] for a run without a body force (`w[2] = 0` at
    /// every instant), leaving out the force columns: their products are
    /// ±0, and adding ±0 changes no sum here (a sum that starts at +0
    /// cannot become −0 under round-to-nearest), so the result has the
    /// same bits.
    #[inline(always)]
    pub fn advance_unforced(&self, x: &[f64; N], w_k: &[f64; 3], w_next: &[f64; 3]) -> [f64; N] {
        self.advance_first::<2>(x, w_k, w_next)
    }

    /// The update with only the first `M` input columns.
    #[inline(always)]
    fn advance_first<const M: usize>(
        &self,
        x: &[f64; N],
        w_k: &[f64; 3],
        w_next: &[f64; 3],
    ) -> [f64; N] {
        let mut y = [0.0; N];
        for (col, &xj) in self.phi.iter().zip(x) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * xj;
            }
        }
        for (col, &wj) in self.g0.iter().zip(w_k).take(M) {
            for (yi, &a) in y.iter_mut().zip(col) {
                *yi += a * wj;
            }
        }
        for (col, &wj) in self.g1.iter().zip(w_next).take(M) {
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
    let d = match excitation.force {
        // Below the Nyquist frequency (as every command checks first).
        Some(f) if f.frequency_hz > 0.0 && f.frequency_hz * dt < 0.5 => {
            discretise_harmonic(vehicle, excitation.force_x_m(), f.frequency_hz, dt)
        }
        _ => discretise(vehicle, excitation.force_x_m(), dt),
    };
    super::by_model_size!(
        vehicle.dof_count(),
        "exact",
        run_fixed_fastest(vehicle, excitation, plan, sink, &d)
    )
}

/// [`run_fixed`] compiled for AVX where the processor has it, otherwise as
/// built. AVX does the update's products and sums four lanes at a time
/// (two with the baseline SSE2), each lane the same multiply then add in
/// the same order, with no fused multiply–add: the numbers are the same,
/// bit for bit, on either path, so the output does not depend on the
/// machine.
fn run_fixed_fastest<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
    d: &Discrete,
) -> Result<RunInfo, SolveError> {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx") {
        // SAFETY: the processor has AVX, checked just above.
        return unsafe { run_fixed_avx::<N, D>(vehicle, excitation, plan, sink, d) };
    }
    run_fixed::<N, D>(vehicle, excitation, plan, sink, d)
}

/// [`run_fixed`] with AVX enabled (see [`run_fixed_fastest`]).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx")]
fn run_fixed_avx<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
    d: &Discrete,
) -> Result<RunInfo, SolveError> {
    run_fixed::<N, D>(vehicle, excitation, plan, sink, d)
}

/// The exact loop for a model of `D` degrees of freedom (state length
/// `N = 2·D`). Always inlined, so each caller compiles it for its own
/// instruction set ([`run_fixed_fastest`]).
#[inline(always)]
fn run_fixed<const N: usize, const D: usize>(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &Plan,
    sink: &mut dyn SampleSink,
    d: &Discrete,
) -> Result<RunInfo, SolveError> {
    let step = Step::<N>::new(d).ok_or_else(|| {
        SolveError::Settings(format!(
            "internal: the discrete update has {} states, not the {N} of this vehicle",
            d.phi.nrows()
        ))
    })?;
    let dt = 1.0 / plan.output_rate_hz;
    let total = sample_count(excitation.duration_s(), plan.output_rate_hz);
    // The state is [q; q̇] with N = 2·D entries.
    let n = D;
    let force_x_m = excitation.force_x_m();
    let model = vehicle.element_model();
    let mut x = [0.0; N];
    // Inputs are evaluated once per sample: those of sample k+1 drive the
    // update and are then reused for that sample's output.
    let road = excitation.profile.reader();
    // Without a body force its input is 0.0 at every instant.
    let unforced = excitation.force.is_none();
    let mut inputs = excitation.at_with(&road, 0.0);
    let mut pulls = [0u64; 2];
    for k in 0..total {
        let t = k as f64 * dt;
        let mut q = [0.0; MAX_DOF];
        let mut qd = [0.0; MAX_DOF];
        // n is a constant here, so these compile to plain moves.
        q[..n].copy_from_slice(&x[..n]);
        qd[..n].copy_from_slice(&x[n..]);
        let build = || Sample::from_inputs(&model, force_x_m, t, inputs, q, qd, Contact::Bonded);
        // Built straight into the sink's own storage where it offers a
        // slot (the copy of a whole sample per step is then saved).
        match sink.next_slot() {
            Some(slot) => {
                slot.fill_from_inputs(&model, force_x_m, t, inputs, &q, &qd, Contact::Bonded);
                count_pulls(slot, t, plan, &mut pulls)?;
                super::check_block(k, &x, t, vehicle)?;
                sink.accept_slot()?;
            }
            None => {
                let sample = build();
                count_pulls(&sample, t, plan, &mut pulls)?;
                super::check_block(k, &x, t, vehicle)?;
                sink.accept(&sample)?;
            }
        }
        if k + 1 < total {
            let next = excitation.at_with(&road, (k + 1) as f64 * dt);
            let (w_k, w_next) = (hold_inputs(&inputs), hold_inputs(&next));
            x = if unforced {
                step.advance_unforced(&x, &w_k, &w_next)
            } else {
                step.advance(&x, &w_k, &w_next)
            };
            inputs = next;
        }
    }
    super::check_finite(&x, (total - 1) as f64 * dt, vehicle)?;
    Ok(RunInfo {
        solver: SolverKind::Exact,
        samples: total,
        output_rate_hz: plan.output_rate_hz,
        steps_accepted: 0,
        steps_rejected: 0,
        fallback: None,
        bonded_pull_samples: pulls,
        piecewise: None,
    })
}

/// Counts the axles whose linear tyre pulls on the road in `sample`, or,
/// when the plan falls back on lift-off, ends the run there.
#[inline(always)]
fn count_pulls(
    sample: &Sample,
    time_s: f64,
    plan: &Plan,
    pulls: &mut [u64; 2],
) -> Result<(), SolveError> {
    for (i, in_contact) in sample.elements.in_contact.iter().enumerate() {
        if !in_contact {
            if plan.fallback_on_lift_off {
                return Err(SolveError::LiftOff {
                    axle: AXLE_NAMES[i],
                    time_s,
                });
            }
            pulls[i] += 1;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use nalgebra::DVector;

    use super::*;
    use crate::road::Profile;
    use crate::solve::{SolverChoice, SolverSettings, plan};
    use crate::vehicle::parse_vehicle;

    /// Front axle on a tyre, rear axle on its spring only: 3 degrees of
    /// freedom, so the 6-state loop.
    const FRONT_WHEEL_ONLY: &str = r#"
[body]
mass = 1100.0
pitch_inertia = 1800.0
[front]
cg_distance = 1.1
spring_rate = 36000.0
damping = 3000.0
unsprung_mass = 70.0
tyre_rate = 380000.0
tyre_damping = 150.0
[rear]
cg_distance = 1.4
spring_rate = 34000.0
damping = 2600.0
[[seat]]
x = 0.3
"#;

    fn vehicle(text: &str) -> Vehicle {
        parse_vehicle(text, std::path::Path::new("v.toml")).unwrap()
    }

    #[test]
    fn the_fixed_size_update_matches_nalgebra_gemv_bit_for_bit() {
        // Reference: nalgebra's gemv on the same matrices, in the order the
        // update documents (Φx, then G₀w_k, then G₁w_{k+1}).
        let v = vehicle(FRONT_WHEEL_ONLY);
        let d = discretise(&v, 0.2, 1e-3);
        let step = Step::<6>::new(&d).unwrap();
        assert!(Step::<8>::new(&d).is_none());
        let x = [1e-3, -2e-4, 5e-3, 0.07, -0.02, 0.3];
        let (w0, w1) = ([0.01, -0.004, 120.0], [0.012, -0.003, 80.0]);
        let mut want = DVector::<f64>::zeros(6);
        want.gemv(1.0, &d.phi, &DVector::from_column_slice(&x), 0.0);
        want.gemv(1.0, &d.g0, &DVector::from_column_slice(&w0), 1.0);
        want.gemv(1.0, &d.g1, &DVector::from_column_slice(&w1), 1.0);
        assert_eq!(step.advance(&x, &w0, &w1).as_slice(), want.as_slice());
        // Without a force the shortened update gives the same bits, signs
        // of zero included (the zero state of a run's start among them).
        let bits = |y: [f64; 6]| y.map(f64::to_bits);
        for x in [x, [0.0; 6], [-0.0, 0.0, -0.0, 1e-300, -2e-3, 0.0]] {
            for (a, b) in [
                ([0.0, 0.0, 0.0], [0.0, -0.0, 0.0]),
                ([0.01, -0.004, 0.0], [0.0, 0.02, 0.0]),
            ] {
                assert_eq!(
                    bits(step.advance_unforced(&x, &a, &b)),
                    bits(step.advance(&x, &a, &b))
                );
            }
        }
    }

    /// Sink keeping the front travel and the seat acceleration.
    #[derive(Default)]
    struct Keep(Vec<f64>, Vec<f64>);

    impl SampleSink for Keep {
        fn start(&mut self, _solver: SolverKind) -> Result<(), SolveError> {
            *self = Keep::default();
            Ok(())
        }
        fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
            self.0.push(s.elements.travel_m[0]);
            self.1.push(s.body_point_accel_m_s2(0.3));
            Ok(())
        }
    }

    /// Sink keeping every sample whole; with `slots`, it lets the solver
    /// build them in place.
    #[derive(Default)]
    struct KeepAll {
        slots: bool,
        samples: Vec<Sample>,
        spare: Sample,
    }

    impl SampleSink for KeepAll {
        fn start(&mut self, _solver: SolverKind) -> Result<(), SolveError> {
            self.samples.clear();
            Ok(())
        }
        fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
            self.samples.push(*s);
            Ok(())
        }
        fn next_slot(&mut self) -> Option<&mut Sample> {
            self.slots.then_some(&mut self.spare)
        }
        fn accept_slot(&mut self) -> Result<(), SolveError> {
            self.samples.push(self.spare);
            Ok(())
        }
    }

    #[test]
    fn every_build_of_the_loop_and_either_sink_path_give_the_same_bits() {
        // Self-check: the AVX build (where the processor has it), the
        // baseline build, building in the sink's slot and handing over a
        // copy must all give the same samples, bit for bit (Debug prints
        // every f64 exactly, and tells −0 from +0). A road, a harmonic force
        // and a 3-degree-of-freedom vehicle exercise every input column.
        let v = vehicle(FRONT_WHEEL_ONLY);
        let z = (0..2001).map(|i| 0.02 * (i as f64 * 0.37).sin()).collect();
        let p = Profile::new(0.0, 0.05, z);
        let ex = Excitation {
            profile: &p,
            speed_m_s: 12.0,
            wheelbase_m: v.wheelbase_m(),
            force: Some(crate::solve::HarmonicForce {
                amplitude_n: 150.0,
                frequency_hz: 25.0,
                x_m: 1.3,
            }),
        };
        let settings = SolverSettings {
            choice: SolverChoice::Exact,
            ..Default::default()
        };
        let pl = plan(&v, &ex, &settings).unwrap();
        let f = ex.force.unwrap();
        let d = discretise_harmonic(&v, f.x_m, f.frequency_hz, 1.0 / pl.output_rate_hz);
        let text = |slots: bool, fastest: bool| {
            let mut keep = KeepAll {
                slots,
                ..Default::default()
            };
            if fastest {
                run_fixed_fastest::<6, 3>(&v, &ex, &pl, &mut keep, &d).unwrap();
            } else {
                run_fixed::<6, 3>(&v, &ex, &pl, &mut keep, &d).unwrap();
            }
            format!("{:?}", keep.samples)
        };
        let reference = text(false, false);
        assert!(reference.len() > 1000);
        for (slots, fastest) in [(true, false), (false, true), (true, true)] {
            assert!(
                text(slots, fastest) == reference,
                "slots {slots}, fastest {fastest}"
            );
        }
    }

    #[test]
    fn the_six_state_loop_agrees_with_the_adaptive_solver() {
        // Reference: the adaptive Dormand–Prince solver on the element model
        // (an independent integration of the same equations). A smooth road,
        // 3 cm at 7 m and 2 m wavelengths, keeps the tyre on the ground.
        let v = vehicle(FRONT_WHEEL_ONLY);
        let z = (0..4001)
            .map(|i| {
                let x = i as f64 * 0.05;
                0.03 * (2.0 * std::f64::consts::PI * x / 7.0).sin()
                    + 0.01 * (2.0 * std::f64::consts::PI * x / 2.0).sin()
            })
            .collect();
        let p = Profile::new(0.0, 0.05, z);
        let ex = Excitation {
            profile: &p,
            speed_m_s: 15.0,
            wheelbase_m: v.wheelbase_m(),
            force: None,
        };
        let mut out = Vec::new();
        for choice in [SolverChoice::Exact, SolverChoice::Adaptive] {
            let settings = SolverSettings {
                choice,
                ..Default::default()
            };
            let pl = plan(&v, &ex, &settings).unwrap();
            let mut keep = Keep::default();
            crate::solve::run(&v, &ex, &pl, &mut keep).unwrap();
            out.push(keep);
        }
        let rms = |a: &[f64]| (a.iter().map(|x| x * x).sum::<f64>() / a.len() as f64).sqrt();
        for (e, a) in [(&out[0].0, &out[1].0), (&out[0].1, &out[1].1)] {
            assert_eq!(e.len(), a.len());
            let diff: Vec<f64> = e.iter().zip(a.iter()).map(|(x, y)| x - y).collect();
            let rel = rms(&diff) / rms(a);
            assert!(rel < 2e-3, "r.m.s. difference {rel}");
        }
    }
}
