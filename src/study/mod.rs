//! Design studies: a scenario traced at several values of one of its numbers.
//!
//! The study document (version 1):
//!
//! ```json
//! { "version": 1, "name": "Tighter first bend",
//!   "scenario": { …a scenario document… },
//!   "vary": { "field": "route[1].bend.radius_mm", "values": [6, 7, 8, 9] } }
//! ```
//!
//! or `"vary": { "field": …, "from": 6, "to": 9, "steps": 6 }` (six equal steps, seven points).
//! The field is a path in the syntax of the core's messages ([`path`]) naming a number of the
//! scenario as read (defaults filled in). Every point is the scenario with that number set, read
//! and checked by the scenario's own code: a point with problems is reported with them and
//! skipped; the others are traced ([`sweep`]).
//!
//! All points are traced with the same rays and seed: ray k of batch b draws the same random
//! numbers at every point (common random numbers, [`crate::trace::Prepared::trace_batch_per_ray`]),
//! so neighbouring points differ by the design change rather than by noise, and each point's
//! difference to the first traced point is estimated from the per-ray differences.

pub mod path;
pub mod sweep;
pub mod varied_bend;

use schemars::JsonSchema;
use serde::Deserialize;
use serde_json::Value;

use crate::limits::{FieldErrors, FIELD_PATH_CHARS, SWEEP_POINTS, SWEEP_STEPS};
use crate::problems::{read_scenario, Problem};
use crate::scenario::Scenario;
pub use path::FieldPath;
pub use sweep::{PointReport, PointResult, Sweep, SweepBatch, SweepReport};
pub use varied_bend::VariedBend;

/// The study document's version this build reads.
pub const STUDY_VERSION: u32 = 1;

/// A study: a scenario and what to do with it (`tirtrace study`): today a sweep, the scenario
/// traced at several values of one of its numbers.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(title = "tirtrace study")]
// Exactly one plan (the schema's counterpart of the reader's check).
#[schemars(extend("oneOf" = [{ "required": ["vary"] }]))]
pub(crate) struct StudyDocument {
    /// The study document's version: 1.
    #[schemars(transform = crate::schema::version(STUDY_VERSION))]
    version: u32,
    /// A name for the study, shown with its results.
    #[serde(default)]
    name: Option<String>,
    /// The scenario studied (a whole scenario document); every point is this scenario with the
    /// varied number set.
    #[schemars(with = "Scenario")]
    scenario: Value,
    /// A sweep: the number varied and its values. A study gives exactly one plan (today:
    /// `vary`).
    #[serde(default)]
    #[schemars(with = "VaryDocument")]
    vary: Option<VaryDocument>,
}

/// The number varied: its field path and either `values` or `from`, `to` and `steps`.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(rename = "Vary")]
struct VaryDocument {
    /// The path of a number of the scenario, as the core's messages write it:
    /// `route[1].bend.radius_mm`, `source.gap_mm`, `source.offset_mm[0]`,
    /// `guide.section.round.diameter_mm`.
    #[schemars(length(min = FIELD_PATH_CHARS.min, max = FIELD_PATH_CHARS.max))]
    field: String,
    /// The values, in the order they are traced; the first traced point is the reference of
    /// every difference.
    #[serde(default)]
    #[schemars(length(min = SWEEP_POINTS.min, max = SWEEP_POINTS.max))]
    values: Option<Vec<f64>>,
    /// First value of an even range (with `to` and `steps`, instead of `values`).
    #[serde(default)]
    from: Option<f64>,
    /// Last value of an even range.
    #[serde(default)]
    to: Option<f64>,
    /// Number of equal steps from `from` to `to` (the points are one more).
    #[serde(default)]
    #[schemars(with = "Option<u64>", transform = crate::schema::within(SWEEP_STEPS))]
    steps: Option<f64>,
}

/// A read and checked study: the scenario as read and what is done with it.
#[derive(Debug, Clone)]
pub struct Study {
    /// A label for people.
    pub name: Option<String>,
    /// The scenario (its `trace` settings hold for every point; the command line may set
    /// `trace.rays` and `trace.seed` here before the study is prepared).
    pub scenario: Scenario,
    /// What the study does with the scenario.
    pub plan: Plan,
}

/// What a study does with its scenario: the document's one plan.
#[derive(Debug, Clone)]
pub enum Plan {
    /// `vary`: trace the scenario at several values of one of its numbers ([`sweep`]).
    Sweep(SweepPlan),
}

/// A sweep's varied field and values.
#[derive(Debug, Clone)]
pub struct SweepPlan {
    /// The varied field.
    pub field: FieldPath,
    /// The values, in the document's order.
    pub values: Vec<f64>,
}

/// The plans a study document may give, for messages.
const PLANS: &str = "vary";

/// A problem of the study document: its field path is in the study document
/// (`vary.steps`, `scenario.route[1].bend.radius_mm`).
fn problem(field: impl Into<String>, message: impl AsRef<str>) -> Problem {
    let field = field.into();
    Problem {
        message: format!("{field} {}", message.as_ref()),
        field,
    }
}

/// A scenario's problem moved under the study's `scenario` field (the message keeps the
/// scenario's own wording, which names the field inside the scenario).
pub(crate) fn in_scenario(p: Problem) -> Problem {
    Problem {
        field: if p.field == "scenario" {
            p.field
        } else {
            format!("scenario.{}", p.field)
        },
        message: p.message,
    }
}

impl Study {
    /// Read a study document; on failure every problem found, each naming its field path in the
    /// study document and the allowed range.
    pub fn from_json(text: &str) -> Result<Study, Vec<Problem>> {
        let de = &mut serde_json::Deserializer::from_str(text);
        let doc: StudyDocument = serde_path_to_error::deserialize(de).map_err(|e| {
            let path = e.path().to_string();
            let inner = e.into_inner();
            if path.is_empty() || path == "." || path == "?" {
                vec![problem("study", format!("could not be read: {inner}"))]
            } else {
                vec![problem(path, format!("could not be read: {inner}"))]
            }
        })?;
        let mut errors = FieldErrors::default();
        errors.version(doc.version, STUDY_VERSION);
        let mut problems: Vec<Problem> = errors.0.iter().map(Problem::from).collect();
        let scenario = match read_scenario(&doc.scenario.to_string()) {
            Ok(s) => Some(s),
            Err(p) => {
                problems.push(in_scenario(p));
                None
            }
        };
        let plan = match doc.vary {
            Some(vary) => read_sweep(&vary, scenario.as_ref(), &mut problems).map(Plan::Sweep),
            None => {
                problems.push(problem(
                    "study",
                    format!("must give a plan: {PLANS} (none is given)"),
                ));
                None
            }
        };
        match (scenario, plan) {
            (Some(scenario), Some(plan)) if problems.is_empty() => Ok(Study {
                name: doc.name,
                scenario,
                plan,
            }),
            _ => Err(problems),
        }
    }
}

/// Read a sweep's `vary`, adding its problems to `problems`.
fn read_sweep(
    vary: &VaryDocument,
    scenario: Option<&Scenario>,
    problems: &mut Vec<Problem>,
) -> Option<SweepPlan> {
    let field = vary_field(&vary.field, scenario)
        .map_err(|m| problems.push(problem("vary.field", m)))
        .ok();
    let values = vary_values(vary)
        .map_err(|mut p| problems.append(&mut p))
        .ok();
    Some(SweepPlan {
        field: field?,
        values: values?,
    })
}

/// Read `vary.field` and check that it names a number of the scenario (when it could be read)
/// that may change from point to point.
fn vary_field(text: &str, scenario: Option<&Scenario>) -> Result<FieldPath, String> {
    let chars = text.chars().count() as u64;
    if !FIELD_PATH_CHARS.contains(chars) {
        return Err(format!(
            "must have {} characters, got {chars}",
            FIELD_PATH_CHARS.rule().trim_start_matches("must be ")
        ));
    }
    let field = FieldPath::parse(text)?;
    match field.top() {
        "trace" => {
            return Err(
                "cannot be a trace setting: every point is traced with the same rays \
                        and seed (set them in scenario.trace, or with --rays and --seed)"
                    .to_string(),
            )
        }
        "version" => return Err("cannot be the scenario's version".to_string()),
        _ => {}
    }
    if let Some(s) = scenario {
        let doc = serde_json::to_value(s).map_err(|e| e.to_string())?;
        field.number_in(&doc)?;
    }
    Ok(field)
}

/// The values of `vary`: the list, or `steps` + 1 equally spaced from `from` to `to`.
fn vary_values(v: &VaryDocument) -> Result<Vec<f64>, Vec<Problem>> {
    let range_given = [v.from.is_some(), v.to.is_some(), v.steps.is_some()];
    match (&v.values, range_given) {
        (Some(values), [false, false, false]) => {
            let n = values.len() as u64;
            if SWEEP_POINTS.contains(n) {
                Ok(values.clone())
            } else {
                Err(vec![problem(
                    "vary.values",
                    format!("must list {} values, got {n}", count_rule()),
                )])
            }
        }
        (Some(_), _) => Err(vec![problem(
            "vary",
            "must give either values or from, to and steps, not both",
        )]),
        (None, [true, true, true]) => {
            let (from, to, steps) = (v.from.unwrap_or(0.0), v.to.unwrap_or(0.0), v.steps);
            let steps = steps.unwrap_or(0.0);
            let whole = steps.fract() == 0.0 && steps >= 0.0 && steps <= SWEEP_STEPS.max as f64;
            if !whole || !SWEEP_STEPS.contains(steps as u64) {
                return Err(vec![problem(
                    "vary.steps",
                    format!(
                        "must be a whole number ≥ {} and ≤ {} (equal steps from vary.from to \
                         vary.to; the points are one more), got {steps}",
                        SWEEP_STEPS.min, SWEEP_STEPS.max
                    ),
                )]);
            }
            let n = steps as u64;
            // from + (to − from)·k/n (exact at round steps such as 4.5 + 7.5·4/5); where
            // to − from overflows, from·(1 − t) + to·t, which stays finite for finite ends.
            let span = to - from;
            Ok((0..=n)
                .map(|k| {
                    let t = k as f64 / n as f64;
                    if k == n {
                        to
                    } else if span.is_finite() {
                        from + span * k as f64 / n as f64
                    } else {
                        from * (1.0 - t) + to * t
                    }
                })
                .collect())
        }
        (None, given) => {
            let names = ["vary.from", "vary.to", "vary.steps"];
            let missing: Vec<Problem> = names
                .iter()
                .zip(given)
                .filter(|(_, g)| !g)
                .map(|(name, _)| {
                    problem(
                        *name,
                        "is missing: give vary.values, or vary.from, vary.to and vary.steps",
                    )
                })
                .collect();
            Err(missing)
        }
    }
}

/// `≥ 2 and ≤ 200`.
fn count_rule() -> String {
    SWEEP_POINTS
        .rule()
        .trim_start_matches("must be ")
        .to_string()
}
