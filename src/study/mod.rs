//! Design studies: a scenario traced at several values of one or two of its fields.
//!
//! The study document (version 1):
//!
//! ```json
//! { "version": 1, "name": "Tighter first bend",
//!   "scenario": { …a scenario document… },
//!   "vary": { "field": "route[1].bend.radius_mm", "values": [6, 7, 8, 9] } }
//! ```
//!
//! or `"vary": { "field": …, "from": 6, "to": 9, "steps": 6 }` (six equal steps, seven points),
//! or texts for a text field (`"field": "guide.material.library", "values": ["pmma",
//! "polycarbonate"]`), or `"factors": [0.8, 1, 1.25]` that multiply the field's number — with
//! `[*]` every number it names: `route[*].bend.radius_mm` scales every bend together. An
//! `"and_vary"` of the same form makes a grid: every pair of values, `vary`'s outer.
//! The field is a path in the syntax of the core's messages ([`path`]) naming a number of the
//! scenario as read (defaults filled in). Every point is the scenario with that number set, read
//! and checked by the scenario's own code: a point with problems is reported with them and
//! skipped; the others are traced ([`sweep`]).
//!
//! All points are traced with the same rays and seed: ray k of batch b draws the same random
//! numbers at every point (common random numbers, [`crate::trace::Prepared::trace_batch_per_ray`]),
//! so neighbouring points differ by the design change rather than by noise, and each point's
//! difference to the first traced point is estimated from the per-ray differences.

pub mod find;
pub mod path;
pub mod pieces;
pub mod sweep;
pub mod tolerance;
pub mod varied_bend;

use schemars::JsonSchema;
use serde::Deserialize;
use serde_json::Value;

use crate::limits::{FieldErrors, FIELD_PATH_CHARS, SWEEP_POINTS, SWEEP_STEPS};
use crate::problems::{read_scenario, Problem};
use crate::scenario::Scenario;
pub use find::{Find, FindBatch, FindPlan, FindReport, FindSteps, FindValue, FindValueBatch};
pub use path::FieldPath;
pub use sweep::{PointReport, PointResult, Sweep, SweepBatch, SweepReport};
use tolerance::ToleranceDocument;
pub use tolerance::{Tolerance, ToleranceBatch, TolerancePlan, ToleranceReport};
pub use varied_bend::VariedBend;

/// The study document's version this build reads.
pub const STUDY_VERSION: u32 = 1;

/// A study: a scenario and what to do with it (`tirtrace study`): today a sweep, the scenario
/// traced at several values of one of its numbers.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(title = "tirtrace study")]
// Exactly one plan (the schema's counterpart of the reader's check).
#[schemars(extend("oneOf" = [{ "required": ["vary"] }, { "required": ["find"] }, { "required": ["tolerances"] }]))]
pub(crate) struct StudyDocument {
    /// The study document's version: 1.
    #[serde(deserialize_with = "crate::scenario::whole_version")]
    #[schemars(transform = crate::schema::version(STUDY_VERSION))]
    version: u32,
    /// A name for the study, shown with its results.
    #[serde(default)]
    name: Option<String>,
    /// The scenario studied (a whole scenario document); every point is this scenario with the
    /// varied number set.
    #[schemars(with = "Scenario")]
    scenario: Value,
    /// A sweep: the field varied and its values. A study gives exactly one plan (`vary`,
    /// `find` or `tolerances`).
    #[serde(default)]
    #[schemars(with = "VaryDocument")]
    vary: Option<VaryDocument>,
    /// A second field varied with `vary`: the sweep traces every pair of values (a grid,
    /// `vary`'s values outer, these inner).
    #[serde(default)]
    #[schemars(with = "VaryDocument")]
    and_vary: Option<VaryDocument>,
    /// A search: the smallest or largest value of one number of the scenario that meets a
    /// criterion ([`find`]).
    #[serde(default)]
    #[schemars(with = "find::FindDocument")]
    find: Option<find::FindDocument>,
    /// A tolerance study: numbers of the scenario made within tolerances, many variants drawn
    /// and traced with the same rays, and the tolerances ranked by their effect.
    #[serde(default)]
    #[schemars(with = "ToleranceDocument")]
    tolerances: Option<ToleranceDocument>,
}

/// The field varied: its path and either `values` (numbers, or texts such as material names),
/// `factors`, or `from`, `to` and `steps`.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(rename = "Vary")]
struct VaryDocument {
    /// The path of a number or text of the scenario, as the core's messages write it:
    /// `route[1].bend.radius_mm`, `source.gap_mm`, `source.offset_mm[0]`,
    /// `guide.section.round.diameter_mm`, `guide.material.library`. `[*]` names every element of
    /// a list that has the rest of the path: `route[*].bend.radius_mm` is every bend's radius.
    #[schemars(length(min = FIELD_PATH_CHARS.min, max = FIELD_PATH_CHARS.max))]
    field: String,
    /// The values, in the order they are traced (the first traced point is the reference of
    /// every difference): numbers for a number, texts for a text (a material's name in the
    /// library). With `[*]`, every named field takes the value.
    #[serde(default)]
    #[schemars(length(min = SWEEP_POINTS.min, max = SWEEP_POINTS.max))]
    values: Option<Vec<VaryValue>>,
    /// Factors the field's number is multiplied by at each point (with `[*]`, every named
    /// number: `[0.8, 1, 1.25]` scales every bend radius together), instead of `values`.
    #[serde(default)]
    #[schemars(length(min = SWEEP_POINTS.min, max = SWEEP_POINTS.max))]
    factors: Option<Vec<f64>>,
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

/// One of `vary.values`: a number or a text.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(untagged)]
enum VaryValue {
    /// A number.
    Number(f64),
    /// A text (a material's name).
    Text(String),
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
    /// `find`: search one number for the limit of a criterion ([`find`]).
    Find(FindPlan),
    /// `tolerances`: trace variants of the scenario drawn within tolerances ([`tolerance`]).
    Tolerance(TolerancePlan),
}

/// A sweep's varied fields: one, or two for a grid (every pair, the first field's values
/// outer).
#[derive(Debug, Clone)]
pub struct SweepPlan {
    /// The varied fields (`vary`, then `and_vary` if given).
    pub axes: Vec<Axis>,
}

/// A varied field and its settings, in the document's order.
#[derive(Debug, Clone)]
pub struct Axis {
    /// The field (may hold `[*]`).
    pub field: FieldPath,
    /// Its setting at each of its points.
    pub settings: Vec<Setting>,
}

/// What a varied field is set to at one point.
#[derive(Debug, Clone, PartialEq)]
pub enum Setting {
    /// This number.
    Number(f64),
    /// This text.
    Text(String),
    /// Its own number times this factor.
    Factor(f64),
}

impl Setting {
    /// Set `field` (every field it names, with `[*]`) in a scenario held as JSON; the error
    /// says, for people, why it cannot be.
    pub fn apply(&self, field: &FieldPath, doc: &mut Value) -> Result<(), String> {
        for one in field.expand(doc)? {
            match self {
                Setting::Number(x) => one.set_number(doc, *x)?,
                Setting::Text(t) => one.set_text(doc, t)?,
                Setting::Factor(f) => {
                    let x = one.number_in(doc)? * f;
                    one.set_number(doc, x)?
                }
            }
        }
        Ok(())
    }

    /// The setting as a report shows it: the number, the text or the factor.
    pub fn as_json(&self) -> Value {
        match self {
            Setting::Number(x) | Setting::Factor(x) => serde_json::Number::from_f64(*x)
                .map(Value::Number)
                .unwrap_or(Value::Null),
            Setting::Text(t) => Value::String(t.clone()),
        }
    }
}

/// The plans a study document may give, for messages.
const PLANS: &str = "vary, find or tolerances";

/// A problem of the study document: its field path is in the study document
/// (`vary.steps`, `scenario.route[1].bend.radius_mm`).
pub(crate) fn problem(field: impl Into<String>, message: impl AsRef<str>) -> Problem {
    Problem::new(field, message.as_ref())
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
        says: p.says,
    }
}

impl Study {
    /// Read a study document; on failure every problem found, each naming its field path in the
    /// study document and the allowed range.
    pub fn from_json(text: &str) -> Result<Study, Vec<Problem>> {
        let doc: StudyDocument = crate::reading::read_document(text).map_err(|u| {
            if u.path.is_empty() {
                vec![problem(
                    "study",
                    format!("could not be read: {}", u.sentence()),
                )]
            } else {
                vec![problem(u.path, u.said)]
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
        if doc.and_vary.is_some() && doc.vary.is_none() {
            problems.push(problem("and_vary", "needs vary: the first varied field"));
        }
        let given = [
            doc.vary.is_some(),
            doc.find.is_some(),
            doc.tolerances.is_some(),
        ];
        let plan = match (doc.vary, doc.find, doc.tolerances) {
            (Some(vary), None, None) => read_sweep(
                &vary,
                doc.and_vary.as_ref(),
                scenario.as_ref(),
                &mut problems,
            )
            .map(Plan::Sweep),
            (None, Some(f), None) => {
                find::read_find(&f, scenario.as_ref(), &mut problems).map(Plan::Find)
            }
            (None, None, Some(t)) => {
                tolerance::read_tolerances(&t, scenario.as_ref(), &mut problems)
                    .map(Plan::Tolerance)
            }
            (None, None, None) if doc.and_vary.is_some() => None,
            (None, None, None) => {
                problems.push(problem(
                    "study",
                    format!("must give a plan: {PLANS} (none is given)"),
                ));
                None
            }
            _ => {
                let names: Vec<&str> = ["vary", "find", "tolerances"]
                    .into_iter()
                    .zip(given)
                    .filter_map(|(n, g)| g.then_some(n))
                    .collect();
                problems.push(problem(
                    "study",
                    format!(
                        "must give exactly one plan: {PLANS} ({} are given)",
                        names.join(" and ")
                    ),
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

/// Read a sweep's `vary` and `and_vary`, adding their problems to `problems`.
fn read_sweep(
    vary: &VaryDocument,
    and_vary: Option<&VaryDocument>,
    scenario: Option<&Scenario>,
    problems: &mut Vec<Problem>,
) -> Option<SweepPlan> {
    let doc = scenario.and_then(|s| serde_json::to_value(s).ok());
    let first = read_axis("vary", vary, doc.as_ref(), problems);
    let Some(and_vary) = and_vary else {
        return Some(SweepPlan { axes: vec![first?] });
    };
    let second = read_axis("and_vary", and_vary, doc.as_ref(), problems);
    let (first, second) = (first?, second?);
    let points = first.settings.len() as u64 * second.settings.len() as u64;
    if !SWEEP_POINTS.contains(points) {
        problems.push(problem(
            "and_vary",
            format!(
                "makes a grid of {} × {} = {points} points; a sweep has {} points",
                first.settings.len(),
                second.settings.len(),
                count_rule()
            ),
        ));
        return None;
    }
    if first.field.text == second.field.text {
        problems.push(problem(
            "and_vary.field",
            format!(
                "must differ from vary.field, got {} twice",
                first.field.text
            ),
        ));
        return None;
    }
    Some(SweepPlan {
        axes: vec![first, second],
    })
}

/// Read one varied field (`at` is `vary` or `and_vary`) against the scenario as read (when it
/// could be), adding its problems to `problems`.
fn read_axis(
    at: &str,
    vary: &VaryDocument,
    doc: Option<&Value>,
    problems: &mut Vec<Problem>,
) -> Option<Axis> {
    let field = vary_field(&vary.field)
        .map_err(|m| problems.push(problem(format!("{at}.field"), m)))
        .ok();
    let settings = vary_settings(at, vary)
        .map_err(|mut p| problems.append(&mut p))
        .ok();
    let (field, settings) = (field?, settings?);
    // The field must name what the settings set: a number, or a text for texts.
    if let Some(doc) = doc {
        let found = field.expand(doc).and_then(|all| {
            all.iter().try_for_each(|one| match settings.first() {
                Some(Setting::Text(_)) => one
                    .text_in(doc)
                    .map(|_| ())
                    .map_err(|e| format!("{e}: it takes numbers (give numbers in {at}.values)")),
                _ => one.number_in(doc).map(|_| ()).map_err(|e| {
                    if one.text_in(doc).is_ok() {
                        format!("names a text in the scenario: give texts in {at}.values")
                    } else {
                        e
                    }
                }),
            })
        });
        if let Err(m) = found {
            problems.push(problem(format!("{at}.field"), m));
            return None;
        }
    }
    Some(Axis { field, settings })
}

/// Read a varied field's path and check that it may change from point to point.
fn vary_field(text: &str) -> Result<FieldPath, String> {
    let chars = text.chars().count() as u64;
    if !FIELD_PATH_CHARS.contains(chars) {
        return Err(format!(
            "must have {} characters, got {chars}",
            FIELD_PATH_CHARS.span()
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
    Ok(field)
}

/// The settings of a varied field (`at` is `vary` or `and_vary`): its values (numbers or
/// texts, not both), its factors, or `steps` + 1 numbers equally spaced from `from` to `to`.
fn vary_settings(at: &str, v: &VaryDocument) -> Result<Vec<Setting>, Vec<Problem>> {
    let range_given = [v.from.is_some(), v.to.is_some(), v.steps.is_some()];
    let lists = [v.values.is_some(), v.factors.is_some()];
    let list_count = |field: &str, n: usize| -> Result<(), Vec<Problem>> {
        if SWEEP_POINTS.contains(n as u64) {
            Ok(())
        } else {
            Err(vec![problem(
                format!("{at}.{field}"),
                format!("must list {} {field}, got {n}", count_rule()),
            )])
        }
    };
    match (lists, range_given) {
        ([true, false], [false, false, false]) => {
            let values = v.values.as_deref().unwrap_or_default();
            list_count("values", values.len())?;
            let numbers = values
                .iter()
                .filter(|x| matches!(x, VaryValue::Number(_)))
                .count();
            if numbers != 0 && numbers != values.len() {
                return Err(vec![problem(
                    format!("{at}.values"),
                    "must be all numbers or all texts (material names), not a mix",
                )]);
            }
            Ok(values
                .iter()
                .map(|x| match x {
                    VaryValue::Number(x) => Setting::Number(*x),
                    VaryValue::Text(t) => Setting::Text(t.clone()),
                })
                .collect())
        }
        ([false, true], [false, false, false]) => {
            let factors = v.factors.as_deref().unwrap_or_default();
            list_count("factors", factors.len())?;
            if let Some((i, f)) = factors
                .iter()
                .enumerate()
                .find(|(_, f)| !(**f > 0.0 && f.is_finite()))
            {
                return Err(vec![problem(
                    format!("{at}.factors[{i}]"),
                    format!("must be more than 0, got {f}"),
                )]);
            }
            Ok(factors.iter().map(|&f| Setting::Factor(f)).collect())
        }
        ([true, true], _) | ([_, true], [true, _, _] | [_, true, _] | [_, _, true]) => {
            Err(vec![problem(
                at,
                "must give one of values, factors, or from, to and steps, not several",
            )])
        }
        ([true, _], _) => Err(vec![problem(
            at,
            "must give either values or from, to and steps, not both",
        )]),
        ([false, false], [true, true, true]) => {
            let (from, to, steps) = (v.from.unwrap_or(0.0), v.to.unwrap_or(0.0), v.steps);
            let steps = steps.unwrap_or(0.0);
            let whole = steps.fract() == 0.0 && steps >= 0.0 && steps <= SWEEP_STEPS.max as f64;
            if !whole || !SWEEP_STEPS.contains(steps as u64) {
                return Err(vec![problem(
                    format!("{at}.steps"),
                    format!(
                        "{} (equal steps from {at}.from to {at}.to; the points are one more), \
                         got {}",
                        SWEEP_STEPS.rule(),
                        crate::error::show(steps)
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
                    Setting::Number(if k == n {
                        to
                    } else if span.is_finite() {
                        from + span * k as f64 / n as f64
                    } else {
                        from * (1.0 - t) + to * t
                    })
                })
                .collect())
        }
        ([false, false], given) => {
            let missing: Vec<Problem> = ["from", "to", "steps"]
                .iter()
                .zip(given)
                .filter(|(_, g)| !g)
                .map(|(name, _)| {
                    problem(
                        format!("{at}.{name}"),
                        format!(
                            "is missing: give {at}.values, {at}.factors, or {at}.from, {at}.to \
                             and {at}.steps"
                        ),
                    )
                })
                .collect();
            Err(missing)
        }
    }
}

/// `from 2 to 200`.
fn count_rule() -> String {
    SWEEP_POINTS.span()
}
