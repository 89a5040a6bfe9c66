//! One output row per sweep case, as CSV or as a JSON object on one line
//! (JSON Lines), with the same keys in the same order.
//!
//! # Columns
//! `case,vehicle`, one column per varied key named as the key
//! (`front.damping`, in `--vary` order; none without `--vary`), then
//! `road,class,speed_m_s,seed,seat_aw,speed_kmh`, then per seat `i`
//! (1-based, in vehicle-file order) `seat{i}_aw,seat{i}_vdv,seat{i}_mtvv,
//! seat{i}_crest_factor`, then per axle (`front`, `rear`)
//! `travel_rms_{axle}_m,travel_min_{axle}_m,travel_max_{axle}_m`, the
//! travel percentiles `travel_p1_{axle}_m … travel_p99_{axle}_m` (1, 5, 50,
//! 95, 99 %, resolution 0.1 mm), `tyre_load_rms_{axle}_n,
//! dynamic_load_coefficient_{axle},time_off_ground_fraction_{axle},
//! time_past_bump_fraction_{axle},time_past_rebound_fraction_{axle}` (the
//! last two empty for an axle without that stop), then `heave_accel_rms_m_s2,
//! pitch_accel_rms_rad_s2,duration_s,length_m,solver`, then per seat
//! `seat{i}_fore_aft_aw,seat{i}_total_value` (Wd aw of the fore-aft
//! acceleration and the comfort total value, m/s²), then, when some
//! vehicle of the sweep has a suspended seat, `seat{i}_seat_pct` for
//! `i = 1 …` the last seat index suspended in any of them (SEAT, the
//! seat-surface aw over the floor aw in %; empty for a seat without a
//! suspension), then `checks`, and last `caution` (the same short text
//! in every row, [`ROW_CAUTION`]: the comfort and health figures of a row
//! are model estimates).
//!
//! `checks` is `ok` when the plausibility checks found nothing, else
//! `warning:` or `implausible:` followed by the finding codes joined by `;`
//! (e.g. `implausible:energy_balance;travel_beyond_energy`): a row marked
//! implausible is not a result (see [`crate::plausibility`]).
//!
//! `seat_aw` is the first seat's aw (a documented key), m/s²; `speed_kmh`
//! the speed in km/h (rounded to 10⁻⁹ km/h); aw, MTVV in
//! m/s², VDV in m/s^1.75 (ISO 2631-1). `vehicle` is the vehicle file as
//! given; `road` the class letter or the profile file as given; `class` and
//! `seed` are empty (JSON `null`) for a profile file. A vehicle with fewer
//! seats than the sweep's largest leaves the extra seat cells empty.
//!
//! # Numbers
//! CSV cells use Rust's `{}` for `f64`: the shortest decimal that reads back
//! to the same binary value, never an exponent, independent of platform and
//! locale. JSON numbers are serde_json's shortest round-trip form. Either way
//! a value parsed from a row equals the run's value exactly.

use std::fmt::Write as _;

use crate::pipeline::{AxleSummary, RunSummary};
use crate::stats::durability::PERCENTILES;

use super::grid::{Case, Grid};

/// One cell of a row.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    /// A whole number.
    Int(u64),
    /// A real number.
    Num(f64),
    /// Text.
    Text(String),
    /// No value (CSV empty, JSON null).
    Empty,
}

/// How many seats a sweep's rows describe: `all` per-seat columns of the
/// ride measures, and `suspended` SEAT columns (1-based index of the last
/// seat with a suspension in any vehicle; 0 when none has one, so sweeps of
/// vehicles without suspended seats keep their columns).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SeatColumns {
    /// The largest seat count over the grid's vehicles.
    pub all: usize,
    /// The number of `seat{i}_seat_pct` columns.
    pub suspended: usize,
}

/// The column names of a sweep whose vehicles have the seats `seats`
/// and whose variants vary `varied` (one column each, after `vehicle`).
pub fn columns(seats: SeatColumns, varied: &[String]) -> Vec<String> {
    let (suspended, seats) = (seats.suspended, seats.all);
    let mut c: Vec<String> = ["case", "vehicle"].iter().map(|s| s.to_string()).collect();
    c.extend(varied.iter().cloned());
    c.extend(
        // `speed_kmh` after the documented `class,speed_m_s,seed,seat_aw`,
        // which stay together.
        ["road", "class", "speed_m_s", "seed", "seat_aw", "speed_kmh"]
            .iter()
            .map(|s| s.to_string()),
    );
    for i in 1..=seats {
        for m in ["aw", "vdv", "mtvv", "crest_factor"] {
            c.push(format!("seat{i}_{m}"));
        }
    }
    for a in ["front", "rear"] {
        c.push(format!("travel_rms_{a}_m"));
        c.push(format!("travel_min_{a}_m"));
        c.push(format!("travel_max_{a}_m"));
        for p in PERCENTILES {
            c.push(format!("travel_p{p}_{a}_m"));
        }
        c.push(format!("tyre_load_rms_{a}_n"));
        c.push(format!("dynamic_load_coefficient_{a}"));
        c.push(format!("time_off_ground_fraction_{a}"));
        c.push(format!("time_past_bump_fraction_{a}"));
        c.push(format!("time_past_rebound_fraction_{a}"));
    }
    for s in [
        "heave_accel_rms_m_s2",
        "pitch_accel_rms_rad_s2",
        "duration_s",
        "length_m",
        "solver",
    ] {
        c.push(s.to_string());
    }
    for i in 1..=seats {
        c.push(format!("seat{i}_fore_aft_aw"));
        c.push(format!("seat{i}_total_value"));
    }
    for i in 1..=suspended {
        c.push(format!("seat{i}_seat_pct"));
    }
    c.push("checks".to_string());
    c.push("caution".to_string());
    c
}

/// The `caution` cell of every row: a row's aw, VDV, MTVV and total values
/// are estimates from a model (the long form, [`crate::comfort::HEALTH_CAUTION`],
/// is printed on stderr). No comma, so a naive CSV split keeps the columns.
pub const ROW_CAUTION: &str = "model estimate (not a measurement); ISO 2631-1 and local regulation and qualified practice govern";

/// A speed in km/h as a reader wrote it: `v·3.6` rounded to 10⁻⁹ km/h, so
/// that 50 km/h (13.888… m/s) prints as `50`, not `50.00000000000001`.
pub fn speed_kmh(speed_m_s: f64) -> f64 {
    (speed_m_s * 3.6 * 1e9).round() / 1e9
}

/// The seat columns of a sweep over the grid's vehicles.
pub fn seat_columns(grid: &Grid) -> SeatColumns {
    let all = grid
        .vehicles
        .iter()
        .map(|v| v.vehicle.seats.len())
        .max()
        .unwrap_or(0);
    let suspended = grid
        .vehicles
        .iter()
        .filter_map(|v| v.vehicle.seats.iter().rposition(|s| s.suspension.is_some()))
        .map(|i| i + 1)
        .max()
        .unwrap_or(0);
    SeatColumns { all, suspended }
}

/// The cells of one case's row, in [`columns`] order.
pub fn cells(grid: &Grid, case: &Case, s: &RunSummary, seat_columns: SeatColumns) -> Vec<Cell> {
    let seats = seat_columns.all;
    let road = &grid.roads[case.road];
    let vehicle = &grid.vehicles[case.vehicle];
    let mut r = vec![
        Cell::Int(case.index as u64),
        Cell::Text(vehicle.file.clone()),
    ];
    r.extend(vehicle.varied.iter().map(|x| Cell::Num(*x)));
    r.extend([
        Cell::Text(road.label()),
        road.class()
            .map_or(Cell::Empty, |c| Cell::Text(c.to_string())),
        Cell::Num(case.speed_m_s),
        case.seed.map_or(Cell::Empty, Cell::Int),
        s.seats
            .first()
            .map_or(Cell::Empty, |x| Cell::Num(x.measures.aw)),
        Cell::Num(speed_kmh(case.speed_m_s)),
    ]);
    for i in 0..seats {
        match s.seats.get(i) {
            Some(x) => {
                let m = &x.measures;
                r.extend([m.aw, m.vdv, m.mtvv, m.crest_factor].map(Cell::Num));
            }
            None => r.extend(std::iter::repeat_n(Cell::Empty, 4)),
        }
    }
    for a in [&s.axles.front, &s.axles.rear] {
        r.extend(axle_cells(a));
    }
    r.extend([
        Cell::Num(s.body.heave_accel_rms),
        Cell::Num(s.body.pitch_accel_rms),
        Cell::Num(s.duration_s),
        Cell::Num(s.length_m),
        Cell::Text(s.solver.solver.name().to_string()),
    ]);
    for i in 0..seats {
        match s.seats.get(i) {
            Some(x) => r.extend([x.fore_aft.aw, x.total_value].map(Cell::Num)),
            None => r.extend(std::iter::repeat_n(Cell::Empty, 2)),
        }
    }
    for i in 0..seat_columns.suspended {
        let pct = s
            .seats
            .get(i)
            .and_then(|x| x.seat_effective_amplitude_transmissibility_pct);
        r.push(pct.map_or(Cell::Empty, Cell::Num));
    }
    r.push(Cell::Text(checks_cell(&s.checks.findings)));
    r.push(Cell::Text(ROW_CAUTION.to_string()));
    r
}

/// The `checks` cell: `ok`, or the severity and the finding codes.
pub fn checks_cell(findings: &[crate::plausibility::Finding]) -> String {
    if findings.is_empty() {
        return "ok".to_string();
    }
    let head = if crate::plausibility::any_implausible(findings) {
        "implausible"
    } else {
        "warning"
    };
    let mut codes: Vec<&str> = findings.iter().map(|f| f.code).collect();
    codes.dedup();
    format!("{head}:{}", codes.join(";"))
}

fn axle_cells(a: &AxleSummary) -> Vec<Cell> {
    let mut c: Vec<Cell> = [a.travel_rms, a.travel_min, a.travel_max]
        .map(Cell::Num)
        .to_vec();
    let d = &a.durability;
    for p in PERCENTILES {
        // The summary lists the same percentiles; a missing one stays empty.
        let v = d
            .travel_percentiles_m
            .iter()
            .find(|(q, _)| *q == p)
            .map(|(_, v)| *v);
        c.push(v.map_or(Cell::Empty, Cell::Num));
    }
    c.extend(
        [
            a.tyre_load_rms,
            a.dynamic_load_coefficient,
            a.time_off_ground_fraction,
        ]
        .map(Cell::Num),
    );
    for f in [d.time_past_bump_fraction, d.time_past_rebound_fraction] {
        c.push(f.map_or(Cell::Empty, Cell::Num));
    }
    c
}

/// Quotes a CSV field when it holds a comma, quote or line break (RFC 4180).
pub fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

/// The CSV header line (with newline).
pub fn csv_header(columns: &[String]) -> String {
    let mut s = columns
        .iter()
        .map(|c| csv_field(c))
        .collect::<Vec<_>>()
        .join(",");
    s.push('\n');
    s
}

/// One CSV line (with newline).
pub fn csv_line(cells: &[Cell]) -> String {
    let mut s = String::with_capacity(512);
    for (i, c) in cells.iter().enumerate() {
        if i > 0 {
            s.push(',');
        }
        match c {
            Cell::Int(v) => {
                let _ = write!(s, "{v}");
            }
            Cell::Num(v) => {
                let _ = write!(s, "{v}");
            }
            Cell::Text(t) => s.push_str(&csv_field(t)),
            Cell::Empty => {}
        }
    }
    s.push('\n');
    s
}

/// One JSON object on one line (with newline), keys in column order.
pub fn json_line(columns: &[String], cells: &[Cell]) -> String {
    let mut s = String::with_capacity(1024);
    s.push('{');
    for (i, (k, c)) in columns.iter().zip(cells).enumerate() {
        if i > 0 {
            s.push(',');
        }
        s.push_str(&json_string(k));
        s.push(':');
        match c {
            Cell::Int(v) => {
                let _ = write!(s, "{v}");
            }
            // serde_json writes non-finite numbers as null.
            Cell::Num(v) => s.push_str(&serde_json::Value::from(*v).to_string()),
            Cell::Text(t) => s.push_str(&json_string(t)),
            Cell::Empty => s.push_str("null"),
        }
    }
    s.push_str("}\n");
    s
}

fn json_string(t: &str) -> String {
    serde_json::Value::from(t).to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_row_caution_needs_no_quoting_and_names_the_standard() {
        assert_eq!(csv_field(ROW_CAUTION), ROW_CAUTION);
        assert!(ROW_CAUTION.contains("ISO 2631-1") && ROW_CAUTION.contains("not a measurement"));
    }

    #[test]
    fn csv_fields_are_quoted_only_when_needed() {
        // RFC 4180 section 2: fields holding commas, quotes or line breaks are
        // enclosed in quotes, and quotes inside are doubled.
        assert_eq!(csv_field("plain.toml"), "plain.toml");
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        let line = csv_line(&[
            Cell::Int(3),
            Cell::Text("x,y".into()),
            Cell::Empty,
            Cell::Num(0.1),
        ]);
        assert_eq!(line, "3,\"x,y\",,0.1\n");
        // The csv crate (a general-purpose reader) reads the fields back.
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(line.as_bytes());
        let rec = rdr.records().next().unwrap().unwrap();
        assert_eq!(rec.iter().collect::<Vec<_>>(), vec!["3", "x,y", "", "0.1"]);
    }

    #[test]
    fn numbers_read_back_exactly() {
        let values = [
            0.1 + 0.2,
            1.0 / 3.0,
            1e-300,
            6.02e23,
            -0.0,
            12.5,
            2.0f64.sqrt() * 1e-7,
        ];
        let cells: Vec<Cell> = values.iter().map(|v| Cell::Num(*v)).collect();
        let line = csv_line(&cells);
        assert!(!line.contains('e'), "no exponent in CSV: {line}");
        for (text, v) in line.trim_end().split(',').zip(values) {
            assert_eq!(
                text.parse::<f64>().unwrap().to_bits(),
                v.to_bits(),
                "{text}"
            );
        }
        // JSON: serde_json writes the shortest round-trip form (ryu); read the
        // number text back with Rust's correctly rounded parser (serde_json's
        // own default parser may miss by an ulp).
        let cols: Vec<String> = (0..values.len()).map(|i| format!("c{i}")).collect();
        let line = json_line(&cols, &cells);
        let body = line
            .trim_end()
            .trim_start_matches('{')
            .trim_end_matches('}');
        for ((pair, k), v) in body.split(',').zip(&cols).zip(values) {
            let (key, text) = pair.split_once(':').unwrap();
            assert_eq!(key, format!("\"{k}\""));
            assert_eq!(
                text.parse::<f64>().unwrap().to_bits(),
                v.to_bits(),
                "{k}: {text}"
            );
        }
    }

    #[test]
    fn km_per_h_prints_as_written() {
        // 1 m/s = 3.6 km/h exactly (definition of the units).
        assert_eq!(speed_kmh(50.0 / 3.6), 50.0);
        assert_eq!(speed_kmh(20.0), 72.0);
        assert_eq!(format!("{}", speed_kmh(36.0 / 3.6)), "36");
        assert_eq!(speed_kmh(13.3), 47.88);
    }

    #[test]
    fn the_header_holds_the_documented_columns() {
        // The documented interface (profiles/reference.md): the header holds
        // `class,speed_m_s,seed,seat_aw` in this order, side by side, with
        // or without varied keys.
        let two = SeatColumns {
            all: 2,
            suspended: 0,
        };
        let c = columns(two, &[]);
        assert!(c.join(",").contains(",class,speed_m_s,seed,seat_aw,"));
        let one = SeatColumns {
            all: 1,
            suspended: 1,
        };
        let v = columns(one, &["front.damping".to_string()]);
        assert!(
            v.join(",")
                .ends_with(",seat1_total_value,seat1_seat_pct,checks,caution")
        );
        assert!(!c.iter().any(|x| x.ends_with("_seat_pct")));
        assert!(v.join(",").contains(",class,speed_m_s,seed,seat_aw,"));
        for key in [
            "class",
            "speed_m_s",
            "seed",
            "seat_aw",
            "seat2_mtvv",
            "travel_rms_rear_m",
        ] {
            assert!(c.iter().any(|x| x == key), "{key}");
        }
        let json: serde_json::Value = serde_json::from_str(&json_line(
            &["class".into(), "seed".into()],
            &[Cell::Empty, Cell::Int(2)],
        ))
        .unwrap();
        assert!(json["class"].is_null());
        assert_eq!(json["seed"], 2);
    }
}
