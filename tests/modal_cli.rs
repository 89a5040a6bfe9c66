//! `roughride modes` and `roughride frf` through the built binary: the
//! documented JSON keys, closed-form values where they exist, the CSV
//! layout, and errors that name the option (exit status 2).

mod common;

use predicates::prelude::*;
use roughride::vehicle::read_vehicle;
use roughride::vehicle::response;
use serde_json::Value;

fn json_of(out: &[u8]) -> Value {
    let text = String::from_utf8_lossy(out);
    assert_eq!(text.lines().count(), 1, "exactly one JSON line: {text}");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}: {text}"))
}

#[test]
fn modes_json_has_the_documented_keys_in_ascending_order() {
    let out = common::roughride()
        .args(["modes", "--json", "--vehicle"])
        .arg(common::demo("vehicles/demo_hatchback.toml"))
        .assert()
        .success();
    let j = json_of(&out.get_output().stdout);
    let modes = j["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 4);
    let mut last = 0.0;
    for m in modes {
        let fu = m["undamped_frequency_hz"].as_f64().unwrap();
        let fd = m["damped_frequency_hz"].as_f64().unwrap();
        let z = m["damping_ratio"].as_f64().unwrap();
        assert!(fu >= last, "ascending: {fu} after {last}");
        last = fu;
        assert!(fd > 0.0 && z > 0.0 && z < 1.0, "{m}");
    }
    // Ride frequency of each axle alone, closed form from the file's values:
    // sprung share m·b/L (front) on k·k_t/(k + k_t) (common practice; e.g.
    // Gillespie, Fundamentals of Vehicle Dynamics, ch. 5).
    let (m, a, b) = (1150.0, 1.05, 1.50);
    let l = a + b;
    let series = |k: f64, kt: f64| k * kt / (k + kt);
    let two_pi = 2.0 * std::f64::consts::PI;
    let front = (series(35300.0, 400000.0) / (m * b / l)).sqrt() / two_pi;
    let rear = (series(34100.0, 400000.0) / (m * a / l)).sqrt() / two_pi;
    let r = &j["ride_frequencies"];
    assert!((r["front_hz"].as_f64().unwrap() / front - 1.0).abs() < 1e-12);
    assert!((r["rear_hz"].as_f64().unwrap() / rear - 1.0).abs() < 1e-12);
    // Dynamic index J/(m·a·b) (Gillespie 1992, ch. 5).
    let di = 1850.0 / (m * a * b);
    assert!((j["dynamic_index"].as_f64().unwrap() / di - 1.0).abs() < 1e-12);
    assert!(j["guidance"].as_array().unwrap().len() >= 3);
}

#[test]
fn modes_table_names_the_modes_and_gives_guidance_not_a_verdict() {
    common::roughride()
        .args(["modes", "--vehicle"])
        .arg(common::demo("vehicles/demo_hatchback_2dof.toml"))
        .assert()
        .success()
        .stdout(predicate::str::contains("bounce"))
        .stdout(predicate::str::contains("pitch"))
        .stdout(predicate::str::contains("node"))
        .stdout(predicate::str::contains("Olley"))
        .stdout(predicate::str::contains("not a verdict"));
}

#[test]
fn modes_refuses_a_missing_vehicle_file_with_status_2() {
    common::roughride()
        .args(["modes", "--vehicle", "no_such_vehicle.toml"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no_such_vehicle.toml"));
}

#[test]
fn frf_csv_has_units_in_the_header_and_one_row_per_frequency() {
    let path = common::demo("vehicles/demo_hatchback.toml");
    let out = common::roughride()
        .args(["frf", "--speed", "72kmh", "--vehicle"])
        .arg(&path)
        .assert()
        .success();
    let text = String::from_utf8_lossy(&out.get_output().stdout).to_string();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    for col in [
        "freq_hz",
        "driver_accel_mag_m_s2_per_m",
        "driver_accel_phase_deg",
        "front_travel_mag_m_per_m",
        "rear_tyre_load_mag_n_per_m",
        "pitch_accel_mag_rad_s2_per_m",
        "driver_accel_wk_mag_m_s2_per_m",
    ] {
        assert!(header.contains(&col), "{col} missing from {header:?}");
    }
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|c| c.parse().unwrap()).collect())
        .collect();
    // 0.5:30:0.05 inclusive: 591 frequencies.
    assert_eq!(rows.len(), 591);
    assert_eq!(rows[0][0], 0.5);
    assert!((rows[590][0] - 30.0).abs() < 1e-9);
    // The CSV carries the library's response (72 km/h = 20 m/s).
    let v = read_vehicle(&path).unwrap();
    let col = header
        .iter()
        .position(|c| *c == "driver_accel_mag_m_s2_per_m")
        .unwrap();
    for row in [&rows[10], &rows[300]] {
        let h = response::road_response(&v, 20.0, row[0]);
        assert!((row[col] / h[0].norm() - 1.0).abs() < 1e-12);
    }
}

#[test]
fn frf_json_and_file_output_with_a_body_force() {
    let dir = common::scratch();
    let csv = dir.path().join("frf.csv");
    let out = common::roughride()
        .args([
            "frf",
            "--speed",
            "15",
            "--freqs",
            "1,2,5.5",
            "--force-x",
            "-0.4",
            "--json",
            "-o",
        ])
        .arg(&csv)
        .arg("--vehicle")
        .arg(common::demo("vehicles/demo_hatchback_2dof.toml"))
        .assert()
        .success();
    let j = json_of(&out.get_output().stdout);
    assert_eq!(j["frequencies_hz"].as_array().unwrap().len(), 3);
    assert_eq!(j["road"][0]["magnitude"].as_array().unwrap().len(), 3);
    assert_eq!(j["force"]["x_m"].as_f64().unwrap(), -0.4);
    let text = common::read(&csv);
    assert_eq!(text.lines().count(), 4);
    assert!(
        text.lines()
            .next()
            .unwrap()
            .contains("force_heave_mag_m_per_n")
    );
}

#[test]
fn frf_errors_name_the_option_and_exit_2() {
    let vehicle = common::demo("vehicles/demo_hatchback.toml");
    for (args, word) in [
        (vec!["--speed", "-3"], "--speed"),
        (vec!["--speed", "20", "--freqs", "5:1:0.1"], "--freqs"),
        (vec!["--speed", "20", "--freqs", "1:5:0"], "--freqs"),
        (vec!["--speed", "20", "--force-x", "abc"], "--force-x"),
    ] {
        common::roughride()
            .arg("frf")
            .args(&args)
            .arg("--vehicle")
            .arg(&vehicle)
            .assert()
            .code(2)
            .stderr(predicate::str::contains(word));
    }
}

#[test]
fn frf_frequencies_print_as_written() {
    let out = common::roughride()
        .args([
            "frf",
            "--vehicle",
            common::demo("vehicles/demo_hatchback.toml")
                .to_str()
                .unwrap(),
            "--speed",
            "20",
            "--freqs",
            "0.5:30:0.05",
        ])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    let printed: Vec<&str> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    // 0.5, 0.55, …, 30 in hundredths, written out with integer arithmetic.
    let expected: Vec<String> = (50..=3000)
        .step_by(5)
        .map(|h: u32| {
            let s = format!("{}.{:02}", h / 100, h % 100);
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        })
        .collect();
    assert_eq!(printed, expected);
}
