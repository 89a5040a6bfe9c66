//! `roughride sweep`: a grid of runs (vehicle × road × speed × seed), one
//! CSV row (or JSON Lines object) per case on stdout or in `-o FILE`.

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use clap::Args as ClapArgs;

use super::options::{SolverArgs, count, quantity};
use roughride::limits;

use roughride::Error;
use roughride::batch::values::{Shard, parse_speed_list_m_s};
use roughride::batch::{
    Format, Grid, OutputSpec, RoadGeometry, RoadSource, Runner, SweepVehicle, write_sweep,
};
use roughride::comfort::HEALTH_CAUTION;
use roughride::design::vary::{Variation, VehicleDocument, expand};
use roughride::pipeline::RunOptions;
use roughride::plausibility::Severity;
use roughride::report::{FilePlan, write_to};
use roughride::road::iso8608::RoadClass;
use roughride::road::read_profile_csv;
use roughride::vehicle::read_vehicle;

/// Run a grid of cases (vehicle × road × speed × seed) in parallel and print
/// one CSV row per case, in a fixed order whatever --jobs.
///
/// Rows are nested vehicle, variant (--vary), road (classes, then profile
/// files), speed, seed (seed fastest). Generated roads use seeds 1..=N: the row for class C,
/// seed 2 at 20 m/s equals `roughride simulate --class C --seed 2 --speed
/// 20` with the same --length and --spacing. A profile file gives one row
/// per speed, with `class` and `seed` empty and `road` = the file as given.
///
/// --shard K/N runs the K-th of N contiguous slices; only shard 1 prints the
/// CSV header, so `cat` of the shards' outputs in order equals the unsharded
/// output byte for byte. A failed case is listed on stderr and the sweep goes
/// on; the exit status is then 1, with every good row written.
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride sweep --vehicle profiles/vehicles/demo_hatchback.toml --classes A,B,C,D --speeds 10:40:5 --seeds 3 --length 1000 -o grid.csv\n  \
roughride sweep --vehicle car.toml --classes B,C,D --speeds 15,25 --length 500 --vary rear.damping=*0.7:*1.3:*0.1 --vary rear.spring_rate=26000,30000,34000\n  \
roughride sweep --vehicle car.toml --profile lane1.csv --profile lane2.csv --speeds 36kmh:108kmh:18kmh --json\n  \
roughride sweep --vehicle car.toml --classes B,C,D --speeds 10:40:2 --seeds 20 --length 2000 --shard $SLURM_ARRAY_TASK_ID/16 -o part-$SLURM_ARRAY_TASK_ID.csv")]
pub struct Args {
    /// Vehicle file (TOML); repeat for several vehicles.
    #[arg(long, value_name = "FILE", required = true)]
    pub vehicle: Vec<PathBuf>,
    /// Vary a vehicle-file key over values, making one vehicle variant per
    /// value; repeat for a grid of every combination (the first --vary
    /// slowest). KEY: body.mass, body.pitch_inertia, front.KEY or rear.KEY
    /// (spring_rate, damping, damping_bump, damping_rebound, cg_distance,
    /// unsprung_mass, tyre_rate, tyre_damping, bump_clearance,
    /// rebound_clearance, stop_rate), seat.NAME.KEY or seat.N.KEY (x, height, and suspension.mass,
    /// suspension.rate, suspension.damping of a suspended seat). VALUES as for
    /// --speeds, in the file's SI units: start:end:step or a comma list; *F
    /// is F times the file's value (*0.8:*1.2:*0.1 is 80 % to 120 % in 10 %
    /// steps). Each row gets a column named KEY after `vehicle`.
    #[arg(long, value_name = "KEY=VALUES")]
    pub vary: Vec<String>,
    /// ISO 8608 road classes to generate, comma-separated (e.g. A,B,C).
    #[arg(long, value_name = "A,B,…", value_delimiter = ',', value_parser = parse_class,
          required_unless_present = "profile", requires = "length")]
    pub classes: Vec<RoadClass>,
    /// Road profile CSV (distance_m,elevation_m); repeat for several roads.
    #[arg(long, value_name = "FILE")]
    pub profile: Vec<PathBuf>,
    /// Speeds: start:end:step (inclusive) or a comma list; m/s, or km/h with a kmh suffix.
    #[arg(long, value_name = "SPEEDS", allow_hyphen_values = true, value_parser = parse_speeds)]
    pub speeds: Speeds,
    /// Seeds per generated road: seeds 1..=N (N up to 100000).
    #[arg(long, value_name = "N", default_value_t = 1, allow_hyphen_values = true,
          value_parser = count(1, limits::SEEDS.max as u64))]
    pub seeds: u64,
    /// Length of the generated roads, m.
    #[arg(long, value_name = "M", allow_hyphen_values = true, value_parser = quantity(&limits::ROAD_LENGTH))]
    pub length: Option<f64>,
    /// Sample spacing of the generated roads, m.
    #[arg(long, value_name = "M", default_value_t = 0.05, allow_hyphen_values = true,
          value_parser = quantity(&limits::SPACING))]
    pub spacing: f64,
    /// Worker threads, 1 to 1024 (default: all cores; never more than the
    /// cases). The output does not depend on it.
    #[arg(long, value_name = "N", allow_hyphen_values = true, value_parser = parse_jobs)]
    pub jobs: Option<usize>,
    /// Run only the K-th of N contiguous slices of the grid (e.g. 3/16).
    #[arg(long, value_name = "K/N", default_value = "1/1", value_parser = parse_shard)]
    pub shard: Shard,
    /// Leave out the CSV header line (shards 2..N never print it).
    #[arg(long)]
    pub no_header: bool,
    /// One JSON object per case and line (JSON Lines) instead of CSV.
    #[arg(long)]
    pub json: bool,
    /// Write to this file (atomically) instead of stdout.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    #[command(flatten)]
    pub run: SolverArgs,
}

/// Parsed `--speeds`, m/s (a newtype so clap keeps the list as one value).
#[derive(Debug, Clone)]
pub struct Speeds(pub Vec<f64>);

fn parse_speeds(s: &str) -> Result<Speeds, String> {
    parse_speed_list_m_s(s)
        .map(Speeds)
        .map_err(|e| e.to_string())
}

fn parse_class(s: &str) -> Result<RoadClass, String> {
    s.parse()
        .map_err(|e: roughride::road::ProfileError| e.to_string())
}

fn parse_jobs(s: &str) -> Result<usize, String> {
    roughride::batch::values::parse_jobs(s).map_err(|e| e.to_string())
}

fn parse_shard(s: &str) -> Result<Shard, String> {
    Shard::parse(s).map_err(|e| e.to_string())
}

/// Reads the vehicles and roads the arguments name (all input is checked
/// here, before any case runs).
fn build_grid(a: &Args) -> Result<Grid, Error> {
    let variations = a
        .vary
        .iter()
        .map(|v| Variation::parse(v))
        .collect::<Result<Vec<_>, Error>>()?;
    let mut vehicles = Vec::new();
    for p in &a.vehicle {
        let file = p.display().to_string();
        if variations.is_empty() {
            vehicles.push(SweepVehicle::new(file, read_vehicle(p)?));
            continue;
        }
        let doc = VehicleDocument::read(p)?;
        for variant in expand(&doc, &variations)? {
            vehicles.push(SweepVehicle {
                file: file.clone(),
                vehicle: variant.vehicle,
                varied: variant.values,
            });
        }
    }
    let mut roads: Vec<RoadSource> = a.classes.iter().map(|c| RoadSource::Class(*c)).collect();
    for p in &a.profile {
        let (profile, warnings) = read_profile_csv(p)?;
        for w in warnings {
            eprintln!("roughride: warning: {}: {w}", p.display());
        }
        roads.push(RoadSource::File {
            label: p.display().to_string(),
            profile: Arc::new(profile),
        });
    }
    let length_m = match (a.length, a.classes.is_empty()) {
        (Some(l), _) => l,
        (None, true) => 0.0, // unused: no generated road
        (None, false) => return Err(Error::Usage("sweep: --classes needs --length (m)".into())),
    };
    let grid = Grid {
        vehicles,
        varied_keys: variations.iter().map(|v| v.key.to_string()).collect(),
        roads,
        speeds_m_s: a.speeds.0.clone(),
        seeds: a.seeds,
        geometry: RoadGeometry {
            length_m,
            spacing_m: a.spacing,
        },
    };
    grid.validate()?;
    Ok(grid)
}

pub fn run(a: Args) -> Result<(), Error> {
    FilePlan::new()
        .inputs("--vehicle", &a.vehicle)
        .inputs("--profile", &a.profile)
        .output("-o", a.output.as_deref())
        .check()?;
    let grid = build_grid(&a)?;
    let (lo, hi) = a.shard.bounds(grid.len());
    // No more threads than cases: idle threads cost start-up time and memory.
    let jobs = a
        .jobs
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()))
        .min(hi - lo)
        .max(1);
    let options = RunOptions {
        speed_m_s: 1.0, // each case sets its own
        solver: a.run.settings(),
        weighting: a.run.weighting,
        // Everything else as `simulate` has it by default.
        ..RunOptions::at_speed(1.0)
    };
    let runner = Runner::new(options, jobs);
    let progress = progress_bar((hi - lo) as u64);
    let spec = OutputSpec {
        format: if a.json {
            Format::JsonLines
        } else {
            Format::Csv
        },
        header: a.shard.index == 1 && !a.no_header,
        target: a.output.as_deref().unwrap_or(Path::new("<stdout>")),
    };
    let mut report = None;
    // The file is committed when every case has been tried, failed cases
    // included (their rows are missing and listed below). It is discarded,
    // leaving any previous file as it was, when the sweep itself stops
    // (write error, interruption) or when no case completed.
    let written = write_to(a.output.as_deref(), |out| {
        let r = write_sweep(&grid, a.shard, &runner, spec, out, |_, _| progress.inc(1))?;
        let nothing = r.rows == 0 && !r.failures.is_empty();
        let failed = cases_failed(&r);
        report = Some(r);
        match failed {
            Some(e) if nothing => Err(e),
            _ => Ok::<(), Error>(()),
        }
    });
    progress.finish_and_clear();
    let Some(report) = report else { return written };
    tell(&report, a.output.as_deref());
    written?;
    // Exit status 1 for failed or implausible cases (the documented exit
    // statuses: 1 for anything but bad input).
    cases_failed(&report).map_or(Ok(()), Err)
}

/// Tells on stderr what the user must know of a finished sweep: the
/// caution, every flagged finding and failed case, and a kept file.
fn tell(report: &roughride::batch::SweepReport, output: Option<&Path>) {
    eprintln!("roughride: note: {HEALTH_CAUTION}");
    for f in &report.flagged {
        for finding in &f.findings {
            let what = match finding.severity {
                Severity::Warning => "warning",
                Severity::Implausible => "implausible (row flagged, not a result)",
            };
            eprintln!("roughride: {what}: {}: {}", f.description, finding.message);
        }
    }
    for f in &report.failures {
        eprintln!("roughride: failed: {}: {}", f.description, f.error);
    }
    if report.rows == 0 && !report.failures.is_empty() {
        if let Some(path) = output {
            eprintln!(
                "roughride: note: no case completed, so {} was not written (a previous file is kept)",
                path.display()
            );
        }
    }
}

/// The error for a sweep in which some cases failed or gave results that
/// cannot be right, if any did.
fn cases_failed(r: &roughride::batch::SweepReport) -> Option<Error> {
    let implausible = r.implausible();
    (!r.failures.is_empty() || implausible > 0).then(|| Error::CasesFailed {
        failed: r.failures.len(),
        implausible,
        total: r.bounds.1 - r.bounds.0,
    })
}

/// A progress bar on stderr when stderr is a terminal, hidden otherwise
/// (so logs of scripts and job arrays stay clean).
pub(super) fn progress_bar(len: u64) -> indicatif::ProgressBar {
    if !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::with_draw_target(
        Some(len),
        indicatif::ProgressDrawTarget::stderr(),
    );
    if let Ok(style) = indicatif::ProgressStyle::with_template(
        "{elapsed_precise} [{wide_bar}] {pos}/{len} cases, {per_sec}, eta {eta}",
    ) {
        bar.set_style(style);
    }
    bar
}
