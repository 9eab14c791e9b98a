//! Tolerance studies: how much the delivered share spreads when some of the scenario's numbers
//! are made within tolerances, and which tolerance matters most.
//!
//! The plan (`"tolerances"` in the study document):
//!
//! ```json
//! "tolerances": { "spreads": [ { "field": "source.offset_mm[0]", "sigma": 0.05 },
//!                              { "field": "source.gap_mm", "half_width": 0.1 } ],
//!                 "variants": 100 }
//! ```
//!
//! Each spread is a field path of a number of the scenario (as in `vary.field`) and either
//! `sigma` (normal spread, that standard deviation, mm or the field's own unit) or `half_width`
//! (uniform within ± that). Variant v is the scenario with every spread's field drawn around its
//! nominal value from a random stream of its own: the scenario's seed mixed with a fixed tag
//! ([`DRAW_TAG`]), apart from the rays' streams, so the same seed draws the same variants.
//! Normal draws use the Box–Muller transform (z = √(−2 ln u₁) cos 2πu₂) with libm, so the
//! values are bit-identical on native and wasm.
//!
//! Every variant and the nominal scenario are traced with the same rays (common random numbers,
//! [`Prepared::trace_batch_per_ray`]): ray k draws the same numbers at every variant, so the
//! spread between variants is the tolerances' effect rather than ray noise. A variant that
//! breaks a rule of the scenario (a negative gap, a bend radius below the minimum) is not traced
//! (nor clipped): it is counted and the first few are named with their problems.
//!
//! Two sensitivity rankings:
//! - one at a time: each spread's field at nominal ± its standard deviation (σ, or half_width/√3
//!   for the uniform, whose standard deviation that is), the others at nominal; the paired
//!   difference of delivered to nominal with its 95 % interval
//!   ([`Estimate::of_differences`]); effect = (d₊ − d₋)/2, estimated from the per-ray halves
//!   (x₊,k − x₋,k)/2 with its own interval; ranked by |effect|;
//! - correlation: Pearson's r between each field's drawn value and delivered over the traced
//!   variants.
//!
//! Work is split into the trace's batches; within a batch every unit (nominal, one-at-a-time
//! pair, variant) is traced separately and the results are merged per unit in batch order, so
//! the report is identical for any thread count.

use rand_core::{Rng, SeedableRng};
use rand_pcg::Pcg64Mcg;
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

#[cfg(not(target_arch = "wasm32"))]
use crate::error::RunError;
use crate::export::csv_text;
use crate::limits::{
    FIELD_PATH_CHARS, TOLERANCE_NAMED_REFUSALS, TOLERANCE_RAYS, TOLERANCE_SPREAD,
    TOLERANCE_SPREADS, TOLERANCE_VARIANTS,
};
use crate::problems::{read_scenario, Problem};
use crate::stats::{Estimate, Share};
use crate::trace::{mix_seed, Prepared, BATCH_RAYS};

use super::{in_scenario, problem, vary_field, FieldPath, Plan, Study};
use crate::scenario::Scenario;

/// The tag mixed into the scenario's seed for the variants' draws: a stream apart from every
/// ray's (rays mix the seed with batch and ray indices).
pub const DRAW_TAG: u64 = 0x746F_6C65_7261_6E63; // "toleranc"

/// `tolerances` in the study document.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(rename = "Tolerances")]
pub(crate) struct ToleranceDocument {
    /// The numbers made within tolerances, each with its spread.
    #[schemars(length(min = TOLERANCE_SPREADS.min, max = TOLERANCE_SPREADS.max))]
    spreads: Vec<SpreadDocument>,
    /// How many variants are drawn and traced.
    #[schemars(with = "u64", transform = crate::schema::within(TOLERANCE_VARIANTS))]
    variants: f64,
}

/// One spread: a field path and either `sigma` or `half_width`.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
#[schemars(rename = "Spread")]
// Exactly one of sigma and half_width (the schema's counterpart of the reader's check).
#[schemars(extend("oneOf" = [{ "required": ["sigma"] }, { "required": ["half_width"] }]))]
struct SpreadDocument {
    /// The path of a number of the scenario, as in `vary.field`: `source.offset_mm[0]`,
    /// `source.gap_mm`, `guide.section.round.diameter_mm`, `route[1].bend.radius_mm`.
    #[schemars(length(min = FIELD_PATH_CHARS.min, max = FIELD_PATH_CHARS.max))]
    field: String,
    /// Normal spread: its standard deviation, in the field's own unit.
    #[serde(default)]
    sigma: Option<f64>,
    /// Uniform spread: within ± this of the nominal value, in the field's own unit.
    #[serde(default)]
    half_width: Option<f64>,
}

/// How a field is spread around its nominal value.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Distribution {
    /// Normal with standard deviation `sigma`.
    Normal {
        /// Standard deviation (field's unit).
        sigma: f64,
    },
    /// Uniform within ± `half_width`.
    Uniform {
        /// Half-width (field's unit).
        half_width: f64,
    },
}

impl Distribution {
    /// The standard deviation: σ, or half_width/√3 for the uniform (Var = w²/3 for U(−w, w)).
    pub fn standard_deviation(&self) -> f64 {
        match *self {
            Distribution::Normal { sigma } => sigma,
            Distribution::Uniform { half_width } => half_width / 3f64.sqrt(),
        }
    }

    /// One draw, centred on 0, from `rng`.
    fn draw(&self, rng: &mut Pcg64Mcg) -> f64 {
        match *self {
            Distribution::Normal { sigma } => {
                // Box–Muller: u₁ in (0, 1] so that ln u₁ is finite.
                let u1 = 1.0 - uniform(rng);
                let u2 = uniform(rng);
                sigma * (-2.0 * libm::log(u1)).sqrt() * libm::cos(2.0 * std::f64::consts::PI * u2)
            }
            Distribution::Uniform { half_width } => half_width * (2.0 * uniform(rng) - 1.0),
        }
    }
}

/// A uniform number in [0, 1) from the top 53 bits of the generator.
fn uniform(rng: &mut Pcg64Mcg) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// One field made within a tolerance.
#[derive(Debug, Clone)]
pub struct Spread {
    /// The field (path in the scenario).
    pub field: FieldPath,
    /// Its spread.
    pub distribution: Distribution,
}

/// A tolerance study's spreads and variant count.
#[derive(Debug, Clone)]
pub struct TolerancePlan {
    /// The spreads, in the document's order.
    pub spreads: Vec<Spread>,
    /// Variants drawn.
    pub variants: u64,
}

/// Read `tolerances`, adding its problems to `problems`.
pub(crate) fn read_tolerances(
    doc: &ToleranceDocument,
    scenario: Option<&Scenario>,
    problems: &mut Vec<Problem>,
) -> Option<TolerancePlan> {
    let mut ok = true;
    let n = doc.spreads.len() as u64;
    if !TOLERANCE_SPREADS.contains(n) {
        problems.push(problem(
            "tolerances.spreads",
            format!("must list {} spreads, got {n}", TOLERANCE_SPREADS.span()),
        ));
        ok = false;
    }
    let v = doc.variants;
    let whole = v.fract() == 0.0 && v >= 0.0 && v <= TOLERANCE_VARIANTS.max as f64;
    if !whole || !TOLERANCE_VARIANTS.contains(v as u64) {
        problems.push(problem(
            "tolerances.variants",
            format!(
                "{}, got {}",
                TOLERANCE_VARIANTS.rule(),
                crate::error::show(v)
            ),
        ));
        ok = false;
    }
    let mut spreads = Vec::new();
    for (i, s) in doc.spreads.iter().enumerate() {
        let at = format!("tolerances.spreads[{i}]");
        // The field must name a number of the scenario; with `[*]` it names several, each
        // drawn on its own (a spread per number it names, in document order).
        let doc = scenario.and_then(|s| serde_json::to_value(s).ok());
        let fields = vary_field(&s.field)
            .and_then(|f| match &doc {
                Some(doc) => {
                    let all = f.expand(doc)?;
                    for one in &all {
                        one.number_in(doc)?;
                    }
                    Ok(all)
                }
                None => Ok(vec![f]),
            })
            .map_err(|m| problems.push(problem(format!("{at}.field"), m)))
            .ok();
        let field = fields.as_ref().and_then(|f| f.first().cloned());
        if let Some(f) = &field {
            if let Some(j) = spreads.iter().position(|t: &Spread| t.field.text == f.text) {
                problems.push(problem(
                    format!("{at}.field"),
                    format!("must not repeat tolerances.spreads[{j}].field ({})", f.text),
                ));
                ok = false;
            }
        }
        let width = |name: &str, x: f64, problems: &mut Vec<Problem>| {
            if TOLERANCE_SPREAD.contains(x) {
                Some(x)
            } else {
                problems.push(problem(format!("{at}.{name}"), TOLERANCE_SPREAD.refusal(x)));
                None
            }
        };
        let distribution = match (s.sigma, s.half_width) {
            (Some(sigma), None) => {
                width("sigma", sigma, problems).map(|sigma| Distribution::Normal { sigma })
            }
            (None, Some(w)) => width("half_width", w, problems)
                .map(|half_width| Distribution::Uniform { half_width }),
            (Some(_), Some(_)) => {
                problems.push(problem(
                    at.as_str(),
                    "must give either sigma (normal) or half_width (uniform), not both",
                ));
                None
            }
            (None, None) => {
                problems.push(problem(
                    at.as_str(),
                    "must give sigma (normal spread: its standard deviation) or half_width \
                     (uniform within ± half_width)",
                ));
                None
            }
        };
        match (fields, distribution) {
            (Some(fields), Some(distribution)) => {
                spreads.extend(fields.into_iter().map(|field| Spread {
                    field,
                    distribution,
                }))
            }
            _ => ok = false,
        }
    }
    // A `[*]` field counts once per number it names.
    if ok && !TOLERANCE_SPREADS.contains(spreads.len() as u64) {
        problems.push(problem(
            "tolerances.spreads",
            format!(
                "must name {} numbers in all (a field with [*] counts every number it names), \
                 got {}",
                TOLERANCE_SPREADS.span(),
                spreads.len()
            ),
        ));
        ok = false;
    }
    ok.then_some(TolerancePlan {
        spreads,
        variants: v as u64,
    })
}

/// A variant's or one-at-a-time point's scenario: ready, or its problems.
#[derive(Debug, Clone)]
enum Unit {
    Ready(Box<Prepared>),
    Refused(Vec<Problem>),
}

/// A tolerance study ready to trace: the nominal scenario, the one-at-a-time points and every
/// variant drawn, read and checked.
#[derive(Debug, Clone)]
pub struct Tolerance {
    name: Option<String>,
    spreads: Vec<Spread>,
    nominal_values: Vec<f64>,
    nominal: Box<Prepared>,
    /// Per spread: (minus, plus).
    one_at_a_time: Vec<(Unit, Unit)>,
    /// Each variant's drawn values (one per spread) and its scenario.
    variants: Vec<(Vec<f64>, Unit)>,
    rays: u64,
    seed: u64,
}

/// One unit's merged statistics.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct UnitStats {
    /// Delivered share.
    pub delivered: Estimate,
    /// Delivered minus nominal (paired, per ray).
    pub difference: Estimate,
    /// One-at-a-time only: (plus − minus)/2 per ray.
    pub effect: Estimate,
}

/// The merged results of some batches: the nominal, each one-at-a-time pair (minus, plus) and
/// each variant (`None` when refused). Serialised both ways so that a batch traced by one
/// worker can be merged by another ([`Tolerance::fits`] checks it belongs to the study).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ToleranceBatch {
    /// The nominal scenario's delivered share.
    pub nominal: Estimate,
    /// Per spread: minus, plus (each `None` when refused); `effect` is kept in the plus's.
    pub one_at_a_time: Vec<[Option<UnitStats>; 2]>,
    /// Per variant.
    pub variants: Vec<Option<UnitStats>>,
}

impl ToleranceBatch {
    /// Merge the next batch (in batch order) into this one.
    pub fn merge(&mut self, other: &ToleranceBatch) {
        self.nominal.merge(&other.nominal);
        let pairs = self.one_at_a_time.iter_mut().flatten();
        let units = pairs.chain(self.variants.iter_mut());
        let others = other.one_at_a_time.iter().flatten().chain(&other.variants);
        for (a, b) in units.zip(others) {
            if let (Some(a), Some(b)) = (a.as_mut(), b) {
                a.delivered.merge(&b.delivered);
                a.difference.merge(&b.difference);
                a.effect.merge(&b.effect);
            }
        }
    }
}

impl crate::trace::MergeInOrder for ToleranceBatch {
    fn merge_next(&mut self, next: &ToleranceBatch) {
        self.merge(next);
    }
}

/// The scenario with some fields set, read and checked by the scenario's own code.
fn unit(base: &serde_json::Value, fields: &[(&FieldPath, f64)]) -> Unit {
    let mut doc = base.clone();
    for (field, x) in fields {
        if let Err(m) = field.set_number(&mut doc, *x) {
            return Unit::Refused(vec![Problem {
                message: format!("{} {m}", field.text),
                field: format!("scenario.{}", field.text),
                says: m,
            }]);
        }
    }
    let scenario = match read_scenario(&doc.to_string()) {
        Ok(s) => s,
        Err(p) => return Unit::Refused(vec![in_scenario(p)]),
    };
    match scenario.check() {
        Ok(_) => match Prepared::new(&scenario) {
            Ok(p) => Unit::Ready(Box::new(p)),
            Err(e) => Unit::Refused(vec![Problem::sentence("scenario", e.to_string())]),
        },
        Err(errors) => Unit::Refused(
            errors
                .iter()
                .map(|e| in_scenario(Problem::from(e)))
                .collect(),
        ),
    }
}

/// The variants' drawn values, variant by variant, spread by spread in document order, from
/// the seed's own stream ([`DRAW_TAG`]).
pub fn draw_values(spreads: &[Spread], nominal: &[f64], variants: u64, seed: u64) -> Vec<Vec<f64>> {
    let mut rng = Pcg64Mcg::seed_from_u64(mix_seed(seed, DRAW_TAG));
    (0..variants)
        .map(|_| {
            spreads
                .iter()
                .zip(nominal)
                .map(|(s, x0)| x0 + s.distribution.draw(&mut rng))
                .collect()
        })
        .collect()
}

impl Study {
    /// Read and check the nominal scenario, the one-at-a-time points and every variant of a
    /// tolerance study. Fails (with problems of the study document) for what concerns the whole
    /// study: the trace settings, the total rays, a nominal scenario that cannot be traced, or
    /// when the study is not a tolerance study.
    pub fn prepare_tolerance(&self) -> Result<Tolerance, Vec<Problem>> {
        #[allow(unreachable_patterns)] // other plans are prepared by their own modules
        let plan = match &self.plan {
            Plan::Tolerance(plan) => plan,
            _ => {
                return Err(vec![problem(
                    "tolerances",
                    "is missing: this study is not a tolerance study",
                )])
            }
        };
        let trace_problems: Vec<Problem> = self
            .scenario
            .problems()
            .iter()
            .map(|e| in_scenario(Problem::from(e)))
            .collect();
        if !trace_problems.is_empty() {
            return Err(trace_problems);
        }
        let rays = self.scenario.trace.rays;
        let units = 1 + 2 * plan.spreads.len() as u64 + plan.variants;
        let total = rays.saturating_mul(units);
        if !TOLERANCE_RAYS.contains(total) {
            return Err(vec![problem(
                "scenario.trace.rays",
                format!(
                    "times the traced scenarios (the study's rays) must be at most {}, got {rays} × {units} \
                     (nominal, 2 per spread, {} variants) = {total}",
                    crate::limits::show_count(TOLERANCE_RAYS.max),
                    plan.variants
                ),
            )]);
        }
        let nominal =
            Prepared::new(&self.scenario).map_err(|e| vec![problem("scenario", e.to_string())])?;
        let base = serde_json::to_value(&self.scenario)
            .map_err(|e| vec![problem("scenario", e.to_string())])?;
        let nominal_values = plan
            .spreads
            .iter()
            .map(|s| s.field.number_in(&base))
            .collect::<Result<Vec<f64>, String>>()
            .map_err(|m| vec![problem("tolerances.spreads", m)])?;
        let one_at_a_time = plan
            .spreads
            .iter()
            .zip(&nominal_values)
            .map(|(s, &x0)| {
                let step = s.distribution.standard_deviation();
                (
                    unit(&base, &[(&s.field, x0 - step)]),
                    unit(&base, &[(&s.field, x0 + step)]),
                )
            })
            .collect();
        let seed = self.scenario.trace.seed;
        let variants = draw_values(&plan.spreads, &nominal_values, plan.variants, seed)
            .into_iter()
            .map(|values| {
                let fields: Vec<(&FieldPath, f64)> = plan
                    .spreads
                    .iter()
                    .map(|s| &s.field)
                    .zip(values.iter().copied())
                    .collect();
                let u = unit(&base, &fields);
                (values, u)
            })
            .collect();
        Ok(Tolerance {
            name: self.name.clone(),
            spreads: plan.spreads.clone(),
            nominal_values,
            nominal: Box::new(nominal),
            one_at_a_time,
            variants,
            rays,
            seed,
        })
    }
}

/// Trace one batch of a unit, the nominal's per-ray delivered weights given.
fn unit_stats(p: &Prepared, index: u64, x0: &[f64], x: &mut Vec<f64>) -> UnitStats {
    p.trace_batch_per_ray(index, x);
    UnitStats {
        delivered: Estimate::of_replicates(x.iter().copied()),
        difference: Estimate::of_differences(x, x0),
        effect: Estimate::default(),
    }
}

impl Tolerance {
    /// Number of batches of every traced scenario.
    pub fn batch_count(&self) -> u64 {
        self.rays.div_ceil(BATCH_RAYS)
    }

    /// Whether `batch` (sent back by a worker) comes from this study: a result for every
    /// one-at-a-time point and variant that can be traced and none for a refused one, each
    /// over as many rays as the nominal's (the same batch's rays).
    pub fn fits(&self, batch: &ToleranceBatch) -> bool {
        let rays = batch.nominal.n;
        let ready = |u: &Unit, s: &Option<UnitStats>| match (u, s) {
            (Unit::Ready(_), Some(s)) => s.delivered.n == rays && s.difference.n == rays,
            (Unit::Refused(_), None) => true,
            _ => false,
        };
        rays > 0
            && rays <= BATCH_RAYS
            && batch.one_at_a_time.len() == self.one_at_a_time.len()
            && batch.variants.len() == self.variants.len()
            && self
                .one_at_a_time
                .iter()
                .zip(&batch.one_at_a_time)
                .all(|((m, p), [sm, sp])| ready(m, sm) && ready(p, sp))
            && self
                .variants
                .iter()
                .zip(&batch.variants)
                .all(|((_, u), s)| ready(u, s))
    }

    /// The units of a batch besides the nominal: each spread's one-at-a-time pair, then every
    /// variant.
    fn unit_count(&self) -> usize {
        self.one_at_a_time.len() + self.variants.len()
    }

    /// The nominal's per-ray delivered weights and estimate in batch `index`.
    fn nominal_batch(&self, index: u64) -> (Vec<f64>, Estimate) {
        let mut x0 = Vec::new();
        self.nominal.trace_batch_per_ray(index, &mut x0);
        let e = Estimate::of_replicates(x0.iter().copied());
        (x0, e)
    }

    /// Unit `u` of batch `index` (u < spreads: a one-at-a-time pair; else a variant).
    fn trace_unit(&self, index: u64, u: usize, x0: &[f64]) -> [Option<UnitStats>; 2] {
        let mut x = Vec::new();
        if let Some((minus, plus)) = self.one_at_a_time.get(u) {
            let mut xm = Vec::new();
            let m = match minus {
                Unit::Ready(p) => Some(unit_stats(p, index, x0, &mut xm)),
                Unit::Refused(_) => None,
            };
            let p = match plus {
                Unit::Ready(p) => {
                    let mut s = unit_stats(p, index, x0, &mut x);
                    if m.is_some() {
                        // (x₊ − x₋)/2 per ray: the mean halves, the spreads quarter.
                        s.effect = Estimate::of_differences(&x, &xm).scaled(0.5);
                    }
                    Some(s)
                }
                Unit::Refused(_) => None,
            };
            [m, p]
        } else {
            let v = u - self.one_at_a_time.len();
            match &self.variants[v].1 {
                Unit::Ready(p) => [Some(unit_stats(p, index, x0, &mut x)), None],
                Unit::Refused(_) => [None, None],
            }
        }
    }

    /// Assemble one batch's units (in unit order).
    fn batch_of(&self, nominal: Estimate, units: Vec<[Option<UnitStats>; 2]>) -> ToleranceBatch {
        let k = self.one_at_a_time.len();
        let mut one_at_a_time = Vec::with_capacity(k);
        let mut variants = Vec::with_capacity(self.variants.len());
        for (u, pair) in units.into_iter().enumerate() {
            if u < k {
                one_at_a_time.push(pair);
            } else {
                variants.push(pair[0]);
            }
        }
        ToleranceBatch {
            nominal,
            one_at_a_time,
            variants,
        }
    }

    /// Trace batch `index` of the nominal, the one-at-a-time points and every variant with
    /// common random numbers.
    pub fn trace_batch(&self, index: u64) -> ToleranceBatch {
        let (x0, nominal) = self.nominal_batch(index);
        let units = (0..self.unit_count())
            .map(|u| self.trace_unit(index, u, &x0))
            .collect();
        self.batch_of(nominal, units)
    }

    /// Trace every batch on the calling thread, merged in batch order.
    pub fn trace_all_serial(&self) -> ToleranceBatch {
        let mut total = self.trace_batch(0);
        for b in 1..self.batch_count() {
            total.merge(&self.trace_batch(b));
        }
        total
    }

    /// Trace every batch on `threads` threads (0: all cores): the units of a chunk of batches
    /// in parallel, then merged per unit in batch order, so identical to
    /// [`Tolerance::trace_all_serial`]. `progress` gets the batches done after each chunk.
    /// Memory: a chunk holds its batches' nominal per-ray weights (32 KB per batch) and a few
    /// numbers per unit.
    #[cfg(not(target_arch = "wasm32"))]
    pub fn trace_all_parallel(
        &self,
        threads: usize,
        progress: impl FnMut(u64),
    ) -> Result<ToleranceBatch, RunError> {
        use rayon::prelude::*;
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| RunError::ThreadPool(e.to_string()))?;
        let chunk = (pool.current_num_threads() as u64).clamp(1, 64);
        let units = self.unit_count();
        let total = crate::trace::fold_in_order(
            self.batch_count(),
            chunk,
            |range| {
                let (first, end) = (range.start, range.end);
                pool.install(|| {
                    let nominals: Vec<(Vec<f64>, Estimate)> = (first..end)
                        .into_par_iter()
                        .map(|b| self.nominal_batch(b))
                        .collect();
                    let results: Vec<[Option<UnitStats>; 2]> = (0..(end - first) as usize * units)
                        .into_par_iter()
                        .map(|i| {
                            let (b, u) = (i / units, i % units);
                            self.trace_unit(first + b as u64, u, &nominals[b].0)
                        })
                        .collect();
                    let mut results = results.into_iter();
                    nominals
                        .iter()
                        .map(|(_, e)| self.batch_of(*e, results.by_ref().take(units).collect()))
                        .collect()
                })
            },
            progress,
        );
        Ok(total.unwrap_or_else(|| self.trace_batch(0)))
    }
}

/// How the percentiles are computed, for the report.
pub const PERCENTILE_METHOD: &str = "linear interpolation between order statistics: the p-th \
    percentile of n sorted values x₀ ≤ … ≤ xₙ₋₁ is x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋₊₁ − x_⌊h⌋) with \
    h = (n − 1)p (Hyndman and Fan's definition 7)";

/// The one-at-a-time method, for the report.
pub const ONE_AT_A_TIME_METHOD: &str = "one at a time: each field at nominal − s and nominal + s \
    (s = sigma, or half_width/√3, the uniform's standard deviation), the others at nominal, \
    traced with the nominal's rays (common random numbers); difference = delivered − nominal \
    from per-ray differences; effect = (difference₊ − difference₋)/2 from per-ray halves; each \
    with its 95 % interval; ranked by |effect|";

/// The correlation method, for the report.
pub const CORRELATION_METHOD: &str = "correlation: Pearson's r between each field's drawn value \
    and delivered over the traced variants (null when either does not vary); ranked by |r|";

fn percentile_method() -> &'static str {
    PERCENTILE_METHOD
}

fn one_at_a_time_method() -> &'static str {
    ONE_AT_A_TIME_METHOD
}

fn correlation_method() -> &'static str {
    CORRELATION_METHOD
}

/// A spread as reported.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpreadReport {
    /// The field (path in the scenario).
    pub field: String,
    /// Its nominal value (field's unit).
    pub nominal: f64,
    /// Its distribution.
    pub distribution: Distribution,
    /// Its standard deviation (σ, or half_width/√3).
    pub standard_deviation: f64,
}

/// A variant as reported.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct VariantReport {
    /// The drawn values, one per spread in the document's order.
    pub values: Vec<f64>,
    /// Delivered share ± 95 % (absent when refused).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub delivered: Option<Share>,
    /// Delivered minus nominal, paired per ray, ± 95 % (absent when refused).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub difference: Option<Share>,
    /// Why the variant was not traced (absent when traced).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub problems: Vec<Problem>,
}

/// A histogram of the variants' delivered shares.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Histogram {
    /// Bin edges (one more than the counts); the last bin includes its upper edge.
    pub edges: Vec<f64>,
    /// Variants per bin.
    pub counts: Vec<u64>,
}

/// The spread of delivered over the traced variants.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeliveredSpread {
    /// Mean of the variants' delivered shares.
    pub mean: f64,
    /// Their sample standard deviation (n − 1); null below two traced variants.
    pub standard_deviation: Option<f64>,
    /// 5th percentile.
    pub p05: f64,
    /// Median.
    pub p50: f64,
    /// 95th percentile.
    pub p95: f64,
    /// How the percentiles are computed (a report read back gets this version's text).
    #[serde(skip_deserializing, default = "percentile_method")]
    pub percentile_method: &'static str,
    /// The median of the variants' own 95 % half-widths: the ray noise on each variant's
    /// delivered (compare with the standard deviation above).
    #[serde(deserialize_with = "crate::export::ci95_or_infinite")]
    pub typical_variant_ci95: f64,
    /// Histogram of delivered (square-root choice of bin count, at most 40 bins).
    pub histogram: Histogram,
}

/// One field in the one-at-a-time ranking.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OneAtATime {
    /// The field.
    pub field: String,
    /// The step s (σ or half_width/√3).
    pub step: f64,
    /// Delivered at nominal − s minus nominal, ± 95 % (null when that point is refused).
    pub minus: Option<Share>,
    /// Delivered at nominal + s minus nominal, ± 95 % (null when that point is refused).
    pub plus: Option<Share>,
    /// (plus − minus)/2 ± 95 % (null when either point is refused).
    pub effect: Option<Share>,
    /// Problems of a refused point.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub problems: Vec<Problem>,
}

/// One field in the correlation ranking.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Correlation {
    /// The field.
    pub field: String,
    /// Pearson's r (null when the field's values or delivered do not vary).
    pub r: Option<f64>,
}

/// The sensitivity rankings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Sensitivity {
    /// How the one-at-a-time ranking is made (read back: this version's text).
    #[serde(skip_deserializing, default = "one_at_a_time_method")]
    pub one_at_a_time_method: &'static str,
    /// Most influential first.
    pub one_at_a_time: Vec<OneAtATime>,
    /// How the correlation ranking is made (read back: this version's text).
    #[serde(skip_deserializing, default = "correlation_method")]
    pub correlation_method: &'static str,
    /// Most correlated first.
    pub correlation: Vec<Correlation>,
}

/// Everything a tolerance study reports.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ToleranceReport {
    /// The study's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// Rays per traced scenario (the same rays at every one).
    pub rays: u64,
    /// Seed of the rays and of the variants' draws.
    pub seed: u64,
    /// The spreads.
    pub spreads: Vec<SpreadReport>,
    /// The nominal scenario's delivered share ± 95 %.
    pub nominal: Share,
    /// Variants drawn.
    pub variants_drawn: u64,
    /// Variants traced.
    pub variants_traced: u64,
    /// Variants not traced because a drawn value breaks a rule of the scenario.
    pub variants_refused: u64,
    /// The first few refused variants: their index and problems.
    pub refused_examples: Vec<RefusedVariant>,
    /// Delivered over the traced variants (absent when none was traced).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub delivered: Option<DeliveredSpread>,
    /// Which tolerance matters most.
    pub sensitivity: Sensitivity,
    /// Every variant.
    pub variants: Vec<VariantReport>,
}

/// A refused variant, named.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RefusedVariant {
    /// Its index (0-based) in `variants`.
    pub variant: usize,
    /// Its problems.
    pub problems: Vec<Problem>,
}

/// The p-th percentile (0…1) of sorted values ([`PERCENTILE_METHOD`]).
pub fn percentile(sorted: &[f64], p: f64) -> f64 {
    match sorted.len() {
        0 => f64::NAN,
        1 => sorted[0],
        n => {
            let h = (n - 1) as f64 * p;
            let lo = (h.floor() as usize).min(n - 1);
            let hi = (lo + 1).min(n - 1);
            sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
        }
    }
}

/// Pearson's r of paired values; `None` when either does not vary or fewer than two pairs.
pub fn pearson(x: &[f64], y: &[f64]) -> Option<f64> {
    let n = x.len().min(y.len());
    if n < 2 {
        return None;
    }
    // Means shifted by the first value: exactly that value when all are equal (a plain sum of
    // equal values need not divide back to it), so that equal values have exactly no spread.
    let mx = x[0] + x[..n].iter().map(|a| a - x[0]).sum::<f64>() / n as f64;
    let my = y[0] + y[..n].iter().map(|b| b - y[0]).sum::<f64>() / n as f64;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (a, b) in x[..n].iter().zip(&y[..n]) {
        sxy += (a - mx) * (b - my);
        sxx += (a - mx) * (a - mx);
        syy += (b - my) * (b - my);
    }
    (sxx > 0.0 && syy > 0.0).then(|| (sxy / (sxx * syy).sqrt()).clamp(-1.0, 1.0))
}

/// Histogram of values: ⌈√n⌉ equal bins (at most 40) from the least to the greatest; one bin
/// when all are equal.
fn histogram(sorted: &[f64]) -> Histogram {
    let (Some(&lo), Some(&hi)) = (sorted.first(), sorted.last()) else {
        return Histogram {
            edges: Vec::new(),
            counts: Vec::new(),
        };
    };
    if hi <= lo {
        return Histogram {
            edges: vec![lo, hi],
            counts: vec![sorted.len() as u64],
        };
    }
    let bins = ((sorted.len() as f64).sqrt().ceil() as usize).clamp(1, 40);
    let width = (hi - lo) / bins as f64;
    let mut edges: Vec<f64> = (0..bins).map(|i| lo + width * i as f64).collect();
    edges.push(hi);
    let mut counts = vec![0u64; bins];
    for &x in sorted {
        let i = (((x - lo) / width) as usize).min(bins - 1);
        counts[i] += 1;
    }
    Histogram { edges, counts }
}

impl Tolerance {
    /// The report of merged batches.
    pub fn report(&self, merged: &ToleranceBatch) -> ToleranceReport {
        let spreads: Vec<SpreadReport> = self
            .spreads
            .iter()
            .zip(&self.nominal_values)
            .map(|(s, &nominal)| SpreadReport {
                field: s.field.text.clone(),
                nominal,
                distribution: s.distribution,
                standard_deviation: s.distribution.standard_deviation(),
            })
            .collect();
        let mut variants = Vec::with_capacity(self.variants.len());
        let mut refused_examples = Vec::new();
        let mut traced_values: Vec<Vec<f64>> = vec![Vec::new(); self.spreads.len()];
        let mut delivered = Vec::new();
        let mut ci = Vec::new();
        for (i, ((values, unit), stats)) in self.variants.iter().zip(&merged.variants).enumerate() {
            match (unit, stats) {
                (Unit::Ready(_), Some(s)) => {
                    let d = s.delivered.share();
                    delivered.push(d.share);
                    ci.push(d.ci95);
                    for (column, v) in traced_values.iter_mut().zip(values) {
                        column.push(*v);
                    }
                    variants.push(VariantReport {
                        values: values.clone(),
                        delivered: Some(d),
                        difference: Some(s.difference.share()),
                        problems: Vec::new(),
                    });
                }
                (Unit::Refused(problems), _) => {
                    if refused_examples.len() < TOLERANCE_NAMED_REFUSALS {
                        refused_examples.push(RefusedVariant {
                            variant: i,
                            problems: problems.clone(),
                        });
                    }
                    variants.push(VariantReport {
                        values: values.clone(),
                        delivered: None,
                        difference: None,
                        problems: problems.clone(),
                    });
                }
                // A batch from another study: nothing to report for this variant.
                (Unit::Ready(_), None) => variants.push(VariantReport {
                    values: values.clone(),
                    delivered: None,
                    difference: None,
                    problems: Vec::new(),
                }),
            }
        }
        let traced = delivered.len() as u64;
        let refused = self
            .variants
            .iter()
            .filter(|(_, u)| matches!(u, Unit::Refused(_)))
            .count() as u64;
        let spread = (!delivered.is_empty()).then(|| {
            let mut sorted = delivered.clone();
            sorted.sort_by(f64::total_cmp);
            let mut ci_sorted = ci.clone();
            ci_sorted.sort_by(f64::total_cmp);
            let mut e = crate::stats::ShiftedSums::new(1);
            delivered.iter().for_each(|x| e.add(&[*x]));
            let e = e.estimates().next().unwrap_or_default();
            DeliveredSpread {
                mean: e.mean,
                standard_deviation: (e.n > 1).then(|| (e.m2 / (e.n - 1) as f64).sqrt()),
                p05: percentile(&sorted, 0.05),
                p50: percentile(&sorted, 0.5),
                p95: percentile(&sorted, 0.95),
                percentile_method: PERCENTILE_METHOD,
                typical_variant_ci95: percentile(&ci_sorted, 0.5),
                histogram: histogram(&sorted),
            }
        });
        let mut one_at_a_time: Vec<OneAtATime> = self
            .spreads
            .iter()
            .zip(&self.one_at_a_time)
            .zip(&merged.one_at_a_time)
            .map(|((s, (minus, plus)), [m, p])| {
                let mut problems = Vec::new();
                for u in [minus, plus] {
                    if let Unit::Refused(q) = u {
                        problems.extend(q.iter().cloned());
                    }
                }
                OneAtATime {
                    field: s.field.text.clone(),
                    step: s.distribution.standard_deviation(),
                    minus: m.map(|m| m.difference.share()),
                    plus: p.map(|p| p.difference.share()),
                    effect: match (m, p) {
                        (Some(_), Some(p)) => Some(p.effect.share()),
                        _ => None,
                    },
                    problems,
                }
            })
            .collect();
        // Stable sort: equal effects keep the document's order; refused points last.
        let key = |o: &OneAtATime| o.effect.map(|e| e.share.abs()).unwrap_or(-1.0);
        one_at_a_time.sort_by(|a, b| key(b).total_cmp(&key(a)));
        let mut correlation: Vec<Correlation> = self
            .spreads
            .iter()
            .zip(&traced_values)
            .map(|(s, x)| Correlation {
                field: s.field.text.clone(),
                r: pearson(x, &delivered),
            })
            .collect();
        let key = |c: &Correlation| c.r.map(f64::abs).unwrap_or(-1.0);
        correlation.sort_by(|a, b| key(b).total_cmp(&key(a)));
        ToleranceReport {
            name: self.name.clone(),
            rays: self.rays,
            seed: self.seed,
            spreads,
            nominal: merged.nominal.share(),
            variants_drawn: self.variants.len() as u64,
            variants_traced: traced,
            variants_refused: refused,
            refused_examples,
            delivered: spread,
            sensitivity: Sensitivity {
                one_at_a_time_method: ONE_AT_A_TIME_METHOD,
                one_at_a_time,
                correlation_method: CORRELATION_METHOD,
                correlation,
            },
            variants,
        }
    }
}

/// The tolerance report as CSV, one row per variant: its index, each spread's drawn value
/// (headed by its field path, in the field's own unit), delivered and its ci95, the difference
/// to nominal and its ci95 (shares, 0…1), and the problems of a refused variant (its other
/// cells empty).
pub fn report_csv(report: &ToleranceReport) -> String {
    let mut header = vec!["variant".to_string()];
    header.extend(report.spreads.iter().map(|s| s.field.clone()));
    for name in ["delivered", "difference"] {
        header.push(format!("{name} (share)"));
        header.push(format!("{name} ci95 (share)"));
    }
    header.push("problems".to_string());
    let mut out = header
        .iter()
        .map(|h| csv_text(h))
        .collect::<Vec<_>>()
        .join(",");
    out.push('\n');
    for (i, v) in report.variants.iter().enumerate() {
        let mut cells = vec![i.to_string()];
        cells.extend(v.values.iter().map(|x| num(*x)));
        for s in [v.delivered, v.difference] {
            match s {
                Some(s) => {
                    cells.push(num(s.share));
                    cells.push(num(s.ci95));
                }
                None => cells.extend([String::new(), String::new()]),
            }
        }
        let problems: Vec<&str> = v.problems.iter().map(|q| q.message.as_str()).collect();
        cells.push(if problems.is_empty() {
            String::new()
        } else {
            csv_text(&problems.join("; "))
        });
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

/// A number for the CSV: shortest form that reads back exactly (−0 as 0, an infinite
/// half-width as empty).
fn num(x: f64) -> String {
    if x.is_finite() {
        (x + 0.0).to_string()
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentiles_interpolate_between_order_statistics() {
        let x = [1.0, 2.0, 4.0, 8.0, 16.0];
        // h = 4p: p = 0.5 → x₂; p = 0.05 → x₀ + 0.2 (x₁ − x₀); p = 0.95 → x₃ + 0.8 (x₄ − x₃).
        assert_eq!(percentile(&x, 0.5), 4.0);
        assert!((percentile(&x, 0.05) - 1.2).abs() < 1e-15);
        assert!((percentile(&x, 0.95) - 14.4).abs() < 1e-14);
        assert_eq!(percentile(&x, 1.0), 16.0);
        assert_eq!(percentile(&[3.0], 0.05), 3.0);
    }

    #[test]
    fn pearson_is_one_for_a_line_and_none_without_spread() {
        let x = [1.0, 2.0, 3.0, 4.0];
        let y: Vec<f64> = x.iter().map(|v| 5.0 - 2.0 * v).collect();
        assert!((pearson(&x, &y).unwrap() + 1.0).abs() < 1e-15);
        assert_eq!(pearson(&x, &[2.0; 4]), None);
        // x and x² over symmetric values: uncorrelated.
        let s = [-2.0, -1.0, 0.0, 1.0, 2.0];
        let sq: Vec<f64> = s.iter().map(|v| v * v).collect();
        assert_eq!(pearson(&s, &sq), Some(0.0));
    }

    #[test]
    fn the_histogram_counts_every_value_once() {
        let x: Vec<f64> = (0..10).map(f64::from).collect();
        let h = histogram(&x);
        // ⌈√10⌉ = 4 bins over 0…9; the greatest value falls in the last bin.
        assert_eq!(h.edges.len(), 5);
        assert_eq!(h.counts, [3, 2, 2, 3]);
        assert_eq!(histogram(&[0.5; 3]).counts, [3]);
    }
}
