//! The scenario document: one versioned JSON document describing a whole routed light guide, its
//! source, an optional receiver and the trace settings. The command line reads it, the page's
//! state is it, saved files and share links carry it, and tests are written in it.
//!
//! Field names carry units (`_mm`, `_deg`, `_nm`, `_db_per_m`). Unknown fields are refused, and
//! every bad value is reported with its field path and allowed range, e.g.
//! `route[2].bend.radius_mm must be more than 1.5 mm (…), got -3`.
//!
//! The document types are here; `validate.rs` checks a scenario field by field against the
//! ranges of [`crate::limits`], and [`table`] holds the arithmetic of an LED's intensity table
//! that both the check and the source sampler use.

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use crate::error::{FieldError, TirError};
use crate::faces::Face;
use crate::index::library::MaterialChoice;
use crate::limits;
use crate::schema::Items;

mod coating;
pub mod table;
mod validate;
mod zone;

pub use coating::{Coating, CoatingKind};
pub use zone::ZonePlace;

pub use crate::limits::{MAX_SEGMENTS, MAX_WHOLE};

/// Current version of the scenario document.
pub const SCENARIO_VERSION: u32 = 1;

/// A whole design: guide, route, source, receiver and trace settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Document version, currently 1.
    #[serde(deserialize_with = "whole_version")]
    #[schemars(transform = crate::schema::version(SCENARIO_VERSION))]
    pub version: u32,
    /// A label for people; not used by the physics.
    #[serde(default)]
    pub name: String,
    /// The guide: section, material, surroundings, attenuation, contact zones.
    pub guide: Guide,
    /// The route: tangent-continuous segments from the entry face to the exit face.
    #[schemars(length(min = 1, max = MAX_SEGMENTS))]
    pub route: Vec<Segment>,
    /// The light source in front of the entry face.
    pub source: Source,
    /// An optional detector or window beyond the exit face.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub receiver: Option<Receiver>,
    /// Ray count, seed and the interaction cap.
    #[serde(default)]
    pub trace: TraceSettings,
}

/// The guide's material and cross-section.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Guide {
    /// Cross-section at the entry face.
    pub section: Section,
    /// Guide material.
    pub material: MaterialChoice,
    /// Medium around the guide.
    pub surroundings: MaterialChoice,
    /// Bulk attenuation, dB/m (Beer–Lambert).
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::ATTENUATION_DB_PER_M))]
    pub attenuation_db_per_m: f64,
    /// Mounts, clips or glue spots touching the guide.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub contacts: Vec<Contact>,
    /// Coated zones of the side wall (white paint, metal, black).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub coatings: Vec<Coating>,
    /// Medium beyond the exit face (a window or lens bonded to it, say); the surroundings when
    /// absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub exit_medium: Option<MaterialChoice>,
    /// The shape of the entry face: flat (the default), a dome or a cut.
    #[serde(default, skip_serializing_if = "Face::is_flat")]
    pub entry_face: Face,
    /// The shape of the exit face: flat (the default), a dome, a cut or textured.
    #[serde(default, skip_serializing_if = "Face::is_flat")]
    pub exit_face: Face,
}

/// A guide cross-section.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Section {
    /// Round rod or fibre.
    Round {
        /// Diameter, mm.
        #[schemars(transform = crate::schema::within(limits::SECTION_MM))]
        diameter_mm: f64,
    },
    /// Rectangular bar; width along the route's first side axis, height along the second.
    Rectangular {
        /// Width, mm.
        #[schemars(transform = crate::schema::within(limits::SECTION_MM))]
        width_mm: f64,
        /// Height, mm.
        #[schemars(transform = crate::schema::within(limits::SECTION_MM))]
        height_mm: f64,
    },
}

impl Section {
    /// Half-sizes (along the width axis, along the height axis), mm. A round section gives its
    /// radius twice.
    pub fn half_sizes_mm(&self) -> (f64, f64) {
        match *self {
            Section::Round { diameter_mm } => (0.5 * diameter_mm, 0.5 * diameter_mm),
            Section::Rectangular {
                width_mm,
                height_mm,
            } => (0.5 * width_mm, 0.5 * height_mm),
        }
    }

    /// Area of the section, mm².
    pub fn area_mm2(&self) -> f64 {
        match *self {
            Section::Round { diameter_mm } => {
                std::f64::consts::PI * 0.25 * diameter_mm * diameter_mm
            }
            Section::Rectangular {
                width_mm,
                height_mm,
            } => width_mm * height_mm,
        }
    }

    fn kind(&self) -> &'static str {
        match self {
            Section::Round { .. } => "round",
            Section::Rectangular { .. } => "rectangular",
        }
    }
}

/// One segment of the route.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Segment {
    /// A straight run.
    Straight {
        /// Length along the axis, mm.
        #[schemars(transform = crate::schema::within(limits::SEGMENT_LENGTH_MM))]
        length_mm: f64,
    },
    /// A circular bend.
    Bend {
        /// Radius of the guide's centre line, mm: more than half the section's size across the
        /// bend (so that the inner wall keeps a radius) and at most 10⁶ mm.
        #[schemars(range(max = limits::BEND_RADIUS_MAX_MM), extend("exclusiveMinimum" = 0.0))]
        radius_mm: f64,
        /// Angle turned through, degrees.
        #[schemars(transform = crate::schema::within(limits::BEND_ANGLE_DEG))]
        angle_deg: f64,
        /// Direction of the turn, as an angle about the current axis from the section's width
        /// axis towards its height axis, degrees. The section's axes travel with the guide, so a
        /// bend cut into pieces repeats the same `turn_deg`. Rectangular guides turn across the
        /// width (0, 180) or the height (90, 270) only.
        #[serde(default)]
        #[schemars(transform = crate::schema::within(limits::AZIMUTH_DEG))]
        turn_deg: f64,
    },
    /// A straight taper from the current section to `end_section`.
    Taper {
        /// Length along the axis, mm.
        #[schemars(transform = crate::schema::within(limits::SEGMENT_LENGTH_MM))]
        length_mm: f64,
        /// Section at the end of the taper (same shape as the current one).
        end_section: Section,
    },
    /// A reflecting corner: the guide turns by `angle_deg` at a flat face that bisects the
    /// turn (a 45° face for a right angle), reflecting by total internal reflection where the
    /// incidence exceeds the critical angle against the surroundings, else by Fresnel
    /// reflection (what the face lets through leaks there), or by a reflective coating. Its legs
    /// reach h·max(cot(θ/2), tan(θ/2)) along the incoming and the outgoing axis from the point
    /// where the axes meet (h: half the section's size across the turn; h for a right angle).
    Corner {
        /// Angle turned through, degrees.
        #[schemars(transform = crate::schema::within(limits::CORNER_ANGLE_DEG))]
        angle_deg: f64,
        /// Direction of the turn, as for a bend: an angle about the current axis from the
        /// section's width axis towards its height axis, degrees. Rectangular guides turn across
        /// the width (0, 180) or the height (90, 270) only.
        #[serde(default)]
        #[schemars(transform = crate::schema::within(limits::AZIMUTH_DEG))]
        turn_deg: f64,
        /// A reflective coating on the face, if any (none: the bare face).
        #[serde(default, skip_serializing_if = "Option::is_none")]
        coating: Option<FaceCoating>,
    },
}

/// A reflective coating on a corner's face: it reflects the share `reflectance` of the light
/// meeting it (at any incidence) and absorbs the rest, which the budget counts as absorbed in
/// the corner's segment.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct FaceCoating {
    /// Specular reflectance, a fraction from 0 to 1.
    #[schemars(transform = crate::schema::within(limits::CORNER_REFLECTANCE))]
    pub reflectance: f64,
}

/// What a segment of the route is, without its sizes. Written `straight`, `bend`, `taper` or
/// `corner` in
/// the trace report and the route's outline (by name: `crate::trace::names`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SegmentKind {
    /// A straight run.
    Straight,
    /// A circular bend.
    Bend,
    /// A straight taper.
    Taper,
    /// A reflecting corner.
    Corner,
}

impl Segment {
    /// What the segment is.
    pub fn kind(&self) -> SegmentKind {
        match self {
            Segment::Straight { .. } => SegmentKind::Straight,
            Segment::Bend { .. } => SegmentKind::Bend,
            Segment::Taper { .. } => SegmentKind::Taper,
            Segment::Corner { .. } => SegmentKind::Corner,
        }
    }

    /// Length of the segment along its centre line, mm, for the section where it starts (a
    /// corner's legs depend on it: [`crate::geometry::corner::corner_leg_mm`], both legs).
    pub fn length_mm(&self, section: Section) -> f64 {
        match *self {
            Segment::Straight { length_mm } | Segment::Taper { length_mm, .. } => length_mm,
            Segment::Bend {
                radius_mm,
                angle_deg,
                ..
            } => radius_mm * angle_deg.to_radians(),
            Segment::Corner {
                angle_deg,
                turn_deg,
                ..
            } => {
                let half = bend_half_size_mm(section, turn_deg).unwrap_or(f64::NAN);
                2.0 * crate::geometry::corner::corner_leg_mm(half, angle_deg)
            }
        }
    }

    /// The section where the segment ends, given the one where it starts (a taper changes it).
    pub fn section_after(&self, section: Section) -> Section {
        match *self {
            Segment::Taper { end_section, .. } => end_section,
            _ => section,
        }
    }
}

/// A mount, clip or glue spot touching the guide: light refracted into it is lost there.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Contact {
    /// A label for people.
    #[serde(default)]
    pub name: String,
    /// Index of the route segment it touches (0 is the first).
    #[serde(deserialize_with = "whole_segment")]
    #[schemars(with = "u64")]
    pub segment: usize,
    /// Start along the segment's centre line, mm from the segment's start: at least 0 and less
    /// than the segment's length.
    #[schemars(range(min = 0.0))]
    pub from_mm: f64,
    /// End along the segment's centre line, mm from the segment's start: after `from_mm` and at
    /// most the segment's length.
    #[schemars(extend("exclusiveMinimum" = 0.0))]
    pub to_mm: f64,
    /// Start of the touched sector of the perimeter, degrees about the axis from the width axis
    /// towards the height axis.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::SECTOR_DEG))]
    pub sector_from_deg: f64,
    /// End of the touched sector, degrees (360 with 0 touches all round).
    #[serde(default = "full_turn")]
    #[schemars(transform = crate::schema::within(limits::SECTOR_END_DEG))]
    pub sector_to_deg: f64,
    /// The contacting medium.
    pub medium: MaterialChoice,
}

fn full_turn() -> f64 {
    360.0
}

/// The light source.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Source {
    /// What emits: an LED or a beam.
    pub emitter: Emitter,
    /// Vacuum wavelength, nm.
    #[schemars(transform = crate::schema::within(limits::WAVELENGTH_NM))]
    pub wavelength_nm: f64,
    /// Distance from the emitter to the entry face, mm. Below 0 the LED sits inside the entry
    /// face's pocket (only with a pocket, less deep than it, and the LED must fit in it).
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::GAP_ANY_FACE_MM))]
    pub gap_mm: f64,
    /// Medium filling the gap (air, an index-matching gel…).
    #[serde(default = "air")]
    pub gap_medium: MaterialChoice,
    /// Lateral offset of the emitter's centre from the guide axis along (width, height), mm.
    #[serde(default)]
    #[schemars(transform = Items(limits::OFFSET_MM))]
    pub offset_mm: [f64; 2],
    /// Tilt of the emitter's axis from the guide axis, degrees.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::TILT_DEG))]
    pub tilt_deg: f64,
    /// Direction the emitter is tilted towards, degrees about the axis from the width axis.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::AZIMUTH_DEG))]
    pub tilt_toward_deg: f64,
    /// Optional emitted flux, for absolute figures.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flux: Option<Flux>,
}

fn air() -> MaterialChoice {
    MaterialChoice::library("air")
}

/// What emits the light: an LED (`led`) or a beam (`beam`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Emitter {
    /// An LED die or package window.
    Led {
        /// Shape and size of the emitting area.
        area: EmitterArea,
        /// Angular pattern.
        pattern: Pattern,
    },
    /// A collimated or slightly diverging beam (a laser, a lensed LED).
    Beam {
        /// Beam diameter at the emitter, mm (uniform).
        #[schemars(transform = crate::schema::within(limits::EMITTER_MM))]
        diameter_mm: f64,
        /// Half-angle of the divergence cone, degrees (uniform over the cone's solid angle).
        #[schemars(transform = crate::schema::within(limits::CONE_HALF_ANGLE_DEG))]
        divergence_half_angle_deg: f64,
    },
}

/// Shape of an LED's emitting area.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum EmitterArea {
    /// A disk.
    Disk {
        /// Diameter, mm.
        #[schemars(transform = crate::schema::within(limits::EMITTER_MM))]
        diameter_mm: f64,
    },
    /// A square.
    Square {
        /// Side, mm.
        #[schemars(transform = crate::schema::within(limits::EMITTER_MM))]
        side_mm: f64,
    },
    /// A rectangle (a rectangular chip, e.g. 1.6 × 0.8 mm): its width along the emitter's first
    /// axis (the entry section's width axis when the source is not tilted; it turns with the
    /// tilt), its height across it.
    Rectangle {
        /// Width, mm.
        #[schemars(transform = crate::schema::within(limits::EMITTER_MM))]
        width_mm: f64,
        /// Height, mm.
        #[schemars(transform = crate::schema::within(limits::EMITTER_MM))]
        height_mm: f64,
    },
}

/// Angular intensity pattern of an LED.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Pattern {
    /// I(θ) ∝ cos θ.
    Lambertian,
    /// I(θ) ∝ cos^m θ with m from the half-intensity half-angle.
    HalfIntensity {
        /// Angle from the axis where the intensity falls to half, degrees.
        #[schemars(transform = crate::schema::within(limits::HALF_INTENSITY_ANGLE_DEG))]
        half_angle_deg: f64,
    },
    /// A table of relative intensity against angle from the axis, linearly interpolated;
    /// zero beyond the last angle.
    Table {
        /// `[angle_deg, relative_intensity]` pairs, 2 to 1000 of them: angles ascending from 0
        /// to at most 90, relative intensities from 0 to 10¹².
        #[schemars(length(min = limits::TABLE_ROWS.min, max = limits::TABLE_ROWS.max))]
        points: Vec<[f64; 2]>,
    },
}

/// Emitted flux, for absolute figures: radiant (`mw`) or luminous (`lm`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Flux {
    /// Radiant flux, mW.
    Mw(#[schemars(transform = crate::schema::within(limits::FLUX))] f64),
    /// Luminous flux, lm.
    Lm(#[schemars(transform = crate::schema::within(limits::FLUX))] f64),
}

/// A detector disk or a rectangular window beyond the exit face, parallel to it and centred on
/// its axis: give `diameter_mm`, or `width_mm` and `height_mm` (along the exit face's width and
/// height axes).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(transform = crate::schema::disk_or_window)]
pub struct Receiver {
    /// Diameter of a round detector, mm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schemars(transform = crate::schema::within(limits::RECEIVER_MM))]
    pub diameter_mm: Option<f64>,
    /// Width of a rectangular window, mm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schemars(transform = crate::schema::within(limits::RECEIVER_MM))]
    pub width_mm: Option<f64>,
    /// Height of a rectangular window, mm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    #[schemars(transform = crate::schema::within(limits::RECEIVER_MM))]
    pub height_mm: Option<f64>,
    /// Distance beyond the exit face, mm.
    #[schemars(transform = crate::schema::within(limits::RECEIVER_DISTANCE_MM))]
    pub distance_mm: f64,
}

impl Receiver {
    /// Whether a point (x, y) in the receiver's plane, mm from its centre, lies on it.
    pub fn contains(&self, x: f64, y: f64) -> bool {
        match (self.diameter_mm, self.width_mm, self.height_mm) {
            (Some(d), _, _) => x * x + y * y <= 0.25 * d * d,
            (None, Some(w), Some(h)) => x.abs() <= 0.5 * w && y.abs() <= 0.5 * h,
            _ => false,
        }
    }
}

/// Trace settings: how many rays, from which seed, and when to give up on a trapped ray.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TraceSettings {
    /// Number of rays to trace; the statistical uncertainty of each share falls as 1/√rays.
    #[serde(default = "default_rays", deserialize_with = "whole_rays")]
    #[schemars(transform = crate::schema::within(limits::RAYS))]
    pub rays: u64,
    /// Seed of the random sequence; the same seed gives the same result. At most 2⁵³ − 1, so a
    /// browser (whose numbers are doubles) reads the same seed as the command line.
    #[serde(default = "default_seed", deserialize_with = "whole_seed")]
    #[schemars(transform = limits::Count::new(0, MAX_WHOLE))]
    pub seed: u64,
    /// Interactions after which a ray is stopped and counted as such.
    #[serde(
        default = "default_max_interactions",
        deserialize_with = "whole_interactions"
    )]
    #[schemars(transform = crate::schema::within(limits::MAX_INTERACTIONS))]
    pub max_interactions: u32,
}

/// `trace.rays` as any JSON number that is a whole one (`2.0` too), refused with its range.
fn whole_rays<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u64, D::Error> {
    crate::reading::whole(d, MAX_WHOLE, &limits::RAYS.rule())
}

/// `trace.seed`, likewise.
fn whole_seed<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u64, D::Error> {
    crate::reading::whole(d, MAX_WHOLE, &limits::Count::new(0, MAX_WHOLE).rule())
}

/// `trace.max_interactions`, likewise.
fn whole_interactions<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u32, D::Error> {
    let rule = limits::MAX_INTERACTIONS.rule();
    crate::reading::whole(d, u32::MAX.into(), &rule).map(|n| n as u32)
}

/// A document's `version`, likewise (its one allowed value is checked with the rest).
pub(crate) fn whole_version<'de, D: serde::Deserializer<'de>>(d: D) -> Result<u32, D::Error> {
    crate::reading::whole(d, u32::MAX.into(), "must be a whole number").map(|n| n as u32)
}

/// A mount's `segment`, likewise (whether it names a segment is checked with the rest).
fn whole_segment<'de, D: serde::Deserializer<'de>>(d: D) -> Result<usize, D::Error> {
    let rule = "must be a whole number: the segment's place in the route, 0 for the first";
    crate::reading::whole(d, MAX_WHOLE, rule).map(|n| n as usize)
}

fn default_rays() -> u64 {
    100_000
}
fn default_seed() -> u64 {
    1
}
fn default_max_interactions() -> u32 {
    10_000
}

impl Default for TraceSettings {
    fn default() -> Self {
        TraceSettings {
            rays: default_rays(),
            seed: default_seed(),
            max_interactions: default_max_interactions(),
        }
    }
}

/// Indices of a validated scenario at its wavelength, relative to air.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioIndices {
    /// Guide.
    pub n_core: f64,
    /// Surroundings.
    pub n_out: f64,
    /// Medium beyond the exit face.
    pub n_exit: f64,
    /// Gap between source and entry face.
    pub n_gap: f64,
    /// Each contact zone's medium, in document order.
    pub n_contacts: Vec<f64>,
}

impl Scenario {
    /// Read a scenario from JSON. Syntax errors, unknown fields and wrong types are reported
    /// with the path of the offending field.
    pub fn from_json(text: &str) -> Result<Self, TirError> {
        Self::read_json(text).map_err(|(_, e)| e)
    }

    /// [`Scenario::from_json`], with the path serde reached where reading stopped (empty for
    /// the document as a whole) beside the error, for a form that marks the field.
    pub(crate) fn read_json(text: &str) -> Result<Self, (String, TirError)> {
        crate::reading::read_document(text)
            .map_err(|u| (u.path.clone(), TirError::ParseScenario(u.sentence())))
    }

    /// Write the scenario as pretty JSON.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("a scenario always serialises")
    }

    /// Every problem with the scenario, each naming its field path and the allowed range.
    pub fn problems(&self) -> Vec<FieldError> {
        match self.check() {
            Ok(_) => Vec::new(),
            Err(v) => v,
        }
    }

    /// The design a "new design" starts from: one straight acrylic pipe, 3 mm round and 20 mm
    /// long in air, with the material's typical attenuation (`index::library`); a 0.5 mm square
    /// Lambertian LED 0.3 mm before its entry face at 525 nm; the default trace settings. Round
    /// numbers of our own, for the designer to change, not data.
    pub fn new_design() -> Scenario {
        let material = "pmma";
        let attenuation_db_per_m =
            crate::index::library::find(material).map_or(0.0, |m| m.attenuation_db_per_m);
        Scenario {
            version: SCENARIO_VERSION,
            name: "New design".to_string(),
            guide: Guide {
                section: Section::Round { diameter_mm: 3.0 },
                material: MaterialChoice::library(material),
                surroundings: MaterialChoice::library("air"),
                attenuation_db_per_m,
                contacts: Vec::new(),
                coatings: Vec::new(),
                exit_medium: None,
                entry_face: Default::default(),
                exit_face: Default::default(),
            },
            route: vec![Segment::Straight { length_mm: 20.0 }],
            source: Source {
                emitter: Emitter::Led {
                    area: EmitterArea::Square { side_mm: 0.5 },
                    pattern: Pattern::Lambertian,
                },
                wavelength_nm: 525.0,
                gap_mm: 0.3,
                gap_medium: air(),
                offset_mm: [0.0, 0.0],
                tilt_deg: 0.0,
                tilt_toward_deg: 0.0,
                flux: None,
            },
            receiver: None,
            trace: TraceSettings::default(),
        }
    }
}

/// Half the section's size across the bend plane for a turn direction, or `None` when the turn
/// direction is not finite.
pub fn bend_half_size_mm(section: Section, turn_deg: f64) -> Option<f64> {
    if !turn_deg.is_finite() {
        return None;
    }
    let (hw, hh) = section.half_sizes_mm();
    // Turning towards the width axis (0°, 180°) puts the width across the bend.
    let c = libm::cos(turn_deg.to_radians()).abs();
    Some(if c > 0.5 { hw } else { hh })
}
