//! `roughride plot frf` and `plot modes`: pictures of a vehicle's linear
//! model. This file reads the vehicle, has the library compute the
//! responses and modes, and hands them to `roughride::report::vehicle_plot`.

use std::path::PathBuf;

use clap::Args as ClapArgs;

use roughride::Error;
use roughride::batch::values::parse_speed_m_s;
use roughride::report::plot::tick;
use roughride::report::vehicle_plot;
use roughride::vehicle::{modal, read_vehicle, response};

use super::plot::{Out, check_files, title_of, write_svg};

#[derive(Debug, ClapArgs)]
pub struct FrfArgs {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    /// Forward speed: m/s, or km/h with a kmh suffix (sets the wheelbase delay).
    #[arg(long, value_name = "SPEED", allow_hyphen_values = true, value_parser = parse_speed)]
    pub speed: f64,
    /// Lowest frequency drawn, Hz (100 log-spaced frequencies per decade).
    #[arg(long = "min-hz", value_name = "HZ", default_value_t = 0.5, allow_hyphen_values = true,
          value_parser = super::options::quantity(&roughride::limits::FRF_FREQUENCY))]
    pub min_hz: f64,
    /// Highest frequency drawn, Hz.
    #[arg(long = "max-hz", value_name = "HZ", default_value_t = 30.0, allow_hyphen_values = true,
          value_parser = super::options::quantity(&roughride::limits::FRF_FREQUENCY))]
    pub max_hz: f64,
    /// Outputs, comma-separated, named as in `frf` (e.g. driver_accel,front_travel,heave);
    /// default: every seat acceleration, travel and tyre load.
    #[arg(long, value_delimiter = ',')]
    pub outputs: Vec<String>,
    #[command(flatten)]
    pub out: Out,
}

#[derive(Debug, ClapArgs)]
pub struct ModesArgs {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    #[command(flatten)]
    pub out: Out,
}

fn parse_speed(s: &str) -> Result<f64, String> {
    parse_speed_m_s(s).map_err(|e| e.to_string())
}

/// `plot frf`: the road responses on a log grid, the modes marked.
pub fn frf(a: FrfArgs) -> Result<(), Error> {
    check_files("--vehicle", &a.vehicle, a.out.output.as_deref())?;
    let freqs = vehicle_plot::log_frequencies(a.min_hz, a.max_hz)
        .map_err(|e| Error::Usage(format!("--min-hz/--max-hz: {e}")))?;
    let v = read_vehicle(&a.vehicle)?;
    let r = response::road_frf(&v, a.speed, &freqs)?;
    let selected = vehicle_plot::select_channels(&r, &a.outputs)
        .map_err(|e| Error::Usage(format!("--outputs: {e}")))?;
    let modes = modal::modes(&v);
    let default = format!("Road frequency response at {} m/s: ", tick(a.speed));
    let title = title_of(&a.out, &default, &a.vehicle);
    write_svg(
        &a.out,
        &vehicle_plot::frf_chart(&r, &selected, &modes, &title)?,
    )
}

/// `plot modes`: the mode shapes.
pub fn modes(a: ModesArgs) -> Result<(), Error> {
    check_files("--vehicle", &a.vehicle, a.out.output.as_deref())?;
    let v = read_vehicle(&a.vehicle)?;
    let analysis = modal::modes(&v);
    let title = title_of(&a.out, "Mode shapes: ", &a.vehicle);
    write_svg(&a.out, &vehicle_plot::modes_chart(&analysis, &v, &title)?)
}
