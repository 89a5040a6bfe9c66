//! Options shared by the commands that run the solver (`simulate`,
//! `sweep`), defined once so their names, defaults and help stay the same.

use clap::Args;
use roughride::batch::values::parse_quantity;
use roughride::comfort::Weighting;
use roughride::limits::{self, Range};
use roughride::solve::{DEFAULT_OUTPUT_RATE_HZ, SolverChoice, SolverSettings};

/// Solver and seat-weighting options.
#[derive(Debug, Clone, Args)]
pub struct SolverArgs {
    /// Solver: auto (exact for linear vehicles, piecewise for ones with
    /// asymmetric dampers or stops), exact, piecewise, or adaptive.
    #[arg(long, default_value = "auto", value_parser = parse_solver)]
    pub solver: SolverChoice,
    /// Output sample rate, Hz (1 to 1e6).
    #[arg(long, value_name = "HZ", default_value_t = DEFAULT_OUTPUT_RATE_HZ,
          allow_hyphen_values = true, value_parser = quantity(&limits::OUTPUT_RATE))]
    pub rate: f64,
    /// Relative tolerance of the adaptive solver (1e-15 to 0.5).
    // Written as text so --help shows `1e-7`; a test ties it to DEFAULT_RTOL.
    #[arg(long, default_value = "1e-7", allow_hyphen_values = true,
          value_parser = quantity(&limits::RTOL))]
    pub rtol: f64,
    /// Absolute tolerance of the adaptive solver (1e-20 to 1).
    #[arg(long, default_value = "1e-9", allow_hyphen_values = true,
          value_parser = quantity(&limits::ATOL))]
    pub atol: f64,
    /// Frequency weighting for the seats (wk, wd, wf, wc, we, wj, none).
    #[arg(long, default_value = "wk", value_parser = parse_weighting)]
    pub weighting: Weighting,
}

impl SolverArgs {
    /// The solver settings these options describe.
    pub fn settings(&self) -> SolverSettings {
        SolverSettings {
            choice: self.solver,
            output_rate_hz: self.rate,
            rtol: self.rtol,
            atol: self.atol,
            ..SolverSettings::default()
        }
    }
}

/// A clap value parser for a plain number within `range` (the message gives
/// the range; clap adds the option's name).
pub fn quantity(
    range: &'static Range,
) -> impl Fn(&str) -> Result<f64, String> + Clone + Send + Sync + 'static {
    move |s| parse_quantity(s, range).map_err(|e| e.why)
}

/// A clap value parser for a whole number from `min` to `max`.
pub fn count(
    min: u64,
    max: u64,
) -> impl Fn(&str) -> Result<u64, String> + Clone + Send + Sync + 'static {
    move |s| match s.trim().parse::<u64>() {
        Ok(n) if (min..=max).contains(&n) => Ok(n),
        _ => Err(format!("expected a whole number from {min} to {max}")),
    }
}

fn parse_solver(s: &str) -> Result<SolverChoice, String> {
    s.parse()
}

fn parse_weighting(s: &str) -> Result<Weighting, String> {
    s.parse()
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::Parser;
    use roughride::solve::{DEFAULT_ATOL, DEFAULT_RTOL};

    #[derive(Parser)]
    struct Wrap {
        #[command(flatten)]
        run: SolverArgs,
    }

    #[test]
    fn the_defaults_written_for_help_are_the_library_defaults() {
        let w = Wrap::parse_from(["x"]);
        assert_eq!(w.run.rtol, DEFAULT_RTOL);
        assert_eq!(w.run.atol, DEFAULT_ATOL);
    }
}
