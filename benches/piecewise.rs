//! Cost per output sample of the piecewise-exact solver against the linear
//! exact path, on the same van, the same road and the same number of
//! samples (criterion's throughput is in samples, so time / element is the
//! cost per sample). ISO 8608 class D roads at 0.1 m spacing, 20 m/s,
//! 1 kHz output.
//!
//! Groups (names sort as listed):
//! - `piecewise_cost_1_linear_exact/<length>`: `solve::run` with the exact
//!   solver on the demo van with its nonlinear elements taken out (no
//!   stops; one damping rate per axle, the mean of its bump and rebound
//!   rates). With `--solver exact` given, a tyre that would leave the road
//!   is not modelled (counted only), so the run stays on the one linear
//!   update: the cost floor the piecewise solver is measured against.
//! - `piecewise_cost_2_piecewise_linear_van/<length>`: the piecewise
//!   solver on that same linear van: its only switches are tyre lift-offs
//!   and touch-downs, so the difference to group 1 is the per-sample cost
//!   of watching for switches.
//! - `piecewise_cost_3_piecewise_van_stops/<length>`: the piecewise solver
//!   on the demo van with stops and asymmetric dampers
//!   (`profiles/vehicles/demo_van_stops.toml`), every switch located.
//!
//! All into a sink that only takes each sample. Timed: discretisation
//! (the exact path's one, and the piecewise path's regime cache, which is
//! built during the run), road lookups, updates, element forces and
//! accelerations. Not timed: road generation, vehicle parsing,
//! post-processing. Goal (roughride issue 15): group 3 within 2× group 1
//! per sample.

use std::hint::black_box;
use std::path::Path;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

use roughride::road::{Profile, RoadClass, RoadSpec, generate};
use roughride::solve::{
    self, Excitation, Sample, SampleSink, SolveError, SolverChoice, SolverKind, SolverSettings,
    sample_count,
};
use roughride::vehicle::{Vehicle, parse_vehicle};

const SPEED_M_S: f64 = 20.0;
const RATE_HZ: f64 = 1000.0;
/// A multiple of the 0.02 m per output sample and a divisor of the van's
/// 3.2 m wheelbase (as in tests/piecewise.rs).
const SPACING_M: f64 = 0.1;

const VAN_STOPS: &str = include_str!("../profiles/vehicles/demo_van_stops.toml");

fn van_with_stops() -> Vehicle {
    parse_vehicle(VAN_STOPS, Path::new("demo_van_stops.toml")).expect("demo van with stops")
}

/// The same van with its nonlinear elements taken out: no stops, and one
/// damping rate per axle, the mean of the bump and rebound rates.
fn linear_van() -> Vehicle {
    let mut doc: toml::Table = VAN_STOPS.parse().expect("demo van TOML");
    for axle in ["front", "rear"] {
        let t = doc
            .get_mut(axle)
            .and_then(|v| v.as_table_mut())
            .expect("axle table");
        for key in ["bump_clearance", "rebound_clearance", "stop_rate"] {
            t.remove(key);
        }
        let rate = |t: &toml::Table, k: &str| t[k].as_float().expect("damping rate");
        let mean = 0.5 * (rate(t, "damping_bump") + rate(t, "damping_rebound"));
        t.remove("damping_bump");
        t.remove("damping_rebound");
        t.insert("damping".to_string(), toml::Value::Float(mean));
    }
    doc.insert(
        "name".to_string(),
        toml::Value::String("demo van, linearised (bench)".to_string()),
    );
    let v = parse_vehicle(&doc.to_string(), Path::new("linear_van.toml")).expect("linear van");
    assert!(v.is_linear(), "the linearised van must be linear");
    v
}

fn road(length_m: f64) -> Profile {
    generate(&RoadSpec::from_class(RoadClass::D, length_m, SPACING_M, 1)).expect("class D road")
}

fn excitation<'a>(v: &Vehicle, p: &'a Profile) -> Excitation<'a> {
    Excitation {
        profile: p,
        speed_m_s: SPEED_M_S,
        wheelbase_m: v.wheelbase_m(),
        force: None,
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

fn group(
    c: &mut Criterion,
    name: &str,
    v: &Vehicle,
    choice: SolverChoice,
    want: SolverKind,
    roads: &[(f64, Profile)],
) {
    let mut g = c.benchmark_group(name);
    g.sample_size(20);
    for (length, p) in roads {
        let ex = excitation(v, p);
        let settings = SolverSettings {
            choice,
            output_rate_hz: RATE_HZ,
            ..Default::default()
        };
        let plan = solve::plan(v, &ex, &settings).expect("plan");
        assert_eq!(plan.kind, want);
        g.throughput(Throughput::Elements(
            sample_count(ex.duration_s(), RATE_HZ) as u64
        ));
        g.bench_function(BenchmarkId::from_parameter(format!("{length}m")), |b| {
            b.iter(|| solve::run(v, &ex, &plan, &mut Discard).expect("run"))
        });
    }
    g.finish();
}

fn bench_piecewise(c: &mut Criterion) {
    let stops = van_with_stops();
    let linear = linear_van();
    let roads: Vec<(f64, Profile)> = [1000.0, 4000.0].iter().map(|&l| (l, road(l))).collect();
    group(
        c,
        "piecewise_cost_1_linear_exact",
        &linear,
        SolverChoice::Exact,
        SolverKind::Exact,
        &roads,
    );
    group(
        c,
        "piecewise_cost_2_piecewise_linear_van",
        &linear,
        SolverChoice::Piecewise,
        SolverKind::Piecewise,
        &roads,
    );
    group(
        c,
        "piecewise_cost_3_piecewise_van_stops",
        &stops,
        SolverChoice::Piecewise,
        SolverKind::Piecewise,
        &roads,
    );
}

criterion_group!(benches, bench_piecewise);
criterion_main!(benches);
