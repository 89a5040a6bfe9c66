//! Helpers shared by the integration tests: running the built binary in a
//! scratch directory, and running the Python reference scripts in
//! `tests/reference/` (numpy, scipy, rainflow from PyPI; `bash .ci/run`
//! installs them).
#![allow(dead_code)]

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// The project root.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A file under `profiles/`.
pub fn demo(path: &str) -> PathBuf {
    root().join("profiles").join(path)
}

/// The `roughride` binary, ready to take arguments.
pub fn roughride() -> assert_cmd::Command {
    assert_cmd::Command::cargo_bin("roughride").expect("binary built")
}

/// Runs the binary with `args` and `--json`, expects success and exactly
/// one JSON object on stdout (the documented interface), and returns it.
pub fn json_of(args: &[&str]) -> serde_json::Value {
    let out = roughride()
        .args(args)
        .arg("--json")
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(out).unwrap();
    assert_eq!(
        text.trim_end().lines().count(),
        1,
        "exactly one JSON object: {text}"
    );
    serde_json::from_str(&text).unwrap()
}

/// Runs `tests/reference/<script>` with `input` (JSON) on stdin and returns
/// the JSON it prints. `None` only when ROUGHRIDE_SKIP_PYTHON=1 and Python
/// or a package is missing; otherwise a missing package fails the test.
pub fn python_reference(script: &str, input: &serde_json::Value) -> Option<serde_json::Value> {
    let path = root().join("tests").join("reference").join(script);
    let skip = std::env::var("ROUGHRIDE_SKIP_PYTHON").is_ok_and(|v| v == "1");
    let child = Command::new("python3")
        .arg(&path)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn();
    let mut child = match child {
        Ok(c) => c,
        Err(e) if skip => {
            eprintln!("skipped {script}: python3 not runnable ({e}); ROUGHRIDE_SKIP_PYTHON=1");
            return None;
        }
        Err(e) => panic!(
            "python3 is needed for {script}: {e}. Install the references with \
             `pip install -r tests/reference/requirements.txt` (bash .ci/run does), \
             or set ROUGHRIDE_SKIP_PYTHON=1 to skip the cross-checks"
        ),
    };
    child
        .stdin
        .take()
        .expect("stdin piped")
        .write_all(input.to_string().as_bytes())
        .expect("write to python");
    let out = child.wait_with_output().expect("python ran");
    let stderr = String::from_utf8_lossy(&out.stderr);
    if !out.status.success() {
        if skip && stderr.contains("ModuleNotFoundError") {
            eprintln!("skipped {script}: {stderr}");
            return None;
        }
        panic!(
            "{script} failed ({}):\n{stderr}\nInstall the references with \
             `pip install -r tests/reference/requirements.txt` (bash .ci/run does)",
            out.status
        );
    }
    Some(serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "{script} printed no JSON ({e}): {}",
            String::from_utf8_lossy(&out.stdout)
        )
    }))
}

/// A scratch directory removed at the end of the test.
pub fn scratch() -> tempfile::TempDir {
    tempfile::tempdir().expect("temp dir")
}

/// Reads a file to a string, with the path in the panic message.
pub fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The scipy eigenvalue script's conjugate pairs: `(damped_hz, damping_ratio)`
/// for each entry of its `pairs` array.
pub fn damped_pairs(r: &serde_json::Value) -> Vec<(f64, f64)> {
    r["pairs"]
        .as_array()
        .expect("the reference's pairs array")
        .iter()
        .map(|p| {
            (
                p["damped_hz"].as_f64().expect("damped_hz"),
                p["damping_ratio"].as_f64().expect("damping_ratio"),
            )
        })
        .collect()
}
