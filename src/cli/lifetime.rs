//! `roughride lifetime`: a vehicle's life from a usage file (parts of road,
//! speed and load with their shares of the distance), every part run as
//! `simulate` runs it, the counts scaled to the life: load spectra per axle,
//! damage shares per part, time past the stops, seat exposure.

use std::path::PathBuf;

use clap::Args as ClapArgs;
use serde::Serialize;

use super::options::SolverArgs;

use roughride::Error;
use roughride::batch::ordered::Pool;
use roughride::batch::values::{Shard, parse_duration_s};
use roughride::lifetime::partial::{self, PartialWriter};
use roughride::lifetime::spectra::{LifeReport, ReportSettings, TimeReport};
use roughride::lifetime::{CaseResult, LifeTotals, Settings, Usage, cases, read_usage, run_cases};
use roughride::report::{FilePlan, Table, io_error, json_line, print_stdout, sig, write_atomic};
use roughride::stats::ResidueMethod;

/// Combine road classes, speeds and distance shares into one load spectrum
/// for the vehicle's whole life.
///
/// The usage file (TOML) gives the life distance (target_km), the vehicle,
/// and one [[part]] per kind of driving: its share of the distance (or km),
/// its speed (or speeds with shares), its roads (an ISO 8608 class with
/// seeds and length, or profile files) and optionally its own vehicle file
/// (a load case). Every run goes through the same pipeline as `simulate`;
/// its rainflow cycles, level crossings and times are scaled by (its
/// distance in the life) / (its simulated length) and summed.
///
/// For job arrays: `--shard K/N --partial part-K.jsonl` runs the K-th of N
/// slices and writes its unscaled counts; `--combine part-*.jsonl` then
/// sums them in case order, giving exactly the unsharded result.
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride lifetime --usage profiles/usage/delivery_van.toml\n  \
roughride lifetime --usage life.toml --json --matrix life_matrix.csv --exceedance life_exceedance.csv\n  \
roughride lifetime --usage life.toml --shard $SLURM_ARRAY_TASK_ID/16 --partial part-$SLURM_ARRAY_TASK_ID.jsonl\n  \
roughride lifetime --usage life.toml --combine part-*.jsonl --json\n\n\
Seat values are estimates from a model, not measurements: ISO 2631-1, local regulation and\n\
qualified practice govern.")]
pub struct Args {
    /// Usage file (TOML): target_km, vehicle, [[part]] tables.
    #[arg(long, value_name = "FILE")]
    pub usage: PathBuf,
    /// Print one JSON object instead of the tables.
    #[arg(long)]
    pub json: bool,
    /// Write the life's rainflow range–mean matrices (CSV, the columns of `simulate --rainflow`).
    #[arg(long, value_name = "FILE")]
    pub matrix: Option<PathBuf>,
    /// Write the exceedance spectra, one series per part and the total (CSV).
    #[arg(long, value_name = "FILE")]
    pub exceedance: Option<PathBuf>,
    /// Write the life's level-crossing spectra (CSV).
    #[arg(long, value_name = "FILE")]
    pub crossings: Option<PathBuf>,
    /// S–N exponents for the damage-equivalent ranges, comma-separated.
    #[arg(long, value_name = "M,…", value_delimiter = ',', default_values = ["3", "5"],
          allow_hyphen_values = true)]
    pub sn_exponent: Vec<String>,
    /// Reference number of cycles of the damage-equivalent ranges.
    #[arg(
        long,
        value_name = "N",
        default_value_t = 1e6,
        allow_hyphen_values = true
    )]
    pub reference_cycles: f64,
    /// Rainflow residue of each run: half (ASTM E1049-85 half cycles) or
    /// repeat (the simulated road repeats: close the residue).
    #[arg(long, default_value = "half", value_parser = parse_residue)]
    pub residue: ResidueMethod,
    /// Daily exposure for the seats' ISO 2631-1 health guidance: 8h, 30min, 3600s.
    #[arg(long, value_name = "DURATION", default_value = "8h", allow_hyphen_values = true,
          value_parser = parse_duration)]
    pub exposure: f64,
    /// Worker threads (default: all cores). The result does not depend on it.
    #[arg(long, value_name = "N", allow_hyphen_values = true,
          value_parser = |s: &str| roughride::batch::values::parse_jobs(s).map_err(|e| e.to_string()))]
    pub jobs: Option<usize>,
    /// Run only the K-th of N contiguous slices of the runs (needs --partial).
    #[arg(long, value_name = "K/N", default_value = "1/1", value_parser = parse_shard)]
    pub shard: Shard,
    /// Write this run's unscaled counts (JSON Lines) for a later --combine.
    #[arg(long, value_name = "FILE")]
    pub partial: Option<PathBuf>,
    /// Sum the partial files of every shard instead of running.
    #[arg(long, value_name = "FILE", num_args = 1.., conflicts_with_all = ["partial", "jobs"])]
    pub combine: Vec<PathBuf>,
    #[command(flatten)]
    pub run: SolverArgs,
}

fn parse_residue(s: &str) -> Result<ResidueMethod, String> {
    s.parse()
}

fn parse_duration(s: &str) -> Result<f64, String> {
    parse_duration_s(s).map_err(|e| e.to_string())
}

fn parse_shard(s: &str) -> Result<Shard, String> {
    Shard::parse(s).map_err(|e| e.to_string())
}

/// The exponents as written and as numbers.
fn exponents(texts: &[String]) -> Result<Vec<(String, f64)>, Error> {
    let mut out: Vec<(String, f64)> = Vec::new();
    for t in texts {
        let t = t.trim().to_string();
        let m: f64 = t
            .parse()
            .ok()
            .filter(|m: &f64| m.is_finite() && *m > 0.0)
            .ok_or_else(|| {
                Error::Usage(format!(
                    "--sn-exponent {t:?}: expected positive numbers, e.g. 3,5"
                ))
            })?;
        if out.iter().any(|(_, x)| *x == m) {
            return Err(Error::Usage(format!("--sn-exponent {t:?} is given twice")));
        }
        out.push((t, m));
    }
    Ok(out)
}

/// What a shard run prints.
#[derive(Debug, Serialize)]
struct ShardOutput {
    partial: String,
    shard: String,
    cases: [usize; 2],
    cases_total: usize,
}

pub fn run(a: Args) -> Result<(), Error> {
    check_outputs(&a, &[])?;
    let usage = read_usage(&a.usage)?;
    // The files the usage file names are inputs too.
    check_outputs(&a, &usage.inputs)?;
    for w in &usage.warnings {
        eprintln!("roughride: warning: {w}");
    }
    let exps = exponents(&a.sn_exponent)?;
    if !(a.reference_cycles.is_finite() && a.reference_cycles > 0.0) {
        return Err(Error::Usage(format!(
            "--reference-cycles must be a positive number, got {}",
            a.reference_cycles
        )));
    }
    let settings = Settings::new(
        a.run.settings(),
        a.run.weighting,
        exps.iter().map(|e| e.1).collect(),
        a.residue,
    );
    roughride::lifetime::cases::preflight(&usage, &settings)?;
    let Some(totals) = run_or_combine(&a, &usage, &settings)? else {
        return Ok(());
    };
    let report = totals.report(
        &usage,
        &settings,
        &ReportSettings {
            exponent_names: exps.iter().map(|e| e.0.clone()).collect(),
            reference_cycles: a.reference_cycles,
            exposure_s: a.exposure,
        },
    );
    write_files(&a, &totals, &usage)?;
    for w in &report.warnings {
        eprintln!("roughride: note: {w}");
    }
    if a.json {
        print_stdout(&json_line(&report, "lifetime summary")?)?;
    } else {
        print_stdout(&render(&report))?;
    }
    Ok(())
}

/// Refuses outputs that are one of the inputs (the usage file, the
/// partial files to combine, `more`) or each other.
fn check_outputs(a: &Args, more: &[PathBuf]) -> Result<(), Error> {
    FilePlan::new()
        .input("--usage", &a.usage)
        .inputs("--combine", &a.combine)
        .inputs("a file the usage file names", more)
        .output("--matrix", a.matrix.as_deref())
        .output("--exceedance", a.exceedance.as_deref())
        .output("--crossings", a.crossings.as_deref())
        .output("--partial", a.partial.as_deref())
        .check()?;
    Ok(())
}

/// Runs the cases (all, or a shard's) or combines partial files; the
/// life's totals, or `None` for a shard (whose result is its partial file).
fn run_or_combine(
    a: &Args,
    usage: &Usage,
    settings: &Settings,
) -> Result<Option<LifeTotals>, Error> {
    let all = cases(usage);
    let mut totals = LifeTotals::new(usage, settings);
    if !a.combine.is_empty() {
        partial::combine(&a.combine, usage, settings, all.len(), |r| {
            totals.add(usage, &all[r.index], &r);
            Ok(())
        })?;
        return Ok(Some(totals));
    }
    let sharded = a.shard != Shard::ALL;
    if sharded && a.partial.is_none() {
        return Err(Error::Usage(
            "--shard needs --partial FILE: a shard writes its partial result, and --combine sums the shards' files".into(),
        ));
    }
    let bounds = a.shard.bounds(all.len());
    let jobs = match a.jobs {
        Some(0) => return Err(Error::Usage("--jobs must be at least 1".into())),
        Some(n) => n,
        None => std::thread::available_parallelism().map_or(1, |n| n.get()),
    };
    let pool = Pool::new(jobs);
    let progress = super::sweep::progress_bar((bounds.1 - bounds.0) as u64);
    let mut add = |r: &CaseResult| {
        if !sharded {
            totals.add(usage, &all[r.index], r);
        }
        progress.inc(1);
    };
    match &a.partial {
        Some(path) => write_atomic(path, |w| {
            let mut out = PartialWriter::start(w, path, usage, settings, all.len(), bounds)?;
            run_cases(usage, settings, bounds, &pool, |r| {
                out.case(&r)?;
                add(&r);
                Ok(())
            })
        })?,
        None => run_cases(usage, settings, bounds, &pool, |r| {
            add(&r);
            Ok(())
        })?,
    }
    progress.finish_and_clear();
    if sharded {
        print_shard(a, bounds, all.len())?;
        return Ok(None);
    }
    Ok(Some(totals))
}

fn write_files(a: &Args, totals: &LifeTotals, usage: &Usage) -> Result<(), Error> {
    if let Some(path) = &a.matrix {
        write_atomic(path, |w| {
            totals.write_matrix(w).map_err(|e| io_error(path, e))
        })?;
    }
    if let Some(path) = &a.exceedance {
        write_atomic(path, |w| {
            totals
                .write_exceedance(usage, w)
                .map_err(|e| io_error(path, e))
        })?;
    }
    if let Some(path) = &a.crossings {
        write_atomic(path, |w| {
            totals.write_crossings(w).map_err(|e| io_error(path, e))
        })?;
    }
    Ok(())
}

fn print_shard(a: &Args, bounds: (usize, usize), total: usize) -> Result<(), Error> {
    let out = ShardOutput {
        partial: a
            .partial
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_default(),
        shard: format!("{}/{}", a.shard.index, a.shard.count),
        cases: [bounds.0, bounds.1],
        cases_total: total,
    };
    if a.json {
        print_stdout(&json_line(&out, "shard summary")?)?;
    } else {
        print_stdout(&format!(
            "shard {}: runs {}..{} of {} written to {} (combine every shard's file with --combine)\n",
            out.shard, bounds.0, bounds.1, total, out.partial
        ))?;
    }
    Ok(())
}

fn render(r: &LifeReport) -> String {
    let mut out = format!(
        "{}: a life of {} km, {} runs over {} km of road; residue: {}\n\n",
        r.title.clone().unwrap_or_else(|| r.usage.clone()),
        sig(r.target_km, 6),
        r.cases,
        sig(r.simulated_km, 4),
        if r.residue == "half" {
            "half cycles (ASTM E1049-85)"
        } else {
            "closed as for a repeating road"
        }
    );
    out.push_str(&render_parts(r));
    out.push_str(&render_loads(r));
    out.push_str(&render_shares(r));
    out.push_str(&render_times(r));
    out.push_str(&render_seats(r));
    out
}

fn render_parts(r: &LifeReport) -> String {
    let mut t = Table::new("Parts of the life").with_header([
        "part",
        "share",
        "km",
        "vehicle",
        "road (class)",
        "speeds",
        "runs",
        "simulated km",
    ]);
    for p in &r.parts {
        let road = match &p.road {
            roughride::lifetime::spectra::RoadReport::Class {
                class,
                seeds,
                length_m,
                ..
            } => format!("{class}, {seeds} × {} m", sig(*length_m, 4)),
            roughride::lifetime::spectra::RoadReport::Profiles { profiles } => profiles.join(" "),
        };
        let speeds = p
            .speeds
            .iter()
            .map(|s| {
                if p.speeds.len() == 1 {
                    s.speed.clone()
                } else {
                    format!("{} ({})", s.speed, sig(s.share, 3))
                }
            })
            .collect::<Vec<_>>()
            .join(", ");
        t.row([
            p.name.clone(),
            sig(p.share, 4),
            sig(p.km, 6),
            // The file name alone keeps the table narrow; the JSON has the path.
            std::path::Path::new(&p.vehicle)
                .file_name()
                .map_or_else(|| p.vehicle.clone(), |n| n.to_string_lossy().into_owned()),
            road,
            speeds,
            p.cases.to_string(),
            sig(p.simulated_km, 4),
        ]);
    }
    t.render() + "\n"
}

fn render_loads(r: &LifeReport) -> String {
    let mut header = vec!["axle".to_string(), "quantity".into(), "life cycles".into()];
    for m in &r.sn_exponents {
        header.push(format!("S_eq m={m}"));
    }
    let mut t = Table::new(format!(
        "Life load spectra (rainflow, ASTM E1049-85; damage-equivalent ranges over {} cycles, Palmgren–Miner)",
        sig(r.reference_cycles, 4)
    ))
    .with_header(header);
    for (axle, a) in [("front", &r.axles.front), ("rear", &r.axles.rear)] {
        for (name, l) in [
            ("travel mm", &a.travel),
            ("suspension force N", &a.force),
            ("tyre load N", &a.tyre_load),
        ] {
            let scale = if l.unit == "m" { 1e3 } else { 1.0 };
            let mut row = vec![axle.to_string(), name.to_string(), sig(l.cycles, 4)];
            row.extend(
                l.damage_equivalent_range
                    .0
                    .iter()
                    .map(|(_, v)| sig(v * scale, 4)),
            );
            t.row(row);
        }
    }
    t.render() + "\n"
}

fn render_shares(r: &LifeReport) -> String {
    let mut header = vec!["part".to_string()];
    for axle in ["front", "rear"] {
        for m in &r.sn_exponents {
            header.push(format!("{axle} m={m} %"));
        }
    }
    let mut t = Table::new("Share of the suspension-force damage by part").with_header(header);
    for p in &r.parts {
        let mut row = vec![p.name.clone()];
        for a in [&p.axles.front, &p.axles.rear] {
            row.extend(
                a.force
                    .damage_share
                    .0
                    .iter()
                    .map(|(_, v)| sig(v * 100.0, 3)),
            );
        }
        t.row(row);
    }
    t.render() + "\n"
}

fn render_times(r: &LifeReport) -> String {
    let mut t =
        Table::new("Time past the stops and off the ground: s per 1000 km / s over the life")
            .with_header(["axle", "past bump", "past rebound", "off ground"]);
    let cell = |x: &Option<TimeReport>| {
        x.as_ref().map_or("-".to_string(), |x| {
            format!("{} / {}", sig(x.per_1000km_s, 3), sig(x.life_s, 3))
        })
    };
    for (axle, a) in [("front", &r.axles.front), ("rear", &r.axles.rear)] {
        t.row([
            axle.to_string(),
            cell(&a.time_past_bump),
            cell(&a.time_past_rebound),
            cell(&Some(a.time_off_ground.clone())),
        ]);
    }
    t.render() + "\n"
}

fn render_seats(r: &LifeReport) -> String {
    let mut t = Table::new(format!(
        "Seats per part (ISO 2631-1; a day of {} h spent on the part)",
        sig(r.exposure_s / 3600.0, 3)
    ))
    .with_header([
        "part",
        "seat",
        "aw m/s²",
        "total value m/s²",
        "daily VDV m/s^1.75",
        "A(8) m/s²",
        "A(8) status",
        "comfort reaction",
    ]);
    for p in &r.parts {
        for s in &p.seats {
            t.row([
                p.name.clone(),
                s.name.clone(),
                sig(s.aw, 3),
                sig(s.total_value, 3),
                sig(s.vdv_exposure, 3),
                sig(s.a8, 3),
                s.a8_status.to_string(),
                s.comfort.clone(),
            ]);
        }
    }
    t.note(r.caution);
    t.render()
}
