//! The usage file (TOML): how a vehicle's life divides into parts of road,
//! speed and load. Parsed with serde (unknown keys refused), validated
//! into a [`Usage`] with every referenced vehicle and profile read, every
//! message naming the file, the line and the key.
//!
//! ```toml
//! title = "delivery van, 240 000 km"   # optional
//! target_km = 240000                   # the life, km
//! vehicle = "van.toml"                 # default vehicle (relative to this file)
//! normalise = false                    # optional: scale shares to add up to 1
//!
//! [[part]]
//! name = "motorway"                    # optional (default "part 1", …)
//! share = 0.55                         # of target_km; or km = 132000
//! speed = "100kmh"                     # as --speed; or speeds = [{ speed = "60kmh", share = 0.5 }, …]
//! class = "A"                          # ISO 8608 class, with
//! seeds = 3                            #   roads of seeds first_seed.. (default 1)
//! length = 2000                        #   m each (spacing = 0.05 m by default)
//! # or: profile = "roads/a.csv" (or a list of files, sharing the part equally)
//! vehicle = "van_laden.toml"           # optional: this part's own vehicle (load case)
//! ```

use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde::Deserialize;
use toml::Spanned;

use super::LifetimeError;
use crate::batch::values::parse_speed_m_s;
use crate::road::iso8608::{RoadClass, RoadSpec};
use crate::road::{Profile, read_profile_csv};
use crate::vehicle::{Vehicle, parse_vehicle};

/// Shares (of the life, or of a part's speeds) must add up to 1 within this.
pub const SHARE_TOLERANCE: f64 = 1e-6;
/// Sample spacing of generated roads when the part names none, m (as `simulate`).
pub const DEFAULT_SPACING_M: f64 = 0.05;

/// A validated usage file.
#[derive(Debug, Clone)]
pub struct Usage {
    /// The usage file as given.
    pub file: PathBuf,
    /// Optional title.
    pub title: Option<String>,
    /// The life, km.
    pub target_km: f64,
    /// Whether the shares were scaled to add up to 1 (`normalise = true`).
    pub normalised: bool,
    /// The parts, in file order.
    pub parts: Vec<Part>,
    /// The vehicles the parts use, each read once.
    pub vehicles: Vec<UsageVehicle>,
    /// Warnings from reading the inputs (e.g. a profile's).
    pub warnings: Vec<String>,
    /// Every file read besides the usage file (vehicles, profiles), as
    /// resolved from the usage file's folder.
    pub inputs: Vec<PathBuf>,
    /// FNV-1a hash of the usage file, the vehicle files and the profiles'
    /// values: partial results of other inputs are refused.
    pub fingerprint: u64,
}

/// A vehicle named by the usage file.
#[derive(Debug, Clone)]
pub struct UsageVehicle {
    /// The path as written in the usage file.
    pub label: String,
    /// The parsed vehicle.
    pub vehicle: Vehicle,
}

/// One part of the life.
#[derive(Debug, Clone)]
pub struct Part {
    /// Its name (unique in the file).
    pub name: String,
    /// Its fraction of the life distance (after normalising).
    pub share: f64,
    /// Speeds with their fractions of the part's distance (adding up to 1).
    pub speeds: Vec<PartSpeed>,
    /// Its roads.
    pub road: PartRoad,
    /// Index into [`Usage::vehicles`].
    pub vehicle: usize,
}

/// One speed of a part.
#[derive(Debug, Clone)]
pub struct PartSpeed {
    /// As written (e.g. `72kmh`).
    pub text: String,
    /// m/s.
    pub speed_m_s: f64,
    /// Fraction of the part's distance.
    pub share: f64,
}

/// The roads of a part; each carries an equal fraction of the part.
#[derive(Debug, Clone)]
pub enum PartRoad {
    /// ISO 8608 roads generated with seeds `first_seed .. first_seed + seeds`.
    Class {
        /// The class.
        class: RoadClass,
        /// Number of roads (seeds).
        seeds: u64,
        /// The first seed.
        first_seed: u64,
        /// Length of each road, m.
        length_m: f64,
        /// Sample spacing, m.
        spacing_m: f64,
    },
    /// Profile files, read once.
    Profiles(Vec<PartProfile>),
}

/// A profile file of a part.
#[derive(Debug, Clone)]
pub struct PartProfile {
    /// The path as written in the usage file.
    pub label: String,
    /// The profile.
    pub profile: Arc<Profile>,
}

impl PartRoad {
    /// How many roads the part's distance is shared between.
    pub fn count(&self) -> usize {
        match self {
            PartRoad::Class { seeds, .. } => *seeds as usize,
            PartRoad::Profiles(p) => p.len(),
        }
    }

    /// The spec of generated road `k` (0-based; `None` for profile roads).
    pub fn spec(&self, k: usize) -> Option<RoadSpec> {
        match self {
            PartRoad::Class {
                class,
                first_seed,
                length_m,
                spacing_m,
                ..
            } => Some(RoadSpec::from_class(
                *class,
                *length_m,
                *spacing_m,
                first_seed + k as u64,
            )),
            PartRoad::Profiles(_) => None,
        }
    }

    /// Road `k` in words (`class C seed 2`, or the profile file).
    pub fn describe(&self, k: usize) -> String {
        match self {
            PartRoad::Class {
                class, first_seed, ..
            } => format!("class {class} seed {}", first_seed + k as u64),
            PartRoad::Profiles(p) => format!("profile {}", p[k].label),
        }
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawUsage {
    title: Option<String>,
    target_km: Option<Spanned<f64>>,
    vehicle: Option<Spanned<String>>,
    normalise: Option<bool>,
    #[serde(default)]
    part: Vec<Spanned<RawPart>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPart {
    name: Option<Spanned<String>>,
    share: Option<Spanned<f64>>,
    km: Option<Spanned<f64>>,
    speed: Option<Spanned<RawSpeed>>,
    speeds: Option<Spanned<Vec<RawSpeedShare>>>,
    class: Option<Spanned<String>>,
    seeds: Option<Spanned<i64>>,
    first_seed: Option<Spanned<i64>>,
    length: Option<Spanned<f64>>,
    spacing: Option<Spanned<f64>>,
    profile: Option<Spanned<OneOrMany>>,
    vehicle: Option<Spanned<String>>,
}

#[derive(Debug, Deserialize)]
#[serde(untagged)]
enum RawSpeed {
    Text(String),
    Number(f64),
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSpeedShare {
    speed: RawSpeed,
    share: f64,
}

#[derive(Debug, Deserialize)]
#[serde(untagged)]
enum OneOrMany {
    One(String),
    Many(Vec<String>),
}

/// Reads and validates a usage file and everything it names.
pub fn read_usage(path: &Path) -> Result<Usage, LifetimeError> {
    let text = std::fs::read_to_string(path).map_err(|source| LifetimeError::Read {
        path: path.to_path_buf(),
        source,
    })?;
    parse_usage(&text, path)
}

/// Parses and validates usage TOML; `path` names it in messages and
/// relative file names are taken from its folder.
pub fn parse_usage(text: &str, path: &Path) -> Result<Usage, LifetimeError> {
    let raw: RawUsage = toml::from_str(text).map_err(|e| LifetimeError::Syntax {
        path: path.to_path_buf(),
        message: e.to_string().trim_end().replace('\n', "\n  "),
    })?;
    let mut reader = Reader {
        path,
        text,
        vehicles: Vec::new(),
        vehicle_texts: Vec::new(),
        warnings: Vec::new(),
        inputs: Vec::new(),
        hash: Fnv1a::new(),
    };
    reader.hash.bytes(text.as_bytes());
    let target = raw.target_km.as_ref().ok_or_else(|| {
        reader.invalid(
            None,
            "target_km",
            "is missing: give the life distance in km",
        )
    })?;
    let target_km = reader.positive(target, "target_km", "a life distance in km")?;
    if raw.part.is_empty() {
        return Err(reader.invalid(None, "part", "is missing: give at least one [[part]] table"));
    }
    let normalise = raw.normalise.unwrap_or(false);
    let mut parts = Vec::with_capacity(raw.part.len());
    for (i, p) in raw.part.iter().enumerate() {
        parts.push(reader.part(i, p, &raw, target_km, normalise)?);
    }
    reader.check_names(&raw, &parts)?;
    reader.check_shares(&raw, &mut parts, normalise)?;
    for v in &reader.vehicle_texts {
        reader.hash.bytes(v.as_bytes());
    }
    Ok(Usage {
        file: path.to_path_buf(),
        title: raw.title,
        target_km,
        normalised: normalise,
        parts,
        fingerprint: reader.hash.finish(),
        vehicles: reader.vehicles,
        warnings: reader.warnings,
        inputs: reader.inputs,
    })
}

/// The validation state: the file, the vehicles read so far, the hash.
struct Reader<'a> {
    path: &'a Path,
    text: &'a str,
    vehicles: Vec<UsageVehicle>,
    vehicle_texts: Vec<String>,
    warnings: Vec<String>,
    inputs: Vec<PathBuf>,
    hash: Fnv1a,
}

impl Reader<'_> {
    fn line_of(&self, span: std::ops::Range<usize>) -> usize {
        let end = span.start.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|b| **b == b'\n')
            .count()
            + 1
    }

    fn invalid(
        &self,
        span: Option<std::ops::Range<usize>>,
        key: &str,
        message: impl Into<String>,
    ) -> LifetimeError {
        LifetimeError::Invalid {
            path: self.path.to_path_buf(),
            line: span.map(|s| self.line_of(s)),
            key: key.to_string(),
            message: message.into(),
        }
    }

    fn positive(&self, v: &Spanned<f64>, key: &str, what: &str) -> Result<f64, LifetimeError> {
        let x = *v.get_ref();
        if x.is_finite() && x > 0.0 {
            Ok(x)
        } else {
            Err(self.invalid(
                Some(v.span()),
                key,
                format!("must be positive and finite ({what}), got {x}"),
            ))
        }
    }

    /// A file named in the usage file, relative to its folder.
    fn resolve(&self, name: &str) -> PathBuf {
        let p = Path::new(name);
        if p.is_absolute() {
            return p.to_path_buf();
        }
        match self.path.parent() {
            Some(dir) if !dir.as_os_str().is_empty() => dir.join(p),
            _ => p.to_path_buf(),
        }
    }

    fn part(
        &mut self,
        i: usize,
        p: &Spanned<RawPart>,
        raw: &RawUsage,
        target_km: f64,
        normalise: bool,
    ) -> Result<Part, LifetimeError> {
        let key = |k: &str| format!("part[{i}].{k}");
        let span = Some(p.span());
        let part = p.get_ref();
        let name = part.name.as_ref().map_or_else(
            || format!("part {}", i + 1),
            |n| n.get_ref().trim().to_string(),
        );
        let share = self.share(i, part, span.clone(), target_km)?;
        let speeds = self.speeds(i, part, span.clone(), normalise)?;
        let road = self.road(i, part, span.clone())?;
        let vehicle = match part.vehicle.as_ref().or(raw.vehicle.as_ref()) {
            Some(v) => {
                let which = if part.vehicle.is_some() {
                    key("vehicle")
                } else {
                    "vehicle".to_string()
                };
                self.vehicle(v, &which)?
            }
            None => {
                return Err(self.invalid(
                    span,
                    &key("vehicle"),
                    "is missing: give vehicle = \"FILE\" at the top of the file or in this part",
                ));
            }
        };
        let part = Part {
            name,
            share,
            speeds,
            road,
            vehicle,
        };
        self.check_length(i, &part, span)?;
        Ok(part)
    }

    /// `share`, or `km` as a share of `target_km`.
    fn share(
        &self,
        i: usize,
        part: &RawPart,
        span: Option<std::ops::Range<usize>>,
        target_km: f64,
    ) -> Result<f64, LifetimeError> {
        let key = |k: &str| format!("part[{i}].{k}");
        match (&part.share, &part.km) {
            (Some(s), None) => self.positive(s, &key("share"), "a fraction of target_km"),
            (None, Some(km)) => Ok(self.positive(km, &key("km"), "a distance in km")? / target_km),
            (Some(_), Some(km)) => Err(self.invalid(
                Some(km.span()),
                &key("km"),
                "is given beside share: give one of them",
            )),
            (None, None) => Err(self.invalid(
                span,
                &key("share"),
                "is missing: give share (a fraction of target_km) or km",
            )),
        }
    }

    fn speeds(
        &self,
        i: usize,
        part: &RawPart,
        span: Option<std::ops::Range<usize>>,
        normalise: bool,
    ) -> Result<Vec<PartSpeed>, LifetimeError> {
        match (&part.speed, &part.speeds) {
            (Some(s), None) => {
                let (text, speed_m_s) =
                    self.speed(s.get_ref(), &format!("part[{i}].speed"), s.span())?;
                Ok(vec![PartSpeed {
                    text,
                    speed_m_s,
                    share: 1.0,
                }])
            }
            (None, Some(list)) => self.speed_list(i, list, normalise),
            (Some(_), Some(list)) => Err(self.invalid(
                Some(list.span()),
                &format!("part[{i}].speeds"),
                "is given beside speed: give one of them",
            )),
            (None, None) => Err(self.invalid(
                span,
                &format!("part[{i}].speed"),
                "is missing: give speed = \"72kmh\" (as --speed) or speeds = [{ speed = …, share = … }, …]",
            )),
        }
    }

    /// A speed as `--speed` takes it (a bare number is m/s).
    fn speed(
        &self,
        s: &RawSpeed,
        key: &str,
        at: std::ops::Range<usize>,
    ) -> Result<(String, f64), LifetimeError> {
        let text = match s {
            RawSpeed::Text(t) => t.clone(),
            RawSpeed::Number(x) => format!("{x}"),
        };
        parse_speed_m_s(&text)
            .map(|speed_m_s| (text, speed_m_s))
            .map_err(|e| self.invalid(Some(at), key, e.to_string()))
    }

    /// `speeds = [{ speed, share }, …]`: shares positive, adding up to 1
    /// (or scaled to 1 with `normalise`).
    fn speed_list(
        &self,
        i: usize,
        list: &Spanned<Vec<RawSpeedShare>>,
        normalise: bool,
    ) -> Result<Vec<PartSpeed>, LifetimeError> {
        let key = format!("part[{i}].speeds");
        if list.get_ref().is_empty() {
            return Err(self.invalid(Some(list.span()), &key, "is empty"));
        }
        let mut out = Vec::new();
        for (j, s) in list.get_ref().iter().enumerate() {
            let (text, speed_m_s) =
                self.speed(&s.speed, &format!("{key}[{j}].speed"), list.span())?;
            if !(s.share.is_finite() && s.share > 0.0) {
                return Err(self.invalid(
                    Some(list.span()),
                    &format!("{key}[{j}].share"),
                    format!("must be positive and finite, got {}", s.share),
                ));
            }
            out.push(PartSpeed {
                text,
                speed_m_s,
                share: s.share,
            });
        }
        let sum: f64 = out.iter().map(|s| s.share).sum();
        if normalise {
            out.iter_mut().for_each(|s| s.share /= sum);
        } else if (sum - 1.0).abs() > SHARE_TOLERANCE {
            let terms: Vec<String> = out
                .iter()
                .map(|s| format!("{} {}", s.text, s.share))
                .collect();
            return Err(self.invalid(
                Some(list.span()),
                &format!("{key}[].share"),
                format!(
                    "adds up to {sum} ({}), not 1: correct the shares, or set normalise = true at the top of the file",
                    terms.join(" + ")
                ),
            ));
        }
        Ok(out)
    }

    fn road(
        &mut self,
        i: usize,
        part: &RawPart,
        span: Option<std::ops::Range<usize>>,
    ) -> Result<PartRoad, LifetimeError> {
        let key = |k: &str| format!("part[{i}].{k}");
        match (&part.class, &part.profile) {
            (Some(c), None) => self.class_road(i, part, c),
            (None, Some(p)) => self.profile_road(i, part, p),
            (Some(_), Some(p)) => Err(self.invalid(
                Some(p.span()),
                &key("profile"),
                "is given beside class: give a class (generated roads) or profile files",
            )),
            (None, None) => Err(self.invalid(
                span,
                &key("class"),
                "is missing: give class = \"C\" with seeds and length (m), or profile = \"FILE\"",
            )),
        }
    }

    /// `profile = "FILE"` or a list of files, read now.
    fn profile_road(
        &mut self,
        i: usize,
        part: &RawPart,
        p: &Spanned<OneOrMany>,
    ) -> Result<PartRoad, LifetimeError> {
        let key = |k: &str| format!("part[{i}].{k}");
        let generated = [
            ("seeds", part.seeds.as_ref().map(Spanned::span)),
            ("first_seed", part.first_seed.as_ref().map(Spanned::span)),
            ("length", part.length.as_ref().map(Spanned::span)),
            ("spacing", part.spacing.as_ref().map(Spanned::span)),
        ];
        if let Some((k, at)) = generated.into_iter().find(|g| g.1.is_some()) {
            return Err(self.invalid(
                at,
                &key(k),
                "belongs to a generated road (class); a profile file has its own length and spacing",
            ));
        }
        let names = match p.get_ref() {
            OneOrMany::One(n) => vec![n.clone()],
            OneOrMany::Many(v) => v.clone(),
        };
        if names.is_empty() {
            return Err(self.invalid(Some(p.span()), &key("profile"), "is an empty list"));
        }
        let mut profiles = Vec::with_capacity(names.len());
        for name in names {
            let file = self.resolve(&name);
            let (profile, warnings) =
                read_profile_csv(&file).map_err(|e| LifetimeError::Input {
                    path: self.path.to_path_buf(),
                    line: Some(self.line_of(p.span())),
                    key: key("profile"),
                    source: Box::new(e.into()),
                })?;
            self.warnings
                .extend(warnings.into_iter().map(|w| format!("{name}: {w}")));
            self.inputs.push(file);
            self.hash.f64(profile.start_m);
            self.hash.f64(profile.spacing_m);
            profile.elevation_m.iter().for_each(|z| self.hash.f64(*z));
            profiles.push(PartProfile {
                label: name,
                profile: Arc::new(profile),
            });
        }
        Ok(PartRoad::Profiles(profiles))
    }

    /// A whole-number key of at least `min` (`default` when absent).
    fn count(
        &self,
        v: &Option<Spanned<i64>>,
        key: &str,
        default: i64,
        min: i64,
    ) -> Result<u64, LifetimeError> {
        match v {
            None => Ok(default as u64),
            Some(s) if *s.get_ref() >= min => Ok(*s.get_ref() as u64),
            Some(s) => Err(self.invalid(
                Some(s.span()),
                key,
                format!(
                    "must be a whole number of at least {min}, got {}",
                    s.get_ref()
                ),
            )),
        }
    }

    fn class_road(
        &self,
        i: usize,
        part: &RawPart,
        c: &Spanned<String>,
    ) -> Result<PartRoad, LifetimeError> {
        let key = |k: &str| format!("part[{i}].{k}");
        let class: RoadClass = c
            .get_ref()
            .parse()
            .map_err(|e: crate::road::ProfileError| {
                self.invalid(Some(c.span()), &key("class"), e.to_string())
            })?;
        let seeds = self.count(&part.seeds, &key("seeds"), 1, 1)?;
        let first_seed = self.count(&part.first_seed, &key("first_seed"), 1, 0)?;
        let length_m = match &part.length {
            Some(l) => self.positive(l, &key("length"), "the length of each road in m")?,
            None => {
                return Err(self.invalid(
                    Some(c.span()),
                    &key("length"),
                    "is missing: a generated road needs its length in m",
                ));
            }
        };
        let spacing_m = match &part.spacing {
            Some(s) => self.positive(s, &key("spacing"), "the sample spacing in m")?,
            None => DEFAULT_SPACING_M,
        };
        RoadSpec::from_class(class, length_m, spacing_m, first_seed)
            .validate()
            .map_err(|e| {
                self.invalid(
                    part.length.as_ref().map(Spanned::span),
                    &key("length"),
                    e.to_string(),
                )
            })?;
        if seeds > 100_000 {
            return Err(self.invalid(
                part.seeds.as_ref().map(Spanned::span),
                &key("seeds"),
                format!("is {seeds}: at most 100000 roads per part"),
            ));
        }
        Ok(PartRoad::Class {
            class,
            seeds,
            first_seed,
            length_m,
            spacing_m,
        })
    }

    /// Reads a vehicle file once; the index of it in the list.
    fn vehicle(&mut self, v: &Spanned<String>, key: &str) -> Result<usize, LifetimeError> {
        let label = v.get_ref().clone();
        if let Some(k) = self.vehicles.iter().position(|x| x.label == label) {
            return Ok(k);
        }
        let file = self.resolve(&label);
        let fail = |e: crate::Error| LifetimeError::Input {
            path: self.path.to_path_buf(),
            line: Some(self.line_of(v.span())),
            key: key.to_string(),
            source: Box::new(e),
        };
        let text = std::fs::read_to_string(&file).map_err(|source| {
            fail(
                crate::vehicle::VehicleError::Read {
                    path: file.clone(),
                    source,
                }
                .into(),
            )
        })?;
        let vehicle = parse_vehicle(&text, &file).map_err(|e| fail(e.into()))?;
        self.vehicles.push(UsageVehicle { label, vehicle });
        self.inputs.push(file);
        self.vehicle_texts.push(text);
        Ok(self.vehicles.len() - 1)
    }

    /// Every road at least a wheelbase long (as `simulate` and `sweep` require).
    fn check_length(
        &self,
        i: usize,
        part: &Part,
        span: Option<std::ops::Range<usize>>,
    ) -> Result<(), LifetimeError> {
        let wheelbase = self.vehicles[part.vehicle].vehicle.wheelbase_m();
        let (shortest, key) = match &part.road {
            PartRoad::Class { length_m, .. } => (*length_m, "length"),
            PartRoad::Profiles(p) => (
                p.iter()
                    .map(|p| p.profile.length_m())
                    .fold(f64::INFINITY, f64::min),
                "profile",
            ),
        };
        if shortest < wheelbase {
            return Err(self.invalid(
                span,
                &format!("part[{i}].{key}"),
                format!(
                    "the road ({shortest:.3} m) is shorter than the wheelbase of {} ({wheelbase:.3} m)",
                    self.vehicles[part.vehicle].label
                ),
            ));
        }
        Ok(())
    }

    fn check_names(&self, raw: &RawUsage, parts: &[Part]) -> Result<(), LifetimeError> {
        for (i, p) in parts.iter().enumerate() {
            let at = raw.part[i].get_ref().name.as_ref().map(Spanned::span);
            if p.name.is_empty() || p.name == "total" || p.name.contains([',', '"', '\n']) {
                return Err(self.invalid(
                    at,
                    &format!("part[{i}].name"),
                    format!(
                        "{:?} cannot name a part (not empty, not \"total\", no commas or quotes)",
                        p.name
                    ),
                ));
            }
            if let Some(j) = parts[..i].iter().position(|q| q.name == p.name) {
                return Err(self.invalid(
                    at,
                    &format!("part[{i}].name"),
                    format!("{:?} is already the name of part[{j}]", p.name),
                ));
            }
        }
        Ok(())
    }

    fn check_shares(
        &self,
        raw: &RawUsage,
        parts: &mut [Part],
        normalise: bool,
    ) -> Result<(), LifetimeError> {
        let sum: f64 = parts.iter().map(|p| p.share).sum();
        if normalise {
            parts.iter_mut().for_each(|p| p.share /= sum);
            return Ok(());
        }
        if (sum - 1.0).abs() > SHARE_TOLERANCE {
            let terms = parts
                .iter()
                .map(|p| format!("{} {}", p.name, p.share))
                .collect::<Vec<_>>()
                .join(" + ");
            return Err(self.invalid(
                raw.part.first().map(Spanned::span),
                "part[].share",
                format!(
                    "the parts' shares add up to {sum} ({terms}), not 1: correct them, or set normalise = true at the top of the file to scale them to 1"
                ),
            ));
        }
        Ok(())
    }
}

/// FNV-1a, 64 bit (Fowler, Noll & Vo): a fixed, portable hash of the
/// inputs, so a partial result can be matched to its usage.
#[derive(Debug, Clone, Copy)]
pub struct Fnv1a(u64);

impl Fnv1a {
    /// The offset basis.
    pub fn new() -> Self {
        Fnv1a(0xcbf2_9ce4_8422_2325)
    }

    /// Hashes bytes.
    pub fn bytes(&mut self, data: &[u8]) {
        for b in data {
            self.0 ^= u64::from(*b);
            self.0 = self.0.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }

    /// Hashes a number by its bits.
    pub fn f64(&mut self, x: f64) {
        self.bytes(&x.to_bits().to_le_bytes());
    }

    /// The hash.
    pub fn finish(self) -> u64 {
        self.0
    }
}

impl Default for Fnv1a {
    fn default() -> Self {
        Self::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dir() -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/vehicles/usage.toml")
    }

    const GOOD: &str = r#"
target_km = 1000
vehicle = "demo_hatchback.toml"
[[part]]
name = "fast"
share = 0.75
speed = "72kmh"
class = "B"
seeds = 2
length = 100
[[part]]
km = 250
speeds = [{ speed = 10, share = 0.5 }, { speed = "20", share = 0.5 }]
class = "C"
length = 100
first_seed = 7
"#;

    #[test]
    fn a_good_file_reads_into_parts() {
        let u = parse_usage(GOOD, &dir()).unwrap();
        assert_eq!(u.target_km, 1000.0);
        assert_eq!(u.parts.len(), 2);
        assert_eq!(u.parts[0].name, "fast");
        assert_eq!(u.parts[1].name, "part 2");
        assert_eq!(u.parts[1].share, 0.25);
        assert!((u.parts[0].speeds[0].speed_m_s - 20.0).abs() < 1e-12);
        assert_eq!(u.parts[1].speeds.len(), 2);
        assert_eq!(u.parts[1].road.spec(0).unwrap().seed, 7);
        assert_eq!(u.vehicles.len(), 1, "one vehicle file read once");
        // The fingerprint follows the inputs.
        let other = parse_usage(&GOOD.replace("seeds = 2", "seeds = 3"), &dir()).unwrap();
        assert_ne!(u.fingerprint, other.fingerprint);
        assert_eq!(
            u.fingerprint,
            parse_usage(GOOD, &dir()).unwrap().fingerprint
        );
    }

    #[test]
    fn bad_files_name_the_key_and_line() {
        let cases: [(&str, &str, &[&str]); 9] = [
            (
                "share = 0.75",
                "share = 0.70",
                &["add up to 0.95", "fast 0.7", "normalise"],
            ),
            (
                "target_km = 1000",
                "target_km = -5",
                &["`target_km`", "line 2", "-5"],
            ),
            ("seeds = 2", "seedz = 2", &["unknown field `seedz`"]),
            (
                "length = 100\n[[part]]",
                "length = -100\n[[part]]",
                &["`part[0].length`", "positive"],
            ),
            ("class = \"B\"", "class = \"Q\"", &["`part[0].class`"]),
            (
                "speed = \"72kmh\"",
                "speed = \"fast\"",
                &["`part[0].speed`", "\"fast\""],
            ),
            ("name = \"fast\"", "name = \"total\"", &["`part[0].name`"]),
            (
                "vehicle = \"demo_hatchback.toml\"",
                "vehicle = \"missing.toml\"",
                &["`vehicle`", "missing.toml"],
            ),
            (
                "first_seed = 7",
                "first_seed = 7\nprofile = \"x.csv\"",
                &["`part[1].profile`", "beside class"],
            ),
        ];
        for (from, to, wants) in cases {
            let text = GOOD.replace(from, to);
            assert_ne!(text, GOOD, "{from}");
            let e = parse_usage(&text, &dir()).unwrap_err();
            let msg = e.to_string();
            assert!(msg.contains("usage.toml"), "{msg}");
            for w in wants {
                assert!(msg.contains(w), "{from} → {to}: {msg} lacks {w}");
            }
            assert_eq!(e.exit_status(), 2, "{msg}");
        }
    }

    #[test]
    fn normalise_scales_the_shares() {
        let text = GOOD
            .replace("share = 0.75", "share = 3")
            .replace("km = 250", "share = 1")
            .replace("target_km = 1000", "target_km = 1000\nnormalise = true");
        let u = parse_usage(&text, &dir()).unwrap();
        assert_eq!(u.parts[0].share, 0.75);
        assert_eq!(u.parts[1].share, 0.25);
        assert!(u.normalised);
    }
}
