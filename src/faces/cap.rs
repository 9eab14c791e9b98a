//! The end cap: the solid a domed or cut face adds beyond the end plane, and exact ray
//! intersections with it.
//!
//! Face frame: origin at the centre of the end plane, z along the guide's axis pointing away
//! from the guide (out of the exit face; towards the LED at the entry), x along the section's
//! width axis, y along its height axis. The cap is the intersection of convex solids — the
//! half-space z ≥ 0, the section's outline carried on along z (a cylinder, or two slabs), and
//! the ball of the dome or the half-space under the cut — so it is convex and a ray meets it in
//! one interval: the largest entering distance and the smallest leaving distance over the
//! solids (the slab method of ray–box intersection, extended to a ball and a cylinder). Which
//! solid gives that distance says which boundary is met: the end plane (back into the route),
//! the face, or the continued side wall.

use glam::DVec3;

use super::{rim_radius_mm, Face};
use crate::scenario::Section;

/// The curved or tilted surface of a shaped face, in the face frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Surface {
    /// A sphere of radius `radius_mm` centred on the axis at z = `centre_z_mm` (≤ 0): the cap
    /// is inside it.
    Sphere {
        /// Centre on the axis, mm (below the end plane).
        centre_z_mm: f64,
        /// Radius of curvature, mm.
        radius_mm: f64,
    },
    /// A plane n·p = `offset_mm` with outward unit normal n: the cap is on the side n·p ≤ offset.
    Plane {
        /// Outward unit normal.
        normal: DVec3,
        /// n·p on the plane, mm.
        offset_mm: f64,
    },
}

/// Which boundary of the cap a ray meets.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Boundary {
    /// The end plane z = 0, shared with the route's first or last segment.
    EndPlane,
    /// The shaped face.
    Face,
    /// The section's side wall carried on beyond the end plane.
    Side,
}

/// Where a ray meets the cap's boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hit {
    /// Distance along the ray, mm.
    pub t: f64,
    /// The boundary met.
    pub boundary: Boundary,
    /// The boundary's unit normal there, pointing out of the cap.
    pub normal: DVec3,
}

/// The end cap of a domed or cut face.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EndCap {
    /// Round (true) or rectangular section.
    pub round: bool,
    /// Half-sizes of the section (width, height), mm.
    pub half_mm: (f64, f64),
    /// The face surface.
    pub surface: Surface,
}

/// One solid's interval along a ray: from `lo` (entering, outward normal `n_lo`) to `hi`
/// (leaving, outward normal `n_hi`); `None` when the ray never is inside it.
type Interval = Option<(f64, Boundary, DVec3, f64, Boundary, DVec3)>;

const ALL: Interval = Some((
    f64::NEG_INFINITY,
    Boundary::Side,
    DVec3::ZERO,
    f64::INFINITY,
    Boundary::Side,
    DVec3::ZERO,
));

impl EndCap {
    /// The cap of `face` on a guide of section `section`; `None` for a face with no cap (flat
    /// or textured).
    ///
    /// A dome of radius R over a rim of radius a (the section's radius, or half its diagonal)
    /// has its centre on the axis at z = −√(R² − a²), so that it meets the end plane on the rim;
    /// it needs R > a. A cut at angle α passes through the −height edge (y = −h) of the end
    /// plane with outward normal (0, −sin α, cos α): z = (y + h) tan α.
    pub fn new(face: Face, section: Section) -> Option<EndCap> {
        let round = matches!(section, Section::Round { .. });
        let half_mm = section.half_sizes_mm();
        let surface = match face {
            Face::Flat | Face::Textured { .. } | Face::Pocket { .. } => return None,
            Face::Dome { radius_mm } => {
                let a = rim_radius_mm(section);
                Surface::Sphere {
                    centre_z_mm: -(radius_mm * radius_mm - a * a).max(0.0).sqrt(),
                    radius_mm,
                }
            }
            Face::Cut { angle_deg } => {
                let alpha = angle_deg.to_radians();
                let (s, c) = (libm::sin(alpha), libm::cos(alpha));
                Surface::Plane {
                    normal: DVec3::new(0.0, -s, c),
                    offset_mm: half_mm.1 * s,
                }
            }
        };
        Some(EndCap {
            round,
            half_mm,
            surface,
        })
    }

    /// How far the face stands beyond the end plane at its highest point, mm: R − √(R² − a²)
    /// for a dome, 2h tan α for a cut.
    pub fn height_mm(&self) -> f64 {
        match self.surface {
            Surface::Sphere {
                centre_z_mm,
                radius_mm,
            } => radius_mm + centre_z_mm,
            Surface::Plane { .. } => self.face_z_mm(0.0, self.half_mm.1),
        }
    }

    /// The face's height above the end plane at (x, y) of the section, mm (for drawing; never
    /// below 0).
    pub fn face_z_mm(&self, x: f64, y: f64) -> f64 {
        let z = match self.surface {
            Surface::Sphere {
                centre_z_mm,
                radius_mm,
            } => centre_z_mm + (radius_mm * radius_mm - x * x - y * y).max(0.0).sqrt(),
            Surface::Plane { normal, offset_mm } => (offset_mm - normal.y * y) / normal.z,
        };
        z.max(0.0)
    }

    /// Where a ray at `o` (inside the cap, or on its boundary heading in) with unit direction
    /// `d` leaves the cap: the nearest leaving distance over the solids (never below 0).
    pub fn leave(&self, o: DVec3, d: DVec3) -> Hit {
        let mut best = Hit {
            t: f64::INFINITY,
            boundary: Boundary::Face,
            normal: DVec3::Z,
        };
        for iv in self.intervals(o, d) {
            // A ray inside every solid is in each interval; a solid the ray misses altogether
            // (only by rounding, for a start on its boundary) has no say.
            let (hi, b, n) = match iv {
                Some((_, _, _, hi, b, n)) => (hi, b, n),
                None => continue,
            };
            if hi < best.t {
                best = Hit {
                    t: hi.max(0.0),
                    boundary: b,
                    normal: n,
                };
            }
        }
        if !best.t.is_finite() {
            // Only a ray along the face's own plane or exactly on a rim gets here.
            best.t = 0.0;
        }
        best
    }

    /// Where a ray at `o` outside the cap with unit direction `d` enters it, if it does: the
    /// largest entering distance over the solids, when it is below the smallest leaving one.
    pub fn enter(&self, o: DVec3, d: DVec3) -> Option<Hit> {
        let mut lo = f64::NEG_INFINITY;
        let mut hi = f64::INFINITY;
        let mut hit = None;
        for iv in self.intervals(o, d) {
            let (l, bl, nl, h, _, _) = iv?;
            if l > lo {
                lo = l;
                hit = Some(Hit {
                    t: l,
                    boundary: bl,
                    normal: nl,
                });
            }
            hi = hi.min(h);
        }
        hit.filter(|h| h.t >= 0.0 && h.t < hi)
    }

    /// The ray's interval in each of the cap's solids: the end plane's half-space, the side
    /// (one cylinder, or the width and height slabs) and the face's ball or half-space.
    fn intervals(&self, o: DVec3, d: DVec3) -> [Interval; 4] {
        let (hw, hh) = self.half_mm;
        let end = half_space(o, d, -DVec3::Z, 0.0, Boundary::EndPlane);
        let face = match self.surface {
            Surface::Sphere {
                centre_z_mm,
                radius_mm,
            } => ball(o, d, DVec3::new(0.0, 0.0, centre_z_mm), radius_mm),
            Surface::Plane { normal, offset_mm } => {
                half_space(o, d, normal, offset_mm, Boundary::Face)
            }
        };
        if self.round {
            [end, face, cylinder(o, d, hw), ALL]
        } else {
            [
                end,
                face,
                slab(o, d, DVec3::X, hw),
                slab(o, d, DVec3::Y, hh),
            ]
        }
    }
}

/// The half-space n·p ≤ c (outward unit normal n).
fn half_space(o: DVec3, d: DVec3, n: DVec3, c: f64, b: Boundary) -> Interval {
    let s = n.dot(d);
    let gap = c - n.dot(o);
    if s > 0.0 {
        Some((f64::NEG_INFINITY, b, n, gap / s, b, n))
    } else if s < 0.0 {
        Some((gap / s, b, n, f64::INFINITY, b, n))
    } else if gap >= 0.0 {
        ALL
    } else {
        None
    }
}

/// The slab |p·a| ≤ h along unit axis a.
fn slab(o: DVec3, d: DVec3, a: DVec3, h: f64) -> Interval {
    let (pa, da) = (o.dot(a), d.dot(a));
    if da == 0.0 {
        return if pa.abs() <= h { ALL } else { None };
    }
    let (t1, t2) = ((-h - pa) / da, (h - pa) / da);
    let (n1, n2) = (-a, a);
    if da > 0.0 {
        Some((t1, Boundary::Side, n1, t2, Boundary::Side, n2))
    } else {
        Some((t2, Boundary::Side, n2, t1, Boundary::Side, n1))
    }
}

/// The ball |p − centre| ≤ r: t² + 2bt + c = 0 with b = Δ·d, c = |Δ|² − r², Δ = o − centre;
/// the root nearer 0 from c/q with q the farther one (no cancellation when the ray starts on the
/// sphere).
fn ball(o: DVec3, d: DVec3, centre: DVec3, r: f64) -> Interval {
    let delta = o - centre;
    let b = delta.dot(d);
    let c = delta.length_squared() - r * r;
    let disc = b * b - c;
    if disc < 0.0 {
        return None;
    }
    let sq = disc.sqrt();
    let (lo, hi) = if b < 0.0 {
        let hi = -b + sq;
        (c / hi, hi)
    } else {
        let lo = -b - sq;
        (lo, if lo != 0.0 { c / lo } else { 0.0 })
    };
    let normal = |t: f64| (o + t * d - centre) / r;
    Some((
        lo,
        Boundary::Face,
        normal(lo),
        hi,
        Boundary::Face,
        normal(hi),
    ))
}

/// The infinite cylinder x² + y² ≤ r² about the z axis.
fn cylinder(o: DVec3, d: DVec3, r: f64) -> Interval {
    let a = d.x * d.x + d.y * d.y;
    let c = o.x * o.x + o.y * o.y - r * r;
    if a == 0.0 {
        return if c <= 0.0 { ALL } else { None };
    }
    let b = o.x * d.x + o.y * d.y;
    let disc = b * b - a * c;
    if disc < 0.0 {
        return None;
    }
    let sq = disc.sqrt();
    let (lo, hi) = ((-b - sq) / a, (-b + sq) / a);
    let normal = |t: f64| {
        let p = o + t * d;
        DVec3::new(p.x, p.y, 0.0) / r
    };
    Some((
        lo,
        Boundary::Side,
        normal(lo),
        hi,
        Boundary::Side,
        normal(hi),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dome(radius_mm: f64, diameter_mm: f64) -> EndCap {
        EndCap::new(Face::Dome { radius_mm }, Section::Round { diameter_mm }).unwrap()
    }

    #[test]
    fn a_dome_meets_the_end_plane_on_the_rim() {
        let cap = dome(2.0, 3.0);
        // Sag of a sphere of radius 2 over a rim of radius 1.5: 2 − √(4 − 2.25).
        assert!((cap.height_mm() - (2.0 - 1.75_f64.sqrt())).abs() < 1e-12);
        assert!(cap.face_z_mm(1.5, 0.0).abs() < 1e-12);
    }

    #[test]
    fn an_axial_ray_leaves_a_dome_at_its_vertex() {
        let cap = dome(2.0, 3.0);
        let hit = cap.leave(DVec3::ZERO, DVec3::Z);
        assert_eq!(hit.boundary, Boundary::Face);
        assert!((hit.t - cap.height_mm()).abs() < 1e-12);
        assert!((hit.normal - DVec3::Z).length() < 1e-12);
    }

    #[test]
    fn a_ray_heading_back_leaves_through_the_end_plane() {
        let cap = dome(2.0, 3.0);
        let hit = cap.leave(DVec3::new(0.2, 0.1, 0.1), -DVec3::Z);
        assert_eq!(hit.boundary, Boundary::EndPlane);
        assert!((hit.t - 0.1).abs() < 1e-12);
    }

    #[test]
    fn a_cut_face_rises_from_one_edge_and_the_side_wall_rises_with_it() {
        let section = Section::Rectangular {
            width_mm: 4.0,
            height_mm: 2.0,
        };
        let cap = EndCap::new(Face::Cut { angle_deg: 30.0 }, section).unwrap();
        let tan30 = libm::tan(30f64.to_radians());
        assert!((cap.height_mm() - 2.0 * tan30).abs() < 1e-12);
        // A ray along +y near the end plane leaves through the side wall at y = 1.
        let hit = cap.leave(DVec3::new(0.0, 0.0, 0.05), DVec3::Y);
        assert_eq!(hit.boundary, Boundary::Side);
        assert!((hit.t - 1.0).abs() < 1e-12);
        assert!((hit.normal - DVec3::Y).length() < 1e-12);
        // From outside, a ray down the axis enters the cut face at z = h tan α.
        let hit = cap.enter(DVec3::new(0.0, 0.0, 5.0), -DVec3::Z).unwrap();
        assert_eq!(hit.boundary, Boundary::Face);
        assert!((hit.t - (5.0 - tan30)).abs() < 1e-12);
        // One passing beside it misses.
        assert!(cap.enter(DVec3::new(2.5, 0.0, 5.0), -DVec3::Z).is_none());
    }
}
