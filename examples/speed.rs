//! Native speed of the tracer on one thread, for comparison with the same batches in wasm
//! (`benches/wasm_speed.mjs`); `scripts/bench.sh` runs both in one go and prints the ratio.
//!
//! Usage: `cargo run --release --example speed -- SCENARIO.json BATCHES`
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use std::time::Instant;

use tirtrace::scenario::Scenario;
use tirtrace::trace::Prepared;

fn main() {
    let mut args = std::env::args().skip(1);
    let path = args.next().expect("scenario path");
    let batches: u64 = args.next().map_or(10, |s| s.parse().expect("batch count"));
    let p = Prepared::new(&Scenario::from_json(&std::fs::read_to_string(path).unwrap()).unwrap())
        .unwrap_or_else(|e| panic!("{e}"));
    // Warm up.
    let _ = p.trace_batch(0, 0);
    let start = Instant::now();
    let mut rays = 0u64;
    let mut interactions = 0u64;
    for b in 0..batches {
        let r = p.trace_batch(b % p.batch_count(), 0);
        rays += r.rays;
        interactions += r.wall_interactions;
    }
    let s = start.elapsed().as_secs_f64();
    println!(
        "{{\"runner\":\"native, 1 thread\",\"rays_per_s\":{:.0},\"wall_interactions_per_s\":{:.0},\"seconds\":{s:.3}}}",
        rays as f64 / s,
        interactions as f64 / s
    );
}
