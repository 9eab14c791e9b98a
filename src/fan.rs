//! A 2D meridional ray fan through a straight–bend–straight guide, for drawings.
//!
//! This is an illustration, not the energy answer: rays launched across the entry face within the
//! launch cone are followed by total internal reflection; a ray meeting a side wall below the
//! critical angle is drawn leaving the guide (refracted by Snell's law) and its path ends there.
//! Partial Fresnel reflection is not followed. Lengths in mm; the guide axis starts along +x at
//! x = 0 and the bend turns towards +y.

use glam::{DVec2, DVec3};
use serde::Serialize;

use crate::interface;
use crate::quick::{Indices, QuickDesign};

/// What became of a drawn ray.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FanFate {
    /// Reached the exit face (or the bounce cap) still inside the guide.
    Guided,
    /// Met a side wall below the critical angle and left the guide.
    Escaped,
}

/// One drawn ray: its path as points (mm) and its fate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FanRay {
    /// Fate of the ray.
    pub fate: FanFate,
    /// Path vertices, mm.
    pub points: Vec<DVec2>,
}

/// The drawing: wall outlines and the ray paths.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fan {
    /// Outlines (outer wall, inner wall, entry face, exit face) as polylines, mm.
    pub walls: Vec<Vec<DVec2>>,
    /// The rays.
    pub rays: Vec<FanRay>,
    /// Bounding box of everything drawn: (min, max), mm.
    pub bounds: (DVec2, DVec2),
}

#[derive(Debug, Clone, Copy)]
enum Wall {
    /// Side wall segment from `a` to `b`.
    Segment { a: DVec2, b: DVec2, exit: bool },
    /// Side wall arc about `centre` of `radius`, from angle `start` counter-clockwise by `span`.
    Arc {
        centre: DVec2,
        radius: f64,
        start: f64,
        span: f64,
    },
}

struct Hit {
    t: f64,
    normal: DVec2,
    exit: bool,
}

fn hit_wall(wall: &Wall, p: DVec2, d: DVec2, t_min: f64) -> Option<Hit> {
    match *wall {
        Wall::Segment { a, b, exit } => {
            // Solve p + t d = a + s (b − a), 0 ≤ s ≤ 1.
            let e = b - a;
            let den = d.perp_dot(e);
            if den.abs() < 1e-300 {
                return None;
            }
            let w = a - p;
            let t = w.perp_dot(e) / den;
            let s = w.perp_dot(d) / den;
            if t > t_min && (-1e-12..=1.0 + 1e-12).contains(&s) {
                Some(Hit {
                    t,
                    normal: e.perp().normalize(),
                    exit,
                })
            } else {
                None
            }
        }
        Wall::Arc {
            centre,
            radius,
            start,
            span,
        } => {
            // |p + t d − c|² = r², d unit: t² + 2 b t + c = 0.
            let o = p - centre;
            let b = o.dot(d);
            let c = o.length_squared() - radius * radius;
            let disc = b * b - c;
            if disc < 0.0 {
                return None;
            }
            let sq = disc.sqrt();
            for t in [-b - sq, -b + sq] {
                if t > t_min {
                    let q = o + t * d;
                    let ang = libm::atan2(q.y, q.x);
                    let rel = (ang - start).rem_euclid(std::f64::consts::TAU);
                    if rel <= span + 1e-12 {
                        return Some(Hit {
                            t,
                            normal: q / radius,
                            exit: false,
                        });
                    }
                }
            }
            None
        }
    }
}

fn sample_arc(centre: DVec2, radius: f64, start: f64, span: f64) -> Vec<DVec2> {
    let n = 48;
    (0..=n)
        .map(|i| {
            let a = start + span * i as f64 / n as f64;
            centre + radius * DVec2::new(libm::cos(a), libm::sin(a))
        })
        .collect()
}

/// Trace `ray_count` meridional rays (at least 2) through the design's bend. The design must
/// have passed [`QuickDesign::check`], which returned `ix`.
pub fn bend_fan(design: &QuickDesign, ix: Indices, ray_count: usize) -> Fan {
    let d = design.diameter_mm;
    let r_in = design.bend_inner_radius_mm;
    let r_out = r_in + d;
    let phi = design.bend_angle_deg.to_radians();
    let lead = 3.0 * d;
    let centre = DVec2::new(lead, d + r_in);
    let start = -std::f64::consts::FRAC_PI_2;
    let axis_out = DVec2::new(libm::cos(phi), libm::sin(phi));
    let radial_end = DVec2::new(libm::sin(phi), -libm::cos(phi));
    let in_end = centre + r_in * radial_end;
    let out_end = centre + r_out * radial_end;
    let walls = [
        Wall::Segment {
            a: DVec2::ZERO,
            b: DVec2::new(lead, 0.0),
            exit: false,
        },
        Wall::Segment {
            a: DVec2::new(0.0, d),
            b: DVec2::new(lead, d),
            exit: false,
        },
        Wall::Arc {
            centre,
            radius: r_out,
            start,
            span: phi,
        },
        Wall::Arc {
            centre,
            radius: r_in,
            start,
            span: phi,
        },
        Wall::Segment {
            a: out_end,
            b: out_end + lead * axis_out,
            exit: false,
        },
        Wall::Segment {
            a: in_end,
            b: in_end + lead * axis_out,
            exit: false,
        },
        Wall::Segment {
            a: out_end + lead * axis_out,
            b: in_end + lead * axis_out,
            exit: true,
        },
    ];

    // Outlines for drawing.
    let mut outer = vec![DVec2::ZERO];
    outer.extend(sample_arc(centre, r_out, start, phi));
    outer.push(out_end + lead * axis_out);
    let mut inner = vec![DVec2::new(0.0, d)];
    inner.extend(sample_arc(centre, r_in, start, phi));
    inner.push(in_end + lead * axis_out);
    let outlines = vec![
        outer,
        inner,
        vec![DVec2::ZERO, DVec2::new(0.0, d)],
        vec![out_end + lead * axis_out, in_end + lead * axis_out],
    ];

    // Launch: angles inside the guide from Snell at the flat entry face (not capped at the
    // guiding limit, so over-filled launches show their losses in the lead-in).
    let s =
        (ix.n_launch * libm::sin(design.launch_half_angle_deg.to_radians()) / ix.n_core).min(1.0);
    let theta_in = libm::asin(s);
    let sin_c = ix.n_out / ix.n_core;
    let n = ray_count.max(2);
    let t_min = 1e-9 * d;
    let escape_len = 0.8 * d;
    let mut rays = Vec::with_capacity(n);
    for k in 0..n {
        let f = k as f64 / (n - 1) as f64;
        let mut angle = -theta_in + 2.0 * theta_in * f;
        // Low-discrepancy start heights (golden-ratio sequence), kept off the walls.
        let h = (0.5 + 0.618_033_988_749_895 * k as f64).fract();
        let mut y0 = d * (0.05 + 0.9 * h);
        if k == 0 || k == n - 1 {
            // The two edge rays are aimed to reach the bend's start on its inner wall: with the
            // steepest angle that is the ray the bend criterion is decided by. Unfold the
            // lead-in's reflections: the unfolded height Y = y0 + x tan(angle) must be d at
            // x = lead, then fold Y back into the guide (a triangle wave of period 2d).
            let unfolded = d - libm::tan(angle) * lead;
            let m = unfolded.rem_euclid(2.0 * d);
            let (y, flip) = if m <= d {
                (m, false)
            } else {
                (2.0 * d - m, true)
            };
            y0 = y.clamp(1e-6 * d, d * (1.0 - 1e-6));
            if flip {
                angle = -angle;
            }
        }
        let mut p = DVec2::new(0.0, y0);
        let mut dir = DVec2::new(libm::cos(angle), libm::sin(angle));
        let mut points = vec![p];
        let mut fate = FanFate::Guided;
        for _ in 0..400 {
            let hit = walls
                .iter()
                .filter_map(|w| hit_wall(w, p, dir, t_min))
                .min_by(|a, b| a.t.total_cmp(&b.t));
            let Some(hit) = hit else { break };
            p += hit.t * dir;
            points.push(p);
            if hit.exit {
                break;
            }
            // Orient the normal back into the guide (against the ray).
            let normal = if hit.normal.dot(dir) > 0.0 {
                -hit.normal
            } else {
                hit.normal
            };
            let cos_i = -dir.dot(normal);
            let sin_i = (1.0 - cos_i * cos_i).max(0.0).sqrt();
            if sin_i > sin_c {
                // Total internal reflection.
                let r = interface::reflect(dir.extend(0.0), normal.extend(0.0));
                dir = DVec2::new(r.x, r.y).normalize();
            } else {
                let t =
                    interface::refract(dir.extend(0.0), normal.extend(0.0), ix.n_core, ix.n_out)
                        .unwrap_or(DVec3::new(-normal.x, -normal.y, 0.0));
                points.push(p + escape_len * DVec2::new(t.x, t.y));
                fate = FanFate::Escaped;
                break;
            }
        }
        rays.push(FanRay { fate, points });
    }

    let mut lo = DVec2::splat(f64::INFINITY);
    let mut hi = DVec2::splat(f64::NEG_INFINITY);
    for p in outlines
        .iter()
        .flatten()
        .chain(rays.iter().flat_map(|r| r.points.iter()))
    {
        lo = lo.min(*p);
        hi = hi.max(*p);
    }
    Fan {
        walls: outlines,
        rays,
        bounds: (lo, hi),
    }
}
