//! The runs of a lifetime: one case per part × speed × road (road
//! fastest), numbered from 0 in that order, and one case run through the
//! same pipeline as `simulate` into its unscaled counts ([`CaseResult`]).
//!
//! A generated road is `RoadSpec::from_class(class, length, spacing, seed)`
//! exactly as `roughride simulate --class C --seed N --length L` builds it,
//! generated inside the worker and dropped when the case is done, so memory
//! holds one road per thread (and the profile files the usage names).

use std::sync::Arc;

use serde::{Deserialize, Serialize};

use super::usage::{PartRoad, Usage};
use crate::comfort::Weighting;
use crate::pipeline::{self, Durability, RunOptions, RunSummary};
use crate::road::Profile;
use crate::road::iso8608::generate;
use crate::solve::{self, Excitation, SolverSettings};
use crate::stats::ResidueMethod;
use crate::stats::durability::{DurabilitySettings, Quantity};

/// One run of a lifetime.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Case {
    /// Position in the full list (0-based), the same in every shard.
    pub index: usize,
    /// Index into [`Usage::parts`].
    pub part: usize,
    /// Index into the part's speeds.
    pub speed: usize,
    /// The part's road: seed offset, or profile file index.
    pub road: usize,
}

/// Everything the cases share besides the usage file.
#[derive(Debug, Clone)]
pub struct Settings {
    /// The run options of every case (each case sets its speed). Its
    /// durability settings count the tyre load and the level-crossing
    /// spectra ([`DurabilitySettings::load_spectra`]).
    pub run: RunOptions,
}

impl Settings {
    /// Settings with the given solver, seat weighting, S–N exponents and
    /// residue method; everything else as `simulate` has it.
    pub fn new(
        solver: SolverSettings,
        weighting: Weighting,
        sn_exponents: Vec<f64>,
        residue: ResidueMethod,
    ) -> Self {
        let mut run = RunOptions::at_speed(1.0);
        run.solver = solver;
        run.weighting = weighting;
        run.durability = DurabilitySettings {
            sn_exponents,
            residue,
            load_spectra: true,
            ..DurabilitySettings::default()
        };
        Settings { run }
    }

    /// What in the settings changes a case's counts, in words (part of a
    /// partial result's fingerprint).
    pub fn fingerprint_text(&self) -> String {
        format!(
            "{:?}|{:?}|{:?}",
            self.run.solver, self.run.weighting, self.run.durability
        )
    }
}

/// All cases of a usage, in order: part × speed × road, road fastest.
pub fn cases(usage: &Usage) -> Vec<Case> {
    let mut out = Vec::new();
    for (p, part) in usage.parts.iter().enumerate() {
        for s in 0..part.speeds.len() {
            for r in 0..part.road.count() {
                out.push(Case {
                    index: out.len(),
                    part: p,
                    speed: s,
                    road: r,
                });
            }
        }
    }
    out
}

/// The distance of the life a case stands for, m:
/// `target_km · 1000 · share_part · share_speed / roads`.
pub fn life_distance_m(usage: &Usage, case: &Case) -> f64 {
    let part = &usage.parts[case.part];
    usage.target_km * 1000.0 * part.share * part.speeds[case.speed].share / part.road.count() as f64
}

/// A case in words: `case 4: part town, class C seed 2, 40kmh`.
pub fn describe(usage: &Usage, case: &Case) -> String {
    let part = &usage.parts[case.part];
    format!(
        "case {}: part {}, {}, speed {}",
        case.index,
        part.name,
        part.road.describe(case.road),
        part.speeds[case.speed].text
    )
}

/// Checks the solver settings for every vehicle and speed before any case
/// runs (e.g. `--solver exact` with a nonlinear vehicle), so bad input
/// fails at once with exit status 2. Planning does not look at the road,
/// so a flat two-sample road stands in for it.
pub fn preflight(usage: &Usage, settings: &Settings) -> Result<(), crate::Error> {
    let flat = Profile::new(0.0, 1.0, vec![0.0, 0.0]);
    for part in &usage.parts {
        let v = &usage.vehicles[part.vehicle];
        for s in &part.speeds {
            let excitation = Excitation {
                profile: &flat,
                speed_m_s: s.speed_m_s,
                wheelbase_m: v.vehicle.wheelbase_m(),
                force: None,
            };
            solve::plan(&v.vehicle, &excitation, &settings.run.solver).map_err(|e| {
                crate::Error::Usage(format!("{} (part {}): {e}", v.label, part.name))
            })?;
        }
    }
    Ok(())
}

/// Runs one case through [`pipeline::simulate_detailed`].
pub fn run_case(
    usage: &Usage,
    case: &Case,
    settings: &Settings,
) -> Result<CaseResult, crate::Error> {
    let part = &usage.parts[case.part];
    let profile = match &part.road {
        PartRoad::Profiles(p) => Arc::clone(&p[case.road].profile),
        PartRoad::Class { .. } => {
            let spec = part.road.spec(case.road).ok_or_else(|| {
                crate::Error::Usage(format!("case {} has no road spec", case.index))
            })?;
            Arc::new(generate(&spec)?)
        }
    };
    let mut options = settings.run.clone();
    options.speed_m_s = part.speeds[case.speed].speed_m_s;
    let vehicle = &usage.vehicles[part.vehicle].vehicle;
    let (summary, durability) = pipeline::simulate_detailed(vehicle, &profile, &options, None)?;
    Ok(CaseResult::new(case.index, &summary, &durability))
}

/// The unscaled counts of one case: what a shard's partial result holds.
/// Cycles count ½ for half cycles; times are fractions of the run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CaseResult {
    /// The case number.
    pub index: usize,
    /// Simulated road length (front axle), m.
    pub length_m: f64,
    /// Run duration, s.
    pub duration_s: f64,
    /// The solver that produced the samples.
    pub solver: String,
    /// Why the exact solver handed over to the adaptive one, if it did.
    pub fallback: Option<String>,
    /// Samples in which the exact solver's bonded tyre was in tension (front, rear).
    pub tyre_tension_samples: [u64; 2],
    /// Front, rear.
    pub axles: Vec<AxleCounts>,
    /// One per seat of the case's vehicle, in file order.
    pub seats: Vec<SeatRun>,
}

/// The counts of one axle of one case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AxleCounts {
    /// Travel, suspension force, tyre load ([`Quantity::ALL`] order).
    pub quantities: Vec<QuantityCounts>,
    /// Fraction of samples past the bump clearance (None without a bump stop).
    pub past_bump_fraction: Option<f64>,
    /// Fraction of samples past the rebound clearance (None without one).
    pub past_rebound_fraction: Option<f64>,
    /// Fraction of samples with the tyre off the road.
    pub off_ground_fraction: f64,
}

/// The counts of one quantity of one case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct QuantityCounts {
    /// Occupied rainflow cells `(range index, mean index, cycles)`.
    pub cells: Vec<(i64, i64, f64)>,
    /// `Σ nᵢ·Sᵢ^m` per S–N exponent (exact ranges).
    pub damage_sums: Vec<f64>,
    /// `(level index, up-crossings)`.
    pub upcrossings: Vec<(i64, u64)>,
}

/// One seat's exposure in one case.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SeatRun {
    /// The weighting (e.g. `Wk`).
    pub weighting: String,
    /// ISO 2631-1 aw, m/s² (vertical; at the seat surface of a suspended
    /// seat, as every seat measure).
    pub aw: f64,
    /// VDV, m/s^1.75.
    pub vdv: f64,
    /// The fore-aft (Wd) aw, m/s²; 0 for a seat at height 0.
    pub fore_aft_aw: f64,
    /// The fore-aft VDV, m/s^1.75.
    pub fore_aft_vdv: f64,
    /// Record duration, s.
    pub duration_s: f64,
}

impl CaseResult {
    /// The counts of a finished run (its durability evaluators must count
    /// the tyre load and spectra: [`Settings`] makes sure of it).
    pub fn new(index: usize, summary: &RunSummary, durability: &Durability) -> Self {
        let axle_summaries = [&summary.axles.front, &summary.axles.rear];
        let axles = (0..2)
            .map(|i| AxleCounts {
                quantities: Quantity::ALL
                    .iter()
                    .map(|q| {
                        let c = durability.axle(i).load_counts(*q).unwrap_or_else(|| {
                            panic!("case {index}: {q:?} was not counted (load_spectra off)")
                        });
                        QuantityCounts {
                            cells: c.table.cells().map(|((r, m), n)| (r, m, n)).collect(),
                            damage_sums: c.damage_sums,
                            upcrossings: c.upcrossings,
                        }
                    })
                    .collect(),
                past_bump_fraction: axle_summaries[i].durability.time_past_bump_fraction,
                past_rebound_fraction: axle_summaries[i].durability.time_past_rebound_fraction,
                off_ground_fraction: axle_summaries[i].time_off_ground_fraction,
            })
            .collect();
        CaseResult {
            index,
            length_m: summary.length_m,
            duration_s: summary.duration_s,
            solver: summary.solver.solver.name().into(),
            fallback: summary.solver.fallback.clone(),
            tyre_tension_samples: summary.solver.bonded_pull_samples,
            axles,
            seats: summary
                .seats
                .iter()
                .map(|s| SeatRun {
                    weighting: s.measures.weighting.clone(),
                    aw: s.measures.aw,
                    vdv: s.measures.vdv,
                    fore_aft_aw: s.fore_aft.aw,
                    fore_aft_vdv: s.fore_aft.vdv,
                    duration_s: s.measures.duration_s,
                })
                .collect(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lifetime::usage::parse_usage;

    #[test]
    fn cases_nest_part_speed_road_and_share_the_life() {
        let text = r#"
target_km = 100
vehicle = "demo_hatchback.toml"
[[part]]
share = 0.5
speed = "20"
class = "B"
seeds = 3
length = 50
[[part]]
share = 0.5
speeds = [{ speed = "10", share = 0.25 }, { speed = "15", share = 0.75 }]
class = "D"
seeds = 2
length = 50
"#;
        let path =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/vehicles/u.toml");
        let u = parse_usage(text, &path).unwrap();
        let all = cases(&u);
        assert_eq!(all.len(), 3 + 2 * 2);
        assert_eq!(
            all.iter()
                .map(|c| (c.part, c.speed, c.road))
                .collect::<Vec<_>>(),
            vec![
                (0, 0, 0),
                (0, 0, 1),
                (0, 0, 2),
                (1, 0, 0),
                (1, 0, 1),
                (1, 1, 0),
                (1, 1, 1)
            ]
        );
        // The cases' distances add up to the life.
        let total: f64 = all.iter().map(|c| life_distance_m(&u, c)).sum();
        assert!((total - 100_000.0).abs() < 1e-6);
        assert_eq!(life_distance_m(&u, &all[5]), 100_000.0 * 0.5 * 0.75 / 2.0);
        assert!(describe(&u, &all[4]).contains("class D seed 2"));
    }
}
