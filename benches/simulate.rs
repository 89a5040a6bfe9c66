//! Time-domain runs of the demo hatchback over ISO 8608 class C roads at
//! 20 m/s, 1 kHz output, per output sample (criterion's throughput is in
//! samples, so the per-sample cost reads directly as time / element).
//!
//! Groups (names sort as listed):
//! - `simulate_1_bare_update/<length>`: only the discrete state update
//!   `x = Φx + G₀w_k + G₁w_{k+1}` of the exact path, with the same fixed-size
//!   code, over the same road inputs precomputed into an array. The
//!   practical floor. Timed: the update loop. Not timed: the road inputs,
//!   the discretisation.
//! - `simulate_2_exact_solver/<length>`: `solve::run` with the exact solver
//!   into a sink that only takes each sample. Timed: discretisation (once),
//!   road lookups, the update, the element forces and accelerations of every
//!   sample. Not timed: post-processing, road generation, vehicle parsing.
//! - `simulate_3_exact_pipeline/<length>`: `pipeline::simulate` with the exact
//!   solver, no history file: the solver plus the streaming evaluators (Wk
//!   vertical and Wd fore-aft meters per seat, axle and body statistics). Not timed: reading the
//!   vehicle and generating the road.
//! - `simulate_4_adaptive_solver/<length>`: `solve::run` with Dormand–Prince
//!   into the same sink (shorter roads: it is far slower). Not timed: as for
//!   the exact solver.
//!
//! Two road lengths per group show whether the cost is linear in length
//! (equal time per sample).

use std::hint::black_box;
use std::path::Path;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

use roughride::pipeline::{RunOptions, simulate};
use roughride::road::{Profile, RoadClass, RoadSpec, generate};
use roughride::solve::{
    self, Excitation, Sample, SampleSink, SolveError, SolverChoice, SolverKind, SolverSettings,
    Step, discretise, sample_count,
};
use roughride::vehicle::{Vehicle, read_vehicle};

const SPEED_M_S: f64 = 20.0;
const RATE_HZ: f64 = 1000.0;
const SPACING_M: f64 = 0.05;

fn vehicle() -> Vehicle {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/profiles/vehicles/demo_hatchback.toml"
    );
    read_vehicle(Path::new(path)).expect("demo vehicle")
}

fn road(length_m: f64) -> Profile {
    generate(&RoadSpec::from_class(RoadClass::C, length_m, SPACING_M, 1)).expect("class C road")
}

fn excitation<'a>(v: &Vehicle, p: &'a Profile) -> Excitation<'a> {
    Excitation {
        profile: p,
        speed_m_s: SPEED_M_S,
        wheelbase_m: v.wheelbase_m(),
        force: None,
    }
}

fn settings(choice: SolverChoice) -> SolverSettings {
    SolverSettings {
        choice,
        output_rate_hz: RATE_HZ,
        ..Default::default()
    }
}

/// Takes every sample and does nothing else with it.
struct Discard;

impl SampleSink for Discard {
    fn start(&mut self, _solver: SolverKind) -> Result<(), SolveError> {
        Ok(())
    }
    #[inline]
    fn accept(&mut self, sample: &Sample) -> Result<(), SolveError> {
        black_box(sample);
        Ok(())
    }
}

fn bench_simulate(c: &mut Criterion) {
    let v = vehicle();
    let lengths = [1000.0, 4000.0];
    let roads: Vec<(f64, Profile)> = lengths.iter().map(|&l| (l, road(l))).collect();

    let mut g = c.benchmark_group("simulate_1_bare_update");
    for (length, p) in &roads {
        let ex = excitation(&v, p);
        let n = sample_count(ex.duration_s(), RATE_HZ);
        let dt = 1.0 / RATE_HZ;
        let w: Vec<[f64; 3]> = (0..n)
            .map(|k| {
                let i = ex.at(k as f64 * dt);
                [i.road.elevation_m[0], i.road.elevation_m[1], i.force_n]
            })
            .collect();
        let step = Step::<8>::new(&discretise(&v, 0.0, dt)).expect("half car has 8 states");
        g.throughput(Throughput::Elements(n as u64));
        g.bench_with_input(
            BenchmarkId::from_parameter(format!("{length}m")),
            &w,
            |b, w| {
                b.iter(|| {
                    let mut x = [0.0; 8];
                    for pair in w.windows(2) {
                        x = step.advance(&x, &pair[0], &pair[1]);
                    }
                    black_box(x)
                })
            },
        );
    }
    g.finish();

    let mut g = c.benchmark_group("simulate_2_exact_solver");
    for (length, p) in &roads {
        let ex = excitation(&v, p);
        let plan = solve::plan(&v, &ex, &settings(SolverChoice::Exact)).expect("plan");
        g.throughput(Throughput::Elements(
            sample_count(ex.duration_s(), RATE_HZ) as u64
        ));
        g.bench_function(BenchmarkId::from_parameter(format!("{length}m")), |b| {
            b.iter(|| solve::run(&v, &ex, &plan, &mut Discard).expect("run"))
        });
    }
    g.finish();

    let mut g = c.benchmark_group("simulate_3_exact_pipeline");
    g.sample_size(20);
    for (length, p) in &roads {
        let ex = excitation(&v, p);
        let mut options = RunOptions::at_speed(SPEED_M_S);
        options.solver = settings(SolverChoice::Exact);
        g.throughput(Throughput::Elements(
            sample_count(ex.duration_s(), RATE_HZ) as u64
        ));
        g.bench_function(BenchmarkId::from_parameter(format!("{length}m")), |b| {
            b.iter(|| simulate(&v, p, &options, None).expect("simulate"))
        });
    }
    g.finish();

    let mut g = c.benchmark_group("simulate_4_adaptive_solver");
    g.sample_size(10);
    for length in [100.0, 400.0] {
        let p = road(length);
        let ex = excitation(&v, &p);
        let plan = solve::plan(&v, &ex, &settings(SolverChoice::Adaptive)).expect("plan");
        g.throughput(Throughput::Elements(
            sample_count(ex.duration_s(), RATE_HZ) as u64
        ));
        g.bench_function(BenchmarkId::from_parameter(format!("{length}m")), |b| {
            b.iter(|| solve::run(&v, &ex, &plan, &mut Discard).expect("run"))
        });
    }
    g.finish();
}

criterion_group!(benches, bench_simulate);
criterion_main!(benches);
