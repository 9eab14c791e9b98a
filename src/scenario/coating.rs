//! Coated zones of the side wall: painted white, metallised, or black. A zone is placed like a
//! mount ([`super::Contact`]): on a route segment, from/to along its centre line, on a sector of
//! the perimeter. What a ray does there is in [`crate::trace::zones`].

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use crate::limits;

/// A coated zone of the side wall.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct Coating {
    /// A label for people.
    #[serde(default)]
    pub name: String,
    /// What the wall is coated with.
    pub kind: CoatingKind,
    /// Index of the route segment it is on (0 is the first).
    #[serde(deserialize_with = "super::whole_segment")]
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
    /// Start of the coated sector of the perimeter, degrees about the axis from the width axis
    /// towards the height axis.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(limits::SECTOR_DEG))]
    pub sector_from_deg: f64,
    /// End of the coated sector, degrees (360 with 0 coats all round).
    #[serde(default = "super::full_turn")]
    #[schemars(transform = crate::schema::within(limits::SECTOR_END_DEG))]
    pub sector_to_deg: f64,
}

/// What a zone of the wall is coated with. Every coating lies on the wall in optical contact
/// (no air gap), so there is no total internal reflection under it: every ray meeting the zone
/// meets the coating.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum CoatingKind {
    /// White paint: a share `reflectance` (diffuse reflectance ρ) is sent back into the pipe in
    /// a Lambertian (cosine-weighted) spread about the inward normal; the rest is absorbed.
    WhitePaint {
        /// Diffuse reflectance ρ, 0 to 1.
        #[schemars(transform = crate::schema::within(limits::COATING_REFLECTANCE))]
        reflectance: f64,
    },
    /// A metal layer: a share `reflectance` (R) is reflected specularly; the rest is absorbed.
    Metal {
        /// Specular reflectance R, 0 to 1.
        #[schemars(transform = crate::schema::within(limits::COATING_REFLECTANCE))]
        reflectance: f64,
    },
    /// Black paint: absorbs everything that reaches it.
    Black,
}

impl CoatingKind {
    /// The share sent back into the pipe (0 for black).
    pub fn reflectance(self) -> f64 {
        match self {
            CoatingKind::WhitePaint { reflectance } | CoatingKind::Metal { reflectance } => {
                reflectance
            }
            CoatingKind::Black => 0.0,
        }
    }

    /// Plain words for the kind, as the page and the CSV name it.
    pub fn words(self) -> &'static str {
        match self {
            CoatingKind::WhitePaint { .. } => "white paint",
            CoatingKind::Metal { .. } => "metal",
            CoatingKind::Black => "black",
        }
    }
}

/// A coated zone: its reflectance within 0…1 (white paint, metal), and its place on the wall
/// as a mount's is checked (on a segment, within its length, on a sector of the perimeter).
pub(super) fn check_coating(
    k: usize,
    c: &Coating,
    entry: super::Section,
    route: &[super::Segment],
    out: &mut limits::FieldErrors,
) {
    let path = format!("guide.coatings[{k}]");
    let label = if c.name.trim().is_empty() {
        format!("Coating {}", k + 1)
    } else {
        format!("The coating “{}”", c.name.trim())
    };
    match c.kind {
        CoatingKind::WhitePaint { reflectance } => {
            let field = format!("{path}.kind.white_paint.reflectance");
            out.range(&field, reflectance, limits::COATING_REFLECTANCE);
        }
        CoatingKind::Metal { reflectance } => {
            let field = format!("{path}.kind.metal.reflectance");
            out.range(&field, reflectance, limits::COATING_REFLECTANCE);
        }
        CoatingKind::Black => {}
    }
    let place = c.place();
    super::validate::check_zone_place(
        &path,
        &label,
        " (where the coating starts)",
        &place,
        entry,
        route,
        out,
    );
}
