//! `profiles/reference.md` against the program: every key the vehicle
//! parser accepts is documented there and every documented vehicle key is
//! accepted (the accepted keys are asked of the parser itself, so the check
//! cannot pass on an empty list), and every JSON key and CSV column the
//! commands write matches a documented row.
//!
//! Adding a key: add its row to the right table of `profiles/reference.md`.
//! Adding a TOML file with its own parser: give [`accepted_keys`] a good
//! file and the parser, and compare with its section as the vehicle test does.

mod common;

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

use common::{demo, json_of, root, roughride, scratch};

const REFERENCE: &str = "profiles/reference.md";
const PROBE: &str = "zz_probe_key";

fn reference() -> String {
    common::read(&root().join(REFERENCE))
}

/// The lines of the `## ` section whose heading contains `heading`, up to
/// the next `## ` heading.
fn section<'a>(text: &'a str, heading: &str) -> Vec<&'a str> {
    let mut lines = text.lines();
    let start = lines
        .by_ref()
        .position(|l| l.starts_with("## ") && l.contains(heading));
    assert!(start.is_some(), "{REFERENCE}: no section `## …{heading}…`");
    lines.take_while(|l| !l.starts_with("## ")).collect()
}

/// The backticked names in the first cell of every table row of `lines`
/// (header and rule rows skipped).
fn first_cell_keys(lines: &[&str]) -> Vec<String> {
    lines
        .iter()
        .filter(|l| l.starts_with("| `"))
        .flat_map(|l| {
            let cell = l[1..].split(" | ").next().unwrap_or("");
            cell.split('`')
                .skip(1)
                .step_by(2)
                .map(str::to_string)
                .collect::<Vec<_>>()
        })
        .collect()
}

/// The documented keys of a TOML file's section, per table path: a `### `
/// heading names its tables as `` `[front]` ``, `` `[[seat]]` `` (or says
/// "Top level" for the root table, path ""); the rows of the table below
/// it are that table's keys.
fn documented_tables(text: &str, heading: &str) -> BTreeMap<String, BTreeSet<String>> {
    let mut out: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    let mut current: Vec<String> = Vec::new();
    let lines = section(text, heading);
    for (i, line) in lines.iter().enumerate() {
        if let Some(h) = line.strip_prefix("### ") {
            current = h
                .split('`')
                .skip(1)
                .step_by(2)
                .map(|t| t.trim_matches(['[', ']']).to_string())
                .collect();
            if h.to_lowercase().contains("top level") {
                current.push(String::new());
            }
            continue;
        }
        for key in first_cell_keys(&lines[i..=i]) {
            for table in &current {
                out.entry(table.clone()).or_default().insert(key.clone());
            }
        }
    }
    out
}

/// The keys a TOML parser accepts in each table, asked of the parser: a key
/// it cannot know ([`PROBE`]) is put into each table of `good` (a file it
/// accepts), and serde's `deny_unknown_fields` message lists the fields it
/// expected. A field that holds a table (or an array of tables) is probed
/// the same way in turn. `parse` returns the parser's error message.
fn accepted_keys(
    good: &str,
    parse: &dyn Fn(&str) -> Result<(), String>,
) -> BTreeMap<String, BTreeSet<String>> {
    assert!(
        parse(good).is_ok(),
        "the good file is refused: {:?}",
        parse(good)
    );
    let doc: toml::Table = good.parse().expect("good TOML");
    let mut out = BTreeMap::new();
    let mut queue = vec![Vec::<String>::new()];
    while let Some(path) = queue.pop() {
        let Some(keys) = probe_table(&doc, &path, parse) else {
            continue;
        };
        for k in &keys {
            let mut child = path.clone();
            child.push(k.clone());
            queue.push(child);
        }
        out.insert(path.join("."), keys);
    }
    out
}

/// The fields the parser expects in the table at `path`, or `None` when
/// `path` does not hold a table.
fn probe_table(
    doc: &toml::Table,
    path: &[String],
    parse: &dyn Fn(&str) -> Result<(), String>,
) -> Option<BTreeSet<String>> {
    // First as a table, then (if the parser wants a sequence) as an array
    // of tables.
    for as_array in [false, true] {
        let mut d = doc.clone();
        insert_probe(&mut d, path, as_array);
        let text = toml::to_string(&d).expect("TOML out");
        let message = match parse(&text) {
            Ok(()) => panic!("the parser took the unknown key `{PROBE}` at {path:?}"),
            Err(m) => m,
        };
        if let Some(rest) = message.split(&format!("unknown field `{PROBE}`")).nth(1) {
            let expected = rest.lines().next().unwrap_or("");
            let keys: BTreeSet<String> = expected
                .split('`')
                .skip(1)
                .step_by(2)
                .map(str::to_string)
                .collect();
            assert!(!keys.is_empty(), "no expected fields in {message:?}");
            return Some(keys);
        }
        if !message.contains("sequence") {
            return None; // a plain value: text or number
        }
    }
    None
}

/// Puts `PROBE = 0` into the table at `path` (into the first element of an
/// array of tables), replacing whatever value was there with a table.
fn insert_probe(doc: &mut toml::Table, path: &[String], as_array: bool) {
    let mut table = doc;
    for (depth, key) in path.iter().enumerate() {
        let last = depth + 1 == path.len();
        let entry = table
            .entry(key.clone())
            .or_insert_with(|| toml::Value::Table(toml::Table::new()));
        if last && as_array && !entry.is_array() {
            *entry = toml::Value::Array(vec![toml::Value::Table(toml::Table::new())]);
        } else if !entry.is_table() && !entry.is_array() {
            *entry = toml::Value::Table(toml::Table::new());
        }
        let next = match entry {
            toml::Value::Array(a) => {
                if a.is_empty() || !a[0].is_table() {
                    *a = vec![toml::Value::Table(toml::Table::new())];
                }
                a[0].as_table_mut().unwrap()
            }
            v => v.as_table_mut().unwrap(),
        };
        table = next;
    }
    table.insert(PROBE.to_string(), toml::Value::Integer(0));
}

fn parse_vehicle_text(text: &str) -> Result<(), String> {
    roughride::vehicle::parse_vehicle(text, Path::new("v.toml"))
        .map(|_| ())
        .map_err(|e| e.to_string())
}

#[test]
fn every_vehicle_key_the_parser_accepts_is_documented_and_no_other() {
    let good = common::read(&demo("vehicles/demo_van_stops.toml"));
    let accepted = accepted_keys(&good, &parse_vehicle_text);
    // The probe found the tables and keys every vehicle file has (so an
    // empty or broken probe cannot pass).
    for (table, key) in [
        ("", "body"),
        ("", "seat"),
        ("body", "mass"),
        ("front", "spring_rate"),
        ("rear", "tyre_rate"),
        ("seat", "x"),
    ] {
        assert!(
            accepted.get(table).is_some_and(|k| k.contains(key)),
            "the parser's keys {accepted:?} lack {table}.{key}"
        );
    }
    let documented = documented_tables(&reference(), "Vehicle file");
    let mut problems = Vec::new();
    for (table, keys) in &accepted {
        let docs = documented.get(table).cloned().unwrap_or_default();
        for k in keys.difference(&docs) {
            problems.push(format!("`{table}.{k}` is accepted but not documented"));
        }
        for k in docs.difference(keys) {
            problems.push(format!("`{table}.{k}` is documented but refused"));
        }
    }
    for table in documented.keys() {
        if !accepted.contains_key(table) {
            problems.push(format!(
                "table `[{table}]` is documented but not a table the parser reads"
            ));
        }
    }
    assert!(
        problems.is_empty(),
        "{REFERENCE}, section Vehicle file:\n  {}",
        problems.join("\n  ")
    );
}

/// Whether `name` matches the documented pattern: `{a,b}` is one of the
/// alternatives, `{i}` one or more digits, `<word>` one or more of
/// `[A-Za-z0-9_]`, `[i]` an array index as written by [`json_paths`].
fn matches(pattern: &str, name: &str) -> bool {
    let (p, n) = (pattern.as_bytes(), name.as_bytes());
    if p.is_empty() {
        return n.is_empty();
    }
    match p[0] {
        b'{' => {
            let close = pattern.find('}').expect("closed brace");
            let inner = &pattern[1..close];
            let rest = &pattern[close + 1..];
            if inner == "i" {
                let digits = n.iter().take_while(|c| c.is_ascii_digit()).count();
                (1..=digits).any(|k| matches(rest, &name[k..]))
            } else {
                inner
                    .split(',')
                    .any(|alt| name.starts_with(alt) && matches(rest, &name[alt.len()..]))
            }
        }
        b'<' => {
            let close = pattern.find('>').expect("closed angle");
            let rest = &pattern[close + 1..];
            let word = n
                .iter()
                .take_while(|c| c.is_ascii_alphanumeric() || **c == b'_')
                .count();
            (1..=word).any(|k| matches(rest, &name[k..]))
        }
        c => !n.is_empty() && n[0] == c && matches(&pattern[1..], &name[1..]),
    }
}

#[test]
fn the_pattern_matcher_expands_alternatives_numbers_and_names() {
    assert!(matches(
        "travel_p{1,5,50}_{front,rear}_m",
        "travel_p50_rear_m"
    ));
    assert!(!matches(
        "travel_p{1,5,50}_{front,rear}_m",
        "travel_p9_rear_m"
    ));
    assert!(matches("seat{i}_aw", "seat12_aw"));
    assert!(!matches("seat{i}_aw", "seat_aw"));
    assert!(matches("<seat>_accel_m_s2", "rear_passenger_accel_m_s2"));
    assert!(matches("seats[i].aw", "seats[i].aw"));
    assert!(!matches("seats[i].aw", "seats[i].awx"));
}

/// Every key path of a JSON value: objects by `.`, arrays of objects as
/// `[i]` (all elements), arrays of plain values and plain values as leaves.
fn json_paths(v: &serde_json::Value, prefix: &str, out: &mut BTreeSet<String>) {
    match v {
        serde_json::Value::Object(map) => {
            for (k, x) in map {
                let p = if prefix.is_empty() {
                    k.clone()
                } else {
                    format!("{prefix}.{k}")
                };
                json_paths(x, &p, out);
            }
        }
        serde_json::Value::Array(items) if items.iter().any(|x| x.is_object()) => {
            for x in items {
                json_paths(x, &format!("{prefix}[i]"), out);
            }
        }
        _ => {
            out.insert(prefix.to_string());
        }
    }
}

/// Names of `names` that no documented key of the section matches.
fn undocumented(heading: &str, names: &BTreeSet<String>) -> Vec<String> {
    let text = reference();
    let patterns = first_cell_keys(&section(&text, heading));
    assert!(
        patterns.len() >= 2,
        "section {heading}: too few documented keys {patterns:?}"
    );
    names
        .iter()
        .filter(|n| !patterns.iter().any(|p| matches(p, n)))
        .cloned()
        .collect()
}

fn assert_documented(heading: &str, names: &BTreeSet<String>) {
    assert!(names.len() >= 2, "{heading}: too few names {names:?}");
    let missing = undocumented(heading, names);
    assert!(
        missing.is_empty(),
        "{REFERENCE}, section {heading}: no row for {missing:?}"
    );
}

fn csv_header(path: &Path) -> BTreeSet<String> {
    let text = common::read(path);
    let first = text.lines().next().unwrap_or("");
    first.split(',').map(str::to_string).collect()
}

fn demo_car() -> String {
    demo("vehicles/demo_hatchback.toml").display().to_string()
}

#[test]
fn every_key_and_column_simulate_writes_is_documented() {
    let dir = scratch();
    let f = |n: &str| dir.path().join(n).display().to_string();
    let car = demo_car();
    // A generated road (the spectral prediction) with a body force (the
    // harmonic amplitudes): every optional part of the object.
    let v = json_of(&[
        "simulate",
        "--vehicle",
        &car,
        "--class",
        "C",
        "--length",
        "200",
        "--speed",
        "20",
        "--force",
        "150,25,1.3",
        "--history",
        &f("h.csv"),
        "--travel-histogram",
        &f("th.csv"),
        "--rainflow",
        &f("rf.csv"),
    ]);
    let mut keys = BTreeSet::new();
    json_paths(&v, "", &mut keys);
    assert!(keys.contains("seats[i].aw") && keys.contains("harmonic_force.x_m"));
    assert_documented("simulate --json", &keys);
    // A profile file: the `road` object of a file.
    let v = json_of(&[
        "simulate",
        "--vehicle",
        &car,
        "--profile",
        &demo("roads/demo_rural_c.csv").display().to_string(),
        "--speed",
        "20",
    ]);
    let mut keys = BTreeSet::new();
    json_paths(&v, "", &mut keys);
    assert!(keys.contains("road.path"));
    assert_documented("simulate --json", &keys);
    assert_documented("Time history", &csv_header(&dir.path().join("h.csv")));
    assert_documented("Travel histogram", &csv_header(&dir.path().join("th.csv")));
    assert_documented("Rainflow tables", &csv_header(&dir.path().join("rf.csv")));
}

#[test]
fn every_sweep_column_is_documented() {
    let dir = scratch();
    let out = dir.path().join("s.csv");
    roughride()
        .args([
            "sweep",
            "--vehicle",
            &demo_car(),
            "--classes",
            "B",
            "--speeds",
            "20",
            "--length",
            "60",
            "-o",
            out.to_str().unwrap(),
        ])
        .assert()
        .success();
    assert_documented("sweep", &csv_header(&out));
}

#[test]
fn every_key_of_modes_frf_comfort_and_classify_is_documented() {
    let dir = scratch();
    let car = demo_car();
    let collect = |v: serde_json::Value| {
        let mut keys = BTreeSet::new();
        json_paths(&v, "", &mut keys);
        keys
    };
    // The van has body modes with nodes; its modes cover every key.
    let van = demo("vehicles/demo_van_stops.toml").display().to_string();
    assert_documented(
        "modes --json",
        &collect(json_of(&["modes", "--vehicle", &van])),
    );
    let frf = [
        "frf",
        "--vehicle",
        car.as_str(),
        "--speed",
        "20",
        "--force-x",
        "1.2",
    ];
    assert_documented("frf", &collect(json_of(&frf)));
    let csv = dir.path().join("frf.csv");
    roughride()
        .args(frf)
        .args(["-o", csv.to_str().unwrap()])
        .assert()
        .success();
    assert_documented("frf", &csv_header(&csv));
    let h = dir.path().join("h.csv");
    roughride()
        .args([
            "simulate",
            "--vehicle",
            &car,
            "--class",
            "B",
            "--length",
            "60",
        ])
        .args(["--speed", "20", "--history", h.to_str().unwrap()])
        .assert()
        .success();
    let h = h.display().to_string();
    let comfort = json_of(&["comfort", &h, "--column", "driver_accel_m_s2"]);
    assert_documented("comfort --json", &collect(comfort));
    let road = demo("roads/demo_rural_c.csv").display().to_string();
    let classify = json_of(&["classify", &road, "--segment", "100"]);
    assert_documented("classify --json", &collect(classify));
    let p = dir.path().join("road.csv");
    roughride()
        .args([
            "profile",
            "--class",
            "C",
            "--length",
            "20",
            "-o",
            p.to_str().unwrap(),
        ])
        .assert()
        .success();
    assert_documented("Road profile", &csv_header(&p));
}

#[test]
fn every_key_of_tune_and_plot_tradeoff_is_documented() {
    let dir = scratch();
    let car = demo_car();
    let collect = |v: serde_json::Value| {
        let mut keys = BTreeSet::new();
        json_paths(&v, "", &mut keys);
        keys
    };
    // Spectral (with the `spectral` object), a limit, a seat key, -o.
    let tuned = dir.path().join("tuned.toml");
    let spectral = json_of(&[
        "tune",
        "--vehicle",
        &car,
        "--vary",
        "rear.damping=1000:4000",
        "--vary",
        "seat.driver.x=0.1:0.4",
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "100",
        "--limit",
        "travel_p99_rear_m=0.05",
        "--max-evaluations",
        "30",
        "-o",
        tuned.to_str().unwrap(),
    ]);
    assert_documented("tune --json", &collect(spectral));
    let time = json_of(&[
        "tune",
        "--vehicle",
        &car,
        "--vary",
        "body.mass=1000:1300",
        "--classes",
        "C",
        "--speeds",
        "20",
        "--length",
        "60",
        "--method",
        "time",
        "--max-evaluations",
        "10",
    ]);
    assert_documented("tune --json", &collect(time));
    let study = dir.path().join("study.csv");
    roughride()
        .args([
            "sweep",
            "--vehicle",
            &car,
            "--vary",
            "front.damping=2000,3000",
        ])
        .args(["--classes", "C", "--speeds", "20", "--length", "60", "-o"])
        .arg(&study)
        .assert()
        .success();
    let t = json_of(&["plot", "tradeoff", study.to_str().unwrap(), "--speed", "20"]);
    assert_documented("plot tradeoff --json", &collect(t));
}

#[test]
fn every_key_and_column_of_lifetime_is_documented() {
    let dir = scratch();
    let usage = demo("usage/delivery_van.toml");
    let (mat, exc, cro) = (
        dir.path().join("m.csv"),
        dir.path().join("e.csv"),
        dir.path().join("c.csv"),
    );
    let report = json_of(&[
        "lifetime",
        "--usage",
        usage.to_str().unwrap(),
        "--matrix",
        mat.to_str().unwrap(),
        "--exceedance",
        exc.to_str().unwrap(),
        "--crossings",
        cro.to_str().unwrap(),
    ]);
    let mut keys = BTreeSet::new();
    json_paths(&report, "", &mut keys);
    assert_documented("lifetime --json", &keys);
    // A part on profile files has its own road keys.
    let profile_usage = dir.path().join("profiles.toml");
    std::fs::write(
        &profile_usage,
        format!(
            "target_km = 100\nvehicle = {:?}\n[[part]]\nshare = 1\nspeed = \"20\"\nprofile = {:?}\n",
            demo_car(),
            demo("roads/demo_rural_c.csv").display().to_string()
        ),
    )
    .unwrap();
    let report = json_of(&["lifetime", "--usage", profile_usage.to_str().unwrap()]);
    let mut keys = BTreeSet::new();
    json_paths(&report, "", &mut keys);
    assert_documented("lifetime --json", &keys);
    let mut columns = BTreeSet::new();
    for f in [&mat, &exc, &cro] {
        columns.extend(csv_header(f));
    }
    assert_documented("Life spectra", &columns);
}

#[test]
fn every_usage_key_the_parser_accepts_is_documented_and_no_other() {
    let path = demo("usage/delivery_van.toml");
    let good = common::read(&path);
    let parse = |text: &str| -> Result<(), String> {
        roughride::lifetime::usage::parse_usage(text, &path)
            .map(|_| ())
            .map_err(|e| e.to_string())
    };
    let accepted = accepted_keys(&good, &parse);
    for (table, key) in [
        ("", "target_km"),
        ("", "part"),
        ("part", "share"),
        ("part.speeds", "share"),
    ] {
        assert!(
            accepted.get(table).is_some_and(|k| k.contains(key)),
            "the parser's keys {accepted:?} lack {table}.{key}"
        );
    }
    let mut documented = documented_tables(&reference(), "Usage file");
    // `[[part]]` is documented as a table of its own, not as a row of the top level.
    documented
        .entry(String::new())
        .or_default()
        .insert("part".into());
    documented
        .entry("part".into())
        .or_default()
        .insert("speeds".into());
    assert_eq!(accepted, documented, "{REFERENCE}, section Usage file");
}
