//! Light turned back at the exit face: how much (by total internal reflection and by Fresnel
//! reflection) against closed-form optics, where it ends, and a bend the closed form calls
//! leak-free that leaks only the light coming back from the exit face.
//! Sources are named at each check; docs/REFERENCES.md holds the check values.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use serde_json::{json, Value};
use tirtrace::check::{self, BendVerdict};
use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, SegmentKind, TraceReport};

fn scenario(v: Value) -> Scenario {
    Scenario::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{e}\n{v}"))
}

fn run(s: &Scenario) -> TraceReport {
    let p = Prepared::new(s).unwrap_or_else(|e| panic!("{e}"));
    #[cfg(not(target_arch = "wasm32"))]
    let batch = p.trace_all_parallel(0, 0).unwrap();
    #[cfg(target_arch = "wasm32")]
    let batch = p.trace_all_serial(0);
    p.report(&batch)
}

/// Unpolarised Fresnel reflectance from inside a medium of index `n` into air at incidence
/// cosine `c`, 1 beyond the critical angle: R = (R_s + R_p)/2 with
/// r_s = (n cos θi − cos θt)/(n cos θi + cos θt), r_p = (cos θi − n cos θt)/(cos θi + n cos θt),
/// sin θt = n sin θi (M. Born, E. Wolf, *Principles of Optics*, §1.5; docs/REFERENCES.md §2).
/// Written out here rather than taken from the core, so the check does not lean on the code it
/// checks.
fn reflectance_into_air(c: f64, n: f64) -> f64 {
    let sin_t = n * (1.0 - c * c).sqrt();
    if sin_t >= 1.0 {
        return 1.0;
    }
    let ct = (1.0 - sin_t * sin_t).sqrt();
    let rs = (n * c - ct) / (n * c + ct);
    let rp = (c - n * ct) / (c + n * ct);
    0.5 * (rs * rs + rp * rp)
}

/// A straight round PMMA rod (2 mm, 20 mm long) in air, lossless, fed by a beam of divergence
/// half-angle `divergence_deg` through a gap medium `gap`, its exit face into `exit` (air when
/// `None`).
fn straight_rod(divergence_deg: f64, gap: Value, exit: Option<Value>, rays: u64) -> Scenario {
    let mut guide = json!({ "section": { "round": { "diameter_mm": 2.0 } },
        "material": { "library": "pmma" }, "surroundings": { "library": "air" } });
    if let Some(exit) = exit {
        guide["exit_medium"] = exit;
    }
    scenario(json!({
        "version": 1,
        "guide": guide,
        "route": [{ "straight": { "length_mm": 20.0 } }],
        "source": { "emitter": { "beam": { "diameter_mm": 1.0,
                        "divergence_half_angle_deg": divergence_deg } },
                    "wavelength_nm": 587.56, "gap_mm": 0.0, "gap_medium": gap },
        "trace": { "rays": rays, "seed": 3 }
    }))
}

#[test]
fn a_straight_rod_turns_back_what_snell_and_fresnel_say() {
    // A beam uniform over a cone of half-angle δ = 46° inside an index-matched gap enters the
    // PMMA rod unbent and unreflected, so its rays keep their angle θ to the axis all the way
    // (a straight wall's reflection keeps the axial direction cosine), cos θ uniform on
    // [cos δ, 1]. Every one stays totally reflected at the side wall (θ < 90° − θc ≈ 47.9°) and
    // meets the exit face at incidence θ. Expected share of the light reaching it that is turned
    // back (derived from Snell's law and the Fresnel equations, docs/REFERENCES.md §2):
    //   total reflection: P(θ > θc) = (cos θc − cos δ) / (1 − cos δ), sin θc = 1/n;
    //   Fresnel: ∫ R(c) dc over c = cos θ from cos θc to 1, divided by 1 − cos δ.
    let delta = 46f64.to_radians();
    let r = run(&straight_rod(
        46.0,
        json!({"library": "pmma"}),
        None,
        200_000,
    ));
    let n = r.n_core;
    let cos_c = (1.0 - 1.0 / (n * n)).sqrt();
    let cone = 1.0 - delta.cos();
    let want_tir = (cos_c - delta.cos()) / cone;
    let steps = 20_000;
    let h = (1.0 - cos_c) / steps as f64;
    let want_fresnel = (0..steps)
        .map(|k| reflectance_into_air(cos_c + (k as f64 + 0.5) * h, n))
        .sum::<f64>()
        * h
        / cone;
    let t = &r.exit_turn_back;
    // Nothing is lost before the exit face: every ray reaches it once.
    assert_eq!(t.reached.share, 1.0, "{t:?}");
    let of = t.of_reaching.as_ref().unwrap();
    for (name, got, want) in [
        ("total reflection", of.by_total_reflection, want_tir),
        ("Fresnel", of.by_fresnel, want_fresnel),
        ("turned back", of.turned_back, want_tir + want_fresnel),
    ] {
        assert!(
            (got.share - want).abs() < 2.0 * got.ci95,
            "{name}: traced {got:?}, closed form {want}"
        );
    }
    // The closed form's own size, so that the check above means something: about 16 % and 8 %.
    assert!(
        want_tir > 0.15 && want_fresnel > 0.07,
        "{want_tir} {want_fresnel}"
    );
    // The index-matched gap lets everything turned back out of the entry face: the budget's
    // whole "returned" is light turned back at the exit face, and nothing else becomes of it.
    let e = &t.ended;
    assert!((e.returned.share + e.delivered_later.share - t.turned_back.share).abs() < 1e-12);
    assert_eq!(e.returned.share, r.budget.returned.share);
    assert!((r.budget.delivered.share + t.turned_back.share - 1.0).abs() < 1e-12);
}

#[test]
fn a_rod_fed_from_air_or_ending_in_its_own_index_turns_nothing_back_by_total_reflection() {
    // From air through a flat face, sin θ ≤ 1/n = sin θc (Snell, docs/REFERENCES.md §2): no ray
    // inside a straight rod exceeds the exit face's critical angle, so nothing is totally
    // reflected there; only Fresnel reflection, up to R(θc) = 1 at the very edge.
    let r = run(&straight_rod(89.0, json!({"library": "air"}), None, 50_000));
    let t = &r.exit_turn_back;
    assert_eq!(t.by_total_reflection.share, 0.0, "{t:?}");
    let of = t.of_reaching.as_ref().unwrap();
    // At least the normal-incidence reflectance ((n − 1)/(n + 1))² ≈ 3.9 %.
    let n = r.n_core;
    let normal = (n - 1.0) / (n + 1.0) * ((n - 1.0) / (n + 1.0));
    assert!(
        of.by_fresnel.share - 2.0 * of.by_fresnel.ci95 > normal,
        "{of:?}"
    );
    // An exit face bonded to a medium of the rod's own index turns nothing back at all.
    let r = run(&straight_rod(
        46.0,
        json!({"library": "pmma"}),
        Some(json!({"library": "pmma"})),
        20_000,
    ));
    let t = &r.exit_turn_back;
    assert_eq!(t.turned_back.share, 0.0, "{t:?}");
    assert_eq!(r.budget.delivered.share, 1.0);
}

/// A 2.5 mm PMMA pipe in air, 5 mm straight, a 90° bend of inner radius `factor` × the leak-free
/// radius for a Lambertian LED in air, 10 mm straight, then (`taper`) a 10 mm taper to that
/// diameter; the exit face into `exit` (air when `None`).
fn bend_route(factor: f64, taper_to_mm: Option<f64>, exit: Option<Value>, rays: u64) -> Scenario {
    let d = 2.5;
    let n = tirtrace::index::library::MaterialChoice::library("pmma")
        .n_rel_air(587.56, "m")
        .unwrap();
    // Leak-free R_in/d for a launch from air filling the face, 1/(√(n² − 1) − 1)
    // (docs/REFERENCES.md §4, derived).
    let ratio = 1.0 / ((n * n - 1.0).sqrt() - 1.0);
    let mut route = vec![
        json!({"straight": {"length_mm": 5.0}}),
        json!({"bend": {"radius_mm": factor * ratio * d + 0.5 * d, "angle_deg": 90, "turn_deg": 0}}),
        json!({"straight": {"length_mm": 10.0}}),
    ];
    if let Some(to) = taper_to_mm {
        route.push(json!({"taper": {"length_mm": 10.0,
                                    "end_section": {"round": {"diameter_mm": to}}}}));
    }
    let mut guide = json!({ "section": { "round": { "diameter_mm": d } },
        "material": { "library": "pmma" }, "surroundings": { "library": "air" } });
    if let Some(exit) = exit {
        guide["exit_medium"] = exit;
    }
    scenario(json!({
        "version": 1,
        "guide": guide,
        "route": route,
        "source": { "emitter": { "led": { "area": { "disk": { "diameter_mm": 0.5 } },
                                          "pattern": "lambertian" } },
                    "wavelength_nm": 587.56, "gap_mm": 0.0 },
        "trace": { "rays": rays, "seed": 5 }
    }))
}

#[test]
fn a_leak_free_bend_leaks_only_light_the_exit_face_turned_back() {
    let s = bend_route(1.05, None, None, 100_000);
    // The closed form calls the bend leak-free, and says why it may leak all the same.
    let figures = check::figures(&s).unwrap();
    let bend = &figures.bends[0];
    assert_eq!(bend.verdict, BendVerdict::Ok);
    assert!(
        bend.note.contains("exit face turns back")
            && bend
                .note
                .contains("passes this bend again in the other direction"),
        "{}",
        bend.note
    );
    let r = run(&s);
    let seg = &r.segments[1];
    assert_eq!(seg.kind, SegmentKind::Bend);
    // Every ray that leaked at the bend had been turned back at the exit face first: none
    // leaked on its way there (the closed form's promise), so the two tallies agree exactly.
    assert_eq!(seg.leaked, seg.leaked_after_turn_back);
    assert!(
        seg.leaked.share > 5.0 * seg.leaked.ci95,
        "no clear leak after the turn back: {:?}",
        seg.leaked
    );
    // The bend steepens the rays, so the exit face totally reflects some of them.
    let t = &r.exit_turn_back;
    let of = t.of_reaching.as_ref().unwrap();
    assert!(
        of.by_total_reflection.share > 5.0 * of.by_total_reflection.ci95,
        "{of:?}"
    );
    // The same pipe bonded to a window of its own index: nothing is turned back, nothing leaks
    // at the bend.
    let matched = run(&bend_route(
        1.05,
        None,
        Some(json!({"library": "pmma"})),
        20_000,
    ));
    assert_eq!(matched.exit_turn_back.turned_back.share, 0.0);
    assert_eq!(matched.segments[1].leaked.share, 0.0);
    // A taper widening the exit from 2.5 to 3 mm lowers the rays' angles (étendue, docs/
    // REFERENCES.md §5): less is turned back, nothing by total reflection here, and more is
    // delivered. Same rays (same seed), so the comparison is between paired samples; the
    // margins are several intervals wide all the same.
    let wide = run(&bend_route(1.05, Some(3.0), None, 100_000));
    let tw = wide.exit_turn_back.of_reaching.as_ref().unwrap();
    assert!(
        of.turned_back.share - tw.turned_back.share
            > 3.0 * (of.turned_back.ci95 + tw.turned_back.ci95),
        "turned back: {:?} without the taper, {:?} with it",
        of.turned_back,
        tw.turned_back
    );
    assert!(
        tw.by_total_reflection.share < of.by_total_reflection.share / 10.0,
        "{tw:?}"
    );
    assert!(
        wide.delivered.share - r.delivered.share > 3.0 * (wide.delivered.ci95 + r.delivered.ci95),
        "delivered {:?} → {:?}",
        r.delivered,
        wide.delivered
    );
    assert!(
        wide.segments[1].leaked.share < seg.leaked.share - 3.0 * seg.leaked.ci95,
        "{:?}",
        wide.segments[1].leaked
    );
}
