//! The walls of a bend of rectangular section: the outer and inner cylinders ρ = rc ± radial_half
//! about the bend axis (local z) and the two planes z = ±axial_half. Lengths in mm.

use glam::DVec3;

use super::quadric::{on_wall_snap, quadratic_entry, quadratic_exit};
use super::{Bend, Next};

impl Bend {
    /// What a ray (local origin `o`, unit direction `d`) inside a rectangular bend meets first:
    /// it leaves through the outer cylinder (exit root of its quadratic), reaches the inner one
    /// from outside it (entry root), or crosses a plane z = ±axial_half; else an end plane.
    #[inline]
    pub fn next_rectangular(&self, o: DVec3, d: DVec3) -> Next {
        let (best, t_hi) = self.end_planes(o, d);
        let Bend {
            rc,
            radial_half,
            axial_half,
            ..
        } = *self;
        let alpha = d.x * d.x + d.y * d.y;
        let beta = o.x * d.x + o.y * d.y;
        let gamma = o.x * o.x + o.y * o.y;
        let mut t_best = t_hi;
        let mut normal = DVec3::ZERO;
        let r_out = rc + radial_half;
        let r_in = rc - radial_half;
        let qc = on_wall_snap(gamma, r_out * r_out);
        if let Some(t) = quadratic_exit(alpha, beta, qc, |_| true) {
            if t < t_best {
                t_best = t;
                let p = o + t * d;
                normal = DVec3::new(p.x, p.y, 0.0).normalize();
            }
        }
        if let Some(t) = quadratic_entry(alpha, beta, gamma - r_in * r_in) {
            if t < t_best {
                t_best = t;
                let p = o + t * d;
                normal = -DVec3::new(p.x, p.y, 0.0).normalize();
            }
        }
        if d.z > 0.0 {
            let t = (axial_half - o.z) / d.z;
            if t < t_best {
                t_best = t.max(0.0);
                normal = DVec3::Z;
            }
        } else if d.z < 0.0 {
            let t = (-axial_half - o.z) / d.z;
            if t < t_best {
                t_best = t.max(0.0);
                normal = -DVec3::Z;
            }
        }
        if t_best < best.t() {
            Next::Wall { t: t_best, normal }
        } else {
            best
        }
    }
}
