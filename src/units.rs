//! The unit a chart shows lengths in. Documents, reports and every computation keep millimetres;
//! only what is drawn for a designer who chose inches is converted, here and nowhere else in the
//! core.

use crate::FieldError;

/// Millimetres in one inch: exact by definition (the international inch of 1959, 25.4 mm; listed
/// e.g. in NIST Special Publication 811, 2008 edition, appendix B — from memory).
pub const MM_PER_INCH: f64 = 25.4;

/// Square millimetres in one square inch: 25.4² = 645.16, exact by the same definition.
pub const MM2_PER_SQUARE_INCH: f64 = 645.16;

/// The unit lengths are shown in on a chart (the page's mm / inch switch). Millimetres unless
/// chosen otherwise; the command line always draws in millimetres.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LengthUnit {
    /// Millimetres, the unit of the documents.
    #[default]
    Mm,
    /// Inches (25.4 mm).
    Inch,
}

impl LengthUnit {
    /// The unit named as the page names it: `"mm"` or `"in"`. Anything else (or no text at
    /// all) is refused with a message naming the allowed names.
    pub fn from_name(name: Option<&str>) -> Result<Self, FieldError> {
        match name {
            Some("mm") => Ok(Self::Mm),
            Some("in") => Ok(Self::Inch),
            Some(other) => Err(Self::refused(&format!("“{other}”"))),
            None => Err(Self::refused("no text")),
        }
    }

    fn refused(got: &str) -> FieldError {
        FieldError::new("length unit", format!("must be “mm” or “in”, got {got}"))
    }

    /// The unit's short name, as written after a number or in an axis title: `mm` or `in`.
    pub fn name(self) -> &'static str {
        match self {
            Self::Mm => "mm",
            Self::Inch => "in",
        }
    }

    /// The unit of area it goes with: `mm²` or `in²`.
    pub fn area_name(self) -> &'static str {
        match self {
            Self::Mm => "mm²",
            Self::Inch => "in²",
        }
    }

    /// A length given in mm, in this unit.
    pub fn from_mm(self, length_mm: f64) -> f64 {
        match self {
            Self::Mm => length_mm,
            Self::Inch => length_mm / MM_PER_INCH,
        }
    }

    /// A quantity per mm² (an irradiance), per unit area of this unit: × 645.16 for in².
    pub fn per_area_from_per_mm2(self, per_mm2: f64) -> f64 {
        match self {
            Self::Mm => per_mm2,
            Self::Inch => per_mm2 * MM2_PER_SQUARE_INCH,
        }
    }

    /// A length given in mm written in this unit with the resolution `mm_decimals` gives in mm:
    /// in inches two decimals more (0.01 mm ≈ 0.0004 in), so 2.5 mm at 2 decimals reads 2.50 mm
    /// or 0.0984 in (not 0.098425).
    pub fn fixed(self, length_mm: f64, mm_decimals: usize) -> String {
        match self {
            Self::Mm => format!("{length_mm:.mm_decimals$}"),
            Self::Inch => format!("{:.*}", mm_decimals + 2, self.from_mm(length_mm)),
        }
    }

    /// A length given in mm written in this unit without trailing noise: in mm as given (the
    /// shortest text that reads back as the same number); in inches to 0.0001 in and at least
    /// three significant digits, trailing zeros dropped (2.5 mm → 0.0984, 12 mm → 0.4724,
    /// 0.05 mm → 0.00197), as the page's tables write them.
    pub fn shown(self, length_mm: f64) -> String {
        match self {
            Self::Mm => format!("{length_mm}"),
            Self::Inch => {
                let v = self.from_mm(length_mm);
                if !v.is_finite() || v == 0.0 {
                    return format!("{v}");
                }
                let digits = libm::floor(libm::log10(v.abs())) as i64;
                let decimals = (2 - digits).clamp(4, 12) as usize;
                let text = format!("{v:.decimals$}");
                let text = text.trim_end_matches('0').trim_end_matches('.');
                if text == "-0" {
                    "0".to_string()
                } else {
                    text.to_string()
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_inch_is_25_4_mm_and_a_square_inch_645_16_mm2() {
        // The definition (see MM_PER_INCH); the area factor is its square.
        assert_eq!(LengthUnit::Inch.from_mm(25.4), 1.0);
        assert!((MM2_PER_SQUARE_INCH - MM_PER_INCH * MM_PER_INCH).abs() < 1e-12);
        assert_eq!(LengthUnit::Inch.per_area_from_per_mm2(1.0), 645.16);
        assert_eq!(LengthUnit::Mm.from_mm(7.5), 7.5);
        assert_eq!(LengthUnit::Mm.per_area_from_per_mm2(0.25), 0.25);
    }

    #[test]
    fn lengths_are_written_without_noise() {
        assert_eq!(LengthUnit::Inch.shown(2.5), "0.0984");
        assert_eq!(LengthUnit::Inch.shown(12.0), "0.4724");
        assert_eq!(LengthUnit::Inch.shown(0.05), "0.00197");
        assert_eq!(LengthUnit::Inch.shown(25.4), "1");
        assert_eq!(LengthUnit::Inch.shown(-2.5), "-0.0984");
        assert_eq!(LengthUnit::Inch.shown(0.0), "0");
        assert_eq!(LengthUnit::Mm.shown(12.0), "12");
        assert_eq!(LengthUnit::Mm.shown(2.5), "2.5");
        assert_eq!(LengthUnit::Inch.fixed(2.5, 2), "0.0984");
        assert_eq!(LengthUnit::Mm.fixed(2.5, 2), "2.50");
        assert_eq!(LengthUnit::Inch.fixed(10.0, 1), "0.394");
    }

    #[test]
    fn only_mm_and_in_are_units() {
        assert_eq!(LengthUnit::from_name(Some("mm")), Ok(LengthUnit::Mm));
        assert_eq!(LengthUnit::from_name(Some("in")), Ok(LengthUnit::Inch));
        for bad in [Some("cm"), Some("IN"), Some(""), Some("inch"), None] {
            let e = LengthUnit::from_name(bad).unwrap_err().to_string();
            assert!(
                e.starts_with("length unit must be “mm” or “in”"),
                "{bad:?}: {e}"
            );
        }
        assert!(LengthUnit::from_name(Some("cm"))
            .unwrap_err()
            .to_string()
            .ends_with("got “cm”"));
        assert_eq!(LengthUnit::default().name(), "mm");
        assert_eq!(LengthUnit::Inch.name(), "in");
        assert_eq!(LengthUnit::Inch.area_name(), "in²");
    }
}
