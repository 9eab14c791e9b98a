//! Where a zone of the side wall sits — a mount ([`super::Contact`]) or a coating
//! ([`super::Coating`]): on a route segment, from/to along its centre line (mm from the
//! segment's start), on a sector of the perimeter (degrees about the axis from the section's
//! width axis towards its height axis). One type for both kinds: validation
//! ([`super::validate`]) and the tracer's look-up read a zone's place through it.
//!
//! The document writes the five fields out in each kind rather than flattening this type into
//! them: serde's `flatten` reads such a struct through a buffer, which loses the list of allowed
//! fields from an unknown field's message (the page would say the part has no fields) and moves
//! a bad value's line and column to the end of the object. A test (tests/schema.rs) keeps the
//! two kinds' fields alike.

use super::{Coating, Contact};

/// A zone's place on the wall.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ZonePlace {
    /// Index of the route segment (0 is the first).
    pub segment: usize,
    /// Start along the segment's centre line, mm from the segment's start.
    pub from_mm: f64,
    /// End along the segment's centre line, mm from the segment's start.
    pub to_mm: f64,
    /// Start of the sector, degrees.
    pub sector_from_deg: f64,
    /// End of the sector, degrees.
    pub sector_to_deg: f64,
}

impl ZonePlace {
    /// Whether a wall point of the zone's segment, `along_mm` along its centre line and at
    /// azimuth `az_deg` (in [0, 360)), lies in the zone: both ends included, along and around.
    #[inline]
    pub fn holds(&self, along_mm: f64, az_deg: f64) -> bool {
        along_mm >= self.from_mm
            && along_mm <= self.to_mm
            && az_deg >= self.sector_from_deg
            && az_deg <= self.sector_to_deg
    }
}

impl Contact {
    /// Where the mount touches the wall.
    pub fn place(&self) -> ZonePlace {
        ZonePlace {
            segment: self.segment,
            from_mm: self.from_mm,
            to_mm: self.to_mm,
            sector_from_deg: self.sector_from_deg,
            sector_to_deg: self.sector_to_deg,
        }
    }
}

impl Coating {
    /// Where the coating lies on the wall.
    pub fn place(&self) -> ZonePlace {
        ZonePlace {
            segment: self.segment,
            from_mm: self.from_mm,
            to_mm: self.to_mm,
            sector_from_deg: self.sector_from_deg,
            sector_to_deg: self.sector_to_deg,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_zone_holds_its_ends_and_nothing_beyond() {
        let z = ZonePlace {
            segment: 2,
            from_mm: 1.0,
            to_mm: 4.0,
            sector_from_deg: 30.0,
            sector_to_deg: 120.0,
        };
        for (along, az, inside) in [
            (1.0, 30.0, true),
            (4.0, 120.0, true),
            (2.5, 75.0, true),
            (0.999, 75.0, false),
            (4.001, 75.0, false),
            (2.5, 29.999, false),
            (2.5, 120.001, false),
        ] {
            assert_eq!(z.holds(along, az), inside, "{along} mm, {az}°");
        }
    }

    #[test]
    fn mounts_and_coatings_give_their_own_place() {
        let text = r#"{ "name": "n", "segment": 3, "from_mm": 0.5, "to_mm": 2.5,
                        "sector_from_deg": 10, "sector_to_deg": 200 }"#;
        let want = ZonePlace {
            segment: 3,
            from_mm: 0.5,
            to_mm: 2.5,
            sector_from_deg: 10.0,
            sector_to_deg: 200.0,
        };
        let mut v: serde_json::Value = serde_json::from_str(text).unwrap();
        v["medium"] = serde_json::json!({ "library": "pmma" });
        let mount: Contact = serde_json::from_value(v.clone()).unwrap();
        assert_eq!(mount.place(), want);
        v.as_object_mut().unwrap().remove("medium");
        v["kind"] = serde_json::json!("black");
        let coating: Coating = serde_json::from_value(v).unwrap();
        assert_eq!(coating.place(), want);
    }
}
