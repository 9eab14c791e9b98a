//! `Prepared::trace_batch_events_redrawn`, which `examples/variance_parts.rs` uses to split a
//! result's variance into the source points' part and the random events' part: draw 0 is the
//! ordinary trace bit for bit; any other draw keeps every ray's start and direction and draws
//! the events afresh.
//!
//! The share missing the entry face and the share the flat entry face reflects (split by
//! expected value: no number is drawn there unless a part is below 1/64, which no ray of these
//! batches meets) depend on where the rays start and head only, so they must come out the same
//! to the last bit in every draw, while the share delivered, which the Fresnel draws along the
//! way decide too, must not. Were the source points redrawn as well — even only their lowest
//! bits, from the ray's generator — the reflected share would change in its last bits; were the
//! events not, delivered would not.
//!
//! Each run is an exact function of its seed, so the outcome is fixed.
#![cfg(not(target_arch = "wasm32"))]

use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, BATCH_RAYS};

#[test]
fn a_redraw_keeps_the_source_points_and_draws_the_events_afresh() {
    let text = include_str!("../examples/scenarios/bench_three_bends.json");
    let mut s = Scenario::from_json(text).unwrap();
    s.trace.rays = 2 * BATCH_RAYS;
    s.trace.seed = 5;
    let p = Prepared::new(&s).unwrap();
    for batch in 0..2 {
        assert!(
            p.trace_batch_events_redrawn(batch, 0) == p.trace_batch(batch, 0),
            "batch {batch}: draw 0 is the ordinary trace, every tally and histogram"
        );
        let reports: Vec<_> = (0..3)
            .map(|draw| p.report(&p.trace_batch_events_redrawn(batch, draw)))
            .collect();
        let missed = reports[0].budget.missed_entry.share;
        let reflected = reports[0].budget.reflected_entry.share;
        assert!(
            missed > 0.0,
            "the route's LED must miss its entry face in part"
        );
        for (draw, r) in reports.iter().enumerate().skip(1) {
            assert_eq!(
                r.budget.missed_entry.share.to_bits(),
                missed.to_bits(),
                "batch {batch}, draw {draw}: the same source points miss the entry alike"
            );
            assert_eq!(
                r.budget.reflected_entry.share.to_bits(),
                reflected.to_bits(),
                "batch {batch}, draw {draw}: the same source points are reflected at the entry alike"
            );
            for (other, q) in reports.iter().enumerate().take(draw) {
                assert_ne!(
                    r.budget.delivered.share, q.budget.delivered.share,
                    "batch {batch}: draws {other} and {draw} must differ in their events"
                );
            }
        }
    }
}
