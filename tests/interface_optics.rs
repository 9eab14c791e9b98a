//! Snell, reflection, Fresnel, critical and Brewster angles.
//! Check values: docs/REFERENCES.md §2, computed there in double precision from the Fresnel
//! equations of W. J. Smith, Modern Optical Engineering, 4th ed., eqs. 11.1–11.2, and M. Born,
//! E. Wolf, Principles of Optics, §1.5.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

mod common;
use common::Rng;

use glam::DVec3;
use tirtrace::interface::*;

fn cos_deg(a: f64) -> f64 {
    a.to_radians().cos()
}

#[test]
fn fresnel_reference_table() {
    // (n_i, n_t, θi°, R_s, R_p, R) — docs/REFERENCES.md §2 (Smith eqs. 11.1–11.2), tolerance 1e-6.
    let rows = [
        (1.0, 1.5, 0.0, 0.040000, 0.040000, 0.040000),
        (1.0, 1.5, 45.0, 0.092013, 0.008466, 0.050240),
        (1.0, 1.5, 60.0, 0.176571, 0.001802, 0.089187),
        (1.5, 1.0, 30.0, 0.105773, 0.004608, 0.055190),
        (1.5, 1.0, 40.0, 0.390518, 0.100064, 0.245291),
    ];
    for (n_i, n_t, a, rs, rp, r) in rows {
        let (got_s, got_p) = fresnel_reflectance_sp(cos_deg(a), n_i, n_t);
        let got = fresnel_reflectance(cos_deg(a), n_i, n_t);
        assert!(
            (got_s - rs).abs() < 1e-6,
            "R_s {n_i}->{n_t} at {a}: {got_s}"
        );
        assert!(
            (got_p - rp).abs() < 1e-6,
            "R_p {n_i}->{n_t} at {a}: {got_p}"
        );
        assert!((got - r).abs() < 1e-6, "R {n_i}->{n_t} at {a}: {got}");
    }
}

#[test]
fn index_reference_table() {
    // (n, R at 0°, Brewster °, critical °) — docs/REFERENCES.md §2, tolerance 1e-6 (R) and 1e-4°.
    let rows = [
        (1.333, 0.020373, 53.1232, 48.6066),
        (1.49, 0.038725, 56.1328, 42.1552),
        (1.50, 0.040000, 56.3099, 41.8103),
        (1.586, 0.051350, 57.7679, 39.0883),
    ];
    for (n, r0, brewster, critical) in rows {
        assert!((fresnel_reflectance(1.0, 1.0, n) - r0).abs() < 1e-6);
        assert!((brewster_angle_rad(1.0, n).to_degrees() - brewster).abs() < 1e-4);
        let c = critical_angle_rad(n, 1.0).unwrap().to_degrees();
        assert!((c - critical).abs() < 1e-4, "{n}: {c}");
        // At Brewster's angle the p reflectance vanishes (Born & Wolf §1.5).
        let (_, rp) = fresnel_reflectance_sp(brewster_angle_rad(1.0, n).cos(), 1.0, n);
        assert!(rp < 1e-20, "{rp}");
    }
}

#[test]
fn no_critical_angle_into_a_denser_medium() {
    assert_eq!(critical_angle_rad(1.0, 1.5), None);
    assert_eq!(critical_angle_rad(1.5, 1.5), None);
}

#[test]
fn total_internal_reflection_beyond_the_critical_angle() {
    let c = critical_angle_rad(1.5, 1.0).unwrap();
    assert_eq!(fresnel_reflectance((c + 1e-9).cos(), 1.5, 1.0), 1.0);
    assert_eq!(fresnel_amplitudes((c + 1e-9).cos(), 1.5, 1.0), None);
    assert!(fresnel_reflectance((c - 1e-3).cos(), 1.5, 1.0) < 1.0);
}

#[test]
fn reflectance_plus_transmittance_is_one() {
    // Energy conservation at the interface, checked with T computed independently from the
    // transmission amplitudes t_s = 2 n1 cos θi/(n1 cos θi + n2 cos θt),
    // t_p = 2 n1 cos θi/(n2 cos θi + n1 cos θt), T = (n2 cos θt)/(n1 cos θi) |t|²
    // (M. Born, E. Wolf, Principles of Optics, §1.5.3): R_s + T_s = 1 and R_p + T_p = 1.
    let mut rng = Rng(3);
    let mut checked = 0;
    for _ in 0..2000 {
        let n1 = 1.0 + rng.next();
        let n2 = 1.0 + rng.next();
        let cos_i = rng.range(0.01, 1.0);
        let sin_t = n1 / n2 * (1.0 - cos_i * cos_i).sqrt();
        if sin_t >= 1.0 {
            continue;
        }
        let cos_t = (1.0 - sin_t * sin_t).sqrt();
        let t_s = 2.0 * n1 * cos_i / (n1 * cos_i + n2 * cos_t);
        let t_p = 2.0 * n1 * cos_i / (n2 * cos_i + n1 * cos_t);
        let factor = n2 * cos_t / (n1 * cos_i);
        let (r_s, r_p) = fresnel_reflectance_sp(cos_i, n1, n2);
        assert!(
            (r_s + factor * t_s * t_s - 1.0).abs() < 1e-12,
            "s: {n1} {n2} {cos_i}"
        );
        assert!(
            (r_p + factor * t_p * t_p - 1.0).abs() < 1e-12,
            "p: {n1} {n2} {cos_i}"
        );
        checked += 1;
    }
    assert!(checked > 1000);
}

#[test]
fn energy_and_reciprocity_laws() {
    // Reciprocity: R(n1→n2, θi) = R(n2→n1, θt) (Born & Wolf §1.5, Stokes relations), for each
    // polarisation; and every reflectance is a fraction.
    let mut rng = Rng(7);
    for _ in 0..2000 {
        let n1 = 1.0 + rng.next();
        let n2 = 1.0 + rng.next();
        let cos_i = rng.next();
        let sin_t = n1 / n2 * (1.0 - cos_i * cos_i).sqrt();
        let (rs, rp) = fresnel_reflectance_sp(cos_i, n1, n2);
        assert!((0.0..=1.0).contains(&rs) && (0.0..=1.0).contains(&rp));
        if sin_t < 1.0 {
            let cos_t = (1.0 - sin_t * sin_t).sqrt();
            let (bs, bp) = fresnel_reflectance_sp(cos_t, n2, n1);
            assert!((rs - bs).abs() < 1e-9, "s reciprocity {n1} {n2} {cos_i}");
            assert!((rp - bp).abs() < 1e-9, "p reciprocity {n1} {n2} {cos_i}");
        }
    }
}

fn random_unit(rng: &mut Rng) -> DVec3 {
    let z = 2.0 * rng.next() - 1.0;
    let phi = std::f64::consts::TAU * rng.next();
    let r = (1.0 - z * z).sqrt();
    DVec3::new(r * phi.cos(), r * phi.sin(), z)
}

#[test]
fn vector_snell_obeys_snell_and_stays_in_the_plane() {
    let mut rng = Rng(11);
    for _ in 0..2000 {
        let n_i = 1.0 + rng.next();
        let n_t = 1.0 + rng.next();
        let normal = random_unit(&mut rng);
        let mut d = random_unit(&mut rng);
        if d.dot(normal) > 0.0 {
            d = -d;
        }
        let sin_i = d.cross(normal).length();
        match refract(d, normal, n_i, n_t) {
            Some(t) => {
                assert!((t.length() - 1.0).abs() < 1e-12);
                let sin_t = t.cross(normal).length();
                assert!((n_i * sin_i - n_t * sin_t).abs() < 1e-12, "Snell");
                // Coplanar with the incident ray and the normal, and onward through the surface.
                assert!(t.dot(d.cross(normal)).abs() < 1e-12);
                assert!(t.dot(normal) <= 1e-15);
            }
            None => assert!(n_i * sin_i > n_t * (1.0 - 1e-12), "TIR only past critical"),
        }
        let r = reflect(d, normal);
        assert!((r.length() - 1.0).abs() < 1e-12);
        assert!((r.dot(normal) + d.dot(normal)).abs() < 1e-12);
    }
}

#[test]
fn edge_cases() {
    // eta = 1: no reflection, no deviation.
    let d = DVec3::new(0.6, 0.0, -0.8);
    let n = DVec3::Z;
    assert!(fresnel_reflectance(0.3, 1.49, 1.49) < 1e-30);
    let t = refract(d, n, 1.49, 1.49).unwrap();
    assert!((t - d).length() < 1e-15);
    // cos θi = 1 + 1e-12 (rounding past normal incidence) is normal incidence.
    assert_eq!(
        fresnel_reflectance(1.0 + 1e-12, 1.0, 1.5),
        fresnel_reflectance(1.0, 1.0, 1.5)
    );
    // Grazing incidence from outside reflects everything.
    assert!((fresnel_reflectance(0.0, 1.0, 1.5) - 1.0).abs() < 1e-15);
    // cos θi slightly negative (rounding) counts as grazing, not as an error.
    assert!((fresnel_reflectance(-1e-15, 1.0, 1.5) - 1.0).abs() < 1e-15);
    // NaN propagates (validation keeps it out of the core; it must not turn into a number).
    assert!(fresnel_reflectance(f64::NAN, 1.0, 1.5).is_nan());
    // Normal incidence refracts straight on.
    let t = refract(-DVec3::Z, DVec3::Z, 1.0, 1.5).unwrap();
    assert!((t + DVec3::Z).length() < 1e-15);
    // An infinitely dense medium is a perfect mirror for the critical angle: asin(0) = 0.
    assert_eq!(critical_angle_rad(f64::INFINITY, 1.0), Some(0.0));
}
