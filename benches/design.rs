//! Design studies: a `--vary` grid and two-parameter tunes.
//!
//! - `vary_grid/400`: 400 variants of the demo hatchback (20 rear dampings ×
//!   20 rear spring rates, built by editing the vehicle file) on one class-B
//!   road of 500 m at 20 m/s (smooth enough that every case stays on the
//!   exact solver; on rougher roads soft variants lift a tyre and repeat on
//!   the adaptive solver, several times the cost), the whole sweep written
//!   as CSV into memory; throughput in cases, so the report reads as cases
//!   per second.
//! - `tune/spectral`: rear and front damping of the demo hatchback, mean
//!   driver aw on class C at 15 and 25 m/s, judged by the frequency-domain
//!   prediction, with the time-domain confirmation of start and optimum on
//!   500 m roads: the time to converge (the goal: under 2 s on a
//!   2-core machine); throughput in evaluations.
//! - `tune/time_domain`: the same parameters judged by time-domain runs
//!   (class C, one seed, 20 m/s, 200 m road): time to converge and
//!   evaluations per second.
//!
//! Threads: all cores, as the commands use by default.

use std::hint::black_box;
use std::path::Path;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};

use roughride::batch::{
    Format, Grid, OutputSpec, RoadGeometry, RoadSource, Runner, Shard, SweepVehicle, write_sweep,
};
use roughride::design::tune::problem::{
    Measure, Objective, Over, Study, StudyRoad, parse_parameter,
};
use roughride::design::tune::search::SearchSettings;
use roughride::design::tune::{Method, Problem, tune};
use roughride::design::vary::{Variation, VehicleDocument, expand};
use roughride::pipeline::RunOptions;
use roughride::road::RoadClass;

fn doc() -> VehicleDocument {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/vehicles/demo_hatchback.toml");
    VehicleDocument::read(&path).expect("demo vehicle")
}

fn jobs() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

fn bench_grid(c: &mut Criterion) {
    let doc = doc();
    let variations = [
        Variation::parse("rear.damping=1000:2900:100").unwrap(),
        Variation::parse("rear.spring_rate=25000:44000:1000").unwrap(),
    ];
    let mut g = c.benchmark_group("vary_grid");
    g.sample_size(10);
    g.measurement_time(std::time::Duration::from_secs(20));
    g.throughput(Throughput::Elements(400));
    g.bench_function("400", |b| {
        b.iter(|| {
            // Building the variants is part of the job (it is what --vary does).
            let vehicles = expand(&doc, &variations)
                .unwrap()
                .into_iter()
                .map(|v| SweepVehicle {
                    file: "demo_hatchback.toml".into(),
                    vehicle: v.vehicle,
                    varied: v.values,
                })
                .collect();
            let grid = Grid {
                vehicles,
                varied_keys: vec!["rear.damping".into(), "rear.spring_rate".into()],
                roads: vec![RoadSource::Class(RoadClass::B)],
                speeds_m_s: vec![20.0],
                seeds: 1,
                geometry: RoadGeometry {
                    length_m: 500.0,
                    spacing_m: 0.05,
                },
            };
            assert_eq!(grid.len(), 400);
            let mut out = Vec::with_capacity(1 << 18);
            let spec = OutputSpec {
                format: Format::Csv,
                header: true,
                target: Path::new("<memory>"),
            };
            let runner = Runner::new(RunOptions::at_speed(1.0), jobs());
            let r = write_sweep(&grid, Shard::ALL, &runner, spec, &mut out, |_, _| {}).unwrap();
            assert!(r.failures.is_empty());
            black_box(out)
        })
    });
    g.finish();
}

fn problem<'a>(doc: &'a VehicleDocument, method: Method, study: Study) -> Problem<'a> {
    Problem {
        doc,
        parameters: ["rear.damping=300:6000", "front.damping=300:6000"]
            .iter()
            .map(|v| parse_parameter(doc, v).unwrap())
            .collect(),
        study,
        objective: Objective::new(doc, None, Measure::Aw, Over::Mean).unwrap(),
        limits: Vec::new(),
        options: RunOptions::at_speed(1.0),
        method,
        search: SearchSettings::default(),
        jobs: jobs(),
        confirm: true,
    }
}

fn bench_tune(c: &mut Criterion) {
    let doc = doc();
    let study = |speeds: Vec<f64>, length_m: f64| Study {
        roads: vec![StudyRoad::Class(RoadClass::C)],
        seeds: 1,
        length_m,
        spacing_m: 0.05,
        speeds: speeds.into_iter().map(|s| (s, 1.0)).collect(),
        spectral_band_cycle_m: None,
    };
    let mut g = c.benchmark_group("tune");
    g.sample_size(10);
    for (name, method, s) in [
        ("spectral", Method::Spectral, study(vec![15.0, 25.0], 500.0)),
        ("time_domain", Method::TimeDomain, study(vec![20.0], 200.0)),
    ] {
        let p = problem(&doc, method, s);
        let evaluations = tune(&p, |_, _| {}).unwrap().evaluations;
        eprintln!("tune/{name}: {evaluations} evaluations to converge");
        g.throughput(Throughput::Elements(evaluations as u64));
        g.bench_function(name, |b| b.iter(|| black_box(tune(&p, |_, _| {}).unwrap())));
    }
    g.finish();
}

criterion_group!(benches, bench_grid, bench_tune);
criterion_main!(benches);
