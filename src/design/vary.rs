//! Vehicle-file keys and their values for design studies
//! (`--vary KEY=VALUES`), and the variants they make.
//!
//! # Keys
//! A key is the dotted path of a number in the vehicle file:
//! `body.mass`, `body.pitch_inertia`, `front.KEY` / `rear.KEY` for every
//! numeric axle key ([`AXLE_KEYS`]), and `seat.NAME.KEY` or `seat.N.KEY`
//! ([`SEAT_KEYS`]: `x`, `height`, and `suspension.mass`, `suspension.rate`,
//! `suspension.damping` of a seat with a `[seat.suspension]`) for a seat by
//! its name or its 1-based position in the file.
//!
//! # Values
//! As for `--speeds`: `start:end:step` (inclusive, `start + i·step`) or a
//! comma list, in the file's SI units. A value written `*F` is `F` times
//! the file's own value: `*0.8:*1.2:*0.1` is 80 % to 120 % of it in steps of
//! 10 % of it, `*0.9,*1,*1.1` three values around it. Computed values (range
//! points and factors) are rounded to 12 significant digits.
//!
//! # Applying a value
//! The file is parsed once into a format-preserving TOML document; a
//! variant sets the numbers in that document (keeping comments and layout)
//! and runs the result through [`parse_vehicle`], the vehicle file's own
//! reading and validation. So a value the file would refuse is refused with
//! the same message, and a variant is, number for number, the vehicle a
//! hand-edited file with those values gives.

use std::path::{Path, PathBuf};

use toml_edit::{DocumentMut, Item, Value};

use crate::batch::values::expand_range;
use crate::vehicle::{Vehicle, VehicleError, parse_vehicle, read_vehicle};

/// The numeric keys of `[body]`.
pub const BODY_KEYS: [&str; 2] = ["mass", "pitch_inertia"];

/// The numeric keys of `[front]` and `[rear]`.
pub const AXLE_KEYS: [&str; 11] = [
    "cg_distance",
    "spring_rate",
    "damping",
    "damping_bump",
    "damping_rebound",
    "unsprung_mass",
    "tyre_rate",
    "tyre_damping",
    "bump_clearance",
    "rebound_clearance",
    "stop_rate",
];

/// The numeric keys of a `[[seat]]` (those with a dot are in its
/// `[seat.suspension]`).
pub const SEAT_KEYS: [&str; 5] = [
    "x",
    "height",
    "suspension.mass",
    "suspension.rate",
    "suspension.damping",
];

/// Most vehicle variants one study may make (a typo guard; sweeps also
/// refuse grids beyond [`crate::batch::grid::MAX_CASES`] cases).
pub const MAX_VARIANTS: usize = 100_000;

/// A seat, by name or by 1-based position in the file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SeatRef {
    /// The seat's `name` (or its default name `seat{N}`).
    Name(String),
    /// 1-based position among the `[[seat]]` entries.
    Position(usize),
}

#[derive(Debug, Clone, PartialEq, Eq)]
enum Target {
    Body(&'static str),
    Axle(&'static str, &'static str),
    Seat(SeatRef, &'static str),
}

/// A numeric key of the vehicle file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Key {
    text: String,
    target: Target,
}

fn key_list() -> String {
    format!(
        "body.{{{}}}, front.KEY or rear.KEY with KEY one of {}, seat.NAME.KEY or seat.N.KEY with KEY one of {}",
        BODY_KEYS.join(","),
        AXLE_KEYS.join(", "),
        SEAT_KEYS.join(", ")
    )
}

/// `NAME.KEY` split before KEY, with KEY one of [`SEAT_KEYS`] (which may
/// itself hold a dot: `driver.suspension.rate`).
fn seat_key(rest: &str) -> Option<(&str, &'static str)> {
    SEAT_KEYS.iter().find_map(|k| {
        let seat = rest.strip_suffix(k)?.strip_suffix('.')?;
        Some((seat, *k))
    })
}

impl Key {
    /// Parses a dotted key; the error says what the valid keys are.
    pub fn parse(text: &str) -> Result<Key, String> {
        let t = text.trim();
        let target = if let Some(k) = t.strip_prefix("body.") {
            BODY_KEYS.iter().find(|b| **b == k).map(|b| Target::Body(b))
        } else if let Some((axle, k)) = t.split_once('.') {
            let axle = ["front", "rear"].into_iter().find(|a| *a == axle);
            let k = AXLE_KEYS.iter().find(|x| **x == k);
            match (axle, k) {
                (Some(a), Some(k)) => Some(Target::Axle(a, k)),
                _ => None,
            }
        } else {
            None
        };
        let target = match target {
            Some(t) => t,
            None => match t.strip_prefix("seat.").and_then(seat_key) {
                Some((seat, k)) if !seat.is_empty() => Target::Seat(
                    match seat.parse::<usize>() {
                        Ok(0) => {
                            return Err("seats are numbered from 1 (seat.1.x is the first)".into());
                        }
                        Ok(n) => SeatRef::Position(n),
                        Err(_) => SeatRef::Name(seat.to_string()),
                    },
                    k,
                ),
                _ if t == "name" || t.ends_with(".name") => {
                    return Err(format!("`{t}` is text, not a number"));
                }
                _ => {
                    return Err(format!(
                        "unknown key `{t}`: the numeric keys are {}",
                        key_list()
                    ));
                }
            },
        };
        Ok(Key {
            text: t.to_string(),
            target,
        })
    }

    /// The key as given (the column name of a sweep).
    pub fn as_str(&self) -> &str {
        &self.text
    }
}

impl std::fmt::Display for Key {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.text)
    }
}

/// One value: absolute (SI, as in the file) or a factor on the file's value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Amount {
    /// The value itself.
    Absolute(f64),
    /// `*F`: F times the file's value.
    Relative(f64),
}

impl Amount {
    /// Parses `2500` or `*1.2`.
    pub fn parse(text: &str) -> Result<Amount, String> {
        let t = text.trim();
        let (relative, number) = match t.strip_prefix('*') {
            Some(n) => (true, n.trim()),
            None => (false, t),
        };
        let x: f64 = number.parse().map_err(|_| {
            format!(
                "{t:?} is not a number (give e.g. 2500, or *1.2 for 1.2 times the file's value)"
            )
        })?;
        if !x.is_finite() {
            return Err(format!("{t:?} is not finite"));
        }
        Ok(if relative {
            Amount::Relative(x)
        } else {
            Amount::Absolute(x)
        })
    }

    /// The value, given the file's value `base` (needed for a factor).
    pub fn resolve(self, base: Option<f64>) -> Result<f64, String> {
        match (self, base) {
            (Amount::Absolute(x), _) => Ok(x),
            (Amount::Relative(f), Some(b)) => Ok(f * b),
            (Amount::Relative(_), None) => {
                Err("a value relative to the file (*F) needs the key in the file".into())
            }
        }
    }

    fn is_relative(self) -> bool {
        matches!(self, Amount::Relative(_))
    }

    fn number(self) -> f64 {
        match self {
            Amount::Absolute(x) | Amount::Relative(x) => x,
        }
    }
}

/// The values of a key: a comma list or an inclusive range.
#[derive(Debug, Clone, PartialEq)]
pub enum Values {
    /// Listed values, in order.
    List(Vec<Amount>),
    /// `start:end:step`, all absolute or all relative.
    Range {
        /// First value.
        start: Amount,
        /// Last value (included when on the grid).
        end: Amount,
        /// Step.
        step: Amount,
    },
}

impl Values {
    /// Parses `start:end:step` or `a,b,c`.
    pub fn parse(text: &str) -> Result<Values, String> {
        let t = text.trim();
        if t.is_empty() {
            return Err("no values given".into());
        }
        if t.contains(':') {
            let parts: Vec<&str> = t.split(':').collect();
            if parts.len() != 3 {
                return Err("expected start:end:step (e.g. 1500:3500:500 or *0.8:*1.2:*0.1) or a comma list".into());
            }
            let [start, end, step] = [parts[0], parts[1], parts[2]].map(Amount::parse);
            let (start, end, step) = (start?, end?, step?);
            if !(start.is_relative() == end.is_relative()
                && end.is_relative() == step.is_relative())
            {
                return Err(
                    "a range is all absolute (1500:3500:500) or all relative (*0.8:*1.2:*0.1)"
                        .into(),
                );
            }
            expand_range(start.number(), end.number(), step.number())?;
            Ok(Values::Range { start, end, step })
        } else {
            t.split(',')
                .map(Amount::parse)
                .collect::<Result<Vec<_>, _>>()
                .map(Values::List)
        }
    }

    /// The values in order, given the file's value `base`. Computed values
    /// (range points, factors) are rounded to 12 significant digits, so
    /// `*1.2` of 2410 is 2892, not 2892.0000000000005; the rows show the
    /// value that was used.
    pub fn resolve(&self, base: Option<f64>) -> Result<Vec<f64>, String> {
        let computed = match self {
            Values::List(items) => {
                return items
                    .iter()
                    .map(|a| match a {
                        Amount::Absolute(x) => Ok(*x),
                        Amount::Relative(_) => a.resolve(base).map(round_12),
                    })
                    .collect();
            }
            Values::Range { start, end, step } => {
                let grid = expand_range(start.number(), end.number(), step.number())?;
                match start {
                    Amount::Absolute(_) => grid,
                    Amount::Relative(_) => grid
                        .into_iter()
                        .map(|f| Amount::Relative(f).resolve(base))
                        .collect::<Result<_, _>>()?,
                }
            }
        };
        Ok(computed.into_iter().map(round_12).collect())
    }
}

/// `x` rounded to 12 significant digits (through its decimal text, so the
/// same on every machine).
pub fn round_12(x: f64) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    format!("{x:.11e}").parse().unwrap_or(x)
}

/// One `--vary KEY=VALUES`.
#[derive(Debug, Clone, PartialEq)]
pub struct Variation {
    /// The key.
    pub key: Key,
    /// The values.
    pub values: Values,
    /// The option's text, for messages.
    pub text: String,
}

/// The refusal of one `--vary`: the option, the key and the value named.
fn vary_error(option: &str, arg: &str, why: impl std::fmt::Display) -> crate::Error {
    crate::Error::Usage(format!("{option} {arg}: {why}"))
}

/// Splits `KEY=TEXT` and parses the key.
pub fn split_assignment(option: &str, arg: &str) -> Result<(Key, String), crate::Error> {
    let (key, rest) = arg.split_once('=').ok_or_else(|| {
        vary_error(
            option,
            arg,
            "expected KEY=VALUES, e.g. rear.damping=1500:3500:500",
        )
    })?;
    let key = Key::parse(key).map_err(|e| vary_error(option, arg, e))?;
    Ok((key, rest.trim().to_string()))
}

impl Variation {
    /// Parses `KEY=VALUES` (the text of one `--vary`).
    pub fn parse(arg: &str) -> Result<Variation, crate::Error> {
        let (key, values) = split_assignment("--vary", arg)?;
        let values = Values::parse(&values).map_err(|e| vary_error("--vary", arg, e))?;
        Ok(Variation {
            key,
            values,
            text: arg.trim().to_string(),
        })
    }
}

/// A vehicle file held as an editable document beside its validated vehicle.
#[derive(Debug, Clone)]
pub struct VehicleDocument {
    path: PathBuf,
    doc: DocumentMut,
    vehicle: Vehicle,
}

/// A vehicle with some keys set: the edited file text and its vehicle.
#[derive(Debug, Clone)]
pub struct Edited {
    /// The edited vehicle file (comments and layout kept).
    pub text: String,
    /// The vehicle it describes, validated as the file would be.
    pub vehicle: Vehicle,
}

impl VehicleDocument {
    /// Reads and validates a vehicle file.
    pub fn read(path: &Path) -> Result<VehicleDocument, crate::Error> {
        // The vehicle file's own reader first (size and encoding checks,
        // its messages); the text is then known to be small UTF-8.
        read_vehicle(path)?;
        let text = std::fs::read_to_string(path).map_err(|source| VehicleError::Read {
            path: path.to_path_buf(),
            source,
        })?;
        VehicleDocument::parse(&text, path)
    }

    /// Parses and validates vehicle TOML; `path` names it in messages.
    pub fn parse(text: &str, path: &Path) -> Result<VehicleDocument, crate::Error> {
        // The vehicle file's own reader first, for its messages.
        let vehicle = parse_vehicle(text, path)?;
        let doc = text
            .parse::<DocumentMut>()
            .map_err(|e| VehicleError::Syntax {
                path: path.to_path_buf(),
                message: e.to_string().trim_end().replace('\n', "\n  "),
            })?;
        Ok(VehicleDocument {
            path: path.to_path_buf(),
            doc,
            vehicle,
        })
    }

    /// The file as given.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The vehicle of the unedited file.
    pub fn vehicle(&self) -> &Vehicle {
        &self.vehicle
    }

    /// The 0-based `[[seat]]` entry a seat reference names.
    fn seat_index(&self, seat: &SeatRef) -> Result<usize, String> {
        let seats = &self.vehicle.seats;
        match seat {
            SeatRef::Position(n) if *n <= seats.len() => Ok(n - 1),
            SeatRef::Position(n) => Err(format!(
                "there is no seat {n}: the file has {} seat(s)",
                seats.len()
            )),
            SeatRef::Name(name) => seats.iter().position(|s| &s.name == name).ok_or_else(|| {
                let names: Vec<&str> = seats.iter().map(|s| s.name.as_str()).collect();
                format!(
                    "no seat is named {name:?}; the seats are {}",
                    names.join(", ")
                )
            }),
        }
    }

    /// The table holding `key` and the name of the entry in it.
    fn slot<'d>(
        doc: &'d mut DocumentMut,
        target: &Target,
        seat: Option<usize>,
    ) -> Option<(&'d mut dyn toml_edit::TableLike, &'static str)> {
        let root = doc.as_table_mut();
        match target {
            Target::Body(k) => Some((root.get_mut("body")?.as_table_like_mut()?, k)),
            Target::Axle(a, k) => Some((root.get_mut(a)?.as_table_like_mut()?, k)),
            Target::Seat(_, k) => {
                let i = seat?;
                let item = root.get_mut("seat")?;
                let table: &mut dyn toml_edit::TableLike = if item.is_array_of_tables() {
                    item.as_array_of_tables_mut()?.get_mut(i)?
                } else {
                    item.as_array_mut()?.get_mut(i)?.as_inline_table_mut()?
                };
                match k.split_once('.') {
                    // A suspension key: only in a seat that has a suspension.
                    Some((sub, name)) => Some((table.get_mut(sub)?.as_table_like_mut()?, name)),
                    None => Some((table, k)),
                }
            }
        }
    }

    fn seat_of(&self, key: &Key) -> Result<Option<usize>, String> {
        match &key.target {
            Target::Seat(s, _) => self.seat_index(s).map(Some),
            _ => Ok(None),
        }
    }

    /// The file's value of `key` (`None` when the file does not give it).
    pub fn value_of(&self, key: &Key) -> Result<Option<f64>, String> {
        let seat = self.seat_of(key)?;
        let mut doc = self.doc.clone();
        let Some((table, name)) = Self::slot(&mut doc, &key.target, seat) else {
            return Ok(None);
        };
        Ok(match table.get(name) {
            Some(Item::Value(Value::Float(f))) => Some(*f.value()),
            Some(Item::Value(Value::Integer(i))) => Some(*i.value() as f64),
            _ => None,
        })
    }

    /// The vehicle with `assignments` set, validated by the vehicle file's
    /// own reader. The error is the reader's (file, key, what was wrong) or
    /// says which key could not be placed.
    pub fn edited(&self, assignments: &[(&Key, f64)]) -> Result<Edited, String> {
        let mut doc = self.doc.clone();
        for (key, x) in assignments {
            let seat = self.seat_of(key)?;
            let (table, name) = Self::slot(&mut doc, &key.target, seat).ok_or_else(|| {
                format!("the file has no table for `{key}` (it needs [body], [front], [rear] and [[seat]] as tables, and a [seat.suspension] for a seat's suspension keys)")
            })?;
            let mut value = Value::from(*x);
            match table.get_mut(name) {
                Some(Item::Value(old)) => {
                    // Keep the comment and spacing around the number.
                    *value.decor_mut() = old.decor().clone();
                    table.insert(name, Item::Value(value));
                }
                Some(_) => return Err(format!("`{key}` in the file is not a number")),
                None => {
                    table.insert(name, Item::Value(value));
                }
            }
        }
        let text = doc.to_string();
        let vehicle = parse_vehicle(&text, &self.path).map_err(|e| e.to_string())?;
        Ok(Edited { text, vehicle })
    }
}

/// One vehicle variant: the values of the varied keys, in `--vary` order,
/// and the vehicle they give.
#[derive(Debug, Clone)]
pub struct Variant {
    /// The values, one per variation.
    pub values: Vec<f64>,
    /// The validated vehicle.
    pub vehicle: Vehicle,
}

/// Each variation's values on `doc`, each value checked alone (the other
/// keys as in the file), so a refused value is named with its option.
fn value_lists(
    doc: &VehicleDocument,
    variations: &[Variation],
) -> Result<Vec<Vec<f64>>, crate::Error> {
    for (i, v) in variations.iter().enumerate() {
        if variations[..i].iter().any(|w| w.key == v.key) {
            return Err(vary_error(
                "--vary",
                &v.text,
                format!("`{}` is varied twice", v.key),
            ));
        }
    }
    let file = doc.path().display();
    let mut lists = Vec::with_capacity(variations.len());
    for v in variations {
        let base = doc
            .value_of(&v.key)
            .map_err(|e| vary_error("--vary", &v.text, format!("{file}: {e}")))?;
        let values = v
            .values
            .resolve(base)
            .map_err(|e| vary_error("--vary", &v.text, format!("{file}: `{}`: {e}", v.key)))?;
        for &x in &values {
            doc.edited(&[(&v.key, x)]).map_err(|e| {
                vary_error("--vary", &v.text, format!("the value {x} is refused: {e}"))
            })?;
        }
        lists.push(values);
    }
    Ok(lists)
}

/// Every combination of `variations`' values on `doc`, the first variation
/// varying slowest and the last fastest. Each value is first checked alone
/// (the other keys as in the file), so a refused value is named with its
/// option; then every combination is validated. Nothing runs before all
/// pass.
pub fn expand(
    doc: &VehicleDocument,
    variations: &[Variation],
) -> Result<Vec<Variant>, crate::Error> {
    let lists = value_lists(doc, variations)?;
    let count = lists
        .iter()
        .try_fold(1usize, |n, l| n.checked_mul(l.len()))
        .filter(|n| *n <= MAX_VARIANTS)
        .ok_or_else(|| {
            crate::Error::Usage(format!(
                "--vary: the values make more than {MAX_VARIANTS} vehicle variants; split the study"
            ))
        })?;
    let mut out = Vec::with_capacity(count);
    for n in 0..count {
        // Mixed-radix digits of n, last variation fastest.
        let mut rest = n;
        let mut values = vec![0.0; lists.len()];
        for (j, l) in lists.iter().enumerate().rev() {
            values[j] = l[rest % l.len()];
            rest /= l.len();
        }
        let assignments: Vec<(&Key, f64)> = variations
            .iter()
            .zip(&values)
            .map(|(v, x)| (&v.key, *x))
            .collect();
        let edited = doc.edited(&assignments).map_err(|e| {
            let combo: Vec<String> = assignments
                .iter()
                .map(|(k, x)| format!("{k}={x}"))
                .collect();
            crate::Error::Usage(format!(
                "--vary: the combination {} is refused: {e}",
                combo.join(", ")
            ))
        })?;
        out.push(Variant {
            values,
            vehicle: edited.vehicle,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    const CAR: &str = include_str!("../../profiles/vehicles/demo_hatchback.toml");

    fn doc() -> VehicleDocument {
        VehicleDocument::parse(CAR, Path::new("car.toml")).unwrap()
    }

    fn key(t: &str) -> Key {
        Key::parse(t).unwrap()
    }

    #[test]
    fn keys_name_numbers_of_the_vehicle_file() {
        let d = doc();
        assert_eq!(d.value_of(&key("body.mass")).unwrap(), Some(1150.0));
        assert_eq!(d.value_of(&key("rear.damping")).unwrap(), Some(2410.0));
        assert_eq!(d.value_of(&key("front.tyre_damping")).unwrap(), None);
        assert_eq!(d.value_of(&key("seat.driver.x")).unwrap(), Some(0.25));
        assert_eq!(d.value_of(&key("seat.2.x")).unwrap(), Some(-0.65));
        assert!(d.value_of(&key("seat.3.x")).unwrap_err().contains("2 seat"));
        assert!(
            d.value_of(&key("seat.pilot.x"))
                .unwrap_err()
                .contains("driver")
        );
        for bad in [
            "front.dampng",
            "middle.damping",
            "body.weight",
            "seat.x",
            "damping",
        ] {
            let e = Key::parse(bad).unwrap_err();
            assert!(
                e.contains("unknown key") && e.contains("front.KEY"),
                "{bad}: {e}"
            );
        }
        assert!(Key::parse("name").unwrap_err().contains("not a number"));
        assert!(Key::parse("seat.0.x").unwrap_err().contains("from 1"));
    }

    #[test]
    fn every_listed_key_is_one_the_vehicle_file_accepts() {
        // A key list that drifted from the vehicle file's keys would either
        // refuse a real key or offer one the file refuses as unknown.
        let d = doc();
        for k in AXLE_KEYS {
            for axle in ["front", "rear"] {
                let e = d.edited(&[(&key(&format!("{axle}.{k}")), 0.5)]);
                if let Err(e) = e {
                    assert!(!e.contains("unknown field"), "{axle}.{k}: {e}");
                }
            }
        }
        for k in BODY_KEYS {
            d.edited(&[(&key(&format!("body.{k}")), 900.0)]).unwrap();
        }
    }

    #[test]
    fn an_edit_equals_the_hand_edited_file_and_keeps_comments() {
        let d = doc();
        let e = d
            .edited(&[(&key("rear.damping"), 1777.5), (&key("seat.driver.x"), 0.3)])
            .unwrap();
        let by_hand = CAR
            .replace("damping = 2410.0", "damping = 1777.5")
            .replace("x = 0.25 ", "x = 0.3  ");
        let want = parse_vehicle(&by_hand, Path::new("car.toml")).unwrap();
        assert_eq!(e.vehicle, want);
        assert!(e.text.contains("# m ahead of the CG"), "{}", e.text);
        assert!(e.text.contains("damping = 1777.5"));
        // Values with long decimals read back exactly (shortest round-trip
        // text, as Rust writes it).
        for x in [0.1 + 0.2, 1.0 / 3.0, 2930.000000000001, 1e-7] {
            let e = d.edited(&[(&key("front.damping"), x)]).unwrap();
            assert_eq!(e.vehicle.axles[0].damper.bump_n_s_m.to_bits(), x.to_bits());
        }
    }

    #[test]
    fn a_value_the_file_refuses_is_refused_with_the_files_message() {
        let d = doc();
        let e = d.edited(&[(&key("body.mass"), -5.0)]).unwrap_err();
        assert!(e.contains("`body.mass` must be positive"), "{e}");
        let e = d
            .edited(&[(&key("front.damping_bump"), 100.0)])
            .unwrap_err();
        assert!(e.contains("cannot be combined"), "{e}");
    }

    #[test]
    fn values_absolute_relative_ranges_and_lists() {
        let v = Values::parse("1000:2000:250").unwrap();
        assert_eq!(
            v.resolve(None).unwrap(),
            vec![1000.0, 1250.0, 1500.0, 1750.0, 2000.0]
        );
        let v = Values::parse("*0.8:*1.2:*0.1").unwrap();
        // 0.8 + 2·0.2 is 1.2000000000000002 in binary; the values come out
        // as a person would write them.
        assert_eq!(
            v.resolve(Some(2410.0)).unwrap(),
            vec![1928.0, 2169.0, 2410.0, 2651.0, 2892.0]
        );
        assert_eq!(
            Values::parse("0.1:0.5:0.1").unwrap().resolve(None).unwrap(),
            vec![0.1, 0.2, 0.3, 0.4, 0.5]
        );
        assert_eq!(
            Values::parse("*0.5, 3000")
                .unwrap()
                .resolve(Some(2000.0))
                .unwrap(),
            vec![1000.0, 3000.0]
        );
        assert!(Values::parse("*0.5").unwrap().resolve(None).is_err());
        for bad in [
            "",
            "1:2",
            "1:*2:1",
            "2000:1000:100",
            "1,,2",
            "1:2:0",
            "fast",
            "nan",
        ] {
            assert!(Values::parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn the_grid_of_variants_runs_the_last_key_fastest_and_refuses_before_building() {
        let d = doc();
        let vs = [
            Variation::parse("rear.damping=1000,2000").unwrap(),
            Variation::parse("front.spring_rate=*1,*1.1,*1.2").unwrap(),
        ];
        let out = expand(&d, &vs).unwrap();
        assert_eq!(out.len(), 6);
        assert_eq!(out[0].values, vec![1000.0, 35300.0]);
        assert_eq!(out[1].values[1], 38830.0);
        assert_eq!(out[3].values[0], 2000.0);
        assert_eq!(out[5].vehicle.axles[0].spring_n_m, 42360.0);
        assert_eq!(out[5].vehicle.axles[1].damper.rebound_n_s_m, 2000.0);
        let e = expand(&d, &[Variation::parse("body.mass=1000,-1").unwrap()])
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("--vary body.mass=1000,-1: the value -1 is refused")
                && e.contains("must be positive"),
            "{e}"
        );
        assert_eq!(
            expand(&d, &[Variation::parse("body.mass=1000,-1").unwrap()])
                .unwrap_err()
                .exit_status(),
            2
        );
        let twice = [
            Variation::parse("body.mass=1000").unwrap(),
            Variation::parse("body.mass=1100").unwrap(),
        ];
        assert!(
            expand(&d, &twice)
                .unwrap_err()
                .to_string()
                .contains("twice")
        );
        let e = Variation::parse("front.dampng=1").unwrap_err().to_string();
        assert!(e.starts_with("--vary front.dampng=1: unknown key"), "{e}");
        let e = expand(&d, &[Variation::parse("front.tyre_damping=*2").unwrap()])
            .unwrap_err()
            .to_string();
        assert!(e.contains("needs the key in the file"), "{e}");
    }
}
