//! Typed errors. Every message names the field (as a JSON path of the design document) and the
//! allowed range, so that a user can correct the input without reading code.

use thiserror::Error;

/// One problem with one field of a design document. Shown as `field message` when the message
/// goes on from the field's name (`must be …`, `needs …`), and as `field: Message` when it is a
/// sentence of its own (`The mount “clip” ends at 8 mm, …`).
#[derive(Debug, Clone, PartialEq, Error, serde::Serialize)]
#[error("{field}{}{message}", if message.starts_with(char::is_uppercase) { ": " } else { " " })]
pub struct FieldError {
    /// JSON path of the offending field, e.g. `diameter_mm` or `material.custom.n`.
    pub field: String,
    /// What is wrong and what is allowed, e.g. `must be more than 0 mm, got -3`.
    pub message: String,
}

impl FieldError {
    /// A field error from a path and a message.
    pub fn new(field: impl Into<String>, message: impl Into<String>) -> Self {
        Self {
            field: field.into(),
            message: message.into(),
        }
    }
}

/// Errors of the tirtrace core.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum TirError {
    /// A field holds a value outside its allowed range.
    #[error("{0}")]
    Field(FieldError),
    /// The document could not be read at all (syntax, unknown field, wrong type).
    #[error("could not read the design: {0}")]
    Parse(String),
    /// A scenario document could not be read at all.
    #[error("could not read the scenario: {0}")]
    ParseScenario(String),
    /// A chart could not be drawn (a drawing backend failure, not a user error).
    #[error("could not draw the chart: {0}")]
    Draw(String),
}

/// Errors of running a trace on this machine, not of the document: kept apart from
/// [`TirError`], whose variants are about what the user wrote or asked for.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum RunError {
    /// The worker threads could not be started (an operating-system limit). Written
    /// `threads <reason>`, the text it had when it was passed off as a field error, so the
    /// command line's message is unchanged.
    #[error("threads {0}")]
    ThreadPool(String),
}

impl From<FieldError> for TirError {
    fn from(e: FieldError) -> Self {
        TirError::Field(e)
    }
}

/// Format a number for an error message: finite values as given, others spelled out; very large
/// and very small ones in e-notation with at most seven significant digits, so that a message
/// never spells out a long number (`1.234568e300`, not three hundred digits); others with at
/// most seven significant digits once longer than twelve characters.
pub(crate) fn show(x: f64) -> String {
    if x.is_nan() {
        "not a number".to_string()
    } else if x.is_infinite() {
        "infinite".to_string()
    } else if x != 0.0 && (x.abs() >= 1e7 || x.abs() < 1e-4) {
        let shortest = format!("{x:e}");
        let mantissa = shortest
            .split_once('e')
            .map_or(shortest.as_str(), |(m, _)| m);
        if mantissa.trim_start_matches('-').len() <= 8 {
            shortest
        } else {
            let rounded = format!("{x:.6e}");
            let (m, exponent) = rounded.split_once('e').unwrap_or((&rounded, "0"));
            let m = m.trim_end_matches('0').trim_end_matches('.');
            format!("{m}e{exponent}")
        }
    } else {
        let plain = format!("{x}");
        if plain.len() <= 12 {
            return plain;
        }
        // Seven significant digits: the digits before the point count.
        let whole_digits = (libm::log10(x.abs()).floor() as i32 + 1).max(1);
        let decimals = (7 - whole_digits).max(0) as usize;
        let rounded = format!("{x:.decimals$}");
        if rounded.contains('.') {
            rounded
                .trim_end_matches('0')
                .trim_end_matches('.')
                .to_string()
        } else {
            rounded
        }
    }
}

#[cfg(test)]
mod tests {
    use super::show;

    #[test]
    fn numbers_in_messages_are_short() {
        assert_eq!(show(1.5), "1.5");
        assert_eq!(show(-3.0), "-3");
        assert_eq!(show(2e9), "2e9");
        assert_eq!(show(1e-9), "1e-9");
        assert_eq!(show(1.2345678901234567e300), "1.234568e300");
        assert_eq!(show(9.99999999999e10), "1e11");
        assert_eq!(show(-1.2345678901234567e-30), "-1.234568e-30");
        assert_eq!(show(0.30000000000000004), "0.3");
        assert_eq!(show(1234.5678901234), "1234.568");
        assert_eq!(show(1.0000001), "1.0000001");
        assert_eq!(show(f64::NAN), "not a number");
        assert_eq!(show(f64::NEG_INFINITY), "infinite");
    }
}
