//! A reflecting corner: the guide turns by θ at a flat face that bisects the turn. Lengths in mm.
//!
//! Local frame: the origin C is where the incoming and the outgoing axes meet; z is the incoming
//! axis t, x and y the incoming section's width and height axes. The turn heads towards the unit
//! vector u (in the xy plane); the outgoing axis is t' = cos θ t + sin θ u. The face is the plane
//! through C with outward unit normal m = (t − t') / |t − t'| = sin(θ/2) t − cos(θ/2) u: the
//! mirror that takes t to t' (t' = t − 2 (t·m) m), met by a ray along the axis at the incidence
//! 90° − θ/2 (45° for a right angle).
//!
//! The corner is the union of two convex pieces, the incoming leg A and the outgoing leg B, each a
//! straight run (a cylinder when round, four planes when rectangular) cut by the face plane
//! (m·p ≤ 0, both on the face's inner side) and by its own end plane: A starts at z = −ℓ, B ends
//! at t'·p = ℓ. The face is where the two legs' sections meet on the face plane (they are
//! mirror images in it). With ℓ = h·max(cot(θ/2), tan(θ/2)) (h half the section's size across
//! the turn), the face lies between the end planes, B lies wholly after A's start plane and A
//! wholly before B's end plane, so the ray leaves the corner through the start plane only from
//! A and through the end plane only from B.
//!
//! A ray crosses each convex piece along one interval of its line; the ray leaves the union where
//! the interval it starts in ends, unless the other piece's interval overlaps it and reaches
//! further (the inner side of the turn, where the legs overlap). Each interval is found exactly:
//! planes by their slab bounds, a round leg's cylinder by its quadratic. A surface the ray leaves
//! (a wall it was just reflected from, say) gives a lower bound only, so a start on a wall never
//! reads as an exit at t ≈ 0.

use glam::DVec3;

use super::quadric::on_wall_snap;
use super::Next;

/// The legs' length each side of the point where the axes meet, mm:
/// ℓ = h·max(cot(θ/2), tan(θ/2)) for `half_across_mm` h, the half-size across the turn, and the
/// turn angle θ = `angle_deg`. cot(θ/2) keeps the face (it reaches h·cot(θ/2) along each axis)
/// between the end planes; tan(θ/2) keeps each leg on the inner side of the other's end plane
/// (a turn beyond a right angle folds the outgoing leg back along the incoming one). A right
/// angle gives h.
pub fn corner_leg_mm(half_across_mm: f64, angle_deg: f64) -> f64 {
    let half = 0.5 * angle_deg.to_radians();
    let tan = libm::tan(half);
    half_across_mm * (1.0 / tan).max(tan)
}

/// Which surface bounds a piece's interval where the ray leaves it.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Surface {
    /// The corner's start plane (A's end cap).
    Start,
    /// The corner's end plane (B's end cap).
    End,
    /// The reflecting face.
    Face,
    /// A flat side wall with this outward unit normal (local).
    Plane(DVec3),
    /// A round leg's cylinder about this axis through the origin (local).
    Cylinder(DVec3),
}

/// The interval of the ray's line inside one convex piece: `lo ≤ t ≤ hi`, and the surface at
/// `hi`. Empty when `lo > hi`.
#[derive(Debug, Clone, Copy)]
struct Interval {
    lo: f64,
    hi: f64,
    exit: Surface,
}

impl Interval {
    const ALL: Interval = Interval {
        lo: f64::NEG_INFINITY,
        hi: f64::INFINITY,
        exit: Surface::End,
    };

    fn empty(&mut self) {
        self.lo = f64::INFINITY;
        self.hi = f64::NEG_INFINITY;
    }

    /// Cut by the half-space n·p ≤ c (n unit) with the surface `s` as its boundary.
    #[inline]
    fn plane(&mut self, o: DVec3, d: DVec3, n: DVec3, c: f64, s: Surface) {
        let nd = n.dot(d);
        let gap = c - n.dot(o);
        if nd > 0.0 {
            let t = gap / nd;
            if t < self.hi {
                self.hi = t;
                self.exit = s;
            }
        } else if nd < 0.0 {
            self.lo = self.lo.max(gap / nd);
        } else if gap < 0.0 {
            self.empty();
        }
    }

    /// Cut by the cylinder of radius `r` about the unit `axis` through the origin.
    #[inline]
    fn cylinder(&mut self, o: DVec3, d: DVec3, axis: DVec3, r: f64) {
        let op = o - o.dot(axis) * axis;
        let dp = d - d.dot(axis) * axis;
        let a = dp.length_squared();
        let b = op.dot(dp);
        let c = on_wall_snap(op.length_squared(), r * r);
        if a < 1e-300 {
            if c > 0.0 {
                self.empty();
            }
            return;
        }
        let disc = b * b - a * c;
        if disc < 0.0 {
            self.empty();
            return;
        }
        let q = -(b + b.signum() * disc.sqrt());
        let (t1, t2) = if q != 0.0 {
            let (r1, r2) = (q / a, c / q);
            (r1.min(r2), r1.max(r2))
        } else {
            (0.0, 0.0)
        };
        self.lo = self.lo.max(t1);
        if t2 < self.hi {
            self.hi = t2;
            self.exit = Surface::Cylinder(axis);
        }
    }
}

/// A reflecting corner in its local frame (see the module's documentation).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Corner {
    /// Each leg's length from the origin along its axis, mm.
    pub leg: f64,
    /// Half-width (the radius when round), mm.
    pub hw: f64,
    /// Half-height (the radius when round), mm.
    pub hh: f64,
    /// The outgoing axis t' (local).
    pub out_axis: DVec3,
    /// The outgoing section's width axis (local).
    pub out_x: DVec3,
    /// The outgoing section's height axis (local).
    pub out_y: DVec3,
    /// The face's outward unit normal m (local).
    pub face_normal: DVec3,
    /// The face's coating reflectance, when it is coated.
    pub coating_reflectance: Option<f64>,
}

impl Corner {
    /// A corner turning by `angle_rad` towards the local unit vector `u` (in the xy plane), with
    /// legs of `leg` mm and section half-sizes `hw`, `hh`.
    pub fn new(
        angle_rad: f64,
        u: DVec3,
        leg: f64,
        hw: f64,
        hh: f64,
        coating_reflectance: Option<f64>,
    ) -> Corner {
        let (s, c) = (libm::sin(angle_rad), libm::cos(angle_rad));
        let axis = DVec3::Z.cross(u);
        // Rodrigues about `axis` (⊥ to both): v cos θ + (axis × v) sin θ.
        let turn = |v: DVec3| v * c + axis.cross(v) * s + axis * axis.dot(v) * (1.0 - c);
        let (sh, ch) = (libm::sin(0.5 * angle_rad), libm::cos(0.5 * angle_rad));
        Corner {
            leg,
            hw,
            hh,
            out_axis: turn(DVec3::Z),
            out_x: turn(DVec3::X),
            out_y: turn(DVec3::Y),
            face_normal: sh * DVec3::Z - ch * u,
            coating_reflectance,
        }
    }

    /// A leg's interval: `axis`, `x`, `y` its axes, its cap n·p ≤ ℓ with the surface `cap`.
    #[inline]
    fn leg_interval(
        &self,
        round: bool,
        o: DVec3,
        d: DVec3,
        (axis, x, y): (DVec3, DVec3, DVec3),
        cap_normal: DVec3,
        cap: Surface,
    ) -> Interval {
        let mut iv = Interval::ALL;
        iv.plane(o, d, cap_normal, self.leg, cap);
        iv.plane(o, d, self.face_normal, 0.0, Surface::Face);
        if round {
            iv.cylinder(o, d, axis, self.hw);
        } else {
            for (n, h) in [(x, self.hw), (-x, self.hw), (y, self.hh), (-y, self.hh)] {
                iv.plane(o, d, n, h, Surface::Plane(n));
            }
        }
        iv
    }

    /// The two legs' intervals for the ray (local origin `o`, unit direction `d`).
    #[inline]
    fn intervals(&self, round: bool, o: DVec3, d: DVec3) -> [Interval; 2] {
        [
            self.leg_interval(
                round,
                o,
                d,
                (DVec3::Z, DVec3::X, DVec3::Y),
                -DVec3::Z,
                Surface::Start,
            ),
            self.leg_interval(
                round,
                o,
                d,
                (self.out_axis, self.out_x, self.out_y),
                self.out_axis,
                Surface::End,
            ),
        ]
    }

    /// What a ray inside the corner (local origin `o`, unit direction `d`) meets first: a side
    /// wall, the face (a wall, or a coated face), or an end plane.
    pub fn next(&self, round: bool, o: DVec3, d: DVec3) -> Next {
        let pieces = self.intervals(round, o, d);
        // Rounding of a point handed over or reflected: a few ε of the corner's size.
        let tol = 1e-12 * (self.leg + self.hw + self.hh + o.length());
        let mut reach = 0.0;
        let mut exit = None;
        // The union of two intervals: extend while a piece that starts within reach ends beyond.
        for _ in 0..2 {
            let mut grew = false;
            for iv in &pieces {
                if iv.lo <= reach + tol && iv.hi > reach && iv.hi >= iv.lo {
                    reach = iv.hi;
                    exit = Some(iv.exit);
                    grew = true;
                }
            }
            if !grew {
                break;
            }
        }
        // Where a leg's side wall ends on the other leg's end plane (a right angle's inner walls
        // lie in the end planes), the ray leaves through the end plane: a cap wins a tie.
        if exit.is_some_and(|s| !matches!(s, Surface::Start | Surface::End)) {
            for iv in &pieces {
                if matches!(iv.exit, Surface::Start | Surface::End)
                    && iv.lo <= reach + tol
                    && (iv.hi - reach).abs() <= tol
                {
                    reach = reach.max(iv.hi);
                    exit = Some(iv.exit);
                }
            }
        }
        let exit = match exit {
            Some(s) => s,
            // Not inside either leg by more than rounding (a start exactly on an edge heading
            // out): leave by the nearer piece that the ray's line crosses ahead.
            None => {
                let ahead = pieces
                    .iter()
                    .filter(|iv| iv.hi >= iv.lo && iv.hi > 0.0)
                    .min_by(|a, b| a.lo.total_cmp(&b.lo));
                match ahead {
                    Some(iv) => {
                        reach = iv.hi;
                        iv.exit
                    }
                    None => {
                        reach = 0.0;
                        Surface::Face
                    }
                }
            }
        };
        let t = reach.max(0.0);
        match exit {
            Surface::Start => Next::Start { t },
            Surface::End => Next::End { t },
            Surface::Face => match self.coating_reflectance {
                Some(reflectance) => Next::Coated {
                    t,
                    normal: self.face_normal,
                    reflectance,
                },
                None => Next::Wall {
                    t,
                    normal: self.face_normal,
                },
            },
            Surface::Plane(normal) => Next::Wall { t, normal },
            Surface::Cylinder(axis) => {
                let p = o + t * d;
                let normal = (p - p.dot(axis) * axis).normalize();
                Next::Wall { t, normal }
            }
        }
    }

    /// Whether a local point is on the incoming side (nearer the incoming axis's half), split by
    /// the plane through the origin square to t + t'.
    #[inline]
    fn incoming_side(&self, p: DVec3) -> bool {
        p.dot(DVec3::Z + self.out_axis) < 0.0
    }

    /// Position along the centre line of a local point, mm from the corner's start (clamped to
    /// the corner): ℓ plus its place along the incoming or the outgoing axis.
    pub fn along_mm(&self, p: DVec3) -> f64 {
        let s = if self.incoming_side(p) {
            p.z
        } else {
            p.dot(self.out_axis)
        };
        (self.leg + s).clamp(0.0, 2.0 * self.leg)
    }

    /// A local point's offsets from the nearer leg's axis along that leg's width and height
    /// axes, mm.
    pub fn section_coordinates(&self, p: DVec3) -> (f64, f64) {
        if self.incoming_side(p) {
            (p.x, p.y)
        } else {
            (p.dot(self.out_x), p.dot(self.out_y))
        }
    }

    /// How far outside the corner a local point lies (≤ 0 inside), mm: for each leg the largest
    /// excess over its bounds (face, cap, walls), and the smaller of the two legs'.
    pub fn outside_mm(&self, round: bool, p: DVec3) -> f64 {
        let leg = |x: DVec3, y: DVec3, cap: f64| {
            let (px, py) = (p.dot(x), p.dot(y));
            let side = if round {
                (px * px + py * py).sqrt() - self.hw
            } else {
                (px.abs() - self.hw).max(py.abs() - self.hh)
            };
            side.max(p.dot(self.face_normal)).max(cap - self.leg)
        };
        let a = leg(DVec3::X, DVec3::Y, -p.z);
        let b = leg(self.out_x, self.out_y, p.dot(self.out_axis));
        a.min(b)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn right_angle() -> Corner {
        Corner::new(std::f64::consts::FRAC_PI_2, DVec3::X, 1.0, 1.0, 0.5, None)
    }

    #[test]
    fn leg_is_the_half_size_for_a_right_angle_and_grows_either_way() {
        assert!((corner_leg_mm(1.5, 90.0) - 1.5).abs() < 1e-12);
        // cot 15° = tan 75° = 2 + √3 (from memory: exact trigonometric values).
        let k = 2.0 + 3f64.sqrt();
        assert!((corner_leg_mm(1.0, 30.0) - k).abs() < 1e-12);
        assert!((corner_leg_mm(1.0, 150.0) - k).abs() < 1e-12);
    }

    #[test]
    fn face_is_the_mirror_taking_the_incoming_axis_to_the_outgoing_one() {
        for deg in [15.0, 30.0, 90.0, 120.0, 165.0] {
            let rad: f64 = f64::to_radians(deg);
            let u = DVec3::new(libm::cos(0.7), libm::sin(0.7), 0.0);
            let c = Corner::new(rad, u, 1.0, 1.0, 1.0, None);
            let m = c.face_normal;
            let mirrored = DVec3::Z - 2.0 * DVec3::Z.dot(m) * m;
            assert!((mirrored - c.out_axis).length() < 1e-12, "{deg}");
            // The axial ray meets the face at 90° − θ/2.
            let incidence = libm::acos(DVec3::Z.dot(m)).to_degrees();
            assert!((incidence - (90.0 - deg / 2.0)).abs() < 1e-9, "{deg}");
        }
    }

    #[test]
    fn axial_ray_meets_the_face_then_leaves_along_the_outgoing_axis() {
        let c = right_angle();
        // Along the axis from the start plane: the face at the origin.
        let next = c.next(false, DVec3::new(0.0, 0.0, -1.0), DVec3::Z);
        let Next::Wall { t, normal } = next else {
            panic!("{next:?}")
        };
        assert!((t - 1.0).abs() < 1e-12);
        assert!((normal - c.face_normal).length() < 1e-12);
        // Reflected: along +x, to the end plane x = 1.
        let next = c.next(false, DVec3::ZERO, DVec3::X);
        assert_eq!(next, Next::End { t: 1.0 });
    }

    #[test]
    fn a_ray_past_the_inner_side_meets_the_outgoing_legs_outer_wall() {
        // Rectangular, right angle towards +x, half-width 1, legs of 3 mm: from near the inner
        // wall heading up and right, the ray crosses into the outgoing leg below the face's end
        // (1, 1) and meets that leg's outer wall z = 1 (outward normal +z) at x = 1.4.
        let c = Corner::new(std::f64::consts::FRAC_PI_2, DVec3::X, 3.0, 1.0, 0.5, None);
        let o = DVec3::new(0.8, 0.0, -1.0);
        let d = DVec3::new(0.3, 0.0, 1.0).normalize();
        let next = c.next(false, o, d);
        let Next::Wall { t, normal } = next else {
            panic!("{next:?}")
        };
        let p = o + t * d;
        assert!(
            (p.z - 1.0).abs() < 1e-12 && (p.x - 1.4).abs() < 1e-12,
            "{p}"
        );
        assert!((normal - DVec3::Z).length() < 1e-12);
    }

    /// Every hit lies on the corner's boundary and the path to it inside, for rays from points
    /// inside in every direction, round and rectangular, for several turns.
    #[test]
    fn hits_lie_on_the_boundary_with_the_path_inside() {
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        let mut next_u = || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        for round in [true, false] {
            for deg in [20.0, 60.0, 90.0, 135.0, 160.0] {
                let (hw, hh) = if round { (0.8, 0.8) } else { (0.8, 0.5) };
                let leg = corner_leg_mm(hw, deg);
                let c = Corner::new(f64::to_radians(deg), DVec3::X, leg, hw, hh, None);
                let mut checked = 0;
                while checked < 400 {
                    let p = DVec3::new(
                        (2.0 * next_u() - 1.0) * 2.0 * leg,
                        (2.0 * next_u() - 1.0) * hh,
                        (2.0 * next_u() - 1.0) * 2.0 * leg,
                    );
                    if c.outside_mm(round, p) > -1e-6 {
                        continue;
                    }
                    let d = DVec3::new(
                        2.0 * next_u() - 1.0,
                        2.0 * next_u() - 1.0,
                        2.0 * next_u() - 1.0,
                    )
                    .normalize();
                    let t = c.next(round, p, d).t();
                    let hit = p + t * d;
                    assert!(c.outside_mm(round, hit).abs() < 1e-9, "{deg} {p} {d} {t}");
                    for k in 1..20 {
                        let q = p + (t * k as f64 / 20.0) * d;
                        assert!(c.outside_mm(round, q) < 1e-9, "{deg} {p} {d} {k}");
                    }
                    checked += 1;
                }
            }
        }
    }
}
