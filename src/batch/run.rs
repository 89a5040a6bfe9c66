//! Running a list of cases on a pool of threads and handing the results
//! back strictly in case order, with bounded memory.
//!
//! Each case runs through [`crate::pipeline::simulate`], the same function
//! `roughride simulate` calls, so a case's result does not depend on the
//! thread that ran it or on what ran before. The threads, the reordering
//! into case order and the bound on results held ahead ([`Runner::window`])
//! are [`super::ordered::Pool`]'s.
//!
//! Generated roads are built once per (class, seed) and shared by every
//! speed and vehicle, through a cache bounded in bytes; an evicted road is
//! simply generated again (synthesis is deterministic, so it is the same
//! road).

use std::collections::{HashMap, VecDeque};
use std::sync::{Arc, Mutex, MutexGuard, OnceLock};

use crate::pipeline::{self, RunOptions, RunSummary};
use crate::road::iso8608::{RoadSpec, generate};
use crate::road::{Profile, ProfileError};
use crate::solve::{self, Excitation};

use super::grid::{Case, Grid, RoadSource};
use super::ordered::Pool;

/// Default byte budget of the road cache (256 MiB: 3 million samples).
pub const DEFAULT_ROAD_CACHE_BYTES: usize = 256 << 20;

/// A case that did not complete, with why.
#[derive(Debug)]
pub struct CaseFailure {
    /// The case.
    pub case: Case,
    /// Vehicle, road, seed and speed in words.
    pub description: String,
    /// What went wrong.
    pub error: crate::Error,
}

/// How to run a list of cases.
#[derive(Debug, Clone)]
pub struct Runner {
    /// Options of every run; each case sets its own speed.
    pub options: RunOptions,
    /// Worker threads (at least 1).
    pub jobs: usize,
    /// Most cases a worker may run ahead of the next case to emit.
    pub window: usize,
    /// Byte budget of the generated-road cache.
    pub road_cache_bytes: usize,
}

impl Runner {
    /// A runner on `jobs` threads with the default window (8 cases per
    /// thread) and road cache.
    pub fn new(options: RunOptions, jobs: usize) -> Self {
        let jobs = jobs.max(1);
        Runner {
            options,
            jobs,
            window: 8 * jobs,
            road_cache_bytes: DEFAULT_ROAD_CACHE_BYTES,
        }
    }

    /// Checks the solver settings for every vehicle and speed before any
    /// case runs (e.g. `--solver exact` with a nonlinear vehicle, a bad
    /// `--rate`), so bad input fails at once with exit status 2 instead of
    /// failing every case. Planning does not look at the road, so a flat
    /// two-sample road stands in for it.
    pub fn preflight(&self, grid: &Grid) -> Result<(), crate::Error> {
        let flat = Profile::new(0.0, 1.0, vec![0.0, 0.0]);
        for v in &grid.vehicles {
            for &speed_m_s in &grid.speeds_m_s {
                let excitation = Excitation {
                    profile: &flat,
                    speed_m_s,
                    wheelbase_m: v.vehicle.wheelbase_m(),
                    force: self.options.force,
                };
                solve::plan(&v.vehicle, &excitation, &self.options.solver)
                    .map_err(|e| crate::Error::Usage(format!("{}: {e}", v.file)))?;
            }
        }
        Ok(())
    }

    /// Runs `cases` of `grid` and calls `emit` once per case, in the order
    /// of `cases`, with the run's summary or its error. A failed case does
    /// not stop the others. An error returned by `emit` (e.g. the output
    /// could not be written) stops the sweep and is returned; so is a run
    /// interrupted by [`crate::solve::request_cancel`].
    pub fn run(
        &self,
        grid: &Grid,
        cases: &[Case],
        mut emit: impl FnMut(&Case, Result<RunSummary, crate::Error>) -> Result<(), crate::Error>,
    ) -> Result<(), crate::Error> {
        let cache = RoadCache::new(self.road_cache_bytes);
        let pool = Pool {
            jobs: self.jobs,
            window: self.window,
        };
        pool.run(
            "roughride-sweep",
            cases.len(),
            |i| self.run_case(grid, &cases[i], &cache),
            |i, result| emit(&cases[i], result),
        )
    }

    /// One case through the pipeline.
    fn run_case(
        &self,
        grid: &Grid,
        case: &Case,
        cache: &RoadCache,
    ) -> Result<RunSummary, crate::Error> {
        let profile = match &grid.roads[case.road] {
            RoadSource::File { profile, .. } => Arc::clone(profile),
            RoadSource::Class(_) => {
                let spec = grid.road_spec(case).ok_or_else(|| {
                    ProfileError::Parameter(format!("case {} has no road seed", case.index))
                })?;
                cache.get((case.road, spec.seed), &spec)?
            }
        };
        let mut options = self.options.clone();
        options.speed_m_s = case.speed_m_s;
        options.road_spec = grid.road_spec(case);
        pipeline::simulate(
            &grid.vehicles[case.vehicle].vehicle,
            &profile,
            &options,
            None,
        )
    }
}

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    m.lock().unwrap_or_else(|p| p.into_inner())
}

type RoadKey = (usize, u64);
type Slot = Arc<OnceLock<Result<Arc<Profile>, String>>>;

/// Generated roads by (road index, seed), oldest evicted first once the
/// byte budget is exceeded. Two workers wanting the same road wait for one
/// generation.
struct RoadCache {
    budget_bytes: usize,
    inner: Mutex<CacheInner>,
}

#[derive(Default)]
struct CacheInner {
    slots: HashMap<RoadKey, (Slot, usize)>,
    order: VecDeque<RoadKey>,
    bytes: usize,
}

impl RoadCache {
    fn new(budget_bytes: usize) -> Self {
        RoadCache {
            budget_bytes,
            inner: Mutex::new(CacheInner::default()),
        }
    }

    fn get(&self, key: RoadKey, spec: &RoadSpec) -> Result<Arc<Profile>, ProfileError> {
        let slot = {
            let mut c = lock(&self.inner);
            match c.slots.get(&key) {
                Some((slot, _)) => Arc::clone(slot),
                None => {
                    let size = (spec.intervals() + 1) * std::mem::size_of::<f64>();
                    while c.bytes + size > self.budget_bytes {
                        let Some(old) = c.order.pop_front() else {
                            break;
                        };
                        if let Some((_, s)) = c.slots.remove(&old) {
                            c.bytes -= s;
                        }
                    }
                    let slot: Slot = Arc::new(OnceLock::new());
                    if size <= self.budget_bytes {
                        c.slots.insert(key, (Arc::clone(&slot), size));
                        c.order.push_back(key);
                        c.bytes += size;
                    }
                    slot
                }
            }
        };
        slot.get_or_init(|| generate(spec).map(Arc::new).map_err(|e| e.to_string()))
            .clone()
            .map_err(ProfileError::Parameter)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::batch::grid::{RoadGeometry, SweepVehicle};
    use crate::road::iso8608::RoadClass;
    use crate::vehicle::parse_vehicle;

    fn grid(seeds: u64) -> Grid {
        let text = std::fs::read_to_string(
            std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("profiles/vehicles/demo_hatchback.toml"),
        )
        .unwrap();
        let vehicle = parse_vehicle(&text, std::path::Path::new("demo_hatchback.toml")).unwrap();
        Grid {
            vehicles: vec![SweepVehicle::new("car.toml", vehicle)],
            varied_keys: Vec::new(),
            roads: vec![
                RoadSource::Class(RoadClass::B),
                RoadSource::Class(RoadClass::D),
            ],
            speeds_m_s: vec![10.0, 25.0],
            seeds,
            geometry: RoadGeometry {
                length_m: 60.0,
                spacing_m: 0.05,
            },
        }
    }

    fn aw_of(runner: &Runner, g: &Grid) -> Vec<(usize, u64)> {
        let cases = g.cases(0, g.len());
        let mut out = Vec::new();
        runner
            .run(g, &cases, |c, r| {
                out.push((c.index, r.unwrap().seats[0].measures.aw.to_bits()));
                Ok(())
            })
            .unwrap();
        out
    }

    #[test]
    fn results_come_in_case_order_and_do_not_depend_on_threads_window_or_cache() {
        let g = grid(3);
        let one = Runner::new(RunOptions::at_speed(1.0), 1);
        let reference = aw_of(&one, &g);
        assert_eq!(
            reference.iter().map(|r| r.0).collect::<Vec<_>>(),
            (0..g.len()).collect::<Vec<_>>()
        );
        let mut tight = Runner::new(RunOptions::at_speed(1.0), 2);
        tight.window = 1;
        tight.road_cache_bytes = 0; // every road generated afresh
        assert_eq!(aw_of(&tight, &g), reference);
        assert_eq!(
            aw_of(&Runner::new(RunOptions::at_speed(1.0), 3), &g),
            reference
        );
    }

    #[test]
    fn a_case_equals_a_single_run_of_the_pipeline() {
        let g = grid(2);
        let cases = g.cases(0, g.len());
        let mut seen = 0;
        Runner::new(RunOptions::at_speed(1.0), 2)
            .run(&g, &cases, |c, r| {
                let spec = g.road_spec(c).unwrap();
                let single = pipeline::simulate(
                    &g.vehicles[0].vehicle,
                    &generate(&spec).unwrap(),
                    &RunOptions::at_speed(c.speed_m_s),
                    None,
                )
                .unwrap();
                let r = r.unwrap();
                assert_eq!(
                    r.seats[1].measures.vdv.to_bits(),
                    single.seats[1].measures.vdv.to_bits()
                );
                assert_eq!(
                    r.axles.rear.travel_rms.to_bits(),
                    single.axles.rear.travel_rms.to_bits()
                );
                seen += 1;
                Ok(())
            })
            .unwrap();
        assert_eq!(seen, g.len());
    }

    #[test]
    fn a_failed_case_is_handed_on_and_the_other_cases_still_run() {
        let mut g = grid(2);
        // generate() refuses a road no longer than its spacing, so every
        // generated case fails at run time; the file road's cases run.
        g.geometry.length_m = 0.01;
        g.roads.push(RoadSource::File {
            label: "flat.csv".into(),
            profile: Arc::new(Profile::new(0.0, 0.05, vec![0.0; 1201])),
        });
        let cases = g.cases(0, g.len());
        let mut seen = Vec::new();
        Runner::new(RunOptions::at_speed(1.0), 2)
            .run(&g, &cases, |c, r| {
                seen.push((c.index, g.roads[c.road].class().is_some(), r.is_ok()));
                Ok(())
            })
            .unwrap();
        assert_eq!(seen.len(), g.len());
        for (i, (index, generated, ok)) in seen.into_iter().enumerate() {
            assert_eq!(index, i);
            assert_eq!(ok, !generated, "case {i}");
        }
    }

    #[test]
    fn solver_settings_are_checked_for_every_vehicle_before_running() {
        let g = grid(1);
        let mut options = RunOptions::at_speed(1.0);
        options.solver.output_rate_hz = -5.0;
        let e = Runner::new(options, 1).preflight(&g).unwrap_err();
        assert_eq!(e.exit_status(), 2);
        assert!(
            e.to_string().contains("car.toml") && e.to_string().contains("--rate"),
            "{e}"
        );
        Runner::new(RunOptions::at_speed(1.0), 1)
            .preflight(&g)
            .unwrap();
    }

    #[test]
    fn an_emit_error_stops_the_sweep_and_is_returned() {
        let g = grid(4);
        let cases = g.cases(0, g.len());
        let mut calls = 0;
        let r = Runner::new(RunOptions::at_speed(1.0), 2).run(&g, &cases, |_, _| {
            calls += 1;
            if calls == 3 {
                Err(crate::Error::Usage("stop".into()))
            } else {
                Ok(())
            }
        });
        assert!(matches!(r, Err(crate::Error::Usage(m)) if m == "stop"));
        assert_eq!(calls, 3);
    }
}
