//! Tracer speed on the benchmark route (3 mm PMMA, three bends, Lambertian LED):
//! one batch on one thread, and all batches on all threads. Criterion reports time per
//! iteration and rays per second; wall interactions per ray are printed once so that
//! interactions per second follow.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, BATCH_RAYS};

fn prepared() -> Prepared {
    let text = include_str!("../examples/scenarios/bench_three_bends.json");
    Prepared::new(&Scenario::from_json(text).unwrap()).unwrap()
}

fn bench(c: &mut Criterion) {
    let p = prepared();
    let one = p.trace_batch(0, 0);
    println!(
        "bench route: {:.2} wall interactions per ray, delivered {:.4}",
        one.wall_interactions as f64 / one.rays as f64,
        p.report(&one).delivered.share
    );
    let mut g = c.benchmark_group("trace");
    g.sample_size(20);
    g.throughput(Throughput::Elements(BATCH_RAYS));
    g.bench_function("one batch, one thread", |b| b.iter(|| p.trace_batch(3, 0)));
    let all = p.batch_count() * BATCH_RAYS;
    g.throughput(Throughput::Elements(all));
    g.bench_function("all batches, all threads", |b| {
        b.iter(|| p.trace_all_parallel(0, 0).unwrap())
    });
    g.bench_function("all batches, one thread", |b| {
        b.iter(|| p.trace_all_serial(0))
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
