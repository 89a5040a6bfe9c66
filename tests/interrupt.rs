//! A run stopped midway (SIGTERM, as a batch scheduler sends; Ctrl-C is
//! SIGINT and takes the same path) leaves the previous output file intact
//! and no partial file behind.

mod common;

use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

#[test]
fn a_terminated_run_keeps_the_old_history_and_leaves_no_partial_file() {
    let dir = common::scratch();
    let hist = dir.path().join("history.csv");
    std::fs::write(&hist, "previous good result\n").unwrap();
    let bin = assert_cmd::cargo::cargo_bin("roughride");
    let mut child = Command::new(bin)
        .args(["simulate", "--vehicle"])
        .arg(common::demo("vehicles/demo_van_stops.toml"))
        .args([
            "--class",
            "D",
            "--length",
            "60000",
            "--speed",
            "20",
            "--history",
        ])
        .arg(&hist)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until the run is writing its temporary file.
    let start = Instant::now();
    let partial = loop {
        let found = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().path())
            .find(|p| p.to_string_lossy().ends_with(".partial"));
        if let Some(p) = found {
            if std::fs::metadata(&p).map(|m| m.len() > 0).unwrap_or(false) {
                break p;
            }
        }
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "the run never started writing"
        );
        assert!(
            child.try_wait().unwrap().is_none(),
            "the run ended before it could be stopped"
        );
        std::thread::sleep(Duration::from_millis(20));
    };
    let status = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let out = child.wait_with_output().unwrap();
    assert!(
        !out.status.success(),
        "a stopped run must not report success"
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert_eq!(common::read(&hist), "previous good result\n");
    assert!(
        !partial.exists(),
        "partial file left behind: {}",
        partial.display()
    );
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[cfg(unix)]
#[test]
fn a_sweep_on_a_thousand_threads_stops_within_a_second_of_sigterm() {
    // 1024 threads on a machine with a few cores: each thread gets a small
    // share of the CPU, so work between two cancellation checks takes long
    // in wall time; the process must end within its grace period anyway.
    let dir = common::scratch();
    let out = dir.path().join("grid.csv");
    std::fs::write(&out, "previous good result\n").unwrap();
    let mut child = Command::new(assert_cmd::cargo::cargo_bin("roughride"))
        .args(["sweep", "--vehicle"])
        .arg(common::demo("vehicles/demo_hatchback.toml"))
        .args([
            "--classes",
            "A,H",
            "--speeds",
            "10:41.5:0.5",
            "--seeds",
            "8",
            "--length",
            "2000",
            "--jobs",
            "1024",
            "-o",
        ])
        .arg(&out)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Wait until the threads are working (the output's temporary file
    // exists), then a little longer so most of them are inside a case.
    let start = Instant::now();
    while !std::fs::read_dir(dir.path())
        .unwrap()
        .any(|e| e.unwrap().path().to_string_lossy().ends_with(".partial"))
    {
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "the sweep never started"
        );
        assert!(
            child.try_wait().unwrap().is_none(),
            "the sweep ended too soon"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
    std::thread::sleep(Duration::from_millis(1500));
    let sent = Instant::now();
    let status = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success());
    let result = child.wait_with_output().unwrap();
    let took = sent.elapsed();
    // One second is the aim (the grace period is 0.8 s); the bound leaves
    // room for a loaded test machine.
    assert!(took < Duration::from_secs(3), "took {took:?} to stop");
    assert_eq!(result.status.code(), Some(130));
    let stderr = String::from_utf8_lossy(&result.stderr);
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert_eq!(common::read(&out), "previous good result\n");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}
