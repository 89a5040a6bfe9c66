//! The plausibility checks against physics and against the faults they
//! exist to catch.
//!
//! - The work–energy theorem (passive elements: stored energy = work done
//!   on the vehicle − energy dissipated; common physics) closes on correct
//!   runs of every demo vehicle, with stops engaging and tyres lifting.
//! - A state that jumps, as when the adaptive solver was restarted from an
//!   extrapolated state at each one-second chunk (front travel from
//!   0.0147 m to 0.80 m within one sample), is flagged implausible; a small
//!   jump is at least a warning.
//! - A NaN anywhere in a result is found, by its path.

mod common;

use roughride::pipeline::{self, RunOptions};
use roughride::plausibility::{EnergyLedger, Severity, energy_findings, non_finite_fields};
use roughride::road::iso8608::{RoadClass, RoadSpec, generate};
use roughride::solve::{
    self, Excitation, Sample, SampleSink, SolveError, SolverChoice, SolverKind, SolverSettings,
};
use roughride::vehicle::{Contact, Vehicle, read_vehicle};

#[derive(Default)]
struct Keep(Vec<Sample>);

impl SampleSink for Keep {
    fn start(&mut self, _: SolverKind) -> Result<(), SolveError> {
        self.0.clear();
        Ok(())
    }
    fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
        self.0.push(*s);
        Ok(())
    }
}

fn vehicle(file: &str) -> Vehicle {
    read_vehicle(&common::demo(&format!("vehicles/{file}"))).unwrap()
}

#[test]
fn the_energy_balance_closes_on_correct_runs_of_every_demo_vehicle() {
    // Work–energy theorem: the balance must close up to the integration
    // error of the work on the 1 kHz grid (measured: under 0.3 % on 720
    // runs, classes A–F, 30–110 km/h, four solver settings).
    for (file, class, speed_m_s) in [
        ("demo_van_stops.toml", RoadClass::D, 25.0), // stops engage
        ("demo_hatchback.toml", RoadClass::E, 20.0), // tyres lift off
        ("demo_hatchback_2dof.toml", RoadClass::C, 15.0),
    ] {
        let v = vehicle(file);
        let spec = RoadSpec::from_class(class, 500.0, 0.05, 3);
        let p = generate(&spec).unwrap();
        let mut options = RunOptions::at_speed(speed_m_s);
        options.road_spec = Some(spec);
        let s = pipeline::simulate(&v, &p, &options, None).unwrap();
        let e = &s.checks.energy;
        assert!(
            e.residual_fraction() < 5e-3 && e.worst_window.fraction() < 5e-3,
            "{file}: {e:?}"
        );
        assert!(
            e.dissipated_j > 0.0 && e.input_max_j > 0.0,
            "{file}: energy flowed: {e:?}"
        );
        assert!(
            s.checks.findings.is_empty(),
            "{file}: {:?}",
            s.checks.findings
        );
    }
}

/// The van on class C at 60 km/h, with the front wheel moved by `jump_m`
/// from `at_s` on: the samples after the jump are those of the state the
/// solver would have continued from, evaluated by the element model.
fn jumped(jump_m: f64, at_s: f64) -> Vec<roughride::plausibility::Finding> {
    let v = vehicle("demo_van_stops.toml");
    let p = generate(&RoadSpec::from_class(RoadClass::C, 400.0, 0.05, 1)).unwrap();
    let ex = Excitation {
        profile: &p,
        speed_m_s: 60.0 / 3.6,
        wheelbase_m: v.wheelbase_m(),
        force: None,
    };
    let settings = SolverSettings {
        choice: SolverChoice::Adaptive,
        ..Default::default()
    };
    let plan = solve::plan(&v, &ex, &settings).unwrap();
    let mut keep = Keep::default();
    solve::run(&v, &ex, &plan, &mut keep).unwrap();
    let wheel = v.wheel_dof(0).unwrap();
    let mut ledger = EnergyLedger::new(&v, 0.0);
    ledger.start(SolverKind::Adaptive);
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for s in &keep.0 {
        let s = if s.time_s >= at_s {
            let mut q = s.q;
            q[wheel] += jump_m;
            Sample::at(&v, &ex, s.time_s, q, s.qd, Contact::LiftOff)
        } else {
            *s
        };
        lo = lo.min(s.elements.travel_m[0]);
        hi = hi.max(s.elements.travel_m[0]);
        ledger.push(&s);
    }
    energy_findings(&ledger, [[lo, hi], [0.0, 0.0]])
}

#[test]
fn a_state_that_jumps_as_after_a_bad_restart_is_flagged() {
    // No jump: nothing found (the same run as the cases below).
    assert!(jumped(0.0, 13.001).is_empty());
    // The jump once seen: front travel 0.0147 → 0.80 m at t = 13.001 s.
    let big = jumped(0.785, 13.001);
    assert!(
        big.iter()
            .any(|f| f.severity == Severity::Implausible && f.code == "energy_balance"),
        "{big:?}"
    );
    // A jump of 1 cm is still more energy than a second of driving moves
    // through the front tyre's deflection: at least a warning.
    let small = jumped(0.01, 13.001);
    assert!(
        small.iter().any(|f| f.code == "energy_balance"),
        "{small:?}"
    );
}

#[test]
fn non_finite_numbers_are_found_by_their_path() {
    #[derive(serde::Serialize)]
    struct Inner {
        p: Vec<(f64, f64)>,
        none: Option<f64>,
    }
    #[derive(serde::Serialize)]
    struct Outer {
        ok: f64,
        inner: Inner,
        inf: f32,
    }
    let v = Outer {
        ok: 1.0,
        inner: Inner {
            p: vec![(1.0, 2.0), (99.0, f64::NAN)],
            none: None,
        },
        inf: f32::INFINITY,
    };
    assert_eq!(non_finite_fields(&v), vec!["inner.p[1][1]", "inf"]);
}

/// A white-noise profile (pseudo-random, reproducible) at 0.01 m spacing.
fn white_noise_road() -> roughride::road::Profile {
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let z = (0..20_001)
        .map(|_| {
            // xorshift64*, uniform in ±4 mm
            state ^= state >> 12;
            state ^= state << 25;
            state ^= state >> 27;
            let u = (state.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64;
            0.008 * (u - 0.5)
        })
        .collect();
    roughride::road::Profile::new(0.0, 0.01, z)
}

#[test]
fn a_road_sampled_faster_than_the_output_is_warned_about_not_refused() {
    // At 40 m/s a 0.01 m profile passes 4000 samples a second under the
    // wheels, four times the default 1 kHz output. The energy ledger, summed
    // on the output grid, cannot follow such a road, so it must not refuse
    // a correct run: the adaptive run at 1 kHz is kept (with a warning that
    // says the balance was not checked) and agrees with the same run at
    // 4 kHz, where the road is resolved, within 0.5 % (aw) and 0.1 %
    // (travel r.m.s.). The exact solver sees an aliased road there (its aw
    // came out about twice the adaptive one's), so it is warned about too.
    let v = vehicle("demo_hatchback.toml");
    let road = white_noise_road();
    let run = |choice: SolverChoice, rate: f64| {
        let mut o = RunOptions::at_speed(40.0);
        o.solver = SolverSettings {
            choice,
            output_rate_hz: rate,
            ..SolverSettings::default()
        };
        pipeline::simulate(&v, &road, &o, None).expect("the run is kept")
    };
    let coarse = run(SolverChoice::Adaptive, 1000.0);
    let fine = run(SolverChoice::Adaptive, 4000.0);
    assert!(!coarse.checks.implausible(), "{:?}", coarse.checks.findings);
    for f in &coarse.checks.findings {
        if f.code == "energy_balance" {
            assert_eq!(f.severity, Severity::Warning);
            assert!(f.message.starts_with("not checked"), "{}", f.message);
        }
    }
    let rel = |a: f64, b: f64| (a / b - 1.0).abs();
    assert!(rel(coarse.seats[0].measures.aw, fine.seats[0].measures.aw) < 5e-3);
    assert!(rel(coarse.axles.front.travel_rms, fine.axles.front.travel_rms) < 1e-3);
    let exact = run(SolverChoice::Exact, 1000.0);
    assert!(
        exact
            .checks
            .findings
            .iter()
            .any(|f| f.code == "road_unresolved"),
        "{:?}",
        exact.checks.findings
    );
    // The resolved exact run is not warned about.
    let exact_fine = run(SolverChoice::Exact, 4000.0);
    assert!(
        !exact_fine
            .checks
            .findings
            .iter()
            .any(|f| f.code == "road_unresolved")
    );
}
