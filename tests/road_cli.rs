//! Road profiles end to end: the `profile` and `classify` commands run as a
//! user would (assert_cmd, scratch directories), the demo roads against the
//! commands recorded in `profiles/roads/INDEX.md`, and the Welch PSD and IRI
//! against independent scipy implementations (`tests/reference/`).

mod common;

use common::{python_reference, roughride, scratch};
use roughride::road::iso8608::{RoadClass, RoadSpec, generate};
use serde_json::{Value, json};

fn stdout_of(args: &[&str]) -> Vec<u8> {
    roughride()
        .args(args)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone()
}

fn json_of(args: &[&str]) -> Value {
    let out = stdout_of(args);
    serde_json::from_slice(&out).unwrap_or_else(|e| {
        panic!(
            "not one JSON object ({e}): {}",
            String::from_utf8_lossy(&out)
        )
    })
}

fn stderr_of_failure(args: &[&str], code: i32) -> String {
    let out = roughride()
        .args(args)
        .assert()
        .code(code)
        .get_output()
        .clone();
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn profile_gives_identical_bytes_for_a_seed_and_other_bytes_for_another() {
    let a = stdout_of(&[
        "profile",
        "--class",
        "D",
        "--length",
        "300",
        "--spacing",
        "0.1",
        "--seed",
        "5",
    ]);
    let b = stdout_of(&[
        "profile",
        "--class",
        "d",
        "--length",
        "300",
        "--spacing",
        "0.1",
        "--seed",
        "5",
    ]);
    let c = stdout_of(&[
        "profile",
        "--class",
        "D",
        "--length",
        "300",
        "--spacing",
        "0.1",
        "--seed",
        "6",
    ]);
    assert_eq!(a, b);
    assert_ne!(a, c);
    // -o writes the same bytes atomically and prints a summary instead.
    let dir = scratch();
    let file = dir.path().join("road.csv");
    let summary = stdout_of(&[
        "profile",
        "--class",
        "D",
        "--length",
        "300",
        "--spacing",
        "0.1",
        "--seed",
        "5",
        "-o",
        file.to_str().unwrap(),
    ]);
    assert_eq!(std::fs::read(&file).unwrap(), a);
    assert!(String::from_utf8_lossy(&summary).contains("r.m.s. elevation"));
}

#[test]
fn profile_covers_zero_to_length_with_length_over_spacing_plus_one_rows() {
    let out = String::from_utf8(stdout_of(&[
        "profile",
        "--class",
        "B",
        "--length",
        "100",
        "--spacing",
        "0.05",
    ]))
    .unwrap();
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines[0], "distance_m,elevation_m");
    assert_eq!(lines.len(), 1 + 2001);
    assert_eq!(lines[1], "0,0e0");
    assert!(lines[2001].starts_with("100,"), "{}", lines[2001]);
}

#[test]
fn profile_lays_obstacles_where_the_spec_says() {
    let out = String::from_utf8(stdout_of(&[
        "profile",
        "--flat",
        "--length",
        "200",
        "--spacing",
        "0.05",
        "--obstacle",
        "bump:100,0.5,0.05",
        "--obstacle",
        "step:150,-0.02",
    ]))
    .unwrap();
    let rows: Vec<(f64, f64)> = out
        .lines()
        .skip(1)
        .map(|l| {
            let (x, z) = l.split_once(',').unwrap();
            (x.parse().unwrap(), z.parse().unwrap())
        })
        .collect();
    let at = |x: f64| rows.iter().find(|r| (r.0 - x).abs() < 1e-9).unwrap().1;
    assert!((at(100.25) - 0.05).abs() < 1e-12); // half-sine peak at mid-length
    assert_eq!(at(99.95), 0.0);
    assert_eq!(at(149.95), 0.0);
    assert_eq!(at(150.0), -0.02);
    assert_eq!(at(200.0), -0.02);
}

#[test]
fn profile_refuses_bad_input_with_status_2_naming_the_option() {
    let e = stderr_of_failure(
        &[
            "profile",
            "--class",
            "C",
            "--length",
            "100",
            "--obstacle",
            "hump:1,2,3",
        ],
        2,
    );
    assert!(e.contains("--obstacle") && e.contains("hump:1,2,3"), "{e}");
    let e = stderr_of_failure(
        &[
            "profile",
            "--class",
            "C",
            "--length",
            "100",
            "--obstacle",
            "bump:99.9,0.5,0.05",
        ],
        2,
    );
    assert!(e.contains("outside the road"), "{e}");
    let e = stderr_of_failure(
        &[
            "profile",
            "--class",
            "C",
            "--length",
            "100",
            "--spacing",
            "0.5",
        ],
        2,
    );
    assert!(e.contains("n_max") && e.contains("Nyquist"), "{e}");
    let e = stderr_of_failure(&["profile", "--class", "K", "--length", "100"], 2);
    assert!(e.contains("--class"), "{e}");
    let e = stderr_of_failure(&["profile", "--length", "100"], 2);
    assert!(e.contains("--class") || e.contains("--flat"), "{e}");
    let e = stderr_of_failure(
        &["profile", "--class", "C", "--length", "100", "--n-min", "3"],
        2,
    );
    assert!(e.contains("n_min"), "{e}");
}

#[test]
fn profile_to_an_unwritable_place_fails_and_leaves_no_file() {
    let dir = scratch();
    let target = dir.path().join("missing").join("road.csv");
    let e = stderr_of_failure(
        &[
            "profile",
            "--class",
            "C",
            "--length",
            "100",
            "-o",
            target.to_str().unwrap(),
        ],
        // A missing directory is a wrong path the user gave: refused before
        // the road is generated, as bad input.
        2,
    );
    assert!(
        e.contains("road.csv") && e.contains("does not exist"),
        "{e}"
    );
    assert!(!target.exists());
}

#[test]
fn classify_recovers_the_class_of_generated_roads() {
    // ISO 8608 class means (geometric means of the class table): a road
    // generated at a class's mean classifies as that class, Gd(n0) within 20 %.
    let dir = scratch();
    for (class, mean, seed) in [
        ("A", 16e-6, "3"),
        ("C", 256e-6, "4"),
        ("E", 4096e-6, "5"),
        ("G", 65536e-6, "6"),
    ] {
        let file = dir.path().join(format!("{class}.csv"));
        let f = file.to_str().unwrap();
        stdout_of(&[
            "profile",
            "--class",
            class,
            "--length",
            "1000",
            "--spacing",
            "0.05",
            "--seed",
            seed,
            "-o",
            f,
        ]);
        let v = json_of(&["classify", f, "--json"]);
        assert_eq!(v["class"], class, "{v}");
        let g = v["gd_n0"].as_f64().unwrap();
        assert!((g / mean - 1.0).abs() < 0.2, "class {class}: gd_n0 {g}");
        assert!(v["iri_m_per_km"].as_f64().unwrap() > 0.0);
    }
}

#[test]
fn classify_prints_a_table_with_class_fit_bands_and_iri() {
    let f = common::demo("roads/demo_rural_c.csv");
    let out = String::from_utf8(stdout_of(&["classify", f.to_str().unwrap()])).unwrap();
    for word in [
        "ISO 8608 class",
        "Gd(n0)",
        "waviness, free fit",
        "Octave bands",
        "IRI",
        "m/km",
    ] {
        assert!(out.contains(word), "missing {word}:\n{out}");
    }
}

#[test]
fn classify_writes_segment_iri_to_csv_and_they_average_to_the_whole() {
    let dir = scratch();
    let seg = dir.path().join("seg.csv");
    let f = common::demo("roads/demo_rural_c.csv");
    let v = json_of(&[
        "classify",
        f.to_str().unwrap(),
        "--json",
        "--segment",
        "100",
        "-o",
        seg.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&seg).unwrap();
    let rows: Vec<Vec<f64>> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').map(|c| c.parse().unwrap()).collect())
        .collect();
    assert!(text.starts_with("start_m,end_m,iri_m_per_km\n"));
    assert_eq!(rows.len(), 10);
    assert_eq!(rows[0][0], 0.0);
    assert_eq!(rows[9][1], 1000.0);
    // Equal segments: the mean of the segment IRIs is close to the whole.
    let mean = rows.iter().map(|r| r[2]).sum::<f64>() / 10.0;
    let whole = v["iri_m_per_km"].as_f64().unwrap();
    assert!((mean / whole - 1.0).abs() < 0.01, "{mean} vs {whole}");
    assert_eq!(v["segments"].as_array().unwrap().len(), 10);
    // -o without --segment is a usage error.
    let e = stderr_of_failure(
        &["classify", f.to_str().unwrap(), "-o", seg.to_str().unwrap()],
        2,
    );
    assert!(e.contains("--segment"), "{e}");
}

#[test]
fn classify_warns_when_resampling_and_refuses_bad_rows() {
    let dir = scratch();
    // 500 m of a sine at 20 m wavelength, rows jittered off the 0.1 m grid.
    let mut text = String::from("distance_m,elevation_m\n");
    for i in 0..=5000 {
        let x = i as f64 * 0.1 + if i % 2 == 1 { 0.01 } else { 0.0 };
        text += &format!(
            "{x},{}\n",
            0.01 * (2.0 * std::f64::consts::PI * x / 20.0).sin()
        );
    }
    let f = dir.path().join("jittered.csv");
    std::fs::write(&f, text).unwrap();
    let out = roughride()
        .args(["classify", f.to_str().unwrap(), "--json"])
        .assert()
        .success();
    let stderr = String::from_utf8_lossy(&out.get_output().stderr).into_owned();
    assert!(
        stderr.contains("warning") && stderr.contains("resampled"),
        "{stderr}"
    );

    let bad = dir.path().join("nan.csv");
    std::fs::write(&bad, "distance_m,elevation_m\n0,0\n0.1,NaN\n0.2,0\n").unwrap();
    let e = stderr_of_failure(&["classify", bad.to_str().unwrap()], 2);
    assert!(e.contains("nan.csv") && e.contains("line 3"), "{e}");
    let missing = dir.path().join("none.csv");
    let e = stderr_of_failure(&["classify", missing.to_str().unwrap()], 2);
    assert!(e.contains("none.csv"), "{e}");
}

#[test]
fn classify_of_a_coarse_profile_gives_the_class_but_no_iri() {
    let dir = scratch();
    let f = dir.path().join("coarse.csv");
    let fs = f.to_str().unwrap();
    stdout_of(&[
        "profile",
        "--class",
        "D",
        "--length",
        "2000",
        "--spacing",
        "0.3",
        "--n-max",
        "1.6",
        "-o",
        fs,
    ]);
    let out = roughride()
        .args(["classify", fs, "--json"])
        .assert()
        .success();
    let o = out.get_output();
    let v: Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(v["iri_m_per_km"].is_null(), "{v}");
    assert_eq!(v["class"], "D");
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("0.25 m"), "{stderr}");
    let e = stderr_of_failure(&["classify", fs, "--segment", "100"], 2);
    assert!(e.contains("0.25 m"), "{e}");
}

#[test]
fn demo_roads_are_exactly_what_their_recorded_commands_make() {
    let index = common::read(&common::demo("roads/INDEX.md"));
    let dir = scratch();
    let mut checked = Vec::new();
    for line in index
        .lines()
        .filter(|l| l.contains("Made with: `roughride profile"))
    {
        let cmd = line
            .rsplit("`roughride ")
            .next()
            .unwrap()
            .trim_end_matches('`');
        let mut args: Vec<String> = cmd.split_whitespace().map(String::from).collect();
        let o = args
            .iter()
            .position(|a| a == "-o")
            .expect("recorded command has -o");
        let recorded = common::root().join(&args[o + 1]);
        let fresh = dir.path().join("fresh.csv");
        args[o + 1] = fresh.to_str().unwrap().to_string();
        roughride().args(&args).assert().success();
        assert!(
            std::fs::read(&fresh).unwrap() == std::fs::read(&recorded).unwrap(),
            "{} differs from what `roughride {cmd}` makes now",
            recorded.display()
        );
        checked.push(recorded.file_name().unwrap().to_string_lossy().into_owned());
    }
    // Every road in the folder is listed.
    for entry in std::fs::read_dir(common::demo("roads")).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        if name.ends_with(".csv") {
            assert!(
                checked.contains(&name),
                "{name} has no recorded command in INDEX.md"
            );
        }
    }
    assert!(checked.contains(&"demo_rural_c.csv".to_string()));
}

#[test]
fn demo_rural_road_is_class_c() {
    // The file was made at the ISO 8608 class C mean, Gd(n0) = 256·10⁻⁶ m³
    // (profiles/roads/INDEX.md holds the command; the test above regenerates
    // it byte for byte), a factor 2 inside both class bounds (ISO 8608 class
    // table), so the fit must land in class C.
    let f = common::demo("roads/demo_rural_c.csv");
    let v = json_of(&["classify", f.to_str().unwrap(), "--json"]);
    assert_eq!(v["class"], "C");
}

#[test]
fn welch_psd_matches_scipy_signal_welch() {
    // scipy.signal.welch(fs=1/Δ, window="hann", nperseg=L, noverlap=L//2,
    // detrend="linear", scaling="density") is the reference normalisation.
    let p = generate(&RoadSpec::from_class(RoadClass::C, 500.0, 0.05, 17)).unwrap();
    for nperseg in [1024usize, 2000, 4097] {
        let ours = roughride::road::welch_psd(&p, nperseg).unwrap();
        let input =
            json!({"elevation_m": p.elevation_m, "spacing_m": p.spacing_m, "nperseg": nperseg});
        let Some(reference) = python_reference("welch_check.py", &input) else {
            return;
        };
        let f: Vec<f64> = serde_json::from_value(reference["frequency_cycle_m"].clone()).unwrap();
        let g: Vec<f64> = serde_json::from_value(reference["gd_m3"].clone()).unwrap();
        assert_eq!(g.len(), ours.gd_m3.len(), "nperseg {nperseg}");
        let peak = g.iter().cloned().fold(0.0, f64::max);
        for k in 0..g.len() {
            assert!((f[k] - ours.frequency_cycle_m[k]).abs() < 1e-12);
            assert!(
                (g[k] - ours.gd_m3[k]).abs() <= 1e-9 * g[k] + 1e-12 * peak,
                "nperseg {nperseg} bin {k}: {} vs scipy {}",
                ours.gd_m3[k],
                g[k]
            );
        }
    }
}

#[test]
fn iri_matches_an_independent_scipy_implementation() {
    // Same ASTM E1926 algorithm, discretised by scipy.signal.cont2discrete
    // (zero-order hold) instead of our augmented-matrix exponential.
    for (class, spacing) in [
        (RoadClass::B, 0.05),
        (RoadClass::E, 0.25),
        (RoadClass::C, 0.1),
    ] {
        let mut spec = RoadSpec::from_class(class, 400.0, spacing, 8);
        spec.n_max_cycle_m = spec.n_max_cycle_m.min(0.5 / spacing);
        let p = generate(&spec).unwrap();
        let ours = roughride::road::iri_m_per_km(&p).unwrap();
        let input = json!({"elevation_m": p.elevation_m, "spacing_m": p.spacing_m});
        let Some(reference) = python_reference("iri_check.py", &input) else {
            return;
        };
        let theirs = reference["iri_m_per_km"].as_f64().unwrap();
        assert!(
            (ours / theirs - 1.0).abs() < 1e-9,
            "class {class} Δ {spacing}: {ours} vs scipy {theirs}"
        );
    }
}
