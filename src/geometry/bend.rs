//! A circular bend about local z: the centre line is the circle of radius `rc` in the xy plane,
//! from angle 0 (on +x, heading +y) to `phi`; the start plane is the half-plane y = 0, x > 0,
//! the end plane the half-plane at angle `phi`. This file holds what both sections share (end
//! planes, position along the bend, the section's axes, the outside test); the walls are in
//! [`super::torus`] (round section) and [`super::rect_bend`] (rectangular). Lengths in mm,
//! angles in radians.

use glam::DVec3;

use super::Next;

/// A circular bend about local z: the centre line is the circle of radius `rc` in the xy
/// plane from angle 0 (on +x, heading +y) to `phi`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bend {
    /// Centre-line radius, mm.
    pub rc: f64,
    /// Bend angle, rad.
    pub phi: f64,
    /// Half-size across the bend (radial), mm.
    pub radial_half: f64,
    /// Half-size along the bend axis (local z), mm.
    pub axial_half: f64,
    /// The section's width axis at angle 0, in local coordinates.
    pub width_axis: DVec3,
    /// The section's height axis at angle 0, in local coordinates.
    pub height_axis: DVec3,
    /// sin(phi), cached.
    pub sin_phi: f64,
    /// cos(phi), cached.
    pub cos_phi: f64,
}

impl Bend {
    /// The end plane the ray (local origin `o`, unit direction `d`) meets first (angle 0 going
    /// back, angle `phi` going on; t = ∞ when neither), and how far the walls need searching:
    /// up to that plane, and never beyond the bounding sphere a ray inside the tube cannot
    /// travel further than.
    #[inline]
    pub(super) fn end_planes(&self, o: DVec3, d: DVec3) -> (Next, f64) {
        // End planes: angle 0 (half-plane y = 0, x > 0) and angle phi.
        let mut best = Next::End { t: f64::INFINITY };
        if d.y < 0.0 {
            let t = -o.y / d.y;
            if o.x + t * d.x > 0.0 {
                best = Next::Start { t };
            }
        }
        let (s, c) = (self.sin_phi, self.cos_phi);
        let e = DVec3::new(-s, c, 0.0);
        let de = d.dot(e);
        if de > 0.0 {
            let t = -o.dot(e) / de;
            let p = o + t * d;
            if p.x * c + p.y * s > 0.0 && t < best.t() {
                best = Next::End { t };
            }
        }
        // A ray inside the tube cannot travel further than the bounding sphere.
        let t_hi = best
            .t()
            .min(2.0 * (self.rc + self.radial_half.max(self.axial_half)) + 1.0);
        (best, t_hi)
    }

    /// Position along the centre line of a local point, mm from the bend's start (clamped to
    /// the bend): rc times the angle about the bend axis.
    pub fn along_mm(&self, p: DVec3) -> f64 {
        // atan2 lies in (−π, π]: a point at the far end of a 180° bend can come out
        // as −π + ε; only a point just before the start comes out slightly negative.
        let mut theta = libm::atan2(p.y, p.x);
        if theta < -std::f64::consts::FRAC_PI_2 {
            theta += std::f64::consts::TAU;
        }
        self.rc * theta.clamp(0.0, self.phi)
    }

    /// A local point's offsets from the centre line along the section's width and height axes
    /// there (the axes at angle 0 turned about z to the point's angle), mm.
    pub fn section_coordinates(&self, p: DVec3) -> (f64, f64) {
        let theta = libm::atan2(p.y, p.x);
        let (s, c) = (libm::sin(theta), libm::cos(theta));
        let q = p - self.rc * DVec3::new(c, s, 0.0);
        (
            q.dot(rot_z(self.width_axis, s, c)),
            q.dot(rot_z(self.height_axis, s, c)),
        )
    }

    /// How far outside the wall a local point lies (≤ 0 inside), mm: the distance to the centre
    /// circle less the tube radius when `round`, else the larger excess over the radial and
    /// axial half-sizes.
    pub fn outside_mm(&self, round: bool, p: DVec3) -> f64 {
        let rho = (p.x * p.x + p.y * p.y).sqrt();
        if round {
            libm::hypot(rho - self.rc, p.z) - self.radial_half
        } else {
            ((rho - self.rc).abs() - self.radial_half).max(p.z.abs() - self.axial_half)
        }
    }
}

/// Rotate a local vector about local z by the angle whose sine and cosine are `s`, `c`.
#[inline]
pub fn rot_z(v: DVec3, s: f64, c: f64) -> DVec3 {
    DVec3::new(c * v.x - s * v.y, s * v.x + c * v.y, v.z)
}
