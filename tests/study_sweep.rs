//! Sweeps of one scenario number with common random numbers: the paired difference's interval,
//! a bend's leak against its radius, per-point problems, reproducibility and document problems.
//! Native only: the parallel sweep uses threads.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::problems::Problem;
use tirtrace::study::pieces::Piece;
use tirtrace::study::{Setting, Study, SweepReport};
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
        bad.problems[0].message.contains("must be more than 1.5 mm")
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
    assert!(p[0].message.contains("from 1 to 199"), "{p:?}");
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
        panic!("a sweep")
    };
    let values: Vec<Setting> = [-0.5, -0.25, 0.0, 0.25, 0.5]
        .into_iter()
        .map(Setting::Number)
        .collect();
    assert_eq!(plan.axes[0].settings, values);
}

/// The delivered share of one plain trace of `scenario` (all batches, serial).
fn traced(scenario: &Value, rays: u64, seed: u64) -> tirtrace::stats::Share {
    let mut s = tirtrace::problems::read_scenario(&scenario.to_string()).unwrap();
    s.trace.rays = rays;
    s.trace.seed = seed;
    let p = Prepared::new(&s).unwrap();
    let mut total = p.trace_batch(0, 0);
    for b in 1..rays.div_ceil(tirtrace::trace::BATCH_RAYS) {
        total.merge(&p.trace_batch(b, 0));
    }
    p.report(&total).delivered
}

fn run(doc: Value, rays: u64, seed: u64) -> SweepReport {
    let mut s = Study::from_json(&doc.to_string()).unwrap();
    s.scenario.trace.rays = rays;
    s.scenario.trace.seed = seed;
    sweep(&s)
}

#[test]
fn a_grid_traces_every_pair_and_each_point_is_its_own_design() {
    // Two radii × two guide materials (a choice field, by the library's names): four points,
    // the radius outer. Each point is exactly the plain trace of the scenario with both set
    // (the same rays and seed), so a grid is no approximation of its points.
    let sc = example("thermostat");
    let report = run(
        json!({ "version": 1, "scenario": sc,
            "vary": { "field": "route[1].bend.radius_mm", "values": [5, 9] },
            "and_vary": { "field": "guide.material.library",
                          "values": ["pmma", "polycarbonate"] } }),
        3 * 4096,
        5,
    );
    assert_eq!(report.and_field.as_deref(), Some("guide.material.library"));
    let back: SweepReport = serde_json::from_str(&serde_json::to_string(&report).unwrap()).unwrap();
    assert_eq!(back, report);
    let at: Vec<(Value, Value)> = report
        .points
        .iter()
        .map(|p| (p.value.clone(), p.and_value.clone().unwrap()))
        .collect();
    assert_eq!(
        at,
        [
            (json!(5.0), json!("pmma")),
            (json!(5.0), json!("polycarbonate")),
            (json!(9.0), json!("pmma")),
            (json!(9.0), json!("polycarbonate")),
        ]
    );
    for (p, (r, m)) in report.points.iter().zip(&at) {
        let mut one = sc.clone();
        one["route"][1]["bend"]["radius_mm"] = r.clone();
        one["guide"]["material"]["library"] = m.clone();
        assert_eq!(
            p.result.as_ref().unwrap().delivered,
            traced(&one, 3 * 4096, 5),
            "{r} {m}"
        );
    }
    // The materials differ in index, so the delivered shares differ at each radius.
    let d = |i: usize| report.points[i].result.as_ref().unwrap().delivered.share;
    assert_ne!(d(0), d(1));
    // The CSV has a column per varied field, the text quoted.
    let csv = tirtrace::study::sweep::report_csv(&report);
    let mut lines = csv.lines();
    assert!(lines
        .next()
        .unwrap()
        .starts_with("\"route[1].bend.radius_mm\",\"guide.material.library\","));
    assert!(lines.next().unwrap().starts_with("5,\"pmma\","), "{csv}");
}

#[test]
fn factors_on_every_bend_scale_all_radii_together() {
    // The bike light has bends at route[2]; the thermostat at route[1] and route[3]. Every
    // bend's radius times the factor, the straights untouched, each point its own design.
    let sc = example("thermostat");
    let bends: Vec<usize> = sc["route"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
        .filter(|(_, s)| s.get("bend").is_some())
        .map(|(i, _)| i)
        .collect();
    assert!(bends.len() >= 2, "the example has several bends");
    let report = run(
        json!({ "version": 1, "scenario": sc,
            "vary": { "field": "route[*].bend.radius_mm", "factors": [1, 1.5] } }),
        4096,
        3,
    );
    assert!(report.factor);
    // The report reads back as written (the page sends it to the core's CSV and chart).
    let back: SweepReport = serde_json::from_str(&serde_json::to_string(&report).unwrap()).unwrap();
    assert_eq!(back, report);
    let mut scaled = sc.clone();
    for &i in &bends {
        let r = scaled["route"][i]["bend"]["radius_mm"].as_f64().unwrap();
        scaled["route"][i]["bend"]["radius_mm"] = json!(r * 1.5);
    }
    let result = |i: usize| report.points[i].result.as_ref().unwrap().delivered;
    assert_eq!(result(0), traced(&sc, 4096, 3));
    assert_eq!(result(1), traced(&scaled, 4096, 3));
    let csv = tirtrace::study::sweep::report_csv(&report);
    assert!(
        csv.starts_with("\"route[*].bend.radius_mm (factor)\","),
        "{csv}"
    );
}

#[test]
fn text_values_and_grids_name_their_problems() {
    let sc = example("thermostat");
    let first = |doc: Value| {
        let p = problems(doc);
        (p[0].field.clone(), p[0].message.clone())
    };
    let radius = json!({ "field": "route[1].bend.radius_mm", "values": [5, 9] });
    // Numbers and texts mixed.
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "guide.material.library", "values": ["pmma", 2] } }));
    assert_eq!(f, "vary.values");
    assert!(m.contains("all numbers or all texts"), "{m}");
    // Texts for a number, numbers for a text.
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "route[1].bend.radius_mm", "values": ["pmma", "pdms"] } }));
    assert_eq!(f, "vary.field");
    assert!(
        m.contains("not a text") && m.contains("takes numbers"),
        "{m}"
    );
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "guide.material.library", "values": [1, 2] } }));
    assert_eq!(f, "vary.field");
    assert!(m.contains("give texts in vary.values"), "{m}");
    // A factor must be positive; values and factors not both.
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "route[*].bend.radius_mm", "factors": [1, 0] } }));
    assert_eq!(f, "vary.factors[1]");
    assert!(m.contains("more than 0, got 0"), "{m}");
    let (f, _) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "source.gap_mm", "factors": [1, 2], "values": [1, 2] } }));
    assert_eq!(f, "vary");
    // A grid: too many points, the same field twice, a second field alone.
    let many: Vec<f64> = (0..20).map(|k| 5.0 + k as f64).collect();
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "route[1].bend.radius_mm", "values": many },
        "and_vary": { "field": "source.gap_mm", "from": 0, "to": 1, "steps": 10 } }));
    assert_eq!(f, "and_vary");
    assert!(m.contains("20 × 11 = 220 points"), "{m}");
    let (f, _) = first(json!({ "version": 1, "scenario": sc, "vary": radius, "and_vary": radius }));
    assert_eq!(f, "and_vary.field");
    let (f, _) = first(json!({ "version": 1, "scenario": sc, "and_vary": radius }));
    assert_eq!(f, "and_vary");
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": radius, "and_vary": { "field": "source.gap_mm", "steps": 2 } }));
    assert_eq!(f, "and_vary.from");
    assert!(m.contains("and_vary.values"), "{m}");
    // A [*] that names nothing.
    let (f, m) = first(json!({ "version": 1, "scenario": sc,
        "vary": { "field": "route[*].taper.length_mm", "factors": [1, 2] } }));
    assert_eq!(f, "vary.field");
    assert!(m.contains("no element of route has taper.length_mm"), "{m}");
    // A material the library does not have is a problem of that point only.
    let report = run(
        json!({ "version": 1, "scenario": sc,
            "vary": { "field": "guide.material.library", "values": ["pmma", "unobtainium"] } }),
        1000,
        1,
    );
    assert!(report.points[0].result.is_some());
    let bad = &report.points[1];
    assert!(bad.result.is_none());
    assert_eq!(
        bad.problems[0].field, "scenario.guide.material.library",
        "{bad:?}"
    );
}

#[test]
fn on_random_routes_a_bend_leaks_nothing_from_its_leak_free_radius_and_never_more_when_wider() {
    // Random round guides with one bend after a lead-in, the exit face bonded to an
    // index-matched window (so no light comes back from the exit face at steeper angles). The
    // bend criterion R_in/d ≥ n_out/(n_core cos θmax − n_out) (docs/REFERENCES.md §4) keeps
    // every ray of the launch totally reflected, skew rays included: a sweep of the bend's
    // radius must show exactly zero leak from the closed-form leak-free radius of
    // `tirtrace check` on, and (common random numbers) a leak that never rises with the radius
    // beyond the two points' intervals.
    use rand_core::Rng;
    let mut rng = rand_pcg::Pcg64Mcg::new(0x005e_ed0f_b3d5);
    let mut uniform =
        |lo: f64, hi: f64| lo + (hi - lo) * (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
    for case in 0..4 {
        let d = uniform(1.5, 4.0);
        let material = ["pmma", "polycarbonate", "polystyrene"][case % 3];
        let emitter = if case % 2 == 0 {
            json!({"led": {"area": {"disk": {"diameter_mm": uniform(0.2, 0.8) * d}},
                           "pattern": "lambertian"}})
        } else {
            json!({"beam": {"diameter_mm": uniform(0.5, 0.95) * d,
                            "divergence_half_angle_deg": uniform(5.0, 40.0)}})
        };
        let scenario = json!({
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": d } },
                       "material": { "library": material }, "surroundings": { "library": "air" },
                       "exit_medium": { "library": material } },
            "route": [
                { "straight": { "length_mm": uniform(1.0, 10.0) } },
                { "bend": { "radius_mm": 3.0 * d, "angle_deg": uniform(30.0, 180.0),
                            "turn_deg": uniform(0.0, 360.0) } },
                { "straight": { "length_mm": 3.0 } }
            ],
            "source": { "emitter": emitter, "wavelength_nm": uniform(450.0, 650.0),
                        "gap_mm": uniform(0.0, 0.5),
                        "offset_mm": [uniform(-0.1, 0.1) * d, uniform(-0.1, 0.1) * d] }
        });
        let read = tirtrace::problems::read_scenario(&scenario.to_string()).unwrap();
        let figures = tirtrace::check::figures(&read).unwrap();
        let r_in = figures.bends[0]
            .leak_free_inner_radius_mm
            .expect("these launches have a leak-free radius");
        let factors = [0.4, 0.6, 0.8, 0.95, 1.001, 1.2, 1.6];
        let radii: Vec<f64> = factors.iter().map(|f| f * r_in + 0.5 * d).collect();
        let report = sweep(&study(
            scenario,
            "route[1].bend.radius_mm",
            &radii,
            8192,
            case as u64 + 1,
        ));
        let leak: Vec<_> = report
            .points
            .iter()
            .map(|p| p.result.as_ref().unwrap().segments_leaked[1])
            .collect();
        for (f, l) in factors.iter().zip(&leak) {
            if *f > 1.0 {
                assert_eq!(
                    l.share, 0.0,
                    "case {case}: leak at {f}× the leak-free radius"
                );
            }
        }
        for (i, w) in leak.windows(2).enumerate() {
            assert!(
                w[1].share <= w[0].share + w[0].ci95 + w[1].ci95,
                "case {case}: leak rises from {}× to {}×: {:?} -> {:?}",
                factors[i],
                factors[i + 1],
                w[0],
                w[1]
            );
        }
        // The sweep is not vacuous: well inside the leak-free radius the bend leaks.
        assert!(
            leak[0].share > leak[0].ci95,
            "case {case}: no leak at 0.4×: {:?}",
            leak[0]
        );
    }
}

#[test]
fn pieces_of_any_split_merge_to_the_single_run_bit_for_bit() {
    // Splits finer than the batches (empty pieces), uneven ones, merged in reverse order after
    // a trip through JSON (as files between machines): the single run's result, bit for bit.
    let s = study(
        example("bike"),
        "route[2].bend.radius_mm",
        &[4.0, 6.0],
        5 * 4096 + 17,
        9,
    );
    let sweep = s.prepare_sweep().unwrap();
    let whole = sweep.trace_all_serial();
    let doc = json!({ "any": "study" });
    for n in [1u64, 2, 5, 8] {
        let mut pieces: Vec<Piece> = (1..=n)
            .map(|k| {
                let p = sweep.piece(&doc, k, n).unwrap();
                serde_json::from_str(&serde_json::to_string(&p).unwrap()).unwrap()
            })
            .collect();
        pieces.reverse();
        let names: Vec<String> = (1..=n).rev().map(|k| format!("piece {k}")).collect();
        let merged = sweep.merge_pieces(&doc, &pieces, &names).unwrap();
        assert_eq!(merged, whole, "{n} pieces");
        assert_eq!(sweep.report(&merged), sweep.report(&whole));
    }
    // A piece of another sweep (other points) does not fit.
    let other = study(
        example("bike"),
        "source.gap_mm",
        &[0.1, 0.2, 0.3],
        5 * 4096 + 17,
        9,
    )
    .prepare_sweep()
    .unwrap();
    let foreign = other.piece(&doc, 1, 1).unwrap();
    let e = sweep
        .merge_pieces(&doc, &[foreign], &["theirs".to_string()])
        .unwrap_err();
    assert!(e.contains("does not fit"), "{e}");
}

/// Area shared by two disks of radii `r1`, `r2` whose centres are `c` apart (the lens area;
/// plane geometry, e.g. Weisstein, "Circle-Circle Intersection", MathWorld — from memory).
fn lens_area(r1: f64, r2: f64, c: f64) -> f64 {
    use std::f64::consts::PI;
    if c >= r1 + r2 {
        return 0.0;
    }
    if c <= (r1 - r2).abs() {
        return PI * r1.min(r2) * r1.min(r2);
    }
    let a1 = libm::acos((c * c + r1 * r1 - r2 * r2) / (2.0 * c * r1));
    let a2 = libm::acos((c * c + r2 * r2 - r1 * r1) / (2.0 * c * r2));
    r1 * r1 * (a1 - libm::sin(2.0 * a1) / 2.0) + r2 * r2 * (a2 - libm::sin(2.0 * a2) / 2.0)
}

#[test]
fn a_small_led_keeps_its_coupling_until_its_edge_reaches_the_face_s_edge() {
    // A 0.4 mm Lambertian LED touching (gap 0) the entry face of a 3 mm rod, moved across it.
    // While the whole LED is on the face, every ray meets it at the same angle wherever the LED
    // is: with common random numbers the light missing the face (none) and reflected at it
    // (Fresnel) are the same, bit for bit. Past the edge, the share missing the face is the
    // share of the LED's area off the face (uniform emission over the area): 1 − lens area /
    // LED area (plane geometry).
    let (d, led) = (3.0, 0.4);
    let scenario = json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": d } },
                   "material": { "library": "pmma" }, "surroundings": { "library": "air" } },
        "route": [ { "straight": { "length_mm": 5.0 } } ],
        "source": { "emitter": { "led": { "area": { "disk": { "diameter_mm": led } },
                                          "pattern": "lambertian" } },
                    "wavelength_nm": 550, "gap_mm": 0.0 }
    });
    let offsets = [0.0, 0.6, 1.1, 1.29, 1.4, 1.5, 1.6, 1.75];
    let report = sweep(&study(scenario, "source.offset_mm[0]", &offsets, 20_000, 2));
    let budget = |i: usize| report.points[i].result.as_ref().unwrap().budget.clone();
    for (i, &x) in offsets.iter().enumerate() {
        let b = budget(i);
        if x + led / 2.0 < d / 2.0 {
            assert_eq!(b.missed_entry.share, 0.0, "offset {x}");
            assert_eq!(b.reflected_entry, budget(0).reflected_entry, "offset {x}");
        } else {
            let off = 1.0 - lens_area(d / 2.0, led / 2.0, x) / (std::f64::consts::PI * 0.04);
            let m = b.missed_entry;
            assert!(
                (m.share - off).abs() <= m.ci95.max(1e-12),
                "offset {x}: missed {m:?}, area off the face {off}"
            );
        }
    }
    // The last LED is wholly off the face: everything misses it.
    assert_eq!(budget(offsets.len() - 1).missed_entry.share, 1.0);
}
