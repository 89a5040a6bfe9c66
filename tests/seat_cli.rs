//! The occupant through the command line: a seat's height above the centre
//! of gravity, its fore-aft acceleration `−height·θ̈` (ISO 2631-1 Wd), the
//! vibration total value (ISO 2631-1 6.5) and which value the comfort and
//! health guidance use.

mod common;

use common::{demo, json_of, roughride, scratch};
use serde_json::Value;

const CAR: &str = "vehicles/demo_hatchback.toml";

/// The demo hatchback with `height = …` written under every `[[seat]]`.
fn with_height(dir: &std::path::Path, name: &str, height: &str) -> String {
    let text = std::fs::read_to_string(demo(CAR)).unwrap();
    let edited = text.replace("[[seat]]\n", &format!("[[seat]]\nheight = {height}\n"));
    assert_ne!(edited, text);
    let p = dir.join(name);
    std::fs::write(&p, edited).unwrap();
    p.to_str().unwrap().to_string()
}

fn simulate(vehicle: &str, history: Option<&std::path::Path>) -> Value {
    let mut cmd = roughride();
    cmd.args([
        "simulate",
        "--vehicle",
        vehicle,
        "--class",
        "D",
        "--seed",
        "5",
        "--length",
        "120",
        "--speed",
        "20",
        "--json",
    ]);
    if let Some(h) = history {
        cmd.arg("--history").arg(h);
    }
    let out = cmd.assert().success().get_output().stdout.clone();
    serde_json::from_slice(&out).unwrap()
}

/// The JSON without what a seat height may change.
fn vertical_only(mut v: Value) -> Value {
    for s in v["seats"].as_array_mut().unwrap() {
        let s = s.as_object_mut().unwrap();
        for k in [
            "height_m",
            "fore_aft",
            "total_value",
            "total_value_health",
            "guidance",
        ] {
            s.remove(k);
        }
    }
    for s in v["predicted"]["seats"].as_array_mut().unwrap() {
        s.as_object_mut().unwrap().remove("fore_aft_aw");
    }
    v
}

#[test]
fn the_fore_aft_column_is_minus_height_times_pitch_accel_and_comfort_wd_agrees() {
    let dir = scratch();
    let car = with_height(dir.path(), "car.toml", "0.9");
    let hist = dir.path().join("h.csv");
    let run = simulate(&car, Some(&hist));
    let text = std::fs::read_to_string(&hist).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    let (pitch, fa) = (col("pitch_accel_rad_s2"), col("driver_fore_aft_accel_m_s2"));
    // Every fore-aft seat column comes after every vertical seat column.
    assert!(fa > col("rear_passenger_accel_m_s2"));
    let mut nonzero = 0;
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        let theta_dd: f64 = cells[pitch].parse().unwrap();
        let got: f64 = cells[fa].parse().unwrap();
        // Rigid-body kinematics, small angles (README: sign conventions):
        // the history prints shortest round-trip numbers, so exactly.
        assert_eq!(got, 0.0 - 0.9 * theta_dd, "{line}");
        nonzero += usize::from(got != 0.0);
    }
    assert!(nonzero > 100, "the body should pitch on a class D road");
    // The same ISO 2631-1 evaluation as a measured record, with Wd.
    let record = json_of(&[
        "comfort",
        hist.to_str().unwrap(),
        "--column",
        "driver_fore_aft_accel_m_s2",
        "--weighting",
        "wd",
    ]);
    let seat = &run["seats"][0]["fore_aft"];
    assert_eq!(seat["weighting"], "Wd");
    assert_eq!(record["weighting"], "Wd");
    for key in ["accel_rms", "aw", "vdv", "mtvv", "crest_factor"] {
        let (a, b) = (seat[key].as_f64().unwrap(), record[key].as_f64().unwrap());
        assert!(a > 0.0, "{key}");
        // Time stamps in the file are rounded to 1 µs; values agree to rounding.
        assert!((a - b).abs() <= 1e-12 * a, "{key}: {a} vs {b}");
    }
}

#[test]
fn height_zero_is_the_default_and_a_height_moves_no_vertical_value() {
    let dir = scratch();
    let plain = demo(CAR).to_str().unwrap().to_string();
    let zero = with_height(dir.path(), "zero.toml", "0.0");
    let high = with_height(dir.path(), "high.toml", "1.1");
    let (a, b, c) = (
        simulate(&plain, None),
        simulate(&zero, None),
        simulate(&high, None),
    );
    // Writing the default changes nothing, number for number.
    let mut b_named = b.clone();
    b_named["vehicle"] = a["vehicle"].clone();
    assert_eq!(a, b_named);
    for s in a["seats"].as_array().unwrap() {
        assert_eq!(s["fore_aft"]["aw"], 0.0);
        // With no fore-aft motion the total value is the vertical aw, and
        // the guidance is that of the vertical axis alone.
        assert_eq!(s["total_value"], s["aw"]);
        assert_eq!(s["guidance"]["health_axis"], "vertical");
        assert_eq!(s["guidance"]["comfort_value_m_s2"], s["aw"]);
    }
    // A height adds fore-aft motion and changes nothing vertical.
    let mut c_named = vertical_only(c.clone());
    c_named["vehicle"] = a["vehicle"].clone();
    assert_eq!(vertical_only(a), c_named);
    assert!(c["seats"][0]["fore_aft"]["aw"].as_f64().unwrap() > 0.0);
}

#[test]
fn the_total_value_and_the_guidance_follow_iso_2631_1() {
    // A seat straight above the CG (x = 0) sees only heave vertically; at
    // 2.5 m up the pitch gives it a fore-aft aw whose 1.4·aw passes the
    // vertical aw, so the health guidance must move to the fore-aft axis.
    let dir = scratch();
    let text = std::fs::read_to_string(demo(CAR)).unwrap();
    let text = text.replacen(
        "[[seat]]\n",
        "[[seat]]\nname = \"cab\"\nx = 0.0\nheight = 2.5\n\n[[seat]]\n",
        1,
    );
    let car = dir.path().join("cab.toml");
    std::fs::write(&car, text).unwrap();
    let run = simulate(car.to_str().unwrap(), None);
    for s in run["seats"].as_array().unwrap() {
        let (x, z) = (
            s["fore_aft"]["aw"].as_f64().unwrap(),
            s["aw"].as_f64().unwrap(),
        );
        // ISO 2631-1 6.5: a_v = (kx²awx² + ky²awy² + kz²awz²)^½, lateral 0;
        // comfort on the seat surface kx = ky = kz = 1 (8.2), health
        // kx = 1.4, kz = 1 (7.2.3) — factors from memory.
        let comfort = (x * x + z * z).sqrt();
        let health = ((1.4 * x).powi(2) + z * z).sqrt();
        let total = s["total_value"].as_f64().unwrap();
        assert!((total - comfort).abs() <= 1e-15 * comfort, "{s}");
        let th = s["total_value_health"].as_f64().unwrap();
        assert!((th - health).abs() <= 1e-15 * health, "{s}");
        let g = &s["guidance"];
        assert_eq!(g["comfort_value_m_s2"].as_f64().unwrap(), total);
        // Dominant axis (ISO 2631-1 7.2.3): the larger of 1.4·awx and awz.
        let (axis, k, aw) = if 1.4 * x > z {
            ("fore_aft", 1.4, x)
        } else {
            ("vertical", 1.0, z)
        };
        assert_eq!(g["health_axis"], axis, "{}", s["name"]);
        assert_eq!(g["health_k"].as_f64().unwrap(), k);
        // Directive 2002/44/EC Annex A.1: A(8) = k·aw·√(T/8 h), T = 8 h here.
        let a8 = g["a8_m_s2"].as_f64().unwrap();
        assert!((a8 - k * aw).abs() <= 1e-12 * a8, "{a8} vs {}", k * aw);
        assert!(g["caution"].as_str().unwrap().contains("estimates"));
    }
    assert_eq!(run["seats"][0]["guidance"]["health_axis"], "fore_aft");
    assert_eq!(run["seats"][1]["guidance"]["health_axis"], "vertical");
    // The human report shows the fore-aft table and the axis.
    let out = roughride()
        .args([
            "simulate",
            "--vehicle",
            car.to_str().unwrap(),
            "--class",
            "D",
            "--seed",
            "5",
            "--length",
            "120",
            "--speed",
            "20",
        ])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let out = String::from_utf8(out).unwrap();
    assert!(out.contains("fore-aft acceleration"), "{out}");
    assert!(out.contains("total value"), "{out}");
    assert!(out.contains("fore-aft "), "{out}");
}

#[test]
fn the_fore_aft_aw_agrees_with_the_random_vibration_integral() {
    // Random-vibration theory (Newland, An Introduction to Random
    // Vibrations, ch. 7): σ² = ∫|H|²·|W|²·G df, here with H the pitch
    // acceleration response times the height and W the ISO 2631-1 Wd
    // magnitude. A 2 km class B road at 20 m/s keeps the tyres on the
    // road, so the linear prediction holds; agreement within 3 %, as for
    // the vertical values (tests/simulate_cli.rs).
    let dir = scratch();
    let car = with_height(dir.path(), "car.toml", "0.9");
    let v = json_of(&[
        "simulate",
        "--vehicle",
        &car,
        "--class",
        "B",
        "--length",
        "2000",
        "--speed",
        "20",
    ]);
    for (i, seat) in v["seats"].as_array().unwrap().iter().enumerate() {
        let sim = seat["fore_aft"]["aw"].as_f64().unwrap();
        let pred = v["predicted"]["seats"][i]["fore_aft_aw"].as_f64().unwrap();
        assert!(pred > 0.0);
        assert!(
            (sim - pred).abs() < 0.03 * pred,
            "seat {i}: {sim} vs {pred}"
        );
    }
}
