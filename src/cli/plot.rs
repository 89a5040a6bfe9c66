//! `roughride plot`: SVG pictures of sweep results, time histories, road
//! profiles and a vehicle's linear model. This file only reads the input
//! files and hands plain numbers to `roughride::report::plot` (and
//! `vehicle_plot`), which draws.

use std::path::{Path, PathBuf};

use clap::{Args as ClapArgs, Subcommand};

use roughride::Error;
use roughride::report::plot::{self, ComfortPoint, SpeedAxis, TimeSeries};
use roughride::report::{FilePlan, write_to};
use roughride::road::read_profile_csv;

/// Draw an SVG picture: comfort against speed from a sweep, a histogram or a
/// time window of a history, or a road profile's PSD.
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride plot comfort grid.csv --kmh -o aw.svg   (grid.csv from sweep)\n  \
roughride plot histogram h.csv --column travel_front_m -o travel.svg\n  \
roughride plot history h.csv --columns driver_accel_m_s2 --from 10 --to 15\n  \
roughride plot history h.csv --columns driver_accel_m_s2,travel_front_m\n  \
   (h.csv from simulate --history; one panel per unit)\n  \
roughride profile --class C --length 2000 -o road.csv\n  \
roughride plot psd road.csv -o psd.svg\n  \
roughride plot tradeoff study.csv -o tradeoff.svg   (a sweep with --vary)\n  \
roughride plot frf --vehicle car.toml --speed 72kmh -o frf.svg\n  \
roughride plot modes --vehicle car.toml -o modes.svg")]
pub struct Args {
    #[command(subcommand)]
    pub picture: Picture,
}

/// The pictures.
#[derive(Debug, Subcommand)]
pub enum Picture {
    /// Seat aw against speed, one line per road (class or file), over the ISO 2631-1 Annex C comfort bands.
    Comfort(ComfortArgs),
    /// Histogram of one column of a time history (e.g. travel_front_m), with percentiles.
    Histogram(HistogramArgs),
    /// Displacement PSD of a road profile CSV on log–log axes against the ISO 8608 classes.
    Psd(PsdArgs),
    /// A time window of one or more columns of a time history.
    History(HistoryArgs),
    /// A design study's trade-off: seat aw against tyre load (DLC) and travel per variant, Pareto set labelled.
    Tradeoff(super::tradeoff::Args),
    /// A vehicle's road frequency response on log axes, one panel per unit, modes marked.
    Frf(super::plot_vehicle::FrfArgs),
    /// A vehicle's mode shapes: the body as a bar per mode, its node marked.
    Modes(super::plot_vehicle::ModesArgs),
    /// A life's exceedance spectrum (`lifetime --exceedance`): cycles against range on log axes, one line per part and the total.
    Exceedance(super::life_plot::ExceedanceArgs),
    /// A life's rainflow range–mean matrix (`lifetime --matrix`) as a heat map.
    RangeMean(super::life_plot::RangeMeanArgs),
}

/// Output options shared by every picture.
#[derive(Debug, ClapArgs)]
pub struct Out {
    /// Write the SVG here (atomically) instead of stdout.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Title above the picture (a default names the input file).
    #[arg(long)]
    pub title: Option<String>,
}

#[derive(Debug, ClapArgs)]
pub struct ComfortArgs {
    /// Sweep output: CSV or JSON Lines from `roughride sweep`.
    pub file: PathBuf,
    /// The aw column to draw, m/s² (e.g. seat2_aw for the second seat). The
    /// comfort bands (ISO 2631-1 Annex C) are read against the vibration
    /// total value: for a seat above the pitch axis draw seat1_total_value
    /// (equal to seat1_aw for a seat at height 0).
    #[arg(long, default_value = "seat_aw")]
    pub column: String,
    /// Speed axis in km/h instead of m/s.
    #[arg(long)]
    pub kmh: bool,
    #[command(flatten)]
    pub out: Out,
}

#[derive(Debug, ClapArgs)]
pub struct HistogramArgs {
    /// Time history CSV (`simulate --history`) or any CSV with a header row.
    pub file: PathBuf,
    /// Column to count, with its unit suffix (e.g. travel_front_m).
    #[arg(long)]
    pub column: String,
    /// Number of equal bins between the smallest and largest value (1 to 1000).
    #[arg(long, default_value_t = 40, allow_hyphen_values = true, value_parser = bins)]
    pub bins: usize,
    /// Only rows with time_s at or after this, s.
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    pub from: Option<f64>,
    /// Only rows with time_s at or before this, s.
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    pub to: Option<f64>,
    #[command(flatten)]
    pub out: Out,
}

#[derive(Debug, ClapArgs)]
pub struct PsdArgs {
    /// Road profile CSV (distance_m,elevation_m).
    pub file: PathBuf,
    #[command(flatten)]
    pub out: Out,
}

#[derive(Debug, ClapArgs)]
pub struct HistoryArgs {
    /// Time history CSV with a time_s column.
    pub file: PathBuf,
    /// Columns to draw, comma-separated (e.g. driver_accel_m_s2,rear_passenger_accel_m_s2).
    #[arg(long, value_delimiter = ',', required = true)]
    pub columns: Vec<String>,
    /// Start of the window, s.
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    pub from: Option<f64>,
    /// End of the window, s.
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    pub to: Option<f64>,
    #[command(flatten)]
    pub out: Out,
}

fn bins(s: &str) -> Result<usize, String> {
    super::options::count(1, 1000)(s).map(|n| n as usize)
}

pub fn run(a: Args) -> Result<(), Error> {
    match a.picture {
        Picture::Comfort(c) => comfort(c),
        Picture::Histogram(h) => histogram(h),
        Picture::Psd(p) => psd(p),
        Picture::History(h) => history(h),
        Picture::Tradeoff(t) => {
            check_files("FILE", &t.file, t.output.as_deref())?;
            super::tradeoff::run(t)
        }
        Picture::Frf(f) => super::plot_vehicle::frf(f),
        Picture::Modes(m) => super::plot_vehicle::modes(m),
        Picture::Exceedance(e) => {
            check_files("FILE", &e.file, e.out.output.as_deref())?;
            let (svg, out) = super::life_plot::exceedance(e)?;
            write_svg(&out, &svg)
        }
        Picture::RangeMean(m) => {
            check_files("FILE", &m.file, m.out.output.as_deref())?;
            let (svg, out) = super::life_plot::range_mean(m)?;
            write_svg(&out, &svg)
        }
    }
}

/// Refuses a missing input and an output that is one of the inputs.
pub(super) fn check_files(flag: &str, input: &Path, output: Option<&Path>) -> Result<(), Error> {
    FilePlan::new()
        .input(flag, input)
        .output("-o", output)
        .check()?;
    Ok(())
}

/// The title asked for, else `default` with the input's file name.
pub(super) fn title_of(out: &Out, default: &str, input: &Path) -> String {
    out.title
        .clone()
        .unwrap_or_else(|| format!("{default}{}", name_of(input)))
}

/// Writes the picture to `-o` (atomically) or stdout.
pub(super) fn write_svg(out: &Out, svg: &str) -> Result<(), Error> {
    write_to(out.output.as_deref(), |w| {
        let target = out.output.as_deref().unwrap_or(Path::new("<stdout>"));
        w.write_all(svg.as_bytes())
            .map_err(|e| roughride::report::io_error(target, e))?;
        Ok::<(), Error>(())
    })
}

fn comfort(c: ComfortArgs) -> Result<(), Error> {
    check_files("FILE", &c.file, c.out.output.as_deref())?;
    let points = read_sweep(&c.file, &c.column)?;
    let title = title_of(&c.out, "Ride comfort against speed: ", &c.file);
    let axis = if c.kmh {
        SpeedAxis::KilometresPerHour
    } else {
        SpeedAxis::MetresPerSecond
    };
    write_svg(
        &c.out,
        &plot::comfort_chart(&points, &title, axis, &c.column)?,
    )
}

fn histogram(h: HistogramArgs) -> Result<(), Error> {
    check_files("FILE", &h.file, h.out.output.as_deref())?;
    let window = Window::new(h.from, h.to)?;
    let mut read = read_columns(&h.file, std::slice::from_ref(&h.column), window)?;
    read.require(&h.file, window, 1)?;
    let values = read.values.pop().unwrap_or_default();
    let title = h
        .out
        .title
        .clone()
        .unwrap_or_else(|| format!("{}: {}", name_of(&h.file), h.column));
    write_svg(
        &h.out,
        &plot::histogram_chart(&values, h.bins, &h.column, &title)?,
    )
}

fn psd(p: PsdArgs) -> Result<(), Error> {
    check_files("FILE", &p.file, p.out.output.as_deref())?;
    let (profile, warnings) = read_profile_csv(&p.file)?;
    for w in warnings {
        eprintln!("roughride: warning: {}: {w}", p.file.display());
    }
    let title = title_of(&p.out, "Road profile PSD: ", &p.file);
    write_svg(&p.out, &plot::psd_chart(&profile, &title)?)
}

fn history(h: HistoryArgs) -> Result<(), Error> {
    check_files("FILE", &h.file, h.out.output.as_deref())?;
    let window = Window::new(h.from, h.to)?;
    let read = read_columns(&h.file, &h.columns, window)?;
    read.require(&h.file, window, 2)?;
    let series: Vec<TimeSeries> = h
        .columns
        .iter()
        .zip(read.values)
        .map(|(c, values)| TimeSeries {
            column: c.clone(),
            values,
        })
        .collect();
    let title = title_of(&h.out, "Time history: ", &h.file);
    write_svg(&h.out, &plot::history_chart(&read.time, &series, &title)?)
}

fn name_of(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

fn bad(path: &Path, line: u64, message: impl std::fmt::Display) -> Error {
    Error::Usage(format!("{}: line {line}: {message}", path.display()))
}

/// A `time_s` window; both ends inclusive and optional.
#[derive(Debug, Clone, Copy)]
struct Window {
    from_s: f64,
    to_s: f64,
}

impl Window {
    fn new(from: Option<f64>, to: Option<f64>) -> Result<Self, Error> {
        let w = Window {
            from_s: from.unwrap_or(f64::NEG_INFINITY),
            to_s: to.unwrap_or(f64::INFINITY),
        };
        if from.is_some_and(|f| !f.is_finite())
            || to.is_some_and(|t| !t.is_finite())
            || w.from_s >= w.to_s
        {
            return Err(Error::Usage(format!(
                "--from/--to: need a finite window with from < to, got {} .. {}",
                w.from_s, w.to_s
            )));
        }
        Ok(w)
    }

    fn is_all(&self) -> bool {
        self.from_s == f64::NEG_INFINITY && self.to_s == f64::INFINITY
    }
}

fn open_csv(path: &Path) -> Result<csv::Reader<std::fs::File>, Error> {
    let file = std::fs::File::open(path)
        .map_err(|e| Error::Usage(format!("{}: cannot read: {e}", path.display())))?;
    Ok(csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(file))
}

fn column_index(path: &Path, headers: &csv::StringRecord, name: &str) -> Result<usize, Error> {
    headers.iter().position(|h| h == name).ok_or_else(|| {
        let known: Vec<&str> = headers.iter().collect();
        bad(
            path,
            1,
            format!("no column `{name}`; the header has: {}", known.join(", ")),
        )
    })
}

fn parse_cell(path: &Path, line: u64, column: &str, text: &str) -> Result<f64, Error> {
    text.parse::<f64>().map_err(|_| {
        bad(
            path,
            line,
            format!("column `{column}`: {text:?} is not a number"),
        )
    })
}

/// The rows of a CSV inside a window.
struct Read {
    /// `time_s` of the rows kept (empty when the file has no `time_s` and
    /// no window was asked for).
    time: Vec<f64>,
    /// One vector per column asked for.
    values: Vec<Vec<f64>>,
    /// Smallest and largest `time_s` of the whole file, s.
    record_s: Option<(f64, f64)>,
}

impl Read {
    /// Bad input unless the window kept at least `min` rows: the message
    /// names `--from/--to` and the record's time range.
    fn require(&self, path: &Path, window: Window, min: usize) -> Result<(), Error> {
        let kept = self.values.first().map_or(0, Vec::len);
        if kept >= min {
            return Ok(());
        }
        let Some((t0, t1)) = self.record_s.filter(|_| !window.is_all()) else {
            return Err(bad(
                path,
                1,
                format!("{kept} data rows; need at least {min}"),
            ));
        };
        let held = match kept {
            0 => "holds no sample".to_string(),
            1 => "holds 1 sample".to_string(),
            n => format!("holds {n} samples"),
        };
        let show = |v: f64| {
            if v.is_finite() {
                format!("{v}")
            } else {
                "(open)".to_string()
            }
        };
        Err(Error::Usage(format!(
            "--from/--to: the window {} .. {} s {held} (need at least {min}); {} has time_s from {} to {} s",
            show(window.from_s),
            show(window.to_s),
            path.display(),
            show(t0),
            show(t1)
        )))
    }
}

/// Reads `columns` (and `time_s` when a window is given or available) of
/// the rows inside `window`.
fn read_columns(path: &Path, columns: &[String], window: Window) -> Result<Read, Error> {
    let mut rdr = open_csv(path)?;
    let headers = rdr.headers().map_err(|e| bad(path, 1, e))?.clone();
    let idx = columns
        .iter()
        .map(|c| column_index(path, &headers, c))
        .collect::<Result<Vec<_>, _>>()?;
    let time_idx = match headers.iter().position(|h| h == "time_s") {
        Some(i) => Some(i),
        None if window.is_all() => None,
        None => return Err(bad(path, 1, "--from/--to need a `time_s` column")),
    };
    let mut read = Read {
        time: Vec::new(),
        values: vec![Vec::new(); columns.len()],
        record_s: None,
    };
    for rec in rdr.records() {
        let rec = rec.map_err(|e| bad(path, e.position().map_or(0, |p| p.line()), e))?;
        let line = rec.position().map_or(0, |p| p.line());
        if let Some(ti) = time_idx {
            let t = parse_cell(path, line, "time_s", rec.get(ti).unwrap_or(""))?;
            let (a, b) = read.record_s.unwrap_or((t, t));
            read.record_s = Some((a.min(t), b.max(t)));
            if t < window.from_s || t > window.to_s {
                continue;
            }
            read.time.push(t);
        }
        for ((i, c), v) in idx.iter().zip(columns).zip(read.values.iter_mut()) {
            v.push(parse_cell(path, line, c, rec.get(*i).unwrap_or(""))?);
        }
    }
    Ok(read)
}

/// One sweep row as the comfort picture needs it.
struct SweepRow {
    /// The vehicle file, with the varied values of a `--vary` sweep.
    vehicle: String,
    road: String,
    class: String,
    speed_m_s: f64,
    aw_m_s2: f64,
}

/// Reads the rows of a sweep (CSV or JSON Lines) as comfort points. A
/// series is a road: "class C" for a generated road, the file for a
/// profile; prefixed with the vehicle file's name when the sweep holds
/// several vehicles.
fn read_sweep(path: &Path, column: &str) -> Result<Vec<ComfortPoint>, Error> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Error::Usage(format!("{}: cannot read: {e}", path.display())))?;
    let rows = if text.trim_start().starts_with('{') {
        sweep_jsonl(path, &text, column)?
    } else {
        sweep_csv(path, &text, column)?
    };
    Ok(comfort_points(rows))
}

/// The rows of a sweep's JSON Lines.
fn sweep_jsonl(path: &Path, text: &str, column: &str) -> Result<Vec<SweepRow>, Error> {
    let mut rows = Vec::new();
    for (n, line) in text.lines().enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let lno = n as u64 + 1;
        let v: serde_json::Value = serde_json::from_str(line).map_err(|e| bad(path, lno, e))?;
        let s = |k: &str| v[k].as_str().unwrap_or("").to_string();
        let num = |k: &str| {
            v[k].as_f64()
                .ok_or_else(|| bad(path, lno, format!("no number `{k}`")))
        };
        rows.push(SweepRow {
            vehicle: s("vehicle"),
            road: s("road"),
            class: s("class"),
            speed_m_s: num("speed_m_s")?,
            aw_m_s2: num(column)?,
        });
    }
    Ok(rows)
}

/// The rows of a sweep's CSV; the `--vary` columns (between `vehicle` and
/// `road`) join the vehicle's name to tell variants apart.
fn sweep_csv(path: &Path, text: &str, column: &str) -> Result<Vec<SweepRow>, Error> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let headers = rdr.headers().map_err(|e| bad(path, 1, e))?.clone();
    let speed = column_index(path, &headers, "speed_m_s")?;
    let aw = column_index(path, &headers, column)?;
    let find = |name: &str| headers.iter().position(|h| h == name);
    let (vehicle, road, class) = (find("vehicle"), find("road"), find("class"));
    let varied: Vec<usize> = match (vehicle, road) {
        (Some(v), Some(r)) => (v + 1..r).collect(),
        _ => Vec::new(),
    };
    if road.is_none() && class.is_none() {
        return Err(bad(
            path,
            1,
            "need a `road` or `class` column to tell the series apart",
        ));
    }
    let mut rows = Vec::new();
    for rec in rdr.records() {
        let rec = rec.map_err(|e| bad(path, e.position().map_or(0, |p| p.line()), e))?;
        let line = rec.position().map_or(0, |p| p.line());
        let cell = |i: Option<usize>| i.and_then(|i| rec.get(i)).unwrap_or("").to_string();
        let mut name = cell(vehicle);
        for &i in &varied {
            name.push_str(&format!(" {}={}", &headers[i], rec.get(i).unwrap_or("")));
        }
        rows.push(SweepRow {
            vehicle: name,
            road: cell(road),
            class: cell(class),
            speed_m_s: parse_cell(path, line, "speed_m_s", rec.get(speed).unwrap_or(""))?,
            aw_m_s2: parse_cell(path, line, column, rec.get(aw).unwrap_or(""))?,
        });
    }
    Ok(rows)
}

/// Names each row's series: its road, after the vehicle when there are several.
fn comfort_points(rows: Vec<SweepRow>) -> Vec<ComfortPoint> {
    let several_vehicles = rows.iter().any(|r| r.vehicle != rows[0].vehicle);
    rows.into_iter()
        .map(|r| {
            let road = if r.class.is_empty() {
                r.road
            } else {
                format!("class {}", r.class)
            };
            let series = if several_vehicles {
                format!("{}: {road}", name_of(Path::new(&r.vehicle)))
            } else {
                road
            };
            ComfortPoint {
                series,
                speed_m_s: r.speed_m_s,
                aw_m_s2: r.aw_m_s2,
            }
        })
        .collect()
}
