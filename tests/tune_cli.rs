//! `roughride tune` and `roughride plot tradeoff` driven as a user would:
//! a two-parameter spectral tune against scipy.optimize on the objective
//! computed independently in numpy (tests/reference/tune_check.py), a
//! one-parameter time-domain tune against the exhaustive grid of a
//! `sweep --vary` over the same cases, the tuned file against `simulate`,
//! the JSON keys external checks read, limits, bad input, and the
//! trade-off's Pareto sets against a brute-force dominance check.

mod common;

use common::{demo, json_of, python_reference, roughride, scratch};

fn car() -> String {
    demo("vehicles/demo_hatchback.toml")
        .to_str()
        .unwrap()
        .to_string()
}

fn run(args: &[&str]) -> (String, String, i32) {
    let out = roughride().args(args).output().expect("roughride ran");
    (
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
        out.status.code().unwrap_or(-1),
    )
}

fn ok(args: &[&str]) -> String {
    let (stdout, stderr, code) = run(args);
    assert_eq!(code, 0, "roughride {args:?} failed:\n{stderr}");
    stdout
}

#[test]
fn a_two_parameter_spectral_tune_agrees_with_scipy_optimize() {
    let car = car();
    let r = json_of(&[
        "tune",
        "--vehicle",
        &car,
        "--vary",
        "rear.damping=100:6000",
        "--vary",
        "front.damping=100:6000",
        "--classes",
        "C",
        "--speeds",
        "15,25",
        "--length",
        "200",
    ]);
    assert_eq!(r["method"], "spectral");
    let ours = [
        r["best"]["rear.damping"].as_f64().unwrap(),
        r["best"]["front.damping"].as_f64().unwrap(),
    ];
    let ours_j = r["spectral"]["optimum"]["objective"].as_f64().unwrap();
    // The demo hatchback's numbers (profiles/vehicles/demo_hatchback.toml),
    // ISO 8608 class C (Gd(n0) = 256·10⁻⁶ m³) and its default band.
    let input = serde_json::json!({
        "vehicle": {"mass": 1150.0, "pitch_inertia": 1850.0, "axles": [
            {"x": 1.05, "spring": 35300.0, "damping": 2930.0, "unsprung": 70.0, "tyre_rate": 400000.0, "tyre_damping": 0.0},
            {"x": -1.50, "spring": 34100.0, "damping": 2410.0, "unsprung": 60.0, "tyre_rate": 400000.0, "tyre_damping": 0.0}]},
        "seat_x": 0.25, "speeds": [15, 25], "weights": [1, 1], "classes_gd": [256e-6],
        "road": {"n0": 0.1, "n_min": 0.011, "n_max": 2.83, "spacing": 0.05, "points": 6001},
        "weighting": "wk",
        "parameters": [{"key": "rear.damping", "lo": 100, "hi": 6000}, {"key": "front.damping", "lo": 100, "hi": 6000}],
        "starts": [[0.5, 0.5], [0.2, 0.8]],
        "points": [ours, [2410.0, 2930.0]],
    });
    let Some(py) = python_reference("tune_check.py", &input) else {
        return;
    };
    let theirs: Vec<f64> = py["optimum"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let theirs_j = py["objective"].as_f64().unwrap();
    // The same objective at the same points (our prediction against numpy's
    // integral), the same optimum value, and the same place within 0.5 % of
    // each range (the objective is flat near its minimum).
    let at = py["at"].as_array().unwrap();
    assert!(
        (at[0].as_f64().unwrap() / ours_j - 1.0).abs() < 1e-5,
        "{at:?} vs {ours_j}"
    );
    let start_j = r["spectral"]["start"]["objective"].as_f64().unwrap();
    assert!(
        (at[1].as_f64().unwrap() / start_j - 1.0).abs() < 1e-5,
        "{at:?} vs {start_j}"
    );
    assert!(
        ours_j <= theirs_j * (1.0 + 1e-6),
        "ours {ours_j}, scipy {theirs_j}"
    );
    for (o, t) in ours.iter().zip(&theirs) {
        assert!(
            (o - t).abs() < 0.005 * 5900.0,
            "ours {ours:?}, scipy {theirs:?}"
        );
    }
}

/// Mean seat_aw per value of the varied key, from a sweep CSV.
fn grid_means(csv_text: &str, key: &str) -> Vec<(f64, f64)> {
    let mut rdr = csv::Reader::from_reader(csv_text.as_bytes());
    let h = rdr.headers().unwrap().clone();
    let (ki, ai) = (
        h.iter().position(|c| c == key).unwrap(),
        h.iter().position(|c| c == "seat_aw").unwrap(),
    );
    let mut out: Vec<(f64, f64, usize)> = Vec::new();
    for r in rdr.records() {
        let r = r.unwrap();
        let (k, aw): (f64, f64) = (r[ki].parse().unwrap(), r[ai].parse().unwrap());
        match out.last_mut() {
            Some(last) if last.0 == k => {
                last.1 += aw;
                last.2 += 1;
            }
            _ => out.push((k, aw, 1)),
        }
    }
    out.into_iter().map(|(k, s, n)| (k, s / n as f64)).collect()
}

#[test]
fn a_time_domain_tune_finds_the_best_of_an_exhaustive_sweep_grid_and_its_file_simulates_to_its_objective()
 {
    let car = car();
    let dir = scratch();
    let tuned = dir.path().join("tuned.toml");
    let cases = [
        "--classes",
        "C",
        "--seeds",
        "2",
        "--speeds",
        "20",
        "--length",
        "150",
    ];
    let mut args = vec![
        "tune",
        "--vehicle",
        &car,
        "--vary",
        "front.damping=300:3000",
        "--method",
        "time",
    ];
    args.extend(cases);
    args.extend(["-o", tuned.to_str().unwrap()]);
    let r = json_of(&args);
    assert_eq!(r["method"], "time_domain");
    for key in ["best", "objective", "start_objective", "evaluations"] {
        assert!(!r[key].is_null(), "tune --json has no {key}");
    }
    let best = r["best"]["front.damping"].as_f64().unwrap();
    let j = r["objective"].as_f64().unwrap();
    // The exhaustive grid: every 25 N s/m, the same cases, by sweep.
    let step = 25.0;
    let mut s = vec![
        "sweep",
        "--vehicle",
        &car,
        "--vary",
        "front.damping=300:3000:25",
    ];
    s.extend(cases);
    let grid = grid_means(&ok(&s), "front.damping");
    assert_eq!(grid.len(), 109);
    let (c_grid, j_grid) = grid
        .iter()
        .copied()
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .unwrap();
    assert!(c_grid > 300.0 && c_grid < 3000.0, "interior: {c_grid}");
    assert!((best - c_grid).abs() <= step, "tuned {best}, grid {c_grid}");
    assert!(j <= j_grid * (1.0 + 1e-9), "tuned {j}, grid {j_grid}");
    // The tuned file is a vehicle file simulate reads as it is, and its runs
    // on the cases average to the reported objective.
    let text = std::fs::read_to_string(&tuned).unwrap();
    assert!(text.contains("# N s/m"), "comments kept:\n{text}");
    let mut sum = 0.0;
    for seed in ["1", "2"] {
        let sim = json_of(&[
            "simulate",
            "--vehicle",
            tuned.to_str().unwrap(),
            "--class",
            "C",
            "--seed",
            seed,
            "--length",
            "150",
            "--speed",
            "20",
        ]);
        sum += sim["seats"][0]["aw"].as_f64().unwrap();
    }
    assert!((sum / 2.0 / j - 1.0).abs() < 1e-12, "{} vs {j}", sum / 2.0);
    // The start objective is the file's own mean.
    let mut s = vec!["sweep", "--vehicle", &car];
    s.extend(cases);
    let start = grid_means(
        &ok(&[s.as_slice(), &["--vary", "front.damping=2930"]].concat()),
        "front.damping",
    );
    let start_j = r["start_objective"].as_f64().unwrap();
    assert!((start[0].1 / start_j - 1.0).abs() < 1e-12);
    // The history only improves, and ends at the optimum.
    let h: Vec<f64> = r["history"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["objective"].as_f64().unwrap())
        .collect();
    assert!(
        h.windows(2).all(|w| w[1] < w[0]) && *h.last().unwrap() == j,
        "{h:?}"
    );
}

#[test]
fn a_travel_limit_binds_and_is_met() {
    // Less rear damping rides better but travels more (on a white road
    // velocity the travel variance goes as 1/c, Gobbi & Mastinu 2001, from
    // memory): with a p99 limit below the free optimum's travel the limit
    // binds, and the damping rises to meet it.
    let car = car();
    let tune = |limit: f64| {
        json_of(&[
            "tune",
            "--vehicle",
            &car,
            "--vary",
            "rear.damping=300:6000",
            "--classes",
            "D",
            "--speeds",
            "20",
            "--length",
            "200",
            "--limit",
            &format!("travel_p99_rear_m={limit}"),
        ])
    };
    let free = tune(1.0);
    let l = &free["spectral"]["optimum"]["limits"][0];
    assert!(
        l["met"].as_bool().unwrap() && !l["binding"].as_bool().unwrap(),
        "{l}"
    );
    let limit = 0.85 * l["value"].as_f64().unwrap();
    let r = tune(limit);
    let l = &r["spectral"]["optimum"]["limits"][0];
    assert_eq!(l["name"], "travel_p99_rear_m");
    assert!(
        l["met"].as_bool().unwrap() && l["binding"].as_bool().unwrap(),
        "{l}"
    );
    assert_eq!(r["binding"][0], "travel_p99_rear_m");
    let (c_free, c) = (
        free["best"]["rear.damping"].as_f64().unwrap(),
        r["best"]["rear.damping"].as_f64().unwrap(),
    );
    assert!(c > c_free, "the limit raises the damping: {c} vs {c_free}");
    // The objective cannot be better than without the limit.
    let j = |x: &serde_json::Value| x["spectral"]["optimum"]["objective"].as_f64().unwrap();
    assert!(j(&r) >= j(&free));
}

#[test]
fn bad_input_is_refused_with_status_2_and_no_file() {
    let car = car();
    let dir = scratch();
    let out = dir.path().join("tuned.toml");
    let o = out.to_str().unwrap();
    let base = [
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "100",
        "-o",
        o,
    ];
    for (extra, fragment) in [
        (
            vec!["--vary", "rear.dampng=1000:3000"],
            "unknown key `rear.dampng`",
        ),
        (vec!["--vary", "rear.damping=3000:1000"], "reversed"),
        (vec!["--vary", "rear.damping=2000:2000"], "equal"),
        (vec!["--vary", "rear.damping=1000:2000:100"], "two bounds"),
        (
            vec!["--vary", "rear.damping=-100:2000"],
            "the bound -100 is refused",
        ),
        (
            vec![
                "--vary",
                "rear.damping=1000:3000",
                "--limit",
                "travel_p99_rear_m=0.0001",
            ],
            "no design within the bounds meets the limits",
        ),
        (
            vec![
                "--vary",
                "rear.damping=1000:3000",
                "--limit",
                "travel_p77_rear_m=1",
            ],
            "unknown limit",
        ),
        (
            vec![
                "--vary",
                "rear.damping=1000:3000",
                "--limit",
                "time_past_bump_fraction_rear=0.1",
            ],
            "no bump stop",
        ),
        (
            vec!["--vary", "rear.damping=1000:3000", "--seat", "pilot"],
            "no such seat",
        ),
        (
            vec![
                "--vary",
                "rear.damping=1000:3000",
                "--measure",
                "vdv",
                "--method",
                "spectral",
            ],
            "VDV needs the time history",
        ),
        (
            vec![
                "--vary",
                "rear.damping=1000:3000",
                "--vary",
                "rear.damping=1:2",
            ],
            "given twice",
        ),
    ] {
        let mut args = vec!["tune", "--vehicle", car.as_str()];
        args.extend(extra.iter().copied());
        args.extend(base);
        let (stdout, stderr, code) = run(&args);
        assert_eq!(code, 2, "{extra:?}: {stderr}");
        assert!(
            stderr.contains(fragment),
            "{extra:?}: expected {fragment:?} in {stderr}"
        );
        assert!(stdout.is_empty(), "{extra:?} printed {stdout}");
        assert!(!out.exists(), "{extra:?} left a file");
    }
}

#[test]
fn the_tradeoff_pareto_sets_pass_a_brute_force_dominance_check_and_the_svg_parses() {
    let car = car();
    let dir = scratch();
    let study = dir.path().join("study.csv");
    let svg = dir.path().join("t.svg");
    ok(&[
        "sweep",
        "--vehicle",
        &car,
        "--vary",
        "rear.damping=*0.5:*1.5:*0.25",
        "--vary",
        "rear.spring_rate=*0.8,*1.2",
        "--classes",
        "C,D",
        "--speeds",
        "15,25",
        "--length",
        "100",
        "-o",
        study.to_str().unwrap(),
    ]);
    let t = json_of(&[
        "plot",
        "tradeoff",
        study.to_str().unwrap(),
        "-o",
        svg.to_str().unwrap(),
    ]);
    let points = t["points"].as_array().unwrap();
    assert_eq!(points.len(), 10);
    for p in points {
        assert_eq!(p["rows"], 4, "2 classes × 2 speeds per variant");
    }
    let get = |p: &serde_json::Value, k: &str| p[k].as_f64().unwrap();
    for (axis, flag) in [
        ("dynamic_load_coefficient", "pareto_load"),
        ("travel", "pareto_travel"),
    ] {
        for p in points {
            let beaten = points.iter().any(|q| {
                get(q, axis) <= get(p, axis)
                    && get(q, "aw_m_s2") <= get(p, "aw_m_s2")
                    && (get(q, axis) < get(p, axis) || get(q, "aw_m_s2") < get(p, "aw_m_s2"))
            });
            assert_eq!(p[flag].as_bool().unwrap(), !beaten, "{flag}: {p}");
        }
    }
    let doc = std::fs::read_to_string(&svg).unwrap();
    let xml = roxmltree::Document::parse(&doc).unwrap();
    assert!(
        xml.descendants()
            .any(|n| n.text().is_some_and(|t| t.contains("Pareto set")))
    );
    assert!(doc.contains("ISO 2631-1"), "the caution is on the picture");
    assert!(t["caution"].as_str().unwrap().contains("ISO 2631-1"));
}

#[test]
fn an_interrupted_tune_keeps_the_old_file_and_leaves_no_partial_file() {
    let dir = scratch();
    let tuned = dir.path().join("tuned.toml");
    std::fs::write(&tuned, "previous good result\n").unwrap();
    let bin = assert_cmd::cargo::cargo_bin("roughride");
    // A time-domain tune long enough (minutes) to be stopped midway.
    let mut child = std::process::Command::new(bin)
        .args([
            "tune",
            "--vehicle",
            &car(),
            "--vary",
            "rear.damping=300:6000",
            "--method",
            "time",
        ])
        .args([
            "--classes",
            "C,D",
            "--speeds",
            "10,20,30",
            "--length",
            "5000",
            "-o",
        ])
        .arg(&tuned)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(std::time::Duration::from_millis(1500));
    assert!(
        child.try_wait().unwrap().is_none(),
        "the tune ended before it could be stopped"
    );
    let status = std::process::Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let out = child.wait_with_output().unwrap();
    assert!(
        !out.status.success(),
        "a stopped tune must not report success"
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert_eq!(common::read(&tuned), "previous good result\n");
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        1,
        "a partial file was left"
    );
}

#[test]
fn a_tune_prints_the_same_bytes_on_one_thread_and_on_two() {
    // The time-domain cases run in parallel; their values are combined in
    // case order, so the thread count changes nothing (the house rule).
    let car = car();
    let args = |jobs: &'static str| {
        vec![
            "tune",
            "--vehicle",
            car.as_str(),
            "--vary",
            "rear.damping=800:4000",
            "--method",
            "time",
            "--classes",
            "C",
            "--seeds",
            "3",
            "--speeds",
            "20",
            "--length",
            "80",
            "--max-evaluations",
            "25",
            "--json",
            "--jobs",
            jobs,
        ]
    };
    let one = ok(&args("1"));
    let two = ok(&args("2"));
    assert_eq!(one, two);
}

/// A suspended seat's objective is what reaches the person, the seat
/// surface: `--measure aw` tunes the surface aw (`simulate`'s
/// `seats[i].aw`, not the floor's), and `--measure total-value` the
/// comfort total value (ISO 2631-1 6.5 with the seat factors of 8.2, k = 1:
/// `√(aw_x² + aw_z²)`, `seats[i].total_value`). The spectral objective is
/// checked against the random-vibration integral computed in numpy
/// (`tests/reference/seat_spectral.py`: its own model, ISO 8608 spectrum
/// and ISO 2631-1 Annex A weightings; Newland, *An Introduction to Random
/// Vibrations, Spectral and Wavelet Analysis*, ch. 5 and 7), within 1e-6:
/// both integrate the same spectrum, numpy's grid is converged to 1e-6.
#[test]
fn a_suspended_seat_is_tuned_on_its_surface_and_the_total_value_is_offered() {
    let van = demo("vehicles/demo_van_suspended_seat.toml");
    let tune = |measure: &str| {
        json_of(&[
            "tune",
            "--vehicle",
            van.to_str().unwrap(),
            "--vary",
            "seat.driver.suspension.damping=150:1500",
            "--classes",
            "C",
            "--speeds",
            "20",
            "--length",
            "1000",
            "--measure",
            measure,
        ])
    };
    let (aw, total) = (tune("aw"), tune("total-value"));
    assert_eq!(
        total["objective_description"],
        "mean total value of seat driver over the cases"
    );
    assert!(total["caution"].as_str().unwrap().contains("ISO 2631-1"));
    // The reported objectives are time-domain runs of the same cases.
    let sim = json_of(&[
        "simulate",
        "--vehicle",
        van.to_str().unwrap(),
        "--class",
        "C",
        "--seed",
        "1",
        "--length",
        "1000",
        "--speed",
        "20",
    ]);
    let seat = &sim["seats"][0];
    let f = |v: &serde_json::Value| v.as_f64().unwrap();
    assert_eq!(f(&aw["start_objective"]), f(&seat["aw"]));
    assert_eq!(f(&total["start_objective"]), f(&seat["total_value"]));
    // The surface, not the floor beneath it (SEAT ≈ 47 % on this van).
    assert!(f(&seat["aw"]) < 0.6 * f(&seat["floor"]["aw"]));
    // The spectral objectives against numpy.
    let Some(r) = python_reference(
        "seat_spectral.py",
        &serde_json::json!({
            "vehicle": van,
            "class": "C",
            "speed_m_s": 20.0,
            "n_min_cycle_m": 0.011,
            "n_max_cycle_m": 2.83,
            "spacing_m": 0.05,
        }),
    ) else {
        return;
    };
    let (z, x) = (f(&r["seats"][0]["aw"]), f(&r["seats"][0]["fore_aft_aw"]));
    for (got, want) in [
        (f(&aw["spectral"]["start"]["objective"]), z),
        (f(&total["spectral"]["start"]["objective"]), z.hypot(x)),
    ] {
        assert!((got / want - 1.0).abs() < 1e-6, "{got} vs numpy {want}");
    }
    // Fore-aft motion makes the total value the larger, so the two
    // objectives are not the same function of the damping.
    assert!(f(&total["spectral"]["start"]["objective"]) > 1.05 * z);
}
