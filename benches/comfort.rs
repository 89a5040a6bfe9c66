//! ISO 2631-1 evaluation of one acceleration channel at 1 kHz, per sample
//! (criterion's throughput is in samples).
//!
//! Groups (names sort as listed):
//! - `comfort_1_filter_wk/<duration>`: the Wk weighting filter alone
//!   (`WeightingFilter::process`). Timed: the filter. Not timed: its design,
//!   the input record.
//! - `comfort_2_meter_wk/<duration>`: a whole `Meter` (filter, sums, peak,
//!   1 s running r.m.s. for MTVV, VDV) and its `finish`. Timed: the meter's
//!   construction (filter design included), every push, `finish`. Not
//!   timed: building the input record.
//! - `comfort_3_meter_unweighted/<duration>`: the same meter without a
//!   filter, to show what the filter costs.
//!
//! The input is a fixed sum of sines (1.2, 5.5, 11 and 37 Hz), built before
//! timing. Two durations show whether the cost is linear in length.

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};

use roughride::comfort::{Meter, Weighting, WeightingFilter};

const RATE_HZ: f64 = 1000.0;

fn record(duration_s: f64) -> Vec<f64> {
    let n = (duration_s * RATE_HZ) as usize;
    (0..n)
        .map(|i| {
            let t = i as f64 / RATE_HZ;
            [(1.2, 0.8), (5.5, 0.5), (11.0, 0.3), (37.0, 0.2)]
                .iter()
                .map(|(f, a)| a * (2.0 * std::f64::consts::PI * f * t).sin())
                .sum()
        })
        .collect()
}

fn bench_comfort(c: &mut Criterion) {
    let records: Vec<(f64, Vec<f64>)> = [60.0, 600.0].iter().map(|&d| (d, record(d))).collect();

    let mut g = c.benchmark_group("comfort_1_filter_wk");
    for (d, x) in &records {
        g.throughput(Throughput::Elements(x.len() as u64));
        let proto = WeightingFilter::new(Weighting::Wk, RATE_HZ).expect("filter");
        g.bench_with_input(BenchmarkId::from_parameter(format!("{d}s")), x, |b, x| {
            b.iter(|| {
                let mut f = proto.clone();
                let mut acc = 0.0;
                for &v in x {
                    acc += f.process(v);
                }
                black_box(acc)
            })
        });
    }
    g.finish();

    for (name, w) in [
        ("comfort_2_meter_wk", Weighting::Wk),
        ("comfort_3_meter_unweighted", Weighting::Unweighted),
    ] {
        let mut g = c.benchmark_group(name);
        for (d, x) in &records {
            g.throughput(Throughput::Elements(x.len() as u64));
            g.bench_with_input(BenchmarkId::from_parameter(format!("{d}s")), x, |b, x| {
                b.iter(|| {
                    let mut m = Meter::new(w, RATE_HZ).expect("meter");
                    for &v in x {
                        m.push(v);
                    }
                    black_box(m.finish())
                })
            });
        }
        g.finish();
    }
}

criterion_group!(benches, bench_comfort);
criterion_main!(benches);
