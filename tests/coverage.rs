//! Honest intervals: the 95 % confidence intervals a trace reports contain the true answer in
//! about 95 % of independent runs. 200 runs of a small scenario, each from its own seed, are
//! checked against an answer known far more precisely than one run gives it:
//!
//! - a lossless straight rod fed by a Lambertian LED touching its flat entry face, whose shares
//!   reflected at the entry and delivered have closed forms from the Fresnel equations
//!   (below), and
//! - a bend's leak on a short route with one tight bend, against a reference trace of 4·10⁶
//!   rays (its own interval a tenth of one run's).
//!
//! Threshold: with a true coverage of 95 %, the number of 200 intervals that hold the answer is
//! binomial (mean 190, standard deviation √(200 · 0.95 · 0.05) = 3.1); at least 186 (93 %) is
//! asked, 1.3 standard deviations below the mean, while an interval too narrow by a fifth
//! (true coverage ≈ 88 %, mean 176) fails it by more than 2 standard deviations. The seeds are
//! fixed, so the outcome is too.
#![allow(clippy::disallowed_methods)]
// checks may use std maths; the core uses libm
// Native only: 8·10⁶ rays on all cores; the wasm build traces bit for bit the same (tested
// elsewhere), so its intervals are the same intervals.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::json;
use tirtrace::interface::fresnel_reflectance;
use tirtrace::scenario::Scenario;
use tirtrace::stats::Share;
use tirtrace::trace::{Prepared, BATCH_RAYS};

/// Independent runs.
const RUNS: u64 = 200;
/// Rays per run: five whole batches.
const RUN_RAYS: u64 = 5 * BATCH_RAYS;
/// Least number of the runs' intervals that must hold the answer (93 %).
const LEAST_HELD: usize = 186;

/// Index of the rod: a constant 1.5 (an invented glass), in air.
const N_ROD: f64 = 1.5;

fn rod(rays: u64, seed: u64) -> Prepared {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}},
                  "material": {"custom": {"model": "constant", "n": N_ROD}},
                  "surroundings": {"library": "air"}},
        "route": [{"straight": {"length_mm": 6.0}}],
        "source": {"emitter": {"led": {"area": {"disk": {"diameter_mm": 1.0}}, "pattern": "lambertian"}},
                   "wavelength_nm": 550, "gap_mm": 0.0},
        "trace": {"rays": rays, "seed": seed}
    });
    Prepared::new(&Scenario::from_json(&doc.to_string()).unwrap()).unwrap()
}

fn bent(rays: u64, seed: u64) -> Prepared {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}},
                  "material": {"library": "pmma"}, "surroundings": {"library": "air"}},
        "route": [{"straight": {"length_mm": 3.0}},
                  {"bend": {"radius_mm": 5.0, "angle_deg": 90, "turn_deg": 0}},
                  {"straight": {"length_mm": 3.0}}],
        "source": {"emitter": {"led": {"area": {"square": {"side_mm": 1.0}}, "pattern": "lambertian"}},
                   "wavelength_nm": 590, "gap_mm": 0.2},
        "trace": {"rays": rays, "seed": seed}
    });
    Prepared::new(&Scenario::from_json(&doc.to_string()).unwrap()).unwrap()
}

/// ∫₀^{π/2} f(θ) 2 cos θ sin θ dθ, the mean of f over a Lambertian emitter's directions
/// (Simpson's rule, 20 000 panels).
fn lambertian_mean(f: impl Fn(f64) -> f64) -> f64 {
    let n = 20_000;
    let h = std::f64::consts::FRAC_PI_2 / n as f64;
    let g = |t: f64| f(t) * 2.0 * t.cos() * t.sin();
    let mut s = g(0.0) + g(std::f64::consts::FRAC_PI_2);
    for k in 1..n {
        s += g(k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
    }
    s * h / 3.0
}

/// How many of the runs' intervals hold `truth`.
fn held(runs: &[Share], truth: f64) -> usize {
    runs.iter()
        .filter(|s| (s.share - truth).abs() <= s.ci95)
        .count()
}

/// The rod's closed forms. A ray from the LED in air at θ to the axis enters with the
/// unpolarised Fresnel transmittance T(θ) = 1 − R(θ) (Born and Wolf, *Principles of Optics*,
/// 7th ed., §1.5.2; the tracer draws each event from the unpolarised R), and inside keeps its
/// angle θ′ to the axis (sin θ = n sin θ′): the side wall reflects it totally (incidence at least
/// 90° − 41.8° > the critical 41.8° for n = 1.5, skew rays more so), and at each end face it is
/// transmitted with T(θ) again (the same unpolarised value from either side) or reflected.
/// Summing its round trips: reflected at the entry R(θ); delivered T²/(1 − R²) — each averaged
/// over the Lambertian directions.
#[test]
fn intervals_hold_the_closed_forms_of_a_lossless_rod() {
    let r = |t: f64| fresnel_reflectance(t.cos(), 1.0, N_ROD);
    let reflected = lambertian_mean(r);
    let delivered = lambertian_mean(|t| {
        let (rr, tt) = (r(t), 1.0 - r(t));
        tt * tt / (1.0 - rr * rr)
    });
    // Checks of the quadrature against known values: at normal incidence R = 0.04; the
    // Lambertian mean of R for n = 1.5 is 0.0918 (a standard result for the hemispherical
    // reflectance of glass, from memory).
    assert!((r(0.0) - 0.04).abs() < 1e-15);
    assert!((reflected - 0.0918).abs() < 5e-4, "{reflected}");
    let (mut refl, mut deliv) = (Vec::new(), Vec::new());
    for seed in 0..RUNS {
        let p = rod(RUN_RAYS, 1000 + seed);
        let report = p.report(&p.trace_all_parallel(0, 0).unwrap());
        assert!((report.budget_sum - 1.0).abs() < 1e-12);
        assert_eq!(report.budget.missed_entry.share, 0.0);
        refl.push(report.budget.reflected_entry);
        deliv.push(report.delivered);
    }
    let (h_refl, h_deliv) = (held(&refl, reflected), held(&deliv, delivered));
    eprintln!(
        "lossless rod: reflected {reflected:.5} held by {h_refl}/{RUNS}, delivered {delivered:.5} \
         held by {h_deliv}/{RUNS}"
    );
    assert!(h_refl >= LEAST_HELD, "reflected at entry: {h_refl}/{RUNS}");
    assert!(h_deliv >= LEAST_HELD, "delivered: {h_deliv}/{RUNS}");
}

/// A bend's leak has no closed form: the reference is a trace of 4·10⁶ rays from a seed no run
/// uses, whose interval is a tenth as wide as one run's.
#[test]
fn intervals_hold_a_bends_leak() {
    let p = bent(4_000_000, 999_999);
    let reference = p.report(&p.trace_all_parallel(0, 0).unwrap());
    let truth = reference.segments[1].leaked;
    let mut leaks = Vec::new();
    for seed in 0..RUNS {
        let p = bent(RUN_RAYS, 1000 + seed);
        leaks.push(p.report(&p.trace_all_parallel(0, 0).unwrap()).segments[1].leaked);
    }
    assert!(
        truth.ci95 < 0.15 * leaks[0].ci95,
        "reference ± {} against one run's ± {}",
        truth.ci95,
        leaks[0].ci95
    );
    let h = held(&leaks, truth.share);
    eprintln!("bend leak {:.5} held by {h}/{RUNS}", truth.share);
    assert!(h >= LEAST_HELD, "bend leak: {h}/{RUNS}");
}
