//! The piecewise-exact solver (exact update per linear regime, switches
//! located by bisection) checked against:
//! - a closed-form solution: a body on springs driven by a harmonic force
//!   on a flat road until its rebound stops engage, and after (the engaging
//!   instant from the analytic free-travel solution, the motion on the stops
//!   from the analytic solution of the stiffer regime);
//! - the exact solver, bit for bit, on a linear vehicle that stays in one
//!   regime (tyres on the road);
//! - the adaptive Dormand–Prince solver at rtol 1e-11 on the van with
//!   stops and asymmetric dampers over class D roads (several seeds and
//!   speeds), to the tolerances of roughride issue 15: r.m.s. values within
//!   1e-5 relative, extremes within 1e-4, time past the stops and off the
//!   ground within one output sample per event;
//! - scipy's `solve_ivp` with event location at every switch
//!   (`tests/reference/half_car_events.py`, an independent Python
//!   implementation of the element model);
//! - and a chattering case (travel rate hovering at 0 with a strongly
//!   one-sided damper), which must finish.

mod common;

use std::path::{Path, PathBuf};

use common::{python_reference, roughride, scratch};
use roughride::pipeline::{self, RunOptions, RunSummary};
use roughride::road::{Profile, read_profile_csv};
use roughride::solve::{
    self, Excitation, HarmonicForce, Sample, SampleSink, SolveError, SolverChoice, SolverKind,
    SolverSettings,
};
use roughride::vehicle::{Vehicle, parse_vehicle, read_vehicle};
use serde_json::json;

#[derive(Default)]
struct Keep(Vec<Sample>, Vec<SolverKind>);

impl SampleSink for Keep {
    fn start(&mut self, kind: SolverKind) -> Result<(), SolveError> {
        self.0.clear();
        self.1.push(kind);
        Ok(())
    }
    fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
        self.0.push(*s);
        Ok(())
    }
}

fn run_samples(
    v: &Vehicle,
    p: &Profile,
    speed_m_s: f64,
    force: Option<HarmonicForce>,
    settings: SolverSettings,
) -> (Vec<Sample>, solve::RunInfo) {
    let ex = Excitation {
        profile: p,
        speed_m_s,
        wheelbase_m: v.wheelbase_m(),
        force,
    };
    let plan = solve::plan(v, &ex, &settings).unwrap();
    let mut keep = Keep::default();
    let info = solve::run(v, &ex, &plan, &mut keep).unwrap();
    (keep.0, info)
}

fn choice(c: SolverChoice) -> SolverSettings {
    SolverSettings {
        choice: c,
        ..Default::default()
    }
}

/// A symmetric body on springs (no tyres, a = b, equal axles, no damping):
/// heave decouples from pitch, so a force at the CG drives heave alone,
/// `m z̈ + 2k z = F sin ωt`, with both rebound stops engaging together at
/// `z = c` (travel `−z`).
const SYMMETRIC_BODY: &str = r#"
name = "symmetric body on springs (invented)"
[body]
mass = 1000.0
pitch_inertia = 1500.0
[front]
cg_distance = 1.5
spring_rate = 20000.0
damping = 0.0
rebound_clearance = 0.02
stop_rate = 200000.0
[rear]
cg_distance = 1.5
spring_rate = 20000.0
damping = 0.0
rebound_clearance = 0.02
stop_rate = 200000.0
[[seat]]
x = 0.0
"#;

#[test]
fn a_stop_engages_when_and_as_the_closed_form_solution_says() {
    // Source: the undamped forced oscillator, e.g. Thomson & Dahleh,
    // *Theory of Vibration with Applications*, 5th ed., §3.1: from rest,
    // z(t) = F/(m(ωn² − ω²)) (sin ωt − (ω/ωn) sin ωn t). On the stops the
    // stiffness is 2(k + k_s) with the offset force 2 k_s c, again a forced
    // oscillator, started from the state at the engaging instant t_e (the
    // first root of z(t) = c, found here by bisection on the closed form).
    let v = parse_vehicle(SYMMETRIC_BODY, Path::new("sym.toml")).unwrap();
    let (m, k, ks, c) = (1000.0, 40000.0, 400000.0, 0.02);
    let (f0, w) = (800.0, 3.0);
    let wn = (k / m as f64).sqrt();
    let a1 = f0 / (m * (wn * wn - w * w));
    let z1 = |t: f64| a1 * ((w * t).sin() - w / wn * (wn * t).sin());
    let v1 = |t: f64| a1 * w * ((w * t).cos() - (wn * t).cos());
    let (mut lo, mut hi) = (0.0, 0.0);
    let mut t = 0.0;
    while z1(t) < c {
        lo = t;
        t += 1e-3;
        hi = t;
    }
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if z1(mid) < c { lo = mid } else { hi = mid }
    }
    let t_e = 0.5 * (lo + hi);
    // Second regime: z̈ + w2² z = (F sin ωt + ks c)/m, z(t_e), ż(t_e) given.
    let w2 = ((k + ks) / m).sqrt();
    let a2 = f0 / (m * (w2 * w2 - w * w));
    let zs = ks * c / (k + ks);
    let (z_e, v_e) = (z1(t_e), v1(t_e));
    let p0 = z_e - zs - a2 * (w * t_e).sin();
    let pv = v_e - a2 * w * (w * t_e).cos();
    let z2 = |t: f64| {
        let s = t - t_e;
        zs + a2 * (w * t).sin() + p0 * (w2 * s).cos() + pv / w2 * (w2 * s).sin()
    };
    let flat = Profile::new(0.0, 0.1, vec![0.0; 101]);
    let force = HarmonicForce {
        amplitude_n: f0,
        frequency_hz: w / (2.0 * std::f64::consts::PI),
        x_m: 0.0,
    };
    // 10 m at 10 m/s: 1 s, the stops engage near 0.6 s and stay engaged
    // past the end (the force keeps pushing up).
    let (samples, info) = run_samples(&v, &flat, 10.0, Some(force), choice(SolverChoice::Auto));
    assert_eq!(info.solver, SolverKind::Piecewise);
    let stats = info.piecewise.unwrap();
    assert!(stats.stop_engagements == [1, 1], "{stats:?}");
    let t_release = samples
        .iter()
        .find(|s| s.time_s > t_e && z2(s.time_s) < c)
        .map_or(f64::INFINITY, |s| s.time_s);
    let mut worst = 0.0f64;
    for s in &samples {
        let want = if s.time_s <= t_e {
            z1(s.time_s)
        } else if s.time_s < t_release {
            z2(s.time_s)
        } else {
            break;
        };
        worst = worst.max((s.q[0] - want).abs());
    }
    // The engaging instant is located to rounding on the switching
    // function; the kink makes the state error second order in the
    // location error, so 5e-12 of the 2 cm clearance leaves room for the
    // exponential's and the series' rounding.
    // Seen: 2.9e-16 m.
    assert!(
        worst < 1e-13,
        "largest heave error {worst:e} m (t_e = {t_e} s)"
    );
    assert!(t_release > t_e + 0.05, "stayed on the stops: {t_release}");
}

/// Flat, then a smooth 1 cm double-sine road: the hatchback stays on the
/// road, so one regime (all linear) from start to end.
fn gentle_road() -> Profile {
    let spacing = 0.05;
    let z = (0..4001)
        .map(|i| {
            let x = i as f64 * spacing;
            0.01 * (2.0 * std::f64::consts::PI * x / 6.0).sin()
                + 0.003 * (2.0 * std::f64::consts::PI * x / 1.7).sin()
        })
        .collect();
    Profile::new(0.0, spacing, z)
}

#[test]
fn one_regime_gives_the_exact_solvers_samples_bit_for_bit() {
    // Reference: the exact solver (one Van Loan discretisation per run); a
    // piecewise run that never switches takes the same update in the same
    // order of summation.
    let v = read_vehicle(&common::demo("vehicles/demo_hatchback.toml")).unwrap();
    let p = gentle_road();
    let (exact, ie) = run_samples(&v, &p, 15.0, None, choice(SolverChoice::Exact));
    let (pw, ip) = run_samples(&v, &p, 15.0, None, choice(SolverChoice::Piecewise));
    assert_eq!(ie.solver, SolverKind::Exact);
    assert_eq!(ip.solver, SolverKind::Piecewise);
    let stats = ip.piecewise.unwrap();
    assert_eq!((stats.regimes, stats.switches), (1, 0), "{stats:?}");
    assert_eq!(exact.len(), pw.len());
    for (a, b) in exact.iter().zip(&pw) {
        assert_eq!(a.q, b.q, "t = {}", a.time_s);
        assert_eq!(a.qd, b.qd, "t = {}", a.time_s);
        assert_eq!(a.qdd, b.qdd, "t = {}", a.time_s);
    }
}

/// Road sample spacing, m: a multiple of every test speed's distance per
/// output sample (so the hold at the output rate is the road itself) and a
/// divisor of the van's 3.2 m wheelbase.
const SPACING_M: f64 = 0.1;

fn road(dir: &Path, class: &str, seed: u64, length_m: f64) -> PathBuf {
    let path = dir.join(format!("{class}_{seed}_{length_m}.csv"));
    roughride()
        .args(["profile", "--class", class, "--seed"])
        .arg(seed.to_string())
        .arg("--length")
        .arg(length_m.to_string())
        .arg("--spacing")
        .arg(SPACING_M.to_string())
        .arg("-o")
        .arg(&path)
        .assert()
        .success();
    path
}

fn summary(v: &Vehicle, profile: &Path, speed_m_s: f64, c: SolverChoice, rtol: f64) -> RunSummary {
    let (p, _) = read_profile_csv(profile).unwrap();
    let mut options = RunOptions::at_speed(speed_m_s);
    options.solver.choice = c;
    options.solver.rtol = rtol;
    options.solver.atol = 1e-13;
    pipeline::simulate(v, &p, &options, None).unwrap()
}

/// R.m.s. values, extremes, and (fraction, events) pairs of a run.
type Values = (Vec<(String, f64)>, Vec<(String, f64)>, Vec<(String, f64)>);

fn values(s: &RunSummary) -> Values {
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
        rms.push((
            format!("{name}_suspension_force_rms"),
            a.suspension_force_rms,
        ));
        rms.push((format!("{name}_tyre_load_rms"), a.tyre_load_rms));
        ext.push((format!("{name}_travel_min"), a.travel_min));
        ext.push((format!("{name}_travel_max"), a.travel_max));
        frac.push((format!("{name}_off_ground"), a.time_off_ground_fraction));
        let d = &a.durability;
        frac.push((
            format!("{name}_past_bump"),
            d.time_past_bump_fraction.unwrap_or(0.0),
        ));
        frac.push((
            format!("{name}_past_rebound"),
            d.time_past_rebound_fraction.unwrap_or(0.0),
        ));
    }
    (rms, ext, frac)
}

#[test]
fn the_van_with_stops_matches_the_adaptive_solver_at_rtol_1e_11() {
    // Reference: the adaptive Dormand–Prince 5(4) solver on the element
    // model at rtol 1e-11 (steps ending on every road sample). Tolerances
    // of roughride issue 15.
    let dir = scratch();
    let v = read_vehicle(&common::demo("vehicles/demo_van_stops.toml")).unwrap();
    let mut failures = Vec::new();
    let mut worst = [0.0f64; 3];
    let (mut events, mut lift_offs, mut stops) = (0, 0, 0);
    for (seed, speed_m_s) in [(1, 20.0), (2, 25.0), (3, 10.0), (4, 20.0)] {
        let p = road(dir.path(), "D", seed, 600.0);
        let pw = summary(&v, &p, speed_m_s, SolverChoice::Auto, 1e-7);
        let ad = summary(&v, &p, speed_m_s, SolverChoice::Adaptive, 1e-11);
        assert_eq!(pw.solver.solver, SolverKind::Piecewise);
        let stats = pw.solver.piecewise.unwrap();
        events += stats.switches;
        let label = format!("class D seed {seed} at {speed_m_s} m/s");
        let (a, b) = (values(&pw), values(&ad));
        for ((name, x), (_, y)) in a.0.iter().zip(&b.0) {
            let rel = (x - y).abs() / y.abs();
            worst[0] = worst[0].max(rel);
            if rel > 1e-5 {
                failures.push(format!("{label} {name}: {x} vs {y} ({rel:.1e})"));
            }
        }
        for ((name, x), (_, y)) in a.1.iter().zip(&b.1) {
            let rel = (x - y).abs() / y.abs();
            worst[1] = worst[1].max(rel);
            if rel > 1e-4 {
                failures.push(format!("{label} {name}: {x} vs {y} ({rel:.1e})"));
            }
        }
        let samples = pw.solver.samples as f64;
        for (i, ((name, x), (_, y))) in a.2.iter().zip(&b.2).enumerate() {
            // One output sample per event of that kind on that axle.
            let axle = i / 3;
            let n = if i % 3 == 0 {
                stats.lift_offs[axle]
            } else {
                stats.stop_engagements[axle]
            };
            let off = (x - y).abs() * samples;
            worst[2] = worst[2].max(off);
            if off > n as f64 + 1e-9 {
                failures.push(format!(
                    "{label} {name}: {x} vs {y}: {off} samples apart, {n} events"
                ));
            }
        }
        lift_offs += stats.lift_offs.iter().sum::<u64>();
        stops += stats.stop_engagements.iter().sum::<u64>();
    }
    assert!(
        lift_offs > 0 && stops > 0,
        "lift-offs {lift_offs}, stop engagements {stops}"
    );
    eprintln!(
        "piecewise vs adaptive 1e-11: {events} switches; worst r.m.s. {:.1e}, extremes {:.1e}, fractions {} samples",
        worst[0], worst[1], worst[2]
    );
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn the_van_with_stops_matches_scipy_solve_ivp_with_event_location() {
    // Reference: tests/reference/half_car_events.py, scipy.integrate's
    // solve_ivp (DOP853, rtol 1e-10) stopping at every switch located by
    // its event finder, on the same vehicle file and road file.
    let dir = scratch();
    let vehicle = common::demo("vehicles/demo_van_stops.toml");
    let v = read_vehicle(&vehicle).unwrap();
    let cases = [(5, 20.0), (6, 25.0)];
    let mut runs = Vec::new();
    let mut ours = Vec::new();
    for (seed, speed) in cases {
        let p = road(dir.path(), "D", seed, 200.0);
        ours.push(summary(&v, &p, speed, SolverChoice::Piecewise, 1e-7));
        runs.push(json!({"vehicle": vehicle, "profile": p, "speed_m_s": speed, "rate_hz": 1000.0}));
    }
    let Some(out) = python_reference(
        "half_car_events.py",
        &json!({"runs": runs, "rtol": 1e-10, "atol": 1e-12}),
    ) else {
        return;
    };
    let mut failures = Vec::new();
    for (s, r) in ours.iter().zip(out["runs"].as_array().unwrap()) {
        let f = |v: &serde_json::Value| v.as_f64().unwrap();
        let pairs = [
            (
                "heave_accel_rms",
                s.body.heave_accel_rms,
                f(&r["heave_accel_rms"]),
                1e-6,
            ),
            (
                "pitch_accel_rms",
                s.body.pitch_accel_rms,
                f(&r["pitch_accel_rms"]),
                1e-6,
            ),
            ("heave_rms", s.body.heave_rms, f(&r["heave_rms"]), 1e-6),
            (
                "seat_accel_rms",
                s.seats[0].measures.accel_rms,
                f(&r["seat_accel_rms"][0]),
                1e-6,
            ),
            (
                "front_travel_rms",
                s.axles.front.travel_rms,
                f(&r["axles"][0]["travel_rms"]),
                1e-6,
            ),
            (
                "rear_travel_rms",
                s.axles.rear.travel_rms,
                f(&r["axles"][1]["travel_rms"]),
                1e-6,
            ),
            (
                "front_travel_max",
                s.axles.front.travel_max,
                f(&r["axles"][0]["travel_max"]),
                1e-5,
            ),
            (
                "rear_travel_min",
                s.axles.rear.travel_min,
                f(&r["axles"][1]["travel_min"]),
                1e-5,
            ),
            // The tyre force at an output instant on a road sample takes the
            // slope of the road piece after it in the script; the damping
            // part of the load differs there, hence the looser bound.
            (
                "rear_tyre_load_rms",
                s.axles.rear.tyre_load_rms,
                f(&r["axles"][1]["tyre_load_rms"]),
                1e-3,
            ),
        ];
        for (name, x, y, tol) in pairs {
            let rel = (x - y).abs() / y.abs();
            if rel > tol {
                failures.push(format!("{name}: {x} vs scipy {y} ({rel:.1e} > {tol:e})"));
            }
        }
        let stats = s.solver.piecewise.unwrap();
        let theirs = r["events"].as_u64().unwrap();
        // Every switch located by one is located by the other (a grazing
        // pair may differ).
        let diff = stats.switches.abs_diff(theirs);
        if diff * 100 > theirs {
            failures.push(format!(
                "switches {} vs scipy events {theirs}",
                stats.switches
            ));
        }
        for i in 0..2 {
            let a = &s.axles;
            let ours_off = [
                a.front.time_off_ground_fraction,
                a.rear.time_off_ground_fraction,
            ][i];
            let theirs_off = f(&r["axles"][i]["time_off_ground_fraction"]);
            let samples = (ours_off - theirs_off).abs() * s.solver.samples as f64;
            if samples > stats.lift_offs[i] as f64 + 1e-9 {
                failures.push(format!("axle {i} off ground {ours_off} vs {theirs_off}"));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn a_one_sided_damper_at_zero_travel_rate_finishes_without_looping() {
    // No reference value: the check is that a run whose damper switching
    // function hovers at 0 (a road rippling by a micrometre, a damper
    // 10⁵ times stiffer in rebound) ends, with every sample finite, and
    // stays near the adaptive solver (common practice: a solver sanity check).
    let text = r#"
name = "one-sided damper (invented)"
[body]
mass = 1200.0
pitch_inertia = 2000.0
[front]
cg_distance = 1.2
spring_rate = 30000.0
damping_bump = 0.01
damping_rebound = 1000.0
unsprung_mass = 40.0
tyre_rate = 200000.0
bump_clearance = 0.0001
stop_rate = 100000.0
[rear]
cg_distance = 1.3
spring_rate = 30000.0
damping_bump = 0.01
damping_rebound = 1000.0
[[seat]]
x = 0.5
"#;
    let v = parse_vehicle(text, Path::new("one_sided.toml")).unwrap();
    let z = (0..2001)
        .map(|i| 1e-6 * ((i * 7919) % 13) as f64 / 13.0)
        .collect();
    let p = Profile::new(0.0, 0.01, z);
    let (samples, info) = run_samples(&v, &p, 10.0, None, choice(SolverChoice::Auto));
    assert_eq!(info.solver, SolverKind::Piecewise);
    assert!(
        samples
            .iter()
            .all(|s| s.q.iter().chain(&s.qd).all(|x| x.is_finite()))
    );
    let stats = info.piecewise.unwrap();
    assert!(stats.switches > 0, "{stats:?}");
    let (adaptive, _) = run_samples(&v, &p, 10.0, None, choice(SolverChoice::Adaptive));
    let peak = |s: &[Sample]| s.iter().map(|x| x.q[0].abs()).fold(0.0, f64::max);
    let (a, b) = (peak(&samples), peak(&adaptive));
    assert!(
        (a - b).abs() <= 0.05 * b + 1e-12,
        "peak heave {a} vs adaptive {b}"
    );
}

#[test]
fn auto_re_runs_a_lifting_linear_vehicle_piecewise() {
    // The hatchback on a class E road at speed lifts a tyre: the exact run
    // hands over to the piecewise solver, which models lift-off; its
    // result matches the adaptive solver (reference, rtol 1e-11).
    let dir = scratch();
    let v = read_vehicle(&common::demo("vehicles/demo_hatchback.toml")).unwrap();
    let p = road(dir.path(), "E", 7, 300.0);
    let auto = summary(&v, &p, 25.0, SolverChoice::Auto, 1e-7);
    assert_eq!(auto.solver.solver, SolverKind::Piecewise);
    assert!(
        auto.solver
            .fallback
            .as_deref()
            .unwrap_or("")
            .contains("piecewise")
    );
    let ad = summary(&v, &p, 25.0, SolverChoice::Adaptive, 1e-11);
    for ((name, x), (_, y)) in values(&auto).0.iter().zip(&values(&ad).0) {
        let rel = (x - y).abs() / y.abs();
        assert!(rel < 1e-5, "{name}: {x} vs {y} ({rel:.1e})");
    }
}
