//! Sweeps of one scenario number with common random numbers: the paired difference's interval,
//! a bend's leak against its radius, per-point problems, reproducibility and document problems.
//! Native only: the parallel sweep uses threads.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::problems::Problem;
use tirtrace::study::{Study, SweepReport};
use tirtrace::trace::Prepared;

fn example(name: &str) -> Value {
    let text = match name {
        "bike" => include_str!("../examples/scenarios/bike_light_charge_indicator.json"),
        _ => include_str!("../examples/scenarios/thermostat_status_led.json"),
    };
    serde_json::from_str(text).unwrap()
}

fn study(scenario: Value, field: &str, values: &[f64], rays: u64, seed: u64) -> Study {
    let doc =
        json!({ "version": 1, "scenario": scenario, "vary": { "field": field, "values": values } });
    let mut study = Study::from_json(&doc.to_string()).unwrap();
    study.scenario.trace.rays = rays;
    study.scenario.trace.seed = seed;
    study
}

fn sweep(study: &Study) -> SweepReport {
    let s = study.prepare_sweep().unwrap();
    s.report(&s.trace_all_serial())
}

fn problems(doc: Value) -> Vec<Problem> {
    Study::from_json(&doc.to_string()).unwrap_err()
}

#[test]
fn common_random_numbers_narrow_the_interval_of_a_difference() {
    // The bike light's bend (route[2]) at its radius and 2 % wider. With common random numbers
    // ray k draws the same numbers at both radii: the rays whose fate the change does not touch
    // (every ray missing or reflected at the entry, most guided ones) give d_k = 0 exactly, so
    // Var(d) = Var(x) + Var(x₀) − 2 Cov(x, x₀) is far below the independent runs' Var(x) +
    // Var(x₀), whose half-width is √(a² + b²). The gain shrinks as the change grows (rays past
    // the changed bend follow other paths and their later fates decorrelate), so the radii are
    // close, as in a design study's neighbouring points.
    let scenario = example("bike");
    let field = "route[2].bend.radius_mm";
    let r = scenario["route"][2]["bend"]["radius_mm"].as_f64().unwrap();
    let rays = 40_960;
    let paired = sweep(&study(scenario.clone(), field, &[r, 1.02 * r], rays, 7));
    let crn = paired.points[1].result.as_ref().unwrap().difference;
    // Independent runs: each radius with its own seed, the difference's half-width √(a² + b²).
    let a = sweep(&study(scenario.clone(), field, &[r, r], rays, 7)).points[0]
        .result
        .as_ref()
        .unwrap()
        .delivered;
    let b = sweep(&study(scenario, field, &[1.02 * r, r], rays, 8)).points[0]
        .result
        .as_ref()
        .unwrap()
        .delivered;
    let independent = (a.ci95 * a.ci95 + b.ci95 * b.ci95).sqrt();
    let ratio = crn.ci95 / independent;
    println!(
        "difference {:.5} ± {:.5} (common random numbers) vs {:.5} ± {:.5} (independent): \
         ratio of half-widths {ratio:.3}",
        crn.share,
        crn.ci95,
        b.share - a.share,
        independent
    );
    assert!(crn.ci95 > 0.0 && ratio < 0.5, "ratio {ratio}");
    // Both estimate the same difference: they agree within the independent interval.
    assert!((crn.share - (b.share - a.share)).abs() < independent + crn.ci95);
}

#[test]
fn the_per_ray_weights_are_the_batch_s_delivered_share() {
    let mut s: tirtrace::scenario::Scenario =
        serde_json::from_value(example("thermostat")).unwrap();
    s.trace.rays = 5000;
    let p = Prepared::new(&s).unwrap();
    let mut x = Vec::new();
    let batch = p.trace_batch_per_ray(1, &mut x);
    assert_eq!(x.len() as u64, batch.rays);
    let mean = x.iter().sum::<f64>() / x.len() as f64;
    let delivered = p.report(&batch).delivered.share;
    assert!((mean - delivered).abs() < 1e-12, "{mean} vs {delivered}");
    // The same batch traced plainly: the same tallies.
    assert_eq!(p.trace_batch(1, 0).tallies, batch.tallies);
}

#[test]
fn a_bend_leaks_less_as_its_radius_grows() {
    // A wider bend turns each ray's path more gently: the angle of incidence at the outer wall
    // grows towards the straight guide's, so fewer rays fall below the critical angle and the
    // bend's leak never rises with the radius (the leak-free radius of `tirtrace check` is where
    // it reaches zero for meridional rays). Allowed: a rise within the two points' intervals.
    let radii = [4.0, 5.0, 6.0, 7.5, 9.0, 12.0, 16.0];
    let report = sweep(&study(
        example("thermostat"),
        "route[1].bend.radius_mm",
        &radii,
        20_480,
        3,
    ));
    let leak: Vec<_> = report
        .points
        .iter()
        .map(|p| p.result.as_ref().unwrap().segments_leaked[1])
        .collect();
    for (i, w) in leak.windows(2).enumerate() {
        assert!(
            w[1].share <= w[0].share + w[0].ci95 + w[1].ci95,
            "leak rises from {} mm to {} mm: {:?} -> {:?}",
            radii[i],
            radii[i + 1],
            w[0],
            w[1]
        );
    }
    // And it falls clearly over the whole sweep.
    let (first, last) = (leak[0], leak[leak.len() - 1]);
    assert!(
        first.share - last.share > first.ci95 + last.ci95,
        "{leak:?}"
    );
}

#[test]
fn a_point_with_problems_is_named_and_the_others_are_traced() {
    let report = sweep(&study(
        example("thermostat"),
        "route[1].bend.radius_mm",
        &[9.0, 1.0, 12.0],
        4096,
        1,
    ));
    let bad = &report.points[1];
    assert!(bad.result.is_none());
    assert_eq!(bad.problems.len(), 1, "{:?}", bad.problems);
    assert_eq!(bad.problems[0].field, "scenario.route[1].bend.radius_mm");
    assert!(
        bad.problems[0].message.contains("must be > 1.5 mm")
            && bad.problems[0].message.contains("got 1"),
        "{}",
        bad.problems[0].message
    );
    for i in [0, 2] {
        assert!(report.points[i].problems.is_empty());
        assert!(report.points[i].result.as_ref().unwrap().delivered.share > 0.0);
    }
    assert_eq!(report.reference, Some(0));
    assert_eq!(
        report.points[0].result.as_ref().unwrap().difference.share,
        0.0
    );
    // The first point refused: the differences are taken to the first traced one.
    let report = sweep(&study(
        example("thermostat"),
        "route[1].bend.radius_mm",
        &[1.0, 9.0],
        4096,
        1,
    ));
    assert_eq!(report.reference, Some(1));
}

#[test]
fn a_sweep_is_reproducible_on_any_thread_count() {
    let s = study(
        example("thermostat"),
        "source.gap_mm",
        &[0.1, 0.3, 0.6],
        3 * 4096 + 100,
        11,
    );
    let prepared = s.prepare_sweep().unwrap();
    let serial = prepared.report(&prepared.trace_all_serial());
    let one = prepared.report(&prepared.trace_all_parallel(1, |_| {}).unwrap());
    let two = prepared.report(&prepared.trace_all_parallel(2, |_| {}).unwrap());
    let again = sweep(&s);
    let text = |r: &SweepReport| serde_json::to_string(r).unwrap();
    assert_eq!(text(&serial), text(&one));
    assert_eq!(text(&serial), text(&two));
    assert_eq!(text(&serial), text(&again));
    // Another seed gives other numbers (the comparison above can fail).
    let mut other = s.clone();
    other.scenario.trace.seed = 12;
    assert_ne!(text(&serial), text(&sweep(&other)));
}

#[test]
fn bad_documents_name_their_field() {
    let sc = example("thermostat");
    let fields =
        |doc: Value| -> Vec<String> { problems(doc).into_iter().map(|p| p.field).collect() };
    let p = problems(json!({ "version": 1, "scenario": sc, "vary": {
        "field": "route[1].bend.radius_mm", "values": [1, 2], "colour": 3 } }));
    assert_eq!(p.len(), 1);
    assert!(p[0].field.starts_with("vary"), "{p:?}");
    assert!(p[0].message.contains("colour"), "{p:?}");
    let p = problems(json!({ "version": 1, "scenario": sc, "vary": {
        "field": "route[0].bend.radius_mm", "values": [1, 2] } }));
    assert_eq!(p[0].field, "vary.field");
    assert!(p[0].message.contains("route[0] has no \"bend\""), "{p:?}");
    let p = problems(json!({ "version": 1, "scenario": sc, "vary": {
        "field": "route[1].bend.radius_mm", "from": 5, "to": 9, "steps": 0 } }));
    assert_eq!(p[0].field, "vary.steps");
    assert!(p[0].message.contains("≥ 1 and ≤ 199"), "{p:?}");
    assert_eq!(
        fields(json!({ "version": 1, "scenario": sc, "vary": {
            "field": "route[1].bend.radius_mm", "from": 5 } })),
        ["vary.to", "vary.steps"]
    );
    assert_eq!(
        fields(json!({ "version": 2, "scenario": sc, "vary": {
            "field": "trace.rays", "values": [1] } })),
        ["version", "vary.field", "vary.values"]
    );
    let mut bad_scenario = sc.clone();
    bad_scenario["guide"]["colour"] = json!(1);
    let p = problems(json!({ "version": 1, "scenario": bad_scenario, "vary": {
        "field": "source.gap_mm", "values": [0.1, 0.2] } }));
    assert_eq!(p[0].field, "scenario.guide.colour", "{p:?}");
    // A range gives steps + 1 points, both ends included.
    let s = Study::from_json(
        &json!({ "version": 1, "scenario": sc, "vary": {
            "field": "source.offset_mm[0]", "from": -0.5, "to": 0.5, "steps": 4 } })
        .to_string(),
    )
    .unwrap();
    let tirtrace::study::Plan::Sweep(plan) = &s.plan else {
        panic!("a study with vary is a sweep");
    };
    assert_eq!(plan.values, [-0.5, -0.25, 0.0, 0.25, 0.5]);
}
