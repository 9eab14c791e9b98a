//! The search run step by step (as the page runs it: the next value, its batches traced in
//! pieces anywhere, recorded in batch order) gives the report of the one-call search bit for bit,
//! for a leak criterion, a delivered criterion and a range with problems; recording out of turn
//! is refused. Fixed seeds throughout.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::study::{FindBatch, FindReport, FindSteps, Study};
use tirtrace::trace::PrefixMerger;

fn doc(find: Value, rays: u64) -> String {
    let mut d: Value = serde_json::from_str(
        &std::fs::read_to_string("examples/studies/thermostat_smallest_bend.json").unwrap(),
    )
    .unwrap();
    d["scenario"]["trace"]["rays"] = json!(rays);
    d["find"] = find;
    d.to_string()
}

/// Run the search step by step, tracing each value's batches `piece` at a time.
fn stepwise(study: &Study, piece: u64) -> (FindReport, usize) {
    let mut steps = FindSteps::new(study.prepare_find().unwrap());
    let count = steps.batch_count();
    let mut asked = 0;
    while let Some(x) = steps.next_value() {
        asked += 1;
        let mut batches = Vec::new();
        let mut first = 0;
        while first < count {
            batches.extend(steps.trace_batches(x, first, piece).unwrap());
            first += piece;
        }
        steps.record(x, &batches).unwrap();
    }
    (steps.report().unwrap(), asked)
}

fn same_as_one_call(find: Value, rays: u64) -> FindReport {
    let study = Study::from_json(&doc(find, rays)).unwrap();
    let whole = study.prepare_find().unwrap().run_serial();
    for piece in [1, 2] {
        let (report, asked) = stepwise(&study, piece);
        assert_eq!(report, whole, "piece {piece}");
        let traced = whole
            .evaluations
            .iter()
            .filter(|e| e.problems.is_empty())
            .count();
        assert_eq!(asked, traced, "every traced value asked for once");
    }
    whole
}

#[test]
fn leak_search_step_by_step_is_the_one_call_search() {
    let r = same_as_one_call(
        json!({ "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
                "bend_leak_at_most_percent": 1 }),
        8192 + 100,
    );
    assert!(r.answer.is_some(), "{}", r.summary);
    assert!(r.evaluations.len() > 9);
}

#[test]
fn delivered_search_step_by_step_is_the_one_call_search() {
    same_as_one_call(
        json!({ "largest": "source.offset_mm[0]", "from": 0, "to": 1.2,
                "delivered_loss_at_most_percent": 5 }),
        4096,
    );
}

#[test]
fn range_with_problems_step_by_step_is_the_one_call_search() {
    // Radii below 1.5 mm (half the 3 mm diameter) are refused by the scenario's check.
    let r = same_as_one_call(
        json!({ "smallest": "route[1].bend.radius_mm", "from": 0.5, "to": 30,
                "bend_leak_at_most_percent": 1 }),
        1000,
    );
    assert!(r.evaluations.iter().any(|e| !e.problems.is_empty()));
}

/// Run the search as the page's worker pool does: each value a job of its own ([`Find::at_value`]),
/// its batches traced in `order` and folded by a [`PrefixMerger`], recorded merged.
fn merged_per_value(study: &Study, order: fn(u64) -> Vec<u64>) -> FindReport {
    let find = study.prepare_find().unwrap();
    let mut steps = FindSteps::new(find.clone());
    while let Some(x) = steps.next_value() {
        let value = find.at_value(x).unwrap();
        assert_eq!(value.value(), x);
        let count = value.batch_count();
        let mut merger: PrefixMerger<FindBatch> = PrefixMerger::new();
        for b in order(count) {
            let batch = value.trace_batch(b);
            assert!(value.fits(&batch));
            merger.add(b, batch.sums);
        }
        let merged = *merger.fold_to(count).expect("every batch is in");
        steps.record_merged(x, &merged).unwrap();
    }
    steps.report().unwrap()
}

#[test]
fn a_search_recorded_merged_is_the_search_recorded_batch_by_batch() {
    let cases = [
        (
            json!({ "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
                    "bend_leak_at_most_percent": 1 }),
            3 * 4096 + 100,
        ),
        (
            json!({ "largest": "source.offset_mm[0]", "from": 0, "to": 1.2,
                    "delivered_loss_at_most_percent": 5 }),
            2 * 4096 + 7,
        ),
        (
            json!({ "smallest": "route[1].bend.radius_mm", "from": 0.5, "to": 30,
                    "bend_leak_at_most_percent": 1 }),
            1000,
        ),
    ];
    for (find, rays) in cases {
        let study = Study::from_json(&doc(find, rays)).unwrap();
        let (batch_by_batch, _) = stepwise(&study, 1);
        let in_order = merged_per_value(&study, |n| (0..n).collect());
        assert_eq!(in_order, batch_by_batch, "{}", batch_by_batch.summary);
        // Batches arriving last first (as from several workers) fold to the same sums.
        let reversed = merged_per_value(&study, |n| (0..n).rev().collect());
        assert_eq!(reversed, batch_by_batch, "{}", batch_by_batch.summary);
        // Bit for bit: the serialised reports are the same text.
        assert_eq!(
            serde_json::to_string(&reversed).unwrap(),
            serde_json::to_string(&batch_by_batch).unwrap()
        );
    }
}

#[test]
fn a_batch_of_another_value_or_study_does_not_fit_and_a_part_merge_is_refused() {
    let leak = |rays: u64| {
        Study::from_json(&doc(
            json!({ "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
                    "bend_leak_at_most_percent": 1 }),
            rays,
        ))
        .unwrap()
        .prepare_find()
        .unwrap()
    };
    let find = leak(2 * 4096);
    let at_5 = find.at_value(5.0).unwrap();
    let at_6 = find.at_value(6.0).unwrap();
    assert!(!at_5.fits(&at_6.trace_batch(0)), "another value");
    let other = leak(2 * 4096 + 1).at_value(5.0).unwrap();
    assert!(!at_5.fits(&other.trace_batch(0)), "another study");
    assert!(
        leak(2 * 4096)
            .at_value(5.0)
            .unwrap()
            .fits(&at_5.trace_batch(1)),
        "the same study"
    );
    // The scenario's problems at a value: a radius below half the diameter.
    let problems = find.at_value(1.0).unwrap_err();
    assert!(
        problems
            .iter()
            .any(|p| p.field.starts_with("scenario.route[1]")),
        "{problems:?}"
    );

    let mut steps = FindSteps::new(find.clone());
    let x = steps.next_value().unwrap();
    let first = find.at_value(x).unwrap().trace_batch(0).sums;
    let message = steps.record_merged(x, &first).unwrap_err();
    assert!(message.contains("all 8192 rays"), "{message}");
    let message = steps.record_merged(x + 1.0, &first).unwrap_err();
    assert!(message.contains("asked for"), "{message}");
}

#[test]
fn recording_out_of_turn_is_refused() {
    let study = Study::from_json(&doc(
        json!({ "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
                "bend_leak_at_most_percent": 1 }),
        1000,
    ))
    .unwrap();
    let mut steps = FindSteps::new(study.prepare_find().unwrap());
    let message = steps.record(3.0, &[]).unwrap_err();
    assert!(message.contains("next_value"), "{message}");
    let x = steps.next_value().unwrap();
    let batches = steps.trace_batches(x, 0, 1).unwrap();
    let message = steps.record(x + 1.0, &batches).unwrap_err();
    assert!(message.contains("asked for"), "{message}");
    let count = steps.batch_count();
    let message = steps.record(x, &[]).unwrap_err();
    assert!(
        message.contains(&format!("all {count} batches")),
        "{message}"
    );
    steps.record(x, &batches).unwrap();
}

#[test]
fn the_search_chart_shows_the_answer_the_allowed_line_and_the_closed_form_radius() {
    use plotters::prelude::*;
    let study = Study::from_json(&doc(
        json!({ "smallest": "route[1].bend.radius_mm", "from": 3, "to": 30,
                "bend_leak_at_most_percent": 1 }),
        8192,
    ))
    .unwrap();
    let report = study.prepare_find().unwrap().run_serial();
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (800, 500)).into_drawing_area();
        tirtrace::chart::draw_find_chart(&area, &report, 1.0, tirtrace::units::LengthUnit::Mm)
            .unwrap();
    }
    assert!(svg.contains("allowed: 1.00 %"), "the allowed-loss line");
    // The leak at 3 mm is tens of per cent, far above the zoomed axis: named, not drawn flat
    // along the top as if it were the axis's end value.
    let above = report
        .evaluations
        .iter()
        .filter(|e| e.bend_leak_fraction.is_some_and(|f| f > 0.05))
        .count();
    assert!(above > 0, "some values leak more than 5 %");
    assert!(
        svg.contains("above") && svg.contains("see the table"),
        "values above the axis named"
    );
    assert!(!svg.contains("NaN"));
    assert!(
        svg.contains("leak of the light entering the bend"),
        "the axis"
    );
    if let Some(a) = report.answer {
        assert!(svg.contains(&format!("answer {a:.2}")), "the answer");
    }
    let free = report.bend.as_ref().unwrap().leak_free_centre_radius_mm;
    if let Some(r) = free.filter(|r| *r <= 57.0) {
        assert!(
            svg.contains(&format!("closed form): {r:.2} mm")),
            "the leak-free radius"
        );
    }
}
