//! `roughride modes`: natural frequencies, damping, mode shapes and nodes,
//! ride frequencies and flat-ride guidance of a vehicle
//! ([`roughride::vehicle::modal`] does the work).

use std::path::PathBuf;

use clap::Args as ClapArgs;
use roughride::report::plot::wrap;
use roughride::report::{self, Table, sig};
use roughride::vehicle::modal::{self, ModalAnalysis};
use roughride::vehicle::read_vehicle;
use serde::Serialize;

/// Natural frequencies and mode shapes of a vehicle (linear model).
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Example:\n  roughride modes --vehicle profiles/vehicles/demo_hatchback.toml --json"
)]
pub struct Args {
    /// Vehicle file (TOML).
    #[arg(long, value_name = "FILE")]
    pub vehicle: PathBuf,
    /// Print one JSON object instead of the tables.
    #[arg(long)]
    pub json: bool,
}

#[derive(Debug, Serialize)]
struct Output<'a> {
    vehicle_file: String,
    #[serde(flatten)]
    analysis: &'a ModalAnalysis,
}

/// Reads the vehicle, analyses it and prints.
pub fn run(args: Args) -> Result<(), roughride::Error> {
    let v = read_vehicle(&args.vehicle)?;
    let a = modal::modes(&v);
    if args.json {
        let out = Output {
            vehicle_file: args.vehicle.display().to_string(),
            analysis: &a,
        };
        report::print_stdout(&report::json_line(&out, "modes")?)?;
        return Ok(());
    }
    let text = [modes_table(&a), shapes_table(&a), ride_table(&a)]
        .map(|t| t.render())
        .join("\n");
    report::print_stdout(&text)?;
    Ok(())
}

fn modes_table(a: &ModalAnalysis) -> Table {
    let mut t = Table::new(format!(
        "Modes of {} (linear model, dampers at their mean rate)",
        a.vehicle
    ))
    .with_header([
        "#",
        "mode",
        "undamped Hz",
        "damped Hz",
        "damping ratio",
        "node x m",
        "node lies",
    ]);
    for (i, m) in a.modes.iter().enumerate() {
        let (node_x, node) = match &m.node {
            Some(n) => (sig(n.x_m, 4), node_place(n).to_string()),
            None if m.kind == "bounce" || m.kind == "pitch" => {
                ("-".to_string(), "none (pure heave)".to_string())
            }
            None => ("-".to_string(), "-".to_string()),
        };
        let damped = if m.overdamped {
            "overdamped".to_string()
        } else {
            sig(m.damped_frequency_hz, 4)
        };
        let kind = match &m.seat {
            Some(name) => format!("{} ({name})", m.kind),
            None => m.kind.to_string(),
        };
        t.row([
            (i + 1).to_string(),
            kind,
            sig(m.undamped_frequency_hz, 4),
            damped,
            sig(m.damping_ratio, 3),
            node_x,
            node,
        ]);
    }
    t.note("Node: the body point that does not move vertically (x = -z/theta from the CG,");
    t.note("+ ahead; `modes --json` gives it in words too).");
    if a.modes.iter().any(|m| m.overdamped) {
        t.note("Overdamped: two real roots; damping ratio -(l1+l2)/(2*sqrt(l1*l2)) > 1.");
    }
    t
}

fn shapes_table(a: &ModalAnalysis) -> Table {
    let mut header = vec!["#".to_string(), "mode".to_string()];
    for d in &a.dofs {
        let unit = if *d == "pitch" { "rad" } else { "m" };
        header.push(format!("{d} {unit}"));
    }
    header.push("energy % (by coordinate)".to_string());
    let mut t =
        Table::new("Undamped mode shapes (scaled to 1 in the coordinate of largest energy)")
            .with_header(header);
    for (i, m) in a.modes.iter().enumerate() {
        let mut row = vec![(i + 1).to_string(), m.kind.to_string()];
        for c in &m.shape {
            row.push(sig(c.value, 3));
        }
        row.push(
            m.shape
                .iter()
                .map(|c| format!("{:.0}", 100.0 * c.energy_fraction))
                .collect::<Vec<_>>()
                .join(" / "),
        );
        t.row(row);
    }
    t
}

fn ride_table(a: &ModalAnalysis) -> Table {
    let r = &a.ride_frequencies;
    let mut t = Table::new("Ride frequencies and flat-ride indicators")
        .with_header(["quantity", "value", "unit"]);
    t.row([
        "front ride frequency (axle alone)".into(),
        sig(r.front_hz, 3),
        "Hz".to_string(),
    ]);
    t.row([
        "rear ride frequency (axle alone)".into(),
        sig(r.rear_hz, 3),
        "Hz".to_string(),
    ]);
    t.row([
        "front / rear".into(),
        sig(r.front_to_rear, 3),
        String::new(),
    ]);
    t.row([
        "pitch / bounce frequency".into(),
        sig(a.pitch_to_bounce_ratio, 3),
        String::new(),
    ]);
    t.row([
        "dynamic index J/(m a b)".into(),
        sig(a.dynamic_index, 3),
        String::new(),
    ]);
    // Notes wrapped so the report stays within 100 columns.
    for g in &a.guidance {
        for (k, line) in wrap(g, 94).into_iter().enumerate() {
            t.note(format!("{} {line}", if k == 0 { "-" } else { " " }));
        }
    }
    t
}

/// Where a node lies, in a few words (the table's last column).
fn node_place(n: &roughride::vehicle::modal::Node) -> &'static str {
    match (n.outside_wheelbase, n.x_m > 0.0) {
        (false, _) => "inside the wheelbase",
        (true, true) => "ahead of the front axle",
        (true, false) => "behind the rear axle",
    }
}
