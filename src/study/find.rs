//! Searching one number of a scenario for the limit of a criterion: the smallest bend radius at
//! which a bend leaks at most X % of the light entering it, or the largest LED offset, gap or
//! tilt that keeps the delivered share within X % of the scenario's own.
//!
//! The study document's second plan:
//!
//! ```json
//! "find": { "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
//!           "bend_leak_at_most_percent": 1 }
//! "find": { "largest": "source.offset_mm[0]", "from": 0, "to": 1,
//!           "delivered_loss_at_most_percent": 5 }
//! ```
//!
//! Exactly one of `smallest` / `largest`, exactly one criterion; `bend` (optional) is the route
//! index of the bend whose leak counts (default: the route element the field is in).
//!
//! Method: every value is traced with the same rays (common random numbers: ray k draws the same
//! numbers at every value, [`Prepared::trace_batch_watching`]). Per ray a margin z_k is formed,
//! positive where the ray breaks the criterion:
//! - bend leak ≤ X: z_k = leaked_k − X·entered_k (the weight the ray leaked in the bend and its
//!   weight when it first entered it), so E[z] ≤ 0 ⇔ leaked/entered ≤ X;
//! - delivered loss ≤ X: z_k = (1 − X)·x₀,k − x_k, with x₀,k the same ray's delivered weight in
//!   the scenario as given, so E[z] ≤ 0 ⇔ delivered ≥ (1 − X)·delivered₀.
//!
//! The mean of z and its 95 % half-width ([`Estimate`]) are estimated at an even scan of the
//! range ([`FIND_SCAN_POINTS`] values) to bracket the crossing and check that the criterion
//! changes only once; then bisection (to [`FIND_RESOLUTION`] of the range, at most
//! [`FIND_EVALUATIONS`] evaluations) finds where the mean crosses 0 (the answer) and where its
//! lower and upper 95 % bounds cross 0: the values in between are those a test of "E[z] = 0
//! here" at the 5 % level does not reject (test inversion), the answer's 95 % interval.

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use serde_json::Value;

use crate::check;
#[cfg(not(target_arch = "wasm32"))]
use crate::error::RunError;
use crate::export::csv_text;
use crate::limits::{FIND_EVALUATIONS, FIND_PERCENT, FIND_RAYS, FIND_RESOLUTION, FIND_SCAN_POINTS};
use crate::problems::{read_scenario, Problem};
use crate::scenario::{Scenario, Segment};
use crate::stats::{Estimate, Share};
use crate::trace::{Prepared, RayFigures, BATCH_RAYS};

use super::path::Step;
use super::{in_scenario, problem, vary_field, FieldPath, Plan, Setting, Study};

/// The search of a study document (`find`).
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(rename = "Find")]
pub(crate) struct FindDocument {
    /// Search for the smallest value of this number of the scenario (a field path such as
    /// `route[1].bend.radius_mm`) that meets the criterion. Give this or `largest`. With `[*]`
    /// (`route[*].bend.radius_mm`, every bend together) the search runs over a factor that
    /// multiplies every number the path names: `from` and `to` are factors, and the bend whose
    /// leak counts is `bend`.
    #[serde(default)]
    smallest: Option<String>,
    /// Search for the largest value of this number (`source.offset_mm[0]`, `source.gap_mm`,
    /// `source.tilt_deg`) that meets the criterion. Give this or `smallest`.
    #[serde(default)]
    largest: Option<String>,
    /// Start of the search range, in the field's own unit.
    #[serde(default)]
    from: Option<f64>,
    /// End of the search range (more than `from`), in the field's own unit.
    #[serde(default)]
    to: Option<f64>,
    /// Criterion: the bend leaks at most this share of the light that enters it, %.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(FIND_PERCENT))]
    bend_leak_at_most_percent: Option<f64>,
    /// Criterion: the delivered share stays within this many % of its value in the scenario as
    /// given.
    #[serde(default)]
    #[schemars(transform = crate::schema::within(FIND_PERCENT))]
    delivered_loss_at_most_percent: Option<f64>,
    /// Route index of the bend whose leak counts (default: the route element the field is in,
    /// which must then be a bend).
    #[serde(default)]
    #[schemars(with = "Option<u64>")]
    bend: Option<f64>,
}

/// Which end of the range the answer is sought from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// The smallest value meeting the criterion (it holds above the answer).
    Smallest,
    /// The largest value meeting the criterion (it holds below the answer).
    Largest,
}

/// What must hold.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Criterion {
    /// The bend at route index `bend` leaks at most `fraction` of the light entering it.
    BendLeakAtMost {
        /// Route index of the bend.
        bend: usize,
        /// Allowed leak, fraction (0…1] of the light entering the bend.
        fraction: f64,
    },
    /// The delivered share is at least (1 − `fraction`) times the scenario's own.
    DeliveredLossAtMost {
        /// Allowed loss, fraction (0…1] of the scenario's own delivered share.
        fraction: f64,
    },
}

/// A read and checked search.
#[derive(Debug, Clone)]
pub struct FindPlan {
    /// The searched field.
    pub field: FieldPath,
    /// Smallest or largest.
    pub direction: Direction,
    /// Search range start, field's unit.
    pub from: f64,
    /// Search range end, field's unit.
    pub to: f64,
    /// The criterion.
    pub criterion: Criterion,
}

/// Read a study's `find`, adding its problems to `problems`.
pub(super) fn read_find(
    doc: &FindDocument,
    scenario: Option<&Scenario>,
    problems: &mut Vec<Problem>,
) -> Option<FindPlan> {
    let start = problems.len();
    let (key, text, direction) = match (&doc.smallest, &doc.largest) {
        (Some(t), None) => ("find.smallest", t.as_str(), Direction::Smallest),
        (None, Some(t)) => ("find.largest", t.as_str(), Direction::Largest),
        (given, _) => {
            let what = if given.is_some() {
                "both are"
            } else {
                "neither is"
            };
            problems.push(problem(
                "find",
                format!(
                    "must give exactly one of smallest or largest (the field path searched), \
                     {what} given"
                ),
            ));
            return None;
        }
    };
    // The field must name a number of the scenario (every one it names, with `[*]`: then the
    // search runs over a factor that multiplies them all).
    let field = vary_field(text)
        .and_then(|f| {
            if let Some(doc) = scenario.and_then(|s| serde_json::to_value(s).ok()) {
                for one in f.expand(&doc)? {
                    one.number_in(&doc)?;
                }
            }
            Ok(f)
        })
        .map_err(|m| problems.push(problem(key, m)))
        .ok();
    let (from, to) = match (doc.from, doc.to) {
        (Some(from), Some(to)) => {
            if to <= from {
                problems.push(problem(
                    "find.to",
                    format!("must be more than find.from ({from}): the search range, got {to}"),
                ));
            }
            (from, to)
        }
        (from, to) => {
            for (name, v) in [("find.from", from), ("find.to", to)] {
                if v.is_none() {
                    problems.push(problem(
                        name,
                        "is missing: give the search range find.from and find.to, in the \
                         field's unit",
                    ));
                }
            }
            (0.0, 0.0)
        }
    };
    let criterion = match (
        doc.bend_leak_at_most_percent,
        doc.delivered_loss_at_most_percent,
    ) {
        (Some(p), None) => {
            let bend = find_bend(doc, field.as_ref(), scenario, problems);
            check_percent("find.bend_leak_at_most_percent", p, problems);
            bend.map(|bend| Criterion::BendLeakAtMost {
                bend,
                fraction: p / 100.0,
            })
        }
        (None, Some(p)) => {
            if doc.bend.is_some() {
                problems.push(problem(
                    "find.bend",
                    "applies only with find.bend_leak_at_most_percent (the bend whose leak \
                     counts); remove it",
                ));
            }
            check_percent("find.delivered_loss_at_most_percent", p, problems);
            Some(Criterion::DeliveredLossAtMost {
                fraction: p / 100.0,
            })
        }
        (given, _) => {
            let what = if given.is_some() {
                "both are"
            } else {
                "neither is"
            };
            problems.push(problem(
                "find",
                format!(
                    "must give exactly one criterion: bend_leak_at_most_percent or \
                     delivered_loss_at_most_percent, {what} given"
                ),
            ));
            None
        }
    };
    if problems.len() > start {
        return None;
    }
    Some(FindPlan {
        field: field?,
        direction,
        from,
        to,
        criterion: criterion?,
    })
}

fn check_percent(name: &str, p: f64, problems: &mut Vec<Problem>) {
    if let Err(e) = FIND_PERCENT.check(name, p) {
        problems.push(Problem::from(&e));
    }
}

/// The route index of the bend whose leak counts: `find.bend`, or the route element the field
/// is in.
fn find_bend(
    doc: &FindDocument,
    field: Option<&FieldPath>,
    scenario: Option<&Scenario>,
    problems: &mut Vec<Problem>,
) -> Option<usize> {
    let count = scenario.map(|s| s.route.len());
    let (name, index) = match doc.bend {
        Some(b) => {
            let max = count.map_or(f64::INFINITY, |c| c as f64 - 1.0);
            if b.fract() != 0.0 || b < 0.0 || b > max {
                let range = count.map_or(" 0 or more".to_string(), |c| {
                    format!(" from 0 to {}", c.saturating_sub(1))
                });
                problems.push(problem(
                    "find.bend",
                    format!(
                        "must be a whole route index{range} (a bend of the route), got {}",
                        crate::error::show(b)
                    ),
                ));
                return None;
            }
            ("find.bend", b as usize)
        }
        None => match field.map(|f| f.steps.as_slice()) {
            Some([Step::Key(k), Step::Index(i), ..]) if k == "route" => ("find.bend", *i),
            Some(_) if field.is_some_and(|f| f.is_every()) => {
                problems.push(problem(
                    "find.bend",
                    "is missing: the searched field names several numbers ([*]); give \
                     find.bend, the route index of the bend whose leak counts",
                ));
                return None;
            }
            Some(_) => {
                problems.push(problem(
                    "find.bend",
                    "is missing: the searched field is not in a route bend; give find.bend, \
                     the route index of the bend whose leak counts",
                ));
                return None;
            }
            None => return None,
        },
    };
    match scenario.map(|s| s.route.get(index)) {
        Some(Some(Segment::Bend { .. })) | None => Some(index),
        Some(_) => {
            problems.push(problem(
                name,
                format!(
                    "must name a bend of the route: route[{index}] is not a bend (give \
                     find.bend, the route index of the bend whose leak counts)"
                ),
            ));
            None
        }
    }
}

/// A search ready to run: the scenario as read, the reference for a delivered criterion.
#[derive(Debug, Clone)]
pub struct Find {
    name: Option<String>,
    plan: FindPlan,
    scenario: Scenario,
    base: Value,
    /// The scenario as given (the delivered criterion's reference).
    reference: Option<Box<Prepared>>,
    scenario_value: f64,
    /// The watched route segment (the bend of a leak criterion).
    segment: usize,
    rays: u64,
    seed: u64,
}

/// The verdict of a search.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The criterion changes once inside the range: the answer and its interval are given.
    Found,
    /// The criterion holds at every scanned value.
    HoldsEverywhere,
    /// The criterion holds at no scanned value.
    HoldsNowhere,
    /// The criterion changes more than once, or the wrong way, across the scan.
    NotMonotone,
    /// The scenario has problems at some values (see the evaluations).
    Refused,
}

/// The answer's 95 % interval by test inversion; `null` for an end beyond the searched range.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Interval {
    /// Low end, field's unit (`null`: at or below `from`).
    pub low: Option<f64>,
    /// High end, field's unit (`null`: at or above `to`).
    pub high: Option<f64>,
}

/// One traced value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Evaluation {
    /// The field's value.
    pub value: f64,
    /// Mean of the per-ray margin z (share of the emitted power; ≤ 0 where the criterion holds)
    /// with its 95 % half-width.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub margin: Option<Share>,
    /// Whether the criterion holds by the mean (margin ≤ 0).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub holds: Option<bool>,
    /// Delivered share with its 95 % half-width.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub delivered: Option<Share>,
    /// Share of the emitted power entering the watched bend.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bend_entered: Option<Share>,
    /// Share of the emitted power leaked in the watched bend.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bend_leaked: Option<Share>,
    /// Leaked over entered (no interval: a ratio of two means).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bend_leak_fraction: Option<f64>,
    /// Problems of the scenario at this value (nothing traced).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub problems: Vec<Problem>,
}

/// The closed-form leak-free radius of the searched bend, for a radius field.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BendRadii {
    /// Route index of the bend.
    pub segment: usize,
    /// The section's size across the bend, mm.
    pub size_across_mm: f64,
    /// The answer as an inner radius (centre-line radius − size across / 2), mm.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub answer_inner_radius_mm: Option<f64>,
    /// Closed-form leak-free centre-line radius for the launch's largest internal angle, mm
    /// (`null` when no radius is leak-free).
    pub leak_free_centre_radius_mm: Option<f64>,
    /// The same as an inner radius, mm.
    pub leak_free_inner_radius_mm: Option<f64>,
    /// What the closed form assumes.
    pub note: String,
}

/// Everything a search reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FindReport {
    /// The study's label.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The searched field (path in the scenario).
    pub field: String,
    /// Smallest or largest.
    pub direction: Direction,
    /// The criterion.
    pub criterion: Criterion,
    /// Search range start.
    pub from: f64,
    /// Search range end.
    pub to: f64,
    /// The field's value in the scenario as given.
    pub scenario_value: f64,
    /// Rays per evaluation.
    pub rays: u64,
    /// Seed shared by every evaluation.
    pub seed: u64,
    /// The verdict.
    pub verdict: Verdict,
    /// The answer (found only), field's unit: the end of the final bracket where the criterion
    /// holds by the mean.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub answer: Option<f64>,
    /// Its 95 % interval (found only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval: Option<Interval>,
    /// The width of the answer's final bracket, field's unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bracket: Option<f64>,
    /// The result in one sentence.
    pub summary: String,
    /// For a bend radius: the closed-form leak-free radius of that bend.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub bend: Option<BendRadii>,
    /// Every evaluated value, in increasing order.
    pub evaluations: Vec<Evaluation>,
}

/// One batch's sums at one value: what a thread or a page's worker traces and sends back;
/// an evaluation merges every batch in batch order ([`FindSteps::record`]), so the result is the
/// same for any split of the work.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct FindBatch {
    /// The per-ray margin z (share of the emitted power).
    margin: Estimate,
    /// Delivered weight per ray.
    delivered: Estimate,
    /// Weight entering the watched bend per ray.
    entered: Estimate,
    /// Weight leaked in the watched bend per ray.
    leaked: Estimate,
}

/// Where a search stands once every value it needs is evaluated.
#[derive(Debug, Clone)]
struct Outcome {
    verdict: Verdict,
    answer: Option<f64>,
    interval: Option<Interval>,
    bracket: Option<f64>,
    evaluations: Vec<Evaluation>,
}

impl FindBatch {
    fn merge(&mut self, o: &FindBatch) {
        self.margin.merge(&o.margin);
        self.delivered.merge(&o.delivered);
        self.entered.merge(&o.entered);
        self.leaked.merge(&o.leaked);
    }

    /// Rays in these sums (every batch counts each of its rays once in `delivered`).
    pub fn rays(&self) -> u64 {
        self.delivered.n
    }
}

/// Batches of one value folded in batch order by the page's merging worker
/// ([`crate::trace::PrefixMerger`]): the same sums, bit for bit, as [`FindSteps::record`] forms.
impl crate::trace::MergeInOrder for FindBatch {
    fn merge_next(&mut self, next: &FindBatch) {
        self.merge(next);
    }
}

/// One value of a search prepared for tracing on its own (a job of the page's worker pool):
/// its batches are those [`FindSteps::trace_batches`] gives at that value, tagged with the value
/// and the study so a merge can refuse a batch of another value or study ([`FindValue::fits`]).
#[derive(Debug, Clone)]
pub struct FindValue {
    find: Find,
    x: f64,
    at: Prepared,
    study: u32,
}

/// A batch traced at one value of a search ([`FindValue::trace_batch`]): the value, a tag of the
/// study (FNV-1a, 32 bits, of the scenario as read and the search plan) and the batch's sums.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FindValueBatch {
    /// The field's value the batch was traced at.
    pub value: f64,
    /// Tag of the study the batch belongs to.
    pub study: u32,
    /// The batch's sums.
    pub sums: FindBatch,
}

impl Find {
    /// Prepare the value `x` for tracing on its own; fails with the scenario's problems at `x`
    /// (fields are paths in the study document).
    pub fn at_value(&self, x: f64) -> Result<FindValue, Vec<Problem>> {
        let at = prepare_at(&self.base, &self.plan.field, x)?;
        Ok(FindValue {
            find: self.clone(),
            x,
            at,
            study: self.tag(),
        })
    }

    /// FNV-1a (32 bits) of the scenario as read, the searched field, the range and the
    /// criterion: equal for two preparations of the same study document.
    fn tag(&self) -> u32 {
        let text = format!(
            "{}|{}|{:?}|{}|{}|{:?}",
            self.base,
            self.plan.field.text,
            self.plan.direction,
            self.plan.from.to_bits(),
            self.plan.to.to_bits(),
            self.plan.criterion
        );
        text.bytes().fold(0x811c_9dc5_u32, |h, b| {
            (h ^ u32::from(b)).wrapping_mul(0x0100_0193)
        })
    }
}

impl FindValue {
    /// The value traced.
    pub fn value(&self) -> f64 {
        self.x
    }

    /// Batches of the value.
    pub fn batch_count(&self) -> u64 {
        self.find.batch_count()
    }

    /// Trace batch `index` at the value (the same sums as [`FindSteps::trace_batches`]).
    pub fn trace_batch(&self, index: u64) -> FindValueBatch {
        FindValueBatch {
            value: self.x,
            study: self.study,
            sums: self.find.trace_batch(&self.at, index),
        }
    }

    /// Whether `batch` was traced at this value of this study (compared bit for bit).
    pub fn fits(&self, batch: &FindValueBatch) -> bool {
        batch.value.to_bits() == self.x.to_bits() && batch.study == self.study
    }
}

/// Read a scenario document with the field set to `x` (with `[*]`, every number it names
/// multiplied by the factor `x`), checked and prepared.
fn prepare_at(base: &Value, field: &FieldPath, x: f64) -> Result<Prepared, Vec<Problem>> {
    let mut doc = base.clone();
    let setting = if field.is_every() {
        Setting::Factor(x)
    } else {
        Setting::Number(x)
    };
    setting
        .apply(field, &mut doc)
        .map_err(|m| vec![Problem::sentence("find", format!("{} {m}", field.text))])?;
    let scenario = read_scenario(&doc.to_string()).map_err(|p| vec![in_scenario(p)])?;
    scenario.check().map_err(|errors| {
        errors
            .iter()
            .map(|e| in_scenario(Problem::from(e)))
            .collect::<Vec<_>>()
    })?;
    Prepared::new(&scenario).map_err(|e| vec![Problem::sentence("scenario", e.to_string())])
}

impl Study {
    /// Prepare a search: fails (with problems of the study document) for what concerns every
    /// value: the trace settings, the search's total rays, the scenario as given (a delivered
    /// criterion's reference), or when the study is not a search.
    pub fn prepare_find(&self) -> Result<Find, Vec<Problem>> {
        #[allow(unreachable_patterns)]
        let plan = match &self.plan {
            Plan::Find(plan) => plan,
            _ => {
                return Err(vec![problem(
                    "find",
                    "is missing: this study is not a search",
                )])
            }
        };
        let trace_problems: Vec<Problem> = self
            .scenario
            .problems()
            .iter()
            .filter(|e| e.field.starts_with("trace."))
            .map(|e| in_scenario(Problem::from(e)))
            .collect();
        if !trace_problems.is_empty() {
            return Err(trace_problems);
        }
        let rays = self.scenario.trace.rays;
        let per_value = match plan.criterion {
            Criterion::BendLeakAtMost { .. } => 1,
            Criterion::DeliveredLossAtMost { .. } => 2,
        };
        let traces = (FIND_EVALUATIONS * per_value) as u64;
        let total = rays.saturating_mul(traces);
        if !FIND_RAYS.contains(total) {
            return Err(vec![problem(
                "scenario.trace.rays",
                format!(
                    "times the search's traces at most (the search's rays) must be at most {}, got {rays} × \
                     {traces} = {total}",
                    crate::limits::show_count(FIND_RAYS.max)
                ),
            )]);
        }
        let base = serde_json::to_value(&self.scenario)
            .map_err(|e| vec![problem("scenario", e.to_string())])?;
        // With `[*]` the searched value is a factor: 1 is the scenario as given.
        let scenario_value = if plan.field.is_every() {
            1.0
        } else {
            plan.field
                .number_in(&base)
                .map_err(|m| vec![problem("find", m)])?
        };
        let reference = match plan.criterion {
            Criterion::DeliveredLossAtMost { .. } => {
                Some(Box::new(prepare_at(&base, &plan.field, scenario_value)?))
            }
            Criterion::BendLeakAtMost { .. } => None,
        };
        let segment = match plan.criterion {
            Criterion::BendLeakAtMost { bend, .. } => bend,
            Criterion::DeliveredLossAtMost { .. } => usize::MAX,
        };
        Ok(Find {
            name: self.name.clone(),
            plan: plan.clone(),
            scenario: self.scenario.clone(),
            base,
            reference,
            scenario_value,
            segment,
            rays,
            seed: self.scenario.trace.seed,
        })
    }
}

impl Find {
    /// Batches per evaluation.
    pub fn batch_count(&self) -> u64 {
        self.rays.div_ceil(BATCH_RAYS)
    }

    /// Trace batch `index` at the prepared value `at`.
    fn trace_batch(&self, at: &Prepared, index: u64) -> FindBatch {
        let mut rays: Vec<RayFigures> = Vec::new();
        at.trace_batch_watching(index, self.segment, &mut rays);
        let delivered = Estimate::of_replicates(rays.iter().map(|r| r.delivered));
        let entered = Estimate::of_replicates(rays.iter().map(|r| r.entered));
        let leaked = Estimate::of_replicates(rays.iter().map(|r| r.leaked));
        let margin = match (self.plan.criterion, &self.reference) {
            (Criterion::BendLeakAtMost { fraction, .. }, _) => {
                let a: Vec<f64> = rays.iter().map(|r| r.leaked).collect();
                let b: Vec<f64> = rays.iter().map(|r| fraction * r.entered).collect();
                Estimate::of_differences(&a, &b)
            }
            (Criterion::DeliveredLossAtMost { fraction }, Some(reference)) => {
                let mut x0 = Vec::new();
                reference.trace_batch_per_ray(index, &mut x0);
                let a: Vec<f64> = x0.iter().map(|x| (1.0 - fraction) * x).collect();
                let b: Vec<f64> = rays.iter().map(|r| r.delivered).collect();
                Estimate::of_differences(&a, &b)
            }
            (Criterion::DeliveredLossAtMost { .. }, None) => Estimate::default(),
        };
        FindBatch {
            margin,
            delivered,
            entered,
            leaked,
        }
    }

    /// The evaluation at `x` from its batches merged in batch order.
    fn evaluation(&self, x: f64, s: &FindBatch) -> Evaluation {
        let bend = matches!(self.plan.criterion, Criterion::BendLeakAtMost { .. });
        Evaluation {
            value: x,
            margin: Some(s.margin.share()),
            holds: Some(s.margin.mean <= 0.0),
            delivered: Some(s.delivered.share()),
            bend_entered: bend.then(|| s.entered.share()),
            bend_leaked: bend.then(|| s.leaked.share()),
            bend_leak_fraction: (bend && s.entered.mean > 0.0)
                .then(|| s.leaked.mean / s.entered.mean),
            problems: Vec::new(),
        }
    }

    /// The next value the search needs, prepared (values whose scenario has problems are
    /// recorded in `known` with those problems on the way), or the finished search.
    fn next_in(&self, known: &mut Vec<Evaluation>) -> Result<Outcome, (f64, Box<Prepared>)> {
        loop {
            match self.replay(known) {
                Ok(outcome) => return Ok(outcome),
                Err(x) => match prepare_at(&self.base, &self.plan.field, x) {
                    Ok(at) => return Err((x, Box::new(at))),
                    Err(problems) => known.push(Evaluation {
                        value: x,
                        margin: None,
                        holds: None,
                        delivered: None,
                        bend_entered: None,
                        bend_leaked: None,
                        bend_leak_fraction: None,
                        problems,
                    }),
                },
            }
        }
    }

    /// Run the search on the calling thread.
    pub fn run_serial(&self) -> FindReport {
        let mut known = Vec::new();
        loop {
            match self.next_in(&mut known) {
                Ok(outcome) => return self.report(outcome),
                Err((x, at)) => {
                    let mut total = FindBatch::default();
                    for b in 0..self.batch_count() {
                        total.merge(&self.trace_batch(&at, b));
                    }
                    known.push(self.evaluation(x, &total));
                }
            }
        }
    }

    /// Run the search with every evaluation's batches on `threads` threads (0: all cores),
    /// merged in batch order: identical to [`Find::run_serial`].
    #[cfg(not(target_arch = "wasm32"))]
    pub fn run_parallel(&self, threads: usize) -> Result<FindReport, RunError> {
        use rayon::prelude::*;
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| RunError::ThreadPool(e.to_string()))?;
        let mut known = Vec::new();
        loop {
            match self.next_in(&mut known) {
                Ok(outcome) => return Ok(self.report(outcome)),
                Err((x, at)) => {
                    let sums: Vec<FindBatch> = pool.install(|| {
                        (0..self.batch_count())
                            .into_par_iter()
                            .map(|b| self.trace_batch(&at, b))
                            .collect()
                    });
                    let mut total = FindBatch::default();
                    for s in &sums {
                        total.merge(s);
                    }
                    known.push(self.evaluation(x, &total));
                }
            }
        }
    }

    /// The scan and the bisections replayed over the evaluations `known` so far: the outcome,
    /// or the first value not yet evaluated. The search is deterministic, so replaying it over
    /// what was recorded retraces the same path (each value is looked up by equality).
    fn replay(&self, known: &[Evaluation]) -> Result<Outcome, f64> {
        let (from, to) = (self.plan.from, self.plan.to);
        let mut evals: Vec<Evaluation> = Vec::new();
        let eval_at = |x: f64, evals: &mut Vec<Evaluation>| -> Result<usize, f64> {
            if let Some(i) = evals.iter().position(|e| e.value == x) {
                return Ok(i);
            }
            let e = known.iter().find(|e| e.value == x).ok_or(x)?;
            evals.push(e.clone());
            Ok(evals.len() - 1)
        };
        let n = FIND_SCAN_POINTS - 1;
        let mut scan: Vec<usize> = Vec::with_capacity(FIND_SCAN_POINTS);
        for k in 0..=n {
            let x = if k == n {
                to
            } else {
                from + (to - from) * k as f64 / n as f64
            };
            scan.push(eval_at(x, &mut evals)?);
        }
        let smallest = self.plan.direction == Direction::Smallest;
        let mut verdict;
        let mut answer = None;
        let mut interval = None;
        let mut bracket = None;
        if scan.iter().any(|&i| evals[i].margin.is_none()) {
            verdict = Verdict::Refused;
        } else {
            let holds: Vec<bool> = scan.iter().map(|&i| evals[i].holds == Some(true)).collect();
            let changes = holds.windows(2).filter(|w| w[0] != w[1]).count();
            let right_way = holds.first() != Some(&smallest);
            verdict = match (changes, holds[0]) {
                (0, true) => Verdict::HoldsEverywhere,
                (0, false) => Verdict::HoldsNowhere,
                (1, _) if right_way => Verdict::Found,
                _ => Verdict::NotMonotone,
            };
            if verdict == Verdict::Found {
                // The margin's mean, and its lower and upper 95 % bounds.
                let fns: [fn(&Share) -> f64; 3] =
                    [|s| s.share, |s| s.share - s.ci95, |s| s.share + s.ci95];
                let resolution = FIND_RESOLUTION * (to - from);
                let mut crossings = [None; 3];
                for (c, f) in fns.iter().enumerate() {
                    let value = |e: &Evaluation| e.margin.as_ref().map_or(f64::NAN, f);
                    let Some(k) = scan
                        .windows(2)
                        .position(|w| (value(&evals[w[0]]) <= 0.0) != (value(&evals[w[1]]) <= 0.0))
                    else {
                        continue;
                    };
                    let (mut a, mut b) = (evals[scan[k]].value, evals[scan[k + 1]].value);
                    let a_holds = value(&evals[scan[k]]) <= 0.0;
                    while b - a > resolution && evals.len() < FIND_EVALUATIONS {
                        let m = 0.5 * (a + b);
                        let i = eval_at(m, &mut evals)?;
                        if evals[i].margin.is_none() {
                            break;
                        }
                        if (value(&evals[i]) <= 0.0) == a_holds {
                            a = m;
                        } else {
                            b = m;
                        }
                    }
                    if c == 0 {
                        bracket = Some(b - a);
                    }
                    crossings[c] = Some(if a_holds { a } else { b });
                }
                answer = crossings[0];
                // Excess falls with the value for "smallest": the lower bound crosses first.
                let (low, high) = if smallest {
                    (crossings[1], crossings[2])
                } else {
                    (crossings[2], crossings[1])
                };
                interval = Some(Interval { low, high });
                if answer.is_none() {
                    verdict = Verdict::NotMonotone;
                }
            }
        }
        Ok(Outcome {
            verdict,
            answer,
            interval,
            bracket,
            evaluations: evals,
        })
    }

    /// The report of a finished search.
    fn report(&self, outcome: Outcome) -> FindReport {
        let Outcome {
            verdict,
            answer,
            interval,
            bracket,
            evaluations: mut evals,
        } = outcome;
        evals.sort_by(|a, b| a.value.total_cmp(&b.value));
        let bend = self.bend_radii(answer);
        let summary = self.summary(verdict, answer, interval, &evals);
        FindReport {
            name: self.name.clone(),
            field: self.plan.field.text.clone(),
            direction: self.plan.direction,
            criterion: self.plan.criterion,
            from: self.plan.from,
            to: self.plan.to,
            scenario_value: self.scenario_value,
            rays: self.rays,
            seed: self.seed,
            verdict,
            answer,
            interval,
            bracket,
            summary,
            bend,
            evaluations: evals,
        }
    }

    /// For a bend radius field (`route[i].bend.radius_mm`): the closed-form leak-free radius of
    /// that bend ([`check::bend_figures`], `docs/REFERENCES.md` §4) and the answer as an inner
    /// radius.
    fn bend_radii(&self, answer: Option<f64>) -> Option<BendRadii> {
        let index = match self.plan.field.steps.as_slice() {
            [Step::Key(r), Step::Index(i), Step::Key(b), Step::Key(f)]
                if r == "route" && b == "bend" && f == "radius_mm" =>
            {
                *i
            }
            _ => return None,
        };
        let figures = check::figures(&self.scenario).ok()?;
        let b = figures.bends.iter().find(|b| b.segment == index)?;
        let half = 0.5 * b.size_across_mm;
        Some(BendRadii {
            segment: index,
            size_across_mm: b.size_across_mm,
            answer_inner_radius_mm: answer.map(|a| a - half),
            leak_free_centre_radius_mm: b.leak_free_inner_radius_mm.map(|r| r + half),
            leak_free_inner_radius_mm: b.leak_free_inner_radius_mm,
            note: format!(
                "closed form (docs/REFERENCES.md §4): every meridional ray up to {:.1}° to the \
                 axis (the launch's largest internal angle at the entry face) stays totally \
                 reflected; the search counts every traced ray and allows the stated leak",
                figures.max_internal_angle_deg
            ),
        })
    }

    fn criterion_text(&self) -> String {
        match self.plan.criterion {
            Criterion::BendLeakAtMost { bend, fraction } => format!(
                "bend route[{bend}] leaks at most {} % of the light entering it",
                fraction * 100.0
            ),
            Criterion::DeliveredLossAtMost { fraction } => format!(
                "delivered stays within {} % of its value at {} = {}",
                fraction * 100.0,
                self.plan.field.text,
                self.scenario_value
            ),
        }
    }

    fn summary(
        &self,
        verdict: Verdict,
        answer: Option<f64>,
        interval: Option<Interval>,
        evals: &[Evaluation],
    ) -> String {
        let field = &if self.plan.field.is_every() {
            format!("factor on every {}", self.plan.field.text)
        } else {
            self.plan.field.text.clone()
        };
        let crit = self.criterion_text();
        let (from, to) = (self.plan.from, self.plan.to);
        let word = match self.plan.direction {
            Direction::Smallest => "smallest",
            Direction::Largest => "largest",
        };
        match verdict {
            Verdict::Found => {
                let i = interval.unwrap_or(Interval {
                    low: None,
                    high: None,
                });
                let low = i.low.map_or(format!("≤ {from}"), |v| format!("{v:.4}"));
                let high = i.high.map_or(format!("≥ {to}"), |v| format!("{v:.4}"));
                format!(
                    "the {word} {field} at which {crit}: {:.4} (95 % interval by test \
                     inversion: between {low} and {high})",
                    answer.unwrap_or(f64::NAN)
                )
            }
            Verdict::HoldsEverywhere => {
                let end = if self.plan.direction == Direction::Smallest {
                    from
                } else {
                    to
                };
                format!(
                    "even at {field} = {end} {crit}: the criterion holds over the whole range \
                     {from} to {to}"
                )
            }
            Verdict::HoldsNowhere => {
                format!("nowhere from {field} = {from} to {to} does it hold that {crit}")
            }
            Verdict::NotMonotone => {
                let list: Vec<String> = evals
                    .iter()
                    .map(|e| {
                        format!(
                            "{} {}",
                            e.value,
                            if e.holds == Some(true) {
                                "holds"
                            } else {
                                "fails"
                            }
                        )
                    })
                    .collect();
                format!(
                    "the criterion ({crit}) does not change once, the expected way, from {from} \
                     to {to} ({}); narrow find.from and find.to around one crossing",
                    list.join(", ")
                )
            }
            Verdict::Refused => {
                let bad: Vec<String> = evals
                    .iter()
                    .filter(|e| !e.problems.is_empty())
                    .map(|e| format!("{field} = {}: {}", e.value, e.problems[0].message))
                    .collect();
                format!(
                    "the scenario has problems at some values of the range: {}",
                    bad.join("; ")
                )
            }
        }
    }
}

/// A search run one step at a time, for a caller that traces the batches itself (the page's
/// worker pool): ask [`FindSteps::next_value`] for the value to trace, trace its batches
/// anywhere ([`FindSteps::trace_batches`]), hand them back in batch order
/// ([`FindSteps::record`]); when no value is left, [`FindSteps::report`] is the report, bit for
/// bit that of [`Find::run_serial`].
#[derive(Debug, Clone)]
pub struct FindSteps {
    find: Find,
    known: Vec<Evaluation>,
    /// The value [`FindSteps::next_value`] last asked for (`None`: not asked yet, or done).
    pending: Option<f64>,
    done: Option<Outcome>,
}

impl FindSteps {
    /// A search at its start.
    pub fn new(find: Find) -> FindSteps {
        FindSteps {
            find,
            known: Vec::new(),
            pending: None,
            done: None,
        }
    }

    /// The search being run.
    pub fn find(&self) -> &Find {
        &self.find
    }

    /// Batches per evaluation.
    pub fn batch_count(&self) -> u64 {
        self.find.batch_count()
    }

    /// The next value to trace, or `None` when the search is done. Values at which the
    /// scenario has problems are recorded with those problems without tracing.
    pub fn next_value(&mut self) -> Option<f64> {
        if self.done.is_some() {
            return None;
        }
        match self.find.next_in(&mut self.known) {
            Ok(outcome) => {
                self.done = Some(outcome);
                self.pending = None;
                None
            }
            Err((x, _)) => {
                self.pending = Some(x);
                Some(x)
            }
        }
    }

    /// Trace batches `first .. first + count` at value `x`, one result per batch. Fails with
    /// the scenario's problems at `x`.
    pub fn trace_batches(
        &self,
        x: f64,
        first: u64,
        count: u64,
    ) -> Result<Vec<FindBatch>, Vec<Problem>> {
        let at = prepare_at(&self.find.base, &self.find.plan.field, x)?;
        let end = first.saturating_add(count).min(self.batch_count());
        Ok((first..end)
            .map(|b| self.find.trace_batch(&at, b))
            .collect())
    }

    /// Record the value `x` [`FindSteps::next_value`] asked for from all its batches, given in
    /// batch order (merged in that order).
    pub fn record(&mut self, x: f64, batches: &[FindBatch]) -> Result<(), String> {
        self.check_pending(x)?;
        let count = self.batch_count();
        if batches.len() as u64 != count {
            return Err(format!(
                "results must be all {count} batches of the value in batch order, got {}",
                batches.len()
            ));
        }
        let mut total = FindBatch::default();
        for b in batches {
            total.merge(b);
        }
        self.known.push(self.find.evaluation(x, &total));
        self.pending = None;
        Ok(())
    }

    /// Record the value `x` [`FindSteps::next_value`] asked for from all its batches already
    /// merged in batch order (a [`crate::trace::PrefixMerger`] of batches `0..batch_count`, as
    /// the page's merging worker forms them): the same evaluation, bit for bit, as
    /// [`FindSteps::record`] with the batches themselves.
    pub fn record_merged(&mut self, x: f64, merged: &FindBatch) -> Result<(), String> {
        self.check_pending(x)?;
        let rays = self.find.rays;
        if merged.rays() != rays {
            return Err(format!(
                "the merged batches must hold all {rays} rays of the value, got {}",
                merged.rays()
            ));
        }
        self.known.push(self.find.evaluation(x, merged));
        self.pending = None;
        Ok(())
    }

    /// `x` must be the value [`FindSteps::next_value`] asked for.
    fn check_pending(&self, x: f64) -> Result<(), String> {
        match self.pending {
            Some(p) if p == x => Ok(()),
            Some(p) => Err(format!(
                "value must be the one the search asked for ({p}), got {x}"
            )),
            None => Err(format!(
                "value {x} was not asked for: call next_value first (or the search is done)"
            )),
        }
    }

    /// Values evaluated so far (traced or refused), in the order the search asked for them.
    pub fn evaluations(&self) -> &[Evaluation] {
        &self.known
    }

    /// The report, once [`FindSteps::next_value`] has said the search is done.
    pub fn report(&self) -> Option<FindReport> {
        self.done.clone().map(|o| self.find.report(o))
    }
}

/// The evaluations as CSV, one row per value: the value (named by the field), the margin and
/// its ci95, whether the criterion holds, delivered and its ci95, the bend's entered and leaked
/// shares and their ci95, its leak fraction, and problems.
pub fn report_csv(report: &FindReport) -> String {
    let header = [
        report.field.as_str(),
        "margin (share)",
        "margin ci95 (share)",
        "holds",
        "delivered (share)",
        "delivered ci95 (share)",
        "bend entered (share)",
        "bend entered ci95 (share)",
        "bend leaked (share)",
        "bend leaked ci95 (share)",
        "bend leak fraction",
        "problems",
    ];
    let mut out = header
        .iter()
        .map(|h| csv_text(h))
        .collect::<Vec<_>>()
        .join(",");
    out.push('\n');
    for e in &report.evaluations {
        let mut cells = vec![num(e.value)];
        push_share(&mut cells, e.margin.as_ref());
        cells.push(e.holds.map_or(String::new(), |h| h.to_string()));
        for s in [&e.delivered, &e.bend_entered, &e.bend_leaked] {
            push_share(&mut cells, s.as_ref());
        }
        cells.push(e.bend_leak_fraction.map_or(String::new(), num));
        let problems: Vec<&str> = e.problems.iter().map(|q| q.message.as_str()).collect();
        cells.push(csv_text(&problems.join("; ")));
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

fn push_share(cells: &mut Vec<String>, s: Option<&Share>) {
    match s {
        Some(s) => {
            cells.push(num(s.share));
            cells.push(num(s.ci95));
        }
        None => {
            cells.push(String::new());
            cells.push(String::new());
        }
    }
}

/// Shortest form that reads back exactly (−0 as 0, an infinite half-width as empty).
fn num(x: f64) -> String {
    if x.is_finite() {
        (x + 0.0).to_string()
    } else {
        String::new()
    }
}
