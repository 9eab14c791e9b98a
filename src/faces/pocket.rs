//! A concave spherical pocket in the entry face over the LED: the ball of radius R centred on
//! the axis at z = d − R (d the depth, d ≤ R) cut out of the guide where z ≥ 0 (global frame:
//! the entry plane is z = 0, the guide along +z). Its mouth on the entry plane is a disc of
//! radius a = √(d (2R − d)), inside the section; with d ≤ R the ball is widest there, so the
//! pocket never reaches the side wall. The pocket is filled with the gap's medium; the LED sits
//! under its mouth (at the source's gap in front of the entry plane).

use glam::DVec3;

/// The pocket in the global frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pocket {
    /// Centre of the sphere (on the axis), global mm.
    pub centre: DVec3,
    /// Radius of curvature, mm.
    pub radius_mm: f64,
    /// Depth below the entry plane, mm.
    pub depth_mm: f64,
}

impl Pocket {
    /// The pocket of radius `radius_mm` and depth `depth_mm` (0 < depth ≤ radius).
    pub fn new(radius_mm: f64, depth_mm: f64) -> Pocket {
        Pocket {
            centre: DVec3::new(0.0, 0.0, depth_mm - radius_mm),
            radius_mm,
            depth_mm,
        }
    }

    /// Radius of the mouth on the entry plane, √(d (2R − d)), mm.
    pub fn mouth_radius_mm(&self) -> f64 {
        (self.depth_mm * (2.0 * self.radius_mm - self.depth_mm))
            .max(0.0)
            .sqrt()
    }

    /// Whether the point (x, y) of the entry plane is in the mouth.
    pub fn in_mouth(&self, x: f64, y: f64) -> bool {
        let a = self.mouth_radius_mm();
        x * x + y * y < a * a
    }

    /// The ray's two crossings of the sphere, t² + 2bt + c = 0 (b = Δ·d, c = |Δ|² − R²,
    /// Δ = o − centre), nearer first; `None` when it misses. The root nearer 0 is c/q with q the
    /// farther one (no cancellation for a ray starting on the sphere).
    fn roots(&self, o: DVec3, d: DVec3) -> Option<(f64, f64)> {
        let delta = o - self.centre;
        let b = delta.dot(d);
        let c = delta.length_squared() - self.radius_mm * self.radius_mm;
        let disc = b * b - c;
        if disc < 0.0 {
            return None;
        }
        let sq = disc.sqrt();
        Some(if b < 0.0 {
            let hi = -b + sq;
            (c / hi, hi)
        } else {
            let lo = -b - sq;
            (lo, if lo != 0.0 { c / lo } else { 0.0 })
        })
    }

    /// A ray in the guide's material (outside the ball) at `o`, direction `d`: the distance to
    /// the pocket's surface if it meets it (entering the ball above the entry plane).
    pub fn hit_from_material(&self, o: DVec3, d: DVec3) -> Option<f64> {
        let (lo, _) = self.roots(o, d)?;
        // A start on the surface heading away gives lo ≤ 0 (up to rounding): not a hit.
        (lo > 1e-9 && o.z + lo * d.z >= 0.0).then_some(lo)
    }

    /// A ray inside the pocket at `o`, direction `d`: where it leaves — the sphere (`Some(t)`,
    /// into the material) or the mouth (`None`, with its distance) going back through the entry
    /// plane.
    pub fn leave(&self, o: DVec3, d: DVec3) -> (f64, bool) {
        let to_sphere = match self.roots(o, d) {
            Some((_, hi)) => hi.max(0.0),
            None => 0.0,
        };
        if d.z < 0.0 {
            let to_plane = (-o.z / d.z).max(0.0);
            if to_plane < to_sphere {
                return (to_plane, false);
            }
        }
        (to_sphere, true)
    }

    /// The unit normal of the sphere at `p`, pointing into the pocket (towards the centre).
    pub fn normal_into_pocket(&self, p: DVec3) -> DVec3 {
        (self.centre - p).normalize()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_hemispherical_pocket_has_its_mouth_as_wide_as_its_radius() {
        let p = Pocket::new(1.0, 1.0);
        assert!((p.mouth_radius_mm() - 1.0).abs() < 1e-15);
        // Straight up from the centre: the sphere at the vertex, 1 mm.
        assert_eq!(p.leave(DVec3::ZERO, DVec3::Z), (1.0, true));
        // From the material above the vertex, heading down: the vertex, 1 mm away.
        let t = p
            .hit_from_material(DVec3::new(0.0, 0.0, 2.0), -DVec3::Z)
            .unwrap();
        assert!((t - 1.0).abs() < 1e-12);
        // Beside the pocket: no hit.
        assert!(p
            .hit_from_material(DVec3::new(1.2, 0.0, 2.0), -DVec3::Z)
            .is_none());
    }
}
