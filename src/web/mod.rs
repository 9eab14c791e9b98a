//! The wasm-bindgen layer: converts JS values to core types and back, and delegates. It never
//! computes physics and never panics on user input; errors become `JsError` with the core's
//! message.

use js_sys::{Array, Float64Array, Object, Reflect};
use plotters::prelude::*;
use plotters_canvas::CanvasBackend;
use serde::Serialize;
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;

use crate::fan::{bend_fan as core_bend_fan, FanFate};
use crate::index::library;
use crate::quick::QuickDesign;
use crate::{FieldError, TirError};

fn to_js<T: Serialize>(value: &T) -> Result<JsValue, JsError> {
    value
        .serialize(
            &serde_wasm_bindgen::Serializer::json_compatible().serialize_bytes_as_arrays(false),
        )
        .map_err(|e| JsError::new(&e.to_string()))
}

fn read_design(design: JsValue) -> Result<QuickDesign, FieldError> {
    let de = serde_wasm_bindgen::Deserializer::from(design.clone());
    let parsed: QuickDesign = serde_path_to_error::deserialize(de).map_err(|e| {
        let path = e.path().to_string();
        let field = if path.is_empty() || path == "." || path == "?" {
            "design".to_string()
        } else {
            path
        };
        let said = crate::reading::plain(
            &e.into_inner().to_string(),
            crate::reading::last_key(&field),
        );
        FieldError::new(field, said)
    })?;
    // serde-wasm-bindgen looks up only the fields it knows, so unknown ones would pass silently:
    // compare the keys given with those of the design as read.
    let known = parsed
        .serialize(&serde_wasm_bindgen::Serializer::json_compatible())
        .map_err(|e| FieldError::new("design", e.to_string()))?;
    if let Some(path) = unknown_key(&design, &known, "") {
        return Err(FieldError::new(
            path,
            "is not a field of the design (check the spelling)",
        ));
    }
    Ok(parsed)
}

/// The path of the first key of `given` (a JS object tree) that `known` lacks.
fn unknown_key(given: &JsValue, known: &JsValue, prefix: &str) -> Option<String> {
    if !given.is_object() || !known.is_object() || Array::is_array(given) {
        return None;
    }
    for key in Object::keys(given.unchecked_ref::<Object>()).iter() {
        let name = key.as_string().unwrap_or_default();
        let path = if prefix.is_empty() {
            name.clone()
        } else {
            format!("{prefix}.{name}")
        };
        let sub_known = Reflect::get(known, &key).unwrap_or(JsValue::UNDEFINED);
        if sub_known.is_undefined() {
            return Some(path);
        }
        let sub_given = Reflect::get(given, &key).unwrap_or(JsValue::UNDEFINED);
        if let Some(p) = unknown_key(&sub_given, &sub_known, &path) {
            return Some(p);
        }
    }
    None
}

fn js_error(e: TirError) -> JsError {
    JsError::new(&e.to_string())
}

/// The built-in materials: `[{ id, name, min_nm, max_nm, basis, source, note,
/// attenuation_db_per_m, attenuation_source }]`.
#[wasm_bindgen]
pub fn materials() -> Result<JsValue, JsError> {
    to_js(&library::materials())
}

/// The energy budget's shares in their fixed order, as `[[key, words], …]`
/// ([`crate::trace::Budget::MECHANISMS`]): the page's budget table reads its words here.
#[wasm_bindgen]
pub fn budget_mechanisms() -> Result<JsValue, JsError> {
    to_js(&crate::trace::Budget::MECHANISMS)
}

/// The scenario a new design starts from (`Scenario::new_design`), as the page keeps it.
#[wasm_bindgen]
pub fn new_scenario() -> Result<JsValue, JsError> {
    to_js(&crate::scenario::Scenario::new_design())
}

/// Every problem with a design as `[{ field, message }]`; empty when valid.
#[wasm_bindgen]
pub fn validate(design: JsValue) -> Result<JsValue, JsError> {
    let problems = match read_design(design) {
        Ok(d) => d.problems(),
        Err(e) => vec![e],
    };
    to_js(&problems)
}

/// The closed-form figures of a design; throws with the first problem when invalid.
#[wasm_bindgen]
pub fn figures(design: JsValue) -> Result<JsValue, JsError> {
    let d = read_design(design).map_err(|e| js_error(e.into()))?;
    to_js(&d.figures().map_err(js_error)?)
}

fn xy(points: &[glam::DVec2]) -> Float64Array {
    let flat: Vec<f64> = points.iter().flat_map(|p| [p.x, p.y]).collect();
    Float64Array::from(flat.as_slice())
}

fn set(obj: &Object, key: &str, value: &JsValue) -> Result<(), JsError> {
    Reflect::set(obj, &JsValue::from_str(key), value)
        .map(|_| ())
        .map_err(|_| JsError::new("could not build the result object"))
}

/// The meridional ray fan for drawing: `{ walls: [Float64Array], rays: [{ fate, xy }], bounds }`,
/// coordinates in mm as flat x, y pairs.
#[wasm_bindgen]
pub fn bend_fan(design: JsValue, ray_count: u32) -> Result<JsValue, JsError> {
    let d = read_design(design).map_err(|e| js_error(e.into()))?;
    let ix = d.check().map_err(|mut v| js_error(v.remove(0).into()))?;
    let fan = core_bend_fan(&d, ix, ray_count.clamp(2, 400) as usize);
    let walls = Array::new();
    for w in &fan.walls {
        walls.push(&xy(w));
    }
    let rays = Array::new();
    for r in &fan.rays {
        let o = Object::new();
        let fate = match r.fate {
            FanFate::Guided => "guided",
            FanFate::Escaped => "escaped",
        };
        set(&o, "fate", &JsValue::from_str(fate))?;
        set(&o, "xy", &xy(&r.points))?;
        rays.push(&o);
    }
    let bounds = Object::new();
    let (lo, hi) = fan.bounds;
    set(&bounds, "min_x", &lo.x.into())?;
    set(&bounds, "min_y", &lo.y.into())?;
    set(&bounds, "max_x", &hi.x.into())?;
    set(&bounds, "max_y", &hi.y.into())?;
    let out = Object::new();
    set(&out, "walls", &walls)?;
    set(&out, "rays", &rays)?;
    set(&out, "bounds", &bounds)?;
    Ok(out.into())
}

/// Draw the leak-free bend chart on the canvas with id `canvas_id`; `pixel_ratio` scales fonts
/// and lines (pass `devicePixelRatio` with a canvas sized in device pixels).
#[wasm_bindgen]
pub fn draw_bend_chart(canvas_id: &str, design: JsValue, pixel_ratio: f64) -> Result<(), JsError> {
    let d = read_design(design).map_err(|e| js_error(e.into()))?;
    let backend = CanvasBackend::new(canvas_id)
        .ok_or_else(|| JsError::new(&format!("no canvas with id '{canvas_id}' on the page")))?;
    let area = backend.into_drawing_area();
    crate::chart::draw_bend_chart(&area, &d, pixel_ratio).map_err(js_error)
}

/// A scenario prepared for tracing, kept alive between calls (one per worker).
#[wasm_bindgen]
pub struct Tracer {
    prepared: crate::trace::Prepared,
    merger: crate::trace::PrefixMerger,
}

#[wasm_bindgen]
impl Tracer {
    /// Prepare a scenario given as JSON text; throws with the field path and allowed range on
    /// bad input.
    #[wasm_bindgen(constructor)]
    pub fn new(scenario_json: &str) -> Result<Tracer, JsError> {
        let scenario = crate::scenario::Scenario::from_json(scenario_json).map_err(js_error)?;
        let prepared = crate::trace::Prepared::new(&scenario).map_err(js_error)?;
        Ok(Tracer {
            prepared,
            merger: crate::trace::PrefixMerger::new(),
        })
    }

    /// Number of batches of the scenario's ray count.
    pub fn batch_count(&self) -> f64 {
        self.prepared.batch_count() as f64
    }

    /// Trace batches `first .. first + count` (merged in order) and return the report.
    pub fn report(&self, first: f64, count: f64, keep_paths: u32) -> Result<JsValue, JsError> {
        let batch = self.merged(first, count, keep_paths as usize)?;
        to_js(&self.prepared.report(&batch))
    }

    /// Trace batches `first .. first + count` and return them one by one (an array of plain
    /// objects) to send from a worker; [`Tracer::report_merged`] turns them into the report.
    /// (They are not merged here: floating-point sums depend on grouping, and only merging every
    /// batch in order reproduces a single run bit for bit.)
    pub fn batches(&self, first: f64, count: f64, keep_paths: u32) -> Result<JsValue, JsError> {
        let (first, end) = self.range(first, count)?;
        let list: Vec<crate::trace::Batch> = (first..end)
            .map(|b| self.prepared.trace_batch(b, keep_paths as usize))
            .collect();
        to_js(&list)
    }

    /// The report of batch results from [`Tracer::batches`] (from any number of workers),
    /// flattened into one array in batch order: identical to tracing them all in one go.
    pub fn report_merged(&self, parts: JsValue) -> Result<JsValue, JsError> {
        let parts: Vec<crate::trace::Batch> = serde_wasm_bindgen::from_value(parts)
            .map_err(|e| JsError::new(&format!("parts could not be read: {e}")))?;
        let mut iter = parts.into_iter();
        let mut total = iter
            .next()
            .ok_or_else(|| JsError::new("parts must hold at least one batch result"))?;
        if !self.prepared.fits(&total) {
            return Err(JsError::new("parts come from a different scenario"));
        }
        for p in iter {
            if !self.prepared.fits(&p) {
                return Err(JsError::new("parts come from a different scenario"));
            }
            total.merge(&p);
        }
        to_js(&self.prepared.report(&total))
    }

    /// Keep batch `index` (a plain object from [`Tracer::batches`]) for the running merge.
    /// Reading it into the core happens here, once per batch.
    pub fn merger_add(&mut self, index: f64, batch: JsValue) -> Result<(), JsError> {
        let (index, batch): (u64, crate::trace::Batch) = read_batch(index, batch)?;
        if !self.prepared.fits(&batch) {
            return Err(JsError::new("the batch comes from a different scenario"));
        }
        self.merger.add(index, batch);
        Ok(())
    }

    /// The report of batches `0 .. count` folded in order, or `null` while one of them has not
    /// been added yet. Counts must not decrease between calls (until `merger_reset`).
    pub fn merger_report(&mut self, count: f64) -> Result<JsValue, JsError> {
        match fold_checked(&mut self.merger, count)? {
            Some(total) => to_js(&self.prepared.report(total)),
            None => Ok(JsValue::NULL),
        }
    }

    /// Forget the running merge (a new job with the same scenario).
    pub fn merger_reset(&mut self) {
        self.merger = crate::trace::PrefixMerger::new();
    }

    /// Trace batches `first .. first + count` and return only the number of wall interactions
    /// (for speed measurements).
    pub fn wall_interactions(&self, first: f64, count: f64) -> Result<f64, JsError> {
        Ok(self.merged(first, count, 0)?.wall_interactions as f64)
    }
}

impl Tracer {
    fn merged(
        &self,
        first: f64,
        count: f64,
        keep_paths: usize,
    ) -> Result<crate::trace::Batch, JsError> {
        let (first, end) = self.range(first, count)?;
        let mut merged = self.prepared.trace_batch(first, keep_paths);
        for b in first + 1..end {
            merged.merge(&self.prepared.trace_batch(b, keep_paths));
        }
        Ok(merged)
    }

    /// Check a batch range given from JS: whole numbers, inside the scenario's batches.
    fn range(&self, first: f64, count: f64) -> Result<(u64, u64), JsError> {
        batch_range(self.prepared.batch_count(), first, count)
    }
}

/// Every problem with a scenario given as JSON text: `{ ok, problems: [{ field, message }] }`.
/// A document that cannot be read gives one problem at the field where reading stopped; a
/// readable one lists every field problem. Never throws for bad input.
#[wasm_bindgen]
pub fn check_scenario(json: &str) -> JsValue {
    // Plain strings and booleans always convert; null only if the conversion itself broke.
    to_js(&crate::problems::check_scenario(json)).unwrap_or(JsValue::NULL)
}

/// The quick look's design for bend `segment` (0-based route index) of a scenario given as
/// JSON text ([`crate::quick::for_bend`]); throws the problems found when the scenario is not
/// valid or the segment is not a bend.
#[wasm_bindgen]
pub fn quick_design_for_bend(json: &str, segment: f64) -> Result<JsValue, JsError> {
    let scenario = crate::problems::valid_scenario(json)
        .map_err(|p| JsError::new(&crate::problems::joined(&p)))?;
    if !(segment >= 0.0 && segment.fract() == 0.0 && segment < scenario.route.len() as f64) {
        return Err(JsError::new(&format!(
            "segment must be a route index from 0 to {}, got {segment}",
            scenario.route.len().saturating_sub(1)
        )));
    }
    let design = crate::quick::for_bend(&scenario, segment as usize).map_err(|e| {
        JsError::new(
            &e.iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join("; "),
        )
    })?;
    to_js(&design)
}

/// An LED's intensity table pasted as text (a header row, tabs, semicolons or commas, angles
/// from −90° to 90°): `{ points, header_skipped, halves_averaged }`, or an error naming the row
/// ([`crate::scenario::table::read_pasted_table`]).
#[wasm_bindgen]
pub fn read_intensity_table(text: &str) -> Result<JsValue, JsError> {
    let table = crate::scenario::table::read_pasted_table(text).map_err(|m| JsError::new(&m))?;
    to_js(&table)
}

/// A scenario given as JSON text as the core reads it: every field the document leaves out is
/// there with the core's default (`name`, `trace`, `source.gap_medium`, a bend's `turn_deg`, …),
/// fields in the core's order. Values are not range-checked here (`check_scenario` does that), so
/// a document with problems still comes back to be shown and mended; a text that cannot be read
/// at all throws with the same message `check_scenario` gives for it.
#[wasm_bindgen]
pub fn scenario_as_read(json: &str) -> Result<JsValue, JsError> {
    let scenario = crate::problems::read_scenario(json).map_err(|p| JsError::new(&p.message))?;
    to_js(&scenario)
}

/// Read and validate a scenario; the error carries every problem's message.
fn valid_scenario(json: &str) -> Result<crate::scenario::Scenario, JsError> {
    crate::problems::valid_scenario(json)
        .map_err(|problems| JsError::new(&crate::problems::joined(&problems)))
}

/// An error carrying every problem's message, joined by `; `.
fn problems_error(errors: &[FieldError]) -> JsError {
    let problems: Vec<_> = errors.iter().map(crate::problems::Problem::from).collect();
    JsError::new(&crate::problems::joined(&problems))
}

/// The closed-form figures of a scenario given as JSON text (what `tirtrace check` prints);
/// throws with every problem's message (joined by `; `) when it is invalid.
#[wasm_bindgen]
pub fn closed_form(json: &str) -> Result<JsValue, JsError> {
    let scenario = valid_scenario(json)?;
    let figures = crate::check::figures(&scenario).map_err(|errors| problems_error(&errors))?;
    to_js(&figures)
}

/// What it takes to draw the routed guide of a scenario given as JSON text (see
/// `crate::outline::RouteOutline`); throws with every problem's message when it is invalid.
#[wasm_bindgen]
pub fn route_outline(json: &str) -> Result<JsValue, JsError> {
    let scenario = valid_scenario(json)?;
    let outline =
        crate::outline::route_outline(&scenario).map_err(|errors| problems_error(&errors))?;
    to_js(&outline)
}

/// Read a trace report object (as `Tracer.report` returns it) back into the core's type.
fn read_report(report: JsValue) -> Result<crate::trace::TraceReport, JsError> {
    let de = serde_wasm_bindgen::Deserializer::from(report);
    serde_path_to_error::deserialize(de).map_err(|e| {
        let path = e.path().to_string();
        let field = if path.is_empty() || path == "." || path == "?" {
            "report".to_string()
        } else {
            format!("report.{path}")
        };
        // serde-wasm-bindgen's errors are JS errors, shown as "Error: …".
        let inner = e.into_inner().to_string();
        let inner = inner.strip_prefix("Error: ").unwrap_or(&inner);
        JsError::new(&format!("{field} could not be read: {inner}"))
    })
}

/// The canvas with id `canvas_id` as a drawing area.
fn canvas_area(
    canvas_id: &str,
) -> Result<DrawingArea<CanvasBackend, plotters::coord::Shift>, JsError> {
    let backend = CanvasBackend::new(canvas_id)
        .ok_or_else(|| JsError::new(&format!("no canvas with id '{canvas_id}' on the page")))?;
    Ok(backend.into_drawing_area())
}

/// The unit a chart shows lengths in, from the page's name for it: `"mm"` or `"in"`; anything
/// else (or nothing) is refused with the core's message.
fn read_length_unit(length_unit: &JsValue) -> Result<crate::units::LengthUnit, JsError> {
    crate::units::LengthUnit::from_name(length_unit.as_string().as_deref())
        .map_err(|e| js_error(e.into()))
}

/// Draw the exit-face irradiance map of a trace report on the canvas with id `canvas_id`;
/// `pixel_ratio` scales fonts and lines (pass `devicePixelRatio` with a canvas sized in device
/// pixels); `length_unit` (`"mm"` or `"in"`) is the unit of its axes and of the area in its
/// caption. A report with no delivered light draws a message.
#[wasm_bindgen]
pub fn draw_exit_map(
    canvas_id: &str,
    report: JsValue,
    pixel_ratio: f64,
    length_unit: JsValue,
) -> Result<(), JsError> {
    let unit = read_length_unit(&length_unit)?;
    let report = read_report(report)?;
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_exit_map(&area, &report, pixel_ratio, unit).map_err(js_error)
}

/// Draw the detector's irradiance map of a trace report on the canvas with id `canvas_id`, as
/// [`draw_exit_map`] draws the exit face's; a report without a detector draws a message.
#[wasm_bindgen]
pub fn draw_receiver_map(
    canvas_id: &str,
    report: JsValue,
    pixel_ratio: f64,
    length_unit: JsValue,
) -> Result<(), JsError> {
    let unit = read_length_unit(&length_unit)?;
    let report = read_report(report)?;
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_receiver_map(&area, &report, pixel_ratio, unit).map_err(js_error)
}

/// Draw relative intensity against the angle from the exit axis, with its 95 % band, on the
/// canvas with id `canvas_id`; `pixel_ratio` as for [`draw_exit_map`].
#[wasm_bindgen]
pub fn draw_intensity(canvas_id: &str, report: JsValue, pixel_ratio: f64) -> Result<(), JsError> {
    let report = read_report(report)?;
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_intensity(&area, &report, pixel_ratio).map_err(js_error)
}

/// Draw the far-field intensity map (horizontal and vertical angle beyond the exit face) of a
/// trace report on the canvas with id `canvas_id`; `pixel_ratio` as for [`draw_exit_map`].
#[wasm_bindgen]
pub fn draw_far_field(canvas_id: &str, report: JsValue, pixel_ratio: f64) -> Result<(), JsError> {
    let report = read_report(report)?;
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_far_field(&area, &report, pixel_ratio).map_err(js_error)
}

/// A trace report as CSV, with its header block naming the design: the same text as
/// `tirtrace trace FILE --csv` prints for the same report and design (final newline included).
#[wasm_bindgen]
pub fn report_csv(report: JsValue, design_name: &str) -> Result<String, JsError> {
    Ok(crate::export::report_csv(
        &read_report(report)?,
        design_name,
    ))
}

/// A JS `Error` whose message joins every problem's message (`; `) and whose `problems`
/// property lists them as `[{ field, message }]`, for the page to show each by its field.
fn problems_thrown(problems: &[crate::problems::Problem]) -> JsValue {
    let error = js_sys::Error::new(&crate::problems::joined(problems));
    let list = to_js(&problems).unwrap_or(JsValue::NULL);
    // Setting a property on a fresh Error object cannot fail; were it to, the message remains.
    let _ = Reflect::set(&error, &JsValue::from_str("problems"), &list);
    error.into()
}

/// A study (a sweep) prepared for tracing, kept alive between calls (one per worker): the
/// counterpart of [`Tracer`] for `tirtrace study`.
#[wasm_bindgen]
pub struct StudyTracer {
    study: crate::study::Study,
    sweep: crate::study::Sweep,
    merger: crate::trace::PrefixMerger<crate::study::SweepBatch>,
}

#[wasm_bindgen]
impl StudyTracer {
    /// Read a study document given as JSON text (the file `tirtrace study` reads) and prepare
    /// every point; throws an `Error` with a `problems` list (`[{ field, message }]`, fields
    /// are paths in the study document) when the study cannot be traced.
    #[wasm_bindgen(constructor)]
    pub fn new(study_json: &str) -> Result<StudyTracer, JsValue> {
        let study = crate::study::Study::from_json(study_json).map_err(|p| problems_thrown(&p))?;
        let sweep = study.prepare_sweep().map_err(|p| problems_thrown(&p))?;
        Ok(StudyTracer {
            study,
            sweep,
            merger: crate::trace::PrefixMerger::new(),
        })
    }

    /// Number of batches of every point.
    pub fn batch_count(&self) -> f64 {
        self.sweep.batch_count() as f64
    }

    /// Trace batches `first .. first + count` of every point and return them one by one (an
    /// array of plain objects) to send from a worker. (Not merged here: floating-point sums
    /// depend on grouping, and only merging every batch in order reproduces `tirtrace study`
    /// bit for bit.)
    pub fn batches(&self, first: f64, count: f64) -> Result<JsValue, JsError> {
        let (first, end) = batch_range(self.sweep.batch_count(), first, count)?;
        let list: Vec<crate::study::SweepBatch> =
            (first..end).map(|b| self.sweep.trace_batch(b)).collect();
        to_js(&list)
    }

    /// Trace batches `first .. first + count`, merged in order, and return the sweep report
    /// (what `tirtrace study` prints when they are all the batches).
    pub fn report(&self, first: f64, count: f64) -> Result<JsValue, JsError> {
        let (first, end) = batch_range(self.sweep.batch_count(), first, count)?;
        let mut merged = self.sweep.trace_batch(first);
        for b in first + 1..end {
            merged.merge(&self.sweep.trace_batch(b));
        }
        to_js(&self.sweep.report(&merged))
    }

    /// Keep batch `index` (a plain object from [`StudyTracer::batches`]) for the running merge.
    pub fn merger_add(&mut self, index: f64, batch: JsValue) -> Result<(), JsError> {
        let (index, batch): (u64, crate::study::SweepBatch) = read_batch(index, batch)?;
        if !self.sweep.fits(&batch) {
            return Err(JsError::new("the batch comes from a different study"));
        }
        self.merger.add(index, batch);
        Ok(())
    }

    /// The sweep report of batches `0 .. count` folded in order, or `null` while one of them
    /// has not been added yet. Counts must not decrease between calls (until `merger_reset`).
    pub fn merger_report(&mut self, count: f64) -> Result<JsValue, JsError> {
        match fold_checked(&mut self.merger, count)? {
            Some(total) => to_js(&self.sweep.report(total)),
            None => Ok(JsValue::NULL),
        }
    }

    /// Forget the running merge (a new job with the same study).
    pub fn merger_reset(&mut self) {
        self.merger = crate::trace::PrefixMerger::new();
    }

    /// The bend whose radius the sweep varies: `{ segment, leak_free_radius_mm }` (the
    /// closed-form leak-free centre-line radius, `null` when none exists), or `null` when the
    /// varied field is not a bend's radius.
    pub fn varied_bend(&self) -> Result<JsValue, JsError> {
        match self.study.varied_bend() {
            Some(b) => to_js(&b),
            None => Ok(JsValue::NULL),
        }
    }
}

/// Check a batch range given from JS: whole numbers, inside `total` batches.
/// Batch `index` (a plain object sent by a worker) read for a running merge: the index must be
/// a whole number ≥ 0 and the object must read as a batch.
fn read_batch<B: serde::de::DeserializeOwned>(
    index: f64,
    batch: JsValue,
) -> Result<(u64, B), JsError> {
    if !(index.is_finite() && index >= 0.0 && index.fract() == 0.0) {
        return Err(JsError::new(&format!(
            "index must be a whole batch index ≥ 0, got {index}"
        )));
    }
    let batch = serde_wasm_bindgen::from_value(batch)
        .map_err(|e| JsError::new(&format!("the batch could not be read: {e}")))?;
    Ok((index as u64, batch))
}

/// A running merge folded to batches `0 .. count` (`None` while one of them has not been added
/// yet); `count` must be a whole number ≥ 1 and not below what is already merged.
fn fold_checked<B: crate::trace::MergeInOrder>(
    merger: &mut crate::trace::PrefixMerger<B>,
    count: f64,
) -> Result<Option<&B>, JsError> {
    if !(count.is_finite() && count >= 1.0 && count.fract() == 0.0) {
        return Err(JsError::new(&format!(
            "count must be a whole number of batches ≥ 1, got {count}"
        )));
    }
    if (count as u64) < merger.folded() {
        return Err(JsError::new(&format!(
            "count must not go below the {} batches already merged, got {count}",
            merger.folded()
        )));
    }
    Ok(merger.fold_to(count as u64))
}

fn batch_range(total: u64, first: f64, count: f64) -> Result<(u64, u64), JsError> {
    let whole = |x: f64| x.is_finite() && x >= 0.0 && x.fract() == 0.0;
    if !whole(first) || first >= total as f64 {
        return Err(JsError::new(&format!(
            "first must be a whole batch index ≥ 0 and < {total}, got {first}"
        )));
    }
    let left = total - first as u64;
    if !whole(count) || count < 1.0 || count > left as f64 {
        return Err(JsError::new(&format!(
            "count must be a whole number of batches ≥ 1 and ≤ {left}, got {count}"
        )));
    }
    Ok((first as u64, first as u64 + count as u64))
}

/// Read a sweep report object (as `StudyTracer.report` returns it) back into the core's type.
fn read_sweep_report(report: JsValue) -> Result<crate::study::SweepReport, JsError> {
    let de = serde_wasm_bindgen::Deserializer::from(report);
    serde_path_to_error::deserialize(de).map_err(|e| {
        let path = e.path().to_string();
        let field = if path.is_empty() || path == "." || path == "?" {
            "report".to_string()
        } else {
            format!("report.{path}")
        };
        let inner = e.into_inner().to_string();
        let inner = inner.strip_prefix("Error: ").unwrap_or(&inner);
        JsError::new(&format!("{field} could not be read: {inner}"))
    })
}

/// A sweep report as CSV: the same text as `tirtrace study FILE --csv` prints for it.
#[wasm_bindgen]
pub fn sweep_report_csv(report: JsValue) -> Result<String, JsError> {
    Ok(crate::study::sweep::report_csv(&read_sweep_report(report)?))
}

/// Draw a sweep report's chart on the canvas with id `canvas_id`: delivered and the difference
/// to the first point with their 95 % bands; with `varied_bend` (from
/// `StudyTracer.varied_bend()`, or `null`) that bend's leak and its leak-free radius.
/// `pixel_ratio` and `length_unit` (of a varied length) as for [`draw_exit_map`].
#[wasm_bindgen]
pub fn draw_sweep_chart(
    canvas_id: &str,
    report: JsValue,
    varied_bend: JsValue,
    pixel_ratio: f64,
    length_unit: JsValue,
) -> Result<(), JsError> {
    let unit = read_length_unit(&length_unit)?;
    let report = read_sweep_report(report)?;
    let bend: Option<crate::study::VariedBend> =
        if varied_bend.is_null() || varied_bend.is_undefined() {
            None
        } else {
            Some(
                serde_wasm_bindgen::from_value(varied_bend)
                    .map_err(|e| JsError::new(&format!("varied_bend could not be read: {e}")))?,
            )
        };
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_sweep_chart(&area, &report, bend.as_ref(), pixel_ratio, unit)
        .map_err(js_error)
}

/// A tolerance study prepared for tracing, kept alive between calls (one per worker): the
/// counterpart of [`StudyTracer`] for a study with `tolerances`.
#[wasm_bindgen]
pub struct ToleranceTracer {
    tolerance: crate::study::Tolerance,
    merger: crate::trace::PrefixMerger<crate::study::ToleranceBatch>,
}

#[wasm_bindgen]
impl ToleranceTracer {
    /// Read a tolerance study given as JSON text (the file `tirtrace study` reads) and prepare
    /// the nominal, the one-at-a-time points and every variant; throws an `Error` with a
    /// `problems` list (`[{ field, message }]`, paths in the study document) when it cannot be
    /// traced.
    #[wasm_bindgen(constructor)]
    pub fn new(study_json: &str) -> Result<ToleranceTracer, JsValue> {
        let study = crate::study::Study::from_json(study_json).map_err(|p| problems_thrown(&p))?;
        let tolerance = study.prepare_tolerance().map_err(|p| problems_thrown(&p))?;
        Ok(ToleranceTracer {
            tolerance,
            merger: crate::trace::PrefixMerger::new(),
        })
    }

    /// Number of batches of every traced scenario.
    pub fn batch_count(&self) -> f64 {
        self.tolerance.batch_count() as f64
    }

    /// Trace batches `first .. first + count` of the nominal, the one-at-a-time points and
    /// every variant, and return them one by one (plain objects a worker can post back).
    pub fn batches(&self, first: f64, count: f64) -> Result<JsValue, JsError> {
        let (first, end) = batch_range(self.tolerance.batch_count(), first, count)?;
        let list: Vec<crate::study::ToleranceBatch> = (first..end)
            .map(|b| self.tolerance.trace_batch(b))
            .collect();
        to_js(&list)
    }

    /// Trace batches `first .. first + count`, merged in order, and return the tolerance
    /// report (what `tirtrace study` prints when they are all the batches).
    pub fn report(&self, first: f64, count: f64) -> Result<JsValue, JsError> {
        let (first, end) = batch_range(self.tolerance.batch_count(), first, count)?;
        let mut merged = self.tolerance.trace_batch(first);
        for b in first + 1..end {
            merged.merge(&self.tolerance.trace_batch(b));
        }
        to_js(&self.tolerance.report(&merged))
    }

    /// Keep batch `index` (a plain object from [`ToleranceTracer::batches`]) for the running
    /// merge; refuses a batch of another study.
    pub fn merger_add(&mut self, index: f64, batch: JsValue) -> Result<(), JsError> {
        let (index, batch): (u64, crate::study::ToleranceBatch) = read_batch(index, batch)?;
        if !self.tolerance.fits(&batch) {
            return Err(JsError::new("the batch comes from a different study"));
        }
        self.merger.add(index, batch);
        Ok(())
    }

    /// The tolerance report of batches `0 .. count` folded in order, or `null` while one of
    /// them has not been added yet. Counts must not decrease between calls (until
    /// `merger_reset`).
    pub fn merger_report(&mut self, count: f64) -> Result<JsValue, JsError> {
        match fold_checked(&mut self.merger, count)? {
            Some(total) => to_js(&self.tolerance.report(total)),
            None => Ok(JsValue::NULL),
        }
    }

    /// Forget the running merge (a new job with the same study).
    pub fn merger_reset(&mut self) {
        self.merger = crate::trace::PrefixMerger::new();
    }
}

/// Read a tolerance report object (as `ToleranceTracer.report` returns it) back into the
/// core's type.
fn read_tolerance_report(report: JsValue) -> Result<crate::study::ToleranceReport, JsError> {
    let de = serde_wasm_bindgen::Deserializer::from(report);
    serde_path_to_error::deserialize(de).map_err(|e| {
        let path = e.path().to_string();
        let field = if path.is_empty() || path == "." || path == "?" {
            "report".to_string()
        } else {
            format!("report.{path}")
        };
        let inner = e.into_inner().to_string();
        let inner = inner.strip_prefix("Error: ").unwrap_or(&inner);
        JsError::new(&format!("{field} could not be read: {inner}"))
    })
}

/// A tolerance report as CSV, one row per variant: the same text as `tirtrace study FILE
/// --csv` prints for it.
#[wasm_bindgen]
pub fn tolerance_report_csv(report: JsValue) -> Result<String, JsError> {
    Ok(crate::study::tolerance::report_csv(&read_tolerance_report(
        report,
    )?))
}

/// Draw a tolerance report's chart on the canvas with id `canvas_id`: the histogram of
/// delivered over the variants with the nominal and the 5/50/95 % percentiles, and the
/// one-at-a-time effects as bars with their 95 % intervals. `pixel_ratio` as for
/// [`draw_exit_map`].
#[wasm_bindgen]
pub fn draw_tolerance_chart(
    canvas_id: &str,
    report: JsValue,
    pixel_ratio: f64,
) -> Result<(), JsError> {
    let report = read_tolerance_report(report)?;
    let area = canvas_area(canvas_id)?;
    crate::chart::draw_tolerance_chart(&area, &report, pixel_ratio).map_err(js_error)
}

/// A search (`find`) run step by step on the page: the page asks for the next value, has its
/// batches traced by the worker pool ([`StudyFinder::trace_batches`] in each worker) and records
/// them in batch order; the report is then bit for bit that of `tirtrace study`.
#[wasm_bindgen]
pub struct StudyFinder {
    steps: crate::study::FindSteps,
}

#[wasm_bindgen]
impl StudyFinder {
    /// Read a study document with a `find` plan given as JSON text (the file `tirtrace study`
    /// reads); throws an `Error` with a `problems` list (`[{ field, message }]`, paths in the
    /// study document) when the search cannot run.
    #[wasm_bindgen(constructor)]
    pub fn new(study_json: &str) -> Result<StudyFinder, JsValue> {
        let study = crate::study::Study::from_json(study_json).map_err(|p| problems_thrown(&p))?;
        let find = study.prepare_find().map_err(|p| problems_thrown(&p))?;
        Ok(StudyFinder {
            steps: crate::study::FindSteps::new(find),
        })
    }

    /// Batches per evaluated value.
    pub fn batch_count(&self) -> f64 {
        self.steps.batch_count() as f64
    }

    /// The next value to trace, or `null` when the search is done.
    pub fn next_value(&mut self) -> Option<f64> {
        self.steps.next_value()
    }

    /// Trace batches `first .. first + count` at value `x`: an array of plain objects, one per
    /// batch, to send from a worker. Throws with the scenario's problems at `x`.
    pub fn trace_batches(&self, x: f64, first: f64, count: f64) -> Result<JsValue, JsValue> {
        let (first, end) =
            batch_range(self.steps.batch_count(), first, count).map_err(JsValue::from)?;
        let list = self
            .steps
            .trace_batches(x, first, end - first)
            .map_err(|p| problems_thrown(&p))?;
        to_js(&list).map_err(JsValue::from)
    }

    /// Record value `x` (the one `next_value` gave) from all its batches, an array in batch
    /// order of the objects `trace_batches` returned.
    pub fn record(&mut self, x: f64, results: JsValue) -> Result<(), JsError> {
        let list: Vec<crate::study::FindBatch> = serde_wasm_bindgen::from_value(results)
            .map_err(|e| JsError::new(&format!("the batches could not be read: {e}")))?;
        self.steps.record(x, &list).map_err(|m| JsError::new(&m))
    }

    /// Record value `x` (the one `next_value` gave) from all its batches merged in batch order:
    /// the `report` of a `find: true` pool job (`FindValueTracer.merger_report`).
    pub fn record_merged(&mut self, x: f64, merged: JsValue) -> Result<(), JsError> {
        let merged: crate::study::FindBatch = serde_wasm_bindgen::from_value(merged)
            .map_err(|e| JsError::new(&format!("the merged batches could not be read: {e}")))?;
        self.steps
            .record_merged(x, &merged)
            .map_err(|m| JsError::new(&m))
    }

    /// Values evaluated so far, in the order the search asked for them (for progress).
    pub fn evaluations(&self) -> Result<JsValue, JsError> {
        to_js(&self.steps.evaluations())
    }

    /// The search report (what `tirtrace study` prints), or `null` until the search is done.
    pub fn report(&self) -> Result<JsValue, JsError> {
        match self.steps.report() {
            Some(r) => to_js(&r),
            None => Ok(JsValue::NULL),
        }
    }

    /// Draw the finished search's chart (each value's leak or delivered with its 95 % band, the
    /// allowed line, the answer and its interval, the closed-form leak-free radius) on the
    /// canvas with id `canvas_id`; `pixel_ratio` and `length_unit` (of a searched length) as
    /// for [`draw_exit_map`]. Nothing before the search is done.
    pub fn draw_chart(
        &self,
        canvas_id: &str,
        pixel_ratio: f64,
        length_unit: JsValue,
    ) -> Result<(), JsError> {
        let unit = read_length_unit(&length_unit)?;
        let Some(report) = self.steps.report() else {
            return Ok(());
        };
        let area = canvas_area(canvas_id)?;
        crate::chart::draw_find_chart(&area, &report, pixel_ratio, unit).map_err(js_error)
    }

    /// The report's evaluations as the CSV `tirtrace study --csv` prints, or `null` until the
    /// search is done.
    pub fn csv(&self) -> Option<String> {
        self.steps
            .report()
            .map(|r| crate::study::find::report_csv(&r))
    }
}

/// One value of a search (`find`) prepared for tracing, kept alive between calls (one per
/// worker): a job of the page's worker pool (`find: true`), the counterpart of
/// [`StudyTracer`] for one value of [`StudyFinder`]'s search.
#[wasm_bindgen]
pub struct FindValueTracer {
    value: crate::study::FindValue,
    merger: crate::trace::PrefixMerger<crate::study::FindBatch>,
}

#[wasm_bindgen]
impl FindValueTracer {
    /// Read a study document with a `find` plan given as JSON text and prepare the searched
    /// field set to `x`; throws an `Error` with a `problems` list (`[{ field, message }]`, paths
    /// in the study document) when the search cannot run or the scenario has problems at `x`.
    #[wasm_bindgen(constructor)]
    pub fn new(study_json: &str, x: f64) -> Result<FindValueTracer, JsValue> {
        let study = crate::study::Study::from_json(study_json).map_err(|p| problems_thrown(&p))?;
        let find = study.prepare_find().map_err(|p| problems_thrown(&p))?;
        let value = find.at_value(x).map_err(|p| problems_thrown(&p))?;
        Ok(FindValueTracer {
            value,
            merger: crate::trace::PrefixMerger::new(),
        })
    }

    /// Batches of the value.
    pub fn batch_count(&self) -> f64 {
        self.value.batch_count() as f64
    }

    /// Trace batches `first .. first + count` at the value and return them one by one (plain
    /// objects `{ value, study, sums }` a worker can post back).
    pub fn batches(&self, first: f64, count: f64) -> Result<JsValue, JsError> {
        let (first, end) = batch_range(self.value.batch_count(), first, count)?;
        let list: Vec<crate::study::FindValueBatch> =
            (first..end).map(|b| self.value.trace_batch(b)).collect();
        to_js(&list)
    }

    /// Keep batch `index` (a plain object from [`FindValueTracer::batches`]) for the running
    /// merge; refuses a batch of another study or value.
    pub fn merger_add(&mut self, index: f64, batch: JsValue) -> Result<(), JsError> {
        let (index, batch): (u64, crate::study::FindValueBatch) = read_batch(index, batch)?;
        if !self.value.fits(&batch) {
            return Err(JsError::new(&format!(
                "the batch comes from a different study or value (traced at {}, this is {})",
                batch.value,
                self.value.value()
            )));
        }
        self.merger.add(index, batch.sums);
        Ok(())
    }

    /// The batches `0 .. count` folded in order (a plain object for
    /// `StudyFinder.record_merged`), or `null` while one of them has not been added yet. Counts
    /// must not decrease between calls (until `merger_reset`).
    pub fn merger_report(&mut self, count: f64) -> Result<JsValue, JsError> {
        match fold_checked(&mut self.merger, count)? {
            Some(total) => to_js(total),
            None => Ok(JsValue::NULL),
        }
    }

    /// Forget the running merge (a new job with the same value).
    pub fn merger_reset(&mut self) {
        self.merger = crate::trace::PrefixMerger::new();
    }
}
