//! Closed-form guide results: NA, acceptance, Δ, the leak-free bend criterion, coupling,
//! étendue. Check values: docs/REFERENCES.md §3–§5 with the sources named at each check.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use std::f64::consts::{FRAC_PI_2, PI};
use tirtrace::guide::*;

#[test]
fn numerical_aperture_and_acceptance() {
    // G. Keiser, Optical Fiber Communications: NA = √(n1² − n2²), n0 sin θa = NA; computed in
    // docs/REFERENCES.md §3. PMMA fibre 1.492 / cladding 1.402: NA 0.5104, θa 30.69°.
    let na = numerical_aperture(1.492, 1.402);
    assert!((na - 0.5104).abs() < 5e-5, "{na}");
    assert!((acceptance_half_angle_rad(na, 1.0).to_degrees() - 30.69).abs() < 5e-3);
    // IEC 60793-2-40:2011 category A4a plastic fibre: NA 0.50 (theoretical): these indices sit
    // within the category's ±0.03 tolerance (standard's tolerance from memory).
    assert!((na - 0.50).abs() < 0.03);
    // Unclad 1.49 in water (1.333): NA 0.6657, θa 41.74° (docs/REFERENCES.md §3, computed).
    let na = numerical_aperture(1.49, 1.333);
    assert!((na - 0.6657).abs() < 5e-5, "{na}");
    assert!((acceptance_half_angle_rad(na, 1.0).to_degrees() - 41.74).abs() < 5e-3);
    // Unclad in air: every ray from air is accepted iff n ≥ √2.
    assert_eq!(
        acceptance_half_angle_rad(numerical_aperture(1.49, 1.0), 1.0),
        FRAC_PI_2
    );
    assert!(acceptance_half_angle_rad(numerical_aperture(1.40, 1.0), 1.0) < FRAC_PI_2);
    assert_eq!(
        acceptance_half_angle_rad(numerical_aperture(2f64.sqrt(), 1.0), 1.0),
        FRAC_PI_2
    );
    // Nothing guided when the surroundings are as dense as the core.
    assert_eq!(numerical_aperture(1.4, 1.5), 0.0);
}

#[test]
fn relative_index_difference_matches_definition_and_na() {
    // Δ = (n1² − n2²)/(2 n1²), so NA = n1 √(2Δ) (Keiser).
    let (n1, n2) = (1.492, 1.402);
    let delta = relative_index_difference(n1, n2);
    assert!((n1 * (2.0 * delta).sqrt() - numerical_aperture(n1, n2)).abs() < 1e-12);
    // Weak guidance: Δ ≈ (n1 − n2)/n1.
    let d = relative_index_difference(1.4500, 1.4450);
    assert!((d - 0.005 / 1.45).abs() < 2e-5);
}

#[test]
fn leak_free_bend_table() {
    // docs/REFERENCES.md §4 (derived; handbook form in Engineering Plastics Handbook, McGraw-Hill 2006,
    // ch. 1): R_in/d for a guide in air launched from air; printed to 4 significant figures.
    // (n, axial, 15°, 30°, 60°, fully filled from air = 90°)
    let rows = [
        (1.4585, [2.181, 2.297, 2.702, 5.762, 16.21]),
        (1.49, [2.041, 2.140, 2.478, 4.706, 9.562]),
        (1.586, [1.707, 1.771, 1.980, 3.042, 4.329]),
    ];
    for (n, want) in rows {
        for (launch_deg, w) in [0.0f64, 15.0, 30.0, 60.0, 90.0].into_iter().zip(want) {
            let theta = max_internal_angle_rad(n, 1.0, 1.0, launch_deg.to_radians());
            let r = leak_free_bend_ratio(n, 1.0, theta).unwrap();
            assert!(
                (r - w).abs() / w < 6e-4,
                "n {n} at {launch_deg}°: {r} vs {w}"
            );
        }
    }
}

#[test]
fn axial_bend_equals_handbook_centre_line_form() {
    // Centre-line R_min = t (n + 1) / (2 (n − 1)) (Engineering Plastics Handbook, McGraw-Hill
    // 2006, ch. 1) equals R_in + d/2 with R_in = d/(n − 1) (docs/REFERENCES.md §4).
    for n in [1.3, 1.4585, 1.49, 1.586, 2.0] {
        let r_in = leak_free_bend_ratio(n, 1.0, 0.0).unwrap();
        assert!((r_in + 0.5 - (n + 1.0) / (2.0 * (n - 1.0))).abs() < 1e-12);
        assert!((r_in - 1.0 / (n - 1.0)).abs() < 1e-12);
    }
}

#[test]
fn guide_filled_to_its_critical_angle_has_no_leak_free_radius() {
    // docs/REFERENCES.md §4: a clad fibre's bound rays fill it to its critical angle: every bend leaks.
    let (n1, n2) = (1.492, 1.402);
    // Lambertian launch from air overfills a fibre of NA 0.51: capped at the guiding limit.
    let theta = max_internal_angle_rad(n1, n2, 1.0, FRAC_PI_2);
    assert!((theta - (FRAC_PI_2 - (n2 / n1).asin())).abs() < 1e-12);
    assert_eq!(leak_free_bend_ratio(n1, n2, theta), None);
    // Just inside the limit a radius exists, and it grows without bound towards the limit.
    let r1 = leak_free_bend_ratio(n1, n2, theta - 1e-3).unwrap();
    let r2 = leak_free_bend_ratio(n1, n2, theta - 1e-2).unwrap();
    assert!(r1 > r2 && r1 > 100.0);
}

#[test]
fn index_matched_launch_reaches_deeper_angles() {
    // A gel in front of the entry face (n 1.432) lets steeper rays in than air does, so the
    // leak-free radius grows: n_gel sin θ = n_core sin θ' (Snell's law; W. J. Smith, Modern
    // Optical Engineering, 4th ed., ch. 1).
    let air = max_internal_angle_rad(1.49, 1.0, 1.0, 0.5);
    let gel = max_internal_angle_rad(1.49, 1.0, 1.432, 0.5);
    assert!((gel.sin() * 1.49 - 1.432 * 0.5f64.sin()).abs() < 1e-12);
    assert!(gel > air);
}

#[test]
fn lambertian_coupling_keiser() {
    // Lambertian source on a step-index guide: η = NA² for NA < 1 (G. Keiser, Optical
    // Communications Essentials, 2004, §8.1.2), Fresnel excluded.
    let na = numerical_aperture(1.492, 1.402);
    let eta = lambertian_fraction_within(acceptance_half_angle_rad(na, 1.0));
    assert!((eta - na * na).abs() < 1e-12);
    assert!((eta - 0.2605).abs() < 1e-4);
    // Saturated acceptance: everything.
    assert_eq!(lambertian_fraction_within(FRAC_PI_2), 1.0);
    // Source larger than the core: (a/r_s)² (Keiser 2004 §8.1.2).
    assert_eq!(source_area_factor(0.5, 1.0), 0.25);
    assert_eq!(source_area_factor(1.0, 0.5), 1.0);
}

#[test]
fn cos_power_emitters() {
    // m = −ln 2 / ln cos θ½: θ½ = 60° is Lambertian, m = 1 (docs/REFERENCES.md §5, memory; I. Moreno,
    // C.-C. Sun, Opt. Express 16, 1808 (2008)).
    assert!((cos_power_exponent(60f64.to_radians()) - 1.0).abs() < 1e-12);
    // Narrower beams have larger m, and I(θ½) = ½ by construction.
    let m = cos_power_exponent(15f64.to_radians());
    assert!((15f64.to_radians().cos().powf(m) - 0.5).abs() < 1e-12);
    // Fraction inside θ: 1 − cos^(m+1) θ (derived), against a midpoint-rule integral of
    // cos^m θ sin θ over the hemisphere.
    for m in [1.0, 4.0, 20.0] {
        for theta_deg in [10.0, 30.0, 60.0] {
            let theta = f64::to_radians(theta_deg);
            let integral = |upper: f64| {
                let steps = 20_000;
                let h = upper / steps as f64;
                (0..steps)
                    .map(|i| {
                        let t = (i as f64 + 0.5) * h;
                        t.cos().powf(m) * t.sin() * h
                    })
                    .sum::<f64>()
            };
            let numeric = integral(theta) / integral(FRAC_PI_2);
            let closed = cos_power_fraction_within(m, theta);
            assert!((numeric - closed).abs() < 1e-6, "m {m} θ {theta_deg}");
        }
    }
    // m = 1 agrees with the Lambertian sin² θ.
    assert!((cos_power_fraction_within(1.0, 0.7) - lambertian_fraction_within(0.7)).abs() < 1e-14);
}

#[test]
fn etendue() {
    // G = π A n² sin² θ; 1 mm² Lambertian in air: π mm²·sr (R. Winston, J. C. Miñano,
    // P. Benítez, Nonimaging Optics, 2005; docs/REFERENCES.md §5, memory).
    assert!((etendue_mm2_sr(1.0, 1.0, FRAC_PI_2) - PI).abs() < 1e-12);
    // Conservation across a flat interface: A n² sin² θ is invariant under Snell's law.
    let (n0, n1, t0) = (1.0, 1.49, 0.6f64);
    let t1 = (n0 * t0.sin() / n1).asin();
    assert!((etendue_mm2_sr(2.0, n0, t0) - etendue_mm2_sr(2.0, n1, t1)).abs() < 1e-12);
}

#[test]
fn guide_function_edge_cases() {
    // 0: no launch cone gives the axial value; a zero-area aperture has no étendue.
    assert_eq!(max_internal_angle_rad(1.49, 1.0, 1.0, 0.0), 0.0);
    assert_eq!(etendue_mm2_sr(0.0, 1.5, 0.3), 0.0);
    assert_eq!(lambertian_fraction_within(0.0), 0.0);
    assert_eq!(cos_power_fraction_within(3.0, 0.0), 0.0);
    // NA = 0 accepts nothing; NA exactly n₀ saturates.
    assert_eq!(acceptance_half_angle_rad(0.0, 1.0), 0.0);
    assert_eq!(acceptance_half_angle_rad(1.0, 1.0), FRAC_PI_2);
    // ∞: an infinitely dense guide bends nothing away and needs only R_in/d = n_out/∞ → 0.
    assert_eq!(leak_free_bend_ratio(f64::INFINITY, 1.0, 0.3), Some(0.0));
    assert_eq!(numerical_aperture(f64::INFINITY, 1.0), f64::INFINITY);
    // Launch angles past 90° are clamped by the fractions, not turned into nonsense.
    assert_eq!(lambertian_fraction_within(2.0), 1.0);
    assert_eq!(cos_power_fraction_within(1.0, 4.0), 1.0);
    // NaN propagates through the pure functions (validation keeps it out of the core).
    assert!(numerical_aperture(f64::NAN, 1.0).is_nan());
    assert!(max_internal_angle_rad(1.49, 1.0, 1.0, f64::NAN).is_nan());
    assert_eq!(leak_free_bend_ratio(f64::NAN, 1.0, 0.3), None);
    // cos θmax rounding just past the limit (n cos θ = n_out + tiny) still gives a radius.
    let theta = (1.0f64 / 1.49 + 1e-12).acos();
    assert!(leak_free_bend_ratio(1.49, 1.0, theta).is_none_or(|r| r > 1e9));
}

#[test]
fn launch_chain_strings_the_closed_forms_together() {
    // docs/REFERENCES.md §2 (critical angle and normal-incidence Fresnel loss of 1.49 against
    // air: 42.1552°, 0.038725; W. J. Smith, Modern Optical Engineering; Born & Wolf §1.5) and §4
    // (R_in/d of a 1.49 guide launched from air at 30°: 2.478, derived).
    let c = launch_chain(1.49, 1.0, 1.0, 30f64.to_radians());
    assert!(
        (c.critical_angle_rad.to_degrees() - 42.1552).abs() < 1e-4,
        "{c:?}"
    );
    assert!((c.entry_fresnel_loss - 0.038725).abs() < 1e-6, "{c:?}");
    assert!((c.leak_free_ratio.unwrap() - 2.478).abs() < 5e-4, "{c:?}");
    // sin θmax = sin 30° / 1.49 (§4), below the guiding limit 90° − θc.
    assert!(
        (c.max_internal_angle_rad.sin() - 0.5 / 1.49).abs() < 1e-12,
        "{c:?}"
    );
    // Unclad in air: NA > 1, every ray from air accepted (§3).
    assert!(
        c.acceptance_saturated && c.acceptance_half_angle_rad == FRAC_PI_2,
        "{c:?}"
    );
    assert_eq!(c.numerical_aperture, numerical_aperture(1.49, 1.0));

    // §3: PMMA fibre 1.492 in cladding 1.402 fed from air: NA 0.5104, θa 30.69°, not saturated.
    // Filled from air at 90°, the launch reaches the guiding limit: no leak-free radius (§4).
    let c = launch_chain(1.492, 1.402, 1.0, FRAC_PI_2);
    assert!((c.numerical_aperture - 0.5104).abs() < 5e-5, "{c:?}");
    assert!(
        (c.acceptance_half_angle_rad.to_degrees() - 30.69).abs() < 5e-3,
        "{c:?}"
    );
    assert!(!c.acceptance_saturated);
    let guiding_limit = FRAC_PI_2 - (1.402f64 / 1.492).asin();
    assert!(
        (c.max_internal_angle_rad - guiding_limit).abs() < 1e-12,
        "{c:?}"
    );
    assert_eq!(c.leak_free_ratio, None);
    assert!(
        no_leak_free_radius_note(c.max_internal_angle_rad.to_degrees())
            .starts_with("no leak-free radius exists")
    );

    // No guiding at all: the critical angle is NaN, never a panic.
    assert!(launch_chain(1.4, 1.5, 1.0, 0.1).critical_angle_rad.is_nan());
}

#[test]
fn guiding_needs_the_lower_index_outside() {
    // Total internal reflection needs n_out < n_core (docs/REFERENCES.md §2): equal indices
    // guide nothing.
    assert_eq!(check_guiding(1.492, 1.402, "surroundings"), Ok(()));
    let e = check_guiding(1.4, 1.4, "guide.surroundings").unwrap_err();
    assert_eq!(
        e.to_string(),
        "guide.surroundings must have a lower index than the guide for light to be guided: \
         surroundings n = 1.4000, guide n = 1.4000"
    );
}
