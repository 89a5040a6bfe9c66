//! The ride / road-holding / travel trade-off of a design study: from the
//! rows of a sweep, one point per vehicle variant, and the variants that no
//! other beats on both axes (the Pareto set).
//!
//! A variant is a vehicle file together with the values of its varied keys
//! (the columns between `vehicle` and `road` of a `sweep --vary` output).
//! Its point averages, over the rows kept (every seed and road, and every
//! speed unless one is chosen), a seat's aw, the dynamic load coefficient
//! and one travel measure: r.m.s., the 99th percentile (compression) or the
//! fraction of time past the bump stop. With both axles, each quantity is
//! the larger of the front and rear means (the axle that limits the design).
//!
//! Every quantity is one to keep small, so a variant `p` is beaten
//! (dominated) by `q` when `q` is no worse on both axes and better on one;
//! the Pareto set of a plane is the variants nobody beats there
//! (Deb, *Multi-Objective Optimization using Evolutionary Algorithms*,
//! Wiley 2001, ch. 2).

use std::collections::BTreeMap;
use std::path::Path;

use serde::Serialize;

/// Which travel measure goes on the second plane.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TravelMeasure {
    /// Travel r.m.s., m (`travel_rms_{axle}_m`).
    Rms,
    /// 99th percentile of travel, compression, m (`travel_p99_{axle}_m`).
    P99,
    /// Fraction of time past the bump stop (`time_past_bump_fraction_{axle}`).
    BumpStop,
}

impl TravelMeasure {
    /// The sweep column of this measure for `axle`.
    pub fn column(self, axle: &str) -> String {
        match self {
            TravelMeasure::Rms => format!("travel_rms_{axle}_m"),
            TravelMeasure::P99 => format!("travel_p99_{axle}_m"),
            TravelMeasure::BumpStop => format!("time_past_bump_fraction_{axle}"),
        }
    }
}

impl std::str::FromStr for TravelMeasure {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s {
            "rms" => Ok(TravelMeasure::Rms),
            "p99" => Ok(TravelMeasure::P99),
            "bump" | "bump-stop" => Ok(TravelMeasure::BumpStop),
            _ => Err(format!(
                "unknown travel measure {s:?}: give rms, p99 or bump (time past the bump stop)"
            )),
        }
    }
}

/// Which axle's values count.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AxleChoice {
    /// The front axle.
    Front,
    /// The rear axle.
    Rear,
    /// The larger of the two (per quantity, of the variant's means).
    Both,
}

impl std::str::FromStr for AxleChoice {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s {
            "front" => Ok(AxleChoice::Front),
            "rear" => Ok(AxleChoice::Rear),
            "both" => Ok(AxleChoice::Both),
            _ => Err(format!("unknown axle {s:?}: give front, rear or both")),
        }
    }
}

impl AxleChoice {
    fn axles(self) -> &'static [&'static str] {
        match self {
            AxleChoice::Front => &["front"],
            AxleChoice::Rear => &["rear"],
            AxleChoice::Both => &["front", "rear"],
        }
    }
}

/// What to draw from a sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Selection {
    /// Seat, 1-based (its `seat{N}_aw` column).
    pub seat: usize,
    /// Axle of the DLC and travel values.
    pub axle: AxleChoice,
    /// Travel measure.
    pub travel: TravelMeasure,
    /// Only rows at this speed, m/s (within 10⁻⁹ relative); all when `None`.
    pub speed_m_s: Option<f64>,
    /// Only rows of this road class; all when `None`.
    pub class: Option<String>,
}

/// A sweep's rows as text cells under their header.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepTable {
    /// Column names.
    pub header: Vec<String>,
    /// Rows: (line number in the file, cells).
    pub rows: Vec<(u64, Vec<String>)>,
}

fn bad(path: &Path, line: u64, message: impl std::fmt::Display) -> crate::Error {
    crate::Error::Usage(format!("{}: line {line}: {message}", path.display()))
}

/// Reads a sweep output, CSV or JSON Lines (keys in column order).
pub fn read_sweep_table(path: &Path) -> Result<SweepTable, crate::Error> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| crate::Error::Usage(format!("{}: cannot read: {e}", path.display())))?;
    if text.trim_start().starts_with('{') {
        return json_lines_table(path, &text);
    }
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header = rdr
        .headers()
        .map_err(|e| bad(path, 1, e))?
        .iter()
        .map(String::from)
        .collect();
    let mut rows = Vec::new();
    for rec in rdr.records() {
        let rec = rec.map_err(|e| bad(path, e.position().map_or(0, |p| p.line()), e))?;
        let line = rec.position().map_or(0, |p| p.line());
        rows.push((line, rec.iter().map(String::from).collect()));
    }
    Ok(SweepTable { header, rows })
}

fn json_lines_table(path: &Path, text: &str) -> Result<SweepTable, crate::Error> {
    let mut header: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    for (n, line) in text.lines().enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        let lno = n as u64 + 1;
        let v: serde_json::Map<String, serde_json::Value> =
            serde_json::from_str(line).map_err(|e| bad(path, lno, e))?;
        // The map holds its keys sorted; the line's own order is the
        // column order (the varied keys sit between `vehicle` and `road`).
        let mut keys: Vec<String> = v.keys().cloned().collect();
        let at = |k: &String| {
            let quoted = serde_json::Value::from(k.as_str()).to_string();
            line.find(&format!("{quoted}:")).unwrap_or(usize::MAX)
        };
        keys.sort_by_key(at);
        match &header {
            None => header = Some(keys.clone()),
            Some(h) if *h != keys => {
                return Err(bad(path, lno, "the keys differ from the first line's"));
            }
            Some(_) => {}
        }
        let cells = keys
            .iter()
            .map(|k| match &v[k] {
                serde_json::Value::Null => String::new(),
                serde_json::Value::String(s) => s.clone(),
                other => other.to_string(),
            })
            .collect();
        rows.push((lno, cells));
    }
    Ok(SweepTable {
        header: header.unwrap_or_default(),
        rows,
    })
}

/// One variant's point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Point {
    /// The vehicle file as the sweep names it.
    pub vehicle: String,
    /// The varied keys and their values.
    pub values: BTreeMap<String, f64>,
    /// Rows averaged.
    pub rows: usize,
    /// Mean aw of the seat, m/s² (ISO 2631-1).
    pub aw_m_s2: f64,
    /// Mean dynamic load coefficient (the larger axle's with both).
    pub dynamic_load_coefficient: f64,
    /// Mean travel measure (m, or a fraction of time for the bump stop).
    pub travel: f64,
    /// In the Pareto set of aw against the dynamic load coefficient.
    pub pareto_load: bool,
    /// In the Pareto set of aw against travel.
    pub pareto_travel: bool,
}

/// A trade-off: the selection and one point per variant, in the order the
/// variants first appear in the sweep.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tradeoff {
    /// What was selected.
    pub selection: Selection,
    /// The varied keys, in column order.
    pub keys: Vec<String>,
    /// The points.
    pub points: Vec<Point>,
}

struct Columns {
    vehicle: usize,
    keys: Vec<(String, usize)>,
    aw: usize,
    speed: usize,
    class: Option<usize>,
    load: Vec<usize>,
    travel: Vec<usize>,
}

fn columns(path: &Path, header: &[String], sel: &Selection) -> Result<Columns, crate::Error> {
    let find = |name: &str| {
        header.iter().position(|h| h == name).ok_or_else(|| {
            bad(
                path,
                1,
                format!("no column `{name}`: is this the output of `roughride sweep`?"),
            )
        })
    };
    let vehicle = find("vehicle")?;
    let road = find("road")?;
    let keys = (vehicle + 1..road)
        .map(|i| (header[i].clone(), i))
        .collect();
    let axles = sel.axle.axles();
    Ok(Columns {
        vehicle,
        keys,
        aw: find(&format!("seat{}_aw", sel.seat))?,
        speed: find("speed_m_s")?,
        class: header.iter().position(|h| h == "class"),
        load: axles
            .iter()
            .map(|a| find(&format!("dynamic_load_coefficient_{a}")))
            .collect::<Result<_, _>>()?,
        travel: axles
            .iter()
            .map(|a| find(&sel.travel.column(a)))
            .collect::<Result<_, _>>()?,
    })
}

/// Sums of one variant's rows.
struct Sums {
    vehicle: String,
    values: Vec<f64>,
    rows: usize,
    aw: f64,
    load: Vec<f64>,
    travel: Vec<f64>,
}

fn number(
    path: &Path,
    line: u64,
    header: &[String],
    cells: &[String],
    i: usize,
) -> Result<f64, crate::Error> {
    let text = cells.get(i).map_or("", String::as_str);
    let why = if text.is_empty() {
        " (empty: is there a bump stop on that axle?)"
    } else {
        ""
    };
    text.parse::<f64>()
        .ok()
        .filter(|x| x.is_finite())
        .ok_or_else(|| {
            bad(
                path,
                line,
                format!("column `{}`: {text:?} is not a number{why}", header[i]),
            )
        })
}

/// Whether a row passes the selection's speed and class filters.
fn selected(
    c: &Columns,
    sel: &Selection,
    cells: &[String],
    speed: impl Fn() -> Result<f64, crate::Error>,
) -> Result<bool, crate::Error> {
    if let Some(want) = sel.speed_m_s {
        if (speed()? - want).abs() > 1e-9 * want.abs() {
            return Ok(false);
        }
    }
    if let (Some(want), Some(ci)) = (&sel.class, c.class) {
        if cells.get(ci) != Some(want) {
            return Ok(false);
        }
    }
    Ok(true)
}

/// The sums of every variant's selected rows, in order of first appearance.
fn sums(
    path: &Path,
    table: &SweepTable,
    c: &Columns,
    sel: &Selection,
) -> Result<Vec<Sums>, crate::Error> {
    let mut order: Vec<Sums> = Vec::new();
    let mut index: BTreeMap<(String, Vec<u64>), usize> = BTreeMap::new();
    for (line, cells) in &table.rows {
        let num = |i| number(path, *line, &table.header, cells, i);
        if !selected(c, sel, cells, || num(c.speed))? {
            continue;
        }
        let values = c
            .keys
            .iter()
            .map(|(_, i)| num(*i))
            .collect::<Result<Vec<_>, _>>()?;
        let vehicle = cells.get(c.vehicle).cloned().unwrap_or_default();
        let id = (
            vehicle.clone(),
            values.iter().map(|x| x.to_bits()).collect(),
        );
        let k = *index.entry(id).or_insert_with(|| {
            order.push(Sums {
                vehicle,
                values,
                rows: 0,
                aw: 0.0,
                load: vec![0.0; c.load.len()],
                travel: vec![0.0; c.travel.len()],
            });
            order.len() - 1
        });
        let s = &mut order[k];
        s.rows += 1;
        s.aw += num(c.aw)?;
        for (acc, i) in s.load.iter_mut().zip(&c.load) {
            *acc += num(*i)?;
        }
        for (acc, i) in s.travel.iter_mut().zip(&c.travel) {
            *acc += num(*i)?;
        }
    }
    Ok(order)
}

/// The trade-off of the sweep `table` (read from `path`, named in messages).
pub fn tradeoff(
    path: &Path,
    table: &SweepTable,
    sel: &Selection,
) -> Result<Tradeoff, crate::Error> {
    if sel.seat == 0 {
        return Err(crate::Error::Usage(
            "--seat: seats are numbered from 1".into(),
        ));
    }
    let c = columns(path, &table.header, sel)?;
    let order = sums(path, table, &c, sel)?;
    if order.is_empty() {
        return Err(crate::Error::Usage(format!(
            "{}: no row matches the selection (--speed, --class)",
            path.display()
        )));
    }
    // The larger axle's mean (one axle: its mean).
    let worst = |v: &[f64], n: usize| {
        v.iter()
            .map(|x| x / n as f64)
            .fold(f64::NEG_INFINITY, f64::max)
    };
    let mut points: Vec<Point> = order
        .into_iter()
        .map(|s| Point {
            values: c
                .keys
                .iter()
                .map(|(k, _)| k.clone())
                .zip(s.values)
                .collect(),
            vehicle: s.vehicle,
            rows: s.rows,
            aw_m_s2: s.aw / s.rows as f64,
            dynamic_load_coefficient: worst(&s.load, s.rows),
            travel: worst(&s.travel, s.rows),
            pareto_load: false,
            pareto_travel: false,
        })
        .collect();
    let load: Vec<(f64, f64)> = points
        .iter()
        .map(|p| (p.dynamic_load_coefficient, p.aw_m_s2))
        .collect();
    let travel: Vec<(f64, f64)> = points.iter().map(|p| (p.travel, p.aw_m_s2)).collect();
    for i in pareto_set(&load) {
        points[i].pareto_load = true;
    }
    for i in pareto_set(&travel) {
        points[i].pareto_travel = true;
    }
    Ok(Tradeoff {
        selection: sel.clone(),
        keys: c.keys.into_iter().map(|(k, _)| k).collect(),
        points,
    })
}

/// Indices of the points (x, y), both to be minimised, that no other point
/// dominates, in increasing x. Sorted sweep: after ordering by x then y, a
/// point is in the set when its y is below every y seen before it (equal
/// points are all kept: neither beats the other).
pub fn pareto_set(points: &[(f64, f64)]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|&a, &b| {
        points[a]
            .0
            .total_cmp(&points[b].0)
            .then(points[a].1.total_cmp(&points[b].1))
            .then(a.cmp(&b))
    });
    let mut out: Vec<usize> = Vec::new();
    let mut best_y = f64::INFINITY;
    let mut last: Option<(f64, f64)> = None;
    for i in order {
        let p = points[i];
        if p.1 < best_y || last == Some(p) {
            out.push(i);
            best_y = best_y.min(p.1);
            last = Some(p);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    /// Brute force: `p` is in the set when no `q` is ≤ on both and < on one.
    fn dominated(points: &[(f64, f64)], i: usize) -> bool {
        let p = points[i];
        points
            .iter()
            .any(|q| q.0 <= p.0 && q.1 <= p.1 && (q.0 < p.0 || q.1 < p.1))
    }

    #[test]
    fn the_pareto_set_equals_a_brute_force_dominance_check() {
        let mut rng = rand_chacha::ChaCha20Rng::seed_from_u64(7);
        for trial in 0..300 {
            let n = 1 + trial % 40;
            // Coarse values make ties and duplicates common.
            let coarse = trial % 3 == 0;
            let points: Vec<(f64, f64)> = (0..n)
                .map(|_| {
                    let (x, y): (f64, f64) = (rng.random(), rng.random());
                    if coarse {
                        ((x * 5.0).floor(), (y * 5.0).floor())
                    } else {
                        (x, y)
                    }
                })
                .collect();
            let mut got = pareto_set(&points);
            got.sort();
            let want: Vec<usize> = (0..n).filter(|&i| !dominated(&points, i)).collect();
            assert_eq!(got, want, "trial {trial}: {points:?}");
        }
    }

    fn table(rows: &[&str]) -> SweepTable {
        let header = "case,vehicle,rear.damping,road,class,speed_m_s,seed,seat_aw,seat1_aw,dynamic_load_coefficient_front,travel_p99_front_m,dynamic_load_coefficient_rear,travel_p99_rear_m";
        SweepTable {
            header: header.split(',').map(String::from).collect(),
            rows: rows
                .iter()
                .enumerate()
                .map(|(i, r)| (i as u64 + 2, r.split(',').map(String::from).collect()))
                .collect(),
        }
    }

    #[test]
    fn points_average_a_variants_rows_and_take_the_worse_axle() {
        let t = table(&[
            "0,v.toml,1000,C,C,10,1,0.5,0.5,0.1,0.02,0.3,0.03",
            "1,v.toml,1000,C,C,10,2,0.7,0.7,0.2,0.04,0.1,0.01",
            "2,v.toml,2000,C,C,10,1,0.9,0.9,0.1,0.01,0.1,0.01",
            "3,v.toml,2000,C,C,20,1,1.1,1.1,0.1,0.01,0.1,0.01",
        ]);
        let sel = Selection {
            seat: 1,
            axle: AxleChoice::Both,
            travel: TravelMeasure::P99,
            speed_m_s: None,
            class: None,
        };
        let t = tradeoff(Path::new("s.csv"), &t, &sel).unwrap();
        assert_eq!(t.keys, vec!["rear.damping"]);
        assert_eq!(t.points.len(), 2);
        let p = &t.points[0];
        assert_eq!((p.rows, p.values["rear.damping"]), (2, 1000.0));
        assert!((p.aw_m_s2 - 0.6).abs() < 1e-12);
        // front mean DLC 0.15, rear 0.2: the rear limits.
        assert!((p.dynamic_load_coefficient - 0.2).abs() < 1e-12);
        assert!((p.travel - 0.03).abs() < 1e-12);
        assert!((t.points[1].aw_m_s2 - 1.0).abs() < 1e-12);
        // Variant 2 rides worse but holds the road and travels less: both
        // are in both sets.
        assert!(t.points.iter().all(|p| p.pareto_load && p.pareto_travel));
        let at_20 = Selection {
            speed_m_s: Some(20.0),
            axle: AxleChoice::Front,
            ..sel.clone()
        };
        let t2 = tradeoff(
            Path::new("s.csv"),
            &table(&["3,v.toml,2000,C,C,20,1,1.1,1.1,0.1,0.01,0.1,0.01"]),
            &at_20,
        )
        .unwrap();
        assert_eq!(t2.points.len(), 1);
        let bad_seat = Selection { seat: 3, ..sel };
        let e = tradeoff(Path::new("s.csv"), &table(&[]), &bad_seat).unwrap_err();
        assert!(e.to_string().contains("seat3_aw"), "{e}");
    }
}
