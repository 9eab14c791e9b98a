//! The studies' core: a sweep's light batches report exactly what a plain trace of each point
//! reports; tolerance studies in pieces merge to the single run bit for bit; paired differences
//! of each segment's leak and of the receiver's share.
//! Native only: the parallel runs use threads.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::study::{Study, SweepReport};
use tirtrace::trace::{Prepared, TraceReport, BATCH_RAYS};

fn example(name: &str) -> Value {
    let text = match name {
        "bike" => include_str!("../examples/scenarios/bike_light_charge_indicator.json"),
        _ => include_str!("../examples/scenarios/thermostat_status_led.json"),
    };
    serde_json::from_str(text).unwrap()
}

fn study(doc: Value, rays: u64, seed: u64) -> Study {
    let mut s = Study::from_json(&doc.to_string()).unwrap();
    s.scenario.trace.rays = rays;
    s.scenario.trace.seed = seed;
    s
}

/// One plain trace of `scenario` (every batch with its histograms, merged in order).
fn plain(scenario: &Value, rays: u64, seed: u64) -> TraceReport {
    let mut s = tirtrace::problems::read_scenario(&scenario.to_string()).unwrap();
    s.trace.rays = rays;
    s.trace.seed = seed;
    let p = Prepared::new(&s).unwrap();
    let mut total = p.trace_batch(0, 0);
    for b in 1..rays.div_ceil(BATCH_RAYS) {
        total.merge(&p.trace_batch(b, 0));
    }
    p.report(&total)
}

#[test]
fn a_sweep_point_reports_exactly_the_plain_trace_of_its_design() {
    // The thermostat (a receiver, several segments) at three radii of its first bend, 2½
    // batches: every figure a point reports is the plain trace's, bit for bit, although the
    // sweep keeps no histograms.
    let sc = example("thermostat");
    let radii = [4.5, 7.0, 12.0];
    let rays = 2 * BATCH_RAYS + 1000;
    let s = study(
        json!({ "version": 1, "scenario": sc,
            "vary": { "field": "route[1].bend.radius_mm", "values": radii } }),
        rays,
        11,
    );
    let sweep = s.prepare_sweep().unwrap();
    let report: SweepReport = sweep.report(&sweep.trace_all_parallel(2, |_| {}).unwrap());
    for (point, r) in report.points.iter().zip(radii) {
        let mut one = sc.clone();
        one["route"][1]["bend"]["radius_mm"] = json!(r);
        let whole = plain(&one, rays, 11);
        let got = point.result.as_ref().unwrap();
        assert_eq!(got.delivered, whole.delivered, "{r}");
        assert_eq!(got.budget, whole.budget, "{r}");
        let leaked: Vec<_> = whole.segments.iter().map(|s| s.leaked).collect();
        assert_eq!(got.segments_leaked, leaked, "{r}");
        assert!(whole.receiver.is_some());
        assert_eq!(got.receiver, whole.receiver, "{r}");
    }
    // A batch of every point is light: its JSON is far smaller than one plain batch's.
    let light = serde_json::to_string(&sweep.trace_batch(0)).unwrap().len();
    let mut one = tirtrace::problems::read_scenario(&sc.to_string()).unwrap();
    one.trace.rays = rays;
    let full = serde_json::to_string(&Prepared::new(&one).unwrap().trace_batch(0, 0))
        .unwrap()
        .len();
    assert!(
        light * 10 < full,
        "three points' batch {light} B, one plain batch {full} B"
    );
}
