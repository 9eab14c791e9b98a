//! Invariants of the tracer on many random valid scenarios: the energy budget sums to 1, every
//! share is a share, the same seed gives the same result, the thread count does not matter, and
//! a different seed gives a different sample.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

mod common;
use common::{random_route, RandomRoute, Rng, RouteDraws};

use std::collections::BTreeSet;

use serde_json::{json, Value};
use tirtrace::faces::{rim_radius_mm, Face};
use tirtrace::geometry::PlacedRoute;
use tirtrace::scenario::{Emitter, EmitterArea, Scenario, Segment};
use tirtrace::source::SourceSampler;
use tirtrace::trace::{Budget, PrefixMerger, Prepared};

/// The routes of [`random_scenario`]: 1–5 segments of every kind, bends of 5° to 180° from 1.05
/// to 12 half-sizes across, and reflecting corners.
const ROUTES: RouteDraws = RouteDraws {
    size_mm: (0.5, 5.0),
    max_segments: 5,
    straight_below: 0.4,
    bend_below: 0.75,
    corner_below: 0.87,
    straight_mm: |rng| rng.range(0.5, 30.0),
    round_turn_deg: (0.0, 360.0),
    rect_turns: (4, 0.0),
    bend: |rng, across| (across * rng.range(1.05, 12.0), rng.range(5.0, 180.0)),
    taper_factor: (0.6, 1.5),
    taper_mm: (1.0, 20.0),
};

/// A random valid scenario: round or rectangular, 1–5 segments of every kind ([`ROUTES`]), any
/// library material that has data at the wavelength, contacts, every source kind, coatings of
/// every kind (drawn last, so the draws before them are those of the cases without).
fn random_scenario(rng: &mut Rng, rays: u64) -> Scenario {
    let RandomRoute {
        section,
        route,
        lengths_mm,
    } = random_route(rng, &ROUTES);
    let n_seg = route.len();
    let material = *rng.pick(&[
        "pmma",
        "polycarbonate",
        "polystyrene",
        "fused_silica",
        "pdms",
    ]);
    let around = if rng.next() < 0.7 {
        json!({"library": "air"})
    } else {
        json!({"library": "water"})
    };
    let mut contacts = Vec::new();
    if rng.next() < 0.5 {
        let seg = (rng.next() * n_seg as f64) as usize;
        let len = lengths_mm[seg];
        let a = rng.range(0.0, 0.5) * len;
        let from_deg = rng.range(0.0, 300.0);
        contacts.push(json!({"name": "clip", "segment": seg, "from_mm": a, "to_mm": a + rng.range(0.1, 0.5) * len,
            "sector_from_deg": from_deg, "sector_to_deg": from_deg + rng.range(10.0, 60.0),
            "medium": {"custom": {"model": "constant", "n": rng.range(1.3, 1.6)}}}));
    }
    let emitter = match (rng.next() * 4.0) as usize {
        0 => {
            json!({"led": {"area": {"disk": {"diameter_mm": rng.range(0.1, 3.0)}}, "pattern": "lambertian"}})
        }
        1 => json!({"led": {"area": {"square": {"side_mm": rng.range(0.1, 3.0)}},
                    "pattern": {"half_intensity": {"half_angle_deg": rng.range(5.0, 80.0)}}}}),
        2 => json!({"led": {"area": {"disk": {"diameter_mm": rng.range(0.1, 3.0)}},
                    "pattern": {"table": {"points": [[0, 1], [30, 0.9], [60, 0.4], [85, 0.0]]}}}}),
        _ => {
            json!({"beam": {"diameter_mm": rng.range(0.1, 3.0), "divergence_half_angle_deg": rng.range(0.0, 40.0)}})
        }
    };
    let mut v: Value = json!({
        "version": 1,
        "guide": {"section": section, "material": {"library": material}, "surroundings": around,
                  "attenuation_db_per_m": if rng.next() < 0.5 { 0.0 } else { rng.range(0.1, 500.0) },
                  "contacts": contacts},
        "route": route,
        "source": {"emitter": emitter, "wavelength_nm": rng.range(450.0, 650.0),
                   "gap_mm": rng.range(0.0, 2.0),
                   "offset_mm": [rng.range(-1.0, 1.0), rng.range(-1.0, 1.0)],
                   "tilt_deg": rng.range(0.0, 30.0), "tilt_toward_deg": rng.range(0.0, 360.0),
                   "flux": {"lm": 1.0}},
        "receiver": if rng.chance(0.5) {
            json!({"diameter_mm": rng.range(1.0, 10.0), "distance_mm": rng.range(0.0, 10.0)})
        } else {
            json!({"width_mm": rng.range(1.0, 10.0), "height_mm": rng.range(1.0, 10.0),
                   "distance_mm": rng.range(0.0, 10.0)})
        },
        "trace": {"rays": rays, "seed": (rng.next() * 1e9) as u64, "max_interactions": 2000}
    });
    if rng.chance(0.6) {
        let coatings: Vec<Value> = (0..1 + rng.below(3))
            .map(|k| {
                let seg = rng.below(n_seg);
                let len = lengths_mm[seg];
                let a = rng.range(0.0, 0.6) * len;
                let from_deg = rng.range(0.0, 300.0);
                let kind = match rng.below(5) {
                    0 => json!({"white_paint": {"reflectance": rng.range(0.5, 1.0)}}),
                    1 => json!({"white_paint": {"reflectance": 1.0}}),
                    2 => json!({"metal": {"reflectance": rng.range(0.5, 1.0)}}),
                    3 => json!({"metal": {"reflectance": 1.0}}),
                    _ => json!("black"),
                };
                json!({"name": format!("coat {k}"), "kind": kind, "segment": seg,
                       "from_mm": a, "to_mm": a + rng.range(0.1, 0.4) * len,
                       "sector_from_deg": from_deg,
                       "sector_to_deg": (from_deg + rng.range(10.0, 200.0)).min(360.0)})
            })
            .collect();
        v["guide"]["coatings"] = json!(coatings);
    }
    let mut s = Scenario::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{e}\n{v}"));
    with_random_faces(rng, &mut s);
    s
}

/// Shaped end faces on about two scenarios in three: a dome, a cut or flat at the entry; a
/// dome, a cut, a textured face or flat at the exit; the source's gap and the receiver moved
/// clear of what stands out.
fn with_random_faces(rng: &mut Rng, s: &mut Scenario) {
    if rng.chance(0.35) {
        return;
    }
    let exit_section = PlacedRoute::new(s.guide.section, &s.route).exit_section;
    let face = |rng: &mut Rng, section, textured: bool| match (rng.next() * 4.0) as usize {
        0 => Face::Dome {
            radius_mm: rim_radius_mm(section) * rng.range(1.02, 5.0),
        },
        1 => Face::Cut {
            angle_deg: rng.range(1.0, 60.0),
        },
        2 if textured => Face::Textured {
            roughness: rng.range(0.01, 1.0),
        },
        _ => Face::Flat,
    };
    s.guide.entry_face = face(rng, s.guide.section, false);
    // A pocket over the LED when the route starts straight: a mouth within the section, no
    // deeper than its radius nor the first straight (a² = d (2R − d)).
    if let (Segment::Straight { length_mm }, true) = (s.route[0], rng.chance(0.5)) {
        let (hw, hh) = s.guide.section.half_sizes_mm();
        let a = hw.min(hh) * rng.range(0.2, 0.95);
        let d = (a * rng.range(0.2, 1.0)).min(0.9 * length_mm);
        s.guide.entry_face = Face::Pocket {
            radius_mm: (a * a + d * d) / (2.0 * d),
            depth_mm: d,
        };
        // Half the time a small LED sits inside it, when it fits there.
        if rng.chance(0.5) {
            let was = s.source.clone();
            s.source.gap_mm = -d * rng.range(0.05, 0.9);
            s.source.offset_mm = [rng.range(-0.2, 0.2) * a, rng.range(-0.2, 0.2) * a];
            if let Emitter::Led { area, .. } = &mut s.source.emitter {
                *area = EmitterArea::Square {
                    side_mm: a * rng.range(0.05, 0.8),
                };
            }
            if !s.problems().is_empty() {
                s.source = was;
            }
        }
        // Else a tilted LED may not rise past the entry plane beside the pocket.
        let top_mm = SourceSampler::new(&s.source).top_z_mm();
        if s.source.gap_mm >= 0.0 && top_mm > 0.0 {
            s.source.gap_mm += top_mm + 0.01;
        }
    }
    s.guide.exit_face = face(rng, exit_section, true);
    let entry_h = s.guide.entry_face.height_mm(s.guide.section);
    if entry_h > 0.0 {
        s.source.gap_mm = s.source.gap_mm.max(entry_h + rng.range(0.01, 1.0));
    }
    let exit_h = s.guide.exit_face.height_mm(exit_section);
    if let Some(r) = s.receiver.as_mut() {
        r.distance_mm = r.distance_mm.max(exit_h + rng.range(0.01, 1.0));
    }
}

#[test]
fn budget_sums_to_one_and_shares_are_shares() {
    let mut rng = Rng(2024);
    let (mut with_coatings, mut led_in_pocket) = (0, 0);
    let mut with_receiver_light = 0;
    for case in 0..60 {
        let s = random_scenario(&mut rng, 3000);
        let problems = s.problems();
        assert!(problems.is_empty(), "case {case}: {problems:?}");
        let p = Prepared::new(&s).unwrap();
        let batch = p.trace_all_serial(0);
        let r = p.report(&batch);
        assert!(
            (r.budget_sum - 1.0).abs() < 1e-12,
            "case {case}: budget sums to {}",
            r.budget_sum
        );
        // The receiver's map holds what lands on the receiver (flat and shaped exit faces
        // alike), and only a receiver has one.
        let on_map: f64 = batch.receiver_map.sum.iter().sum();
        let tallied = batch.receiver.mean * batch.rays as f64;
        assert!(
            (on_map - tallied).abs() <= 1e-9 * tallied.max(1.0),
            "case {case}: map {on_map}, receiver {tallied}"
        );
        assert_eq!(
            batch.receiver_map.sum.is_empty(),
            s.receiver.is_none(),
            "case {case}"
        );
        assert_eq!(
            r.exit_figures.receiver_uniformity.is_some(),
            s.receiver.is_some(),
            "case {case}"
        );
        with_receiver_light += usize::from(on_map > 0.0);
        let b = &r.budget;
        for (name, x) in [
            ("delivered", b.delivered),
            ("missed", b.missed_entry),
            ("reflected", b.reflected_entry),
            ("leaked", b.leaked),
            ("contact", b.contact),
            ("coating", b.coating),
            ("absorbed", b.absorbed),
            ("returned", b.returned),
            ("stopped", b.stopped),
        ] {
            assert!((0.0..=1.0).contains(&x.share), "case {case}: {name} {x:?}");
            assert!(
                x.ci95.is_finite() && x.ci95 >= 0.0,
                "case {case}: {name} {x:?}"
            );
        }
        let sum = b.delivered.share
            + b.missed_entry.share
            + b.reflected_entry.share
            + b.leaked.share
            + b.contact.share
            + b.coating.share
            + b.absorbed.share
            + b.returned.share
            + b.stopped.share;
        assert!(
            (sum - 1.0).abs() < 1e-12,
            "case {case}: mechanisms sum to {sum}"
        );
        assert!(r.receiver.unwrap().share <= b.delivered.share + 1e-15);
        // Only the bulk and a corner's coating absorb (the coating's loss is counted as absorbed).
        let coated = s.route.iter().any(|seg| {
            matches!(
                seg,
                Segment::Corner {
                    coating: Some(_),
                    ..
                }
            )
        });
        if s.guide.attenuation_db_per_m == 0.0 && !coated {
            assert_eq!(b.absorbed.share, 0.0);
        }
        turn_back_is_a_breakdown_of_the_budget(&r, case);
        coatings_are_a_breakdown_of_their_share(&r, case);
        with_coatings += usize::from(!s.guide.coatings.is_empty());
        led_in_pocket += usize::from(s.source.gap_mm < 0.0);
    }
    assert!(with_coatings >= 10, "{with_coatings} cases with coatings");
    assert!(
        led_in_pocket >= 2,
        "{led_in_pocket} cases with the LED in a pocket"
    );
    assert!(
        with_receiver_light >= 10,
        "{with_receiver_light} cases with light on a receiver"
    );
}

/// Each coating absorbs no more than reaches it, and the coatings' share of the budget is the
/// sum of what each absorbs (to rounding); a black coating absorbs exactly what reaches it.
/// Where along the route coatings absorb sums to the same share, and is reported only when
/// there are coatings.
fn coatings_are_a_breakdown_of_their_share(r: &tirtrace::trace::TraceReport, case: usize) {
    match &r.coating_along_route {
        Some(profile) => {
            assert!(!r.coatings.is_empty(), "case {case}");
            assert_eq!(profile.share.len(), r.leak_along_route.share.len());
            assert_eq!(profile.bin_mm, r.leak_along_route.bin_mm);
            let along: f64 = profile.share.iter().sum();
            assert!(
                (along - r.budget.coating.share).abs() < 1e-12,
                "case {case}: along the route {along}, budget {:?}",
                r.budget.coating
            );
        }
        None => assert!(r.coatings.is_empty(), "case {case}"),
    }
    let mut sum = 0.0;
    for c in &r.coatings {
        assert!(
            c.lost.share <= c.reached.share + 1e-15 && c.reached.share <= 1.0,
            "case {case}: {c:?}"
        );
        if c.kind == "black" {
            assert_eq!(c.lost, c.reached, "case {case}: {c:?}");
        }
        sum += c.lost.share;
    }
    assert!(
        (sum - r.budget.coating.share).abs() < 1e-12,
        "case {case}: coatings {sum}, budget {:?}",
        r.budget.coating
    );
}

/// The budget's shares in their fixed order ([`Budget::shares`], the one list the trace and sweep
/// CSV files and the page's budget table read) are the whole budget: one per field of the
/// budget as the report writes it, under that field's name and with its value, keys and words
/// unique, in the order of [`Budget::MECHANISMS`], summing to 1. A share added to the budget but
/// missing from the list, or listed under another share's key, fails here; every share is
/// non-zero in some case (the cap on wall hits is lowered in some, so that rays are stopped), so
/// a mix-up of two shares cannot hide behind equal zeros.
#[test]
fn budget_shares_in_order_are_the_whole_budget() {
    let mut rng = Rng(1187);
    let mut seen = BTreeSet::new();
    for case in 0..16 {
        let mut s = random_scenario(&mut rng, 2000);
        if case % 4 == 3 {
            s.trace.max_interactions = 3;
        }
        let p = Prepared::new(&s).unwrap();
        let r = p.report(&p.trace_all_serial(0));
        let written = serde_json::to_value(&r.budget).unwrap();
        let fields: BTreeSet<&str> = written
            .as_object()
            .unwrap()
            .keys()
            .map(|k| k.as_str())
            .collect();
        let shares = r.budget.shares();
        let keys: BTreeSet<&str> = shares.iter().map(|&(key, _, _)| key).collect();
        let words: BTreeSet<&str> = shares.iter().map(|&(_, words, _)| words).collect();
        assert_eq!(keys.len(), shares.len(), "case {case}: a key repeats");
        assert_eq!(words.len(), shares.len(), "case {case}: words repeat");
        assert_eq!(keys, fields, "case {case}: the list and the budget differ");
        assert_eq!(
            shares.map(|(key, words, _)| (key, words)),
            Budget::MECHANISMS,
            "case {case}"
        );
        let mut sum = 0.0;
        for (key, words, share) in shares {
            assert!(!words.trim().is_empty(), "case {case}: {key} has no words");
            assert_eq!(
                serde_json::to_value(share).unwrap(),
                written[key],
                "case {case}: {key} is not the budget's {key}"
            );
            if share.share > 0.0 {
                seen.insert(key);
            }
            sum += share.share;
        }
        assert!(
            (sum - 1.0).abs() < 1e-12,
            "case {case}: the ordered shares sum to {sum}"
        );
    }
    let all: BTreeSet<&str> = Budget::MECHANISMS.iter().map(|&(key, _)| key).collect();
    assert_eq!(seen, all, "some share was zero in every case");
}

/// The light turned back at the exit face is a breakdown of the budget: the two mechanisms sum
/// to the turned-back share, where it ended sums to it too (to rounding), each of its ends is
/// part of the budget's share of the same name, and its leakage by segment sums to its leakage.
fn turn_back_is_a_breakdown_of_the_budget(r: &tirtrace::trace::TraceReport, case: usize) {
    let t = &r.exit_turn_back;
    let b = &r.budget;
    let close = |a: f64, b: f64| (a - b).abs() < 1e-12;
    assert!(
        close(
            t.by_total_reflection.share + t.by_fresnel.share,
            t.turned_back.share
        ),
        "case {case}: {t:?}"
    );
    let e = &t.ended;
    let ended = e.delivered_later.share
        + e.returned.share
        + e.leaked.share
        + e.contact.share
        + e.coating.share
        + e.absorbed.share
        + e.stopped.share;
    assert!(
        close(ended, t.turned_back.share),
        "case {case}: ends sum to {ended}, turned back {}",
        t.turned_back.share
    );
    for (name, part, whole) in [
        ("delivered", e.delivered_later, b.delivered),
        ("returned", e.returned, b.returned),
        ("leaked", e.leaked, b.leaked),
        ("contact", e.contact, b.contact),
        ("coating", e.coating, b.coating),
        ("absorbed", e.absorbed, b.absorbed),
        ("stopped", e.stopped, b.stopped),
    ] {
        assert!(
            part.share >= 0.0 && part.share <= whole.share + 1e-12 && part.ci95.is_finite(),
            "case {case}: {name} after a turn back {part:?}, in all {whole:?}"
        );
    }
    let by_segment: f64 = r
        .segments
        .iter()
        .map(|s| {
            assert!(s.leaked_after_turn_back.share <= s.leaked.share + 1e-15);
            s.leaked_after_turn_back.share
        })
        .sum();
    assert!(close(by_segment, e.leaked.share), "case {case}");
    // What reaches the exit face is delivered there or turned back, so the turned-back share
    // plus what is delivered on the first arrival is what reaches it.
    let first_delivered = b.delivered.share - e.delivered_later.share;
    assert!(
        close(first_delivered + t.turned_back.share, t.reached.share),
        "case {case}: {t:?}"
    );
    match &t.of_reaching {
        Some(of) => {
            for x in [of.turned_back, of.by_total_reflection, of.by_fresnel] {
                assert!(
                    (0.0..=1.0 + 1e-12).contains(&x.share) && x.ci95.is_finite(),
                    "case {case}: {of:?}"
                );
            }
            assert!(close(
                of.turned_back.share * t.reached.share,
                t.turned_back.share
            ));
        }
        None => assert_eq!(t.reached.share, 0.0, "case {case}"),
    }
}

#[test]
fn same_seed_same_result_any_thread_count() {
    let mut rng = Rng(77);
    for case in 0..12 {
        let s = random_scenario(&mut rng, 3 * 4096 + 100);
        let p = Prepared::new(&s).unwrap();
        let serial = p.trace_all_serial(5);
        assert_eq!(
            serial,
            p.trace_all_serial(5),
            "case {case}: not deterministic"
        );
        #[cfg(not(target_arch = "wasm32"))]
        for threads in [1, 2, 3] {
            assert_eq!(
                serial,
                p.trace_all_parallel(threads, 5).unwrap(),
                "case {case}: {threads} threads"
            );
        }
        // Batches traced out of order and merged in order give the same result.
        let mut merged = p.trace_batch(0, 5);
        let rest: Vec<_> = (1..p.batch_count())
            .rev()
            .map(|b| p.trace_batch(b, 5))
            .collect();
        for b in rest.iter().rev() {
            merged.merge(b);
        }
        assert_eq!(serial, merged, "case {case}: batch order");
        // The running merger (as a browser's merging worker uses it): batches added in any
        // order, folded only as far as asked and only when every batch up to there is in.
        let n = p.batch_count();
        let mut merger = PrefixMerger::new();
        let mut order: Vec<u64> = (0..n).collect();
        order.swap(0, (n - 1) as usize);
        for (k, &b) in order.iter().enumerate() {
            merger.add(b, p.trace_batch(b, 5));
            let asked = (k as u64 + 1).min(n);
            let folded = merger.fold_to(asked).is_some();
            // Batch 0 arrives last: nothing can be folded before it.
            assert_eq!(
                folded,
                k + 1 == order.len(),
                "case {case}: folded with a batch missing"
            );
        }
        assert_eq!(merger.folded(), n);
        assert_eq!(
            Some(&serial),
            merger.fold_to(n),
            "case {case}: running merge"
        );
        let mut other = s.clone();
        other.trace.seed ^= 1;
        let q = Prepared::new(&other).unwrap();
        let different = q.trace_all_serial(0);
        assert_ne!(
            serial.tallies, different.tallies,
            "case {case}: seed ignored"
        );
    }
}
