//! A side wall's Fresnel reflection below the critical angle is split in two: the ray is
//! reflected with probability q = min(1, 2R) carrying R/q of its weight, the other 1 − R/q
//! leaving through the wall there, else it leaves whole. Against the plain draw (the whole ray
//! reflected with probability R, else leaving), traced with the same seed:
//!
//! - every share of the budget agrees within the two runs' intervals (the split is unbiased;
//!   a part tallied twice, or not at all, or left on the ray, moves the leak by far more), and
//! - the tight bend's leak has a narrower interval (less noise for about the same work).
//!
//! Both runs are exact functions of their seed, so the outcome is fixed.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::json;
use tirtrace::scenario::Scenario;
use tirtrace::trace::Prepared;

/// A 3 mm acrylic rod bent tightly (5 mm radius), so that much of the light meets the bend's
/// outer wall below the critical angle, then a tapered straight (stepped hit by hit) and an
/// untapered one (taken in closed form), each with some leak of its own.
fn bent(rays: u64, seed: u64) -> Prepared {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}},
                  "material": {"library": "pmma"}, "surroundings": {"library": "air"},
                  "attenuation_db_per_m": 20.0},
        "route": [{"straight": {"length_mm": 3.0}},
                  {"bend": {"radius_mm": 5.0, "angle_deg": 90, "turn_deg": 0}},
                  {"taper": {"length_mm": 4.0, "end_section": {"round": {"diameter_mm": 2.0}}}},
                  {"straight": {"length_mm": 6.0}}],
        "source": {"emitter": {"led": {"area": {"square": {"side_mm": 1.0}}, "pattern": "lambertian"}},
                   "wavelength_nm": 590, "gap_mm": 0.2},
        "trace": {"rays": rays, "seed": seed}
    });
    Prepared::new(&Scenario::from_json(&doc.to_string()).unwrap()).unwrap()
}

#[test]
fn the_split_agrees_with_the_plain_draw_and_narrows_the_bends_leak() {
    let split = bent(200_000, 5);
    let whole = bent(200_000, 5).drawing_wall_reflections_whole();
    let a = split.report(&split.trace_all_parallel(0, 0).unwrap());
    let b = whole.report(&whole.trace_all_parallel(0, 0).unwrap());
    let shares = |r: &tirtrace::trace::TraceReport| {
        let mut v = vec![
            ("delivered", r.delivered),
            ("returned", r.budget.returned),
            ("absorbed", r.budget.absorbed),
            ("leaked", r.budget.leaked),
        ];
        for s in &r.segments {
            v.push(("segment leak", s.leaked));
        }
        v
    };
    for ((name, x), (_, y)) in shares(&a).into_iter().zip(shares(&b)) {
        // The two runs share their source points, so their difference is less noisy than two
        // independent runs' (whose 95 % half-width would be the hypotenuse of the two).
        let both = (x.ci95 * x.ci95 + y.ci95 * y.ci95).sqrt();
        assert!(
            (x.share - y.share).abs() <= both,
            "{name}: split {} ± {}, whole {} ± {}",
            x.share,
            x.ci95,
            y.share,
            y.ci95
        );
    }
    assert!((a.budget_sum - 1.0).abs() < 1e-12, "{}", a.budget_sum);
    // Measured: 1.5 times less variance for the bend's leak.
    let (x, y) = (a.segments[1].leaked, b.segments[1].leaked);
    assert!(x.share > 0.05, "the bend leaks {}", x.share);
    assert!(
        y.ci95 * y.ci95 >= 1.3 * x.ci95 * x.ci95,
        "bend leak: split ± {}, whole ± {}",
        x.ci95,
        y.ci95
    );
}
