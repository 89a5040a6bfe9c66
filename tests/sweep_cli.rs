//! `roughride sweep` driven as a script or a job array would drive it:
//! rows against single `simulate --json` runs, shards and thread counts
//! against the whole sweep byte for byte, failed cases, bad input, and the
//! physics of aw against road class. Roads are short (≤ 150 m) to keep the
//! run time modest.

mod common;

use std::collections::HashMap;

use common::{demo, roughride, scratch};

const CAR: &str = "vehicles/demo_hatchback.toml";
const VAN: &str = "vehicles/demo_van_stops.toml";

fn car() -> String {
    demo(CAR).to_str().unwrap().to_string()
}

/// Runs the binary and returns (stdout, stderr, exit code).
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

/// CSV rows as maps from column to cell text (no quoting in these tests'
/// cells except where a test says so).
fn csv_rows(text: &str) -> Vec<HashMap<String, String>> {
    let mut rdr = csv::Reader::from_reader(text.as_bytes());
    let headers = rdr.headers().unwrap().clone();
    rdr.records()
        .map(|r| {
            let r = r.unwrap();
            headers
                .iter()
                .zip(r.iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect()
        })
        .collect()
}

/// Every number of a JSON document as its exact text, keyed by path
/// (`seats.0.aw`, `axles.front.travel_rms`). serde_json's default float
/// parser may miss the last bit, so the numbers are compared as parsed by
/// Rust's correctly rounded `str::parse`.
fn json_numbers(text: &str) -> HashMap<String, String> {
    fn skip_ws(b: &[u8], i: &mut usize) {
        while *i < b.len() && b[*i].is_ascii_whitespace() {
            *i += 1;
        }
    }
    fn string(b: &[u8], i: &mut usize) -> String {
        assert_eq!(b[*i], b'"');
        *i += 1;
        let start = *i;
        while b[*i] != b'"' {
            if b[*i] == b'\\' {
                *i += 1;
            }
            *i += 1;
        }
        let s = String::from_utf8(b[start..*i].to_vec()).unwrap();
        *i += 1;
        s
    }
    fn value(b: &[u8], i: &mut usize, path: &str, out: &mut HashMap<String, String>) {
        skip_ws(b, i);
        let join = |k: &str| {
            if path.is_empty() {
                k.to_string()
            } else {
                format!("{path}.{k}")
            }
        };
        match b[*i] {
            b'{' => {
                *i += 1;
                loop {
                    skip_ws(b, i);
                    if b[*i] == b'}' {
                        *i += 1;
                        return;
                    }
                    let k = string(b, i);
                    skip_ws(b, i);
                    assert_eq!(b[*i], b':');
                    *i += 1;
                    value(b, i, &join(&k), out);
                    skip_ws(b, i);
                    if b[*i] == b',' {
                        *i += 1;
                    }
                }
            }
            b'[' => {
                *i += 1;
                let mut n = 0;
                loop {
                    skip_ws(b, i);
                    if b[*i] == b']' {
                        *i += 1;
                        return;
                    }
                    value(b, i, &join(&n.to_string()), out);
                    n += 1;
                    skip_ws(b, i);
                    if b[*i] == b',' {
                        *i += 1;
                    }
                }
            }
            b'"' => {
                string(b, i);
            }
            _ => {
                let start = *i;
                while *i < b.len()
                    && !matches!(b[*i], b',' | b'}' | b']')
                    && !b[*i].is_ascii_whitespace()
                {
                    *i += 1;
                }
                out.insert(
                    path.to_string(),
                    String::from_utf8(b[start..*i].to_vec()).unwrap(),
                );
            }
        }
    }
    let mut out = HashMap::new();
    let mut i = 0;
    value(text.trim().as_bytes(), &mut i, "", &mut out);
    out
}

fn bits(text: &str) -> u64 {
    text.parse::<f64>()
        .unwrap_or_else(|_| panic!("not a number: {text:?}"))
        .to_bits()
}

/// The sweep columns and the `simulate --json` keys they must equal.
fn column_keys(seats: usize) -> Vec<(String, String)> {
    let mut v = vec![
        ("seat_aw".to_string(), "seats.0.aw".to_string()),
        ("speed_m_s".into(), "speed_m_s".into()),
        ("duration_s".into(), "duration_s".into()),
        ("length_m".into(), "length_m".into()),
        ("heave_accel_rms_m_s2".into(), "body.heave_accel_rms".into()),
        (
            "pitch_accel_rms_rad_s2".into(),
            "body.pitch_accel_rms".into(),
        ),
    ];
    for i in 0..seats {
        for m in ["aw", "vdv", "mtvv", "crest_factor"] {
            v.push((format!("seat{}_{m}", i + 1), format!("seats.{i}.{m}")));
        }
    }
    for a in ["front", "rear"] {
        v.push((format!("travel_rms_{a}_m"), format!("axles.{a}.travel_rms")));
        v.push((format!("travel_min_{a}_m"), format!("axles.{a}.travel_min")));
        v.push((format!("travel_max_{a}_m"), format!("axles.{a}.travel_max")));
        // Travel percentiles 1, 5, 50, 95, 99 % as simulate lists them.
        for (i, p) in ["1", "5", "50", "95", "99"].iter().enumerate() {
            v.push((
                format!("travel_p{p}_{a}_m"),
                format!("axles.{a}.travel_percentiles_m.{i}.1"),
            ));
        }
        v.push((
            format!("tyre_load_rms_{a}_n"),
            format!("axles.{a}.tyre_load_rms"),
        ));
        v.push((
            format!("dynamic_load_coefficient_{a}"),
            format!("axles.{a}.dynamic_load_coefficient"),
        ));
        v.push((
            format!("time_off_ground_fraction_{a}"),
            format!("axles.{a}.time_off_ground_fraction"),
        ));
    }
    v
}

#[test]
fn a_sweep_row_holds_exactly_the_values_of_the_single_run() {
    let dir = scratch();
    let road = dir.path().join("lane.csv");
    ok(&[
        "profile",
        "--class",
        "C",
        "--length",
        "120",
        "--seed",
        "5",
        "-o",
        road.to_str().unwrap(),
    ]);
    let car = car();
    let sweep = ok(&[
        "sweep",
        "--vehicle",
        &car,
        "--classes",
        "B,D",
        "--profile",
        road.to_str().unwrap(),
        "--speeds",
        "12,27.5",
        "--seeds",
        "2",
        "--length",
        "120",
        "--jobs",
        "2",
    ]);
    let rows = csv_rows(&sweep);
    // 2 classes × 2 speeds × 2 seeds, then the file × 2 speeds.
    assert_eq!(rows.len(), 10);
    // Check one case per road and speed corner, including the profile file.
    for row in [&rows[1], &rows[6], &rows[9]] {
        let mut args = vec![
            "simulate".to_string(),
            "--vehicle".into(),
            car.clone(),
            "--speed".into(),
            row["speed_m_s"].clone(),
        ];
        if row["class"].is_empty() {
            assert_eq!(row["road"], road.to_str().unwrap());
            assert_eq!(row["seed"], "");
            args.extend(["--profile".into(), row["road"].clone()]);
        } else {
            args.extend(
                [
                    "--class",
                    &row["class"],
                    "--seed",
                    &row["seed"],
                    "--length",
                    "120",
                ]
                .map(String::from),
            );
        }
        args.push("--json".into());
        let single = json_numbers(&ok(&args.iter().map(String::as_str).collect::<Vec<_>>()));
        for (col, key) in column_keys(2) {
            let want = single
                .get(&key)
                .unwrap_or_else(|| panic!("simulate --json has no {key}"));
            assert_eq!(
                bits(&row[&col]),
                bits(want),
                "case {}: {col} = {} but simulate {key} = {want}",
                row["case"],
                row[&col]
            );
        }
    }
    // JSON Lines carry the same values under the same keys.
    let jsonl = ok(&[
        "sweep",
        "--vehicle",
        &car,
        "--classes",
        "B,D",
        "--profile",
        road.to_str().unwrap(),
        "--speeds",
        "12,27.5",
        "--seeds",
        "2",
        "--length",
        "120",
        "--json",
    ]);
    let lines: Vec<&str> = jsonl.lines().collect();
    assert_eq!(lines.len(), rows.len());
    for (line, row) in lines.iter().zip(&rows) {
        let v: serde_json::Value = serde_json::from_str(line).unwrap();
        let nums = json_numbers(line);
        for (col, _) in column_keys(2) {
            assert_eq!(bits(&nums[&col]), bits(&row[&col]), "{col}");
        }
        assert_eq!(v["road"].as_str().unwrap(), row["road"]);
        if row["class"].is_empty() {
            assert!(v["class"].is_null() && v["seed"].is_null());
        }
    }
}

#[test]
fn shards_and_thread_counts_give_the_same_bytes_as_the_whole_sweep() {
    let car = car();
    let base = [
        "sweep",
        "--vehicle",
        car.as_str(),
        "--classes",
        "A,C",
        "--speeds",
        "10:30:10",
        "--seeds",
        "2",
        "--length",
        "100",
    ];
    let with = |extra: &[&str]| {
        let mut a = base.to_vec();
        a.extend_from_slice(extra);
        ok(&a)
    };
    let full = with(&["--jobs", "1"]);
    assert_eq!(full.lines().count(), 1 + 2 * 3 * 2);
    assert_eq!(
        with(&["--jobs", "2"]),
        full,
        "--jobs 2 differs from --jobs 1"
    );
    // 12 cases in 5 shards: uneven slices (2 or 3 cases); header in shard 1 only.
    for n in [1, 3, 5, 12, 13] {
        let mut joined = String::new();
        for k in 1..=n {
            joined.push_str(&with(&["--jobs", "2", "--shard", &format!("{k}/{n}")]));
        }
        assert_eq!(
            joined, full,
            "{n} shards concatenated differ from the whole sweep"
        );
    }
    // JSON Lines shards concatenate too.
    let json_full = with(&["--json"]);
    let json_joined: String = (1..=4)
        .map(|k| with(&["--json", "--shard", &format!("{k}/4")]))
        .collect();
    assert_eq!(json_joined, json_full);
    // -o writes the same bytes as stdout; --no-header drops just the header.
    let dir = scratch();
    let file = dir.path().join("grid.csv");
    assert_eq!(with(&["-o", file.to_str().unwrap()]), "");
    assert_eq!(common::read(&file), full);
    let headless = with(&["--no-header"]);
    assert_eq!(headless, full.split_once('\n').unwrap().1);
}

#[test]
fn aw_rises_with_road_class_at_every_speed() {
    // Physics: ISO 8608 classes step Gd(n0) by 4, so the road elevation by 2,
    // and a rougher road shakes the body more at every speed (common practice).
    // Where both runs stayed linear (exact solver, tyres on the road) the
    // same seed's aw must double exactly: ISO 8608 synthesis scales the
    // amplitudes with √Gd(n0) and the model is linear (superposition).
    let car = car();
    let out = ok(&[
        "sweep",
        "--vehicle",
        &car,
        "--classes",
        "A,B,C,D,E",
        "--speeds",
        "10:30:10",
        "--seeds",
        "2",
        "--length",
        "120",
    ]);
    let rows = csv_rows(&out);
    let get = |class: &str, speed: &str, seed: &str| {
        rows.iter()
            .find(|r| r["class"] == class && r["speed_m_s"] == speed && r["seed"] == seed)
            .unwrap_or_else(|| panic!("no row {class} {speed} {seed}"))
    };
    let classes = ["A", "B", "C", "D", "E"];
    let mut linear_pairs = 0;
    for speed in ["10", "20", "30"] {
        let mean = |c: &str| {
            (1..=2)
                .map(|s| {
                    get(c, speed, &s.to_string())["seat_aw"]
                        .parse::<f64>()
                        .unwrap()
                })
                .sum::<f64>()
                / 2.0
        };
        for w in classes.windows(2) {
            let (lo, hi) = (mean(w[0]), mean(w[1]));
            assert!(
                hi > lo * 1.3,
                "at {speed} m/s class {} aw {hi} is not well above class {} aw {lo}",
                w[1],
                w[0]
            );
            for seed in ["1", "2"] {
                let (a, b) = (get(w[0], speed, seed), get(w[1], speed, seed));
                let linear = |r: &HashMap<String, String>| {
                    r["solver"] == "exact"
                        && r["time_off_ground_fraction_front"] == "0"
                        && r["time_off_ground_fraction_rear"] == "0"
                };
                if linear(a) && linear(b) {
                    let ratio =
                        b["seat_aw"].parse::<f64>().unwrap() / a["seat_aw"].parse::<f64>().unwrap();
                    assert!(
                        (ratio - 2.0).abs() < 1e-9,
                        "{}→{} at {speed} m/s seed {seed}: ratio {ratio}",
                        w[0],
                        w[1]
                    );
                    linear_pairs += 1;
                }
            }
        }
    }
    assert!(
        linear_pairs >= 6,
        "only {linear_pairs} linear pairs: the smooth classes should stay linear"
    );
}

#[test]
fn a_failed_case_is_listed_and_the_good_rows_are_still_written() {
    // A case whose run would need more than 10⁹ output samples (1 km at
    // 0.01 m/s on a 20 kHz grid) fails when it is planned; the 20 m/s case
    // of the same sweep runs.
    let dir = scratch();
    let file = dir.path().join("grid.csv");
    let van = demo(VAN).to_str().unwrap().to_string();
    let (stdout, stderr, code) = run(&[
        "sweep",
        "--vehicle",
        &van,
        "--classes",
        "B",
        "--speeds",
        "0.01,20",
        "--length",
        "1000",
        "--rate",
        "20000",
        "-o",
        file.to_str().unwrap(),
    ]);
    assert_eq!(code, 1, "a failed case gives exit status 1:\n{stderr}");
    assert_eq!(stdout, "");
    let rows = csv_rows(&common::read(&file));
    assert_eq!(rows.len(), 1, "{rows:?}");
    assert_eq!(rows[0]["speed_m_s"], "20");
    let failed: Vec<&str> = stderr
        .lines()
        .filter(|l| l.contains("failed: case"))
        .collect();
    assert_eq!(failed.len(), 1, "{stderr}");
    // The parameters of the case and the planner's message.
    assert!(
        failed[0].contains("class B seed 1")
            && failed[0].contains("speed 0.01 m/s")
            && failed[0].contains("output samples"),
        "{}",
        failed[0]
    );
    assert!(stderr.contains("1 of 2 cases failed"), "{stderr}");
}

#[test]
fn every_row_carries_its_plausibility_checks() {
    // Correct runs, linear and nonlinear, on a generated road: every row is
    // marked `ok` (the checks are in src/plausibility.rs; rows flagged
    // `warning:` or `implausible:` are tested there and in
    // tests/plausibility.rs).
    let van = demo(VAN).to_str().unwrap().to_string();
    let car = car();
    let (stdout, stderr, code) = run(&[
        "sweep",
        "--vehicle",
        &van,
        "--vehicle",
        &car,
        "--classes",
        "B,D",
        "--speeds",
        "15,30",
        "--length",
        "300",
    ]);
    assert_eq!(code, 0, "{stderr}");
    let rows = csv_rows(&stdout);
    assert_eq!(rows.len(), 8);
    for r in &rows {
        assert_eq!(r["checks"], "ok", "{r:?}");
    }
}

#[test]
fn bad_input_stops_before_any_case_with_status_2_and_no_file() {
    let dir = scratch();
    let file = dir.path().join("out.csv");
    let out = file.to_str().unwrap();
    let car = car();
    let van = demo(VAN).to_str().unwrap().to_string();
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec![
                "--vehicle",
                "missing.toml",
                "--classes",
                "A",
                "--speeds",
                "10",
                "--length",
                "100",
            ],
            "missing.toml",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--classes",
                "A,Q",
                "--speeds",
                "10",
                "--length",
                "100",
            ],
            "Q",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--classes",
                "A",
                "--speeds",
                "40:10:5",
                "--length",
                "100",
            ],
            "40:10:5",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--classes",
                "A",
                "--speeds",
                "10",
                "--length",
                "100",
                "--shard",
                "4/3",
            ],
            "4/3",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--classes",
                "A",
                "--speeds",
                "10",
                "--length",
                "100",
                "--jobs",
                "0",
            ],
            "--jobs",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--classes",
                "A",
                "--speeds",
                "10",
                "--length",
                "2",
            ],
            "wheelbase",
        ),
        (
            vec!["--vehicle", &car, "--classes", "A", "--speeds", "10"],
            "--length",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--vehicle",
                &van,
                "--classes",
                "A",
                "--speeds",
                "10",
                "--length",
                "100",
                "--solver",
                "exact",
            ],
            "linear",
        ),
        (
            vec![
                "--vehicle",
                &car,
                "--profile",
                "nowhere.csv",
                "--speeds",
                "10",
            ],
            "nowhere.csv",
        ),
    ];
    for (args, needle) in cases {
        let mut a = vec!["sweep"];
        a.extend(args.iter().copied());
        a.extend(["-o", out]);
        let (stdout, stderr, code) = run(&a);
        assert_eq!(code, 2, "{a:?} should be refused as bad input:\n{stderr}");
        assert!(
            stderr.contains(needle),
            "{a:?}: message should name {needle}:\n{stderr}"
        );
        assert_eq!(stdout, "");
        assert!(!file.exists(), "{a:?} left {out}");
    }
}

#[test]
fn the_header_has_the_documented_columns_and_stderr_stays_clean_off_a_terminal() {
    let (stdout, stderr, code) = run(&[
        "sweep",
        "--vehicle",
        &car(),
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "80",
    ]);
    assert_eq!(code, 0);
    let header: Vec<&str> = stdout.lines().next().unwrap().split(',').collect();
    // The documented interface: the header includes class,speed_m_s,seed,seat_aw.
    for key in ["class", "speed_m_s", "seed", "seat_aw"] {
        assert!(header.contains(&key), "{key} in {header:?}");
    }
    // No progress bar when stderr is not a terminal (as here): only the caution.
    assert!(
        !stderr.contains('\r') && !stderr.contains("cases,"),
        "{stderr:?}"
    );
    assert!(
        stderr.contains("estimates"),
        "the health caution is printed: {stderr:?}"
    );
}
