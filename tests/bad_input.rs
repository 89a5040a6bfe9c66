//! The bad-input table: malformed files and option values, each with the
//! message fragment it must produce and exit status 2 (the documented
//! interface: "2 for bad input or usage"). No input may make the
//! tool panic, and no output file may appear.

mod common;

use common::{demo, roughride, scratch};

/// One malformed input: the files to create in a scratch directory, the
/// command line, and the fragment its message must hold.
struct Case {
    what: &'static str,
    files: &'static [(&'static str, &'static [u8])],
    args: &'static [&'static str],
    fragment: &'static str,
}

/// A vehicle-file case: `v.toml` is [`GOOD_CAR`] with `from` replaced by
/// `to`, run through `simulate` on the demo road.
struct CarEdit {
    what: &'static str,
    from: &'static str,
    to: &'static str,
    fragment: &'static str,
}

const CAR: &str = "@car"; // replaced by the demo vehicle's path
const ROAD: &str = "@road"; // replaced by the demo road's path

const GOOD_CAR: &str = "[body]\nmass = 1000.0\npitch_inertia = 1500.0\n[front]\ncg_distance = 1.2\nspring_rate = 30000.0\ndamping = 2500.0\n[rear]\ncg_distance = 1.4\nspring_rate = 30000.0\ndamping = 2500.0\n[[seat]]\nx = 0.3\n";

const CAR_EDITS: &[CarEdit] = &[
    CarEdit {
        what: "negative mass",
        from: "mass = 1000.0",
        to: "mass = -1000.0",
        fragment: "`body.mass` must be positive",
    },
    CarEdit {
        what: "zero pitch inertia",
        from: "pitch_inertia = 1500.0",
        to: "pitch_inertia = 0.0",
        fragment: "`body.pitch_inertia` must be positive",
    },
    CarEdit {
        what: "unsprung mass without a tyre rate",
        from: "damping = 2500.0\n[rear]",
        to: "damping = 2500.0\nunsprung_mass = 40.0\n[rear]",
        fragment: "`front.tyre_rate` is missing",
    },
    CarEdit {
        what: "no seat",
        from: "[[seat]]\nx = 0.3\n",
        to: "",
        fragment: "`seat` is missing",
    },
    CarEdit {
        what: "misspelt key",
        from: "damping = 2500.0\n[rear]",
        to: "dampng = 2500.0\n[rear]",
        fragment: "unknown field `dampng`",
    },
    CarEdit {
        what: "text where a number belongs",
        from: "mass = 1000.0",
        to: "mass = \"heavy\"",
        fragment: "invalid type",
    },
    CarEdit {
        what: "missing [rear] table",
        from: "[rear]\ncg_distance = 1.4\nspring_rate = 30000.0\ndamping = 2500.0\n",
        to: "",
        fragment: "missing field `rear`",
    },
    CarEdit {
        what: "clearance without a stop rate",
        from: "damping = 2500.0\n[rear]",
        to: "damping = 2500.0\nbump_clearance = 0.05\n[rear]",
        fragment: "`front.stop_rate` is missing",
    },
    CarEdit {
        what: "damping_bump without damping_rebound",
        from: "damping = 2500.0\n[rear]",
        to: "damping_bump = 2500.0\n[rear]",
        fragment: "`front.damping_rebound` is missing",
    },
    CarEdit {
        what: "a body mass of 1e300 kg",
        from: "mass = 1000.0",
        to: "mass = 1e300",
        fragment: "`body.mass` must lie between 1 and 1e6 kg, got 1e300",
    },
    CarEdit {
        what: "a seat 1e300 m ahead of the CG",
        from: "x = 0.3",
        to: "x = 1e300",
        fragment: "`seat[0].x` must lie between -50 and 50 m, got 1e300",
    },
    CarEdit {
        what: "a subnormal spring rate",
        from: "spring_rate = 30000.0\ndamping = 2500.0\n[rear]",
        to: "spring_rate = 5e-324\ndamping = 2500.0\n[rear]",
        fragment: "`front.spring_rate` must lie between 1 and 1e9 N/m, got 5e-324",
    },
    CarEdit {
        what: "a stop rate of 1e300 N/m",
        from: "damping = 2500.0\n[rear]",
        to: "damping = 2500.0\nbump_clearance = 0.05\nstop_rate = 1e300\n[rear]",
        fragment: "`front.stop_rate` must lie between 1 and 1e10 N/m",
    },
    CarEdit {
        what: "a tyre rate with unsprung_mass = 0",
        from: "damping = 2500.0\n[rear]",
        to: "damping = 2500.0\nunsprung_mass = 0.0\ntyre_rate = 200000.0\n[rear]",
        fragment: "`front.tyre_rate` is given but unsprung_mass is 0",
    },
    CarEdit {
        what: "a negative unsprung mass",
        from: "damping = 2500.0\n[rear]",
        to: "damping = 2500.0\nunsprung_mass = -40.0\ntyre_rate = 200000.0\n[rear]",
        fragment: "`front.unsprung_mass` must be positive",
    },
    CarEdit {
        what: "two seats with one name",
        from: "[[seat]]\nx = 0.3\n",
        to: "[[seat]]\nx = 0.3\nname = \"driver\"\n[[seat]]\nx = -0.5\nname = \"driver\"\n",
        fragment: "`seat[1].name` \"driver\" is already the name of seat[0]",
    },
    CarEdit {
        what: "a seat name with a comma (it heads a CSV column)",
        from: "[[seat]]\nx = 0.3\n",
        to: "[[seat]]\nx = 0.3\nname = \"left,front\"\n",
        fragment: "`seat[0].name` must not contain ','",
    },
    CarEdit {
        what: "a seat below the CG (negative height)",
        from: "[[seat]]\nx = 0.3\n",
        to: "[[seat]]\nx = 0.3\nheight = -0.4\n",
        fragment: "`seat[0].height` must lie between 0 and 20 m, got -0.4",
    },
    CarEdit {
        what: "a seat height given as text",
        from: "[[seat]]\nx = 0.3\n",
        to: "[[seat]]\nx = 0.3\nheight = \"0.8 m\"\n",
        fragment: "height",
    },
    CarEdit {
        what: "a seat name whose fore-aft column is another seat's column",
        from: "[[seat]]\nx = 0.3\n",
        to: "[[seat]]\nx = 0.3\nname = \"d\"\n[[seat]]\nx = -0.5\nname = \"d_fore_aft\"\n",
        fragment: "`seat[1].name` \"d_fore_aft\" and seat[0]'s name \"d\" would head the same history column",
    },
    CarEdit {
        what: "broken TOML syntax",
        from: "[body]",
        to: "[body",
        fragment: "v.toml",
    },
];

const CASES: &[Case] = &[
    Case {
        what: "a speed so low the run would never end",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "1e-300",
        ],
        fragment: "--speed",
    },
    Case {
        what: "an output rate above the limit",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--rate",
            "1e12",
        ],
        fragment: "--rate",
    },
    Case {
        what: "missing vehicle file",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            "nowhere.toml",
            "--profile",
            ROAD,
            "--speed",
            "20",
        ],
        fragment: "nowhere.toml: cannot read",
    },
    // Profile files.
    Case {
        what: "distance not increasing",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n5,0\n4,0\n10,0\n")],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            "r.csv",
            "--speed",
            "20",
        ],
        fragment: "r.csv: line 4",
    },
    Case {
        what: "NaN elevation",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n5,NaN\n10,0\n")],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            "r.csv",
            "--speed",
            "20",
        ],
        fragment: "line 3",
    },
    Case {
        what: "a single row",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n")],
        args: &["classify", "r.csv"],
        fragment: "two data rows",
    },
    Case {
        what: "missing elevation column",
        files: &[("r.csv", b"distance_m,height\n0,0\n1,0\n")],
        args: &["classify", "r.csv"],
        fragment: "elevation_m",
    },
    Case {
        what: "profile shorter than the wheelbase",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n1,0\n2,0\n")],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            "r.csv",
            "--speed",
            "20",
        ],
        fragment: "shorter than the wheelbase",
    },
    Case {
        what: "gap too large to bridge",
        files: &[(
            "r.csv",
            b"distance_m,elevation_m\n0,0\n1,0\n2,0\n30,0\n31,0\n",
        )],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            "r.csv",
            "--speed",
            "20",
        ],
        fragment: "gap",
    },
    Case {
        what: "text in a distance",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\nten,0\n")],
        args: &["classify", "r.csv"],
        fragment: "not a number",
    },
    // Found by trying the tool as a hostile user would (issue 18).
    Case {
        what: "a vehicle file that is not text",
        files: &[("bin.toml", b"\xff\xfe\x00\x01[body]\n")],
        args: &["modes", "--vehicle", "bin.toml"],
        fragment: "bin.toml: not a text file",
    },
    Case {
        what: "a vehicle path that is a directory",
        files: &[],
        args: &["modes", "--vehicle", "."],
        fragment: ".: cannot read",
    },
    Case {
        what: "a profile path that is a directory",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ".",
            "--speed",
            "20",
        ],
        fragment: ".: cannot read",
    },
    Case {
        what: "a profile that is not UTF-8",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n1,\xff\n2,0\n")],
        args: &["classify", "r.csv"],
        fragment: "r.csv: line 3: field 2 is not UTF-8 text",
    },
    Case {
        what: "an elevation of 1e308",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n1,1e308\n2,0\n3,0\n")],
        args: &["classify", "r.csv"],
        fragment: "line 3: `elevation_m` must lie between -10000 and 10000 m, got 1e308",
    },
    Case {
        what: "rows 1e-300 m apart",
        files: &[(
            "r.csv",
            b"distance_m,elevation_m\n0,0\n1e-300,0\n2e-300,0\n",
        )],
        args: &["classify", "r.csv"],
        fragment: "the rows are 1e-300 m apart; the spacing must lie between 1e-5 and 10 m",
    },
    Case {
        what: "a profile row with more fields than the header",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n1,0,7\n2,0\n")],
        args: &["classify", "r.csv"],
        fragment: "line 3: 3 fields where the header has 2",
    },
    Case {
        what: "a record row with more fields than the header",
        files: &[("a.csv", b"time_s,seat_z\n0,0\n0.001,0,5\n0.002,0\n")],
        args: &["comfort", "a.csv", "--column", "seat_z"],
        fragment: "line 3: 3 fields where the header has 2",
    },
    Case {
        what: "an acceleration of 1e308",
        files: &[("a.csv", b"time_s,seat_z\n0,0\n0.001,1e308\n0.002,0\n")],
        args: &["comfort", "a.csv", "--column", "seat_z"],
        fragment: "line 3: column `seat_z`: must lie between -100000 and 100000 m/s^2",
    },
    Case {
        what: "an exposure without a unit",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--exposure",
            "8",
        ],
        fragment: "'--exposure <DURATION>': invalid duration \"8\": has no unit",
    },
    Case {
        what: "a negative speed as its own argument",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "-20",
        ],
        fragment: "'--speed <SPEED>'",
    },
    Case {
        what: "a negative rate as its own argument",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--rate",
            "-5",
        ],
        fragment: "'--rate <HZ>'",
    },
    Case {
        what: "a negative length as its own argument",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--class",
            "C",
            "--length",
            "-100",
            "--speed",
            "20",
        ],
        fragment: "'--length <M>'",
    },
    Case {
        what: "a negative seed count as its own argument",
        files: &[],
        args: &[
            "sweep",
            "--vehicle",
            CAR,
            "--classes",
            "C",
            "--length",
            "100",
            "--speeds",
            "20",
            "--seeds",
            "-3",
        ],
        fragment: "'--seeds <N>'",
    },
    Case {
        what: "a speed of 1e300 m/s",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "1e300",
        ],
        fragment: "must lie between 0.01 and 300 m/s",
    },
    Case {
        what: "a hundred thousand worker threads",
        files: &[],
        args: &[
            "sweep",
            "--vehicle",
            CAR,
            "--classes",
            "C",
            "--length",
            "100",
            "--speeds",
            "20",
            "--jobs",
            "100000",
        ],
        fragment: "--jobs \"100000\": must lie between 1 and 1024",
    },
    Case {
        what: "no worker thread",
        files: &[],
        args: &[
            "sweep",
            "--vehicle",
            CAR,
            "--classes",
            "C",
            "--length",
            "100",
            "--speeds",
            "20",
            "--jobs",
            "0",
        ],
        fragment: "--jobs \"0\"",
    },
    Case {
        what: "a harmonic force above the output's Nyquist frequency",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--flat",
            "--length",
            "100",
            "--speed",
            "20",
            "--force",
            "150,600,1.3",
        ],
        fragment: "Nyquist frequency of the output, 500 Hz",
    },
    Case {
        what: "a harmonic force of 1e300 N",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--flat",
            "--length",
            "100",
            "--speed",
            "20",
            "--force",
            "1e300,25,1.3",
        ],
        fragment: "--force AMPLITUDE: must lie between",
    },
    Case {
        what: "an IRI segment of 1e-300 m",
        files: &[],
        args: &["classify", ROAD, "--segment", "1e-300"],
        fragment: "'--segment <M>'",
    },
    Case {
        what: "a response frequency of 1e300 Hz",
        files: &[],
        args: &[
            "frf",
            "--vehicle",
            CAR,
            "--speed",
            "20",
            "--freqs",
            "1,1e300",
        ],
        fragment: "\"1e300\": must lie between 0 and 10000 Hz",
    },
    Case {
        what: "a history written over its own profile",
        files: &[("r.csv", b"distance_m,elevation_m\n0,0\n5,0\n10,0\n15,0\n")],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            "r.csv",
            "--speed",
            "20",
            "--history",
            "./r.csv",
        ],
        fragment: "--history ./r.csv is the same file as --profile r.csv",
    },
    Case {
        what: "a gd_n0 of 1e300",
        files: &[],
        args: &["profile", "--gd-n0", "1e300", "--length", "100"],
        fragment: "'--gd-n0 <M3>'",
    },
    // Acceleration records.
    Case {
        what: "record without the named column",
        files: &[("a.csv", b"time_s,seat_z\n0,0\n0.001,0\n0.002,0\n")],
        args: &["comfort", "a.csv", "--column", "floor_z"],
        fragment: "floor_z",
    },
    Case {
        what: "record without time_s",
        files: &[("a.csv", b"t,seat_z\n0,0\n0.001,0\n0.002,0\n")],
        args: &["comfort", "a.csv", "--column", "seat_z"],
        fragment: "time_s",
    },
    Case {
        what: "record sampled too slowly for Wk",
        files: &[(
            "a.csv",
            b"time_s,seat_z\n0,0\n0.1,0.1\n0.2,0\n0.3,0.1\n0.4,0\n",
        )],
        args: &["comfort", "a.csv", "--column", "seat_z"],
        fragment: "Hz",
    },
    // Option values.
    Case {
        what: "zero speed",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "0",
        ],
        fragment: "speed",
    },
    Case {
        what: "speed with a unit we do not know",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "60mph",
        ],
        fragment: "60mph",
    },
    Case {
        what: "unknown road class",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--class",
            "Q",
            "--length",
            "100",
            "--speed",
            "20",
        ],
        fragment: "Q",
    },
    Case {
        what: "unknown weighting",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--weighting",
            "wz",
        ],
        fragment: "wz",
    },
    Case {
        what: "unknown solver",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--solver",
            "euler",
        ],
        fragment: "euler",
    },
    Case {
        what: "negative output rate",
        files: &[],
        args: &[
            "simulate",
            "--vehicle",
            CAR,
            "--profile",
            ROAD,
            "--speed",
            "20",
            "--rate=-5",
        ],
        fragment: "'--rate <HZ>': must lie between 1 and 1e6 Hz, got -5",
    },
    Case {
        what: "exposure without a unit",
        files: &[("a.csv", b"time_s,seat_z\n0,0\n0.001,0\n0.002,0\n")],
        args: &[
            "comfort",
            "a.csv",
            "--column",
            "seat_z",
            "--exposure",
            "eight",
        ],
        fragment: "eight",
    },
    Case {
        what: "profile band above Nyquist",
        files: &[],
        args: &[
            "profile",
            "--class",
            "C",
            "--length",
            "100",
            "--spacing",
            "0.5",
            "--n-max",
            "5",
        ],
        fragment: "n_max",
    },
    Case {
        what: "malformed obstacle",
        files: &[],
        args: &[
            "profile",
            "--flat",
            "--length",
            "100",
            "--obstacle",
            "bump:10,0.5",
        ],
        fragment: "bump:10,0.5",
    },
];

/// Whether `text` holds 20 digits in a row (1e300 printed in full).
fn has_long_digit_run(text: &str) -> bool {
    text.as_bytes()
        .split(|b| !b.is_ascii_digit())
        .any(|run| run.len() >= 20)
}

/// The number of bad inputs the table holds.
const TABLE_SIZE: usize = CASES.len() + CAR_EDITS.len();

#[test]
fn every_bad_input_exits_2_with_a_message_that_names_the_problem() {
    const { assert!(TABLE_SIZE >= 60) };
    let vehicle_args = &[
        "simulate",
        "--vehicle",
        "v.toml",
        "--profile",
        ROAD,
        "--speed",
        "20",
    ];
    let edited: Vec<(Case, String)> = CAR_EDITS
        .iter()
        .map(|e| {
            assert!(
                GOOD_CAR.contains(e.from),
                "{}: {:?} not in the good file",
                e.what,
                e.from
            );
            let case = Case {
                what: e.what,
                files: &[],
                args: vehicle_args,
                fragment: e.fragment,
            };
            (case, GOOD_CAR.replacen(e.from, e.to, 1))
        })
        .collect();
    let all = edited
        .iter()
        .map(|(c, text)| (c, Some(text.as_str())))
        .chain(CASES.iter().map(|c| (c, None)));
    let mut failures = Vec::new();
    for (case, car) in all {
        let dir = scratch();
        std::fs::write(dir.path().join("car.toml"), GOOD_CAR).unwrap();
        if let Some(text) = car {
            std::fs::write(dir.path().join("v.toml"), text).unwrap();
        }
        for (name, text) in case.files {
            std::fs::write(dir.path().join(name), text).unwrap();
        }
        let args: Vec<String> = case
            .args
            .iter()
            .map(|a| match *a {
                CAR => demo("vehicles/demo_hatchback.toml").display().to_string(),
                ROAD => demo("roads/demo_rural_c.csv").display().to_string(),
                other => other.to_string(),
            })
            .collect();
        let before: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        let out = roughride()
            .current_dir(dir.path())
            .args(&args)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        let after: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        let problems = [
            (
                out.status.code() != Some(2),
                format!("exit status {:?}", out.status.code()),
            ),
            (
                !stderr.contains(case.fragment),
                format!("no {:?} in stderr", case.fragment),
            ),
            (stderr.contains("panicked"), "panic text".to_string()),
            (
                has_long_digit_run(&stderr),
                "a number printed with dozens of digits".to_string(),
            ),
            (
                !out.stdout.is_empty(),
                "printed results on stdout".to_string(),
            ),
            (
                before.len() != after.len(),
                "left a file behind".to_string(),
            ),
        ];
        for (bad, why) in problems {
            if bad {
                failures.push(format!("{}: {why}\n  stderr: {}", case.what, stderr.trim()));
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n{}",
        failures.len(),
        CASES.len() + CAR_EDITS.len(),
        failures.join("\n")
    );
}

/// README.md and DEVELOPERS.md say how many malformed inputs this table
/// holds; the number comes from here (add a case, then the two documents).
#[test]
fn the_documents_state_the_number_of_bad_inputs_in_this_table() {
    let n = CASES.len() + CAR_EDITS.len();
    for doc in ["README.md", "DEVELOPERS.md"] {
        let text = common::read(&common::root().join(doc));
        let pieces: Vec<&str> = text.split(" malformed inputs").collect();
        let stated: Vec<&str> = pieces[..pieces.len() - 1]
            .iter()
            .filter_map(|before| before.rsplit(' ').next())
            .filter(|w| w.parse::<usize>().is_ok())
            .collect();
        assert_eq!(stated, [n.to_string()], "{doc}: the bad-input count");
    }
}
