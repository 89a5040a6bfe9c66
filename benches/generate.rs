//! ISO 8608 road synthesis (`road::generate`): class C, 0.05 m spacing, two
//! lengths (criterion's throughput is in road samples, so equal time per
//! element means cost linear in length, apart from the FFT's log factor).
//!
//! Timed: the whole `generate` call (validation, spectrum with its random
//! phases, inverse FFT, the profile vector). Not timed: nothing else is done.
//! Writing the CSV is not part of this benchmark.

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

use roughride::road::{RoadClass, RoadSpec, generate};

const SPACING_M: f64 = 0.05;

fn bench_generate(c: &mut Criterion) {
    let mut g = c.benchmark_group("generate_class_c");
    g.sample_size(20);
    for length_m in [5000.0, 20000.0] {
        let spec = RoadSpec::from_class(RoadClass::C, length_m, SPACING_M, 1);
        g.throughput(Throughput::Elements(spec.intervals() as u64 + 1));
        g.bench_with_input(
            BenchmarkId::from_parameter(format!("{length_m}m")),
            &spec,
            |b, spec| b.iter(|| black_box(generate(spec).expect("generate"))),
        );
    }
    g.finish();
}

criterion_group!(benches, bench_generate);
criterion_main!(benches);
