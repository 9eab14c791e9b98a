//! Coated zones of the side wall as the tracer meets them (the document's
//! [`crate::scenario::Coating`]): where a zone is, and the one physics step that is new here —
//! a white coating's diffuse re-emission.
//!
//! Assumed physics (common practice, no source): a coating (paint, or a metal layer deposited
//! on the moulded part) lies on the wall in optical contact, with no air gap, so a ray meeting
//! a coated zone meets the coating itself: there is no total internal reflection there, and
//! the Fresnel reflection at the pipe–binder interface is neglected (a paint's binder is close
//! to the pipe's index). White paint sends a share ρ back into the pipe, cosine-weighted about
//! the inward normal (an ideal diffuse, Lambertian, reflector); a metal layer reflects a share R
//! specularly; the rest, and everything meeting black paint, is absorbed in the coating and
//! tallied to its zone. Whether a ray is sent back is decided with probability ρ (or R), as the
//! bare wall decides a Fresnel reflection; certain outcomes (ρ or R of 0 or 1, black) draw no
//! random number.

use glam::DVec3;

use crate::geometry::Placed;
use crate::scenario::{Coating, CoatingKind, ZonePlace};

/// A coated zone, placed: where it is on the wall, and its kind.
#[derive(Debug, Clone, Copy)]
pub(super) struct CoatingZone {
    pub place: ZonePlace,
    pub kind: CoatingKind,
}

impl CoatingZone {
    /// The zone of a document's coating.
    pub fn new(c: &Coating) -> CoatingZone {
        CoatingZone {
            place: c.place(),
            kind: c.kind,
        }
    }
}

/// The first of `zones` (document order) holding local point `o` on the wall of segment `seg`,
/// if any: the same test as a mount's (along the centre line, then the azimuth, both ends
/// included).
pub(super) fn zone_at(
    zones: &[CoatingZone],
    seg: usize,
    placed: &Placed,
    o: DVec3,
) -> Option<usize> {
    let along = placed.along_mm(o);
    let az = placed.azimuth_deg(o);
    zones
        .iter()
        .position(|c| c.place.segment == seg && c.place.holds(along, az))
}

/// A direction drawn from the cosine-weighted (Lambertian) distribution over the hemisphere
/// about the unit vector `inward`, from two uniform numbers `u1`, `u2` in [0, 1).
///
/// A Lambertian reflector's radiance is the same in every direction, so the power it sends
/// into the solid angle dω at angle θ from its normal is ∝ cos θ dω, and the angle θ has the
/// density p(θ) = 2 cos θ sin θ on [0, π/2] (McCluney, *Introduction to Radiometry and
/// Photometry*, 2nd ed., Artech House 2014, ch. 1–2, the Lambertian source; chapter from
/// memory). It is drawn by Malley's method: a point uniform on the unit disk, r = √u1 and
/// φ = 2π u2, lifted onto the hemisphere, cos θ = √(1 − u1) (Pharr, Jakob and Humphreys,
/// *Physically Based Rendering*, 3rd ed., 2016, §13.6.3; section from memory). cos θ is never
/// 0 (u1 < 1), so the direction always points strictly inward.
///
/// `inward` must be a unit vector.
pub fn lambertian_direction(inward: DVec3, u1: f64, u2: f64) -> DVec3 {
    debug_assert!((inward.length_squared() - 1.0).abs() < 1e-9);
    let r = u1.sqrt();
    let (sin_phi, cos_phi) = libm::sincos(2.0 * core::f64::consts::PI * u2);
    let cos_theta = (1.0 - u1).sqrt();
    let (a, b) = inward.any_orthonormal_pair();
    (r * cos_phi) * a + (r * sin_phi) * b + cos_theta * inward
}

#[cfg(test)]
mod tests {
    use super::lambertian_direction;
    use glam::DVec3;

    #[test]
    fn lambertian_directions_are_unit_and_inward() {
        // An edge table of uniform numbers, on a few normals (a wall's inward normal can point
        // anywhere).
        let us = [0.0, 1e-12, 0.25, 0.5, 0.999_999_999, 1.0 - f64::EPSILON];
        let normals = [
            DVec3::Z,
            -DVec3::X,
            DVec3::new(0.6, -0.8, 0.0),
            DVec3::new(1.0, 2.0, -2.0) / 3.0,
        ];
        for n in normals {
            for &u1 in &us {
                for &u2 in &us {
                    let d = lambertian_direction(n, u1, u2);
                    assert!((d.length() - 1.0).abs() < 1e-12, "{n} {u1} {u2}: {d}");
                    assert!(d.dot(n) > 0.0, "{n} {u1} {u2}: {d}");
                }
            }
        }
    }
}
