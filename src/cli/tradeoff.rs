//! `roughride plot tradeoff`: the ride / road-holding / travel trade-off of
//! a `sweep --vary` study, as an SVG picture and a table (or JSON).

use std::path::{Path, PathBuf};

use clap::Args as ClapArgs;
use serde::Serialize;

use roughride::Error;
use roughride::batch::values::parse_speed_m_s;
use roughride::comfort::HEALTH_CAUTION;
use roughride::design::tradeoff::{
    AxleChoice, Selection, Tradeoff, TravelMeasure, read_sweep_table, tradeoff,
};
use roughride::report::tradeoff::{point_label, tradeoff_chart};
use roughride::report::{Table, io_error, json_line, sig, write_to};

/// A seat's aw against the dynamic load coefficient and against suspension
/// travel, one point per vehicle variant of a sweep (mean over its rows),
/// with the Pareto set of each plane joined and labelled.
///
/// A variant is a vehicle file with the values of its --vary columns. With
/// -o the picture goes to the file and the table (or --json) to stdout;
/// without -o the SVG goes to stdout, or the table alone with --table.
#[derive(Debug, ClapArgs)]
#[command(after_help = "Examples:\n  \
roughride sweep --vehicle bus.toml --vary rear.damping=*0.6:*1.4:*0.1 --vary rear.spring_rate=*0.8,*1,*1.2 --classes B,C,D --speeds 10,20 --seeds 2 --length 500 -o study.csv\n  \
roughride plot tradeoff study.csv -o tradeoff.svg\n  \
roughride plot tradeoff study.csv --travel bump --axle rear --speed 20 --json")]
pub struct Args {
    /// Sweep output: CSV or JSON Lines from `roughride sweep` (with --vary).
    pub file: PathBuf,
    /// Seat whose aw is drawn, 1-based (the seat{N}_aw column).
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seat: usize,
    /// Axle of the load and travel values: front, rear, or both (the larger of the two means).
    #[arg(long, default_value = "both", value_parser = parse_axle)]
    pub axle: AxleChoice,
    /// Travel measure: rms, p99 (99th percentile, compression) or bump (time past the bump stop).
    #[arg(long, default_value = "p99", value_parser = parse_travel)]
    pub travel: TravelMeasure,
    /// Only the rows at this speed (m/s, or km/h with a kmh suffix); default every speed.
    #[arg(long, value_name = "SPEED", value_parser = parse_speed)]
    pub speed: Option<f64>,
    /// Only the rows of this ISO 8608 class; default every road.
    #[arg(long, value_name = "CLASS")]
    pub class: Option<String>,
    /// Write the SVG here (atomically); the table then goes to stdout.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Print the points as one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Print the table (not the SVG) on stdout when there is no -o.
    #[arg(long, conflicts_with = "json")]
    pub table: bool,
    /// Title above the picture (a default names the input file).
    #[arg(long)]
    pub title: Option<String>,
}

fn parse_axle(s: &str) -> Result<AxleChoice, String> {
    s.parse()
}

fn parse_travel(s: &str) -> Result<TravelMeasure, String> {
    s.parse()
}

fn parse_speed(s: &str) -> Result<f64, String> {
    parse_speed_m_s(s).map_err(|e| e.to_string())
}

#[derive(Serialize)]
struct Output<'a> {
    #[serde(flatten)]
    tradeoff: &'a Tradeoff,
    caution: &'static str,
}

pub fn run(a: Args) -> Result<(), Error> {
    let sweep = read_sweep_table(&a.file)?;
    let selection = Selection {
        seat: a.seat,
        axle: a.axle,
        travel: a.travel,
        speed_m_s: a.speed,
        class: a.class.clone(),
    };
    let t = tradeoff(&a.file, &sweep, &selection)?;
    let title = a.title.clone().unwrap_or_else(|| {
        format!(
            "Ride against road holding and travel: {}",
            a.file.file_name().map_or_else(
                || a.file.display().to_string(),
                |n| n.to_string_lossy().into_owned()
            )
        )
    });
    let text = if a.json {
        Some(json_line(
            &Output {
                tradeoff: &t,
                caution: HEALTH_CAUTION,
            },
            "trade-off",
        )?)
    } else if a.output.is_some() || a.table {
        Some(render(&t))
    } else {
        None
    };
    if a.output.is_some() || text.is_none() {
        let svg = tradeoff_chart(&t, &title)?;
        write_to(a.output.as_deref(), |w| {
            let target = a.output.as_deref().unwrap_or(Path::new("<stdout>"));
            w.write_all(svg.as_bytes())
                .map_err(|e| io_error(target, e))?;
            Ok::<(), Error>(())
        })?;
    }
    if let Some(text) = text {
        roughride::report::print_stdout(&text)?;
    }
    Ok(())
}

fn render(t: &Tradeoff) -> String {
    let several = t.points.iter().any(|p| p.vehicle != t.points[0].vehicle);
    let travel = match t.selection.travel {
        TravelMeasure::Rms => "travel rms mm",
        TravelMeasure::P99 => "travel p99 mm",
        TravelMeasure::BumpStop => "past bump %",
    };
    let scale = match t.selection.travel {
        TravelMeasure::BumpStop => 1e2,
        _ => 1e3,
    };
    let mut header: Vec<String> = Vec::new();
    if several {
        header.push("vehicle".into());
    }
    header.extend(t.keys.iter().cloned());
    header.extend(
        [
            "rows",
            "aw m/s²",
            "DLC",
            travel,
            "Pareto load",
            "Pareto travel",
        ]
        .map(String::from),
    );
    let mut table = Table::new(format!(
        "Trade-off of seat {} aw over {} variants (mean of each variant's rows)",
        t.selection.seat,
        t.points.len()
    ))
    .with_header(header);
    for p in &t.points {
        let mut row: Vec<String> = Vec::new();
        if several {
            row.push(point_label(p, &[], true));
        }
        row.extend(t.keys.iter().map(|k| format!("{}", p.values[k])));
        row.extend([
            p.rows.to_string(),
            sig(p.aw_m_s2, 4),
            sig(p.dynamic_load_coefficient, 4),
            sig(p.travel * scale, 4),
            if p.pareto_load { "yes" } else { "" }.into(),
            if p.pareto_travel { "yes" } else { "" }.into(),
        ]);
        table.row(row);
    }
    table.note(HEALTH_CAUTION);
    table.render()
}
