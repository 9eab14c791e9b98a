//! The closed sets of names in a trace report (segment kinds, units): enums in the code,
//! written as the same strings as ever in the report. The segment kind is the route's
//! ([`crate::scenario::SegmentKind`]); its names are given here with the others.

use serde::{Deserialize, Serialize};

use crate::scenario::SegmentKind;

impl Named for SegmentKind {
    const ALL: &'static [Self] = &[Self::Straight, Self::Bend, Self::Taper, Self::Corner];
    const NAMES: &'static [&'static str] = &["straight", "bend", "taper", "corner"];
}

/// The unit of an absolute flux; written `mW` or `lm` in the report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FluxUnit {
    /// Milliwatts (radiometric source flux).
    Milliwatt,
    /// Lumens (photometric source flux).
    Lumen,
}

impl Named for FluxUnit {
    const ALL: &'static [Self] = &[Self::Milliwatt, Self::Lumen];
    const NAMES: &'static [&'static str] = &["mW", "lm"];
}

/// The unit of an absolute intensity; written `mW/sr` or `cd` in the report.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IntensityUnit {
    /// Milliwatts per steradian.
    MilliwattPerSteradian,
    /// Candelas (lumens per steradian).
    Candela,
}

impl Named for IntensityUnit {
    const ALL: &'static [Self] = &[Self::MilliwattPerSteradian, Self::Candela];
    const NAMES: &'static [&'static str] = &["mW/sr", "cd"];
}

/// A closed set of values written by name in the report (a string, not serde's enum form, so
/// that a value of the wrong type reads back with serde's "expected a string").
pub(crate) trait Named: Copy + PartialEq + 'static {
    /// Every value.
    const ALL: &'static [Self];
    /// Their names, in the order of `ALL`.
    const NAMES: &'static [&'static str];

    /// The name of a value.
    fn name(self) -> &'static str {
        let i = Self::ALL.iter().position(|&v| v == self);
        i.map_or("", |i| Self::NAMES[i])
    }

    /// The value with this name.
    fn from_name(name: &str) -> Option<Self> {
        let i = Self::NAMES.iter().position(|&n| n == name)?;
        Some(Self::ALL[i])
    }
}

/// Serialize, Deserialize and Display by name.
macro_rules! by_name {
    ($($t:ty),*) => {$(
        impl Serialize for $t {
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                s.serialize_str(self.name())
            }
        }
        impl<'de> Deserialize<'de> for $t {
            fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                crate::export::read_name(d)
            }
        }
        impl std::fmt::Display for $t {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.name())
            }
        }
    )*};
}
by_name!(SegmentKind, FluxUnit, IntensityUnit);

#[cfg(test)]
mod tests {
    use super::{FluxUnit, IntensityUnit, Named, SegmentKind};

    #[test]
    fn names_are_the_report_strings_and_read_back() {
        let kinds = serde_json::to_string(&SegmentKind::ALL).unwrap();
        assert_eq!(kinds, r#"["straight","bend","taper","corner"]"#);
        let units = serde_json::to_string(&(FluxUnit::ALL, IntensityUnit::ALL)).unwrap();
        assert_eq!(units, r#"[["mW","lm"],["mW/sr","cd"]]"#);
        let back: Vec<SegmentKind> = serde_json::from_str(&kinds).unwrap();
        assert_eq!(back, SegmentKind::ALL);
        assert_eq!(IntensityUnit::Candela.to_string(), "cd");
        // Wrong names and wrong types get serde's usual messages.
        let e = serde_json::from_str::<FluxUnit>(r#""W""#)
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("unknown variant `W`, expected `mW` or `lm`"),
            "{e}"
        );
        let e = serde_json::from_str::<SegmentKind>("5")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("invalid type: integer `5`, expected a string"),
            "{e}"
        );
    }
}
