//! Closed-form results for a step-index light guide: numerical aperture, acceptance, relative
//! index difference, the meridional leak-free bend criterion, coupling fractions and étendue, and
//! the launch chain that strings them together for the quick look and the scenario check
//! ([`launch_chain`]). Angles in radians; indices relative to air.

use std::f64::consts::{FRAC_PI_2, PI};

use crate::error::FieldError;
use crate::interface;

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

/// The closed-form chain from a launch to its bend figure, for a step-index guide fed through a
/// flat entry face normal to its axis (angles in radians, indices relative to air; see
/// [`launch_chain`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaunchChain {
    /// Critical angle at the side wall, from the wall normal: θc = asin(n_out/n_core)
    /// (`docs/REFERENCES.md` §2). NaN when n_out ≥ n_core.
    pub critical_angle_rad: f64,
    /// NA = √(n_core² − n_out²) ([`numerical_aperture`], §3).
    pub numerical_aperture: f64,
    /// Acceptance half-angle in the front medium, n_front sin θa = NA, π/2 when saturated
    /// ([`acceptance_half_angle_rad`], §3).
    pub acceptance_half_angle_rad: f64,
    /// True when every ray from the front medium is accepted: NA ≥ n_front.
    pub acceptance_saturated: bool,
    /// Largest guided ray angle to the axis inside the core: n_front sin θlaunch = n_core sin θmax,
    /// capped at the guiding limit π/2 − θc ([`max_internal_angle_rad`], §4).
    pub max_internal_angle_rad: f64,
    /// Smallest leak-free R_in/d for that angle, n_out / (n_core cos θmax − n_out); `None` when no
    /// radius is leak-free ([`leak_free_bend_ratio`], §4).
    pub leak_free_ratio: Option<f64>,
    /// Fresnel reflection loss at the entry face at normal incidence,
    /// R = ((n_core − n_front)/(n_core + n_front))² (§2).
    pub entry_fresnel_loss: f64,
}

/// The launch chain of a guide of index `n_core` in surroundings `n_out`, fed from a front medium
/// of index `n_front` by a cone of half-angle `launch_rad` (radians, in the front medium, about
/// the axis): critical angle, NA, acceptance, largest internal angle, leak-free bend ratio and
/// entry Fresnel loss, each as documented on [`LaunchChain`] (sources: `docs/REFERENCES.md` §2
/// for the critical angle and Fresnel, §3 for NA and acceptance, §4 for the bend). The quick look
/// ([`crate::quick`]) and the scenario check ([`crate::check`]) both report it.
pub fn launch_chain(n_core: f64, n_out: f64, n_front: f64, launch_rad: f64) -> LaunchChain {
    let na = numerical_aperture(n_core, n_out);
    let theta_max = max_internal_angle_rad(n_core, n_out, n_front, launch_rad);
    LaunchChain {
        critical_angle_rad: interface::critical_angle_rad(n_core, n_out).unwrap_or(f64::NAN),
        numerical_aperture: na,
        acceptance_half_angle_rad: acceptance_half_angle_rad(na, n_front),
        acceptance_saturated: na >= n_front,
        max_internal_angle_rad: theta_max,
        leak_free_ratio: leak_free_bend_ratio(n_core, n_out, theta_max),
        entry_fresnel_loss: interface::fresnel_reflectance(1.0, n_front, n_core),
    }
}

/// `Ok` when a guide of index `n_core` in surroundings of index `n_out` guides light at all:
/// total internal reflection needs the lower index outside (`docs/REFERENCES.md` §2). Otherwise
/// the problem of the surroundings' field `surroundings_field`, naming both indices.
pub fn check_guiding(n_core: f64, n_out: f64, surroundings_field: &str) -> Result<(), FieldError> {
    if n_out >= n_core {
        return Err(FieldError::new(
            surroundings_field,
            format!(
                "must have a lower index than the guide for light to be guided: \
                 surroundings n = {n_out:.4}, guide n = {n_core:.4}"
            ),
        ));
    }
    Ok(())
}

/// What a bend figure says when no leak-free radius exists ([`leak_free_bend_ratio`] is `None`)
/// for a launch whose largest internal angle is `max_internal_angle_deg` (degrees, to the axis).
pub fn no_leak_free_radius_note(max_internal_angle_deg: f64) -> String {
    format!(
        "no leak-free radius exists: the launch fills the guide up to its guiding limit \
         ({max_internal_angle_deg:.1}° to the axis), so some light leaks at any bend radius"
    )
}
