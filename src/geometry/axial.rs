//! A straight or tapered run: local z along the axis from the start plane z = 0 to the end plane
//! z = `length`; the section's width axis along x, its height axis along y. Its half-sizes grow
//! linearly along z, so a round section's wall is a cone (a cylinder when it does not taper) and
//! a rectangular section's walls are four planes. Lengths in mm.

use glam::DVec3;

use super::quadric::{on_wall_snap, quadratic_exit};
use super::Next;

/// A straight or tapered run along local z from 0 to `length`; half-sizes along x and y grow
/// linearly: `hw0 + kw z`, `hh0 + kh z`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Axial {
    /// Length, mm.
    pub length: f64,
    /// Half-width at z = 0, mm.
    pub hw0: f64,
    /// Half-height at z = 0, mm.
    pub hh0: f64,
    /// d(half-width)/dz.
    pub kw: f64,
    /// d(half-height)/dz.
    pub kh: f64,
}

impl Axial {
    /// Half-width and half-height of the section at `z`, mm (the radius twice when round).
    #[inline]
    pub fn half_sizes_mm(&self, z: f64) -> (f64, f64) {
        (self.hw0 + self.kw * z, self.hh0 + self.kh * z)
    }

    /// The end plane the ray (local origin `o`, unit direction `d`) heads for: z = `length`
    /// going on, z = 0 going back; a ray square to the axis reaches neither (t = ∞).
    #[inline]
    pub fn end_planes(&self, o: DVec3, d: DVec3) -> Next {
        if d.z > 0.0 {
            Next::End {
                t: (self.length - o.z) / d.z,
            }
        } else if d.z < 0.0 {
            Next::Start { t: -o.z / d.z }
        } else {
            Next::End { t: f64::INFINITY }
        }
    }

    /// What a ray inside a round run meets first: the cone x² + y² = (a0 + k z)² (a cylinder
    /// when k = 0), left where the quadratic rises, or an end plane.
    #[inline]
    pub fn next_round(&self, o: DVec3, d: DVec3) -> Next {
        let mut best = self.end_planes(o, d);
        let t_end = best.t();
        // Cone (cylinder when k = 0): x² + y² = (a0 + k z)².
        let (a0, k) = (self.hw0, self.kw);
        let r0 = a0 + k * o.z;
        let qa = d.x * d.x + d.y * d.y - k * k * d.z * d.z;
        let qb = o.x * d.x + o.y * d.y - k * r0 * d.z;
        let qc = on_wall_snap(o.x * o.x + o.y * o.y, r0 * r0);
        if let Some(t) = quadratic_exit(qa, qb, qc, |t| r0 + k * t * d.z > 0.0) {
            if t < t_end {
                let p = o + t * d;
                let r = a0 + k * p.z;
                let normal = DVec3::new(p.x, p.y, -k * r).normalize();
                best = Next::Wall { t, normal };
            }
        }
        best
    }

    /// What a ray inside a rectangular run meets first: one of the four planes
    /// ±x = hw0 + kw z, ±y = hh0 + kh z (left where the ray's slope across it is > 0), or an end
    /// plane.
    #[inline]
    pub fn next_rectangular(&self, o: DVec3, d: DVec3) -> Next {
        let best = self.end_planes(o, d);
        let t_end = best.t();
        let Axial {
            hw0, hh0, kw, kh, ..
        } = *self;
        let mut t_best = t_end;
        let mut normal = DVec3::ZERO;
        for (sign, ox, dx, h0, k, axis) in [
            (1.0, o.x, d.x, hw0, kw, DVec3::X),
            (-1.0, o.x, d.x, hw0, kw, DVec3::X),
            (1.0, o.y, d.y, hh0, kh, DVec3::Y),
            (-1.0, o.y, d.y, hh0, kh, DVec3::Y),
        ] {
            let slope = sign * dx - k * d.z;
            if slope > 0.0 {
                let t = (h0 + k * o.z - sign * ox) / slope;
                if t < t_best {
                    t_best = t.max(0.0);
                    normal = (sign * axis - k * DVec3::Z).normalize();
                }
            }
        }
        if t_best < t_end {
            Next::Wall { t: t_best, normal }
        } else {
            best
        }
    }

    /// Position along the axis of a local point, mm from the start (clamped to the run).
    #[inline]
    pub fn along_mm(&self, p: DVec3) -> f64 {
        p.z.clamp(0.0, self.length)
    }

    /// How far outside the wall a local point lies (≤ 0 inside), mm: the distance to the axis
    /// less the radius when `round`, else the larger excess over the half-width and half-height.
    pub fn outside_mm(&self, round: bool, p: DVec3) -> f64 {
        let (hw, hh) = self.half_sizes_mm(p.z);
        if round {
            (p.x * p.x + p.y * p.y).sqrt() - hw
        } else {
            (p.x.abs() - hw).max(p.y.abs() - hh)
        }
    }
}
