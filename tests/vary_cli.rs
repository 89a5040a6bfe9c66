//! `roughride sweep --vary`: every row of a variant equals `roughride
//! simulate` on a vehicle file edited by hand to the same values, column by
//! column (one and two varied keys, a nonlinear vehicle with stops, shards),
//! and bad keys and values are refused before any case runs. The reference
//! is the program's own single run on a file written independently here by
//! plain text replacement, not through the `--vary` code.

mod common;

use std::collections::HashMap;
use std::path::Path;

use common::{demo, roughride, scratch};

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

/// Header and rows of a sweep CSV.
fn csv_table(text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let mut rdr = csv::Reader::from_reader(text.as_bytes());
    let header = rdr.headers().unwrap().iter().map(String::from).collect();
    let rows = rdr
        .records()
        .map(|r| r.unwrap().iter().map(String::from).collect())
        .collect();
    (header, rows)
}

/// The `simulate --json` value a sweep column must equal, as a JSON pointer.
/// `None` for the columns that describe the case rather than its result.
fn pointer_of(col: &str) -> Option<String> {
    let fixed = [
        ("seat_aw", "/seats/0/aw"),
        ("speed_m_s", "/speed_m_s"),
        ("duration_s", "/duration_s"),
        ("length_m", "/length_m"),
        ("heave_accel_rms_m_s2", "/body/heave_accel_rms"),
        ("pitch_accel_rms_rad_s2", "/body/pitch_accel_rms"),
        ("solver", "/solver/solver"),
    ];
    if let Some((_, p)) = fixed.iter().find(|(c, _)| *c == col) {
        return Some(p.to_string());
    }
    if let Some(rest) = col.strip_prefix("seat") {
        if let Some((i, m)) = rest.split_once('_') {
            if let Ok(i) = i.parse::<usize>() {
                let m = match m {
                    "fore_aft_aw" => "fore_aft/aw",
                    "seat_pct" => "seat_effective_amplitude_transmissibility_pct",
                    m => m,
                };
                return Some(format!("/seats/{}/{m}", i - 1));
            }
        }
    }
    for axle in ["front", "rear"] {
        let q = [
            format!("_{axle}_m"),
            format!("_{axle}_n"),
            format!("_{axle}"),
        ]
        .iter()
        .find_map(|suffix| col.strip_suffix(suffix.as_str()))
        .map(str::to_string);
        let Some(q) = q else { continue };
        if let Some(p) = q.strip_prefix("travel_p") {
            let i = ["1", "5", "50", "95", "99"].iter().position(|x| *x == p)?;
            return Some(format!("/axles/{axle}/travel_percentiles_m/{i}/1"));
        }
        return Some(format!("/axles/{axle}/{q}"));
    }
    None
}

/// The cell's value as simulate prints it (numbers compared bit for bit,
/// read with Rust's correctly rounded parser; text as text; null as empty).
fn same(cell: &str, json: &serde_json::Value) -> bool {
    match json {
        serde_json::Value::Null => cell.is_empty(),
        serde_json::Value::String(s) => cell == s,
        serde_json::Value::Number(n) => {
            let want = n.as_f64().unwrap();
            cell.parse::<f64>()
                .is_ok_and(|c| c.to_bits() == want.to_bits())
        }
        _ => false,
    }
}

/// simulate's JSON (the tests read floats with serde_json's
/// `float_roundtrip`, so every number is the exact value printed).
fn json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).unwrap()
}

/// Every row against a simulate run on `file_for(row)`; `descriptive` are
/// the columns that name the case (checked by the caller).
fn check_rows_against_simulate(
    header: &[String],
    rows: &[Vec<String>],
    length: &str,
    file_for: impl Fn(&HashMap<&str, &str>) -> String,
) {
    let descriptive = ["case", "vehicle", "road", "class", "seed"];
    for row in rows {
        let cells: HashMap<&str, &str> = header
            .iter()
            .map(String::as_str)
            .zip(row.iter().map(String::as_str))
            .collect();
        let file = file_for(&cells);
        let single = json(&ok(&[
            "simulate",
            "--vehicle",
            &file,
            "--class",
            cells["class"],
            "--seed",
            cells["seed"],
            "--length",
            length,
            "--speed",
            cells["speed_m_s"],
            "--json",
        ]));
        for (col, cell) in header.iter().zip(row) {
            if descriptive.contains(&col.as_str()) || col.contains('.') {
                continue;
            }
            if col == "speed_kmh" {
                // 1 m/s = 3.6 km/h (definition of the units).
                let v: f64 = cells["speed_m_s"].parse().unwrap();
                let kmh: f64 = cell.parse().unwrap();
                assert!((kmh - v * 3.6).abs() < 1e-6, "speed_kmh {cell} at {v} m/s");
                continue;
            }
            match pointer_of(col).and_then(|p| single.pointer(&p).cloned()) {
                Some(want) => assert!(
                    same(cell, &want),
                    "case {}: {col} = {cell:?} but simulate on the edited file gives {want}",
                    cells["case"]
                ),
                // A text column this test does not know is left alone; a
                // number must be mapped to its simulate key above.
                None => assert!(
                    cell.parse::<f64>().is_err() || cell.is_empty(),
                    "column {col} has no simulate counterpart in this test: add it to pointer_of"
                ),
            }
        }
    }
}

/// Replaces the `key = …` line inside `[table]` of a vehicle file (plain
/// text editing, as a person would).
fn hand_edit(text: &str, table: &str, key: &str, value: &str) -> String {
    let mut out = String::new();
    let mut current = String::new();
    let mut done = false;
    for line in text.lines() {
        let t = line.trim();
        if t.starts_with('[') {
            current = t.trim_matches(|c| c == '[' || c == ']').to_string();
        }
        let is_key = t.split_once('=').is_some_and(|(k, _)| k.trim() == key);
        if current == table && is_key && !done {
            out.push_str(&format!("{key} = {value}\n"));
            done = true;
        } else {
            out.push_str(line);
            out.push('\n');
        }
    }
    assert!(done, "no {key} in [{table}]");
    out
}

fn write_edited(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.to_str().unwrap().to_string()
}

#[test]
fn one_varied_key_equals_simulate_on_the_hand_edited_file() {
    let car = demo("vehicles/demo_hatchback.toml");
    let car_text = std::fs::read_to_string(&car).unwrap();
    let dir = scratch();
    let out = ok(&[
        "sweep",
        "--vehicle",
        car.to_str().unwrap(),
        "--vary",
        "rear.damping=*0.75:*1.25:*0.25",
        "--classes",
        "C",
        "--speeds",
        "14,26",
        "--seeds",
        "2",
        "--length",
        "90",
    ]);
    let (header, rows) = csv_table(&out);
    assert_eq!(&header[..4], ["case", "vehicle", "rear.damping", "road"]);
    // 3 variants × 1 class × 2 speeds × 2 seeds, the variant slowest.
    assert_eq!(rows.len(), 12);
    let values: Vec<&str> = rows.iter().map(|r| r[2].as_str()).collect();
    // 2410 N s/m × 0.75, 1, 1.25 (the file's value, demo_hatchback.toml).
    assert_eq!(values[0], "1807.5");
    assert_eq!(values[4], "2410");
    assert_eq!(values[11], "3012.5");
    check_rows_against_simulate(&header, &rows, "90", |c| {
        let text = hand_edit(&car_text, "rear", "damping", c["rear.damping"]);
        write_edited(dir.path(), &format!("car_{}.toml", c["case"]), &text)
    });
}

#[test]
fn two_varied_keys_on_a_vehicle_with_stops_equal_simulate_and_shards_concatenate() {
    // The van has asymmetric dampers and stops (adaptive solver), so the
    // time-past-stop columns are filled and compared too.
    let van = demo("vehicles/demo_van_stops.toml");
    let van_text = std::fs::read_to_string(&van).unwrap();
    let dir = scratch();
    let args = [
        "sweep",
        "--vehicle",
        van.to_str().unwrap(),
        "--vary",
        "front.bump_clearance=0.02,0.035",
        "--vary",
        "seat.1.x=1.0:1.4:0.4",
        "--classes",
        "D",
        "--speeds",
        "18",
        "--length",
        "60",
    ];
    let whole = ok(&args);
    let (header, rows) = csv_table(&whole);
    assert_eq!(
        &header[..5],
        [
            "case",
            "vehicle",
            "front.bump_clearance",
            "seat.1.x",
            "road"
        ]
    );
    let pairs: Vec<(&str, &str)> = rows
        .iter()
        .map(|r| (r[2].as_str(), r[3].as_str()))
        .collect();
    assert_eq!(
        pairs,
        [
            ("0.02", "1"),
            ("0.02", "1.4"),
            ("0.035", "1"),
            ("0.035", "1.4")
        ]
    );
    let stop_col = header
        .iter()
        .position(|h| h == "time_past_bump_fraction_front")
        .unwrap();
    assert!(
        rows.iter()
            .any(|r| r[stop_col].parse::<f64>().unwrap() > 0.0),
        "a 20 mm clearance on class D should be passed sometimes"
    );
    check_rows_against_simulate(&header, &rows, "60", |c| {
        let t = hand_edit(
            &van_text,
            "front",
            "bump_clearance",
            c["front.bump_clearance"],
        );
        let t = hand_edit(&t, "seat", "x", c["seat.1.x"]);
        write_edited(dir.path(), &format!("van_{}.toml", c["case"]), &t)
    });
    // Shards of the variant grid concatenate to the whole, byte for byte.
    let mut joined = String::new();
    for k in 1..=3 {
        let mut a = args.to_vec();
        let shard = format!("{k}/3");
        a.extend(["--shard", &shard]);
        joined.push_str(&ok(&a));
    }
    assert_eq!(joined, whole);
}

#[test]
fn a_varied_seat_height_equals_simulate_with_the_height_written_in() {
    // The file gives no height (0 by default): `--vary` inserts the key,
    // and each row must equal simulate on a file with `height` written by
    // hand under the first `[[seat]]`. Height 0 must give zero fore-aft aw
    // and a total value equal to the vertical aw; a real height must not.
    let car = demo("vehicles/demo_hatchback.toml");
    let car_text = std::fs::read_to_string(&car).unwrap();
    let dir = scratch();
    let out = ok(&[
        "sweep",
        "--vehicle",
        car.to_str().unwrap(),
        "--vary",
        "seat.driver.height=0,0.8",
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "80",
    ]);
    let (header, rows) = csv_table(&out);
    assert_eq!(header[2], "seat.driver.height");
    let col = |name: &str| header.iter().position(|h| h == name).unwrap();
    let checks = col("checks");
    assert_eq!(header[checks - 1], "seat2_total_value", "before checks");
    let f = |r: &Vec<String>, c: &str| r[col(c)].parse::<f64>().unwrap();
    assert_eq!(f(&rows[0], "seat1_fore_aft_aw"), 0.0);
    assert_eq!(f(&rows[0], "seat1_total_value"), f(&rows[0], "seat1_aw"));
    assert!(f(&rows[1], "seat1_fore_aft_aw") > 0.0);
    assert!(f(&rows[1], "seat1_total_value") > f(&rows[1], "seat1_aw"));
    // The height moves no vertical value.
    assert_eq!(rows[0][col("seat1_aw")], rows[1][col("seat1_aw")]);
    check_rows_against_simulate(&header, &rows, "80", |c| {
        let h = c["seat.driver.height"];
        let text = car_text.replacen("[[seat]]\n", &format!("[[seat]]\nheight = {h}\n"), 1);
        assert_ne!(text, car_text);
        write_edited(dir.path(), &format!("car_h{}.toml", c["case"]), &text)
    });
}

#[test]
fn bad_keys_and_values_are_refused_before_any_case_with_status_2() {
    let car = demo("vehicles/demo_hatchback.toml");
    let car = car.to_str().unwrap();
    let dir = scratch();
    let out = dir.path().join("grid.csv");
    for (vary, fragment) in [
        ("front.dampng=1000", "unknown key `front.dampng`"),
        ("name=3", "not a number"),
        ("body.mass=-100,1000", "the value -100 is refused"),
        ("rear.damping=", "no values given"),
        ("rear.damping=3000:1000:500", "the end is below the start"),
        ("seat.pilot.x=0.1", "no seat is named \"pilot\""),
        ("seat.driver.height=-0.5,1", "the value -0.5 is refused"),
        ("seat.driver.heigth=1", "unknown key `seat.driver.heigth`"),
        ("front.tyre_damping=*2", "needs the key in the file"),
        ("front.damping_bump=1000", "cannot be combined"),
        ("rear.damping", "expected KEY=VALUES"),
    ] {
        let (stdout, stderr, code) = run(&[
            "sweep",
            "--vehicle",
            car,
            "--vary",
            vary,
            "--classes",
            "C",
            "--speeds",
            "20",
            "--length",
            "60",
            "-o",
            out.to_str().unwrap(),
        ]);
        assert_eq!(code, 2, "--vary {vary}: {stderr}");
        assert!(
            stderr.contains("--vary") && stderr.contains(fragment),
            "--vary {vary}: expected {fragment:?} in {stderr}"
        );
        assert!(stdout.is_empty());
        assert!(!out.exists(), "--vary {vary} left an output file");
    }
}

#[test]
fn a_varied_seat_suspension_equals_simulate_including_seat_pct() {
    // The driver's seat is suspended, the passenger's is not: the SEAT cell
    // of seat 1 is compared with simulate, seat 2 has no SEAT column.
    let van = demo("vehicles/demo_van_suspended_seat.toml");
    let van_text = std::fs::read_to_string(&van).unwrap();
    let dir = scratch();
    let out = ok(&[
        "sweep",
        "--vehicle",
        van.to_str().unwrap(),
        "--vary",
        "seat.driver.suspension.rate=5000,9000",
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "200",
    ]);
    let (header, rows) = csv_table(&out);
    assert!(header.iter().any(|h| h == "seat1_seat_pct"));
    assert!(!header.iter().any(|h| h == "seat2_seat_pct"));
    assert_eq!(rows.len(), 2);
    let pct = header.iter().position(|h| h == "seat1_seat_pct").unwrap();
    // A softer seat spring isolates better above its (lower) natural
    // frequency: SEAT falls with the rate here (base-excited oscillator).
    let (soft, stiff): (f64, f64) = (rows[0][pct].parse().unwrap(), rows[1][pct].parse().unwrap());
    assert!(soft < stiff, "{soft} vs {stiff}");
    check_rows_against_simulate(&header, &rows, "200", |c| {
        let t = hand_edit(
            &van_text,
            "seat.suspension",
            "rate",
            c["seat.driver.suspension.rate"],
        );
        write_edited(dir.path(), &format!("van_{}.toml", c["case"]), &t)
    });
}
