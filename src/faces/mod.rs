//! Shaped end faces of the guide: the choice in the scenario document ([`Face`]), the solid a
//! shaped face adds beyond the end plane ([`cap`]) and the textured face's rough-interface
//! scattering ([`rough`]).
//!
//! A flat face (the default) is the end plane itself, exactly as before faces could be shaped.
//! A domed or cut face never removes material from the route: it adds a small solid, the *end
//! cap*, on the far side of the end plane (towards the LED at the entry, away from the guide at
//! the exit), bounded by the section's outline carried straight on (the side wall continued),
//! the end plane and the face surface. Its rim is where the face surface meets the continued
//! side wall; a dome on a round guide meets it exactly on the end plane (no side wall in the
//! cap), a dome on a rectangular guide passes through the section's corners (the continued
//! flat walls rise to it between them), and a cut starts at the end plane on the section's
//! −height edge and rises towards its +height edge.

pub mod cap;
pub mod outline;
pub mod pocket;
pub mod rough;

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use crate::error::show;
use crate::limits::{self, FieldErrors};
use crate::scenario::{Scenario, Section, Segment};

/// The shape of one end face of the guide.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Face {
    /// Flat, square to the guide's axis (the default).
    #[default]
    Flat,
    /// A convex spherical dome: a lens over the LED at the entry, a domed lens at the exit.
    Dome {
        /// Radius of curvature, mm: more than half the section's size across its corners.
        #[schemars(transform = crate::schema::within(limits::FACE_RADIUS_MM))]
        radius_mm: f64,
    },
    /// A flat face cut at an angle to the section, rising from the section's −height edge
    /// towards its +height edge.
    Cut {
        /// Angle between the face and the section, degrees.
        #[schemars(transform = crate::schema::within(limits::FACE_CUT_ANGLE_DEG))]
        angle_deg: f64,
    },
    /// A concave spherical pocket over the LED (entry face only): the LED sits under its mouth.
    Pocket {
        /// Radius of curvature, mm.
        #[schemars(transform = crate::schema::within(limits::FACE_RADIUS_MM))]
        radius_mm: f64,
        /// Depth into the guide from the entry plane, mm: at most the radius.
        #[schemars(transform = crate::schema::within(limits::FACE_RADIUS_MM))]
        depth_mm: f64,
    },
    /// A flat, textured (diffusing) face: a rough interface with the microfacet slope
    /// distribution of Walter, Marschner, Li and Torrance (2007), one roughness parameter
    /// (exit face only).
    Textured {
        /// Roughness α of the facet distribution (the rms facet slope is about α/√2 for small α).
        #[schemars(transform = crate::schema::within(limits::FACE_ROUGHNESS))]
        roughness: f64,
    },
}

impl Face {
    /// Whether this is the flat face (left out when a document is written).
    pub fn is_flat(&self) -> bool {
        matches!(self, Face::Flat)
    }

    /// The face's name in messages and on the page.
    pub fn kind(&self) -> &'static str {
        match self {
            Face::Flat => "flat",
            Face::Dome { .. } => "dome",
            Face::Cut { .. } => "cut",
            Face::Pocket { .. } => "pocket",
            Face::Textured { .. } => "textured",
        }
    }

    /// How far the face stands beyond the end plane, mm (0 for a flat, textured or pocketed
    /// face).
    pub fn height_mm(&self, section: Section) -> f64 {
        match cap::EndCap::new(*self, section) {
            Some(c) => c.height_mm(),
            None => 0.0,
        }
    }
}

/// Half the section's size across its corners (the radius of a round section), mm: the
/// smallest radius a dome on it can have.
pub fn rim_radius_mm(section: Section) -> f64 {
    let (hw, hh) = section.half_sizes_mm();
    match section {
        Section::Round { .. } => hw,
        Section::Rectangular { .. } => (hw * hw + hh * hh).sqrt(),
    }
}

/// The end faces' checks (the section at the exit face is `exit_section`): each face's numbers
/// within their ranges, a dome's radius more than half its section's size across the corners,
/// a textured face at the exit only, and room for what stands out: the source's gap wider than
/// the entry face's height, the receiver farther than the exit face's. Returns the entry face's
/// pocket when it is valid (the LED may then sit inside it: [`check_led_in_pocket`]).
pub(crate) fn check_faces(
    s: &Scenario,
    exit_section: Section,
    out: &mut FieldErrors,
) -> Option<pocket::Pocket> {
    let entry = s.guide.entry_face;
    let exit = s.guide.exit_face;
    if let Face::Textured { .. } = entry {
        out.push(
            "guide.entry_face",
            "must be flat, dome, cut or pocket (a textured face is for the exit face only)",
        );
    }
    if let Face::Pocket { .. } = exit {
        out.push(
            "guide.exit_face",
            "must be flat, dome, cut or textured (a pocket is for the entry face only)",
        );
    }
    let entry_ok = check_face("guide.entry_face", entry, s.guide.section, out);
    let valid_pocket = match (entry_ok, entry) {
        (
            true,
            Face::Pocket {
                radius_mm,
                depth_mm,
            },
        ) => {
            check_pocket_room(depth_mm, s.route.first(), out);
            Some(pocket::Pocket::new(radius_mm, depth_mm))
        }
        _ => None,
    };
    let exit_ok = check_face("guide.exit_face", exit, exit_section, out);
    if entry_ok && !entry.is_flat() {
        let h = entry.height_mm(s.guide.section);
        if h > 0.0 && s.source.gap_mm.is_finite() && s.source.gap_mm <= h {
            out.push(
                "source.gap_mm",
                format!(
                    "must be more than {} mm, the height the entry face's {} stands out towards \
                     the emitter, got {}",
                    show(h),
                    entry.kind(),
                    show(s.source.gap_mm)
                ),
            );
        }
    }
    if let (true, Some(r)) = (exit_ok, &s.receiver) {
        let h = exit.height_mm(exit_section);
        if h > 0.0 && r.distance_mm.is_finite() && r.distance_mm <= h {
            out.push(
                "receiver.distance_mm",
                format!(
                    "must be more than {} mm, the height the exit face's {} stands out beyond the \
                     guide's end, got {}",
                    show(h),
                    exit.kind(),
                    show(r.distance_mm)
                ),
            );
        }
    }
    valid_pocket
}

/// An LED partly above the entry plane (a negative gap, or a tilt that lifts an edge) sits in
/// the entry face's pocket: its whole emitting area must lie inside the pocket's sphere (the
/// sphere is convex, so its corners — a disk's farthest rim point — inside suffice; below the
/// entry plane the ball is the gap's medium too). `source` is valid.
pub(crate) fn check_led_in_pocket(
    source: &crate::scenario::Source,
    pocket: &pocket::Pocket,
    out: &mut FieldErrors,
) {
    let led = crate::source::SourceSampler::new(source);
    if led.top_z_mm() <= 0.0 {
        return;
    }
    let beyond_mm = led.farthest_from_mm(pocket.centre) - pocket.radius_mm;
    if beyond_mm >= 0.0 {
        out.push(
            "source.gap_mm",
            format!(
                "puts part of the LED above the entry face, inside its pocket, where all of the \
                 emitting area must fit; at {} mm it reaches {} mm past the pocket's surface (a \
                 gap nearer 0 or above it, a smaller offset or tilt, or a wider or deeper pocket)",
                show(source.gap_mm),
                show(beyond_mm.max(0.001))
            ),
        );
    }
}

/// One face's numbers; whether they are valid.
fn check_face(path: &str, face: Face, section: Section, out: &mut FieldErrors) -> bool {
    match face {
        Face::Flat => true,
        Face::Dome { radius_mm } => {
            let rim = rim_radius_mm(section);
            let range = limits::FACE_RADIUS_MM.above(rim).note(
                " (more than half the section's size across its corners, so the dome meets the \
                 side wall all round)",
            );
            out.range(&format!("{path}.dome.radius_mm"), radius_mm, range)
                .is_some()
        }
        Face::Cut { angle_deg } => out
            .range(
                &format!("{path}.cut.angle_deg"),
                angle_deg,
                limits::FACE_CUT_ANGLE_DEG,
            )
            .is_some(),
        Face::Pocket {
            radius_mm,
            depth_mm,
        } => {
            let Some(r) = out.range(
                &format!("{path}.pocket.radius_mm"),
                radius_mm,
                limits::FACE_RADIUS_MM,
            ) else {
                return false;
            };
            let depth = limits::FACE_RADIUS_MM
                .note(" (at most the radius: the pocket is widest at its mouth)");
            let depth = crate::limits::Range {
                hi: r,
                hi_closed: true,
                ..depth
            };
            let Some(d) = out.range(&format!("{path}.pocket.depth_mm"), depth_mm, depth) else {
                return false;
            };
            // The mouth, √(d (2R − d)), inside the section.
            let (hw, hh) = section.half_sizes_mm();
            let mouth = pocket::Pocket::new(r, d).mouth_radius_mm();
            if mouth >= hw.min(hh) {
                out.push(
                    format!("{path}.pocket.radius_mm"),
                    format!(
                        "with a depth of {} mm opens a mouth {} mm across, which must be less than \
                         the section's {} mm (a shallower or tighter pocket)",
                        show(d),
                        show(2.0 * mouth),
                        show(2.0 * hw.min(hh))
                    ),
                );
                return false;
            }
            true
        }
        Face::Textured { roughness } => out
            .range(
                &format!("{path}.textured.roughness"),
                roughness,
                limits::FACE_ROUGHNESS,
            )
            .is_some(),
    }
}

/// A pocket of depth `depth_mm` needs a straight first segment longer than it.
fn check_pocket_room(depth_mm: f64, first: Option<&Segment>, out: &mut FieldErrors) {
    match first {
        Some(Segment::Straight { length_mm }) if *length_mm > depth_mm => {}
        Some(Segment::Straight { length_mm }) => out.push(
            "guide.entry_face.pocket.depth_mm",
            format!(
                "must be less than the first straight's length ({} mm), got {}",
                show(*length_mm),
                show(depth_mm)
            ),
        ),
        _ => out.push(
            "guide.entry_face",
            "a pocket needs the route to start with a straight segment longer than its depth",
        ),
    }
}
