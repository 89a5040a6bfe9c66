//! Command-line definitions (clap derive). Each command has its own file
//! holding its `Args` and a `run` that turns them into a library call and
//! prints the result; no computation happens here.

use clap::{Parser, Subcommand};

/// roughride: ride comfort and durability estimates for a vehicle on a road,
/// before a prototype exists.
///
/// All quantities are SI (m, s, kg, N, rad) unless a name says otherwise.
/// Every command prints a table by default and one JSON object with --json.
/// Exit status: 0 success, 2 bad input or usage, 1 anything else.
#[derive(Debug, Parser)]
#[command(name = "roughride", version, about, long_about = None, propagate_version = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The commands, one per job.
#[derive(Debug, Subcommand)]
pub enum Command {}

/// Runs the chosen command.
pub fn run(cli: Cli) -> Result<(), roughride::Error> {
    match cli.command {}
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn the_command_line_definition_is_consistent() {
        Cli::command().debug_assert();
    }
}
