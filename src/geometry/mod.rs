//! Geometry of a routed guide: segments placed along the route, each with its own local frame,
//! and exact ray–wall and ray–end-plane intersections in that frame.
//!
//! Global frame: the entry face is centred at the origin, the guide starts along +z, its width
//! axis along +x and its height axis along +y. Lengths in mm.

pub mod roots;

use glam::DVec3;

use crate::scenario::{bend_half_size_mm, Section, Segment};

/// An orthonormal frame: origin and axes, all in global coordinates.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Frame {
    /// Origin.
    pub origin: DVec3,
    /// Local x axis.
    pub x: DVec3,
    /// Local y axis.
    pub y: DVec3,
    /// Local z axis.
    pub z: DVec3,
}

impl Frame {
    /// A global point in local coordinates.
    #[inline]
    pub fn point_to_local(&self, p: DVec3) -> DVec3 {
        self.dir_to_local(p - self.origin)
    }
    /// A global direction in local coordinates.
    #[inline]
    pub fn dir_to_local(&self, d: DVec3) -> DVec3 {
        DVec3::new(d.dot(self.x), d.dot(self.y), d.dot(self.z))
    }
    /// A local point in global coordinates.
    #[inline]
    pub fn point_to_global(&self, q: DVec3) -> DVec3 {
        self.origin + self.dir_to_global(q)
    }
    /// A local direction in global coordinates.
    #[inline]
    pub fn dir_to_global(&self, d: DVec3) -> DVec3 {
        d.x * self.x + d.y * self.y + d.z * self.z
    }
}

/// The shape of a placed segment, in its local frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// A straight or tapered run along local z from 0 to `length`; half-sizes along x and y
    /// grow linearly: `hw0 + kw z`, `hh0 + kh z`.
    Axial {
        /// Length, mm.
        length: f64,
        /// Half-width at z = 0, mm.
        hw0: f64,
        /// Half-height at z = 0, mm.
        hh0: f64,
        /// d(half-width)/dz.
        kw: f64,
        /// d(half-height)/dz.
        kh: f64,
    },
    /// A circular bend about local z: the centre line is the circle of radius `rc` in the xy
    /// plane from angle 0 (on +x, heading +y) to `phi`.
    Bend {
        /// Centre-line radius, mm.
        rc: f64,
        /// Bend angle, rad.
        phi: f64,
        /// Half-size across the bend (radial), mm.
        radial_half: f64,
        /// Half-size along the bend axis (local z), mm.
        axial_half: f64,
        /// The section's width axis at angle 0, in local coordinates.
        width_axis: DVec3,
        /// The section's height axis at angle 0, in local coordinates.
        height_axis: DVec3,
        /// sin(phi), cached.
        sin_phi: f64,
        /// cos(phi), cached.
        cos_phi: f64,
    },
}

/// A route segment placed in space.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placed {
    /// The shape in local coordinates.
    pub shape: Shape,
    /// Round (true) or rectangular section.
    pub round: bool,
    /// The local frame.
    pub frame: Frame,
    /// Arc length along the route at the segment's start, mm.
    pub s_start_mm: f64,
    /// Centre-line length, mm.
    pub length_mm: f64,
}

/// What a ray inside a segment meets first.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Next {
    /// The side wall at distance `t`, with the outward unit normal there (local).
    Wall {
        /// Distance along the ray, mm.
        t: f64,
        /// Outward unit normal, local coordinates.
        normal: DVec3,
    },
    /// The segment's start plane (going back) at distance `t`.
    Start {
        /// Distance along the ray, mm.
        t: f64,
    },
    /// The segment's end plane (going on) at distance `t`.
    End {
        /// Distance along the ray, mm.
        t: f64,
    },
}

/// The route placed in space, plus the entry and exit frames.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedRoute {
    /// Segments in route order.
    pub segments: Vec<Placed>,
    /// Frame of the exit face: centred on it, z along the outgoing axis, x/y along the section's
    /// width/height axes.
    pub exit_frame: Frame,
    /// Section at the exit face.
    pub exit_section: Section,
    /// Total centre-line length, mm.
    pub length_mm: f64,
}

/// Rotate `v` about the unit axis `k` by `angle` (Rodrigues).
fn rotate(v: DVec3, k: DVec3, angle: f64) -> DVec3 {
    let (s, c) = (libm::sin(angle), libm::cos(angle));
    v * c + k.cross(v) * s + k * k.dot(v) * (1.0 - c)
}

impl PlacedRoute {
    /// Place a validated route (see [`crate::scenario::Scenario::check`]).
    pub fn new(start: Section, route: &[Segment]) -> PlacedRoute {
        let mut p = DVec3::ZERO;
        let (mut t, mut n, mut b) = (DVec3::Z, DVec3::X, DVec3::Y);
        let mut section = start;
        let mut s = 0.0;
        let mut segments = Vec::with_capacity(route.len());
        for seg in route {
            let round = matches!(section, Section::Round { .. });
            let (hw, hh) = section.half_sizes_mm();
            let length_mm = seg.length_mm();
            let placed = match *seg {
                Segment::Straight { length_mm } | Segment::Taper { length_mm, .. } => {
                    let end = match *seg {
                        Segment::Taper { end_section, .. } => end_section,
                        _ => section,
                    };
                    let (hw1, hh1) = end.half_sizes_mm();
                    let frame = Frame {
                        origin: p,
                        x: n,
                        y: b,
                        z: t,
                    };
                    p += length_mm * t;
                    section = end;
                    Placed {
                        shape: Shape::Axial {
                            length: length_mm,
                            hw0: hw,
                            hh0: hh,
                            kw: (hw1 - hw) / length_mm,
                            kh: (hh1 - hh) / length_mm,
                        },
                        round,
                        frame,
                        s_start_mm: s,
                        length_mm,
                    }
                }
                Segment::Bend {
                    radius_mm,
                    angle_deg,
                    turn_deg,
                } => {
                    let psi = turn_deg.to_radians();
                    let u = libm::cos(psi) * n + libm::sin(psi) * b;
                    let axis = t.cross(u);
                    let frame = Frame {
                        origin: p + radius_mm * u,
                        x: -u,
                        y: t,
                        z: axis,
                    };
                    let radial_half = bend_half_size_mm(section, turn_deg).unwrap_or(hw);
                    let across_width = libm::cos(psi).abs() > 0.5;
                    let axial_half = if round || !across_width { hw } else { hh };
                    let phi = angle_deg.to_radians();
                    let placed = Placed {
                        shape: Shape::Bend {
                            rc: radius_mm,
                            phi,
                            radial_half,
                            axial_half,
                            width_axis: frame.dir_to_local(n),
                            height_axis: frame.dir_to_local(b),
                            sin_phi: libm::sin(phi),
                            cos_phi: libm::cos(phi),
                        },
                        round,
                        frame,
                        s_start_mm: s,
                        length_mm,
                    };
                    p = frame.point_to_global(DVec3::new(
                        radius_mm * libm::cos(phi),
                        radius_mm * libm::sin(phi),
                        0.0,
                    ));
                    t = rotate(t, axis, phi);
                    n = rotate(n, axis, phi);
                    b = rotate(b, axis, phi);
                    placed
                }
            };
            s += length_mm;
            segments.push(placed);
        }
        PlacedRoute {
            segments,
            exit_frame: Frame {
                origin: p,
                x: n,
                y: b,
                z: t,
            },
            exit_section: section,
            length_mm: s,
        }
    }
}

/// Smallest t > 0 at which the ray o + t d leaves the region q(t) < 0 of the quadratic
/// q = a t² + 2 b t + c (crossing with q' > 0), subject to `valid(t)`.
#[inline]
fn quadratic_exit(a: f64, b: f64, c: f64, valid: impl Fn(f64) -> bool) -> Option<f64> {
    let mut best: Option<f64> = None;
    if a.abs() < 1e-300 {
        if b > 0.0 {
            let t = -c / (2.0 * b);
            if t > 0.0 && valid(t) {
                best = Some(t);
            }
        }
        return best;
    }
    let disc = b * b - a * c;
    if disc < 0.0 {
        return None;
    }
    let q = -(b + b.signum() * disc.sqrt());
    let roots = if q != 0.0 { [q / a, c / q] } else { [0.0, 0.0] };
    for t in roots {
        // Outgoing where the derivative 2(a t + b) is positive.
        if t > 0.0 && a * t + b > 0.0 && valid(t) && best.is_none_or(|x| t < x) {
            best = Some(t);
        }
    }
    best
}

/// `sq − r2`, the constant term of a ray–cylinder (or cone) quadratic, but exactly 0 when it is
/// within the rounding of a computed point (a few ε·(sq + r2)): a start on the wall after a
/// reflection. Otherwise a start that rounds to just outside, heading in at a grazing angle
/// (below ~1e-8 rad), makes the discriminant negative: the ray seems to miss the wall it is
/// on and walks out through it.
#[inline]
fn on_wall_snap(sq: f64, r2: f64) -> f64 {
    let c = sq - r2;
    if c.abs() <= 16.0 * f64::EPSILON * (sq + r2) {
        0.0
    } else {
        c
    }
}

/// First t > 0 at which the ray enters the region q(t) < 0 from outside (q' < 0).
#[inline]
fn quadratic_entry(a: f64, b: f64, c: f64) -> Option<f64> {
    let disc = b * b - a * c;
    if a <= 0.0 || disc < 0.0 {
        return None;
    }
    let q = -(b + b.signum() * disc.sqrt());
    if q == 0.0 {
        return None;
    }
    let (r1, r2) = (q / a, c / q);
    let t = r1.min(r2);
    (t > 0.0 && a * t + b < 0.0).then_some(t)
}

impl Placed {
    /// What the ray (local origin `o`, local unit direction `d`) meets first inside this
    /// segment. The ray must be inside the guide (or on its wall heading inwards).
    #[inline]
    pub fn next(&self, o: DVec3, d: DVec3) -> Next {
        match self.shape {
            Shape::Axial {
                length,
                hw0,
                hh0,
                kw,
                kh,
            } => {
                // End planes z = 0 and z = length.
                let mut best = if d.z > 0.0 {
                    Next::End {
                        t: (length - o.z) / d.z,
                    }
                } else if d.z < 0.0 {
                    Next::Start { t: -o.z / d.z }
                } else {
                    Next::End { t: f64::INFINITY }
                };
                let t_end = next_t(best);
                if self.round {
                    // Cone (cylinder when k = 0): x² + y² = (a0 + k z)².
                    let (a0, k) = (hw0, kw);
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
                } else {
                    // Four planes ±x = hw0 + kw z, ±y = hh0 + kh z; leave where the slope is > 0.
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
                        best = Next::Wall { t: t_best, normal };
                    }
                }
                best
            }
            Shape::Bend {
                rc,
                radial_half,
                axial_half,
                sin_phi,
                cos_phi,
                ..
            } => {
                // End planes: angle 0 (half-plane y = 0, x > 0) and angle phi.
                let mut best = Next::End { t: f64::INFINITY };
                if d.y < 0.0 {
                    let t = -o.y / d.y;
                    if o.x + t * d.x > 0.0 {
                        best = Next::Start { t };
                    }
                }
                let (s, c) = (sin_phi, cos_phi);
                let e = DVec3::new(-s, c, 0.0);
                let de = d.dot(e);
                if de > 0.0 {
                    let t = -o.dot(e) / de;
                    let p = o + t * d;
                    if p.x * c + p.y * s > 0.0 && t < next_t(best) {
                        best = Next::End { t };
                    }
                }
                // A ray inside the tube cannot travel further than the bounding sphere.
                let t_hi = next_t(best).min(2.0 * (rc + radial_half.max(axial_half)) + 1.0);
                if self.round {
                    let a = radial_half;
                    if let Some(t) = torus_exit(o, d, rc, a, t_hi) {
                        let p = o + t * d;
                        let rho = (p.x * p.x + p.y * p.y).sqrt();
                        let q = DVec3::new(p.x - rc * p.x / rho, p.y - rc * p.y / rho, p.z);
                        best = Next::Wall {
                            t,
                            normal: q.normalize(),
                        };
                    }
                } else {
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
                    if t_best < next_t(best) {
                        best = Next::Wall { t: t_best, normal };
                    }
                }
                best
            }
        }
    }

    /// Position along the segment's centre line of a local point, mm from the segment's start
    /// (clamped to the segment).
    pub fn along_mm(&self, p: DVec3) -> f64 {
        match self.shape {
            Shape::Axial { length, .. } => p.z.clamp(0.0, length),
            Shape::Bend { rc, phi, .. } => {
                // atan2 lies in (−π, π]: a point at the far end of a 180° bend can come out
                // as −π + ε; only a point just before the start comes out slightly negative.
                let mut theta = libm::atan2(p.y, p.x);
                if theta < -std::f64::consts::FRAC_PI_2 {
                    theta += std::f64::consts::TAU;
                }
                rc * theta.clamp(0.0, phi)
            }
        }
    }

    /// Azimuth of a local point about the centre line, degrees in [0, 360), measured from the
    /// section's width axis towards its height axis.
    pub fn azimuth_deg(&self, p: DVec3) -> f64 {
        let (w, h) = match self.shape {
            Shape::Axial { .. } => (p.x, p.y),
            Shape::Bend {
                rc,
                width_axis,
                height_axis,
                ..
            } => {
                let theta = libm::atan2(p.y, p.x);
                let (s, c) = (libm::sin(theta), libm::cos(theta));
                let rot = |v: DVec3| DVec3::new(c * v.x - s * v.y, s * v.x + c * v.y, v.z);
                let q = p - rc * DVec3::new(c, s, 0.0);
                (q.dot(rot(width_axis)), q.dot(rot(height_axis)))
            }
        };
        libm::atan2(h, w).to_degrees().rem_euclid(360.0)
    }

    /// Signed distance-like test: how far outside the guide wall a local point lies (≤ 0 inside),
    /// mm. Used by tests and guards.
    pub fn outside_mm(&self, p: DVec3) -> f64 {
        match self.shape {
            Shape::Axial {
                hw0, hh0, kw, kh, ..
            } => {
                let (hw, hh) = (hw0 + kw * p.z, hh0 + kh * p.z);
                if self.round {
                    (p.x * p.x + p.y * p.y).sqrt() - hw
                } else {
                    (p.x.abs() - hw).max(p.y.abs() - hh)
                }
            }
            Shape::Bend {
                rc,
                radial_half,
                axial_half,
                ..
            } => {
                let rho = (p.x * p.x + p.y * p.y).sqrt();
                if self.round {
                    libm::hypot(rho - rc, p.z) - radial_half
                } else {
                    ((rho - rc).abs() - radial_half).max(p.z.abs() - axial_half)
                }
            }
        }
    }
}

#[inline]
fn next_t(n: Next) -> f64 {
    match n {
        Next::Wall { t, .. } | Next::Start { t } | Next::End { t } => t,
    }
}

/// Where a ray inside a torus tube (centre-line radius `rc` about local z, tube radius `a`)
/// first leaves it, within (0, t_hi]. Exact: the quartic
/// (|p|² + rc² − a²)² − 4 rc² (x² + y²) = 0 (which has the sign of the distance to the tube
/// minus `a` when rc > a) is solved by root isolation, then polished by Newton steps on the
/// distance function itself, which is better conditioned for large bend radii.
pub fn torus_exit(o: DVec3, d: DVec3, rc: f64, a: f64, t_hi: f64) -> Option<f64> {
    let rc2 = rc * rc;
    let b = o.dot(d);
    let c = o.length_squared() + rc2 - a * a;
    let alpha = d.x * d.x + d.y * d.y;
    let beta = o.x * d.x + o.y * d.y;
    let gamma = o.x * o.x + o.y * o.y;
    // p(0) = c² − 4 rc² γ is the difference of two numbers of size ~4 rc⁴ that nearly cancel
    // near the wall. Computed that way its rounding (~ε·rc⁴) buries the shallow dip of a grazing
    // ray that starts on the wall after a reflection: the sign of p near t = 0 is lost and the
    // exit just after it is missed (the ray walks out through the wall). So p(0) comes from the
    // exact factorisation g(0)·h(0), g = (ρ − rc)² + z² − a² = D (D + 2a) with D the distance
    // to the wall, h = (ρ + rc)² + z² − a²; and a start within rounding of the wall (D no larger
    // than a few ε·(rc + a), what a computed hit point carries) is taken as exactly on it, p(0) = 0:
    // otherwise a start that rounds to just outside, heading in at a grazing angle whose dip is
    // shallower than that rounding, never seems to enter and so never to leave.
    let rho0 = gamma.sqrt();
    let dist0 = ((rho0 - rc) * (rho0 - rc) + o.z * o.z).sqrt() - a;
    let p0 = if dist0.abs() <= 64.0 * f64::EPSILON * (rc + a) {
        0.0
    } else {
        dist0 * (dist0 + 2.0 * a) * ((rho0 + rc) * (rho0 + rc) + o.z * o.z - a * a)
    };
    if p0 == 0.0 {
        // On the wall: p'(0) = g'(0)·h(0) exactly (g(0) = 0), with h(0) = 4 rc ρ₀ there, so
        // p'(0) = 8 rc ((ρ₀ − rc) β + ρ₀ z₀ d_z): accurate even for a grazing ray, where the
        // expanded coefficient 4bc − 8rc²β cancels to noise.
        let dp0 = 8.0 * rc * ((rho0 - rc) * beta + rho0 * o.z * d.z);
        if dp0 < 0.0 {
            // Heading in (every reflected ray): the exit is the first positive root of the
            // cubic p(t)/t. On the wall c = |o|² + rc² − a² = 2 rc ρ₀, also exactly.
            let b2 = 4.0 * (b * b + rc * rho0 - rc2 * alpha);
            // First guess: g(t) = (ρ − rc)² + z² − a² ≈ g'(0) t + g''(0) t²/2 with g(0) = 0,
            // so t ≈ −2 g'(0)/g''(0); ρ' = β/ρ, ρ'' = (α − ρ'²)/ρ.
            let drho = beta / rho0;
            let e = rho0 - rc;
            let dg = e * drho + o.z * d.z;
            let ddg = drho * drho + e * (alpha - drho * drho) / rho0 + d.z * d.z;
            return cubic_exit(4.0 * b, b2, dp0, -2.0 * dg / ddg, rc + a, t_hi);
        }
    }
    let coeffs = [
        p0,
        4.0 * b * c - 8.0 * rc2 * beta,
        4.0 * b * b + 2.0 * c - 4.0 * rc2 * alpha,
        4.0 * b,
        1.0,
    ];
    let (lo, hi, pa, convex) = match roots::first_upcrossing_bracket(&coeffs, 0.0, t_hi)? {
        roots::Upcrossing::At(t) => return Some(t),
        roots::Upcrossing::Between { a, b, pa, convex } => (a, b, pa, convex),
    };
    // Find the crossing by safeguarded Halley iteration on g(t) = (ρ − rc)² + z² − a², which has
    // the sign of the quartic but is far closer to quadratic, so it converges in a few steps from
    // anywhere in the bracket (the quartic's own Newton crawls from a far end). Along the ray
    // ρ² = α t² + 2β t + γ, so ρ' = (α t + β)/ρ and ρ'' = (α − ρ'²)/ρ: g and its first two
    // derivatives cost one square root and one division.
    let a2 = a * a;
    let g = |t: f64| {
        let p = o + t * d;
        let rho = (p.x * p.x + p.y * p.y).sqrt();
        let inv = 1.0 / rho;
        let drho = (p.x * d.x + p.y * d.y) * inv;
        let e = rho - rc;
        let g = e * e + p.z * p.z - a2;
        let dg = 2.0 * (e * drho + p.z * d.z);
        let ddg = 2.0 * (drho * drho + e * (alpha - drho * drho) * inv + d.z * d.z);
        (g, dg, ddg)
    };
    let (mut g_lo, dg_lo, ddg_lo) = g(lo);
    // A start snapped onto the wall (p(0) = 0 above) is on it: g(0) computed there is rounding
    // noise, and a positive one would make g seem to disagree with the quartic at a start that
    // only rounds to outside. Measure g from that level instead (as if exactly on the wall).
    let shift = if lo == 0.0 && p0 == 0.0 && g_lo > 0.0 {
        g_lo
    } else {
        0.0
    };
    g_lo -= shift;
    let g_hi = g(hi).0 - shift;
    if !(g_lo <= 0.0 && g_hi > 0.0) {
        // g and the quartic disagree on a sign within rounding: stay with the quartic.
        return Some(roots::polish_quartic(&coeffs, lo, hi, pa, convex));
    }
    let (mut l, mut h) = (lo, hi);
    let tol = 1e-15 * (rc + a);
    // Start from the up-crossing of g's own second-order Taylor model at the bracket start: along
    // a chord of the tube g is nearly quadratic, so this lands within a hair of the root.
    let mut t = if convex { hi } else { lo };
    let disc = dg_lo * dg_lo - 2.0 * ddg_lo * g_lo;
    if ddg_lo > 0.0 && disc >= 0.0 {
        let guess = lo + (-dg_lo + disc.sqrt()) / ddg_lo;
        if guess > l && guess < h {
            t = guess;
        }
    }
    for _ in 0..100 {
        let (gt, dgt, ddgt) = g(t);
        let gt = gt - shift;
        if gt > 0.0 {
            h = t;
        } else {
            l = t;
        }
        // Halley's step (cubic convergence), else Newton's, else bisection: the first that
        // stays inside the bracket.
        let halley = t - 2.0 * gt * dgt / (2.0 * dgt * dgt - gt * ddgt);
        let (next, converging) = if halley > l && halley < h {
            (halley, true)
        } else {
            let newton = t - gt / dgt;
            if newton > l && newton < h {
                (newton, false)
            } else {
                (0.5 * (l + h), false)
            }
        };
        // Halley's error after a step of size s is ~s³/a² (less than the rounding of t once
        // s ≤ 1e-6·a), so `next` is then the root to machine precision.
        let step = (next - t).abs();
        if (converging && step <= 1e-6 * a) || step <= tol || h - l <= tol {
            return Some(next);
        }
        t = next;
    }
    Some(t)
}

/// The exit of a ray that starts on the torus wall heading in: the first positive root of the
/// monic cubic q(t) = t³ + a2 t² + a1 t + a0 = p(t)/t, a0 = p'(0) < 0, within (0, t_hi].
///
/// Root isolation in closed form: q' = 3t² + 2 a2 t + a1 has roots s₁ ≤ s₂ (a local maximum and
/// minimum of q). Since q(0) < 0, the first positive root lies on the rising piece (0, s₁] when
/// s₁ > 0 and q(s₁) > 0 (q is concave there), else on the rising, convex piece (max(s₂, 0), ∞).
/// On that piece q is monotone, so the root is unique and a bracketed Halley iteration (Newton
/// or bisection when a step would leave the bracket) finds it to rounding. `guess` starts it (the
/// caller gives where the tube's distance function's second-order Taylor model at the start
/// crosses zero: exact for a straight tube, within a hair of the root in a bend; anything
/// outside the piece, NaN included, starts from its middle). `size` (rc + a, mm) scales the
/// bracket's width tolerance.
#[inline]
fn cubic_exit(a2: f64, a1: f64, a0: f64, guess: f64, size: f64, t_hi: f64) -> Option<f64> {
    let q = |t: f64| ((t + a2) * t + a1) * t + a0;
    let disc = a2 * a2 - 3.0 * a1;
    let (mut lo, mut hi) = (0.0, t_hi);
    if disc > 0.0 {
        let sq = disc.sqrt();
        let s1 = (-a2 - sq) / 3.0;
        let s2 = (-a2 + sq) / 3.0;
        if s1 > 0.0 && q(s1) > 0.0 {
            hi = hi.min(s1);
        } else {
            lo = s2.max(0.0);
        }
    }
    if lo >= hi || q(hi) <= 0.0 {
        return None;
    }
    let mut t = if guess > lo && guess < hi {
        guess
    } else {
        0.5 * (lo + hi)
    };
    let tol = 4.0 * f64::EPSILON * size;
    for _ in 0..100 {
        let qt = q(t);
        if qt > 0.0 {
            hi = t;
        } else {
            lo = t;
        }
        let q1 = (3.0 * t + 2.0 * a2) * t + a1;
        let q2 = 6.0 * t + 2.0 * a2;
        let halley = t - 2.0 * qt * q1 / (2.0 * q1 * q1 - qt * q2);
        // Halley converges cubically: after a step of relative size s ≤ 1e-6 the error is of
        // order s³·t, below the rounding of t. Near a turning point of q (q' → 0, q ≠ 0) Halley's
        // step also shrinks without a root there, so the Newton step q/q' must be small too.
        // (The test comes before the bracket test: a converged step that rounds onto the
        // bracket's end is not a failure.)
        if (halley - t).abs() <= 1e-6 * t
            && qt.abs() <= 1e-6 * t * q1.abs()
            && halley >= lo
            && halley <= hi
        {
            return Some(halley);
        }
        t = if halley > lo && halley < hi {
            halley
        } else {
            let newton = t - qt / q1;
            if newton > lo && newton < hi {
                newton
            } else {
                0.5 * (lo + hi)
            }
        };
        if hi - lo <= tol {
            return Some(t);
        }
    }
    Some(t)
}
