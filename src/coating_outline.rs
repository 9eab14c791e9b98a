//! The coated zones of a scenario's wall for drawing: each zone as rings of wall points (global,
//! mm), one ring per sample along the zone, each across the zone's sector. The points are on the
//! wall the tracer uses ([`crate::geometry::PlacedRoute`]): along the segment's centre line as the
//! tracer measures a zone's place, and at the azimuth it measures (from the section's width axis
//! towards its height axis), so a drawn zone is where the traced one is.
//!
//! Sampling: a straight or a taper needs only its two ends along (its walls are ruled); a bend
//! is sampled every ≤ [`crate::outline::MAX_BEND_STEP_DEG`] of turn. Across, every
//! ≤ [`SECTOR_STEP_DEG`], with a rectangular section's corners inside the sector added.

use glam::DVec3;
use serde::Serialize;

use crate::geometry::bend::rot_z;
use crate::geometry::{Placed, PlacedRoute, Shape};
use crate::outline::MAX_BEND_STEP_DEG;
use crate::scenario::{CoatingKind, Scenario};

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
        // Coatings on a reflecting corner are traced but not drawn yet (coating_outlines leaves
        // them out): its section is taken at the corner's start.
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
    let t = if round {
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
    };
    (centre + t * c * u + t * s * v).to_array()
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

/// Every coating of a validated scenario on its placed route, in document order.
pub fn coating_outlines(scenario: &Scenario, route: &PlacedRoute) -> Vec<CoatingOutline> {
    scenario
        .guide
        .coatings
        .iter()
        .enumerate()
        .filter_map(|(index, c)| {
            let placed = route.segments.get(c.segment)?;
            let along: Vec<f64> = match placed.shape {
                Shape::Corner(_) => return None,
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
            let kind = match c.kind {
                CoatingKind::WhitePaint { .. } => "white_paint",
                CoatingKind::Metal { .. } => "metal",
                CoatingKind::Black => "black",
            };
            Some(CoatingOutline { index, kind, rings })
        })
        .collect()
}
