//! The `roughride` binary: parse the command line, run the command, map
//! errors to exit statuses (2 bad input or usage, 1 anything else).

mod cli;

use std::process::ExitCode;

/// Longest wait for runs to stop on their own after a signal, before the
/// process ends anyway (work between two checks can take longer than this
/// when many threads share few cores).
const STOP_GRACE: std::time::Duration = std::time::Duration::from_millis(800);

/// Asks every run to stop; if the process is still there after
/// [`STOP_GRACE`], removes the unfinished output files and exits with the
/// status of an interrupted run (130, as `SolveError::Interrupted`).
fn on_signal() {
    roughride::solve::request_cancel();
    std::thread::sleep(STOP_GRACE);
    roughride::report::discard_unfinished();
    use std::io::Write as _;
    let _ = writeln!(
        std::io::stderr(),
        "roughride: error: interrupted; no output file was written"
    );
    std::process::exit(130);
}

fn main() -> ExitCode {
    // Die quietly on a closed pipe (`roughride sweep … | head`), as Unix
    // tools do, instead of reporting a write error. Rust ignores SIGPIPE by
    // default; output files are unaffected (they are written atomically).
    #[cfg(unix)]
    // SAFETY: restoring the default disposition of SIGPIPE before any thread
    // starts; no Rust invariant depends on it.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
    let args = cli::parse();
    // Ctrl-C, SIGTERM and SIGHUP stop runs at their next check, so output
    // files are discarded rather than left half-written. If the handler
    // cannot be installed the default (immediate exit) still applies.
    let _ = ctrlc::set_handler(on_signal);
    match cli::run(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            // Not eprintln!: a stderr that cannot be written must not turn
            // the error into a panic (exit 101).
            use std::io::Write as _;
            let _ = writeln!(std::io::stderr(), "roughride: error: {e}");
            ExitCode::from(e.exit_status())
        }
    }
}
