//! Sampling rays from the source: where on the emitter, and in which direction.
//!
//! The emitter lies in a plane at z = −gap in front of the entry face (global frame), centred at
//! the lateral offset, its axis tilted from +z by `tilt_deg` towards `tilt_toward_deg`.

use std::f64::consts::{FRAC_PI_2, TAU};

use glam::DVec3;

use crate::guide::cos_power_exponent;
use crate::scenario::table::{table_cdf, TABLE_STEPS};
use crate::scenario::{Emitter, EmitterArea, Pattern, Source};

/// Directional law of the emitter, ready for sampling.
#[derive(Debug, Clone, PartialEq)]
enum Law {
    /// cos θ = u^(1/(m+1)) samples I(θ) ∝ cos^m θ (m = 1: Lambertian).
    CosPower { inv_m1: f64 },
    /// Uniform over the cone of half-angle δ: cos θ = 1 − u (1 − cos δ).
    Cone { one_minus_cos: f64 },
    /// Tabulated: inverse of the cumulative of I(θ) sin θ on a fine grid of θ.
    Table { cdf: Vec<f64>, step_rad: f64 },
}

/// A source ready for sampling.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceSampler {
    centre: DVec3,
    e1: DVec3,
    e2: DVec3,
    axis: DVec3,
    area: Area,
    law: Law,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Area {
    Disk { radius: f64 },
    Square { half: f64 },
    Rectangle { half_w: f64, half_h: f64 },
}

impl SourceSampler {
    /// Prepare a validated source.
    pub fn new(source: &Source) -> SourceSampler {
        let (area, law) = match &source.emitter {
            Emitter::Led { area, pattern } => {
                let area = match *area {
                    EmitterArea::Disk { diameter_mm } => Area::Disk {
                        radius: 0.5 * diameter_mm,
                    },
                    EmitterArea::Square { side_mm } => Area::Square {
                        half: 0.5 * side_mm,
                    },
                    EmitterArea::Rectangle {
                        width_mm,
                        height_mm,
                    } => Area::Rectangle {
                        half_w: 0.5 * width_mm,
                        half_h: 0.5 * height_mm,
                    },
                };
                let law = match pattern {
                    Pattern::Lambertian => Law::CosPower { inv_m1: 0.5 },
                    Pattern::HalfIntensity { half_angle_deg } => {
                        let m = cos_power_exponent(half_angle_deg.to_radians());
                        Law::CosPower {
                            inv_m1: 1.0 / (m + 1.0),
                        }
                    }
                    Pattern::Table { points } => table_law(points),
                };
                (area, law)
            }
            Emitter::Beam {
                diameter_mm,
                divergence_half_angle_deg,
            } => (
                Area::Disk {
                    radius: 0.5 * diameter_mm,
                },
                Law::Cone {
                    one_minus_cos: 1.0 - libm::cos(divergence_half_angle_deg.to_radians()),
                },
            ),
        };
        let [axis, e1, e2] = emitter_frame(source);
        SourceSampler {
            centre: DVec3::new(source.offset_mm[0], source.offset_mm[1], -source.gap_mm),
            e1,
            e2,
            axis,
            area,
            law,
        }
    }

    /// How far the emitting area rises above the entry plane z = 0, mm (negative when it lies
    /// wholly in front of it): the centre's z plus the area's reach along z, exact for each shape
    /// (a rectangle's corner `half_w |e1_z| + half_h |e2_z|`; a disk's rim `r √(e1_z² + e2_z²)`).
    pub fn top_z_mm(&self) -> f64 {
        let (a, b) = (self.e1.z.abs(), self.e2.z.abs());
        let reach = match self.area {
            Area::Disk { radius } => radius * (a * a + b * b).sqrt(),
            Area::Square { half } => half * (a + b),
            Area::Rectangle { half_w, half_h } => half_w * a + half_h * b,
        };
        self.centre.z + reach
    }

    /// The greatest distance from `point` to the emitting area, mm: exact for each shape. A
    /// polygon's farthest point is a corner; a disk's is on its rim, at
    /// √(|m|² + r² + 2 r |m∥|) with m the centre's offset from `point` and m∥ its part in the
    /// disk's plane.
    pub fn farthest_from_mm(&self, point: DVec3) -> f64 {
        let m = self.centre - point;
        let corners = |hw: f64, hh: f64| {
            [(-1.0, -1.0), (-1.0, 1.0), (1.0, -1.0), (1.0, 1.0)]
                .iter()
                .map(|(s, t)| (m + s * hw * self.e1 + t * hh * self.e2).length())
                .fold(0.0, f64::max)
        };
        match self.area {
            Area::Disk { radius } => {
                let in_plane = m - m.dot(self.axis) * self.axis;
                (m.length_squared() + radius * radius + 2.0 * radius * in_plane.length()).sqrt()
            }
            Area::Square { half } => corners(half, half),
            Area::Rectangle { half_w, half_h } => corners(half_w, half_h),
        }
    }

    /// One ray: (start point, unit direction), global frame, from four uniform numbers in
    /// [0, 1): two for the point (uniform over the emitting area; e1 carries a rectangle's
    /// width), one for the polar and one for the azimuthal angle about the emitter's axis.
    #[inline]
    pub fn sample(&self, u: [f64; 4]) -> (DVec3, DVec3) {
        let (x, y) = match self.area {
            Area::Disk { radius } => {
                let r = radius * u[0].sqrt();
                let a = TAU * u[1];
                (r * libm::cos(a), r * libm::sin(a))
            }
            Area::Square { half } => (half * (2.0 * u[0] - 1.0), half * (2.0 * u[1] - 1.0)),
            // Uniform over the rectangle: width along e1, height along e2.
            Area::Rectangle { half_w, half_h } => {
                (half_w * (2.0 * u[0] - 1.0), half_h * (2.0 * u[1] - 1.0))
            }
        };
        let pos = self.centre + x * self.e1 + y * self.e2;
        let cos_t = match &self.law {
            // Lambertian (m = 1): the square root, exact and far cheaper than pow.
            Law::CosPower { inv_m1 } if *inv_m1 == 0.5 => (1.0 - u[2]).sqrt(),
            Law::CosPower { inv_m1 } => libm::pow(1.0 - u[2], *inv_m1),
            Law::Cone { one_minus_cos } => 1.0 - u[2] * one_minus_cos,
            Law::Table { cdf, step_rad } => {
                // Invert the piecewise-linear cumulative.
                let i = cdf.partition_point(|&c| c <= u[2]).clamp(1, cdf.len() - 1);
                let (c0, c1) = (cdf[i - 1], cdf[i]);
                let f = if c1 > c0 {
                    (u[2] - c0) / (c1 - c0)
                } else {
                    0.0
                };
                libm::cos(((i - 1) as f64 + f) * step_rad)
            }
        };
        let sin_t = (1.0 - cos_t * cos_t).max(0.0).sqrt();
        let phi = TAU * u[3];
        let dir = cos_t * self.axis + sin_t * (libm::cos(phi) * self.e1 + libm::sin(phi) * self.e2);
        (pos, dir)
    }
}

/// The emitter's axis and its two in-plane axes [axis, e1, e2] (global frame, unit vectors):
/// the axis is +z tilted by `tilt_deg` towards `tilt_toward_deg` (measured from +x towards +y);
/// e1 tilts with the axis in the plane of tilt (it is +x untilted, the direction of a
/// rectangle's width) and e2 = axis × e1 stays perpendicular to that plane.
pub fn emitter_frame(source: &Source) -> [DVec3; 3] {
    let tilt = source.tilt_deg.to_radians();
    let toward = source.tilt_toward_deg.to_radians();
    let (st, ct) = (libm::sin(tilt), libm::cos(tilt));
    let (sa, ca) = (libm::sin(toward), libm::cos(toward));
    let axis = DVec3::new(st * ca, st * sa, ct);
    let e1 = DVec3::new(ct * ca, ct * sa, -st);
    let e2 = axis.cross(e1);
    [axis, e1, e2]
}

fn table_law(points: &[[f64; 2]]) -> Law {
    let step_rad = FRAC_PI_2 / TABLE_STEPS as f64;
    let mut cdf = table_cdf(points);
    let total = cdf[TABLE_STEPS].max(1e-300);
    for c in &mut cdf {
        *c /= total;
    }
    Law::Table { cdf, step_rad }
}
