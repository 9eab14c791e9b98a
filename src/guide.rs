//! Closed-form results for a step-index light guide: numerical aperture, acceptance, relative
//! index difference, the meridional leak-free bend criterion, coupling fractions and étendue.
//! Angles in radians; indices relative to air.

use std::f64::consts::{FRAC_PI_2, PI};

/// Numerical aperture NA = √(n_core² − n_out²) (G. Keiser, *Optical Fiber Communications*).
/// Returns 0 when n_out ≥ n_core (nothing is guided); NaN in gives NaN out.
pub fn numerical_aperture(n_core: f64, n_out: f64) -> f64 {
    let d = n_core * n_core - n_out * n_out;
    if d < 0.0 {
        0.0
    } else {
        d.sqrt()
    }
}

/// Acceptance half-angle in the medium in front of the entry face, n₀ sin θa = NA.
/// Saturates at π/2 when NA ≥ n₀: every ray from that medium is accepted.
pub fn acceptance_half_angle_rad(numerical_aperture: f64, n_front: f64) -> f64 {
    let s = numerical_aperture / n_front;
    if s >= 1.0 {
        FRAC_PI_2
    } else {
        libm::asin(s)
    }
}

/// Relative index difference Δ = (n_core² − n_out²)/(2 n_core²) (Keiser).
pub fn relative_index_difference(n_core: f64, n_out: f64) -> f64 {
    (n_core * n_core - n_out * n_out) / (2.0 * n_core * n_core)
}

/// Largest ray angle to the guide axis inside the core for a launch half-angle `launch_rad` in the
/// front medium, through a flat entry face normal to the axis: n_front sin θlaunch = n_core sin θ.
/// Rays refracted beyond the core's own guiding limit (π/2 − θc) are not guided, so the result is
/// capped there.
pub fn max_internal_angle_rad(n_core: f64, n_out: f64, n_front: f64, launch_rad: f64) -> f64 {
    // (Comparisons written out so that NaN propagates: f64::min would drop it.)
    let s = n_front * libm::sin(launch_rad) / n_core;
    let refracted = libm::asin(if s > 1.0 { 1.0 } else { s });
    let guided_limit = if n_out < n_core {
        FRAC_PI_2 - libm::asin(n_out / n_core)
    } else {
        0.0
    };
    if refracted > guided_limit {
        guided_limit
    } else {
        refracted
    }
}

/// Smallest inner bend radius over guide thickness (R_in/d) at which every meridional ray at
/// ≤ `theta_max_rad` to the axis stays totally reflected through a circular bend:
/// R_in n_core cos θmax ≥ (R_in + d) n_out  ⇔  R_in/d ≥ n_out / (n_core cos θmax − n_out).
/// For a round rod bent into a torus the condition also holds for skew rays (angular momentum
/// about the bend axis bounds their incidence angle). Derivation: geometric optics, see
/// `docs/REFERENCES.md` §4; handbook axial form R_centre = t (n + 1)/(2 (n − 1)).
///
/// Returns `None` when n_core cos θmax ≤ n_out: no radius is leak-free.
pub fn leak_free_bend_ratio(n_core: f64, n_out: f64, theta_max_rad: f64) -> Option<f64> {
    let denom = n_core * libm::cos(theta_max_rad) - n_out;
    if denom > 0.0 {
        Some(n_out / denom)
    } else {
        None
    }
}

/// Fraction of a Lambertian source's power inside a cone of half-angle `half_angle_rad`:
/// sin² θ. With θ the acceptance angle in the front medium this is the butt-coupling efficiency of
/// a small source into a step-index guide, η = (NA/n₀)², capped at 1 (G. Keiser, *Optical
/// Communications Essentials*, 2004, §8.1.2). Fresnel loss excluded.
pub fn lambertian_fraction_within(half_angle_rad: f64) -> f64 {
    let s = libm::sin(half_angle_rad.clamp(0.0, FRAC_PI_2));
    s * s
}

/// Area factor for a uniform source of radius `source_radius` larger than the core radius
/// `core_radius`: (a/r_s)², else 1 (Keiser 2004, §8.1.2).
pub fn source_area_factor(core_radius: f64, source_radius: f64) -> f64 {
    if source_radius <= core_radius {
        1.0
    } else {
        (core_radius / source_radius) * (core_radius / source_radius)
    }
}

/// Exponent m of a cos^m intensity pattern with half-intensity half-angle θ½:
/// m = −ln 2 / ln cos θ½ (cosine-power LED model, I. Moreno and C.-C. Sun, Opt. Express 16, 1808
/// (2008)). θ½ = 60° gives m = 1 (Lambertian). Requires 0 < θ½ < π/2.
pub fn cos_power_exponent(half_intensity_rad: f64) -> f64 {
    -core::f64::consts::LN_2 / libm::log(libm::cos(half_intensity_rad))
}

/// Fraction of a cos^m emitter's power inside half-angle θ: 1 − cos^(m+1) θ (derived: with the
/// intensity I(θ) ∝ cos^m θ the power in a ring is ∝ cos^m θ sin θ dθ, integrated from 0 to θ;
/// m = 1 is Lambertian and gives sin² θ).
pub fn cos_power_fraction_within(m: f64, half_angle_rad: f64) -> f64 {
    1.0 - libm::pow(libm::cos(half_angle_rad.clamp(0.0, FRAC_PI_2)), m + 1.0)
}

/// Étendue of a flat aperture of area `area_mm2` filled over a cone of half-angle `half_angle_rad`
/// in a medium of index `n`: G = π A n² sin² θ, mm²·sr (R. Winston, J. C. Miñano, P. Benítez,
/// *Nonimaging Optics*, 2005).
pub fn etendue_mm2_sr(area_mm2: f64, n: f64, half_angle_rad: f64) -> f64 {
    let s = libm::sin(half_angle_rad);
    PI * area_mm2 * n * n * s * s
}
