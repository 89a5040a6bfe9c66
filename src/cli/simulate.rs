//! `roughride simulate`: one vehicle over one road at one speed.

use std::path::PathBuf;

use clap::Args as ClapArgs;

use super::options::{SolverArgs, quantity};
use roughride::limits;
use serde::Serialize;

use roughride::Error;
use roughride::batch::values::parse_speed_m_s;
use roughride::comfort::HEALTH_CAUTION;
use roughride::pipeline::{self, Durability, RunOptions, RunSummary};
use roughride::report::{
    AtomicFile, FilePlan, Table, fmt_cycles, io_error, json_line, print_stdout, sig, write_atomic,
};
use roughride::road::iso8608::{RoadClass, RoadSpec, generate};
use roughride::road::obstacle::flat;
use roughride::road::{Profile, read_profile_csv};
use roughride::solve::HarmonicForce;
use roughride::stats::durability::DurabilitySettings;
use roughride::vehicle::response::{HarmonicAmplitudes, PredictedRms, harmonic_force_amplitudes};
use roughride::vehicle::{Vehicle, read_vehicle};

/// Run a vehicle over a road at a constant speed and report ride comfort
/// (ISO 2631-1) and durability values.
///
/// The road is a measured profile (--profile FILE) or an ISO 8608 road
/// generated on the fly (--class C --seed N --length L).
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Examples:\n  roughride simulate --vehicle profiles/vehicles/demo_hatchback.toml --profile profiles/roads/demo_rural_c.csv --speed 72kmh\n  roughride simulate --vehicle car.toml --class D --seed 3 --length 2000 --speed 15 --json"
)]
pub struct Args {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    /// Road profile CSV (distance_m,elevation_m).
    #[arg(long, value_name = "FILE", conflicts_with_all = ["class", "flat"], required_unless_present_any = ["class", "flat"])]
    pub profile: Option<PathBuf>,
    /// ISO 8608 road class A–H for a generated road.
    #[arg(long, value_name = "A-H", requires = "length", conflicts_with = "flat")]
    pub class: Option<RoadClass>,
    /// A flat road of --length metres (e.g. for --force alone).
    #[arg(long, requires = "length")]
    pub flat: bool,
    /// Seed of the generated road.
    #[arg(
        long,
        default_value_t = 1,
        requires = "class",
        allow_hyphen_values = true
    )]
    pub seed: u64,
    /// Length of the generated (or flat) road, m.
    #[arg(long, value_name = "M", allow_hyphen_values = true, value_parser = quantity(&limits::ROAD_LENGTH))]
    pub length: Option<f64>,
    /// Sample spacing of the generated (or flat) road, m.
    #[arg(long, value_name = "M", default_value_t = 0.05, allow_hyphen_values = true,
          value_parser = quantity(&limits::SPACING))]
    pub spacing: f64,
    /// Harmonic vertical force on the body, F = A·sin(2π f t) at x ahead of
    /// the CG: AMPLITUDE_N,FREQUENCY_HZ,X_M (e.g. an engine imbalance
    /// 150,25,1.3). Alone (with --flat) or on top of a road.
    #[arg(long, value_name = "A,F,X", allow_hyphen_values = true, value_parser = parse_force)]
    pub force: Option<HarmonicForce>,
    /// Forward speed: m/s, or km/h with a kmh suffix (e.g. 20 or 72kmh).
    #[arg(long, value_name = "SPEED", allow_hyphen_values = true, value_parser = parse_speed)]
    pub speed: f64,
    /// Write the time history (CSV, units in the header) to this file.
    #[arg(long, value_name = "FILE")]
    pub history: Option<PathBuf>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    #[command(flatten)]
    pub run: SolverArgs,
    /// Daily exposure for the ISO 2631-1 health guidance: 8h, 30min, 3600s.
    #[arg(long, value_name = "DURATION", default_value = "8h", allow_hyphen_values = true,
          value_parser = parse_duration)]
    pub exposure: f64,
    /// Write both axles' suspension-travel histograms (CSV) to this file.
    #[arg(long, value_name = "FILE")]
    pub travel_histogram: Option<PathBuf>,
    /// Bin width of the travel histogram, m.
    #[arg(long, value_name = "M", default_value_t = 0.002, allow_hyphen_values = true,
          value_parser = quantity(&limits::TRAVEL_BIN))]
    pub travel_bin: f64,
    /// Write rainflow range–mean tables (ASTM E1049-85) of travel and
    /// suspension force, per axle, as CSV to this file.
    #[arg(long, value_name = "FILE")]
    pub rainflow: Option<PathBuf>,
    /// Range (and mean) bin width of the travel rainflow table written by
    /// --rainflow, m.
    #[arg(long, value_name = "M", default_value_t = 0.002, allow_hyphen_values = true,
          value_parser = parse_bin_width)]
    pub rainflow_travel_bin: f64,
    /// Range (and mean) bin width of the suspension-force rainflow table
    /// written by --rainflow, N.
    #[arg(long, value_name = "N", default_value_t = 100.0, allow_hyphen_values = true,
          value_parser = parse_bin_width)]
    pub rainflow_force_bin: f64,
    /// S–N exponents for the damage-equivalent ranges, comma-separated.
    #[arg(long, value_name = "M,…", value_delimiter = ',', default_value = "3,5",
          allow_hyphen_values = true, value_parser = quantity(&limits::SN_EXPONENT))]
    pub sn_exponent: Vec<f64>,
}

fn parse_speed(s: &str) -> Result<f64, String> {
    parse_speed_m_s(s).map_err(|e| e.to_string())
}

/// A bin width: a positive, finite number (clap names the option).
fn parse_bin_width(s: &str) -> Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(w) if w.is_finite() && w > 0.0 => Ok(w),
        _ => Err(format!("{s:?} is not a bin width: give a positive number")),
    }
}

fn parse_force(s: &str) -> Result<HarmonicForce, String> {
    roughride::batch::values::parse_force(s).map_err(|e| e.to_string())
}

fn parse_duration(s: &str) -> Result<f64, String> {
    roughride::batch::values::parse_duration_s(s).map_err(|e| e.to_string())
}

/// Where the road came from, for the report.
#[derive(Debug, Serialize)]
#[serde(tag = "source", rename_all = "lowercase")]
enum RoadInfo {
    File {
        path: String,
        samples: usize,
        spacing_m: f64,
    },
    Generated {
        class: RoadClass,
        seed: u64,
        gd_n0: f64,
        samples: usize,
        spacing_m: f64,
    },
    Flat {
        samples: usize,
        spacing_m: f64,
    },
}

#[derive(Debug, Serialize)]
struct Output<'a> {
    #[serde(flatten)]
    summary: &'a RunSummary,
    road: RoadInfo,
    /// Steady-state amplitudes of the harmonic body force (frequency domain).
    #[serde(skip_serializing_if = "Option::is_none")]
    harmonic_force: Option<HarmonicAmplitudes>,
    warnings: Vec<String>,
    caution: &'static str,
}

/// Loads the road the arguments name.
fn load_road(a: &Args) -> Result<(Profile, RoadInfo, Option<RoadSpec>, Vec<String>), Error> {
    if let Some(path) = &a.profile {
        let (p, warnings) = read_profile_csv(path)?;
        let info = RoadInfo::File {
            path: path.display().to_string(),
            samples: p.len(),
            spacing_m: p.spacing_m,
        };
        return Ok((p, info, None, warnings));
    }
    if a.flat {
        let length = a
            .length
            .ok_or_else(|| Error::Usage("--flat needs --length (m)".into()))?;
        let p = flat(length, a.spacing)?;
        let info = RoadInfo::Flat {
            samples: p.len(),
            spacing_m: p.spacing_m,
        };
        return Ok((p, info, None, Vec::new()));
    }
    let class = a
        .class
        .ok_or_else(|| Error::Usage("give --profile FILE or --class C --length L".into()))?;
    let length = a
        .length
        .ok_or_else(|| Error::Usage("--class needs --length (m)".into()))?;
    let spec = RoadSpec::from_class(class, length, a.spacing, a.seed);
    let p = generate(&spec)?;
    let info = RoadInfo::Generated {
        class,
        seed: a.seed,
        gd_n0: spec.gd_n0_m3,
        samples: p.len(),
        spacing_m: p.spacing_m,
    };
    Ok((p, info, Some(spec), Vec::new()))
}

/// Refuses a road the vehicle cannot drive meaningfully.
fn check_road(vehicle: &Vehicle, profile: &Profile, what: &RoadInfo) -> Result<(), Error> {
    if profile.length_m() < vehicle.wheelbase_m() {
        let name = match what {
            RoadInfo::File { path, .. } => path.clone(),
            RoadInfo::Generated { .. } | RoadInfo::Flat { .. } => "the road (--length)".into(),
        };
        return Err(Error::Usage(format!(
            "{name}: the profile ({:.3} m) is shorter than the wheelbase ({:.3} m)",
            profile.length_m(),
            vehicle.wheelbase_m()
        )));
    }
    Ok(())
}

pub fn run(a: Args) -> Result<(), Error> {
    check_files(&a)?;
    let vehicle = read_vehicle(&a.vehicle)?;
    let (profile, road, spec, warnings) = load_road(&a)?;
    for w in &warnings {
        eprintln!("roughride: warning: {w}");
    }
    check_road(&vehicle, &profile, &road)?;
    if let Some(f) = &a.force {
        roughride::batch::values::check_force_against_rate(f, a.run.rate)
            .map_err(|e| Error::Usage(e.to_string()))?;
    }
    let options = run_options(&a, spec);
    let mut history = a.history.as_deref().map(AtomicFile::create).transpose()?;
    // Frequency-domain companion, computed before the run so that bad
    // values are refused before any file is written.
    let harmonic_force = a
        .force
        .as_ref()
        .map(|f| harmonic_force_amplitudes(&vehicle, f))
        .transpose()?;
    let (summary, durability) =
        pipeline::simulate_detailed(&vehicle, &profile, &options, history.as_mut())?;
    // A result that cannot be right is not printed, and no file is kept.
    if summary.checks.implausible() {
        return Err(Error::Implausible(
            summary
                .checks
                .findings
                .iter()
                .map(|f| f.message.clone())
                .collect(),
        ));
    }
    write_outputs(&a, &durability, history)?;
    let out = Output {
        summary: &summary,
        road,
        harmonic_force,
        warnings: notes(&summary, warnings),
        caution: HEALTH_CAUTION,
    };
    if a.json {
        print_stdout(&json_line(&out, "simulation summary")?)?;
    } else {
        print_stdout(&render(&out))?;
    }
    Ok(())
}

/// Refuses outputs that are inputs or each other, before anything runs.
fn check_files(a: &Args) -> Result<(), Error> {
    let mut files = FilePlan::new()
        .input("--vehicle", &a.vehicle)
        .output("--history", a.history.as_deref())
        .output("--travel-histogram", a.travel_histogram.as_deref())
        .output("--rainflow", a.rainflow.as_deref());
    if let Some(p) = &a.profile {
        files = files.input("--profile", p);
    }
    files.check()?;
    Ok(())
}

fn run_options(a: &Args, road_spec: Option<RoadSpec>) -> RunOptions {
    RunOptions {
        speed_m_s: a.speed,
        solver: a.run.settings(),
        weighting: a.run.weighting,
        force: a.force,
        exposure_s: a.exposure,
        durability: DurabilitySettings {
            travel_bin_m: a.travel_bin,
            rainflow_travel_bin_m: a.rainflow_travel_bin,
            rainflow_force_bin_n: a.rainflow_force_bin,
            sn_exponents: a.sn_exponent.clone(),
            ..DurabilitySettings::default()
        },
        road_spec,
    }
}

/// Writes the histogram and rainflow files, then commits the history last,
/// once every other output is in place.
fn write_outputs(
    a: &Args,
    durability: &Durability,
    history: Option<AtomicFile>,
) -> Result<(), Error> {
    if let Some(path) = &a.travel_histogram {
        write_atomic(path, |w| {
            durability
                .write_travel_histograms(w)
                .map_err(|e| io_error(path, e))
        })?;
    }
    if let Some(path) = &a.rainflow {
        write_atomic(path, |w| {
            durability.write_rainflow(w).map_err(|e| io_error(path, e))
        })?;
    }
    if let Some(h) = history {
        h.commit()?;
    }
    Ok(())
}

/// Prints the run's notes and warnings on stderr; returns every warning
/// (the road's, then the plausibility findings) for the report.
fn notes(summary: &RunSummary, mut warnings: Vec<String>) -> Vec<String> {
    if let Some(f) = &summary.solver.fallback {
        eprintln!("roughride: note: {f}");
    }
    for (axle, pulls) in ["front", "rear"]
        .iter()
        .zip(summary.solver.bonded_pull_samples)
    {
        if pulls > 0 {
            eprintln!(
                "roughride: warning: the exact solver keeps tyres bonded to the road; the {axle} tyre was in tension (pulling the wheel onto the road) in {pulls} samples, where a real tyre would have lifted off (use --solver auto or adaptive for that; JSON solver.tyre_tension_samples)"
            );
        }
    }
    for f in &summary.checks.findings {
        eprintln!("roughride: warning: {}", f.message);
        warnings.push(f.message.clone());
    }
    warnings
}

/// The human report: one table per section, in the order a reader wants them.
fn render(o: &Output<'_>) -> String {
    let s = o.summary;
    let mut out = render_heading(s, &o.road);
    let mut tables = vec![
        seats_table(s),
        axles_table(s),
        durability_table(s),
        body_table(s),
    ];
    // Seats at the CG's height have no fore-aft motion to show.
    if s.seats.iter().any(|x| x.height_m > 0.0) {
        tables.insert(1, fore_aft_table(s));
    }
    if s.seats.iter().any(|x| x.floor.is_some()) {
        tables.insert(1, suspended_seats_table(s));
    }
    tables.extend(s.predicted.as_ref().map(|p| prediction_table(p, s)));
    tables.extend(o.harmonic_force.as_ref().map(harmonic_table));
    for t in &tables {
        out.push_str(&t.render());
        out.push('\n');
    }
    out.push_str(&guidance_table(s).render());
    out
}

/// What ran over what: vehicle, speed, road, length, solver and samples.
fn render_heading(s: &RunSummary, road: &RoadInfo) -> String {
    let road = match road {
        RoadInfo::File { path, .. } => path.clone(),
        RoadInfo::Generated { class, seed, .. } => {
            format!("ISO 8608 class {class} road, seed {seed}")
        }
        RoadInfo::Flat { .. } => "a flat road".to_string(),
    };
    format!(
        "{} at {} m/s ({} km/h) over {}\n  {:.1} m in {} s, {} solver, {} samples at {} Hz\n\n",
        s.vehicle,
        sig(s.speed_m_s, 4),
        sig(s.speed_m_s * 3.6, 4),
        road,
        s.length_m,
        sig(s.duration_s, 4),
        s.solver.solver.name(),
        s.solver.samples,
        sig(s.solver.output_rate_hz, 4),
    )
}

/// ISO 2631-1 measures per seat.
fn seats_table(s: &RunSummary) -> Table {
    let weighting = s
        .seats
        .first()
        .map(|x| x.measures.weighting.clone())
        .unwrap_or_default();
    let mut seats = Table::new(format!(
        "Seats: vertical acceleration, ISO 2631-1 ({weighting})"
    ))
    .with_header([
        "seat",
        "x m",
        "rms m/s²",
        "aw m/s²",
        "VDV m/s^1.75",
        "MTVV m/s²",
        "crest",
    ]);
    for seat in &s.seats {
        let m = &seat.measures;
        seats.row([
            seat.name.clone(),
            sig(seat.x_m, 3),
            sig(m.accel_rms, 3),
            sig(m.aw, 3),
            sig(m.vdv, 3),
            sig(m.mtvv, 3),
            sig(m.crest_factor, 3),
        ]);
    }
    seats
}

/// Suspended seats: seat-surface against floor aw, SEAT and travel.
fn suspended_seats_table(s: &RunSummary) -> Table {
    let mut t = Table::new("Suspended seats: seat surface against the floor beneath it (SEAT)")
        .with_header([
            "seat",
            "floor aw m/s²",
            "seat aw m/s²",
            "SEAT %",
            "travel rms mm",
            "min mm",
            "max mm",
        ]);
    for seat in &s.seats {
        let (Some(floor), Some(travel)) = (&seat.floor, &seat.suspension_travel) else {
            continue;
        };
        t.row([
            seat.name.clone(),
            sig(floor.aw, 3),
            sig(seat.measures.aw, 3),
            seat.seat_effective_amplitude_transmissibility_pct
                .map_or("-".to_string(), |p| sig(p, 3)),
            sig(1e3 * travel.rms_m, 3),
            sig(1e3 * travel.min_m, 3),
            sig(1e3 * travel.max_m, 3),
        ]);
    }
    t.note("SEAT = 100·aw(seat surface)/aw(floor), both weighted as the seats (common practice; the ratio ISO 10326-1 seat tests report). Below 100 % the seat isolates.");
    t.note(HEALTH_CAUTION);
    t
}

/// ISO 2631-1 fore-aft measures (from pitch) and the total value per seat.
fn fore_aft_table(s: &RunSummary) -> Table {
    let mut t = Table::new(
        "Seats: fore-aft acceleration −h·θ̈ (Wd) and vibration total value (ISO 2631-1 6.5)",
    )
    .with_header([
        "seat",
        "height m",
        "aw m/s²",
        "VDV m/s^1.75",
        "MTVV m/s²",
        "crest",
        "total value m/s²",
    ]);
    for seat in &s.seats {
        let m = &seat.fore_aft;
        t.row([
            seat.name.clone(),
            sig(seat.height_m, 3),
            sig(m.aw, 3),
            sig(m.vdv, 3),
            sig(m.mtvv, 3),
            sig(m.crest_factor, 3),
            sig(seat.total_value, 3),
        ]);
    }
    t.note(
        "total value: comfort factors kx = ky = kz = 1 on the seat surface (lateral not modelled).",
    );
    t
}

/// Travel and road contact per axle.
fn axles_table(s: &RunSummary) -> Table {
    let mut axles = Table::new("Axles: dynamic travel (compression +) and road contact")
        .with_header([
            "axle",
            "travel rms mm",
            "min mm",
            "max mm",
            "tyre load rms N",
            "DLC",
            "off ground %",
        ]);
    for (name, a) in [("front", &s.axles.front), ("rear", &s.axles.rear)] {
        axles.row([
            name.to_string(),
            sig(a.travel_rms * 1e3, 3),
            sig(a.travel_min * 1e3, 3),
            sig(a.travel_max * 1e3, 3),
            sig(a.tyre_load_rms, 3),
            sig(a.dynamic_load_coefficient, 3),
            sig(a.time_off_ground_fraction * 100.0, 3),
        ]);
    }
    axles
}

/// Travel percentiles, time past the stops, rainflow cycles and the
/// damage-equivalent force ranges per axle.
fn durability_table(s: &RunSummary) -> Table {
    let mut dur = Table::new("Durability: travel percentiles and rainflow (ASTM E1049-85)")
        .with_header([
            "axle",
            "p1 mm",
            "p50 mm",
            "p99 mm",
            "past bump %",
            "past rebound %",
            "travel cycles",
        ]);
    for (name, a) in [("front", &s.axles.front), ("rear", &s.axles.rear)] {
        let d = &a.durability;
        let p = |q: f64| {
            d.travel_percentiles_m
                .iter()
                .find(|(k, _)| *k == q)
                .map_or("-".to_string(), |(_, v)| sig(v * 1e3, 3))
        };
        let pct = |f: Option<f64>| f.map_or("-".to_string(), |v| sig(v * 100.0, 3));
        dur.row([
            name.to_string(),
            p(1.0),
            p(50.0),
            p(99.0),
            pct(d.time_past_bump_fraction),
            pct(d.time_past_rebound_fraction),
            fmt_cycles(d.travel_cycles),
        ]);
    }
    for e in &s.axles.front.durability.damage_equivalent {
        let rear = s
            .axles
            .rear
            .durability
            .damage_equivalent
            .iter()
            .find(|r| r.sn_exponent == e.sn_exponent);
        dur.note(format!(
            "damage-equivalent force range, m = {}: front {} N, rear {} N",
            sig(e.sn_exponent, 3),
            sig(e.force_range_n, 3),
            rear.map_or("-".to_string(), |r| sig(r.force_range_n, 3))
        ));
    }
    dur
}

/// Body heave and pitch r.m.s.
fn body_table(s: &RunSummary) -> Table {
    let mut body = Table::new("Body").with_header(["quantity", "rms"]);
    body.row([
        "heave acceleration m/s²".to_string(),
        sig(s.body.heave_accel_rms, 3),
    ]);
    body.row([
        "pitch acceleration rad/s²".to_string(),
        sig(s.body.pitch_accel_rms, 3),
    ]);
    body.row(["heave mm".to_string(), sig(s.body.heave_rms * 1e3, 3)]);
    body.row(["pitch mrad".to_string(), sig(s.body.pitch_rms * 1e3, 3)]);
    body
}

/// The spectral prediction beside the time-domain values.
fn prediction_table(p: &PredictedRms, s: &RunSummary) -> Table {
    let mut t = Table::new(format!(
        "Spectral prediction (road PSD × |H|², {} to {} Hz) beside the time-domain run",
        sig(p.band_hz[0], 3),
        sig(p.band_hz[1], 3)
    ))
    .with_header(["quantity", "predicted", "simulated", "difference %"]);
    let mut row = |name: String, pred: f64, sim: f64| {
        let diff = if pred != 0.0 {
            100.0 * (sim - pred) / pred
        } else {
            0.0
        };
        t.row([name, sig(pred, 3), sig(sim, 3), sig(diff, 2)]);
    };
    for (ps, ss) in p.seats.iter().zip(&s.seats) {
        row(format!("{} aw m/s²", ss.name), ps.aw, ss.measures.aw);
    }
    for (name, pa, sa) in [
        ("front", &p.axles.front, &s.axles.front),
        ("rear", &p.axles.rear, &s.axles.rear),
    ] {
        row(
            format!("{name} travel rms mm"),
            pa.travel_rms * 1e3,
            sa.travel_rms * 1e3,
        );
        row(
            format!("{name} tyre load rms N"),
            pa.tyre_load_rms,
            sa.tyre_load_rms,
        );
    }
    if let Some(note) = &s.checks.spectral {
        t.note(note);
    }
    t
}

/// Steady-state amplitudes of the harmonic body force.
fn harmonic_table(h: &HarmonicAmplitudes) -> Table {
    let mut t = Table::new(format!(
        "Harmonic body force {} N at {} Hz, x = {} m: steady-state amplitudes (frequency domain)",
        sig(h.amplitude_n, 3),
        sig(h.frequency_hz, 3),
        sig(h.x_m, 3)
    ))
    .with_header(["quantity", "amplitude"]);
    t.row(["heave mm".to_string(), sig(h.heave_m * 1e3, 3)]);
    t.row(["pitch mrad".to_string(), sig(h.pitch_rad * 1e3, 3)]);
    for seat in &h.seats {
        t.row([
            format!("{} acceleration m/s²", seat.name),
            sig(seat.accel_amplitude_m_s2, 3),
        ]);
    }
    t
}

/// Comfort reaction and health guidance per seat, with the caution.
fn guidance_table(s: &RunSummary) -> Table {
    let exposure_h = s
        .seats
        .first()
        .map_or(8.0, |x| x.guidance.exposure_s / 3600.0);
    let mut guide = Table::new(format!(
        "Guidance (ISO 2631-1 Annex C comfort; Annex B and Directive 2002/44/EC for {} h a day)",
        sig(exposure_h, 3)
    ))
    .with_header([
        "seat",
        "comfort reaction",
        "health axis",
        "A(8) m/s²",
        "A(8) status",
        "caution zone (B.1)",
    ]);
    for seat in &s.seats {
        let g = &seat.guidance;
        guide.row([
            seat.name.clone(),
            g.comfort_label.clone(),
            g.health_axis.unwrap_or("vertical").replace('_', "-"),
            sig(g.a8_m_s2, 3),
            g.a8_status.to_string(),
            g.caution_zone_b1.position.to_string(),
        ]);
    }
    guide.note(
        "comfort reaction from the total value; health from the axis with the largest k·aw (kx = 1.4, kz = 1).",
    );
    guide.note(HEALTH_CAUTION);
    guide
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::Parser;

    #[derive(Parser)]
    struct Wrap {
        #[command(flatten)]
        a: Args,
    }

    #[test]
    fn the_durability_defaults_are_the_library_defaults() {
        let w = Wrap::parse_from([
            "x",
            "--vehicle",
            "v.toml",
            "--flat",
            "--length",
            "9",
            "--speed",
            "1",
        ])
        .a;
        let d = DurabilitySettings::default();
        assert_eq!(w.sn_exponent, d.sn_exponents);
        assert_eq!(w.travel_bin, d.travel_bin_m);
        assert_eq!(w.rainflow_travel_bin, d.rainflow_travel_bin_m);
        assert_eq!(w.rainflow_force_bin, d.rainflow_force_bin_n);
    }
}
