//! Native speed of the tracer on one thread, for comparison with the same batches in wasm
//! (`benches/wasm_speed.mjs`) and with older versions; `scripts/bench.sh` runs them in one go
//! and prints the ratios.
//!
//! Besides rays and wall interactions per second it prints what a designer waits for, the
//! *precision per second* 1 / (ci95² × s) of two answers: the share delivered and the share
//! leaked by the leakiest bend (ci95 the 95 % half-width of the merged batches, s the seconds
//! the batches took on this one thread). It is independent of the number of rays for an
//! estimator whose variance falls as 1/n, and grows with any variance reduction or speed-up.
//!
//! Usage: `cargo run --release --example speed -- SCENARIO.json BATCHES` (the scenario's own ray
//! count is replaced by BATCHES whole batches, each traced once).
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use std::time::Instant;

use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, SegmentKind, BATCH_RAYS};

fn main() {
    let mut args = std::env::args().skip(1);
    let path = args.next().expect("scenario path");
    let batches: u64 = args.next().map_or(10, |s| s.parse().expect("batch count"));
    let mut s = Scenario::from_json(&std::fs::read_to_string(path).unwrap()).unwrap();
    s.trace.rays = batches * BATCH_RAYS;
    let p = Prepared::new(&s).unwrap_or_else(|e| panic!("{e}"));
    // Warm up.
    let _ = p.trace_batch(0, 0);
    let start = Instant::now();
    let total = p.trace_all_serial(0);
    let seconds = start.elapsed().as_secs_f64();
    let r = p.report(&total);
    let per_s = |ci95: f64| 1.0 / (ci95 * ci95 * seconds);
    let leakiest = r
        .segments
        .iter()
        .filter(|g| g.kind == SegmentKind::Bend)
        .max_by(|a, b| a.leaked.share.total_cmp(&b.leaked.share));
    let (bend, bend_leak, bend_ci95) = leakiest.map_or((0, 0.0, f64::NAN), |g| {
        (g.index + 1, g.leaked.share, g.leaked.ci95)
    });
    println!(
        "{{\"runner\":\"native, 1 thread\",\"rays_per_s\":{:.0},\"wall_interactions_per_s\":{:.0},\
         \"seconds\":{seconds:.3},\"rays\":{},\"delivered\":{:.6},\"delivered_ci95\":{:.6},\
         \"delivered_precision_per_s\":{:.4e},\"leakiest_bend\":{bend},\"bend_leak\":{bend_leak:.6},\
         \"bend_leak_ci95\":{bend_ci95:.6},\"bend_precision_per_s\":{:.4e}}}",
        total.rays as f64 / seconds,
        total.wall_interactions as f64 / seconds,
        total.rays,
        r.delivered.share,
        r.delivered.ci95,
        per_s(r.delivered.ci95),
        per_s(bend_ci95),
    );
}
