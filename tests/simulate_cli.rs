//! `roughride simulate` driven as a user would: the demo files, the JSON
//! documented keys (profiles/reference.md), history files, and bad input.

mod common;

use common::{demo, json_of, roughride, scratch};
use predicates::prelude::*;

const CAR: &str = "vehicles/demo_hatchback.toml";
const ROAD: &str = "roads/demo_rural_c.csv";

#[test]
fn the_demo_run_prints_the_documented_keys() {
    let v = json_of(&[
        "simulate",
        "--vehicle",
        demo(CAR).to_str().unwrap(),
        "--profile",
        demo(ROAD).to_str().unwrap(),
        "--speed",
        "72kmh",
    ]);
    assert!((v["speed_m_s"].as_f64().unwrap() - 20.0).abs() < 1e-12);
    assert!(v["duration_s"].as_f64().unwrap() > 0.0);
    for seat in v["seats"].as_array().unwrap() {
        for key in ["x_m", "accel_rms", "aw", "vdv", "mtvv", "crest_factor"] {
            assert!(seat[key].as_f64().is_some(), "seats[].{key} in {seat}");
        }
    }
    for axle in ["front", "rear"] {
        for key in ["travel_rms", "tyre_load_rms", "travel_min", "travel_max"] {
            assert!(
                v["axles"][axle][key].as_f64().is_some(),
                "axles.{axle}.{key}"
            );
        }
    }
    assert!(v["body"]["heave_accel_rms"].as_f64().unwrap() > 0.0);
    assert!(v["body"]["pitch_accel_rms"].as_f64().unwrap() > 0.0);
    // Plausibility for a car on a class C road at 72 km/h (common practice:
    // seat aw of a few tenths of m/s², travel r.m.s. of millimetres).
    let aw = v["seats"][0]["aw"].as_f64().unwrap();
    assert!(aw > 0.05 && aw < 2.0, "aw {aw}");
}

#[test]
fn duration_is_length_over_speed() {
    let dir = scratch();
    let road = dir.path().join("r.csv");
    let mut text = String::from("distance_m,elevation_m\n");
    for i in 0..=400 {
        text.push_str(&format!(
            "{},{}\n",
            10.0 + i as f64 * 0.25,
            0.003 * (i as f64 * 0.3).sin()
        ));
    }
    std::fs::write(&road, text).unwrap();
    let v = json_of(&[
        "simulate",
        "--vehicle",
        demo(CAR).to_str().unwrap(),
        "--profile",
        road.to_str().unwrap(),
        "--speed",
        "25",
    ]);
    assert!((v["duration_s"].as_f64().unwrap() - 100.0 / 25.0).abs() < 1e-12);
}

#[test]
fn the_history_file_has_units_in_its_header_and_one_row_per_sample() {
    let dir = scratch();
    let hist = dir.path().join("h.csv");
    roughride()
        .args([
            "simulate",
            "--vehicle",
            demo(CAR).to_str().unwrap(),
            "--class",
            "C",
            "--length",
            "100",
            "--speed",
            "20",
            "--rate",
            "500",
        ])
        .arg("--history")
        .arg(&hist)
        .assert()
        .success();
    let text = common::read(&hist);
    let mut lines = text.lines();
    let header = lines.next().unwrap();
    for col in [
        "time_s",
        "distance_m",
        "road_front_m",
        "heave_m",
        "pitch_rad",
        "driver_accel_m_s2",
        "travel_front_m",
        "tyre_load_rear_n",
    ] {
        assert!(header.split(',').any(|c| c == col), "{col} in {header}");
    }
    // 100 m at 20 m/s = 5 s at 500 Hz: 2501 samples.
    assert_eq!(lines.count(), 2501);
}

#[test]
fn bad_vehicle_files_exit_2_naming_the_file_and_key() {
    let dir = scratch();
    let good = common::read(&demo(CAR));
    let cases = [
        (
            good.replace("mass = 1150.0", "mass = -5.0"),
            "`body.mass` must be positive",
        ),
        (
            good.replace("tyre_rate = 400000.0     # N/m (2 x 200 kN/m)", ""),
            "`front.tyre_rate` is missing",
        ),
        (
            good.replace(
                "[[seat]]\nname = \"driver\"\nx = 0.25                 # m ahead of the CG\n",
                "",
            )
            .replace("[[seat]]\nname = \"rear_passenger\"\nx = -0.65\n", ""),
            "`seat` is missing",
        ),
        (
            good.replace("spring_rate = 35300.0", "spring_rate = \"stiff\""),
            "invalid type",
        ),
        ("not toml at all [".to_string(), "bad.toml"),
    ];
    for (text, fragment) in cases {
        let path = dir.path().join("bad.toml");
        std::fs::write(&path, &text).unwrap();
        roughride()
            .args([
                "simulate",
                "--vehicle",
                path.to_str().unwrap(),
                "--profile",
                demo(ROAD).to_str().unwrap(),
                "--speed",
                "20",
            ])
            .assert()
            .code(2)
            .stderr(predicate::str::contains("bad.toml"))
            .stderr(predicate::str::contains(fragment))
            .stderr(predicate::str::contains("panicked").not());
    }
}

#[test]
fn bad_profiles_exit_2_naming_the_file_and_line() {
    let dir = scratch();
    let cases = [
        ("distance_m,elevation_m\n0,0\n1,0\n1,0\n", "line 4"),
        ("distance_m,elevation_m\n0,0\n1,nan\n", "line 3"),
        ("distance_m,elevation_m\n0,0\n", "two data rows"),
        (
            "distance_m,elevation_m\n0,0\n0.5,0\n1.0,0\n",
            "shorter than the wheelbase",
        ),
        ("d,e\n0,0\n1,0\n", "distance_m"),
    ];
    for (text, fragment) in cases {
        let path = dir.path().join("road.csv");
        std::fs::write(&path, text).unwrap();
        roughride()
            .args([
                "simulate",
                "--vehicle",
                demo(CAR).to_str().unwrap(),
                "--profile",
                path.to_str().unwrap(),
                "--speed",
                "20",
            ])
            .assert()
            .code(2)
            .stderr(predicate::str::contains("road.csv"))
            .stderr(predicate::str::contains(fragment))
            .stderr(predicate::str::contains("panicked").not());
    }
    roughride()
        .args([
            "simulate",
            "--vehicle",
            demo(CAR).to_str().unwrap(),
            "--profile",
            "/no/such/road.csv",
            "--speed",
            "20",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("/no/such/road.csv"));
}

#[test]
fn a_failed_run_leaves_no_history_file() {
    let dir = scratch();
    let hist = dir.path().join("h.csv");
    std::fs::write(&hist, "previous good result\n").unwrap();
    // The exact solver refuses a nonlinear vehicle: the run fails before
    // any result, and the previous file stays as it was.
    roughride()
        .args([
            "simulate",
            "--vehicle",
            demo("vehicles/demo_van_stops.toml").to_str().unwrap(),
            "--class",
            "C",
            "--length",
            "50",
            "--speed",
            "20",
            "--solver",
            "exact",
        ])
        .arg("--history")
        .arg(&hist)
        .assert()
        .code(2);
    assert_eq!(common::read(&hist), "previous good result\n");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn durability_files_conserve_counts_and_match_the_summary() {
    let dir = scratch();
    let (hist, rf) = (
        dir.path().join("travel.csv"),
        dir.path().join("rainflow.csv"),
    );
    let out = roughride()
        .args([
            "simulate",
            "--vehicle",
            demo("vehicles/demo_van_stops.toml").to_str().unwrap(),
        ])
        .args([
            "--profile",
            demo("roads/gravel_track_e_potholes.csv").to_str().unwrap(),
            "--speed",
            "10",
            "--rate",
            "500",
            "--json",
        ])
        .arg("--travel-histogram")
        .arg(&hist)
        .arg("--rainflow")
        .arg(&rf)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let samples = v["solver"]["samples"].as_u64().unwrap();
    // Histograms conserve the sample count of each axle (under/overflow rows included).
    let text = common::read(&hist);
    let (mut front, mut rear) = (0u64, 0u64);
    let mut edges: Vec<(f64, f64)> = Vec::new();
    for line in text.lines().skip(1) {
        let cells: Vec<&str> = line.split(',').collect();
        edges.push((cells[0].parse().unwrap(), cells[1].parse().unwrap()));
        front += cells[2].parse::<u64>().unwrap();
        rear += cells[3].parse::<u64>().unwrap();
    }
    assert_eq!((front, rear), (samples, samples));
    // Contiguous rows from -inf to inf, each of the 2 mm default width
    // between the outer rows (profiles/reference.md, Travel histogram).
    assert_eq!(edges[0].0, f64::NEG_INFINITY);
    assert_eq!(edges[edges.len() - 1].1, f64::INFINITY);
    assert!(edges.windows(2).all(|w| w[0].1 == w[1].0), "{edges:?}");
    for (a, b) in &edges[1..edges.len() - 1] {
        assert!((b - a - 0.002).abs() < 1e-12, "bin {a}..{b}");
    }
    // The rainflow table holds every counted travel cycle of the summary.
    let table = common::read(&rf);
    for (axle, key) in [("front", "front"), ("rear", "rear")] {
        let total: f64 = table
            .lines()
            .skip(1)
            .filter(|l| l.starts_with(&format!("{axle},travel_m,")))
            .map(|l| l.rsplit(',').next().unwrap().parse::<f64>().unwrap())
            .sum();
        let expected = v["axles"][key]["travel_cycles"].as_f64().unwrap();
        assert!(
            (total - expected).abs() < 1e-9,
            "{axle}: {total} vs {expected}"
        );
    }
    // Stops exist on the van: the fraction past them is reported.
    assert!(
        v["axles"]["front"]["time_past_bump_fraction"]
            .as_f64()
            .is_some()
    );
    // Health guidance comes with its caution.
    assert!(v["caution"].as_str().unwrap().contains("estimates"));
    assert!(v["seats"][0]["guidance"]["a8_m_s2"].as_f64().is_some());
}

#[test]
fn the_spectral_prediction_agrees_with_the_run_on_a_generated_road() {
    // Random-vibration theory (Newland, An Introduction to Random
    // Vibrations, ch. 7): σ² = ∫|H|²G df. A 2 km class B road at 20 m/s
    // (100 s) keeps every tyre on the road; agreement within 3 %.
    let v = json_of(&[
        "simulate",
        "--vehicle",
        demo(CAR).to_str().unwrap(),
        "--class",
        "B",
        "--length",
        "2000",
        "--speed",
        "20",
    ]);
    let p = &v["predicted"];
    for (i, seat) in v["seats"].as_array().unwrap().iter().enumerate() {
        let (sim, pred) = (
            seat["aw"].as_f64().unwrap(),
            p["seats"][i]["aw"].as_f64().unwrap(),
        );
        assert!(
            (sim - pred).abs() < 0.03 * pred,
            "seat {i}: {sim} vs {pred}"
        );
    }
    for axle in ["front", "rear"] {
        for key in ["travel_rms", "tyre_load_rms"] {
            let sim = v["axles"][axle][key].as_f64().unwrap();
            let pred = p["axles"][axle][key].as_f64().unwrap();
            assert!(
                (sim - pred).abs() < 0.03 * pred,
                "{axle}.{key}: {sim} vs {pred}"
            );
        }
    }
}

#[test]
fn a_harmonic_body_force_gives_the_frequency_domain_amplitude_after_the_transient() {
    // Steady-state harmonic response of a linear system (Thomson, Theory of
    // Vibration, ch. 5): the time history's amplitude after the transient
    // equals |H(jω)|·F0, which `simulate` also prints from the frequency response.
    let dir = scratch();
    let hist = dir.path().join("h.csv");
    let v = {
        let out = roughride()
            .args([
                "simulate",
                "--vehicle",
                demo(CAR).to_str().unwrap(),
                "--flat",
                "--length",
                "300",
                "--speed",
                "20",
            ])
            .args(["--force", "200,3.5,1.2", "--json", "--history"])
            .arg(&hist)
            .assert()
            .success()
            .get_output()
            .stdout
            .clone();
        serde_json::from_slice::<serde_json::Value>(&out).unwrap()
    };
    let want = v["harmonic_force"]["heave_accel_m_s2"].as_f64().unwrap();
    let text = common::read(&hist);
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = header
        .iter()
        .position(|c| *c == "heave_accel_m_s2")
        .unwrap();
    // Least-squares amplitude at 3.5 Hz over t = 13–15 s (7 whole periods).
    let w = 2.0 * std::f64::consts::PI * 3.5;
    let (mut sc, mut ss, mut n) = (0.0, 0.0, 0.0);
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        let t: f64 = cells[0].parse().unwrap();
        if t >= 13.0 - 1e-9 && t < 15.0 - 1e-9 {
            let y: f64 = cells[col].parse().unwrap();
            sc += y * (w * t).cos();
            ss += y * (w * t).sin();
            n += 1.0;
        }
    }
    let got = 2.0 * ((sc / n).powi(2) + (ss / n).powi(2)).sqrt();
    assert!((got - want).abs() < 0.01 * want, "{got} vs {want}");
}

#[test]
fn comfort_on_the_written_history_gives_the_seat_values_of_the_run() {
    // The same ISO 2631-1 evaluation serves measured records and simulated
    // seats: evaluating the history's seat column must give the run's values.
    let dir = scratch();
    let hist = dir.path().join("h.csv");
    let run = {
        let out = roughride()
            .args([
                "simulate",
                "--vehicle",
                demo(CAR).to_str().unwrap(),
                "--class",
                "C",
                "--length",
                "60",
                "--speed",
                "20",
                "--json",
                "--history",
            ])
            .arg(&hist)
            .assert()
            .success()
            .get_output()
            .stdout
            .clone();
        serde_json::from_slice::<serde_json::Value>(&out).unwrap()
    };
    let record = json_of(&[
        "comfort",
        hist.to_str().unwrap(),
        "--column",
        "driver_accel_m_s2",
    ]);
    for key in ["accel_rms", "aw", "vdv", "mtvv", "crest_factor"] {
        let (a, b) = (
            run["seats"][0][key].as_f64().unwrap(),
            record[key].as_f64().unwrap(),
        );
        // The history prints full precision ({:e}), so the values agree to rounding.
        assert!((a - b).abs() <= 1e-12 * a.abs(), "{key}: {a} vs {b}");
    }
}

#[test]
fn the_exact_solver_counts_tyre_tension_under_its_name_and_the_former_alias() {
    let run = |solver: &str| {
        json_of(&[
            "simulate",
            "--vehicle",
            demo(CAR).to_str().unwrap(),
            "--profile",
            demo(ROAD).to_str().unwrap(),
            "--speed",
            "72kmh",
            "--solver",
            solver,
        ])
    };
    let exact = run("exact");
    let tension = &exact["solver"]["tyre_tension_samples"];
    // The former name stays for one release with the same counts.
    assert_eq!(tension, &exact["solver"]["bonded_pull_samples"]);
    // The physical model (adaptive, with lift-off) has the rear tyre off the
    // ground on this road; the linear model then has that tyre in tension
    // (its dynamic load below minus the static load), the front never.
    let adaptive = run("adaptive");
    let off = adaptive["axles"]["rear"]["time_off_ground_fraction"]
        .as_f64()
        .unwrap();
    assert!(off > 0.0, "the rear lifts in the physical model");
    assert!(tension[1].as_u64().unwrap() > 0, "{tension}");
    assert_eq!(
        adaptive["axles"]["front"]["time_off_ground_fraction"].as_f64(),
        Some(0.0)
    );
    assert_eq!(tension[0].as_u64(), Some(0));
}

#[test]
fn rainflow_bin_widths_are_options_and_zero_is_refused() {
    let dir = scratch();
    let rf = dir.path().join("rf.csv");
    let base = [
        "simulate",
        "--vehicle",
        demo(CAR).to_str().unwrap(),
        "--class",
        "C",
        "--length",
        "200",
        "--speed",
        "20",
    ]
    .map(String::from);
    roughride()
        .args(&base)
        .args([
            "--rainflow-travel-bin",
            "0.005",
            "--rainflow-force-bin",
            "250",
        ])
        .arg("--rainflow")
        .arg(&rf)
        .assert()
        .success();
    let table = common::read(&rf);
    let mut widths = std::collections::BTreeSet::new();
    for line in table.lines().skip(1) {
        let c: Vec<&str> = line.split(',').collect();
        let (r0, r1, m0, m1): (f64, f64, f64, f64) = (
            c[2].parse().unwrap(),
            c[3].parse().unwrap(),
            c[4].parse().unwrap(),
            c[5].parse().unwrap(),
        );
        let w = if c[1] == "travel_m" { 0.005 } else { 250.0 };
        assert!(
            (r1 - r0 - w).abs() < 1e-9 * w && (m1 - m0 - w).abs() < 1e-9 * w,
            "{line}"
        );
        widths.insert(c[1].to_string());
    }
    assert_eq!(widths.len(), 2, "both quantities written");
    for bad in ["--rainflow-travel-bin", "--rainflow-force-bin"] {
        let o = roughride()
            .args(&base)
            .args([bad, "0"])
            .arg("--rainflow")
            .arg(dir.path().join("x.csv"))
            .output()
            .unwrap();
        assert_eq!(
            o.status.code(),
            Some(2),
            "{bad} 0: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(!dir.path().join("x.csv").exists());
    }
}
