//! A shaped face for drawing: lines on its surface and along its continued side wall, in global
//! coordinates (mm), to scale.

use glam::DVec3;
use serde::Serialize;

use super::cap::EndCap;
use super::pocket::Pocket;
use super::Face;
use crate::geometry::Frame;
use crate::scenario::Section;

/// Which end of the guide a face is at.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FaceEnd {
    /// The entry face, towards the emitter.
    Entry,
    /// The exit face.
    Exit,
}

/// A domed or cut face drawn as lines.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FaceOutline {
    /// The end it is at.
    pub end: FaceEnd,
    /// `dome`, `cut` or `pocket`.
    pub kind: &'static str,
    /// How far it stands beyond the end plane, mm (a pocket's depth into the guide counts
    /// negative).
    pub height_mm: f64,
    /// Polylines (global points, mm): the face's rim, two curves across it (along the width and
    /// the height axes through the centre), and the continued side wall's edges from the end
    /// plane up to the rim.
    pub lines: Vec<Vec<[f64; 3]>>,
}

/// A point of the section, (x, y) mm.
type Xy = (f64, f64);

/// Samples along each line.
const STEPS: usize = 24;

/// The frame of the entry face's cap: the global frame turned half a turn about its height axis
/// (y stays, x and z change sign), so that z points from the entry plane towards the emitter.
pub fn entry_face_frame() -> Frame {
    Frame {
        origin: DVec3::ZERO,
        x: -DVec3::X,
        y: DVec3::Y,
        z: -DVec3::Z,
    }
}

/// The outline of `face` on `section` at `end` with face frame `frame`; `None` for a face with
/// no cap (flat or textured: drawn as the end's ring).
pub fn face_outline(
    end: FaceEnd,
    face: Face,
    section: Section,
    frame: &Frame,
) -> Option<FaceOutline> {
    if let Face::Pocket {
        radius_mm,
        depth_mm,
    } = face
    {
        return Some(pocket_outline(end, Pocket::new(radius_mm, depth_mm), frame));
    }
    let cap = EndCap::new(face, section)?;
    let (hw, hh) = cap.half_mm;
    let on_face = |x: f64, y: f64| {
        frame
            .point_to_global(DVec3::new(x, y, cap.face_z_mm(x, y)))
            .to_array()
    };
    let at_base = |x: f64, y: f64| frame.point_to_global(DVec3::new(x, y, 0.0)).to_array();
    // The rim, and where the side wall's edges stand (corners, or eight generators of a cylinder).
    let (rim, edges): (Vec<Xy>, Vec<Xy>) = if cap.round {
        let ring = (0..=4 * STEPS)
            .map(|k| {
                let phi = 2.0 * core::f64::consts::PI * k as f64 / (4 * STEPS) as f64;
                (hw * libm::cos(phi), hw * libm::sin(phi))
            })
            .collect::<Vec<_>>();
        let edges = (0..8)
            .map(|k| {
                let phi = core::f64::consts::FRAC_PI_4 * k as f64;
                (hw * libm::cos(phi), hw * libm::sin(phi))
            })
            .collect();
        (ring, edges)
    } else {
        let corners = [(-hw, -hh), (hw, -hh), (hw, hh), (-hw, hh), (-hw, -hh)];
        let ring = corners
            .windows(2)
            .flat_map(|c| {
                let ((x0, y0), (x1, y1)) = (c[0], c[1]);
                (0..STEPS).map(move |k| {
                    let f = k as f64 / STEPS as f64;
                    (x0 + f * (x1 - x0), y0 + f * (y1 - y0))
                })
            })
            .chain(std::iter::once(corners[0]))
            .collect();
        (ring, corners[..4].to_vec())
    };
    let mut lines = vec![rim.iter().map(|&(x, y)| on_face(x, y)).collect::<Vec<_>>()];
    let across = |f: &dyn Fn(f64) -> (f64, f64)| {
        (0..=STEPS)
            .map(|k| {
                let (x, y) = f(-1.0 + 2.0 * k as f64 / STEPS as f64);
                on_face(x, y)
            })
            .collect::<Vec<_>>()
    };
    lines.push(across(&|u| (u * hw, 0.0)));
    lines.push(across(&|u| (0.0, u * hh)));
    for (x, y) in edges {
        if cap.face_z_mm(x, y) > 1e-9 {
            lines.push(vec![at_base(x, y), on_face(x, y)]);
        }
    }
    Some(FaceOutline {
        end,
        kind: face.kind(),
        height_mm: cap.height_mm(),
        lines,
    })
}

/// A pocket drawn as its mouth on the entry plane and two arcs across it (along the width and
/// the height axes), into the guide (face frame z = −global z).
fn pocket_outline(end: FaceEnd, pocket: Pocket, frame: &Frame) -> FaceOutline {
    let a = pocket.mouth_radius_mm();
    let r2 = pocket.radius_mm * pocket.radius_mm;
    let into = |x: f64, y: f64| {
        let z = pocket.centre.z + (r2 - x * x - y * y).max(0.0).sqrt();
        frame.point_to_global(DVec3::new(x, y, -z)).to_array()
    };
    let mouth = (0..=4 * STEPS)
        .map(|k| {
            let phi = 2.0 * core::f64::consts::PI * k as f64 / (4 * STEPS) as f64;
            frame
                .point_to_global(DVec3::new(a * libm::cos(phi), a * libm::sin(phi), 0.0))
                .to_array()
        })
        .collect();
    let arc = |along_x: bool| {
        (0..=STEPS)
            .map(|k| {
                let u = a * (-1.0 + 2.0 * k as f64 / STEPS as f64);
                if along_x {
                    into(u, 0.0)
                } else {
                    into(0.0, u)
                }
            })
            .collect()
    };
    FaceOutline {
        end,
        kind: "pocket",
        height_mm: -pocket.depth_mm,
        lines: vec![mouth, arc(true), arc(false)],
    }
}
