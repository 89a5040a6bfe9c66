//! `roughride lifetime` driven as an analyst would drive it: one part
//! against `simulate` scaled bin for bin, shares doubled and split, the life
//! spectra against cycles counted by the PyPI `rainflow` package on the
//! same histories, shards combined against the unsharded run byte for
//! byte, and bad usage files. Roads are short (≤ 400 m) and the vehicle is
//! the linear demo hatchback (exact solver), to keep the run time small.

mod common;

use std::collections::HashMap;
use std::path::Path;

use common::{demo, json_of, python_reference, read, roughride, scratch};

fn car() -> String {
    demo("vehicles/demo_hatchback.toml")
        .to_str()
        .unwrap()
        .to_string()
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

/// Writes a usage file into `dir` with the demo hatchback as its vehicle.
fn usage(dir: &Path, name: &str, parts: &str) -> String {
    let path = dir.join(name);
    std::fs::write(
        &path,
        format!("target_km = 250\nvehicle = {:?}\n{parts}", car()),
    )
    .unwrap();
    path.to_str().unwrap().to_string()
}

/// Rainflow CSV rows `(axle, quantity, range_lower, mean_lower) → cycles`.
fn matrix(path: &Path) -> HashMap<(String, String, String, String), f64> {
    let text = read(path);
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "axle,quantity,range_lower,range_upper,mean_lower,mean_upper,cycles"
    );
    lines
        .map(|l| {
            let c: Vec<&str> = l.split(',').collect();
            (
                (c[0].into(), c[1].into(), c[2].into(), c[4].into()),
                c[6].parse::<f64>().unwrap(),
            )
        })
        .collect()
}

const ONE_PART: &str = r#"
[[part]]
share = 1
speed = "15"
class = "C"
seeds = 1
length = 400
"#;

#[test]
fn one_part_is_simulate_scaled_to_the_life_bin_for_bin() {
    // Reference: `simulate --rainflow` on the same road (class C, seed 1,
    // 400 m) at the same speed; the life is 250 km, so every cell is
    // simulate's count × 250 000 m / (simulated length).
    let dir = scratch();
    let u = usage(dir.path(), "one.toml", ONE_PART);
    let life_csv = dir.path().join("life.csv");
    let life = json_of(&[
        "lifetime",
        "--usage",
        &u,
        "--residue",
        "half",
        "--matrix",
        life_csv.to_str().unwrap(),
    ]);
    let run_csv = dir.path().join("run.csv");
    let single = json_of(&[
        "simulate",
        "--vehicle",
        &car(),
        "--class",
        "C",
        "--seed",
        "1",
        "--length",
        "400",
        "--speed",
        "15",
        "--rainflow",
        run_csv.to_str().unwrap(),
    ]);
    let length_m = single["length_m"].as_f64().unwrap();
    let factor = 250_000.0 / length_m;
    let ours = matrix(&life_csv);
    let theirs = matrix(&run_csv);
    assert!(theirs.len() > 100, "{} cells", theirs.len());
    for (cell, n) in &theirs {
        assert_eq!(ours.get(cell), Some(&(n * factor)), "cell {cell:?}");
    }
    // The life adds the tyre load; travel and force cells are exactly simulate's.
    let extra: Vec<_> = ours.keys().filter(|k| !theirs.contains_key(*k)).collect();
    assert!(extra.iter().all(|k| k.1 == "tyre_load_n"), "{extra:?}");
    assert!(!extra.is_empty());
    for axle in ["front", "rear"] {
        let cycles = life["axles"][axle]["travel"]["cycles"].as_f64().unwrap();
        let run = single["axles"][axle]["travel_cycles"].as_f64().unwrap();
        assert!((cycles / (run * factor) - 1.0).abs() < 1e-12, "{axle}");
        let off = &life["axles"][axle]["time_off_ground"];
        let fraction = single["axles"][axle]["time_off_ground_fraction"]
            .as_f64()
            .unwrap();
        let expected = fraction * single["duration_s"].as_f64().unwrap() * factor;
        assert!((off["life_s"].as_f64().unwrap() - expected).abs() <= 1e-9 * expected.max(1.0));
    }
    assert_eq!(life["target_km"], 250.0);
    assert_eq!(life["parts"][0]["share"], 1.0);
    assert!(life["caution"].as_str().unwrap().contains("estimates"));
}

fn two_parts(x_share: &str, y_share: &str) -> String {
    format!(
        r#"
[[part]]
name = "x"
share = {x_share}
speed = "20"
class = "C"
length = 200
[[part]]
name = "y"
share = {y_share}
speed = "72kmh"
class = "B"
length = 250
"#
    )
}

#[test]
fn doubling_a_share_doubles_its_part_and_split_parts_add_up() {
    // Scaling is linear in the share (exactly, for a factor of two), and a
    // part split into two with the same road, speed and seed is the same
    // life as the part whole (the definition of the scaling).
    let dir = scratch();
    let quarter = json_of(&[
        "lifetime",
        "--usage",
        &usage(dir.path(), "a.toml", &two_parts("0.25", "0.75")),
    ]);
    let half = json_of(&[
        "lifetime",
        "--usage",
        &usage(dir.path(), "b.toml", &two_parts("0.5", "0.5")),
    ]);
    for axle in ["front", "rear"] {
        for q in ["travel", "force", "tyre_load"] {
            let a = &quarter["parts"][0]["axles"][axle][q];
            let b = &half["parts"][0]["axles"][axle][q];
            assert_eq!(
                b["cycles"].as_f64().unwrap(),
                2.0 * a["cycles"].as_f64().unwrap()
            );
            for m in ["3", "5"] {
                let ratio = b["damage_equivalent_range"][m].as_f64().unwrap()
                    / a["damage_equivalent_range"][m].as_f64().unwrap();
                let exponent: f64 = m.parse().unwrap();
                assert!(
                    (ratio - 2f64.powf(1.0 / exponent)).abs() < 1e-12,
                    "{axle} {q} m={m}"
                );
            }
        }
    }
    // x split in two quarters beside y's half: the same matrices and life values.
    let split = format!(
        "{}\n[[part]]\nname = \"x again\"\nshare = 0.25\nspeed = \"20\"\nclass = \"C\"\nlength = 200\n",
        two_parts("0.25", "0.5")
    );
    let (m_half, m_split) = (dir.path().join("half.csv"), dir.path().join("split.csv"));
    let whole = json_of(&[
        "lifetime",
        "--usage",
        &usage(dir.path(), "c.toml", &two_parts("0.5", "0.5")),
        "--matrix",
        m_half.to_str().unwrap(),
    ]);
    let parts = json_of(&[
        "lifetime",
        "--usage",
        &usage(dir.path(), "d.toml", &split),
        "--matrix",
        m_split.to_str().unwrap(),
    ]);
    // Same cells (x's two quarters are summed into x's half exactly, as
    // the sums run in case order: x, y, x again — so compare as numbers).
    let (a, b) = (matrix(&m_half), matrix(&m_split));
    assert_eq!(a.len(), b.len());
    for (cell, n) in &a {
        let other = b[cell];
        assert!((other - n).abs() <= 1e-12 * n, "{cell:?}: {n} vs {other}");
    }
    for axle in ["front", "rear"] {
        let (p, q) = (
            &whole["axles"][axle]["force"],
            &parts["axles"][axle]["force"],
        );
        let rel = |k: &str| {
            (p["damage_equivalent_range"][k].as_f64().unwrap()
                / q["damage_equivalent_range"][k].as_f64().unwrap()
                - 1.0)
                .abs()
        };
        assert!(rel("3") < 1e-12 && rel("5") < 1e-12);
    }
}

const REFERENCE_PARTS: &str = r#"
[[part]]
name = "rough"
share = 0.4
speed = "12"
class = "D"
length = 200
[[part]]
name = "rural"
share = 0.6
speeds = [{ speed = "15", share = 0.25 }, { speed = "72kmh", share = 0.75 }]
class = "C"
seeds = 2
length = 300
"#;

#[test]
fn life_spectra_match_the_rainflow_package_on_the_same_histories() {
    // Reference: every case's history (`simulate --history` on the same
    // road and speed) counted by the PyPI `rainflow` package (ASTM
    // E1049-85), scaled and summed with numpy, Palmgren–Miner with the same
    // exponents over the same reference count (tests/reference/lifetime_check.py).
    // Both residue methods: half cycles, and the repeating-history rule
    // (ASTM E1049-85 5.4.5) on each history.
    let dir = scratch();
    let u = usage(dir.path(), "ref.toml", REFERENCE_PARTS);
    // (class, seed, length, speed, life distance m) of each case, in case order.
    let cases = [
        ("D", 1, 200.0, "12", 250_000.0 * 0.4),
        ("C", 1, 300.0, "15", 250_000.0 * 0.6 * 0.25 / 2.0),
        ("C", 2, 300.0, "15", 250_000.0 * 0.6 * 0.25 / 2.0),
        ("C", 1, 300.0, "72kmh", 250_000.0 * 0.6 * 0.75 / 2.0),
        ("C", 2, 300.0, "72kmh", 250_000.0 * 0.6 * 0.75 / 2.0),
    ];
    let mut inputs = Vec::new();
    for (i, (class, seed, length, speed, life_m)) in cases.iter().enumerate() {
        let h = dir.path().join(format!("h{i}.csv"));
        let run = json_of(&[
            "simulate",
            "--vehicle",
            &car(),
            "--class",
            class,
            "--seed",
            &seed.to_string(),
            "--length",
            &length.to_string(),
            "--speed",
            speed,
            "--history",
            h.to_str().unwrap(),
        ]);
        let factor = life_m / run["length_m"].as_f64().unwrap();
        inputs.push(serde_json::json!({ "history": h, "factor": factor }));
    }
    let columns: Vec<(String, &str, &str, f64)> = ["front", "rear"]
        .iter()
        .flat_map(|a| {
            [
                (format!("travel_{a}_m"), "travel", "travel_m", 0.002),
                (
                    format!("suspension_force_{a}_n"),
                    "force",
                    "suspension_force_n",
                    100.0,
                ),
                (
                    format!("tyre_load_{a}_n"),
                    "tyre_load",
                    "tyre_load_n",
                    100.0,
                ),
            ]
            .map(|(c, k, q, w)| (c, k, q, w))
        })
        .collect();
    for residue in ["half", "repeat"] {
        let m_csv = dir.path().join(format!("m-{residue}.csv"));
        let c_csv = dir.path().join(format!("c-{residue}.csv"));
        let life = json_of(&[
            "lifetime",
            "--usage",
            &u,
            "--residue",
            residue,
            "--sn-exponent",
            "3,5,8",
            "--reference-cycles",
            "2e6",
            "--matrix",
            m_csv.to_str().unwrap(),
            "--crossings",
            c_csv.to_str().unwrap(),
        ]);
        let input = serde_json::json!({
            "cases": inputs,
            "columns": columns.iter().map(|c| serde_json::json!({"name": c.0, "bin": c.3})).collect::<Vec<_>>(),
            "exponents": [3.0, 5.0, 8.0],
            "reference_cycles": 2e6,
            "residue": residue,
        });
        let Some(reference) = python_reference("lifetime_check.py", &input) else {
            return;
        };
        let cells = matrix(&m_csv);
        let crossings = read(&c_csv);
        for (column, key, quantity, _) in &columns {
            let axle = if column.contains("front") {
                "front"
            } else {
                "rear"
            };
            let ours = &life["axles"][axle][*key];
            let theirs = &reference[column];
            for (i, m) in ["3", "5", "8"].iter().enumerate() {
                let a = ours["damage_equivalent_range"][*m].as_f64().unwrap();
                let b = theirs["damage_equivalent_range"][i].as_f64().unwrap();
                assert!(
                    (a / b - 1.0).abs() < 1e-9,
                    "{residue} {column} m={m}: {a} vs {b}"
                );
            }
            let (a, b) = (
                ours["cycles"].as_f64().unwrap(),
                theirs["cycles"].as_f64().unwrap(),
            );
            assert!(
                (a / b - 1.0).abs() < 1e-12,
                "{residue} {column} cycles: {a} vs {b}"
            );
            // The matrix, cell by cell (bin edges printed as k·w).
            let w = ours["bin"].as_f64().unwrap();
            let theirs_cells = theirs["cells"].as_array().unwrap();
            let ours_count = cells
                .keys()
                .filter(|k| k.0 == axle && k.1 == *quantity)
                .count();
            assert_eq!(ours_count, theirs_cells.len(), "{residue} {column}: cells");
            for c in theirs_cells {
                let (kr, km, n) = (
                    c[0].as_i64().unwrap(),
                    c[1].as_i64().unwrap(),
                    c[2].as_f64().unwrap(),
                );
                let key = (
                    axle.to_string(),
                    quantity.to_string(),
                    edge(kr, w),
                    edge(km, w),
                );
                let got = cells
                    .get(&key)
                    .unwrap_or_else(|| panic!("{residue} {column}: no cell {key:?}"));
                assert!((got / n - 1.0).abs() < 1e-12, "{key:?}: {got} vs {n}");
            }
            // Level crossings: the same on every level.
            for c in theirs["crossings"].as_array().unwrap() {
                let (k, n) = (c[0].as_i64().unwrap(), c[1].as_f64().unwrap());
                let row = format!("{axle},{quantity},{},", edge(k, w));
                let got: f64 = crossings
                    .lines()
                    .find(|l| l.starts_with(&row))
                    .unwrap_or_else(|| panic!("no crossing row {row}"))
                    .rsplit(',')
                    .next()
                    .unwrap()
                    .parse()
                    .unwrap();
                assert!((got / n - 1.0).abs() < 1e-12, "{row}: {got} vs {n}");
            }
        }
    }
}

/// A bin edge `k·w` as the CSV prints it (rounded to 12 decimals, shortest form).
fn edge(k: i64, w: f64) -> String {
    let r = (k as f64 * w * 1e12).round() / 1e12;
    format!("{}", if r == 0.0 { 0.0 } else { r })
}

#[test]
fn shards_combined_equal_the_unsharded_run_byte_for_byte() {
    let dir = scratch();
    let d = |n: &str| dir.path().join(n).to_str().unwrap().to_string();
    let u = usage(dir.path(), "life.toml", REFERENCE_PARTS);
    let whole = ok(&[
        "lifetime",
        "--usage",
        &u,
        "--json",
        "--matrix",
        &d("whole.csv"),
        "--jobs",
        "2",
    ]);
    let one_thread = ok(&[
        "lifetime",
        "--usage",
        &u,
        "--json",
        "--matrix",
        &d("one.csv"),
        "--jobs",
        "1",
    ]);
    assert_eq!(whole, one_thread, "thread count changed the result");
    assert_eq!(
        read(Path::new(&d("whole.csv"))),
        read(Path::new(&d("one.csv")))
    );
    for k in 1..=3 {
        let shard = format!("{k}/3");
        let out = json_of(&[
            "lifetime",
            "--usage",
            &u,
            "--shard",
            &shard,
            "--partial",
            &d(&format!("p{k}.jsonl")),
        ]);
        assert_eq!(out["cases_total"], 5);
    }
    // Files in any order.
    let combined = ok(&[
        "lifetime",
        "--usage",
        &u,
        "--json",
        "--matrix",
        &d("combined.csv"),
        "--combine",
        &d("p3.jsonl"),
        &d("p1.jsonl"),
        &d("p2.jsonl"),
    ]);
    assert_eq!(combined, whole);
    assert_eq!(
        read(Path::new(&d("combined.csv"))),
        read(Path::new(&d("whole.csv")))
    );
    // A missing shard, a shard twice, a shard of other inputs: refused.
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        &u,
        "--combine",
        &d("p1.jsonl"),
        &d("p3.jsonl"),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("missing") && err.contains("p3.jsonl"), "{err}");
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        &u,
        "--combine",
        &d("p1.jsonl"),
        &d("p1.jsonl"),
        &d("p2.jsonl"),
        &d("p3.jsonl"),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("already holds"), "{err}");
    let other = usage(
        dir.path(),
        "other.toml",
        &REFERENCE_PARTS
            .replace("share = 0.4", "share = 0.3")
            .replace("share = 0.6", "share = 0.7"),
    );
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        &other,
        "--combine",
        &d("p1.jsonl"),
        &d("p2.jsonl"),
        &d("p3.jsonl"),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("other inputs"), "{err}");
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        &u,
        "--residue",
        "repeat",
        "--combine",
        &d("p1.jsonl"),
        &d("p2.jsonl"),
        &d("p3.jsonl"),
    ]);
    assert_eq!(code, 2, "{err}");
    // A partial of another format version is named as such (the version
    // 2 format added the seats' fore-aft measures), not as "not a partial".
    let p1 = read(Path::new(&d("p1.jsonl")));
    std::fs::write(
        d("old.jsonl"),
        p1.replacen(
            "roughride lifetime partial 2",
            "roughride lifetime partial 1",
            1,
        ),
    )
    .unwrap();
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        &u,
        "--combine",
        &d("old.jsonl"),
        &d("p2.jsonl"),
        &d("p3.jsonl"),
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("old.jsonl")
            && err.contains("\"roughride lifetime partial 1\"")
            && err.contains("another roughride version"),
        "{err}"
    );
    let (_, err, code) = run(&["lifetime", "--usage", &u, "--shard", "1/2"]);
    assert_eq!(code, 2);
    assert!(err.contains("--partial"), "{err}");
}

#[test]
fn bad_usage_files_exit_2_naming_the_file_and_key_and_write_nothing() {
    let dir = scratch();
    let out = dir.path().join("matrix.csv");
    std::fs::write(&out, "previous\n").unwrap();
    let bad: [(&str, String, &[&str]); 5] = [
        (
            "shares",
            two_parts("0.5", "0.4"),
            &["part[].share", "add up to 0.9", "normalise"],
        ),
        (
            "negative",
            ONE_PART.replace("length = 400", "length = -400"),
            &["part[0].length", "-400"],
        ),
        (
            "unknown",
            ONE_PART.replace("seeds = 1", "seed = 1"),
            &["unknown field `seed`"],
        ),
        (
            "profile",
            ONE_PART.replace(
                "class = \"C\"\nseeds = 1\nlength = 400",
                "profile = \"roads/none.csv\"",
            ),
            &["part[0].profile", "none.csv"],
        ),
        (
            "distance",
            ONE_PART.replace("share = 1", "km = -10"),
            &["part[0].km", "-10"],
        ),
    ];
    for (name, parts, wants) in bad {
        let u = usage(dir.path(), &format!("{name}.toml"), &parts);
        let (_, err, code) = run(&["lifetime", "--usage", &u, "--matrix", out.to_str().unwrap()]);
        assert_eq!(code, 2, "{name}: {err}");
        assert!(err.contains(&format!("{name}.toml")), "{name}: {err}");
        for w in wants {
            assert!(err.contains(w), "{name}: {err} lacks {w}");
        }
        assert_eq!(read(&out), "previous\n", "{name}: the old file was touched");
    }
    let target = dir.path().join("negative.toml");
    let text = read(&target).replace("target_km = 250", "target_km = -250");
    std::fs::write(&target, text).unwrap();
    let (_, err, code) = run(&["lifetime", "--usage", target.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(
        err.contains("`target_km`") && err.contains("line 1"),
        "{err}"
    );
    // An output onto an input (here the usage file itself) is refused before running.
    let before = read(&target);
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        target.to_str().unwrap(),
        "--matrix",
        target.to_str().unwrap(),
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("--matrix"), "{err}");
    assert_eq!(read(&target), before);
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert!(
        names
            .iter()
            .all(|n| !n.to_string_lossy().contains(".partial")),
        "{names:?}"
    );
}
