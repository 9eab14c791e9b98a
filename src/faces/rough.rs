//! Light crossing a rough (textured) interface: a microfacet model.
//!
//! The surface is a field of tiny flat facets whose normals m follow the GGX distribution of
//! B. Walter, S. R. Marschner, H. Li and K. E. Torrance, "Microfacet models for refraction
//! through rough surfaces", Eurographics Symposium on Rendering 2007, eq. (33):
//! D(m) = α² / (π cos⁴θm (α² + tan²θm)²), one parameter, the roughness α. A ray meets one facet,
//! chosen in proportion to the area it presents to the ray, D(m) max(0, i·m) G₁(i, m) / cos θi
//! (the distribution of visible normals), sampled exactly by E. Heitz, "Sampling the GGX
//! distribution of visible normals", Journal of Computer Graphics Techniques 7(4), 2018, §3–4.
//! At the facet it is reflected (unpolarised Fresnel reflectance R) or refracted by Snell's law
//! ([`crate::interface`]). Walter et al.'s transmission, their eq. (21), also has the shadowing
//! G₁(o, m) of the outgoing ray: here a ray whose new direction does not leave the surface on
//! the side it should (a refracted ray heading back to the surface, a reflected one heading on
//! into it) meets another facet, from the side it is on, until it leaves — so no light is lost
//! and the budget still sums to 1; the light that leaves after one facet has Walter et al.'s
//! density without the G₁(o, m) factor (tests/faces.rs compares the two).
//!
//! Local frame: z is the interface's mean normal pointing into the medium the ray comes from, so
//! an arriving ray has d.z < 0.

use glam::DVec3;

use crate::interface::{fresnel_reflectance, reflect, refract};

/// The most facets a ray meets at one crossing; a ray still among them after that leaves by
/// mirror reflection about the mean normal (no rough face has sent one that far in testing).
pub const MAX_FACETS: usize = 64;

/// The facet's normal seen by a ray arriving along `d` (unit, d.z < 0) on a GGX surface of
/// roughness `alpha`, from two uniform numbers: Heitz (2018), listing 1, with α_x = α_y = α.
pub fn visible_normal(d: DVec3, alpha: f64, u1: f64, u2: f64) -> DVec3 {
    // The view direction, towards the side the ray comes from.
    let v = -d;
    // §3.2: stretch to the hemisphere configuration (α = 1).
    let vh = DVec3::new(alpha * v.x, alpha * v.y, v.z).normalize();
    // §4.1: a basis about vh.
    let lensq = vh.x * vh.x + vh.y * vh.y;
    let t1 = if lensq > 0.0 {
        DVec3::new(-vh.y, vh.x, 0.0) / lensq.sqrt()
    } else {
        DVec3::X
    };
    let t2 = vh.cross(t1);
    // §4.2: a point of the projected area (a disc, half of it squeezed by the view's slant).
    let r = u1.sqrt();
    let phi = 2.0 * core::f64::consts::PI * u2;
    let p1 = r * libm::cos(phi);
    let mut p2 = r * libm::sin(phi);
    let s = 0.5 * (1.0 + vh.z);
    p2 = (1.0 - s) * (1.0 - p1 * p1).max(0.0).sqrt() + s * p2;
    // §4.3: back onto the hemisphere.
    let nh = p1 * t1 + p2 * t2 + (1.0 - p1 * p1 - p2 * p2).max(0.0).sqrt() * vh;
    // §3.4: unstretch.
    DVec3::new(alpha * nh.x, alpha * nh.y, nh.z.max(0.0)).normalize()
}

/// What one facet does to a ray.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FacetEvent {
    /// Reflected into the new direction, totally (`true`) or by Fresnel.
    Reflected(DVec3, bool),
    /// Refracted into the new direction.
    Refracted(DVec3),
}

/// One facet met by a ray arriving along `d` (unit, d.z < 0) from index `n_i` onto index `n_t`:
/// the facet from `u1`, `u2` ([`visible_normal`]), Fresnel reflection against `u3`.
pub fn facet_event(d: DVec3, n_i: f64, n_t: f64, alpha: f64, u: [f64; 3]) -> FacetEvent {
    facet_event_decided(d, n_i, n_t, alpha, [u[0], u[1]], |r| u[2] < r)
}

/// [`facet_event`] with the Fresnel reflection decided by `reflects(R)`, asked only where the
/// facet transmits at all (R < 1): the facet from `u1`, `u2`.
pub fn facet_event_decided(
    d: DVec3,
    n_i: f64,
    n_t: f64,
    alpha: f64,
    u: [f64; 2],
    reflects: impl FnOnce(f64) -> bool,
) -> FacetEvent {
    let m = visible_normal(d, alpha, u[0], u[1]);
    let cos_i = (-d.dot(m)).clamp(0.0, 1.0);
    match refract(d, m, n_i, n_t) {
        None => FacetEvent::Reflected(reflect(d, m), true),
        Some(_) if reflects(fresnel_reflectance(cos_i, n_i, n_t)) => {
            FacetEvent::Reflected(reflect(d, m), false)
        }
        Some(t) => FacetEvent::Refracted(t),
    }
}

/// How a ray leaves a rough interface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Crossing {
    /// Back into the medium it came from (direction z > 0), the last facet reflecting it
    /// totally (`true`) or by Fresnel.
    Reflected(DVec3, bool),
    /// Into the medium beyond (direction z < 0).
    Transmitted(DVec3),
}

/// A ray arriving along `d` (unit, d.z < 0) from index `n_i` on a rough interface with index
/// `n_t` beyond: facets one after the other (uniform numbers from `uniform`, three a facet)
/// until it leaves on one side or the other.
pub fn cross(d: DVec3, n_i: f64, n_t: f64, alpha: f64, uniform: impl FnMut() -> f64) -> Crossing {
    cross_inner(d, n_i, n_t, alpha, uniform, None)
}

/// [`cross`] with the first facet's Fresnel reflection decided by `first_reflects(R)` (asked
/// only where that facet transmits at all) instead of its third uniform number, which is still
/// drawn: the exit face's schedule decides a ray's first arrival this way
/// (`crate::trace`'s `ExitSchedule`). Whatever rule `first_reflects` follows, if it reflects
/// with probability R given the facet, the crossing's law is [`cross`]'s.
pub fn cross_first_decided(
    d: DVec3,
    n_i: f64,
    n_t: f64,
    alpha: f64,
    uniform: impl FnMut() -> f64,
    mut first_reflects: impl FnMut(f64) -> bool,
) -> Crossing {
    cross_inner(d, n_i, n_t, alpha, uniform, Some(&mut first_reflects))
}

fn cross_inner(
    d: DVec3,
    n_i: f64,
    n_t: f64,
    alpha: f64,
    mut uniform: impl FnMut() -> f64,
    mut first_reflects: Option<&mut dyn FnMut(f64) -> bool>,
) -> Crossing {
    // `beyond`: whether the ray is on the far side; directions are kept in the frame of the side
    // the ray is on (z into that side's medium), flipped when it crosses.
    let flip = |v: DVec3| DVec3::new(v.x, v.y, -v.z);
    let mut dir = d;
    let mut beyond = false;
    for _ in 0..MAX_FACETS {
        let (na, nb) = if beyond { (n_t, n_i) } else { (n_i, n_t) };
        let u = [uniform(), uniform(), uniform()];
        let event = match first_reflects.take() {
            Some(reflects) => facet_event_decided(dir, na, nb, alpha, [u[0], u[1]], reflects),
            None => facet_event(dir, na, nb, alpha, u),
        };
        match event {
            FacetEvent::Reflected(r, tir) => {
                if r.z > 0.0 {
                    return if beyond {
                        Crossing::Transmitted(flip(r))
                    } else {
                        Crossing::Reflected(r, tir)
                    };
                }
                dir = r;
            }
            FacetEvent::Refracted(t) => {
                if t.z < 0.0 {
                    return if beyond {
                        Crossing::Reflected(flip(t), false)
                    } else {
                        Crossing::Transmitted(t)
                    };
                }
                // Heading back to the surface from the other side.
                beyond = !beyond;
                dir = flip(t);
            }
        }
    }
    // Still among the facets: the mirror direction about the mean normal.
    Crossing::Reflected(DVec3::new(d.x, d.y, -d.z), false)
}
