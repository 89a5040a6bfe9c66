//! Command-line definitions (clap derive). Each command has its own file
//! holding its `Args` and a `run` that turns them into a library call and
//! prints the result; no computation happens here.

mod simulate;

use clap::{Parser, Subcommand};

mod classify;
mod comfort;
mod frf;
mod life_plot;
mod lifetime;
mod modes;
mod options;
mod plot;
mod plot_vehicle;
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

/// The command line as the binary parses it: [`Cli`] with every option
/// that takes a value also taking a negative number, so `--speed -20`
/// reaches `--speed`'s own check (a message naming the option) instead of
/// being read as an unknown flag `-2`. Applied to every (sub)command, so
/// options added later get it too.
pub fn command() -> clap::Command {
    fn negatives(c: clap::Command) -> clap::Command {
        c.mut_args(|a| {
            if a.get_action().takes_values() {
                a.allow_negative_numbers(true)
            } else {
                a
            }
        })
        .mut_subcommands(negatives)
    }
    use clap::CommandFactory;
    negatives(Cli::command())
}

/// Parses the process's arguments (exits with clap's message on bad usage).
pub fn parse() -> Cli {
    use clap::FromArgMatches;
    let matches = command().get_matches();
    Cli::from_arg_matches(&matches).unwrap_or_else(|e| e.exit())
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
        command().debug_assert();
    }

    /// Every (sub)command path with its clap definition.
    fn commands(path: Vec<String>, c: &clap::Command, out: &mut Vec<(Vec<String>, clap::Command)>) {
        for s in c.get_subcommands() {
            let mut p = path.clone();
            p.push(s.get_name().to_string());
            out.push((p.clone(), s.clone()));
            commands(p, s, out);
        }
    }

    #[test]
    fn a_negative_number_given_to_a_numeric_option_is_taken_as_its_value() {
        // `--speed -20` must reach the option's own check (a message naming
        // --speed), not be read as an unknown flag `-2`.
        let text_values = [
            "FILE",
            "NAME",
            "COLUMN",
            "COLUMNS",
            "TITLE",
            "W",
            "WEIGHTING",
            "SOLVER",
            "A-H",
            "A,B,…",
            "CLASS",
            "K/N",
            "KEY=VALUES",
            "RESIDUE",
        ];
        let mut all = Vec::new();
        commands(vec!["roughride".into()], &command(), &mut all);
        let (mut checked, mut refused) = (0, Vec::new());
        for (path, cmd) in &all {
            for arg in cmd.get_arguments() {
                let (Some(long), true) = (arg.get_long(), arg.get_action().takes_values()) else {
                    continue;
                };
                let names = arg.get_value_names().unwrap_or_default();
                if names.iter().any(|n| text_values.contains(&n.as_str())) || long == "help" {
                    continue;
                }
                let mut argv = path.clone();
                argv.extend([format!("--{long}"), "-5".to_string()]);
                let e = command().try_get_matches_from(&argv).unwrap_err();
                if e.kind() == clap::error::ErrorKind::UnknownArgument {
                    refused.push(argv[1..].join(" "));
                }
                checked += 1;
            }
        }
        assert!(refused.is_empty(), "read as flags: {refused:#?}");
        assert!(checked >= 30, "only {checked} numeric options found");
    }
}
