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

// ------------------------------------------------------- suspended seat

const VAN: &str = "vehicles/demo_van_suspended_seat.toml";

/// The transmissibility of the seat (seat surface over the floor beneath
/// it) equals the base-excited single-degree-of-freedom formula
/// `|1 + 2jζr| / |1 − r² + 2jζr|`, `r = f/f_n`, `f_n = √(k/m)/2π`,
/// `ζ = c/(2√(km))` (Rao, *Mechanical Vibrations*, base excitation): the
/// seat mass sees only the floor's motion, whatever the body does.
#[test]
fn the_seat_transmissibility_is_the_base_excited_one_degree_of_freedom_formula() {
    use roughride::vehicle::read_vehicle;
    use roughride::vehicle::response::{Quantity, channels, road_response};
    let v = read_vehicle(&demo(VAN)).unwrap();
    let p = v.seats[0].suspension.unwrap();
    let fn_hz = (p.rate_n_m / p.mass_kg).sqrt() / (2.0 * std::f64::consts::PI);
    let zeta = p.damping_n_s_m / (2.0 * (p.rate_n_m * p.mass_kg).sqrt());
    let ch = channels(&v);
    let at = |q| ch.iter().position(|c| c.quantity == q).unwrap();
    let (seat, floor) = (at(Quantity::SeatAccel(0)), at(Quantity::FloorAccel(0)));
    for f in [0.3, 1.0, 1.5, 2.2, 4.0, 8.0, 16.0, 30.0] {
        let h = road_response(&v, 20.0, f);
        let ours = (h[seat] / h[floor]).norm();
        let r = f / fn_hz;
        let want = (1.0 + (2.0 * zeta * r).powi(2)).sqrt()
            / ((1.0 - r * r).powi(2) + (2.0 * zeta * r).powi(2)).sqrt();
        assert!((ours / want - 1.0).abs() < 1e-9, "{f} Hz: {ours} vs {want}");
    }
}

/// A seat on a floor that hardly moves (a body of 1e6 kg on stiff springs)
/// has the natural frequency of a mass on a spring, `√(k/m)/2π`, and the
/// damping ratio `c/(2√(km))` (textbook closed form; Rao, *Mechanical
/// Vibrations*, free vibration of a single-degree-of-freedom system).
#[test]
fn a_seat_on_a_rigid_floor_has_the_mass_on_a_spring_frequency() {
    let text = "[body]\nmass = 1e6\npitch_inertia = 1e8\n\
        [front]\ncg_distance = 1.0\nspring_rate = 1e9\ndamping = 1000.0\n\
        [rear]\ncg_distance = 1.0\nspring_rate = 1e9\ndamping = 1000.0\n\
        [[seat]]\nx = 0.5\n[seat.suspension]\nmass = 80.0\nrate = 7106.0\ndamping = 452.0\n";
    let v = roughride::vehicle::parse_vehicle(text, std::path::Path::new("rigid.toml")).unwrap();
    let a = roughride::vehicle::modal::modes(&v);
    let m = a.modes.iter().find(|m| m.kind == "seat 1 bounce").unwrap();
    let f_closed = (7106.0f64 / 80.0).sqrt() / (2.0 * std::f64::consts::PI);
    let zeta = 452.0 / (2.0 * (7106.0f64 * 80.0).sqrt());
    assert!(
        (m.undamped_frequency_hz / f_closed - 1.0).abs() < 1e-4,
        "{}",
        m.undamped_frequency_hz
    );
    assert!(
        (m.damping_ratio / zeta - 1.0).abs() < 1e-3,
        "{}",
        m.damping_ratio
    );
    assert_eq!(m.seat.as_deref(), Some("seat1"));
}

/// SEAT of a run on a generated road against the spectral prediction
/// (random-vibration integral, Newland ch. 5 and 7), and the two solvers
/// against each other; the floor is the passenger's seat point too (same x).
#[test]
fn seat_on_a_random_road_matches_the_spectral_prediction_and_both_solvers_agree() {
    let run = |solver: &str| {
        json_of(&[
            "simulate",
            "--vehicle",
            demo(VAN).to_str().unwrap(),
            "--class",
            "C",
            "--length",
            "1000",
            "--speed",
            "20",
            "--solver",
            solver,
        ])
    };
    let (e, a) = (run("exact"), run("adaptive"));
    let pct = |d: &Value| {
        d["seats"][0]["seat_effective_amplitude_transmissibility_pct"]
            .as_f64()
            .unwrap()
    };
    let predicted = e["predicted"]["seats"][0]["seat_effective_amplitude_transmissibility_pct"]
        .as_f64()
        .unwrap();
    assert!(
        (pct(&e) / predicted - 1.0).abs() < 0.03,
        "{} vs {predicted}",
        pct(&e)
    );
    assert!(
        (pct(&e) / pct(&a) - 1.0).abs() < 1e-3,
        "{} vs {}",
        pct(&e),
        pct(&a)
    );
    assert!(pct(&e) < 100.0);
    assert_eq!(e["seats"][0]["floor"]["aw"], e["seats"][1]["aw"]);
    assert!(e["seats"][1].get("floor").is_none());
}

/// Sweep rows carry SEAT of every suspended seat, `seat{i}_seat_pct`, and
/// it is the single run's `seats[i].seat_effective_amplitude_transmissibility_pct`
/// bit for bit, beside the fore-aft aw and the total value; a seat without
/// a suspension leaves the cell empty (JSON null), and a sweep of vehicles
/// without suspended seats has no such column. The caution stays on stderr.
#[test]
fn sweep_rows_carry_seat_pct_equal_to_the_single_run() {
    let van = demo(VAN).to_str().unwrap().to_string();
    let car = demo(CAR).to_str().unwrap().to_string();
    let sweep = |vehicles: &[&str], json: bool| {
        let mut cmd = roughride();
        cmd.arg("sweep");
        for v in vehicles {
            cmd.args(["--vehicle", v]);
        }
        cmd.args([
            "--classes",
            "C",
            "--speeds",
            "20",
            "--seeds",
            "2",
            "--length",
            "300",
        ]);
        if json {
            cmd.arg("--json");
        }
        let out = cmd.assert().success().get_output().clone();
        let stderr = String::from_utf8(out.stderr).unwrap();
        assert!(stderr.contains("ISO 2631-1"), "the caution: {stderr}");
        String::from_utf8(out.stdout).unwrap()
    };
    let text = sweep(&[&van, &car], false);
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |n: &str| header.iter().position(|h| *h == n);
    let pct = col("seat1_seat_pct").expect("a SEAT column for the driver");
    // Only the van's first seat is suspended: no column for seat 2 or beyond.
    assert!(col("seat2_seat_pct").is_none());
    assert_eq!(header[pct - 1], "seat2_total_value"); // two seats each
    assert_eq!(header[pct + 1], "checks");
    let jsonl = sweep(&[&van, &car], true);
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 4);
    for (line, json_line) in rows.iter().zip(jsonl.lines()) {
        let cells: Vec<&str> = line.split(',').collect();
        let j: Value = serde_json::from_str(json_line).unwrap();
        let single = json_of(&[
            "simulate",
            "--vehicle",
            cells[col("vehicle").unwrap()],
            "--class",
            "C",
            "--seed",
            cells[col("seed").unwrap()],
            "--length",
            "300",
            "--speed",
            "20",
        ]);
        let seat = &single["seats"][0];
        match seat.get("seat_effective_amplitude_transmissibility_pct") {
            Some(want) => {
                let want = want.as_f64().unwrap();
                assert!(want > 0.0 && want < 100.0);
                assert_eq!(cells[pct].parse::<f64>().unwrap().to_bits(), want.to_bits());
                assert_eq!(
                    j["seat1_seat_pct"].as_f64().unwrap().to_bits(),
                    want.to_bits()
                );
                for (c, key) in [
                    ("seat1_fore_aft_aw", "/fore_aft/aw"),
                    ("seat1_total_value", "/total_value"),
                ] {
                    let got: f64 = cells[col(c).unwrap()].parse().unwrap();
                    assert_eq!(
                        got.to_bits(),
                        seat.pointer(key).unwrap().as_f64().unwrap().to_bits(),
                        "{c}"
                    );
                }
            }
            None => {
                assert_eq!(cells[col("vehicle").unwrap()], car);
                assert_eq!(cells[pct], "");
                assert!(j["seat1_seat_pct"].is_null());
            }
        }
    }
    // No suspended seat anywhere: no SEAT column at all.
    let plain = sweep(&[&car], false);
    assert!(!plain.lines().next().unwrap().contains("seat_pct"));
}

/// A life's seat exposure for a suspended seat is the seat surface's (what
/// reaches the person) and, as in `simulate`, the comfort reaction is read
/// from the total value of the vertical and fore-aft aw (ISO 2631-1 6.5
/// and 8.2, k = 1) and the health guidance from the dominant axis (7.2.3):
/// a one-case life equals the single run.
#[test]
fn a_lifetime_seat_is_the_seat_surface_with_the_total_value_for_comfort() {
    let dir = scratch();
    let usage = dir.path().join("life.toml");
    let van = demo(VAN);
    std::fs::write(
        &usage,
        format!(
            "title = \"one case\"\ntarget_km = 1000\nvehicle = {:?}\n\n\
             [[part]]\nname = \"c road\"\nshare = 1.0\nspeed = 20\nclass = \"C\"\n\
             seeds = 1\nlength = 500\n",
            van.to_str().unwrap()
        ),
    )
    .unwrap();
    let life = json_of(&["lifetime", "--usage", usage.to_str().unwrap()]);
    assert!(life["caution"].as_str().unwrap().contains("ISO 2631-1"));
    let run = json_of(&[
        "simulate",
        "--vehicle",
        van.to_str().unwrap(),
        "--class",
        "C",
        "--seed",
        "1",
        "--length",
        "500",
        "--speed",
        "20",
    ]);
    let f = |v: &Value| v.as_f64().unwrap();
    for i in 0..2 {
        let (l, s) = (&life["parts"][0]["seats"][i], &run["seats"][i]);
        let rel = |a: f64, b: f64| (a / b - 1.0).abs();
        assert!(rel(f(&l["aw"]), f(&s["aw"])) < 1e-12, "seat {i} aw");
        assert!(rel(f(&l["fore_aft_aw"]), f(&s["fore_aft"]["aw"])) < 1e-12);
        // ISO 2631-1 6.5 by hand, k = 1 on x and z (y not modelled).
        let by_hand = f(&l["aw"]).hypot(f(&l["fore_aft_aw"]));
        assert!(rel(f(&l["total_value"]), by_hand) < 1e-15);
        assert!(rel(f(&l["total_value"]), f(&s["total_value"])) < 1e-12);
        assert_eq!(l["comfort"], s["guidance"]["comfort_label"]);
        assert_eq!(l["health_axis"], s["guidance"]["health_axis"]);
        assert!(rel(f(&l["a8"]), f(&s["guidance"]["a8_m_s2"])) < 1e-12);
    }
    // The driver's seat isolates: its surface, not the floor beneath it.
    let driver = &life["parts"][0]["seats"][0];
    assert!(f(&driver["aw"]) < 0.6 * f(&run["seats"][0]["floor"]["aw"]));
}

fn refused(text: &str, key: &str) {
    let dir = scratch();
    let p = dir.path().join("bad.toml");
    std::fs::write(&p, text).unwrap();
    let out = roughride()
        .args(["modes", "--vehicle", p.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains(key), "{key} not in {err}");
}

#[test]
fn bad_seat_suspensions_are_refused_naming_the_key() {
    let van = std::fs::read_to_string(demo(VAN)).unwrap();
    refused(
        &van.replace("mass = 80.0\n", ""),
        "`seat[0].suspension.mass` is missing",
    );
    refused(
        &van.replace("rate = 7106.0\n", ""),
        "`seat[0].suspension.rate` is missing",
    );
    refused(
        &van.replace("mass = 80.0\n", "mass = 5000.0\n"),
        "`seat[0].suspension.mass`",
    );
    refused(
        &van.replace(
            "height = 0.45\n\n[seat.suspension]",
            "height = -0.1\n\n[seat.suspension]",
        ),
        "`seat[0].height`",
    );
    let three = format!(
        "{van}\n[seat.suspension]\nmass = 70.0\nrate = 7000.0\n[[seat]]\nname = \"c\"\nx = 0.0\n[seat.suspension]\nmass = 70.0\nrate = 7000.0\n"
    );
    refused(&three, "`seat[2].suspension` is one too many");
}
