//! The explicit list of cases a sweep runs: vehicle × road × speed × seed,
//! nested in that order (seed varies fastest), numbered from 0.
//!
//! With `--vary`, each vehicle file contributes one vehicle per combination
//! of the varied values (the first `--vary` slowest, the last fastest), so the
//! order is vehicle file × variant × road × speed × seed.
//!
//! A road is an ISO 8608 class, generated per case from
//! `RoadSpec::from_class(class, length, spacing, seed)` exactly as
//! `roughride simulate --class C --seed N` does, or a profile file read once.
//! Generated roads take seeds `1..=N`: the seed is part of the case, never
//! of the order it runs in, so the class-C seed-2 road is the same at every
//! speed, in every shard and on every thread count. A profile file has no
//! seed, so it contributes one case per speed (its `seed` is `None`).

use std::sync::Arc;

use crate::road::Profile;
use crate::road::iso8608::{RoadClass, RoadSpec};
use crate::vehicle::Vehicle;

/// Largest number of cases a grid may hold (a typo guard: ten million
/// cases of even a short road would take days on one machine).
pub const MAX_CASES: usize = 10_000_000;

/// One vehicle of a sweep: a vehicle file, or one variant of it.
#[derive(Debug, Clone)]
pub struct SweepVehicle {
    /// The vehicle file as given on the command line (names the vehicle in
    /// the output, since two files may share a `name`).
    pub file: String,
    /// The parsed vehicle.
    pub vehicle: Vehicle,
    /// The values of the grid's [`Grid::varied_keys`] for this variant (empty
    /// when nothing is varied).
    pub varied: Vec<f64>,
}

impl SweepVehicle {
    /// A vehicle file as it is (no varied keys).
    pub fn new(file: impl Into<String>, vehicle: Vehicle) -> Self {
        SweepVehicle {
            file: file.into(),
            vehicle,
            varied: Vec::new(),
        }
    }
}

/// Where a sweep's road comes from.
#[derive(Debug, Clone)]
pub enum RoadSource {
    /// An ISO 8608 road generated per seed.
    Class(RoadClass),
    /// A profile read from a file (the label is the path as given).
    File {
        /// The path as given on the command line.
        label: String,
        /// The profile, shared by every case on it.
        profile: Arc<Profile>,
    },
}

impl RoadSource {
    /// The `road` column: the class letter or the file path as given.
    pub fn label(&self) -> String {
        match self {
            RoadSource::Class(c) => c.to_string(),
            RoadSource::File { label, .. } => label.clone(),
        }
    }

    /// The class, for generated roads.
    pub fn class(&self) -> Option<RoadClass> {
        match self {
            RoadSource::Class(c) => Some(*c),
            RoadSource::File { .. } => None,
        }
    }
}

/// Length and spacing of the generated roads.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RoadGeometry {
    /// Length, m.
    pub length_m: f64,
    /// Sample spacing, m.
    pub spacing_m: f64,
}

/// One case of the grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Case {
    /// Position in the full grid (0-based), the same in every shard.
    pub index: usize,
    /// Index into [`Grid::vehicles`].
    pub vehicle: usize,
    /// Index into [`Grid::roads`].
    pub road: usize,
    /// Forward speed, m/s.
    pub speed_m_s: f64,
    /// Road seed (generated roads only).
    pub seed: Option<u64>,
}

/// A sweep's full grid.
#[derive(Debug, Clone)]
pub struct Grid {
    /// The vehicles, in command-line order (each file's variants together).
    pub vehicles: Vec<SweepVehicle>,
    /// The varied vehicle-file keys (`front.damping`), one column each.
    pub varied_keys: Vec<String>,
    /// The roads: classes in the order given, then files in the order given.
    pub roads: Vec<RoadSource>,
    /// Speeds, m/s, in the order given.
    pub speeds_m_s: Vec<f64>,
    /// Seeds per generated road: `1..=seeds`.
    pub seeds: u64,
    /// Length and spacing of generated roads.
    pub geometry: RoadGeometry,
}

impl Grid {
    /// Checks the grid before any case runs: something to sweep, every
    /// generated road's parameters valid, every road at least a wheelbase
    /// long for every vehicle, and at most [`MAX_CASES`] cases. The message
    /// names the option or file.
    pub fn validate(&self) -> Result<(), crate::Error> {
        let usage = |m: String| Err(crate::Error::Usage(m));
        if self.vehicles.is_empty() {
            return usage("sweep: give at least one --vehicle FILE".into());
        }
        if self.roads.is_empty() {
            return usage("sweep: give --classes A,B,… or --profile FILE".into());
        }
        if self.speeds_m_s.is_empty() {
            return usage("sweep: --speeds gave no speed".into());
        }
        if self.seeds == 0 {
            return usage("sweep: --seeds must be at least 1".into());
        }
        if let Some(v) = self
            .vehicles
            .iter()
            .find(|v| v.varied.len() != self.varied_keys.len())
        {
            // Our own invariant: every variant carries a value per varied key.
            panic!(
                "sweep: {} carries {} varied values for {} keys",
                v.file,
                v.varied.len(),
                self.varied_keys.len()
            );
        }
        self.validate_roads()?;
        let total = self.len_checked().ok_or_else(|| {
            crate::Error::Usage(format!(
                "sweep: the grid has more than {MAX_CASES} cases; split it"
            ))
        })?;
        if total > MAX_CASES {
            return usage(format!(
                "sweep: the grid has {total} cases, more than {MAX_CASES}; split it into several sweeps"
            ));
        }
        Ok(())
    }

    /// Every generated road's parameters valid, and every road at least a
    /// wheelbase long for every vehicle.
    fn validate_roads(&self) -> Result<(), crate::Error> {
        if self.roads.iter().any(|r| r.class().is_some()) {
            // The spec differs between classes only in Gd(n0) and between
            // seeds only in the seed, neither of which can make it invalid.
            RoadSpec::from_class(
                RoadClass::C,
                self.geometry.length_m,
                self.geometry.spacing_m,
                1,
            )
            .validate()
            .map_err(|e| crate::Error::Usage(format!("sweep: --length/--spacing: {e}")))?;
        }
        for v in &self.vehicles {
            let wheelbase = v.vehicle.wheelbase_m();
            for r in &self.roads {
                let (length, what) = match r {
                    RoadSource::Class(_) => (self.geometry.length_m, "--length".to_string()),
                    RoadSource::File { profile, label } => (profile.length_m(), label.clone()),
                };
                if length < wheelbase {
                    return Err(crate::Error::Usage(format!(
                        "sweep: {what}: the road ({length:.3} m) is shorter than the wheelbase of {} ({wheelbase:.3} m)",
                        v.file
                    )));
                }
            }
        }
        Ok(())
    }

    /// Seeds of road `r`: `1..=seeds` for a class, one unseeded case for a file.
    fn seeds_of(&self, r: &RoadSource) -> usize {
        match r {
            RoadSource::Class(_) => usize::try_from(self.seeds).unwrap_or(usize::MAX),
            RoadSource::File { .. } => 1,
        }
    }

    fn len_checked(&self) -> Option<usize> {
        let per_vehicle = self.roads.iter().try_fold(0usize, |acc, r| {
            self.seeds_of(r)
                .checked_mul(self.speeds_m_s.len())
                .and_then(|n| acc.checked_add(n))
        })?;
        per_vehicle.checked_mul(self.vehicles.len())
    }

    /// Number of cases in the full grid (saturating; [`Grid::validate`]
    /// refuses grids beyond [`MAX_CASES`]).
    pub fn len(&self) -> usize {
        self.len_checked().unwrap_or(usize::MAX)
    }

    /// True when the grid holds no case.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The cases with index in `lo..hi`, in grid order (vehicle × road ×
    /// speed × seed, seed fastest). Call after [`Grid::validate`].
    pub fn cases(&self, lo: usize, hi: usize) -> Vec<Case> {
        let mut out = Vec::with_capacity(hi.saturating_sub(lo));
        let mut index = 0usize;
        for v in 0..self.vehicles.len() {
            for (r, road) in self.roads.iter().enumerate() {
                let seeds = self.seeds_of(road);
                let block = seeds * self.speeds_m_s.len();
                // Skip whole blocks outside the slice without enumerating them.
                if index + block <= lo || index >= hi {
                    index += block;
                    continue;
                }
                for &speed_m_s in &self.speeds_m_s {
                    for s in 0..seeds {
                        if (lo..hi).contains(&index) {
                            out.push(Case {
                                index,
                                vehicle: v,
                                road: r,
                                speed_m_s,
                                seed: road.class().map(|_| s as u64 + 1),
                            });
                        }
                        index += 1;
                    }
                }
            }
        }
        out
    }

    /// The spec of a generated case's road (`None` for a file road).
    pub fn road_spec(&self, case: &Case) -> Option<RoadSpec> {
        let class = self.roads[case.road].class()?;
        let seed = case.seed?;
        Some(RoadSpec::from_class(
            class,
            self.geometry.length_m,
            self.geometry.spacing_m,
            seed,
        ))
    }

    /// A one-line description of a case for messages: vehicle, road, seed, speed.
    pub fn describe(&self, case: &Case) -> String {
        let road = match &self.roads[case.road] {
            RoadSource::Class(c) => format!("class {c} seed {}", case.seed.unwrap_or(0)),
            RoadSource::File { label, .. } => format!("profile {label}"),
        };
        let v = &self.vehicles[case.vehicle];
        let varied: String = self
            .varied_keys
            .iter()
            .zip(&v.varied)
            .map(|(k, x)| format!(" {k}={x}"))
            .collect();
        format!(
            "case {}: vehicle {}{varied}, {road}, speed {} m/s",
            case.index, v.file, case.speed_m_s
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::vehicle::parse_vehicle;

    fn car() -> Vehicle {
        let text = std::fs::read_to_string(
            std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("profiles/vehicles/demo_hatchback.toml"),
        )
        .unwrap();
        parse_vehicle(&text, std::path::Path::new("demo_hatchback.toml")).unwrap()
    }

    fn grid(roads: Vec<RoadSource>, speeds: Vec<f64>, seeds: u64, vehicles: usize) -> Grid {
        Grid {
            vehicles: (0..vehicles)
                .map(|i| SweepVehicle::new(format!("v{i}.toml"), car()))
                .collect(),
            varied_keys: Vec::new(),
            roads,
            speeds_m_s: speeds,
            seeds,
            geometry: RoadGeometry {
                length_m: 100.0,
                spacing_m: 0.05,
            },
        }
    }

    #[test]
    fn cases_nest_vehicle_road_speed_seed_with_seed_fastest() {
        let g = grid(
            vec![
                RoadSource::Class(RoadClass::A),
                RoadSource::Class(RoadClass::C),
            ],
            vec![10.0, 20.0, 30.0],
            2,
            2,
        );
        g.validate().unwrap();
        assert_eq!(g.len(), 2 * 2 * 3 * 2);
        let all = g.cases(0, g.len());
        assert_eq!(all.len(), g.len());
        for (i, c) in all.iter().enumerate() {
            assert_eq!(c.index, i);
            // Mixed-radix decoding of the index, seed fastest.
            let seed = i % 2;
            let speed = (i / 2) % 3;
            let road = (i / 6) % 2;
            let vehicle = i / 12;
            assert_eq!(
                (c.vehicle, c.road, c.speed_m_s, c.seed),
                (vehicle, road, g.speeds_m_s[speed], Some(seed as u64 + 1))
            );
        }
        // Any slice is the same cases as the full list.
        for lo in 0..g.len() {
            for hi in lo..=g.len() {
                assert_eq!(g.cases(lo, hi), all[lo..hi].to_vec());
            }
        }
    }

    #[test]
    fn a_profile_file_has_one_unseeded_case_per_speed() {
        let p = Arc::new(Profile::new(0.0, 0.05, vec![0.0; 2001]));
        let g = grid(
            vec![
                RoadSource::Class(RoadClass::B),
                RoadSource::File {
                    label: "r.csv".into(),
                    profile: p,
                },
            ],
            vec![10.0, 20.0],
            3,
            1,
        );
        assert_eq!(g.len(), 3 * 2 + 2);
        let all = g.cases(0, g.len());
        assert_eq!(all[6].seed, None);
        assert_eq!(all[6].road, 1);
        assert_eq!(all[7].speed_m_s, 20.0);
        assert!(g.road_spec(&all[6]).is_none());
        assert_eq!(g.road_spec(&all[5]).unwrap().seed, 3);
    }

    #[test]
    fn bad_grids_are_refused_before_running() {
        let mut g = grid(vec![RoadSource::Class(RoadClass::A)], vec![10.0], 1, 1);
        g.geometry.length_m = 1.0; // shorter than the wheelbase (2.55 m)
        let e = g.validate().unwrap_err();
        assert_eq!(e.exit_status(), 2);
        assert!(e.to_string().contains("wheelbase"), "{e}");
        let g = grid(vec![], vec![10.0], 1, 1);
        assert!(g.validate().is_err());
        let g = grid(vec![RoadSource::Class(RoadClass::A)], vec![10.0], 0, 1);
        assert!(g.validate().is_err());
        let g = grid(
            vec![RoadSource::Class(RoadClass::A)],
            vec![10.0; 10_000],
            10_000,
            1,
        );
        assert!(g.validate().unwrap_err().to_string().contains("cases"));
    }
}
