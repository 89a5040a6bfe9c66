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
