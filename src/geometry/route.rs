//! The route placed in space: each segment gets its local frame and shape, in route order, from
//! the entry face (the global frame) to the exit face. Lengths in mm.

use glam::DVec3;

use super::corner::corner_leg_mm;
use super::{Axial, Bend, Corner, Frame, Placed, Shape};
use crate::scenario::{bend_half_size_mm, Section, Segment};

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
            let length_mm = seg.length_mm(section);
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
                        shape: Shape::Axial(Axial {
                            length: length_mm,
                            hw0: hw,
                            hh0: hh,
                            kw: (hw1 - hw) / length_mm,
                            kh: (hh1 - hh) / length_mm,
                        }),
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
                        shape: Shape::Bend(Bend {
                            rc: radius_mm,
                            phi,
                            radial_half,
                            axial_half,
                            width_axis: frame.dir_to_local(n),
                            height_axis: frame.dir_to_local(b),
                            sin_phi: libm::sin(phi),
                            cos_phi: libm::cos(phi),
                        }),
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
                Segment::Corner {
                    angle_deg,
                    turn_deg,
                    coating,
                } => {
                    let psi = turn_deg.to_radians();
                    let u = libm::cos(psi) * n + libm::sin(psi) * b;
                    let axis = t.cross(u);
                    let half = bend_half_size_mm(section, turn_deg).unwrap_or(hw);
                    let leg = corner_leg_mm(half, angle_deg);
                    let frame = Frame {
                        origin: p + leg * t,
                        x: n,
                        y: b,
                        z: t,
                    };
                    let phi = angle_deg.to_radians();
                    let placed = Placed {
                        shape: Shape::Corner(Corner::new(
                            phi,
                            frame.dir_to_local(u),
                            leg,
                            hw,
                            hh,
                            coating.map(|c| c.reflectance),
                        )),
                        round,
                        frame,
                        s_start_mm: s,
                        length_mm,
                    };
                    t = rotate(t, axis, phi);
                    n = rotate(n, axis, phi);
                    b = rotate(b, axis, phi);
                    p = frame.origin + leg * t;
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
