//! The `roughride` binary: parse the command line, run the command, map
//! errors to exit statuses (2 bad input or usage, 1 anything else).

mod cli;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let args = cli::Cli::parse();
    match cli::run(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("roughride: error: {e}");
            ExitCode::from(e.exit_status())
        }
    }
}
