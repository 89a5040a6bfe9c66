//! The adaptive solver on the inputs users run: random ISO 8608 roads of
//! classes B–E, 1–2 km, speeds 30–110 km/h, several seeds, for the van with
//! stops and asymmetric dampers and for the hatchback (with tyre lift-off).
//!
//! Each run is checked two ways:
//! (a) against a reference integration of the same element model written
//!     independently in Python (`tests/reference/half_car_ivp.py`: reads the
//!     vehicle TOML and the profile CSV itself, integrates with
//!     `scipy.integrate.DOP853` at rtol 1e-8 between the instants at which
//!     an axle passes a road sample): r.m.s. values within 1e-3 relative,
//!     extremes within 1e-2 of the largest magnitude, time off the ground
//!     within 1e-3 (a few output samples per lift-off);
//! (b) against itself restarted every 0.37 s (a fresh first step and no
//!     step-size memory at each restart; 0.37 s lands on no output sample
//!     and no road sample): the same values to 1e-6 relative. A solver whose
//!     results depend on where it is restarted (as when a run restarted from
//!     an extrapolated state at each one-second chunk) fails here.

mod common;

use std::path::{Path, PathBuf};

use common::{python_reference, roughride, scratch};
use roughride::pipeline::{self, RunOptions, RunSummary};
use roughride::road::read_profile_csv;
use roughride::solve::SolverChoice;
use roughride::vehicle::read_vehicle;
use serde_json::{Value, json};

/// One run of the matrix.
struct Case {
    class: &'static str,
    speed_kmh: f64,
    seed: u64,
    length_m: f64,
}

const fn case(class: &'static str, speed_kmh: f64, seed: u64, length_m: f64) -> Case {
    Case {
        class,
        speed_kmh,
        seed,
        length_m,
    }
}

/// Output rate of every run, Hz (the default).
const RATE_HZ: f64 = 1000.0;
/// Road sample spacing, m (the default of `profile` and `simulate --class`).
const SPACING_M: f64 = 0.05;

fn road(dir: &Path, c: &Case) -> PathBuf {
    let path = dir.join(format!("{}_{}_{}.csv", c.class, c.seed, c.length_m));
    if !path.exists() {
        roughride()
            .args(["profile", "--class", c.class, "--seed"])
            .arg(c.seed.to_string())
            .arg("--length")
            .arg(c.length_m.to_string())
            .arg("--spacing")
            .arg(SPACING_M.to_string())
            .arg("-o")
            .arg(&path)
            .assert()
            .success();
    }
    path
}

fn run(vehicle: &Path, profile: &Path, speed_m_s: f64, restart_s: Option<f64>) -> RunSummary {
    let v = read_vehicle(vehicle).unwrap();
    let (p, _) = read_profile_csv(profile).unwrap();
    let mut options = RunOptions::at_speed(speed_m_s);
    options.solver.choice = SolverChoice::Adaptive;
    options.solver.restart_interval_s = restart_s;
    pipeline::simulate(&v, &p, &options, None).unwrap()
}

/// The values compared, by name: (r.m.s. values, extremes, fractions).
type Values = (Vec<(String, f64)>, Vec<(String, f64)>, Vec<(String, f64)>);

fn ours(s: &RunSummary) -> Values {
    let mut rms = vec![
        ("heave_accel_rms".to_string(), s.body.heave_accel_rms),
        ("pitch_accel_rms".to_string(), s.body.pitch_accel_rms),
        ("heave_rms".to_string(), s.body.heave_rms),
        ("pitch_rms".to_string(), s.body.pitch_rms),
    ];
    for (j, seat) in s.seats.iter().enumerate() {
        rms.push((format!("seat{j}_accel_rms"), seat.measures.accel_rms));
    }
    let mut ext = Vec::new();
    let mut frac = Vec::new();
    for (name, a) in [("front", &s.axles.front), ("rear", &s.axles.rear)] {
        rms.push((format!("{name}_travel_rms"), a.travel_rms));
        rms.push((format!("{name}_tyre_load_rms"), a.tyre_load_rms));
        ext.push((format!("{name}_travel_min"), a.travel_min));
        ext.push((format!("{name}_travel_max"), a.travel_max));
        frac.push((format!("{name}_off_ground"), a.time_off_ground_fraction));
    }
    (rms, ext, frac)
}

fn reference(r: &Value) -> Values {
    let f = |v: &Value| v.as_f64().unwrap();
    let mut rms = vec![
        ("heave_accel_rms".to_string(), f(&r["heave_accel_rms"])),
        ("pitch_accel_rms".to_string(), f(&r["pitch_accel_rms"])),
        ("heave_rms".to_string(), f(&r["heave_rms"])),
        ("pitch_rms".to_string(), f(&r["pitch_rms"])),
    ];
    for (j, a) in r["seat_accel_rms"].as_array().unwrap().iter().enumerate() {
        rms.push((format!("seat{j}_accel_rms"), f(a)));
    }
    let mut ext = Vec::new();
    let mut frac = Vec::new();
    for (i, name) in ["front", "rear"].iter().enumerate() {
        let a = &r["axles"][i];
        rms.push((format!("{name}_travel_rms"), f(&a["travel_rms"])));
        rms.push((format!("{name}_tyre_load_rms"), f(&a["tyre_load_rms"])));
        ext.push((format!("{name}_travel_min"), f(&a["travel_min"])));
        ext.push((format!("{name}_travel_max"), f(&a["travel_max"])));
        frac.push((
            format!("{name}_off_ground"),
            f(&a["time_off_ground_fraction"]),
        ));
    }
    (rms, ext, frac)
}

/// Compares two value sets; returns the failures, each with its numbers,
/// and the largest differences found (r.m.s., extremes, fractions).
fn compare(label: &str, got: &Values, want: &Values, tol: [f64; 3]) -> (Vec<String>, [f64; 3]) {
    let mut bad = Vec::new();
    let mut worst = [0.0f64; 3];
    for ((n, g), (m, w)) in got.0.iter().zip(&want.0) {
        assert_eq!(n, m);
        let rel = (g - w).abs() / w.abs().max(1e-300);
        worst[0] = worst[0].max(rel);
        if !(rel <= tol[0]) {
            bad.push(format!("{label}: {n} {g:.9e} vs {w:.9e} (rel {rel:.2e})"));
        }
    }
    // Extremes relative to the largest magnitude of the axle's travel.
    let scale: f64 = want.1.iter().map(|(_, w)| w.abs()).fold(0.0, f64::max);
    for ((n, g), (_, w)) in got.1.iter().zip(&want.1) {
        let rel = (g - w).abs() / scale;
        worst[1] = worst[1].max(rel);
        if !(rel <= tol[1]) {
            bad.push(format!("{label}: {n} {g:.6e} vs {w:.6e} (rel {rel:.2e})"));
        }
    }
    for ((n, g), (_, w)) in got.2.iter().zip(&want.2) {
        worst[2] = worst[2].max((g - w).abs());
        if !((g - w).abs() <= tol[2]) {
            bad.push(format!("{label}: {n} {g:.6} vs {w:.6}"));
        }
    }
    (bad, worst)
}

fn fold(worst: &mut [f64; 3], w: [f64; 3]) {
    for i in 0..3 {
        worst[i] = worst[i].max(w[i]);
    }
}

fn check_matrix(vehicle_file: &str, cases: &[Case]) {
    let dir = scratch();
    let vehicle = common::demo(vehicle_file);
    let roads: Vec<PathBuf> = cases.iter().map(|c| road(dir.path(), c)).collect();
    let mut failures = Vec::new();
    let mut runs = Vec::new();
    let mut mine = Vec::new();
    let mut worst_restart = [0.0; 3];
    let mut worst_scipy = [0.0; 3];
    for (c, p) in cases.iter().zip(&roads) {
        let speed_m_s = c.speed_kmh / 3.6;
        let label = format!(
            "{vehicle_file} class {} seed {} {} km/h {} m",
            c.class, c.seed, c.speed_kmh, c.length_m
        );
        let one = ours(&run(&vehicle, p, speed_m_s, None));
        let restarted = ours(&run(&vehicle, p, speed_m_s, Some(0.37)));
        // (b) restarts change nothing beyond the tolerance.
        let (bad, w) = compare(
            &format!("{label} restarted vs not"),
            &restarted,
            &one,
            [1e-6, 1e-6, 1e-6],
        );
        failures.extend(bad);
        fold(&mut worst_restart, w);
        runs.push(json!({
            "vehicle": vehicle,
            "profile": p,
            "speed_m_s": speed_m_s,
            "rate_hz": RATE_HZ,
        }));
        mine.push((label, one));
    }
    // (a) the independent scipy DOP853 reference.
    let Some(out) = python_reference(
        "half_car_ivp.py",
        &json!({ "runs": runs, "rtol": 1e-8, "atol": 1e-10 }),
    ) else {
        assert!(failures.is_empty(), "{}", failures.join("\n"));
        return;
    };
    for ((label, one), r) in mine.iter().zip(out["runs"].as_array().unwrap()) {
        let (bad, w) = compare(
            &format!("{label} vs scipy DOP853"),
            one,
            &reference(r),
            [1e-3, 1e-2, 1e-3],
        );
        failures.extend(bad);
        fold(&mut worst_scipy, w);
    }
    eprintln!(
        "{vehicle_file}: {} runs; largest differences (r.m.s. rel, extremes rel, fractions abs): vs scipy {:.1e}/{:.1e}/{:.1e}, restarted {:.1e}/{:.1e}/{:.1e}",
        cases.len(),
        worst_scipy[0],
        worst_scipy[1],
        worst_scipy[2],
        worst_restart[0],
        worst_restart[1],
        worst_restart[2],
    );
    assert!(
        failures.is_empty(),
        "{} failures:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn the_van_with_stops_matches_the_scipy_reference_and_ignores_restarts() {
    // Includes the run that once gave aw 73.9 m/s² (class C, seed 1,
    // 60 km/h, 1000 m) and speeds 30–110 km/h on classes B–E.
    check_matrix(
        "vehicles/demo_van_stops.toml",
        &[
            case("B", 30.0, 1, 1000.0),
            case("B", 70.0, 2, 1000.0),
            case("B", 110.0, 3, 2000.0),
            case("C", 60.0, 1, 1000.0),
            case("C", 50.0, 4, 1000.0),
            case("C", 90.0, 5, 1000.0),
            case("C", 100.0, 2, 1000.0),
            case("D", 40.0, 6, 1000.0),
            case("D", 80.0, 7, 1000.0),
            case("D", 110.0, 8, 1000.0),
            case("E", 40.0, 9, 1000.0),
            case("E", 70.0, 10, 1000.0),
            case("E", 110.0, 11, 1000.0),
        ],
    );
}

#[test]
fn the_hatchback_matches_the_scipy_reference_and_ignores_restarts() {
    // Linear suspension; on classes D–E its tyres leave the road, so the
    // adaptive path (forced here on every class) carries the lift-off kink.
    check_matrix(
        "vehicles/demo_hatchback.toml",
        &[
            case("B", 50.0, 1, 1000.0),
            case("B", 110.0, 2, 2000.0),
            case("C", 30.0, 3, 1000.0),
            case("C", 70.0, 4, 1000.0),
            case("D", 50.0, 5, 1000.0),
            case("D", 90.0, 6, 1000.0),
            case("E", 40.0, 7, 1000.0),
            case("E", 80.0, 8, 1000.0),
            case("E", 110.0, 9, 1000.0),
        ],
    );
}
