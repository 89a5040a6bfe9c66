//! `roughride frf`: complex frequency responses of a vehicle to road
//! elevation at a speed (wheelbase delay included) and, with `--force-x`,
//! to a vertical body force; CSV of magnitude and phase per output
//! ([`roughride::vehicle::response`] does the work).

use std::path::PathBuf;

use clap::Args as ClapArgs;
use roughride::batch::values::parse_speed_m_s;
use roughride::comfort::Weighting;
use roughride::report::{self, Table, sig};
use roughride::vehicle::read_vehicle;
use roughride::vehicle::response::{self, FrequencyResponse};
use serde::Serialize;

/// Largest number of frequencies `--freqs` may expand to.
const MAX_FREQUENCIES: usize = 200_000;

/// Frequency responses of a vehicle: road elevation (front wheel, rear
/// delayed by the wheelbase) to seat accelerations, travel, tyre loads,
/// heave and pitch; optionally a body force to the same outputs.
///
/// Without -o the CSV goes to stdout; with -o it goes to the file and a
/// table of peaks is printed. --json prints one JSON object with arrays.
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Examples:\n  roughride frf --vehicle profiles/vehicles/demo_hatchback.toml --speed 72kmh > frf.csv\n  roughride frf --vehicle car.toml --speed 20 --freqs 0.5:30:0.05 --force-x 1.2 -o frf.csv"
)]
pub struct Args {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    /// Forward speed: m/s, or km/h with a kmh suffix (e.g. 20 or 72kmh).
    #[arg(long, value_name = "SPEED", allow_hyphen_values = true, value_parser = parse_speed)]
    pub speed: f64,
    /// Frequencies, Hz: start:end:step (inclusive) or a comma list (0 to 1e4 Hz).
    #[arg(long, value_name = "HZ", default_value = "0.5:30:0.05", allow_hyphen_values = true,
          value_parser = parse_freqs)]
    pub freqs: Frequencies,
    /// Also the response to a vertical body force at this point, m ahead of the CG.
    #[arg(long = "force-x", value_name = "M", allow_hyphen_values = true,
          value_parser = super::options::quantity(&roughride::limits::BODY_X))]
    pub force_x: Option<f64>,
    /// Weighting for the weighted seat columns (wk, wd, wf, wc, we, wj).
    #[arg(long, default_value = "wk", value_parser = parse_weighting)]
    pub weighting: Weighting,
    /// Write the CSV to FILE instead of stdout.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Print one JSON object instead of the CSV or table.
    #[arg(long)]
    pub json: bool,
}

/// The parsed `--freqs` values, Hz.
#[derive(Debug, Clone)]
pub struct Frequencies(pub Vec<f64>);

fn parse_speed(s: &str) -> Result<f64, String> {
    parse_speed_m_s(s).map_err(|e| e.to_string())
}

fn parse_weighting(s: &str) -> Result<Weighting, String> {
    s.parse()
}

/// Parses `start:end:step` (values `start + i·step`, end included within
/// rounding) or a comma list; every value finite and ≥ 0 Hz.
fn parse_freqs(s: &str) -> Result<Frequencies, String> {
    let num = |t: &str| -> Result<f64, String> {
        roughride::batch::values::parse_quantity(t, &roughride::limits::FRF_FREQUENCY)
            .map_err(|e| format!("{t:?}: {}", e.why))
    };
    let t = s.trim();
    if t.contains(':') {
        let parts: Vec<&str> = t.split(':').collect();
        if parts.len() != 3 {
            return Err(format!(
                "expected start:end:step in Hz (e.g. 0.5:30:0.05), got {s:?}"
            ));
        }
        let (start, end, step) = (num(parts[0])?, num(parts[1])?, num(parts[2])?);
        if step <= 0.0 {
            return Err(format!("the step must be positive, got {step}"));
        }
        if end < start {
            return Err(format!("the end ({end}) is below the start ({start})"));
        }
        let count = ((end - start) / step * (1.0 + 1e-12) + 1e-9).floor() + 1.0;
        if count > MAX_FREQUENCIES as f64 {
            return Err(format!(
                "{count:.0} frequencies exceed the limit of {MAX_FREQUENCIES}; use a larger step"
            ));
        }
        Ok(Frequencies(grid(
            parts[0],
            parts[2],
            start,
            step,
            count as usize,
        )))
    } else {
        let v: Vec<f64> = t.split(',').map(num).collect::<Result<_, _>>()?;
        if v.len() > MAX_FREQUENCIES {
            return Err(format!("more than {MAX_FREQUENCIES} frequencies"));
        }
        Ok(Frequencies(v))
    }
}

/// Decimal places a number is written with: `0.05` → 2, `5e-3` → 3, `2` → 0.
fn decimals(text: &str) -> i32 {
    let t = text.trim();
    let (mantissa, exponent) = match t.find(['e', 'E']) {
        Some(i) => (&t[..i], t[i + 1..].parse::<i32>().unwrap_or(0)),
        None => (t, 0),
    };
    let places = mantissa.split_once('.').map_or(0, |(_, f)| f.len() as i32);
    (places - exponent).max(0)
}

/// `start + i·step` for `i < count`, printed as written: with `d` the
/// decimals of start and step, each value is the integer `start·10^d +
/// i·step·10^d` divided by `10^d`, which is the double nearest the decimal
/// (no `0.8500000000000001`). Beyond 12 decimals, or integers too large to
/// be exact, the plain sum is used.
fn grid(start_text: &str, step_text: &str, start: f64, step: f64, count: usize) -> Vec<f64> {
    let d = decimals(start_text).max(decimals(step_text));
    let scale = 10f64.powi(d);
    let (a, b) = ((start * scale).round(), (step * scale).round());
    let exact = d <= 12 && a + b * count as f64 <= 2f64.powi(53);
    (0..count)
        .map(|i| {
            if exact {
                (a + b * i as f64) / scale
            } else {
                start + i as f64 * step
            }
        })
        .collect()
}

/// One channel in the JSON output.
#[derive(Debug, Serialize)]
struct ChannelJson {
    name: String,
    /// Unit of the response, e.g. "m/s^2 per m".
    unit: String,
    magnitude: Vec<f64>,
    phase_deg: Vec<f64>,
}

#[derive(Debug, Serialize)]
struct WeightedJson {
    name: String,
    weighting: String,
    unit: String,
    magnitude: Vec<f64>,
}

#[derive(Debug, Serialize)]
struct ForceJson {
    x_m: f64,
    channels: Vec<ChannelJson>,
}

#[derive(Debug, Serialize)]
struct Output {
    vehicle: String,
    vehicle_file: String,
    speed_m_s: f64,
    wheelbase_m: f64,
    wheelbase_delay_s: f64,
    frequencies_hz: Vec<f64>,
    road: Vec<ChannelJson>,
    weighted: Vec<WeightedJson>,
    #[serde(skip_serializing_if = "Option::is_none")]
    force: Option<ForceJson>,
    conventions: &'static str,
}

const CONVENTIONS: &str = "road responses per metre of elevation at the front wheel (rear delayed by wheelbase/speed), force responses per newton; phase of the output against the input, degrees; travel and tyre load positive in compression; heave up, pitch nose-up";

fn channels_json(r: &FrequencyResponse, per: &str) -> Vec<ChannelJson> {
    r.channels
        .iter()
        .zip(&r.values)
        .map(|(c, vals)| ChannelJson {
            name: c.name.clone(),
            unit: format!("{} per {per}", c.unit),
            magnitude: vals.iter().map(|z| z.norm()).collect(),
            phase_deg: vals.iter().map(|z| z.arg().to_degrees()).collect(),
        })
        .collect()
}

/// Computes the responses and writes them.
pub fn run(args: Args) -> Result<(), roughride::Error> {
    report::FilePlan::new()
        .input("--vehicle", &args.vehicle)
        .output("-o", args.output.as_deref())
        .check()?;
    let v = read_vehicle(&args.vehicle)?;
    let freqs = &args.freqs.0;
    let road = response::road_frf(&v, args.speed, freqs)?;
    let force = match args.force_x {
        Some(x) => Some(response::force_frf(&v, x, freqs)?),
        None => None,
    };
    let wname = args.weighting.to_string().to_lowercase();
    let seats = v.seats.len();
    let weighted: Vec<WeightedJson> = (0..seats)
        .map(|s| WeightedJson {
            name: format!("{}_{}", road.channels[s].name, wname),
            weighting: args.weighting.to_string(),
            unit: "m/s^2 per m".to_string(),
            magnitude: freqs
                .iter()
                .zip(&road.values[s])
                .map(|(f, z)| z.norm() * args.weighting.magnitude(*f))
                .collect(),
        })
        .collect();

    if let Some(path) = args.output.as_deref() {
        write_csv(Some(path), &road, &weighted, force.as_ref(), &wname)?;
    } else if !args.json {
        return write_csv(None, &road, &weighted, force.as_ref(), &wname);
    }
    if args.json {
        let out = Output {
            vehicle: v.name.clone(),
            vehicle_file: args.vehicle.display().to_string(),
            speed_m_s: args.speed,
            wheelbase_m: v.wheelbase_m(),
            wheelbase_delay_s: v.wheelbase_m() / args.speed,
            frequencies_hz: freqs.clone(),
            road: channels_json(&road, "m"),
            weighted,
            force: force.as_ref().map(|f| ForceJson {
                x_m: args.force_x.unwrap_or(0.0),
                channels: channels_json(f, "N"),
            }),
            conventions: CONVENTIONS,
        };
        report::print_stdout(&report::json_line(&out, "frequency response")?)?;
        return Ok(());
    }
    report::print_stdout(&peaks_table(&args, &road, &weighted, force.as_ref()).render())?;
    Ok(())
}

fn write_csv(
    path: Option<&std::path::Path>,
    road: &FrequencyResponse,
    weighted: &[WeightedJson],
    force: Option<&FrequencyResponse>,
    wname: &str,
) -> Result<(), roughride::Error> {
    let shown = path.unwrap_or(std::path::Path::new("<stdout>"));
    report::write_to(path, |w| {
        let io = |e| report::io_error(shown, e);
        let mut header = vec!["freq_hz".to_string()];
        for c in &road.channels {
            header.push(format!("{}_mag_{}_per_m", c.name, c.unit_slug));
            header.push(format!("{}_phase_deg", c.name));
        }
        for (s, _) in weighted.iter().enumerate() {
            header.push(format!("{}_{wname}_mag_m_s2_per_m", road.channels[s].name));
        }
        if let Some(f) = force {
            for c in &f.channels {
                header.push(format!("force_{}_mag_{}_per_n", c.name, c.unit_slug));
                header.push(format!("force_{}_phase_deg", c.name));
            }
        }
        writeln!(w, "{}", header.join(",")).map_err(io)?;
        let mut line = String::new();
        for (i, freq) in road.frequencies_hz.iter().enumerate() {
            line.clear();
            line.push_str(&freq.to_string());
            let mut push = |x: f64| {
                line.push(',');
                line.push_str(&x.to_string());
            };
            for vals in &road.values {
                push(vals[i].norm());
                push(vals[i].arg().to_degrees());
            }
            for wj in weighted {
                push(wj.magnitude[i]);
            }
            if let Some(f) = force {
                for vals in &f.values {
                    push(vals[i].norm());
                    push(vals[i].arg().to_degrees());
                }
            }
            writeln!(w, "{line}").map_err(io)?;
        }
        Ok::<(), roughride::Error>(())
    })
}

fn peaks_table(
    args: &Args,
    road: &FrequencyResponse,
    weighted: &[WeightedJson],
    force: Option<&FrequencyResponse>,
) -> Table {
    let mut t = Table::new(format!(
        "Frequency response peaks at {} m/s, {}–{} Hz",
        sig(args.speed, 4),
        sig(road.frequencies_hz.first().copied().unwrap_or(0.0), 3),
        sig(road.frequencies_hz.last().copied().unwrap_or(0.0), 3)
    ))
    .with_header(["output", "peak", "unit", "at Hz"]);
    let f = &road.frequencies_hz;
    let peak = |vals: &mut dyn Iterator<Item = f64>| {
        vals.enumerate()
            .fold((f64::NEG_INFINITY, 0usize), |b, (i, x)| {
                if x > b.0 { (x, i) } else { b }
            })
    };
    for (c, vals) in road.channels.iter().zip(&road.values) {
        let (p, i) = peak(&mut vals.iter().map(|z| z.norm()));
        t.row([
            c.name.clone(),
            sig(p, 4),
            format!("{} per m", c.unit),
            sig(f[i], 4),
        ]);
    }
    for wj in weighted {
        let (p, i) = peak(&mut wj.magnitude.iter().copied());
        t.row([wj.name.clone(), sig(p, 4), wj.unit.clone(), sig(f[i], 4)]);
    }
    if let Some(fr) = force {
        for (c, vals) in fr.channels.iter().zip(&fr.values) {
            let (p, i) = peak(&mut vals.iter().map(|z| z.norm()));
            t.row([
                format!("force: {}", c.name),
                sig(p, 4),
                format!("{} per N", c.unit),
                sig(f[i], 4),
            ]);
        }
    }
    if let Some(p) = &args.output {
        t.note(format!("CSV written to {}", p.display()));
    }
    t
}
