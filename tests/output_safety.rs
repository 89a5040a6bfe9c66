//! Where results go: standard output that cannot be written, a closed
//! pipe, output paths that name an input or each other, special files and
//! links, leftovers of killed runs, and a sweep whose every case fails.
//! What is expected is common practice for Unix command-line tools (a
//! write error is reported in one line with a non-zero status; `| head`
//! ends the writer quietly through SIGPIPE; `mv`-style atomic replacement
//! is only for regular files).

mod common;

use std::path::Path;
use std::process::{Command, Stdio};

use common::{demo, roughride, scratch};

const ROAD: &str = "roads/demo_rural_c.csv";
const CAR: &str = "vehicles/demo_hatchback.toml";

fn car() -> String {
    demo(CAR).display().to_string()
}

fn road() -> String {
    demo(ROAD).display().to_string()
}

/// A 2 s record at 1 kHz (a 4 Hz sine of 1 m/s²) for `comfort`.
fn write_record(dir: &Path) -> String {
    let mut text = String::from("time_s,seat_z\n");
    for i in 0..2000 {
        let t = i as f64 / 1000.0;
        text.push_str(&format!(
            "{t},{}\n",
            (2.0 * std::f64::consts::PI * 4.0 * t).sin()
        ));
    }
    let path = dir.join("rec.csv");
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

/// Every command that prints, in each of its output forms.
fn printing_commands(dir: &Path) -> Vec<Vec<String>> {
    let rec = write_record(dir);
    let s = |v: &[&str]| v.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    let (car, road) = (car(), road());
    vec![
        s(&[
            "simulate",
            "--vehicle",
            &car,
            "--profile",
            &road,
            "--speed",
            "20",
        ]),
        s(&[
            "simulate",
            "--vehicle",
            &car,
            "--profile",
            &road,
            "--speed",
            "20",
            "--json",
        ]),
        s(&["modes", "--vehicle", &car]),
        s(&["modes", "--vehicle", &car, "--json"]),
        s(&["classify", &road]),
        s(&["classify", &road, "--json"]),
        s(&["frf", "--vehicle", &car, "--speed", "20"]),
        s(&["frf", "--vehicle", &car, "--speed", "20", "--json"]),
        s(&["comfort", &rec, "--column", "seat_z"]),
        s(&["comfort", &rec, "--column", "seat_z", "--json"]),
        s(&["profile", "--class", "C", "--length", "100"]),
        s(&[
            "sweep",
            "--vehicle",
            &car,
            "--classes",
            "B",
            "--speeds",
            "20",
            "--length",
            "50",
        ]),
        s(&[
            "sweep",
            "--vehicle",
            &car,
            "--classes",
            "B",
            "--speeds",
            "20",
            "--length",
            "50",
            "--json",
        ]),
        s(&["plot", "psd", &road]),
    ]
}

#[cfg(target_os = "linux")]
#[test]
fn a_full_stdout_gives_one_line_and_status_1_in_every_command() {
    let dir = scratch();
    let mut failures = Vec::new();
    for args in printing_commands(dir.path()) {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let out = Command::new(assert_cmd::cargo::cargo_bin("roughride"))
            .args(&args)
            .stdout(Stdio::from(full))
            .stderr(Stdio::piped())
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        let errors: Vec<&str> = stderr.lines().filter(|l| l.contains("error")).collect();
        let ok = out.status.code() == Some(1)
            && errors.len() == 1
            && errors[0].contains("<stdout>")
            && errors[0].contains("No space left")
            && !stderr.contains("panicked");
        if !ok {
            failures.push(format!(
                "{}: status {:?}, stderr {:?}",
                args.join(" "),
                out.status.code(),
                stderr.lines().take(3).collect::<Vec<_>>()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[cfg(unix)]
#[test]
fn a_closed_pipe_ends_the_run_quietly() {
    use std::os::unix::process::ExitStatusExt;
    // 2.6 MB of CSV: far more than a pipe buffer, so the writer must meet
    // the closed pipe.
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("roughride"))
        .args(["profile", "--class", "C", "--length", "100000"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    assert_eq!(
        out.status.signal(),
        Some(libc_sigpipe()),
        "{:?}",
        out.status
    );
    assert!(
        out.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// SIGPIPE's number (13 on every Unix this runs on; POSIX leaves it open).
#[cfg(unix)]
fn libc_sigpipe() -> i32 {
    13
}

#[test]
fn a_directory_or_a_binary_file_as_input_is_bad_input() {
    let dir = scratch();
    std::fs::write(dir.path().join("bin.toml"), b"\xff\xfe\x00\x01[body]").unwrap();
    std::fs::write(
        dir.path().join("bin.csv"),
        b"distance_m,elevation_m\n0,0\n1,\xff\xfe\n2,0\n",
    )
    .unwrap();
    let (car, road) = (car(), road());
    let cases: [(&[&str], &str); 6] = [
        (&["modes", "--vehicle", "."], "."),
        (&["modes", "--vehicle", "bin.toml"], "not a text file"),
        (
            &[
                "simulate",
                "--vehicle",
                &car,
                "--profile",
                ".",
                "--speed",
                "20",
            ],
            ".",
        ),
        (
            &["classify", "bin.csv"],
            "bin.csv: line 3: field 2 is not UTF-8 text",
        ),
        (&["comfort", ".", "--column", "a"], "."),
        (
            &[
                "sweep",
                "--vehicle",
                &car,
                "--profile",
                &road,
                "--profile",
                "bin.csv",
                "--speeds",
                "20",
            ],
            "not UTF-8",
        ),
    ];
    for (args, fragment) in cases {
        let out = roughride()
            .current_dir(dir.path())
            .args(args)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(stderr.contains(fragment), "{args:?}: {stderr}");
        assert!(
            !stderr.contains("Position") && !stderr.contains("Utf8"),
            "{stderr}"
        );
    }
}

/// Runs the binary in `dir`; returns (status, stderr).
fn run_in(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    let out = roughride().current_dir(dir).args(args).output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn an_output_that_is_an_input_or_another_output_is_refused_before_running() {
    let dir = scratch();
    let d = dir.path();
    std::fs::copy(demo(ROAD), d.join("r.csv")).unwrap();
    std::fs::copy(demo(CAR), d.join("v.toml")).unwrap();
    #[cfg(unix)]
    std::os::unix::fs::symlink("r.csv", d.join("link.csv")).unwrap();
    #[cfg(not(unix))]
    std::fs::copy(d.join("r.csv"), d.join("link.csv")).unwrap();
    let before = |name: &str| std::fs::read(d.join(name)).unwrap();
    let (road0, car0) = (before("r.csv"), before("v.toml"));
    let sim = [
        "simulate",
        "--vehicle",
        "v.toml",
        "--profile",
        "r.csv",
        "--speed",
        "20",
    ];
    let with = |extra: &[&'static str]| -> Vec<&'static str> {
        sim.iter().copied().chain(extra.iter().copied()).collect()
    };
    let cases: Vec<(Vec<&str>, [&str; 2])> = vec![
        (with(&["--history", "r.csv"]), ["--history", "--profile"]),
        (with(&["--history", "./v.toml"]), ["--history", "--vehicle"]),
        (
            with(&["--rainflow", "link.csv"]),
            ["--rainflow", "--profile"],
        ),
        (
            with(&["--history", "x.csv", "--travel-histogram", "x.csv"]),
            ["--history", "--travel-histogram"],
        ),
        (
            with(&["--travel-histogram", "y.csv", "--rainflow", "./y.csv"]),
            ["--travel-histogram", "--rainflow"],
        ),
        (
            vec!["classify", "r.csv", "--segment", "100", "-o", "r.csv"],
            ["-o", "FILE"],
        ),
        (
            vec![
                "sweep",
                "--vehicle",
                "v.toml",
                "--profile",
                "r.csv",
                "--speeds",
                "20",
                "-o",
                "v.toml",
            ],
            ["-o", "--vehicle"],
        ),
        (
            vec![
                "sweep",
                "--vehicle",
                "v.toml",
                "--profile",
                "r.csv",
                "--speeds",
                "20",
                "-o",
                "link.csv",
            ],
            ["-o", "--profile"],
        ),
        (
            vec![
                "frf",
                "--vehicle",
                "v.toml",
                "--speed",
                "20",
                "-o",
                "v.toml",
            ],
            ["-o", "--vehicle"],
        ),
        (vec!["plot", "psd", "r.csv", "-o", "r.csv"], ["-o", "FILE"]),
        (with(&["--history", "."]), ["--history", "is a directory"]),
        (
            with(&["--history", "no/such/dir/h.csv"]),
            ["--history", "does not exist"],
        ),
    ];
    for (args, names) in cases {
        let (code, stderr) = run_in(d, &args);
        assert_eq!(code, Some(2), "{args:?}: {stderr}");
        for n in names {
            assert!(stderr.contains(n), "{args:?}: no {n:?} in {stderr}");
        }
        assert_eq!(before("r.csv"), road0, "{args:?} changed the road");
        assert_eq!(before("v.toml"), car0, "{args:?} changed the vehicle");
        for stray in ["x.csv", "y.csv"] {
            assert!(!d.join(stray).exists(), "{args:?} wrote {stray}");
        }
    }
}

#[cfg(unix)]
#[test]
fn a_link_is_kept_and_the_file_it_points_to_is_replaced() {
    let dir = scratch();
    let d = dir.path();
    std::fs::create_dir(d.join("results")).unwrap();
    std::fs::write(d.join("results/grid.csv"), "old\n").unwrap();
    std::os::unix::fs::symlink("results/grid.csv", d.join("latest.csv")).unwrap();
    let car = car();
    let args = [
        "sweep",
        "--vehicle",
        &car,
        "--classes",
        "B",
        "--speeds",
        "20",
        "--length",
        "50",
        "-o",
        "latest.csv",
    ];
    let (code, stderr) = run_in(d, &args);
    assert_eq!(code, Some(0), "{stderr}");
    let meta = std::fs::symlink_metadata(d.join("latest.csv")).unwrap();
    assert!(meta.file_type().is_symlink(), "the link was replaced");
    let text = common::read(&d.join("results/grid.csv"));
    assert!(text.starts_with("case,"), "{text}");
    assert_eq!(std::fs::read_dir(d.join("results")).unwrap().count(), 1);
}

#[cfg(unix)]
#[test]
fn a_fifo_stays_a_fifo_and_its_reader_gets_the_whole_history() {
    let dir = scratch();
    let d = dir.path();
    let fifo = d.join("h.fifo");
    let made = Command::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(made.success());
    let reader = {
        let fifo = fifo.clone();
        std::thread::spawn(move || std::fs::read_to_string(fifo).unwrap())
    };
    // The demo road lifts the rear tyre, so the history restarts midway
    // (exact, then adaptive): the reader must see only the final run.
    let (car, road) = (car(), road());
    let args = [
        "simulate",
        "--vehicle",
        &car,
        "--profile",
        &road,
        "--speed",
        "20",
        "--history",
        "h.fifo",
    ];
    let (code, stderr) = run_in(d, &args);
    assert_eq!(code, Some(0), "{stderr}");
    let text = reader.join().unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert!(lines[0].starts_with("time_s,"), "{}", lines[0]);
    assert_eq!(lines.iter().filter(|l| l.starts_with("time_s,")).count(), 1);
    assert_eq!(
        lines.len(),
        1 + 50001,
        "header and one row per sample at 1 kHz for 50 s"
    );
    use std::os::unix::fs::FileTypeExt;
    assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());
    assert_eq!(
        std::fs::read_dir(d).unwrap().count(),
        1,
        "a file was left beside the FIFO"
    );
}

#[cfg(target_os = "linux")]
#[test]
fn dev_stdout_and_dev_null_are_written_into_not_replaced() {
    let (car, road) = (car(), road());
    let out = roughride()
        .args([
            "simulate",
            "--vehicle",
            &car,
            "--profile",
            &road,
            "--speed",
            "20",
            "--json",
        ])
        .args([
            "--history",
            "/dev/stdout",
            "--rainflow",
            "/dev/null",
            "--travel-histogram",
            "/dev/null",
        ])
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    assert!(lines.next().unwrap().starts_with("time_s,"));
    // The history comes first (it is committed before the summary prints),
    // then the one JSON object.
    let last = text.lines().last().unwrap();
    assert!(
        last.starts_with('{') && last.contains("\"seats\""),
        "{last}"
    );
    assert_eq!(text.lines().count(), 1 + 50001 + 1);
    use std::os::unix::fs::FileTypeExt;
    assert!(
        std::fs::metadata("/dev/null")
            .unwrap()
            .file_type()
            .is_char_device()
    );
}

#[cfg(unix)]
#[test]
fn leftovers_of_a_killed_run_are_removed_by_the_next_run_to_the_same_target() {
    use std::time::{Duration, Instant};
    let dir = scratch();
    let d = dir.path();
    let van = demo("vehicles/demo_van_stops.toml");
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("roughride"))
        .current_dir(d)
        .args(["simulate", "--vehicle"])
        .arg(&van)
        .args([
            "--class",
            "D",
            "--length",
            "60000",
            "--speed",
            "20",
            "--history",
            "h.csv",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = Instant::now();
    let partial = loop {
        let found = std::fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().path())
            .find(|p| p.to_string_lossy().ends_with(".partial"));
        if let Some(p) = found {
            break p;
        }
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no temporary file appeared"
        );
        std::thread::sleep(Duration::from_millis(20));
    };
    let name = partial.file_name().unwrap().to_string_lossy().into_owned();
    assert!(
        name.starts_with(&format!(".h.csv.{}@", child.id())),
        "the temporary file names its owner: {name}"
    );
    child.kill().unwrap(); // SIGKILL: no chance to clean up
    child.wait().unwrap();
    assert!(partial.exists());
    // An unrelated file of the same form from another host is kept.
    let foreign = d.join(".h.csv.1@some-other-host.abcdef.partial");
    std::fs::write(&foreign, "x").unwrap();
    let (car, road) = (car(), road());
    let args = [
        "simulate",
        "--vehicle",
        &car,
        "--profile",
        &road,
        "--speed",
        "20",
        "--history",
        "h.csv",
    ];
    let (code, stderr) = run_in(d, &args);
    assert_eq!(code, Some(0), "{stderr}");
    assert!(!partial.exists(), "the dead run's {name} is still there");
    assert!(foreign.exists());
    assert!(d.join("h.csv").exists());
}

#[test]
fn a_sweep_in_which_every_case_fails_keeps_the_previous_file() {
    // As in sweep_cli.rs: a case whose run would need more than 10⁹ output
    // samples (20 km at 0.5 m/s on a 100 kHz grid) fails when it is planned.
    let dir = scratch();
    let d = dir.path();
    std::fs::write(d.join("grid.csv"), "previous result\n").unwrap();
    let van = demo("vehicles/demo_van_stops.toml").display().to_string();
    let args = [
        "sweep",
        "--vehicle",
        &van,
        "--classes",
        "H",
        "--speeds",
        "0.5",
        "--length",
        "20000",
        "--rate",
        "100000",
        "-o",
        "grid.csv",
    ];
    let (code, stderr) = run_in(d, &args);
    assert_eq!(code, Some(1), "{stderr}");
    assert!(stderr.contains("failed: case"), "{stderr}");
    assert!(stderr.contains("no case completed"), "{stderr}");
    assert_eq!(common::read(&d.join("grid.csv")), "previous result\n");
    assert_eq!(std::fs::read_dir(d).unwrap().count(), 1);
}

#[test]
fn no_command_prints_with_the_macros_that_panic_on_a_write_error() {
    // print!/println! panic when stdout cannot be written (exit 101 with a
    // backtrace); every command goes through report::print_stdout instead.
    let dir = common::root().join("src").join("cli");
    let mut found = Vec::new();
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let text = common::read(&path);
        for (i, line) in text.lines().enumerate() {
            let code = line.split("//").next().unwrap_or("");
            let t = code.trim_start();
            if t.starts_with("print!(")
                || t.starts_with("println!(")
                || code.contains(" print!(")
                || code.contains(" println!(")
            {
                found.push(format!("{}:{}: {}", path.display(), i + 1, line.trim()));
            }
        }
    }
    assert!(found.is_empty(), "{}", found.join("\n"));
}
