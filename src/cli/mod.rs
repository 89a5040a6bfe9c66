//! Command-line definitions (clap derive). Each command has its own file
//! holding its `Args` and a `run` that turns them into a library call and
//! prints the result; no computation happens here.

mod simulate;

use clap::{Parser, Subcommand};

mod classify;
mod comfort;
mod frf;
mod lifetime;
mod modes;
mod options;
mod plot;
mod profile;
mod sweep;
mod tradeoff;
mod tune;

/// roughride: ride comfort and durability estimates for a vehicle on a road,
/// before a prototype exists.
///
/// All quantities are SI (m, s, kg, N, rad) unless a name says otherwise.
/// Every command prints a table by default and one JSON object with --json.
/// Exit status: 0 success, 2 bad input or usage, 1 anything else.
#[derive(Debug, Parser)]
#[command(
    name = "roughride",
    version,
    about = "Ride comfort (ISO 2631-1) and durability estimates for a vehicle on a road, before a prototype exists",
    propagate_version = true,
    after_help = "A first session:\n  \
        roughride modes    --vehicle profiles/vehicles/demo_hatchback.toml\n  \
        roughride simulate --vehicle profiles/vehicles/demo_hatchback.toml --profile profiles/roads/demo_rural_c.csv --speed 72kmh\n  \
        roughride sweep    --vehicle profiles/vehicles/demo_hatchback.toml --classes A,B,C,D --speeds 10:35:5 --length 500 -o grid.csv\n  \
        roughride plot comfort grid.csv -o comfort.svg\n\n\
        Health values are estimates from a model, not measurements: ISO 2631-1, local regulation and\n\
        qualified practice govern."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The commands, one per job.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Run a vehicle over a road at a speed: comfort (ISO 2631-1), travel, tyre load.
    Simulate(simulate::Args),
    /// Run a grid of vehicle × road × speed × seed cases in parallel; one CSV row per case.
    Sweep(sweep::Args),
    /// Synthesise an ISO 8608 road profile (with obstacles) as CSV.
    Profile(profile::Args),
    /// Roughness of a profile CSV: ISO 8608 class, PSD fit, octave bands, IRI.
    Classify(classify::Args),
    /// ISO 2631-1 comfort and health evaluation of a measured acceleration record.
    Comfort(comfort::Args),
    /// A vehicle's life from a usage file: load spectra, damage shares per part, time past the stops.
    Lifetime(lifetime::Args),
    /// Natural frequencies, damping ratios, mode shapes and nodes; ride frequencies and flat-ride guidance.
    Modes(modes::Args),
    /// Frequency response to road elevation (and a body force): magnitude and phase per output, as CSV.
    Frf(frf::Args),
    /// Search the values of some vehicle-file keys, within bounds, that minimise a seat's aw (or VDV) under limits.
    Tune(tune::Args),
    /// Draw SVG pictures: comfort against speed, histograms, road PSD, time windows, design trade-offs.
    Plot(plot::Args),
}

/// Runs the chosen command.
pub fn run(cli: Cli) -> Result<(), roughride::Error> {
    match cli.command {
        Command::Modes(a) => modes::run(a),
        Command::Frf(a) => frf::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Profile(args) => profile::run(args),
        Command::Classify(args) => classify::run(args),
        Command::Comfort(a) => comfort::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Lifetime(a) => lifetime::run(a),
        Command::Tune(a) => tune::run(a),
        Command::Plot(a) => plot::run(a),
    }
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
