//! The coated zones of a scenario's wall for drawing: each zone as rings of wall points (global,
//! mm), one ring per sample along the zone, each across the zone's sector. The points are on the
//! wall the tracer uses ([`crate::geometry::PlacedRoute`]): along the segment's centre line as the
//! tracer measures a zone's place, and at the azimuth it measures (from the section's width axis
//! towards its height axis), so a drawn zone is where the traced one is.
//!
//! Sampling: a straight or a taper needs only its two ends along (its walls are ruled); a bend
//! is sampled every ≤ [`crate::outline::MAX_BEND_STEP_DEG`] of turn. Across, every
//! ≤ [`SECTOR_STEP_DEG`], with a rectangular section's corners inside the sector added.
//!
//! A reflecting corner ([`crate::geometry::Corner`]) is drawn as its tracer measures it: a wall
//! point on the incoming side of the plane square to t + t' (t, t' the incoming and outgoing
//! axes) is placed by the incoming leg (along = ℓ + p·t, azimuth in that leg's section), one on
//! the outgoing side by the outgoing leg. So the point at (along, azimuth) is found from the
//! leg's axis point, along the azimuth's direction, at the nearer of the leg's side wall and the
//! face; on the turn's inner side, where the legs overlap, the side wall past that plane is
//! inside the other leg, and no wall point has such a place (the crease where the two legs'
//! inner walls meet closes the gap). See [`corner_zone`].

use glam::DVec3;
use serde::Serialize;

use crate::geometry::bend::rot_z;
use crate::geometry::{Corner, Placed, PlacedRoute, Shape};
use crate::outline::MAX_BEND_STEP_DEG;
use crate::scenario::{Coating, CoatingKind, Scenario};

/// Largest step round the perimeter between two points of a ring, degrees.
pub const SECTOR_STEP_DEG: f64 = 10.0;

/// One coated zone, for drawing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CoatingOutline {
    /// Its place in the scenario's list of coatings.
    pub index: usize,
    /// `white_paint`, `metal` or `black` (the document's name of its kind).
    pub kind: &'static str,
    /// Rings of wall points, global mm: one per sample along the zone (from its start to its
    /// end), each from the sector's start to its end.
    pub rings: Vec<Vec<[f64; 3]>>,
}

/// The section of a placed segment at `along_mm` along its centre line: centre (global), width
/// and height axes (global unit vectors), half width and half height (mm).
fn section_at(placed: &Placed, along_mm: f64) -> (DVec3, DVec3, DVec3, f64, f64) {
    let f = &placed.frame;
    match placed.shape {
        Shape::Axial(axial) => {
            let z = along_mm.clamp(0.0, axial.length);
            let (hw, hh) = axial.half_sizes_mm(z);
            (f.origin + z * f.z, f.x, f.y, hw, hh)
        }
        Shape::Bend(b) => {
            // As the outline samples a bend: the width axis in the bend plane or along its axis.
            let (hw, hh) = if b.width_axis.z.abs() < 0.5 {
                (b.radial_half, b.axial_half)
            } else {
                (b.axial_half, b.radial_half)
            };
            let theta = (along_mm / b.rc).clamp(0.0, b.phi);
            let (s, c) = (libm::sin(theta), libm::cos(theta));
            (
                f.point_to_global(DVec3::new(b.rc * c, b.rc * s, 0.0)),
                f.dir_to_global(rot_z(b.width_axis, s, c)),
                f.dir_to_global(rot_z(b.height_axis, s, c)),
                hw,
                hh,
            )
        }
        // A corner is drawn by corner_zone, never through here.
        Shape::Corner(_) => (f.origin, f.x, f.y, 0.0, 0.0),
    }
}

/// The wall point of a section at azimuth `az_deg`: on the circle (`round`) or where the ray
/// from the centre at that azimuth leaves the rectangle.
fn wall_point(
    (centre, u, v, hw, hh): (DVec3, DVec3, DVec3, f64, f64),
    round: bool,
    az_deg: f64,
) -> [f64; 3] {
    let (s, c) = libm::sincos(az_deg.to_radians());
    let t = wall_reach(hw, hh, round, s, c);
    (centre + t * c * u + t * s * v).to_array()
}

/// How far from a section's centre the ray in the direction (cos, sin) = (`c`, `s`) of its
/// width and height axes meets the wall: the radius `hw` (`round`), or where it leaves the
/// rectangle of half-sizes `hw`, `hh`, mm.
fn wall_reach(hw: f64, hh: f64, round: bool, s: f64, c: f64) -> f64 {
    if round {
        hw
    } else {
        let tw = if c.abs() > 0.0 {
            hw / c.abs()
        } else {
            f64::INFINITY
        };
        let th = if s.abs() > 0.0 {
            hh / s.abs()
        } else {
            f64::INFINITY
        };
        tw.min(th)
    }
}

/// The azimuths of one ring: the sector's ends, every ≤ [`SECTOR_STEP_DEG`] between, and a
/// rectangle's corners inside it, ascending.
fn azimuths(from_deg: f64, to_deg: f64, corners: &[f64]) -> Vec<f64> {
    let steps = (((to_deg - from_deg) / SECTOR_STEP_DEG).ceil() as usize).max(1);
    let mut az: Vec<f64> = (0..=steps)
        .map(|k| from_deg + (to_deg - from_deg) * (k as f64 / steps as f64))
        .collect();
    az.extend(corners.iter().filter(|&&a| a > from_deg && a < to_deg));
    az.sort_by(f64::total_cmp);
    az
}

/// A coated zone on a reflecting corner, as pieces of rings (local mm; see the module's
/// documentation): one piece for each run of azimuths at which the zone has wall, each ring at
/// one place along the zone, across the run.
///
/// At azimuth φ, with d(φ) the direction in the incoming leg's section and d′(φ) in the
/// outgoing one's, the incoming leg's wall point at `along` s is p = (s − ℓ) t + r d with r the
/// nearer of the side wall (reach r_w) and the face (m·p = 0), and the outgoing leg's
/// p = (s − ℓ) t′ + r d′. p·(t + t′) = (s − ℓ)(1 + cos θ) + r d·t′ for the incoming leg, so its
/// side wall at φ is on the incoming side only up to s_A = ℓ − r_w (d·t′)/(1 + cos θ) (d·t′ > 0
/// on the turn's inner side, else s_A = ℓ); likewise the outgoing leg's from
/// s_B = ℓ − r_w (d′·t)/(1 + cos θ) ≥ ℓ. A place in (s_A, s_B) has no wall; it is drawn at the
/// crease where the two inner walls meet (both legs' points at s_A and s_B are that point, the
/// two legs being mirror images in the plane square to t + t′), and an azimuth where the zone
/// lies wholly in that gap is left out. On the turn's outer side the incoming leg's point
/// leaves the side wall for the face at s = ℓ − r_w (m·d)/sin(θ/2) (m·d > 0), the outgoing
/// leg's at ℓ + r_w (m·d′)/sin(θ/2).
///
/// Along each azimuth the point moves linearly in s between those places (on a flat or ruled
/// side wall, on the flat face, or standing at the crease), so the rings are taken at them:
/// the zone's start, where the incoming leg leaves its side wall, ℓ, where the outgoing leg
/// reaches its side wall, and the zone's end (each held within the zone). Neighbouring
/// azimuths' points at the same ring lie on the same fold, so no drawn quadrilateral cuts
/// across the edge between a side wall and the face.
fn corner_zone(round: bool, c: &Corner, zone: &Coating) -> Vec<Vec<Vec<DVec3>>> {
    let leg = c.leg;
    let (t, t2, m) = (DVec3::Z, c.out_axis, c.face_normal);
    let one_plus_cos = 1.0 + t2.z;
    let sin_half = m.z;
    // Directions within rounding of the face's plane (the azimuths of the face's middle line,
    // across the turn) meet it only at infinity: rounding must not put them on the face.
    const ALONG_FACE: f64 = 1e-12;
    // The point on the nearer of the side wall (reach r) and the face from the axis point
    // `centre` along `dir`.
    let on_wall = |centre: DVec3, dir: DVec3, r: f64| {
        let md = m.dot(dir);
        let r = if md > ALONG_FACE {
            r.min((-m.dot(centre) / md).max(0.0))
        } else {
            r
        };
        centre + r * dir
    };
    // Directions, reach and the places where the motion along changes, at azimuth φ:
    // (d, d′, r_w, s_A, s_B, where the incoming leg meets the face, where the outgoing leaves it).
    let at = |az_deg: f64| {
        let (sn, cs) = libm::sincos(az_deg.to_radians());
        let r = wall_reach(c.hw, c.hh, round, sn, cs);
        let da = cs * DVec3::X + sn * DVec3::Y;
        let db = cs * c.out_x + sn * c.out_y;
        let s_a = if da.dot(t2) > 0.0 {
            leg - r * da.dot(t2) / one_plus_cos
        } else {
            leg
        };
        let s_b = if db.dot(t) < 0.0 {
            leg - r * db.dot(t) / one_plus_cos
        } else {
            leg
        };
        let towards_face = |d: DVec3| {
            let md = m.dot(d);
            if md > ALONG_FACE {
                md
            } else {
                0.0
            }
        };
        let face_a = leg - r * towards_face(da) / sin_half;
        let face_b = leg + r * towards_face(db) / sin_half;
        (da, db, r, s_a, s_b, face_a, face_b)
    };
    let has_wall = |az_deg: f64| {
        let (_, _, _, s_a, s_b, _, _) = at(az_deg);
        zone.from_mm <= s_a || zone.to_mm >= s_b
    };
    // The rings' places along at φ, and the point at place s.
    let places = |az_deg: f64| {
        let (_, _, _, s_a, s_b, face_a, face_b) = at(az_deg);
        [
            zone.from_mm,
            s_a.min(face_a),
            leg,
            s_b.max(face_b),
            zone.to_mm,
        ]
        .map(|s| s.clamp(zone.from_mm, zone.to_mm))
    };
    let point = |s: f64, az_deg: f64| {
        let (da, db, r, s_a, s_b, _, _) = at(az_deg);
        if s <= leg {
            on_wall((s.min(s_a) - leg) * t, da, r)
        } else {
            on_wall((s.max(s_b) - leg) * t2, db, r)
        }
    };

    // Runs of azimuths with wall, each ended exactly (by halving) where the wall stops.
    let corner = libm::atan2(c.hh, c.hw).to_degrees();
    let corners = [corner, 180.0 - corner, 180.0 + corner, 360.0 - corner];
    let corners: &[f64] = if round { &[] } else { &corners };
    let mut runs: Vec<Vec<f64>> = Vec::new();
    let mut previous: Option<(f64, bool)> = None;
    for az in azimuths(zone.sector_from_deg, zone.sector_to_deg, corners) {
        let here = has_wall(az);
        if let Some((before, had)) = previous {
            if had != here {
                let (mut lo, mut hi) = (before, az);
                for _ in 0..48 {
                    let mid = 0.5 * (lo + hi);
                    if has_wall(mid) == had {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                if had {
                    if let Some(run) = runs.last_mut() {
                        run.push(lo);
                    }
                } else {
                    runs.push(vec![hi]);
                }
            }
        }
        if here {
            // A run goes on, or was just opened by the halving above, or opens at the start.
            match runs.last_mut() {
                Some(run) if previous.is_some() => run.push(az),
                _ => runs.push(vec![az]),
            }
        }
        previous = Some((az, here));
    }
    runs.into_iter()
        .filter(|run| run.len() >= 2)
        .map(|run| {
            let columns: Vec<[f64; 5]> = run.iter().map(|&az| places(az)).collect();
            (0..5)
                .map(|k| {
                    run.iter()
                        .zip(&columns)
                        .map(|(&az, along)| point(along[k], az))
                        .collect()
                })
                .collect()
        })
        .collect()
}

/// Every coating of a validated scenario on its placed route, in document order; a coating on
/// a corner comes as one outline for each run of its sector that has wall (see
/// [`corner_zone`]), all with its index.
pub fn coating_outlines(scenario: &Scenario, route: &PlacedRoute) -> Vec<CoatingOutline> {
    let mut out = Vec::new();
    for (index, c) in scenario.guide.coatings.iter().enumerate() {
        let Some(placed) = route.segments.get(c.segment) else {
            continue;
        };
        let kind = match c.kind {
            CoatingKind::WhitePaint { .. } => "white_paint",
            CoatingKind::Metal { .. } => "metal",
            CoatingKind::Black => "black",
        };
        let along: Vec<f64> = match placed.shape {
            Shape::Corner(corner) => {
                let f = &placed.frame;
                for piece in corner_zone(placed.round, &corner, c) {
                    let rings = piece
                        .iter()
                        .map(|ring| {
                            ring.iter()
                                .map(|&p| f.point_to_global(p).to_array())
                                .collect()
                        })
                        .collect();
                    out.push(CoatingOutline { index, kind, rings });
                }
                continue;
            }
            Shape::Axial(_) => vec![c.from_mm, c.to_mm],
            Shape::Bend(b) => {
                let turn_deg = ((c.to_mm - c.from_mm) / b.rc).to_degrees();
                let steps = ((turn_deg / MAX_BEND_STEP_DEG).ceil() as usize).max(1);
                (0..=steps)
                    .map(|k| c.from_mm + (c.to_mm - c.from_mm) * (k as f64 / steps as f64))
                    .collect()
            }
        };
        let rings = along
            .iter()
            .map(|&a| {
                let section = section_at(placed, a);
                let (hw, hh) = (section.3, section.4);
                let corner = libm::atan2(hh, hw).to_degrees();
                let corners = [corner, 180.0 - corner, 180.0 + corner, 360.0 - corner];
                let corners: &[f64] = if placed.round { &[] } else { &corners };
                azimuths(c.sector_from_deg, c.sector_to_deg, corners)
                    .into_iter()
                    .map(|az| wall_point(section, placed.round, az))
                    .collect()
            })
            .collect();
        out.push(CoatingOutline { index, kind, rings });
    }
    out
}
