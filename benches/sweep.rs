//! Sweeps (`batch::write_sweep`): the demo hatchback over ISO 8608 roads at
//! the default 1 kHz output rate, written as CSV into memory.
//!
//! Two groups, each with criterion's throughput in cases so that the report
//! reads as cases per second:
//! - `sweep_cases/NNNN`: 4, 8 and 16 cases of a 200 m road (classes A and B,
//!   10 and 25 m/s, 1, 2 or 4 seeds). Smooth roads keep every case on the
//!   exact solver, so all cases of a speed cost the same; on rougher roads a
//!   tyre may leave the road and the run is repeated with the adaptive
//!   solver, which costs several times more. Equal time per case means wall time
//!   linear in the number of cases.
//! - `sweep_length/NNNNNm`: 4 cases on roads of 100, 200 and 400 m. Time per
//!   case should double with the length (samples per run grow with length
//!   at a fixed speed and rate).
//!
//! Timed: the whole sweep (validation, preflight, road synthesis through the
//! cache, the runs, the evaluators, row formatting). Not timed: reading the
//! vehicle file. Threads: the runner's default for the machine
//! (`available_parallelism`), as `roughride sweep` without `--jobs`.

use std::hint::black_box;
use std::path::Path;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

use roughride::batch::{
    Format, Grid, OutputSpec, RoadGeometry, RoadSource, Runner, Shard, SweepVehicle, write_sweep,
};
use roughride::pipeline::RunOptions;
use roughride::road::RoadClass;
use roughride::vehicle::read_vehicle;

fn grid(length_m: f64, speeds: Vec<f64>, seeds: u64) -> Grid {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("profiles/vehicles/demo_hatchback.toml");
    let vehicle = read_vehicle(&path).expect("demo vehicle");
    Grid {
        vehicles: vec![SweepVehicle::new("demo_hatchback.toml", vehicle)],
        varied_keys: Vec::new(),
        roads: vec![
            RoadSource::Class(RoadClass::A),
            RoadSource::Class(RoadClass::B),
        ],
        speeds_m_s: speeds,
        seeds,
        geometry: RoadGeometry {
            length_m,
            spacing_m: 0.05,
        },
    }
}

fn sweep(grid: &Grid, runner: &Runner) -> Vec<u8> {
    let mut out = Vec::with_capacity(1 << 16);
    let spec = OutputSpec {
        format: Format::Csv,
        header: true,
        target: Path::new("<memory>"),
    };
    let report = write_sweep(grid, Shard::ALL, runner, spec, &mut out, |_, _| {}).expect("sweep");
    assert!(report.failures.is_empty());
    out
}

fn runner() -> Runner {
    let jobs = std::thread::available_parallelism().map_or(1, |n| n.get());
    Runner::new(RunOptions::at_speed(1.0), jobs)
}

fn bench_cases(c: &mut Criterion) {
    let mut g = c.benchmark_group("sweep_cases");
    g.sample_size(10);
    let runner = runner();
    for (speeds, seeds) in [
        (vec![10.0, 25.0], 1),
        (vec![10.0, 25.0], 2),
        (vec![10.0, 25.0], 4),
    ] {
        let grid = grid(200.0, speeds, seeds);
        g.throughput(Throughput::Elements(grid.len() as u64));
        g.bench_with_input(
            BenchmarkId::from_parameter(format!("{:04}", grid.len())),
            &grid,
            |b, grid| b.iter(|| black_box(sweep(grid, &runner))),
        );
    }
    g.finish();
}

fn bench_length(c: &mut Criterion) {
    let mut g = c.benchmark_group("sweep_length");
    g.sample_size(10);
    let runner = runner();
    for length_m in [100.0, 200.0, 400.0] {
        let grid = grid(length_m, vec![10.0, 25.0], 1);
        g.throughput(Throughput::Elements(grid.len() as u64));
        g.bench_with_input(
            BenchmarkId::from_parameter(format!("{:05}m", length_m as u32)),
            &grid,
            |b, grid| b.iter(|| black_box(sweep(grid, &runner))),
        );
    }
    g.finish();
}

criterion_group!(benches, bench_cases, bench_length);
criterion_main!(benches);
