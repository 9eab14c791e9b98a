//! What it takes to draw a routed guide: its centre line sampled segment by segment with the
//! section's axes and half-sizes at every sample, the entry and exit frames, the emitter and the
//! receiver, and a bounding box. Everything is taken from the placed route
//! ([`crate::geometry::PlacedRoute`], the same placement the tracer uses), so a drawing cannot
//! drift from what is traced.
//!
//! Coordinates are global, in mm: the entry face is centred at the origin, the guide starts along
//! +z with its width axis along +x and its height axis along +y (see [`crate::geometry`]). The
//! position along the guide, `s_mm`, is the arc length of the centre line from the entry face,
//! the coordinate of the tracer's leakage profile along the route.
//!
//! Sampling: a straight or a taper is exact with its two end points (its half-sizes vary
//! linearly); a bend is sampled every ≤ [`MAX_BEND_STEP_DEG`] of turn and at no fewer than
//! [`MIN_BEND_POINTS`] points, each on the bend's centre-line circle.

use glam::DVec3;
use serde::Serialize;

use crate::error::FieldError;
use crate::faces::outline::{entry_face_frame, face_outline, FaceEnd, FaceOutline};
use crate::geometry::bend::rot_z;
use crate::geometry::{Bend, Corner, Frame, Placed, PlacedRoute, Shape};
use crate::scenario::{Emitter, EmitterArea, Scenario, SegmentKind};
use crate::source::emitter_frame;

/// Largest turn between two samples of a bend, degrees.
pub const MAX_BEND_STEP_DEG: f64 = 3.0;

/// Fewest samples of a bend (its two ends included).
pub const MIN_BEND_POINTS: usize = 8;

/// A frame for drawing: origin and unit axes, global mm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct OutlineFrame {
    /// Origin, mm.
    pub origin: [f64; 3],
    /// x axis (the section's width axis on the entry and exit faces).
    pub x: [f64; 3],
    /// y axis (the section's height axis).
    pub y: [f64; 3],
    /// z axis (along the guide, pointing away from the source).
    pub z: [f64; 3],
}

impl From<&Frame> for OutlineFrame {
    fn from(f: &Frame) -> OutlineFrame {
        OutlineFrame {
            origin: f.origin.to_array(),
            x: f.x.to_array(),
            y: f.y.to_array(),
            z: f.z.to_array(),
        }
    }
}

/// One sample of the centre line with the section there.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct OutlinePoint {
    /// Arc length along the centre line from the entry face, mm.
    pub s_mm: f64,
    /// The centre-line point, global mm.
    pub centre: [f64; 3],
    /// The section's width axis (unit vector).
    pub width_axis: [f64; 3],
    /// The section's height axis (unit vector); width × height is the direction of travel.
    pub height_axis: [f64; 3],
    /// Half the section's width (its radius when round), mm.
    pub half_width_mm: f64,
    /// Half the section's height (its radius when round), mm.
    pub half_height_mm: f64,
}

/// One route segment, sampled.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutlineSegment {
    /// Index in the route (0 is the first).
    pub index: usize,
    /// Straight, bend or taper.
    pub kind: SegmentKind,
    /// Arc length at the segment's start, mm.
    pub s_start_mm: f64,
    /// Centre-line length, mm.
    pub length_mm: f64,
    /// Round section (true) or rectangular.
    pub round: bool,
    /// Samples from the segment's start to its end, `s_mm` increasing.
    pub points: Vec<OutlinePoint>,
}

/// The receiver beyond the exit face: a disk or a rectangle parallel to the exit face.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ReceiverOutline {
    /// Centre, global mm.
    pub centre: [f64; 3],
    /// Unit normal, facing away from the exit face (the exit frame's z).
    pub normal: [f64; 3],
    /// Its width axis (the exit face's width axis).
    pub width_axis: [f64; 3],
    /// Its height axis (the exit face's height axis).
    pub height_axis: [f64; 3],
    /// Half its width (its radius when round), mm.
    pub half_width_mm: f64,
    /// Half its height (its radius when round), mm.
    pub half_height_mm: f64,
    /// A round detector (true) or a rectangular window.
    pub round: bool,
}

/// An axis-aligned box, global mm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Bounds {
    /// Smallest x, y, z.
    pub min: [f64; 3],
    /// Largest x, y, z.
    pub max: [f64; 3],
}

/// Everything needed to draw a routed guide.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RouteOutline {
    /// Total centre-line length, mm.
    pub length_mm: f64,
    /// The segments in route order; each starts where the previous one ends.
    pub segments: Vec<OutlineSegment>,
    /// The entry face's frame (the global frame).
    pub entry: OutlineFrame,
    /// The exit face's frame: centred on it, z along the outgoing axis.
    pub exit: OutlineFrame,
    /// Centre of the emitter, global mm (in the plane z = −gap, at the lateral offset).
    pub source_mm: [f64; 3],
    /// The emitter's axis (unit vector, tilted from +z by the source's tilt).
    pub source_axis: [f64; 3],
    /// Half the emitter's size (radius of a disk or beam, half the side of a square, half the
    /// longer side of a rectangle), mm.
    pub source_half_size_mm: f64,
    /// Half the emitter's width along `source_width_axis` (a disk's radius), mm.
    pub source_half_width_mm: f64,
    /// Half the emitter's height along `source_height_axis` (a disk's radius), mm.
    pub source_half_height_mm: f64,
    /// The emitter's width axis (unit vector in its plane; the entry's x when untilted).
    pub source_width_axis: [f64; 3],
    /// The emitter's height axis (unit vector in its plane, across the width axis).
    pub source_height_axis: [f64; 3],
    /// True for a round emitter (a disk or a beam), false for a square or rectangular one.
    pub source_round: bool,
    /// The receiver, when the scenario has one.
    pub receiver: Option<ReceiverOutline>,
    /// The domed or cut end faces, drawn as lines (none for flat or textured faces).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub faces: Vec<FaceOutline>,
    /// The coated zones of the wall (left out when there are none).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub coatings: Vec<crate::coating_outline::CoatingOutline>,
    /// A box around the sampled guide (every sample's section), the emitter and the receiver.
    pub bounds: Bounds,
}

/// The outline of a scenario's guide; on an invalid scenario, every problem with it (see
/// [`Scenario::check`]).
pub fn route_outline(scenario: &Scenario) -> Result<RouteOutline, Vec<FieldError>> {
    scenario.check()?;
    let placed = PlacedRoute::new(scenario.guide.section, &scenario.route);
    Ok(outline_of(scenario, &placed))
}

/// The samples of one placed segment.
fn sample(placed: &Placed) -> Vec<OutlinePoint> {
    let f = &placed.frame;
    let s0 = placed.s_start_mm;
    match placed.shape {
        Shape::Axial(axial) => [0.0, axial.length]
            .iter()
            .map(|&z| {
                let (half_width_mm, half_height_mm) = axial.half_sizes_mm(z);
                OutlinePoint {
                    // The end is s₀ + length, the same sum the placement accumulates.
                    s_mm: s0 + z,
                    centre: (f.origin + z * f.z).to_array(),
                    width_axis: f.x.to_array(),
                    height_axis: f.y.to_array(),
                    half_width_mm,
                    half_height_mm,
                }
            })
            .collect(),
        Shape::Bend(Bend {
            rc,
            phi,
            radial_half,
            axial_half,
            width_axis,
            height_axis,
            sin_phi,
            cos_phi,
        }) => {
            // The width axis lies in the bend plane (turn across the width) or along the bend
            // axis (across the height); a round section has one radius.
            let (half_w, half_h) = if width_axis.z.abs() < 0.5 {
                (radial_half, axial_half)
            } else {
                (axial_half, radial_half)
            };
            let steps =
                ((phi.to_degrees() / MAX_BEND_STEP_DEG).ceil() as usize).max(MIN_BEND_POINTS - 1);
            (0..=steps)
                .map(|k| {
                    let (s, c, theta) = if k == steps {
                        // The end exactly as the placement computes it.
                        (sin_phi, cos_phi, phi)
                    } else if k == 0 {
                        (0.0, 1.0, 0.0)
                    } else {
                        let theta = phi * (k as f64 / steps as f64);
                        (libm::sin(theta), libm::cos(theta), theta)
                    };
                    OutlinePoint {
                        s_mm: if k == steps {
                            s0 + placed.length_mm
                        } else {
                            s0 + rc * theta
                        },
                        centre: f
                            .point_to_global(DVec3::new(rc * c, rc * s, 0.0))
                            .to_array(),
                        width_axis: f.dir_to_global(rot_z(width_axis, s, c)).to_array(),
                        height_axis: f.dir_to_global(rot_z(height_axis, s, c)).to_array(),
                        half_width_mm: half_w,
                        half_height_mm: half_h,
                    }
                })
                .collect()
        }
        Shape::Corner(c) => corner_samples(placed, &c),
    }
}

/// A corner's three samples: its start, the face (where the axes meet: the section seen on the
/// face plane, stretched across the turn by 1/sin(θ/2) along the face), and its end. Straight
/// lines between matching points of the first two and of the last two are the legs' walls, so a
/// drawing joined there with a mitre is the corner to scale.
fn corner_samples(placed: &Placed, c: &Corner) -> Vec<OutlinePoint> {
    let f = &placed.frame;
    let s0 = placed.s_start_mm;
    let point = |s_mm: f64, centre: DVec3, w: DVec3, h: DVec3, hw: f64, hh: f64| OutlinePoint {
        s_mm,
        centre: f.point_to_global(centre).to_array(),
        width_axis: f.dir_to_global(w).to_array(),
        height_axis: f.dir_to_global(h).to_array(),
        half_width_mm: hw,
        half_height_mm: hh,
    };
    // m = sin(θ/2) t − cos(θ/2) u: the unit u across the turn and the direction on the face
    // across it, f = cos(θ/2) t + sin(θ/2) u (⊥ m, in the turn plane).
    let sin_half = c.face_normal.z;
    let cos_half = (1.0 - sin_half * sin_half).max(0.0).sqrt();
    let u = (DVec3::Z * sin_half - c.face_normal) / cos_half.max(f64::MIN_POSITIVE);
    let across_face = cos_half * DVec3::Z + sin_half * u;
    let stretch = 1.0 / sin_half;
    let face = if placed.round {
        point(
            s0 + c.leg,
            DVec3::ZERO,
            across_face,
            DVec3::Z.cross(u),
            c.hw * stretch,
            c.hh,
        )
    } else if u.x.abs() > 0.5 {
        point(
            s0 + c.leg,
            DVec3::ZERO,
            across_face,
            DVec3::Y,
            c.hw * stretch,
            c.hh,
        )
    } else {
        point(
            s0 + c.leg,
            DVec3::ZERO,
            DVec3::X,
            across_face,
            c.hw,
            c.hh * stretch,
        )
    };
    vec![
        point(s0, -c.leg * DVec3::Z, DVec3::X, DVec3::Y, c.hw, c.hh),
        face,
        point(
            s0 + placed.length_mm,
            c.leg * c.out_axis,
            c.out_x,
            c.out_y,
            c.hw,
            c.hh,
        ),
    ]
}

/// Grow `b` to hold a flat disk (`round`) or rectangle centred at `c`, spanned by the unit axes
/// `u`, `v` with half-sizes `hu`, `hv`.
fn include_patch(b: &mut Bounds, c: DVec3, u: DVec3, v: DVec3, hu: f64, hv: f64, round: bool) {
    for i in 0..3 {
        let reach = if round {
            // The box of an ellipse: √((hu uᵢ)² + (hv vᵢ)²).
            let (a, b) = (hu * u[i], hv * v[i]);
            (a * a + b * b).sqrt()
        } else {
            (hu * u[i]).abs() + (hv * v[i]).abs()
        };
        b.min[i] = b.min[i].min(c[i] - reach);
        b.max[i] = b.max[i].max(c[i] + reach);
    }
}

/// The outline from an already placed route of a validated scenario.
pub fn outline_of(scenario: &Scenario, route: &PlacedRoute) -> RouteOutline {
    let segments: Vec<OutlineSegment> = route
        .segments
        .iter()
        .zip(&scenario.route)
        .enumerate()
        .map(|(index, (placed, seg))| OutlineSegment {
            index,
            kind: seg.kind(),
            s_start_mm: placed.s_start_mm,
            length_mm: placed.length_mm,
            round: placed.round,
            points: sample(placed),
        })
        .collect();

    let src = &scenario.source;
    let source_centre = DVec3::new(src.offset_mm[0], src.offset_mm[1], -src.gap_mm);
    // The emitter's axis: tilted from +z by tilt_deg towards tilt_toward_deg (as the sampler).
    let [source_axis, source_e1, source_e2] = emitter_frame(src);
    let (source_half_width_mm, source_half_height_mm, source_round) = match &src.emitter {
        Emitter::Led { area, .. } => match *area {
            EmitterArea::Disk { diameter_mm } => (0.5 * diameter_mm, 0.5 * diameter_mm, true),
            EmitterArea::Square { side_mm } => (0.5 * side_mm, 0.5 * side_mm, false),
            EmitterArea::Rectangle {
                width_mm,
                height_mm,
            } => (0.5 * width_mm, 0.5 * height_mm, false),
        },
        Emitter::Beam { diameter_mm, .. } => (0.5 * diameter_mm, 0.5 * diameter_mm, true),
    };
    let source_half_size_mm = source_half_width_mm.max(source_half_height_mm);

    let ef = &route.exit_frame;
    let receiver = scenario.receiver.map(|r| {
        let (hw, hh, round) = match (r.diameter_mm, r.width_mm, r.height_mm) {
            (Some(d), _, _) => (0.5 * d, 0.5 * d, true),
            (None, Some(w), Some(h)) => (0.5 * w, 0.5 * h, false),
            // A validated receiver has one of the two forms.
            _ => (0.0, 0.0, true),
        };
        ReceiverOutline {
            centre: (ef.origin + r.distance_mm * ef.z).to_array(),
            normal: ef.z.to_array(),
            width_axis: ef.x.to_array(),
            height_axis: ef.y.to_array(),
            half_width_mm: hw,
            half_height_mm: hh,
            round,
        }
    });

    let mut bounds = Bounds {
        min: [f64::INFINITY; 3],
        max: [f64::NEG_INFINITY; 3],
    };
    for seg in &segments {
        for p in &seg.points {
            include_patch(
                &mut bounds,
                DVec3::from(p.centre),
                DVec3::from(p.width_axis),
                DVec3::from(p.height_axis),
                p.half_width_mm,
                p.half_height_mm,
                seg.round,
            );
        }
    }
    let faces: Vec<FaceOutline> = [
        (
            FaceEnd::Entry,
            scenario.guide.entry_face,
            scenario.guide.section,
            entry_face_frame(),
        ),
        (
            FaceEnd::Exit,
            scenario.guide.exit_face,
            route.exit_section,
            *ef,
        ),
    ]
    .into_iter()
    .filter_map(|(end, face, section, frame)| face_outline(end, face, section, &frame))
    .collect();
    for p in faces.iter().flat_map(|f| f.lines.iter().flatten()) {
        include_patch(
            &mut bounds,
            DVec3::from(*p),
            DVec3::X,
            DVec3::Y,
            0.0,
            0.0,
            true,
        );
    }
    // The emitter in its own plane.
    include_patch(
        &mut bounds,
        source_centre,
        source_e1,
        source_e2,
        source_half_width_mm,
        source_half_height_mm,
        source_round,
    );
    if let Some(r) = &receiver {
        include_patch(
            &mut bounds,
            DVec3::from(r.centre),
            DVec3::from(r.width_axis),
            DVec3::from(r.height_axis),
            r.half_width_mm,
            r.half_height_mm,
            r.round,
        );
    }

    RouteOutline {
        length_mm: route.length_mm,
        segments,
        entry: OutlineFrame {
            origin: [0.0; 3],
            x: [1.0, 0.0, 0.0],
            y: [0.0, 1.0, 0.0],
            z: [0.0, 0.0, 1.0],
        },
        exit: OutlineFrame::from(ef),
        source_mm: source_centre.to_array(),
        source_axis: source_axis.to_array(),
        source_half_size_mm,
        source_half_width_mm,
        source_half_height_mm,
        source_width_axis: source_e1.to_array(),
        source_height_axis: source_e2.to_array(),
        source_round,
        receiver,
        faces,
        coatings: crate::coating_outline::coating_outlines(scenario, route),
        bounds,
    }
}
