//! `roughride tune`: search the values of vehicle-file keys, within bounds,
//! that minimise a seat's comfort measure under limits; print the optimum,
//! the values at the start and there, the history of the best, and write
//! the tuned vehicle file with -o.

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use clap::Args as ClapArgs;
use serde::Serialize;

use super::options::SolverArgs;

use roughride::Error;
use roughride::batch::values::parse_speed_list_m_s;
use roughride::comfort::HEALTH_CAUTION;
use roughride::design::tune::problem::{
    Limit, Measure, Objective, Over, Study, StudyRoad, parse_parameters,
};
use roughride::design::tune::search::SearchSettings;
use roughride::design::tune::{DesignValues, Method, Problem, TuneReport, tune};
use roughride::design::vary::VehicleDocument;
use roughride::pipeline::RunOptions;
use roughride::report::{FilePlan, Table, json_line, print_stdout, sig, write_atomic};
use roughride::road::iso8608::RoadClass;
use roughride::road::read_profile_csv;

/// Find the values of some vehicle-file keys, within bounds, that minimise
/// a seat's ride measure over roads and speeds, under limits on travel,
/// tyre load and time off the ground.
///
/// The objective is by default the mean aw (ISO 2631-1) of the first seat
/// over the cases (road × seed × speed, as `sweep` nests them). For a
/// linear vehicle on generated roads the search judges designs by the
/// frequency-domain prediction that `simulate` prints; the start and the
/// optimum are always run in the time domain too, and `objective` /
/// `start_objective` are those time-domain values. The search is COBYLA
/// (derivative-free, bounded, deterministic) from the file's design and
/// further starting points. With -o the tuned vehicle file is written
/// (atomically, only on success): the input file with the tuned numbers,
/// comments kept, which `simulate` reads as it is.
///
/// Exit status 2 for bad input, including limits that no design within the
/// bounds meets (nothing is written then).
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride tune --vehicle car.toml --vary rear.damping=1000:5000 --classes C --speeds 15,25 --length 500\n  \
roughride tune --vehicle bus.toml --vary rear.damping=*0.5:*2 --vary rear.spring_rate=*0.7:*1.3 --classes B,C,D --speeds 36kmh:90kmh:18kmh --length 1000 --limit travel_p99_rear_m=0.045 -o bus_tuned.toml\n  \
roughride tune --vehicle van.toml --vary front.damping_rebound=3000:9000 --profile lane.csv --speeds 20 --measure vdv --json")]
pub struct Args {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    /// A parameter and its bounds: KEY=LO:HI (keys as for sweep --vary;
    /// *F is F times the file's value, e.g. rear.damping=*0.5:*2). Repeat
    /// for several parameters. The search starts from the file's value.
    #[arg(long, value_name = "KEY=LO:HI", required = true)]
    pub vary: Vec<String>,
    /// ISO 8608 road classes to generate, comma-separated (e.g. B,C,D).
    #[arg(long, value_name = "A,B,…", value_delimiter = ',', value_parser = parse_class,
          required_unless_present = "profile", requires = "length")]
    pub classes: Vec<RoadClass>,
    /// Road profile CSV (distance_m,elevation_m); repeat for several roads.
    #[arg(long, value_name = "FILE")]
    pub profile: Vec<PathBuf>,
    /// Speeds: start:end:step (inclusive) or a comma list; m/s, or km/h with a kmh suffix.
    #[arg(long, value_name = "SPEEDS", value_parser = parse_speeds)]
    pub speeds: Speeds,
    /// Weights of the speeds in the mean, comma-separated, one per speed (default all 1).
    #[arg(long, value_name = "W,…", value_delimiter = ',')]
    pub speed_weights: Vec<f64>,
    /// Seeds per generated road: seeds 1..=N.
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seeds: u64,
    /// Length of the generated roads, m.
    #[arg(long, value_name = "M")]
    pub length: Option<f64>,
    /// Sample spacing of the generated roads, m.
    #[arg(long, value_name = "M", default_value_t = 0.05)]
    pub spacing: f64,
    /// Seat of the objective: its name or 1-based position (default the first).
    #[arg(long, value_name = "SEAT")]
    pub seat: Option<String>,
    /// Measure minimised: aw (ISO 2631-1 weighted r.m.s., vertical, at the seat surface
    /// of a suspended seat), vdv (time domain only), or total-value (the comfort total
    /// value of the vertical and fore-aft aw, ISO 2631-1 6.5).
    #[arg(long, default_value = "aw", value_parser = parse_measure)]
    pub measure: Measure,
    /// Combine the cases by their (weighted) mean or take the worst case.
    #[arg(long, default_value = "mean", value_parser = parse_over)]
    pub over: Over,
    /// An upper limit every case must meet, NAME=MAX with NAME a sweep
    /// column: travel_rms_AXLE_m, travel_p99_AXLE_m,
    /// time_past_bump_fraction_AXLE, dynamic_load_coefficient_AXLE,
    /// time_off_ground_fraction_AXLE (AXLE front or rear). Repeatable.
    #[arg(long, value_name = "NAME=MAX")]
    pub limit: Vec<String>,
    /// How the search judges designs: auto (spectral when it applies), spectral, or time.
    #[arg(long, default_value = "auto", value_parser = parse_method)]
    pub method: Method,
    /// Search runs: the file's design, then spread-out starting points.
    #[arg(long, value_name = "N", default_value_t = 4)]
    pub starts: usize,
    /// Most designs the search evaluates.
    #[arg(long, value_name = "N", default_value_t = 400)]
    pub max_evaluations: usize,
    /// Worker threads for the time-domain runs (default: all cores).
    #[arg(long, value_name = "N",
          value_parser = |s: &str| roughride::batch::values::parse_jobs(s).map_err(|e| e.to_string()))]
    pub jobs: Option<usize>,
    /// Print one JSON object instead of the tables.
    #[arg(long)]
    pub json: bool,
    /// Write the tuned vehicle file here (atomically).
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

fn parse_measure(s: &str) -> Result<Measure, String> {
    match s {
        "aw" => Ok(Measure::Aw),
        "vdv" => Ok(Measure::Vdv),
        "total-value" | "total_value" => Ok(Measure::TotalValue),
        _ => Err(format!(
            "unknown measure {s:?}: give aw, vdv or total-value"
        )),
    }
}

fn parse_over(s: &str) -> Result<Over, String> {
    match s {
        "mean" => Ok(Over::Mean),
        "worst" => Ok(Over::Worst),
        _ => Err(format!("unknown combination {s:?}: give mean or worst")),
    }
}

fn parse_method(s: &str) -> Result<Method, String> {
    match s {
        "auto" => Ok(Method::Auto),
        "spectral" => Ok(Method::Spectral),
        "time" => Ok(Method::TimeDomain),
        _ => Err(format!("unknown method {s:?}: give auto, spectral or time")),
    }
}

/// The cases of the arguments (roads read and checked here).
fn study(a: &Args, wheelbase_m: f64) -> Result<Study, Error> {
    let mut roads: Vec<StudyRoad> = a.classes.iter().map(|c| StudyRoad::Class(*c)).collect();
    for p in &a.profile {
        let (profile, warnings) = read_profile_csv(p)?;
        for w in warnings {
            eprintln!("roughride: warning: {}: {w}", p.display());
        }
        if profile.length_m() < wheelbase_m {
            return Err(Error::Usage(format!(
                "{}: the profile ({:.3} m) is shorter than the wheelbase ({wheelbase_m:.3} m)",
                p.display(),
                profile.length_m()
            )));
        }
        roads.push(StudyRoad::Profile {
            label: p.display().to_string(),
            profile: Arc::new(profile),
        });
    }
    let weights = match a.speed_weights.len() {
        0 => vec![1.0; a.speeds.0.len()],
        n if n == a.speeds.0.len() => a.speed_weights.clone(),
        n => {
            return Err(Error::Usage(format!(
                "--speed-weights: {n} weights for {} speeds",
                a.speeds.0.len()
            )));
        }
    };
    if weights.iter().any(|w| !(w.is_finite() && *w >= 0.0)) || weights.iter().all(|w| *w == 0.0) {
        return Err(Error::Usage(
            "--speed-weights: weights must be finite, not negative, and not all zero".into(),
        ));
    }
    if a.seeds == 0 {
        return Err(Error::Usage("--seeds must be at least 1".into()));
    }
    let length_m = a.length.unwrap_or(0.0);
    if !a.classes.is_empty() {
        roughride::road::iso8608::RoadSpec::from_class(RoadClass::C, length_m, a.spacing, 1)
            .validate()
            .map_err(|e| Error::Usage(format!("tune: --length/--spacing: {e}")))?;
        if length_m < wheelbase_m {
            return Err(Error::Usage(format!(
                "--length: the road ({length_m:.3} m) is shorter than the wheelbase ({wheelbase_m:.3} m)"
            )));
        }
    }
    Ok(Study {
        roads,
        seeds: a.seeds,
        length_m,
        spacing_m: a.spacing,
        speeds: a.speeds.0.iter().copied().zip(weights).collect(),
        spectral_band_cycle_m: None,
    })
}

/// The problem the arguments describe (every input checked here).
fn problem<'a>(a: &Args, doc: &'a VehicleDocument) -> Result<Problem<'a>, Error> {
    let limits = a
        .limit
        .iter()
        .map(|l| Limit::parse(doc, l))
        .collect::<Result<Vec<_>, _>>()?;
    let jobs = match a.jobs {
        Some(0) => return Err(Error::Usage("--jobs must be at least 1".into())),
        Some(n) => n,
        None => std::thread::available_parallelism().map_or(1, |n| n.get()),
    };
    if a.starts == 0 || a.max_evaluations == 0 {
        return Err(Error::Usage(
            "--starts and --max-evaluations must be at least 1".into(),
        ));
    }
    Ok(Problem {
        doc,
        parameters: parse_parameters(doc, &a.vary)?,
        objective: Objective::new(doc, a.seat.as_deref(), a.measure, a.over)?,
        study: study(a, doc.vehicle().wheelbase_m())?,
        limits,
        options: RunOptions {
            solver: a.run.settings(),
            weighting: a.run.weighting,
            ..RunOptions::at_speed(1.0)
        },
        method: a.method,
        search: SearchSettings {
            starts: a.starts,
            max_evaluations: a.max_evaluations,
            ..SearchSettings::default()
        },
        jobs,
        confirm: true,
    })
}

pub fn run(a: Args) -> Result<(), Error> {
    FilePlan::new()
        .input("--vehicle", &a.vehicle)
        .inputs("--profile", &a.profile)
        .output("-o", a.output.as_deref())
        .check()?;
    let doc = VehicleDocument::read(&a.vehicle)?;
    let problem = problem(&a, &doc)?;
    let bar = progress_bar(a.max_evaluations as u64);
    let report = tune(&problem, |done, _| bar.set_position(done as u64));
    bar.finish_and_clear();
    let report = report?;
    if let Some(path) = &a.output {
        write_atomic(path, |w| {
            w.write_all(report.tuned_file.as_bytes())
                .map_err(|e| roughride::report::io_error(path, e))
        })?;
    }
    for w in &report.warnings {
        eprintln!("roughride: warning: {w}");
    }
    if a.json {
        print_stdout(&json_line(
            &Output {
                report: &report,
                output: a.output.as_deref().map(|p| p.display().to_string()),
                caution: HEALTH_CAUTION,
            },
            "tune result",
        )?)?;
    } else {
        print_stdout(&render(&report, a.output.as_deref()))?;
    }
    Ok(())
}

#[derive(Serialize)]
struct Output<'a> {
    #[serde(flatten)]
    report: &'a TuneReport,
    /// The tuned vehicle file written, if any.
    output: Option<String>,
    caution: &'static str,
}

/// A progress bar on stderr when stderr is a terminal, hidden otherwise.
fn progress_bar(len: u64) -> indicatif::ProgressBar {
    if !std::io::stderr().is_terminal() {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::with_draw_target(
        Some(len),
        indicatif::ProgressDrawTarget::stderr(),
    );
    if let Ok(style) = indicatif::ProgressStyle::with_template(
        "{elapsed_precise} [{wide_bar}] {pos}/{len} designs (at most), {per_sec}",
    ) {
        bar.set_style(style);
    }
    bar
}

fn limit_rows(t: &mut Table, label: &str, d: &[(&str, &DesignValues)]) {
    let Some((_, first)) = d.first() else { return };
    for (i, l) in first.limits.iter().enumerate() {
        let mut row = vec![format!("{} ≤ {}", l.name, sig(l.max, 4)), label.to_string()];
        for (_, v) in d {
            let x = &v.limits[i];
            let flag = if !x.met {
                " (exceeded)"
            } else if x.binding {
                " (binds)"
            } else {
                ""
            };
            row.push(format!("{}{flag}", sig(x.value, 4)));
        }
        t.row(row);
    }
}

fn render(r: &TuneReport, output: Option<&Path>) -> String {
    let method = match r.method {
        Method::Spectral => "frequency-domain prediction, confirmed in the time domain",
        _ => "time-domain runs",
    };
    let mut out = format!(
        "Tune of {}: {}\n  {} evaluations in {} search runs ({method}); {} time-domain cases per design\n\n",
        r.vehicle, r.objective_description, r.evaluations, r.starts, r.cases
    );
    let mut p = Table::new("Parameters").with_header(["key", "lo", "hi", "start", "best"]);
    for q in &r.parameters {
        p.row([
            q.key.clone(),
            fmt(q.lo),
            fmt(q.hi),
            fmt(q.start),
            sig(q.best, 6),
        ]);
    }
    for table in [p, objective_table(r), history_table(r)] {
        out.push_str(&table.render());
        out.push('\n');
    }
    if let Some(path) = output {
        out.push_str(&format!("Tuned vehicle file: {}\n\n", path.display()));
    }
    out.push_str(&format!("{HEALTH_CAUTION}\n"));
    out
}

/// Objective and limits at the start and the optimum, as predicted (spectral
/// method) and in the time domain.
fn objective_table(r: &TuneReport) -> Table {
    let mut t = Table::new("Objective and limits (limits: the largest case)").with_header([
        "quantity",
        "judged by",
        "start",
        "best",
    ]);
    let mut rows: Vec<(&str, &DesignValues, &DesignValues)> = Vec::new();
    if let Some(s) = &r.spectral {
        rows.push(("spectral", &s.start, &s.optimum));
    }
    rows.push(("time domain", &r.start, &r.optimum));
    for (label, s, b) in &rows {
        t.row([
            "objective".to_string(),
            label.to_string(),
            sig(s.objective, 4),
            sig(b.objective, 4),
        ]);
    }
    for (label, s, b) in &rows {
        limit_rows(&mut t, label, &[("start", s), ("best", b)]);
    }
    if r.binding.is_empty() {
        t.note("No limit binds at the optimum.");
    } else {
        t.note(format!("Binding at the optimum: {}.", r.binding.join(", ")));
    }
    t
}

/// Every improvement of the best value.
fn history_table(r: &TuneReport) -> Table {
    let mut header = vec!["evaluation".to_string(), "objective".to_string()];
    header.extend(r.parameters.iter().map(|q| q.key.clone()));
    let mut h = Table::new("History of the best (as the search judged it)").with_header(header);
    for e in &r.history {
        let mut row = vec![e.evaluation.to_string(), sig(e.objective, 5)];
        row.extend(r.parameters.iter().map(|q| {
            e.values
                .get(&q.key)
                .and_then(|v| v.as_f64())
                .map_or(String::new(), |x| sig(x, 6))
        }));
        h.row(row);
    }
    h
}

fn fmt(x: f64) -> String {
    format!("{x}")
}
