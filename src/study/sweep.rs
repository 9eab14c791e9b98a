//! Tracing a sweep: every point of a [`Study`] batch by batch with common random numbers, the
//! batches merged in batch order (results do not depend on thread count), and the report.
//!
//! Per batch, the first traced point's rays are traced keeping each ray's delivered weight
//! x₀,k; every other point's the same way (x_i,k), and the per-ray differences d_k = x_i,k − x₀,k
//! feed [`Estimate::of_differences`]. Because ray k draws the same random numbers at every point,
//! the rays the design change does not touch have d_k = 0 exactly, and the difference's
//! interval is that of the change alone — but for the exit face's schedule of first Fresnel
//! events (`trace::sequence`), which a touched ray shifts for its replicate's later rays, so a
//! few of them turn back at one point and not at the other.

use serde::{Deserialize, Serialize};
use serde_json::Value;

#[cfg(not(target_arch = "wasm32"))]
use crate::error::RunError;
use crate::export::csv_text;
use crate::limits::SWEEP_RAYS;
use crate::problems::{read_scenario, Problem};
use crate::stats::{Estimate, Share};
use crate::trace::{BatchTallies, Budget, Prepared, RayTallies};

use super::{in_scenario, Plan, Setting, Study, SweepPlan};

/// The document fields of the varied fields, in order.
const AXES: [&str; 2] = ["vary", "and_vary"];

fn is_false(b: &bool) -> bool {
    !b
}

impl SweepPlan {
    /// Every point's settings, one per varied field: the first field's settings outer, the
    /// second's inner.
    pub fn points(&self) -> Vec<Vec<&Setting>> {
        let mut out: Vec<Vec<&Setting>> = vec![Vec::new()];
        for axis in &self.axes {
            out = out
                .into_iter()
                .flat_map(|head| {
                    axis.settings.iter().map(move |s| {
                        let mut p = head.clone();
                        p.push(s);
                        p
                    })
                })
                .collect();
        }
        out
    }
}

/// One point of a sweep: its value and either its prepared scenario or its problems.
#[derive(Debug, Clone)]
enum Point {
    Ready(Box<Prepared>),
    Refused(Vec<Problem>),
}

/// A study ready to trace: every point read and checked.
#[derive(Debug, Clone)]
pub struct Sweep {
    name: Option<String>,
    /// Each varied field's path and whether its settings are factors.
    axes: Vec<(String, bool)>,
    /// Each point's settings, one per varied field, as the report shows them.
    at: Vec<Vec<Value>>,
    points: Vec<Point>,
    /// The first point that can be traced (the reference of the differences).
    reference: Option<usize>,
    rays: u64,
    seed: u64,
}

/// The merged result of some batches of every point, in point order (`None` for a refused
/// point). Serialisable, so that batches traced in separate workers can be sent back and merged
/// in batch order ([`crate::trace::PrefixMerger`]). Each point keeps only what the sweep
/// reports (its tallies, [`BatchTallies`]), not the trace's histograms: a few hundred numbers
/// per point and batch instead of some 7,000.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepBatch {
    /// Each point's merged batches' tallies.
    pub batches: Vec<Option<BatchTallies>>,
    /// Each point's delivered share minus the reference point's, from per-ray differences.
    pub differences: Vec<Option<Estimate>>,
    /// Each point's segment leaks and receiver share minus the reference point's, from per-ray
    /// differences.
    #[serde(default)]
    pub paired: Vec<Option<PairedDifferences>>,
}

/// A point's paired differences (common random numbers) to the reference point beyond
/// delivered: d_k = x_k − x₀,k per ray, estimated by [`Estimate::of_differences`].
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct PairedDifferences {
    /// Per route segment (those both points have): leaked share minus the reference's.
    pub segments_leaked: Vec<Estimate>,
    /// Share on the receiver minus the reference's, when both have a receiver.
    pub receiver: Option<Estimate>,
}

impl PairedDifferences {
    /// The paired differences of one batch's rays `x` to the reference's `x0`.
    fn of(x: &RayTallies, x0: &RayTallies, receivers: bool) -> PairedDifferences {
        PairedDifferences {
            segments_leaked: x
                .leaked
                .iter()
                .zip(&x0.leaked)
                .map(|(a, b)| Estimate::of_differences(a, b))
                .collect(),
            receiver: receivers.then(|| Estimate::of_differences(&x.receiver, &x0.receiver)),
        }
    }

    /// Merge the next batch (in batch order).
    fn merge(&mut self, other: &PairedDifferences) {
        for (a, b) in self.segments_leaked.iter_mut().zip(&other.segments_leaked) {
            a.merge(b);
        }
        if let (Some(a), Some(b)) = (self.receiver.as_mut(), &other.receiver) {
            a.merge(b);
        }
    }
}

impl SweepBatch {
    /// Merge the next batch (in batch order) into this one.
    pub fn merge(&mut self, other: &SweepBatch) {
        for (a, b) in self.batches.iter_mut().zip(&other.batches) {
            if let (Some(a), Some(b)) = (a.as_mut(), b) {
                a.merge(b);
            }
        }
        for (a, b) in self.differences.iter_mut().zip(&other.differences) {
            if let (Some(a), Some(b)) = (a.as_mut(), b) {
                a.merge(b);
            }
        }
        for (a, b) in self.paired.iter_mut().zip(&other.paired) {
            if let (Some(a), Some(b)) = (a.as_mut(), b) {
                a.merge(b);
            }
        }
    }
}

impl crate::trace::MergeInOrder for SweepBatch {
    fn merge_next(&mut self, next: &SweepBatch) {
        self.merge(next);
    }
}

/// What a traced point reports.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PointResult {
    /// Delivered share with its 95 % half-width.
    pub delivered: Share,
    /// Delivered share minus the reference point's, with the 95 % half-width of the paired
    /// (common random numbers) estimate; exactly 0 at the reference point.
    pub difference: Share,
    /// The energy budget.
    pub budget: Budget,
    /// Share leaked through each segment's walls, in route order.
    pub segments_leaked: Vec<Share>,
    /// Share landing on the receiver, when the scenario has one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub receiver: Option<Share>,
    /// Each segment's leaked share minus the reference point's, with the 95 % half-width of
    /// the paired (common random numbers) estimate; exactly 0 at the reference point.
    #[serde(default)]
    pub segments_leaked_difference: Vec<Share>,
    /// The receiver's share minus the reference point's, paired as the others.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub receiver_difference: Option<Share>,
}

/// One point of the report: the value, and its result or its problems.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PointReport {
    /// The varied field's value at this point: a number, a text (a material), or the factor
    /// its number was multiplied by (when the report's `factor` is true).
    pub value: Value,
    /// The second varied field's value, in a grid.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub and_value: Option<Value>,
    /// Its result (absent when the point has problems).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub result: Option<PointResult>,
    /// Its problems, each with its field path in the study document (absent when none).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub problems: Vec<Problem>,
}

/// Everything a sweep reports.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepReport {
    /// The study's label.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The varied field (path in the scenario).
    pub field: String,
    /// Whether the points' values are factors the field's number(s) were multiplied by.
    #[serde(default, skip_serializing_if = "is_false")]
    pub factor: bool,
    /// The second varied field of a grid (the points run through its values for each value
    /// of the first).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub and_field: Option<String>,
    /// Whether the second field's values are factors.
    #[serde(default, skip_serializing_if = "is_false")]
    pub and_factor: bool,
    /// Rays per point.
    pub rays: u64,
    /// Seed shared by every point.
    pub seed: u64,
    /// Index of the point the differences are taken to (the first traced point), if any.
    pub reference: Option<usize>,
    /// The points, in the document's order.
    pub points: Vec<PointReport>,
}

impl Study {
    /// Read and check every point of a sweep. Fails (with problems of the study document) only
    /// for what concerns every point: the trace settings and the sweep's total rays, or when the
    /// study is not a sweep.
    pub fn prepare_sweep(&self) -> Result<Sweep, Vec<Problem>> {
        #[allow(unreachable_patterns)] // other plans are prepared by their own modules
        let plan = match &self.plan {
            Plan::Sweep(plan) => plan,
            _ => {
                return Err(vec![Problem::sentence(
                    "vary",
                    "vary is missing: this study is not a sweep",
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
        let grid = plan.points();
        let total = rays.saturating_mul(grid.len() as u64);
        if !SWEEP_RAYS.contains(total) {
            return Err(vec![Problem::new(
                "scenario.trace.rays",
                format!(
                    "times the points (the sweep's rays) must be at most {}, got {rays} × {} = {total}",
                    crate::limits::show_count(SWEEP_RAYS.max),
                    grid.len()
                ),
            )]);
        }
        let base = serde_json::to_value(&self.scenario)
            .map_err(|e| vec![Problem::sentence("scenario", e.to_string())])?;
        let points: Vec<Point> = grid
            .iter()
            .map(|settings| {
                let mut doc = base.clone();
                for ((axis, setting), at) in plan.axes.iter().zip(settings).zip(AXES) {
                    if let Err(m) = setting.apply(&axis.field, &mut doc) {
                        return Point::Refused(vec![Problem::new(format!("{at}.field"), m)]);
                    }
                }
                let scenario = match read_scenario(&doc.to_string()) {
                    Ok(s) => s,
                    Err(p) => return Point::Refused(vec![in_scenario(p)]),
                };
                match scenario.check() {
                    Ok(_) => match Prepared::new(&scenario) {
                        Ok(p) => Point::Ready(Box::new(p)),
                        Err(e) => {
                            Point::Refused(vec![Problem::sentence("scenario", e.to_string())])
                        }
                    },
                    Err(errors) => Point::Refused(
                        errors
                            .iter()
                            .map(|e| in_scenario(Problem::from(e)))
                            .collect(),
                    ),
                }
            })
            .collect();
        let reference = points.iter().position(|p| matches!(p, Point::Ready(_)));
        Ok(Sweep {
            name: self.name.clone(),
            axes: plan
                .axes
                .iter()
                .map(|a| {
                    let factor = matches!(a.settings.first(), Some(Setting::Factor(_)));
                    (a.field.text.clone(), factor)
                })
                .collect(),
            at: grid
                .iter()
                .map(|settings| settings.iter().map(|s| s.as_json()).collect())
                .collect(),
            points,
            reference,
            rays,
            seed: self.scenario.trace.seed,
        })
    }
}

impl Sweep {
    /// Number of batches of every point.
    pub fn batch_count(&self) -> u64 {
        self.rays.div_ceil(crate::trace::BATCH_RAYS)
    }

    /// Points that can be traced.
    pub fn traced_points(&self) -> usize {
        self.points
            .iter()
            .filter(|p| matches!(p, Point::Ready(_)))
            .count()
    }

    /// Trace batch `index` of every point with common random numbers.
    pub fn trace_batch(&self, index: u64) -> SweepBatch {
        let mut x0 = RayTallies::default();
        let mut x = RayTallies::default();
        let reference = self.reference.and_then(|r| match &self.points[r] {
            Point::Ready(p) => Some((
                BatchTallies::from(p.trace_batch_per_ray_all(index, &mut x0)),
                p.scenario.receiver.is_some(),
            )),
            Point::Refused(_) => None,
        });
        let has_receiver = reference.as_ref().is_some_and(|r| r.1);
        let mut reference = reference.map(|r| r.0);
        let n = self.points.len();
        let mut out = SweepBatch {
            batches: Vec::with_capacity(n),
            differences: Vec::with_capacity(n),
            paired: Vec::with_capacity(n),
        };
        for (i, point) in self.points.iter().enumerate() {
            match point {
                Point::Refused(_) => {
                    out.batches.push(None);
                    out.differences.push(None);
                    out.paired.push(None);
                }
                Point::Ready(_) if Some(i) == self.reference => {
                    out.batches.push(reference.take());
                    out.differences
                        .push(Some(Estimate::of_differences(&x0.delivered, &x0.delivered)));
                    out.paired
                        .push(Some(PairedDifferences::of(&x0, &x0, has_receiver)));
                }
                Point::Ready(p) => {
                    out.batches
                        .push(Some(p.trace_batch_per_ray_all(index, &mut x).into()));
                    out.differences
                        .push(Some(Estimate::of_differences(&x.delivered, &x0.delivered)));
                    let receivers = has_receiver && p.scenario.receiver.is_some();
                    out.paired
                        .push(Some(PairedDifferences::of(&x, &x0, receivers)));
                }
            }
        }
        out
    }

    /// Whether `batch` (sent back by a worker) comes from this sweep: a result for exactly the
    /// points that can be traced, each shaped as that point's scenario traces.
    pub fn fits(&self, batch: &SweepBatch) -> bool {
        batch.batches.len() == self.points.len()
            && batch.differences.len() == self.points.len()
            && batch.paired.len() == self.points.len()
            && self
                .points
                .iter()
                .zip(&batch.paired)
                .all(|(point, d)| matches!(point, Point::Ready(_)) == d.is_some())
            && self
                .points
                .iter()
                .zip(batch.batches.iter().zip(&batch.differences))
                .all(|(point, pair)| match (point, pair) {
                    (Point::Ready(p), (Some(b), Some(_))) => p.fits_tallies(b),
                    (Point::Refused(_), (None, None)) => true,
                    _ => false,
                })
    }

    /// Trace every batch on the calling thread, merged in batch order.
    pub fn trace_all_serial(&self) -> SweepBatch {
        let mut total = self.trace_batch(0);
        for b in 1..self.batch_count() {
            total.merge(&self.trace_batch(b));
        }
        total
    }

    /// Trace every batch on `threads` threads (0: all cores), merged in batch order: identical
    /// to [`Sweep::trace_all_serial`]. `progress` gets the batches done after each chunk.
    /// Fails with [`RunError::ThreadPool`] when the threads cannot be started.
    #[cfg(not(target_arch = "wasm32"))]
    pub fn trace_all_parallel(
        &self,
        threads: usize,
        progress: impl FnMut(u64),
    ) -> Result<SweepBatch, RunError> {
        use rayon::prelude::*;
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map_err(|e| RunError::ThreadPool(e.to_string()))?;
        // Batches of every point are held together until merged, each point's a few hundred
        // numbers (tallies only): at most 8,000 point batches (a few MB) in flight, however
        // many threads. Eight batches a thread per chunk, so that threads rarely wait for the
        // slowest batch of a chunk before the in-order merge.
        let per_chunk = (8000 / self.points.len().max(1)).max(1) as u64;
        let chunk = (8 * pool.current_num_threads() as u64).clamp(1, per_chunk);
        let total = crate::trace::fold_in_order(
            self.batch_count(),
            chunk,
            |range| pool.install(|| range.into_par_iter().map(|b| self.trace_batch(b)).collect()),
            progress,
        );
        // A study has at least one ray, so at least one batch.
        Ok(total.unwrap_or_else(|| self.trace_batch(0)))
    }

    /// The report of merged batches.
    pub fn report(&self, merged: &SweepBatch) -> SweepReport {
        let points = self
            .points
            .iter()
            .enumerate()
            .map(|(i, point)| {
                let value = self.at[i].first().cloned().unwrap_or(Value::Null);
                let and_value = self.at[i].get(1).cloned();
                let paired = merged.paired.get(i).cloned().flatten().unwrap_or_default();
                match (point, &merged.batches[i], &merged.differences[i]) {
                    (Point::Ready(p), Some(batch), Some(d)) => {
                        let r = p.report_tallies(batch);
                        PointReport {
                            value,
                            and_value,
                            result: Some(PointResult {
                                delivered: r.delivered,
                                difference: d.share(),
                                budget: r.budget,
                                segments_leaked: r.segments.iter().map(|s| s.leaked).collect(),
                                receiver: r.receiver,
                                segments_leaked_difference: paired
                                    .segments_leaked
                                    .iter()
                                    .map(|e| e.share())
                                    .collect(),
                                receiver_difference: paired.receiver.map(|e| e.share()),
                            }),
                            problems: Vec::new(),
                        }
                    }
                    (Point::Refused(problems), _, _) => PointReport {
                        value,
                        and_value,
                        result: None,
                        problems: problems.clone(),
                    },
                    // A batch from another sweep: nothing to report for this point.
                    _ => PointReport {
                        value,
                        and_value,
                        result: None,
                        problems: Vec::new(),
                    },
                }
            })
            .collect();
        let axis = |k: usize| self.axes.get(k).cloned();
        SweepReport {
            name: self.name.clone(),
            field: axis(0).map(|a| a.0).unwrap_or_default(),
            factor: axis(0).is_some_and(|a| a.1),
            and_field: axis(1).map(|a| a.0),
            and_factor: axis(1).is_some_and(|a| a.1),
            rays: self.rays,
            seed: self.seed,
            reference: self.reference,
            points,
        }
    }
}

/// The sweep report as CSV, one row per point: the value (in the field's own unit, named by the
/// field), delivered and its ci95, the difference to the reference point and its ci95, every
/// budget mechanism with its ci95, each segment's leaked share with its ci95, the receiver's
/// share and ci95 (empty when there is none), the problems of a refused point (its other
/// cells empty), then each segment's leaked share minus the reference point's and the
/// receiver's share minus the reference's, each with its ci95 (paired, per ray). Shares are
/// fractions of the emitted power (0…1).
pub fn report_csv(report: &SweepReport) -> String {
    let segments = report
        .points
        .iter()
        .filter_map(|p| p.result.as_ref())
        .map(|r| r.segments_leaked.len())
        .max()
        .unwrap_or(0);
    let label = |field: &str, factor: bool| {
        if factor {
            format!("{field} (factor)")
        } else {
            field.to_string()
        }
    };
    let mut header = vec![label(&report.field, report.factor)];
    if let Some(f) = &report.and_field {
        header.push(label(f, report.and_factor));
    }
    let mut with_ci = |name: String| {
        header.push(format!("{name} (share)"));
        header.push(format!("{name} ci95 (share)"));
    };
    // The budget's shares by key in the budget's order, the difference to the reference point
    // right after the delivered share.
    for (key, _) in Budget::MECHANISMS {
        with_ci(key.to_string());
        if key == DELIVERED {
            with_ci("difference".to_string());
        }
    }
    for s in 0..segments {
        with_ci(format!("segment {s} leaked"));
    }
    with_ci("receiver".to_string());
    header.push("problems".to_string());
    for s in 0..segments {
        header.push(format!("segment {s} leaked difference (share)"));
        header.push(format!("segment {s} leaked difference ci95 (share)"));
    }
    header.push("receiver difference (share)".to_string());
    header.push("receiver difference ci95 (share)".to_string());
    let mut out = header
        .iter()
        .map(|h| csv_text(h))
        .collect::<Vec<_>>()
        .join(",");
    out.push('\n');
    for p in &report.points {
        let mut cells = vec![cell(&p.value)];
        if report.and_field.is_some() {
            cells.push(p.and_value.as_ref().map(cell).unwrap_or_default());
        }
        let mut push = |s: Option<&Share>| match s {
            Some(s) => {
                cells.push(num(s.share));
                cells.push(num(s.ci95));
            }
            None => {
                cells.push(String::new());
                cells.push(String::new());
            }
        };
        match &p.result {
            Some(r) => {
                for (key, _, share) in r.budget.shares() {
                    if key == DELIVERED {
                        // The point's delivered share (the budget's, as traced) and its
                        // difference to the reference point.
                        push(Some(&r.delivered));
                        push(Some(&r.difference));
                    } else {
                        push(Some(&share));
                    }
                }
                for s in 0..segments {
                    push(r.segments_leaked.get(s));
                }
                push(r.receiver.as_ref());
            }
            None => {
                for _ in 0..(Budget::MECHANISMS.len() + 1 + segments + 1) {
                    push(None);
                }
            }
        }
        let problems: Vec<&str> = p.problems.iter().map(|q| q.message.as_str()).collect();
        cells.push(if problems.is_empty() {
            String::new()
        } else {
            csv_text(&problems.join("; "))
        });
        let mut push = |s: Option<&Share>| match s {
            Some(s) => {
                cells.push(num(s.share));
                cells.push(num(s.ci95));
            }
            None => {
                cells.push(String::new());
                cells.push(String::new());
            }
        };
        let r = p.result.as_ref();
        for s in 0..segments {
            push(r.and_then(|r| r.segments_leaked_difference.get(s)));
        }
        push(r.and_then(|r| r.receiver_difference.as_ref()));
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

/// The key of the delivered share in [`Budget::MECHANISMS`].
const DELIVERED: &str = "delivered";

/// A point's value for the CSV: a number as [`num`] writes it, a text quoted.
fn cell(v: &Value) -> String {
    match v {
        Value::Number(n) => n.as_f64().map(num).unwrap_or_default(),
        Value::String(t) => csv_text(t),
        _ => String::new(),
    }
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
