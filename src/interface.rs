//! Optics of one interface between two homogeneous isotropic media.
//!
//! Conventions: `n_i` is the index on the incident side, `n_t` on the transmitted side; no bare
//! "eta" appears in the public API. Direction vectors are unit length; a surface normal `normal`
//! points back into the incident medium (so `incident · normal < 0`).
//! Formulas: W. J. Smith, *Modern Optical Engineering*, 4th ed., eqs. 11.1–11.2; M. Born and
//! E. Wolf, *Principles of Optics*, §1.5.

use glam::DVec3;

/// Mirror reflection of `incident` about `normal`: r = d − 2 (d·n) n.
///
/// `normal` must be normalised; its sign does not matter.
pub fn reflect(incident: DVec3, normal: DVec3) -> DVec3 {
    debug_assert!((normal.length_squared() - 1.0).abs() < 1e-9);
    incident - 2.0 * incident.dot(normal) * normal
}

/// Vector Snell refraction, n_i sin θi = n_t sin θt.
///
/// t = μ d + (μ cos θi − cos θt) n with μ = n_i/n_t, cos θi = −d·n, cos θt = √(1 − μ² sin² θi).
/// `incident` and `normal` must be unit vectors with `normal` pointing into the incident medium.
/// Returns `None` on total internal reflection (μ sin θi > 1).
pub fn refract(incident: DVec3, normal: DVec3, n_i: f64, n_t: f64) -> Option<DVec3> {
    debug_assert!((incident.length_squared() - 1.0).abs() < 1e-9);
    debug_assert!((normal.length_squared() - 1.0).abs() < 1e-9);
    let mu = n_i / n_t;
    let cos_i = (-incident.dot(normal)).clamp(-1.0, 1.0);
    let sin2_t = mu * mu * (1.0 - cos_i * cos_i).max(0.0);
    if sin2_t > 1.0 {
        return None;
    }
    let cos_t = (1.0 - sin2_t).sqrt();
    Some(mu * incident + (mu * cos_i - cos_t) * normal)
}

/// Fresnel amplitude coefficients (r_s, r_p) for light arriving at `cos_theta_i` from `n_i` into
/// `n_t`:
/// r_s = (n_i cos θi − n_t cos θt)/(n_i cos θi + n_t cos θt),
/// r_p = (n_t cos θi − n_i cos θt)/(n_t cos θi + n_i cos θt).
///
/// `cos_theta_i` is clamped to [0, 1] (so 1 + 1e-12 counts as normal incidence). Returns `None`
/// on total internal reflection, where both reflectances are 1.
pub fn fresnel_amplitudes(cos_theta_i: f64, n_i: f64, n_t: f64) -> Option<(f64, f64)> {
    let cos_i = cos_theta_i.clamp(0.0, 1.0);
    // Snell: sin θt = (n_i/n_t) sin θi
    let sin_t = n_i / n_t * (1.0 - cos_i * cos_i).sqrt();
    if sin_t > 1.0 {
        return None;
    }
    let cos_t = (1.0 - sin_t * sin_t).sqrt();
    let r_s = (n_i * cos_i - n_t * cos_t) / (n_i * cos_i + n_t * cos_t);
    let r_p = (n_t * cos_i - n_i * cos_t) / (n_t * cos_i + n_i * cos_t);
    Some((r_s, r_p))
}

/// Fresnel power reflectances (R_s, R_p) = (|r_s|², |r_p|²); (1, 1) on total internal reflection.
///
/// A NaN `cos_theta_i` gives NaN reflectances.
pub fn fresnel_reflectance_sp(cos_theta_i: f64, n_i: f64, n_t: f64) -> (f64, f64) {
    if cos_theta_i.is_nan() {
        return (f64::NAN, f64::NAN);
    }
    match fresnel_amplitudes(cos_theta_i, n_i, n_t) {
        Some((r_s, r_p)) => (r_s * r_s, r_p * r_p),
        None => (1.0, 1.0),
    }
}

/// Unpolarised Fresnel reflectance R = (R_s + R_p)/2; the transmittance is T = 1 − R.
pub fn fresnel_reflectance(cos_theta_i: f64, n_i: f64, n_t: f64) -> f64 {
    let (r_s, r_p) = fresnel_reflectance_sp(cos_theta_i, n_i, n_t);
    0.5 * (r_s + r_p)
}

/// Critical angle θc = asin(n_t/n_i) for light inside `n_i` meeting `n_t`, radians.
/// `None` when n_t ≥ n_i (no total internal reflection possible).
pub fn critical_angle_rad(n_i: f64, n_t: f64) -> Option<f64> {
    if n_t < n_i {
        Some(libm::asin(n_t / n_i))
    } else {
        None
    }
}

/// Brewster angle θB = atan(n_t/n_i), radians: R_p = 0 there.
pub fn brewster_angle_rad(n_i: f64, n_t: f64) -> f64 {
    libm::atan2(n_t, n_i)
}
