//! Every problem with a scenario document given as text, for a form that marks each bad field:
//! a document that cannot be read at all (bad JSON, an unknown field, a wrong type) gives one
//! problem at the field where reading stopped; a readable one gives every range problem
//! [`Scenario::check`] finds, not only the first.

use serde::{Deserialize, Serialize};

use crate::error::FieldError;
use crate::scenario::Scenario;

/// One problem: the field's path in the document (`route[2].bend.radius_mm`, `source.gap_mm`;
/// `scenario` when the whole document is at fault) and a whole sentence for people that names
/// the field and the allowed range.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Problem {
    /// Path of the offending field, in the syntax of the core's messages.
    pub field: String,
    /// The message with the field's path, for the command line and the document's editors,
    /// e.g. `route[1].bend.radius_mm must be more than 1.5 mm (…), got -3`.
    pub message: String,
    /// The same without the field's path, for a form that puts the field's own label before
    /// it: `must be more than 1.5 mm (…), got -3`, or a sentence of its own (`The mount …`).
    #[serde(default)]
    pub says: String,
}

impl Problem {
    /// A problem of `field`: the message is the field's path followed by `says`, as a
    /// [`FieldError`] is shown.
    pub fn new(field: impl Into<String>, says: impl Into<String>) -> Problem {
        Problem::from(&FieldError::new(field, says))
    }

    /// A problem whose message names its subject itself (`vary is missing: …`): shown the same
    /// with or without the field.
    pub fn sentence(field: impl Into<String>, message: impl Into<String>) -> Problem {
        let message = message.into();
        Problem {
            field: field.into(),
            says: message.clone(),
            message,
        }
    }
}

impl From<&FieldError> for Problem {
    fn from(e: &FieldError) -> Problem {
        Problem {
            field: e.field.clone(),
            message: e.to_string(),
            says: e.message.clone(),
        }
    }
}

/// The verdict on a scenario document: `ok` exactly when `problems` is empty.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ScenarioCheck {
    /// True when the scenario can be traced.
    pub ok: bool,
    /// Every problem found, in document order.
    pub problems: Vec<Problem>,
}

/// A document's text without the byte-order mark some editors write at its start (U+FEFF):
/// JSON does not allow one, but it carries no content, so every reader of a document drops it.
pub fn without_bom(text: &str) -> &str {
    text.strip_prefix('\u{feff}').unwrap_or(text)
}

/// Read a scenario from JSON text. On failure, the one problem where reading stopped: its
/// field is the path serde reached (`scenario` for the document as a whole, e.g. bad JSON
/// syntax at the top, or an array given for the document) and its message is the same text as
/// [`Scenario::from_json`]'s error.
pub fn read_scenario(text: &str) -> Result<Scenario, Problem> {
    Scenario::read_json(text).map_err(|(path, error)| {
        let message = error.to_string();
        // The words after the path: what the form shows after the field's label.
        let says = match error {
            crate::TirError::ParseScenario(ref m) => m
                .strip_prefix(path.as_str())
                .unwrap_or(m)
                .trim_start()
                .to_string(),
            _ => message.clone(),
        };
        Problem {
            message,
            says,
            // A document given as an array (serde reads a struct from one) has no field to
            // mark: the document is at fault.
            field: if path.is_empty() || path.starts_with('[') {
                "scenario".to_string()
            } else {
                path
            },
        }
    })
}

/// Read and validate a scenario: the scenario, or every problem with it.
pub fn valid_scenario(text: &str) -> Result<Scenario, Vec<Problem>> {
    let scenario = read_scenario(text).map_err(|p| vec![p])?;
    match scenario.check() {
        Ok(_) => Ok(scenario),
        Err(errors) if errors.is_empty() => Err(vec![Problem::sentence(
            "scenario",
            "the scenario could not be validated",
        )]),
        Err(errors) => Err(errors.iter().map(Problem::from).collect()),
    }
}

/// Check a scenario document given as JSON text; never fails.
pub fn check_scenario(text: &str) -> ScenarioCheck {
    match valid_scenario(text) {
        Ok(_) => ScenarioCheck {
            ok: true,
            problems: Vec::new(),
        },
        Err(problems) => ScenarioCheck {
            ok: false,
            problems,
        },
    }
}

/// The messages of a list of problems on one line, joined by `; ` (for an error that can carry
/// only text).
pub fn joined(problems: &[Problem]) -> String {
    problems
        .iter()
        .map(|p| p.message.as_str())
        .collect::<Vec<_>>()
        .join("; ")
}
