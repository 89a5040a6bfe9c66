//! The simulator against a general-purpose reference: the same linear
//! model and road input run through scipy.signal.lsim (SciPy, first-order
//! hold) must agree with both of roughride's solvers to 1 % r.m.s.

mod common;

use roughride::road::Profile;
use roughride::solve::{
    self, Excitation, Sample, SampleSink, SolveError, SolverChoice, SolverKind, SolverSettings,
};
use roughride::vehicle::read_vehicle;
use serde_json::json;

#[derive(Default)]
struct Keep {
    t: Vec<f64>,
    u: Vec<[f64; 5]>,
    seat: Vec<f64>,
    travel_rear: Vec<f64>,
}

impl SampleSink for Keep {
    fn start(&mut self, _: SolverKind) -> Result<(), SolveError> {
        *self = Keep::default();
        Ok(())
    }
    fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
        let r = &s.inputs.road;
        self.t.push(s.time_s);
        self.u.push([
            r.elevation_m[0],
            r.elevation_m[1],
            r.rate_m_s[0],
            r.rate_m_s[1],
            0.0,
        ]);
        self.seat.push(s.body_point_accel_m_s2(0.25));
        self.travel_rear.push(s.elements.travel_m[1]);
        Ok(())
    }
}

/// A deterministic rough road: a sum of sines over 0.7–40 m wavelengths.
fn road() -> Profile {
    let spacing = 0.05;
    let n = 4001;
    let z = (0..n)
        .map(|i| {
            let x = i as f64 * spacing;
            (1..=25)
                .map(|k| {
                    let wavelength = 40.0 / k as f64 + 0.7;
                    0.004
                        * (wavelength / 40.0)
                        * (2.0 * std::f64::consts::PI * x / wavelength + 1.3 * k as f64).sin()
                })
                .sum()
        })
        .collect();
    Profile::new(0.0, spacing, z)
}

fn rms(v: &[f64]) -> f64 {
    (v.iter().map(|x| x * x).sum::<f64>() / v.len() as f64).sqrt()
}

#[test]
fn both_solvers_agree_with_scipy_lsim_on_the_demo_half_car() {
    let vehicle = read_vehicle(&common::demo("vehicles/demo_hatchback.toml")).unwrap();
    let profile = road();
    let speed = 20.0;
    let ss = vehicle.state_space(0.0);
    let n = vehicle.dof_count();
    // Outputs: driver seat acceleration (z̈ + x·θ̈, rows of A and B) and
    // rear travel (z_ur − z − x_r·θ).
    let x_seat = 0.25;
    let mut c = vec![vec![0.0; 2 * n]; 2];
    let mut d = vec![vec![0.0; 5]; 2];
    for j in 0..2 * n {
        c[0][j] = ss.a[(n, j)] + x_seat * ss.a[(n + 1, j)];
    }
    for j in 0..5 {
        d[0][j] = ss.b[(n, j)] + x_seat * ss.b[(n + 1, j)];
    }
    let rear_wheel = vehicle.wheel_dof(1).unwrap();
    c[1][rear_wheel] = 1.0;
    c[1][0] = -1.0;
    c[1][1] = -vehicle.axles[1].x_m;
    let rows = |m: &nalgebra::DMatrix<f64>| -> Vec<Vec<f64>> {
        (0..m.nrows())
            .map(|r| m.row(r).iter().copied().collect())
            .collect()
    };
    for choice in [SolverChoice::Exact, SolverChoice::Adaptive] {
        let ex = Excitation {
            profile: &profile,
            speed_m_s: speed,
            wheelbase_m: vehicle.wheelbase_m(),
            force: None,
        };
        let plan = solve::plan(
            &vehicle,
            &ex,
            &SolverSettings {
                choice,
                ..Default::default()
            },
        )
        .unwrap();
        let mut keep = Keep::default();
        solve::run(&vehicle, &ex, &plan, &mut keep).unwrap();
        let input =
            json!({"A": rows(&ss.a), "B": rows(&ss.b), "C": c, "D": d, "t": keep.t, "u": keep.u});
        let Some(reference) = common::python_reference("lsim_check.py", &input) else {
            return;
        };
        let y = reference["y"].as_array().unwrap();
        for (k, ours) in [(0usize, &keep.seat), (1, &keep.travel_rear)] {
            let theirs: Vec<f64> = y.iter().map(|r| r[k].as_f64().unwrap()).collect();
            let diff: Vec<f64> = ours.iter().zip(&theirs).map(|(a, b)| a - b).collect();
            let rel = rms(&diff) / rms(&theirs);
            assert!(
                rel < 0.01,
                "{choice:?} output {k}: r.m.s. difference {rel:.2e} of the signal"
            );
        }
    }
}
