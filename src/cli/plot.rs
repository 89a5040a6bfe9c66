//! `roughride plot`: SVG pictures of sweep results, time histories and road
//! profiles. This file only reads the input files and hands plain numbers
//! to `roughride::report::plot`, which draws.

use std::path::{Path, PathBuf};

use clap::{Args as ClapArgs, Subcommand};

use roughride::Error;
use roughride::report::plot::{self, ComfortPoint, TimeSeries};
use roughride::report::{FilePlan, write_to};
use roughride::road::read_profile_csv;

/// Draw an SVG picture: comfort against speed from a sweep, a histogram or a
/// time window of a history, or a road profile's PSD.
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride sweep --vehicle car.toml --classes A,B,C,D --speeds 10:40:5 --seeds 3 --length 1000 -o grid.csv\n  \
roughride plot comfort grid.csv -o aw.svg\n  \
roughride simulate --vehicle car.toml --class C --length 500 --speed 20 --history h.csv\n  \
roughride plot histogram h.csv --column travel_front_m -o travel.svg\n  \
roughride plot history h.csv --columns driver_accel_m_s2 --from 10 --to 15 -o window.svg\n  \
roughride profile --class C --length 2000 -o road.csv && roughride plot psd road.csv -o psd.svg\n  \
roughride plot tradeoff study.csv -o tradeoff.svg   (a sweep with --vary)")]
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
    /// The aw column to draw, m/s² (e.g. seat2_aw for the second seat).
    #[arg(long, default_value = "seat_aw")]
    pub column: String,
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
    let (file, output) = match &a.picture {
        Picture::Comfort(c) => (&c.file, c.out.output.as_deref()),
        Picture::Histogram(h) => (&h.file, h.out.output.as_deref()),
        Picture::Psd(p) => (&p.file, p.out.output.as_deref()),
        Picture::History(h) => (&h.file, h.out.output.as_deref()),
        Picture::Tradeoff(t) => (&t.file, t.output.as_deref()),
        Picture::Exceedance(e) => (&e.file, e.out.output.as_deref()),
        Picture::RangeMean(m) => (&m.file, m.out.output.as_deref()),
    };
    FilePlan::new()
        .input("FILE", file)
        .output("-o", output)
        .check()?;
    let (svg, out) = match a.picture {
        Picture::Tradeoff(t) => return super::tradeoff::run(t),
        Picture::Exceedance(e) => super::life_plot::exceedance(e)?,
        Picture::RangeMean(m) => super::life_plot::range_mean(m)?,
        Picture::Comfort(c) => {
            let points = read_sweep(&c.file, &c.column)?;
            let title = c
                .out
                .title
                .clone()
                .unwrap_or_else(|| format!("Ride comfort against speed: {}", name_of(&c.file)));
            (plot::comfort_chart(&points, &title)?, c.out)
        }
        Picture::Histogram(h) => {
            let window = Window::new(h.from, h.to)?;
            let (_, mut cols) = read_columns(&h.file, std::slice::from_ref(&h.column), window)?;
            let values = cols.pop().unwrap_or_default();
            let title = h
                .out
                .title
                .clone()
                .unwrap_or_else(|| format!("{}: {}", name_of(&h.file), h.column));
            (
                plot::histogram_chart(&values, h.bins, &h.column, &title)?,
                h.out,
            )
        }
        Picture::Psd(p) => {
            let (profile, warnings) = read_profile_csv(&p.file)?;
            for w in warnings {
                eprintln!("roughride: warning: {}: {w}", p.file.display());
            }
            let title = p
                .out
                .title
                .clone()
                .unwrap_or_else(|| format!("Road profile PSD: {}", name_of(&p.file)));
            (plot::psd_chart(&profile, &title)?, p.out)
        }
        Picture::History(h) => {
            let window = Window::new(h.from, h.to)?;
            let (time, cols) = read_columns(&h.file, &h.columns, window)?;
            let series: Vec<TimeSeries> = h
                .columns
                .iter()
                .zip(cols)
                .map(|(c, values)| TimeSeries {
                    column: c.clone(),
                    values,
                })
                .collect();
            let title = h
                .out
                .title
                .clone()
                .unwrap_or_else(|| format!("Time history: {}", name_of(&h.file)));
            (plot::history_chart(&time, &series, &title)?, h.out)
        }
    };
    write_to(out.output.as_deref(), |w| {
        let target = out.output.as_deref().unwrap_or(Path::new("<stdout>"));
        w.write_all(svg.as_bytes())
            .map_err(|e| roughride::report::io_error(target, e))?;
        Ok::<(), Error>(())
    })
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

/// Reads `columns` (and `time_s` when a window is given or available) of
/// the rows inside `window`. Returns the times (empty when the file has no
/// `time_s` and no window was asked for) and one vector per column.
fn read_columns(
    path: &Path,
    columns: &[String],
    window: Window,
) -> Result<(Vec<f64>, Vec<Vec<f64>>), Error> {
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
    let mut time = Vec::new();
    let mut out = vec![Vec::new(); columns.len()];
    for rec in rdr.records() {
        let rec = rec.map_err(|e| bad(path, e.position().map_or(0, |p| p.line()), e))?;
        let line = rec.position().map_or(0, |p| p.line());
        if let Some(ti) = time_idx {
            let t = parse_cell(path, line, "time_s", rec.get(ti).unwrap_or(""))?;
            if t < window.from_s || t > window.to_s {
                continue;
            }
            time.push(t);
        }
        for ((i, c), v) in idx.iter().zip(columns).zip(out.iter_mut()) {
            v.push(parse_cell(path, line, c, rec.get(*i).unwrap_or(""))?);
        }
    }
    Ok((time, out))
}

/// Reads the rows of a sweep (CSV or JSON Lines) as comfort points. A
/// series is a road: "class C" for a generated road, the file for a
/// profile; prefixed with the vehicle file's name when the sweep holds
/// several vehicles.
fn read_sweep(path: &Path, column: &str) -> Result<Vec<ComfortPoint>, Error> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Error::Usage(format!("{}: cannot read: {e}", path.display())))?;
    // (vehicle, road, class, speed, aw) per row.
    let mut rows: Vec<(String, String, String, f64, f64)> = Vec::new();
    if text.trim_start().starts_with('{') {
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
            rows.push((
                s("vehicle"),
                s("road"),
                s("class"),
                num("speed_m_s")?,
                num(column)?,
            ));
        }
    } else {
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(true)
            .trim(csv::Trim::All)
            .from_reader(text.as_bytes());
        let headers = rdr.headers().map_err(|e| bad(path, 1, e))?.clone();
        let speed = column_index(path, &headers, "speed_m_s")?;
        let aw = column_index(path, &headers, column)?;
        let find = |name: &str| headers.iter().position(|h| h == name);
        let (vehicle, road, class) = (find("vehicle"), find("road"), find("class"));
        // The --vary columns (between vehicle and road) tell variants apart.
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
        for rec in rdr.records() {
            let rec = rec.map_err(|e| bad(path, e.position().map_or(0, |p| p.line()), e))?;
            let line = rec.position().map_or(0, |p| p.line());
            let cell = |i: Option<usize>| i.and_then(|i| rec.get(i)).unwrap_or("").to_string();
            let mut name = cell(vehicle);
            for &i in &varied {
                name.push_str(&format!(" {}={}", &headers[i], rec.get(i).unwrap_or("")));
            }
            rows.push((
                name,
                cell(road),
                cell(class),
                parse_cell(path, line, "speed_m_s", rec.get(speed).unwrap_or(""))?,
                parse_cell(path, line, column, rec.get(aw).unwrap_or(""))?,
            ));
        }
    }
    let several_vehicles = rows.iter().any(|r| r.0 != rows[0].0);
    Ok(rows
        .into_iter()
        .map(|(vehicle, road, class, speed_m_s, aw_m_s2)| {
            let road = if class.is_empty() {
                road
            } else {
                format!("class {class}")
            };
            let series = if several_vehicles {
                format!("{}: {road}", name_of(Path::new(&vehicle)))
            } else {
                road
            };
            ComfortPoint {
                series,
                speed_m_s,
                aw_m_s2,
            }
        })
        .collect())
}
