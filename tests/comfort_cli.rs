//! `roughride comfort` driven as a user would: records written to a scratch
//! directory, the documented JSON keys (profiles/reference.md), the human
//! table with its caution, and bad input (exit status 2, file/line/column in
//! the message).

mod common;

use std::f64::consts::PI;
use std::path::{Path, PathBuf};

use common::{json_of, roughride};
use predicates::prelude::*;

/// Writes a record CSV `time_s,<column>` sampled at `fs` for `n` samples.
fn record(
    dir: &Path,
    name: &str,
    column: &str,
    fs: f64,
    n: usize,
    a: impl Fn(f64) -> f64,
) -> PathBuf {
    let path = dir.join(name);
    roughride::report::write_atomic::<roughride::report::ExportError>(&path, |w| {
        let io = |e| roughride::report::io_error(&path, e);
        writeln!(w, "time_s,ax,{column}").map_err(io)?;
        for i in 0..n {
            let t = i as f64 / fs;
            writeln!(w, "{t:.6},0,{:.9}", a(t)).map_err(io)?;
        }
        Ok(())
    })
    .expect("scratch record written");
    path
}

fn num(v: &serde_json::Value, key: &str) -> f64 {
    v[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} missing or not a number in {v}"))
}

#[test]
fn a_sine_record_gives_the_documented_keys_and_the_table_3_value() {
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "seat.csv", "az", 1000.0, 30_000, |t| {
        (2.0 * PI * 8.0 * t).sin()
    });
    let v = json_of(&["comfort", f.to_str().unwrap(), "--column", "az"]);
    for key in [
        "weighting",
        "accel_rms",
        "aw",
        "vdv",
        "mtvv",
        "crest_factor",
    ] {
        assert!(!v[key].is_null(), "documented key {key} in {v}");
    }
    assert_eq!(v["weighting"], "Wk");
    // ISO 2631-1 Table 3: Wk(8 Hz) = 1.036, so aw = 1.036/√2 for a unit sine (3 %).
    let aw = num(&v, "aw");
    assert!((aw / (1.036 / 2f64.sqrt()) - 1.0).abs() < 0.03, "aw {aw}");
    // Unweighted r.m.s. of a unit sine: 1/√2 (analytic).
    assert!((num(&v, "accel_rms") - 0.5f64.sqrt()).abs() < 1e-3);
    assert!(v["guidance"]["comfort_reactions"].is_array());
    assert!(v["caution"].as_str().unwrap().contains("ISO 2631-1"));
}

#[test]
fn unweighted_measures_of_a_sine_are_analytic() {
    // Unweighted unit sine over T = 20 s (whole periods): aw = 1/√2,
    // crest factor √2, VDV = (3T/8)^¼, MTVV = aw (analytic).
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "r.csv", "az", 500.0, 10_000, |t| {
        (2.0 * PI * 5.0 * t).sin()
    });
    let v = json_of(&[
        "comfort",
        f.to_str().unwrap(),
        "--column",
        "az",
        "--weighting",
        "NONE",
    ]);
    assert_eq!(v["weighting"], "none");
    let aw = num(&v, "aw");
    assert!((aw - 0.5f64.sqrt()).abs() < 1e-6, "{aw}");
    assert!((num(&v, "crest_factor") - 2f64.sqrt()).abs() < 1e-3);
    assert!((num(&v, "vdv") - (3.0 * 20.0 / 8.0f64).powf(0.25)).abs() < 1e-6);
    assert!((num(&v, "mtvv") - aw).abs() < 1e-6);
}

#[test]
fn exposure_scales_a8_with_the_square_root_of_time() {
    // EU Directive 2002/44/EC: A(8) = aw·√(T/8 h); 2 h gives aw/2.
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "r.csv", "az", 1000.0, 10_000, |t| {
        2.0 * (2.0 * PI * 6.3 * t).sin()
    });
    let v = json_of(&[
        "comfort",
        f.to_str().unwrap(),
        "--column",
        "az",
        "--exposure",
        "120min",
    ]);
    let (aw, a8) = (num(&v, "aw"), num(&v["guidance"], "a8_m_s2"));
    assert!((a8 - aw / 2.0).abs() < 1e-12, "{a8} vs {aw}");
    assert_eq!(num(&v["guidance"], "exposure_s"), 7200.0);
}

#[test]
fn the_table_shows_the_measures_and_the_health_caution() {
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "r.csv", "az", 1000.0, 5_000, |t| {
        (2.0 * PI * 4.0 * t).sin()
    });
    roughride()
        .args(["comfort", f.to_str().unwrap(), "--column", "az"])
        .assert()
        .success()
        .stdout(predicate::str::contains("aw (weighted r.m.s.)"))
        .stdout(predicate::str::contains("VDV"))
        .stdout(predicate::str::contains("A(8)"))
        .stdout(predicate::str::contains("not measurements"));
}

#[test]
fn a_bad_value_names_file_line_and_column_with_status_2() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("bad.csv");
    roughride::report::write_atomic::<roughride::report::ExportError>(&f, |w| {
        w.write_all(b"time_s,az\n0,0\n0.004,0.1\n0.008,oops\n")
            .map_err(|e| roughride::report::io_error(&f, e))
    })
    .unwrap();
    roughride()
        .args(["comfort", f.to_str().unwrap(), "--column", "az"])
        .assert()
        .code(2)
        .stdout(predicate::str::is_empty())
        .stderr(predicate::str::contains("bad.csv"))
        .stderr(predicate::str::contains("line 4"))
        .stderr(predicate::str::contains("`az`"));
}

#[test]
fn a_missing_column_is_named_with_status_2() {
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "r.csv", "az", 1000.0, 100, |_| 0.0);
    roughride()
        .args(["comfort", f.to_str().unwrap(), "--column", "ay"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("r.csv: line 1"))
        .stderr(predicate::str::contains("`ay`"));
}

#[test]
fn a_record_sampled_too_slowly_is_refused_naming_both_rates() {
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "slow.csv", "az", 100.0, 1_000, |t| t.sin());
    roughride()
        .args(["comfort", f.to_str().unwrap(), "--column", "az"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("slow.csv"))
        .stderr(predicate::str::contains("100 Hz"))
        .stderr(predicate::str::contains("250 Hz"));
}

#[test]
fn a_gap_in_time_is_refused_at_its_line() {
    let dir = tempfile::tempdir().unwrap();
    // A uniform record, then data row 100 (file line 101) removed.
    let f = record(dir.path(), "gap.csv", "az", 1000.0, 3_000, |t| t);
    let text = std::fs::read_to_string(&f).unwrap();
    let kept: Vec<&str> = text
        .lines()
        .enumerate()
        .filter(|(i, _)| *i != 100)
        .map(|(_, l)| l)
        .collect();
    roughride::report::write_atomic::<roughride::report::ExportError>(&f, |w| {
        w.write_all((kept.join("\n") + "\n").as_bytes())
            .map_err(|e| roughride::report::io_error(&f, e))
    })
    .unwrap();
    // Line 101 (data row 100) is gone, so the step into line 101 is doubled.
    roughride()
        .args(["comfort", f.to_str().unwrap(), "--column", "az"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("line 101"))
        .stderr(predicate::str::contains("time_s"));
}

#[test]
fn bad_options_are_usage_errors() {
    let dir = tempfile::tempdir().unwrap();
    let f = record(dir.path(), "r.csv", "az", 1000.0, 100, |_| 0.0);
    let p = f.to_str().unwrap();
    roughride()
        .args(["comfort", p, "--column", "az", "--exposure", "8"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("unit"));
    roughride()
        .args(["comfort", p, "--column", "az", "--weighting", "wz"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("wz"));
    roughride()
        .args([
            "comfort",
            dir.path().join("none.csv").to_str().unwrap(),
            "--column",
            "az",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("none.csv"));
}
