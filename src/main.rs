//! The `roughride` binary: parse the command line, run the command, map
//! errors to exit statuses (2 bad input or usage, 1 anything else).

mod cli;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let args = cli::Cli::parse();
    // Ctrl-C, SIGTERM and SIGHUP stop runs at their next check, so output
    // files are discarded rather than left half-written. If the handler
    // cannot be installed the default (immediate exit) still applies.
    let _ = ctrlc::set_handler(roughride::solve::request_cancel);
    match cli::run(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("roughride: error: {e}");
            ExitCode::from(e.exit_status())
        }
    }
}
