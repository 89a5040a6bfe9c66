//! Judging one design on the study's cases, in the frequency domain or in
//! the time domain, as the values the objective and the limits read.
//!
//! # Time domain
//! Every case (road × seed × speed, as `sweep` nests them) runs through
//! [`crate::pipeline::simulate`], the function behind `simulate` and every
//! sweep row, on roads generated once (the same roads as `sweep`'s). The
//! cases run in parallel and are combined in case order, so the values do
//! not depend on the thread count.
//!
//! # Frequency domain
//! For a linear vehicle on generated roads, the spectral prediction that
//! `simulate` prints beside a run ([`crate::vehicle::response`], with the
//! profile's `sinc⁴` spacing model): one integral per speed on the class-C
//! spectrum, scaled to every class by `√(Gd(n0)/Gd_C(n0))` (every channel
//! is linear in the road and the classes differ only in `Gd(n0)`, ISO 8608
//! Table 1). The response of a linear system to a Gaussian road is Gaussian
//! (Newland, *An Introduction to Random Vibrations, Spectral and Wavelet
//! Analysis*, 3rd ed., ch. 7), which gives the values that need more than an
//! r.m.s. value: the 99th percentile of travel `z₀.₉₉·σ` (z₀.₉₉ = 2.3263,
//! Abramowitz & Stegun, Table 26.1) and the time off the ground, the
//! probability that the dynamic load pulls more than the static load,
//! `Φ(−1/DLC)`. The prediction is the expected value over seeds, so every
//! seed of a class is the same case here.

use std::sync::Arc;

use rayon::prelude::*;

use super::problem::{Measure, Objective, Over, Quantity, Study, StudyRoad};
use crate::comfort::{COMFORT_SEAT_K, total_value};
use crate::pipeline::{self, RunOptions, RunSummary};
use crate::road::Profile;
use crate::road::iso8608::{RoadClass, RoadSpec, generate};
use crate::vehicle::Vehicle;
use crate::vehicle::response::{PredictedRms, SpectralSettings, predicted_rms_with};

/// The standard normal quantile of 0.99 (Abramowitz & Stegun, Table 26.1).
pub const Z_99: f64 = 2.326_347_874_040_841;

/// One case's values.
#[derive(Debug, Clone, PartialEq)]
pub struct CaseValues {
    /// Weight in the mean (the speed's weight).
    pub weight: f64,
    /// The objective seat's aw, m/s²: at the seat surface for a suspended
    /// seat (what reaches the person), as every seat measure.
    pub aw: f64,
    /// The objective seat's vibration total value for comfort, m/s².
    pub total_value: f64,
    /// The objective seat's VDV, m/s^1.75 (time domain only).
    pub vdv: Option<f64>,
    /// Per axle: travel r.m.s., m.
    pub travel_rms: [f64; 2],
    /// Per axle: 99th percentile of travel, m.
    pub travel_p99: [f64; 2],
    /// Per axle: fraction of time past the bump stop.
    pub past_bump: [Option<f64>; 2],
    /// Per axle: dynamic load coefficient.
    pub load_coefficient: [f64; 2],
    /// Per axle: fraction of time off the ground.
    pub off_ground: [f64; 2],
}

impl CaseValues {
    /// The value a limit reads.
    pub fn get(&self, q: Quantity) -> f64 {
        match q {
            Quantity::TravelRms(i) => self.travel_rms[i],
            Quantity::TravelP99(i) => self.travel_p99[i],
            Quantity::TimePastBump(i) => self.past_bump[i].unwrap_or(f64::NAN),
            Quantity::LoadCoefficient(i) => self.load_coefficient[i],
            Quantity::OffGround(i) => self.off_ground[i],
        }
    }
}

/// The objective over `cases`.
pub fn objective_of(obj: &Objective, cases: &[CaseValues]) -> f64 {
    let value = |c: &CaseValues| match obj.measure {
        Measure::Aw => c.aw,
        Measure::Vdv => c.vdv.unwrap_or(f64::NAN),
        Measure::TotalValue => c.total_value,
    };
    match obj.over {
        Over::Mean => {
            let w: f64 = cases.iter().map(|c| c.weight).sum();
            cases.iter().map(|c| c.weight * value(c)).sum::<f64>() / w
        }
        Over::Worst => cases.iter().map(value).fold(f64::NEG_INFINITY, f64::max),
    }
}

/// The largest value of `q` over `cases`.
pub fn worst_of(q: Quantity, cases: &[CaseValues]) -> f64 {
    cases
        .iter()
        .map(|c| c.get(q))
        .fold(f64::NEG_INFINITY, f64::max)
}

/// `Φ(−x)`, the upper tail of the standard normal: `erfc(x/√2)/2`.
pub fn normal_tail(x: f64) -> f64 {
    0.5 * erfc(x / std::f64::consts::SQRT_2)
}

/// The complementary error function, fractional error below 1.2·10⁻⁷
/// everywhere (Chebyshev fit; Press et al., *Numerical Recipes*, 2nd ed.,
/// §6.2, `erfcc`).
pub fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let poly = -z * z - 1.265_512_23
        + t * (1.000_023_68
            + t * (0.374_091_96
                + t * (0.096_784_18
                    + t * (-0.186_288_06
                        + t * (0.278_868_07
                            + t * (-1.135_203_98
                                + t * (1.488_515_87 + t * (-0.822_152_23 + t * 0.170_872_77))))))));
    let r = t * poly.exp();
    if x >= 0.0 { r } else { 2.0 - r }
}

/// The spectral values of every case from one prediction per speed.
pub fn spectral_cases(
    v: &Vehicle,
    study: &Study,
    seat: usize,
    options: &RunOptions,
) -> Result<Vec<CaseValues>, crate::Error> {
    let mut reference = RoadSpec::from_class(RoadClass::C, study.length_m, study.spacing_m, 1);
    let mut settings = SpectralSettings {
        profile_spacing_m: Some(study.spacing_m),
        ..SpectralSettings::default()
    };
    if let Some((lo, hi)) = study.spectral_band_cycle_m {
        (reference.n_min_cycle_m, reference.n_max_cycle_m) = (lo, hi);
        // An ideal band-limited spectrum, not a sampled profile.
        reference.spacing_m = reference.spacing_m.min(0.25 / hi);
        settings.profile_spacing_m = None;
    }
    let per_speed: Vec<PredictedRms> = study
        .speeds
        .iter()
        .map(|(s, _)| predicted_rms_with(v, *s, &reference, options.weighting, &settings))
        .collect::<Result<_, _>>()?;
    let statics = v.static_contact_n();
    let mut out = Vec::new();
    for road in &study.roads {
        let StudyRoad::Class(class) = road else {
            return Err(crate::Error::Usage(
                "tune: the frequency-domain evaluation needs generated roads (--classes); use --method time for --profile".into(),
            ));
        };
        let f = (class.gd_n0_m3() / reference.gd_n0_m3).sqrt();
        for ((_, weight), p) in study.speeds.iter().zip(&per_speed) {
            let axles = [&p.axles.front, &p.axles.rear];
            let travel = axles.map(|a| a.travel_rms * f);
            let load = [0, 1].map(|i| axles[i].tyre_load_rms * f / statics[i]);
            // Every r.m.s. scales with √Gd(n0), so the total value too.
            let s = &p.seats[seat];
            let total = total_value([s.fore_aft_aw, 0.0, s.aw], COMFORT_SEAT_K);
            out.push(CaseValues {
                weight: *weight,
                aw: s.aw * f,
                total_value: total * f,
                vdv: None,
                travel_rms: travel,
                travel_p99: travel.map(|s| Z_99 * s),
                past_bump: [None, None],
                load_coefficient: load,
                off_ground: load.map(|d| if d > 0.0 { normal_tail(1.0 / d) } else { 0.0 }),
            });
        }
    }
    Ok(out)
}

/// The roads of the time-domain cases, built once: per road, one profile
/// per seed (a file road has one).
pub fn build_roads(study: &Study) -> Result<Vec<Vec<Arc<Profile>>>, crate::Error> {
    study
        .roads
        .iter()
        .map(|r| match r {
            StudyRoad::Class(c) => (1..=study.seeds)
                .map(|seed| {
                    generate(&RoadSpec::from_class(
                        *c,
                        study.length_m,
                        study.spacing_m,
                        seed,
                    ))
                    .map(Arc::new)
                    .map_err(crate::Error::from)
                })
                .collect(),
            StudyRoad::Profile { profile, .. } => Ok(vec![Arc::clone(profile)]),
        })
        .collect()
}

/// The time-domain values of every case: road × speed × seed, as `sweep`
/// orders them, run on `pool`.
pub fn time_cases(
    v: &Vehicle,
    study: &Study,
    roads: &[Vec<Arc<Profile>>],
    seat: usize,
    options: &RunOptions,
    pool: &rayon::ThreadPool,
) -> Result<Vec<CaseValues>, crate::Error> {
    let mut jobs: Vec<(&Profile, f64, f64)> = Vec::new();
    for seeds in roads {
        for &(speed, weight) in &study.speeds {
            for p in seeds {
                jobs.push((p, speed, weight));
            }
        }
    }
    let runs: Vec<Result<RunSummary, crate::Error>> = pool.install(|| {
        jobs.par_iter()
            .map(|(p, speed, _)| {
                let mut o = options.clone();
                o.speed_m_s = *speed;
                pipeline::simulate(v, p, &o, None)
            })
            .collect()
    });
    runs.into_iter()
        .zip(&jobs)
        .map(|(r, (_, _, weight))| r.map(|s| case_of(&s, seat, *weight)))
        .collect()
}

fn case_of(s: &RunSummary, seat: usize, weight: f64) -> CaseValues {
    let axles = [&s.axles.front, &s.axles.rear];
    let p99 = |i: usize| {
        axles[i]
            .durability
            .travel_percentiles_m
            .iter()
            .find(|(q, _)| *q == 99.0)
            .map_or(f64::NAN, |(_, v)| *v)
    };
    CaseValues {
        weight,
        aw: s.seats[seat].measures.aw,
        total_value: s.seats[seat].total_value,
        vdv: Some(s.seats[seat].measures.vdv),
        travel_rms: [axles[0].travel_rms, axles[1].travel_rms],
        travel_p99: [p99(0), p99(1)],
        past_bump: [0, 1].map(|i| axles[i].durability.time_past_bump_fraction),
        load_coefficient: [0, 1].map(|i| axles[i].dynamic_load_coefficient),
        off_ground: [0, 1].map(|i| axles[i].time_off_ground_fraction),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_normal_tail_matches_the_published_table() {
        // Abramowitz & Stegun, Table 26.1: Q(1) = 0.158655254, Q(2) =
        // 0.022750132, Q(3) = 0.001349898; Q(z₀.₉₉) = 0.01.
        for (x, q) in [
            (1.0, 0.158_655_254),
            (2.0, 0.022_750_132),
            (3.0, 0.001_349_898),
            (Z_99, 0.01),
        ] {
            assert!(
                (normal_tail(x) / q - 1.0).abs() < 1e-6,
                "Q({x}) = {}",
                normal_tail(x)
            );
        }
        assert!((normal_tail(0.0) - 0.5).abs() < 1e-7);
        assert!((normal_tail(-1.0) - (1.0 - 0.158_655_254)).abs() < 1e-7);
    }
}
