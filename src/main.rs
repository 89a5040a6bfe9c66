//! The `roughride` binary: parse the command line, run the command, map
//! errors to exit statuses (2 bad input or usage, 1 anything else).

mod cli;

use std::process::ExitCode;

use clap::Parser;

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
    let args = cli::Cli::parse();
    // Ctrl-C, SIGTERM and SIGHUP stop runs at their next check, so output
    // files are discarded rather than left half-written. If the handler
    // cannot be installed the default (immediate exit) still applies.
    let _ = ctrlc::set_handler(roughride::solve::request_cancel);
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
