//! Typed errors. Every message names the field (as a JSON path of the design document) and the
//! allowed range, so that a user can correct the input without reading code.

use thiserror::Error;

/// One problem with one field of a design document.
#[derive(Debug, Clone, PartialEq, Error, serde::Serialize)]
#[error("{field} {message}")]
pub struct FieldError {
    /// JSON path of the offending field, e.g. `diameter_mm` or `material.custom.n`.
    pub field: String,
    /// What is wrong and what is allowed, e.g. `must be > 0 mm, got -3`.
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

/// Format a number for an error message: finite values as given, others spelled out.
pub(crate) fn show(x: f64) -> String {
    if x.is_nan() {
        "not a number".to_string()
    } else if x.is_infinite() {
        "infinite".to_string()
    } else if x != 0.0 && (x.abs() >= 1e7 || x.abs() < 1e-4) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}
