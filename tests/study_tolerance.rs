//! Tolerance studies: the drawn values' spread, common random numbers (a tolerance that cannot
//! change delivered gives no spread at all), the sensitivity ranking, reproducibility, refused
//! variants and document problems. Native only: the parallel study uses threads.
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::problems::Problem;
use tirtrace::study::tolerance::{draw_values, Distribution, Spread};
use tirtrace::study::{FieldPath, Study, ToleranceReport};

fn example(name: &str) -> Value {
    let text = match name {
        "bike" => include_str!("../examples/scenarios/bike_light_charge_indicator.json"),
        _ => include_str!("../examples/scenarios/thermostat_status_led.json"),
    };
    serde_json::from_str(text).unwrap()
}

fn study(scenario: Value, spreads: Value, variants: u64, rays: u64) -> Study {
    let doc = json!({ "version": 1, "scenario": scenario,
                      "tolerances": { "spreads": spreads, "variants": variants } });
    let mut study = Study::from_json(&doc.to_string()).unwrap();
    study.scenario.trace.rays = rays;
    study
}

fn run(study: &Study) -> ToleranceReport {
    let t = study.prepare_tolerance().unwrap();
    t.report(&t.trace_all_serial())
}

fn problems(doc: Value) -> Vec<Problem> {
    Study::from_json(&doc.to_string()).unwrap_err()
}

fn spread(field: &str, distribution: Distribution) -> Spread {
    Spread {
        field: FieldPath::parse(field).unwrap(),
        distribution,
    }
}

#[test]
fn drawn_values_have_the_asked_spread() {
    // n draws: the sample mean's standard error is s/√n (central limit theorem); the sample
    // variance's is √((μ₄ − σ⁴)/n), with μ₄ = 3σ⁴ for the normal and w⁴/5 for the uniform on
    // (−w, w) whose variance is w²/3 (standard results, e.g. any mathematical statistics
    // textbook; from memory). Checked within 4.5 standard errors.
    let (sigma, w) = (0.05, 0.1);
    let spreads = [
        spread("source.offset_mm[0]", Distribution::Normal { sigma }),
        spread("source.gap_mm", Distribution::Uniform { half_width: w }),
    ];
    let nominal = [0.3, 0.2];
    let n = 20_000;
    let draws = draw_values(&spreads, &nominal, n, 11);
    assert_eq!(draws.len(), n as usize);
    let nf = n as f64;
    for (j, (var, mu4)) in [
        (sigma * sigma, 3.0 * (sigma * sigma) * (sigma * sigma)),
        (w * w / 3.0, (w * w) * (w * w) / 5.0),
    ]
    .into_iter()
    .enumerate()
    {
        let x: Vec<f64> = draws.iter().map(|v| v[j] - nominal[j]).collect();
        let mean = x.iter().sum::<f64>() / nf;
        let s2 = x.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (nf - 1.0);
        assert!(
            mean.abs() < 4.5 * (var / nf).sqrt(),
            "spread {j}: mean {mean}"
        );
        let se = ((mu4 - var * var) / nf).sqrt();
        assert!((s2 - var).abs() < 4.5 * se, "spread {j}: s² {s2} vs {var}");
    }
    assert!(draws.iter().all(|v| (v[1] - nominal[1]).abs() <= w));
    // The same seed draws the same values; another seed others.
    assert_eq!(draws, draw_values(&spreads, &nominal, n, 11));
    assert_ne!(draws, draw_values(&spreads, &nominal, n, 12));
}

#[test]
fn a_tolerance_that_cannot_change_delivered_gives_no_spread_at_all() {
    // The receiver's distance is past the exit: it changes what lands on the receiver, never
    // what leaves the exit face. With common random numbers every variant's rays take the same
    // paths as the nominal's, so delivered is the nominal's exactly.
    let s = study(
        example("thermostat"),
        json!([{ "field": "receiver.distance_mm", "sigma": 0.2 }]),
        12,
        4096,
    );
    let r = run(&s);
    assert_eq!(r.variants_traced, 12);
    let d = r.delivered.as_ref().unwrap();
    assert_eq!(d.standard_deviation, Some(0.0));
    assert_eq!((d.p05, d.p95), (r.nominal.share, r.nominal.share));
    assert!(r.nominal.share > 0.0);
    for v in &r.variants {
        assert_eq!(v.delivered.unwrap().share, r.nominal.share);
        assert_eq!(v.difference.unwrap().share, 0.0);
    }
    let e = r.sensitivity.one_at_a_time[0].effect.unwrap();
    assert_eq!((e.share, e.ci95), (0.0, 0.0));
    assert_eq!(r.sensitivity.correlation[0].r, None);
}

#[test]
fn a_large_offset_tolerance_ranks_above_a_tiny_gap_tolerance() {
    // The LED 0.5 mm off the axis of a 4 × 2 mm bar, placed to ±0.3 mm (σ), the gap to
    // ±0.001 mm: the offset moves delivered far more.
    let mut scenario = example("bike");
    scenario["source"]["offset_mm"] = json!([0.0, 0.5]);
    let s = study(
        scenario,
        json!([{ "field": "source.gap_mm", "half_width": 0.001 },
               { "field": "source.offset_mm[1]", "sigma": 0.3 }]),
        16,
        8192,
    );
    let r = run(&s);
    let oat = &r.sensitivity.one_at_a_time;
    assert_eq!(oat[0].field, "source.offset_mm[1]");
    let (big, small) = (oat[0].effect.unwrap(), oat[1].effect.unwrap());
    // The large effect is resolved: its interval excludes zero.
    assert!(big.share.abs() > big.ci95, "{big:?}");
    assert!(
        big.share.abs() > small.share.abs() + small.ci95,
        "{big:?} {small:?}"
    );
    assert_eq!(r.sensitivity.correlation[0].field, "source.offset_mm[1]");
    // The step of the uniform is its standard deviation, half_width/√3.
    assert!((oat[1].step - 0.001 / 3f64.sqrt()).abs() < 1e-18);
}

#[test]
fn same_seed_same_report_for_any_thread_count() {
    let s = study(
        example("bike"),
        json!([{ "field": "source.offset_mm[0]", "sigma": 0.1 },
               { "field": "route[2].bend.radius_mm", "half_width": 0.2 }]),
        6,
        9000, // three batches, the last one short
    );
    let t = s.prepare_tolerance().unwrap();
    let serial = t.report(&t.trace_all_serial());
    for threads in [1, 2, 3] {
        let parallel = t.report(&t.trace_all_parallel(threads, |_| {}).unwrap());
        assert_eq!(serial, parallel, "{threads} threads");
    }
    assert_eq!(serial, run(&s));
    let mut other = s.clone();
    other.scenario.trace.seed += 1;
    let other = run(&other);
    assert_ne!(serial.variants[0].values, other.variants[0].values);
}

#[test]
fn variants_that_break_a_rule_are_counted_and_named() {
    // Gap 0.2 mm ± 0.3 mm (σ): some variants draw a negative gap and are not traced; so is the
    // one-at-a-time point at 0.2 − 0.3 mm, and the effect is not estimated.
    let s = study(
        example("bike"),
        json!([{ "field": "source.gap_mm", "sigma": 0.3 },
               { "field": "source.offset_mm[0]", "sigma": 0.01 }]),
        40,
        1000,
    );
    let r = run(&s);
    let negative = r.variants.iter().filter(|v| v.values[0] < 0.0).count() as u64;
    assert!(negative > 0);
    assert_eq!(r.variants_refused, negative);
    assert_eq!(r.variants_traced, 40 - negative);
    assert_eq!(r.refused_examples.len() as u64, negative.min(5));
    for example in &r.refused_examples {
        let v = &r.variants[example.variant];
        assert!(v.values[0] < 0.0 && v.delivered.is_none());
        assert_eq!(example.problems[0].field, "scenario.source.gap_mm");
        assert!(example.problems[0].message.contains("gap_mm"));
    }
    let oat = &r.sensitivity.one_at_a_time;
    assert_eq!(oat[1].field, "source.gap_mm", "refused points rank last");
    assert!(oat[1].minus.is_none() && oat[1].plus.is_some() && oat[1].effect.is_none());
    assert_eq!(oat[1].problems[0].field, "scenario.source.gap_mm");
    assert!(oat[0].effect.is_some());
    // Not clipped: every traced variant has its drawn gap.
    assert!(r
        .variants
        .iter()
        .all(|v| (v.values[0] < 0.0) == v.delivered.is_none()));
}

#[test]
fn bad_documents_get_named_problems() {
    let doc = |tolerances: Value| json!({ "version": 1, "scenario": example("bike"), "tolerances": tolerances });
    let fields = |p: Vec<Problem>| p.into_iter().map(|p| p.field).collect::<Vec<_>>();
    let p = problems(doc(json!({ "spreads": [
        { "field": "source.gap_mm", "sigma": 0.1 },
        { "field": "source.offset_mm[0]", "sigma": -1 },
        { "field": "source.offset_mm[1]", "sigma": 0.1, "half_width": 0.1 },
        { "field": "route[2].bend.radius_mm" },
        { "field": "trace.rays", "sigma": 1 },
        { "field": "source.gap_mm", "half_width": 0.1 },
        { "field": "source.nothing_mm", "sigma": 1 } ], "variants": 1.5 })));
    assert_eq!(
        fields(p.clone()),
        [
            "tolerances.variants",
            "tolerances.spreads[1].sigma",
            "tolerances.spreads[2]",
            "tolerances.spreads[3]",
            "tolerances.spreads[4].field",
            "tolerances.spreads[5].field",
            "tolerances.spreads[6].field",
        ]
    );
    assert!(p[0].message.contains("from 2 to 2000") && p[0].message.contains("1.5"));
    assert!(p[1].message.contains("must be at least 0") && p[1].message.contains("-1"));
    let p = problems(doc(json!({ "spreads": [], "variants": 10 })));
    assert_eq!(fields(p), ["tolerances.spreads"]);
    // Both plans, and an unknown member.
    let mut both = doc(
        json!({ "spreads": [{ "field": "source.gap_mm", "sigma": 0.1 }],
                               "variants": 10 }),
    );
    both["vary"] = json!({ "field": "source.gap_mm", "values": [0.1, 0.2] });
    assert_eq!(fields(problems(both)), ["study"]);
    let p = problems(doc(
        json!({ "spreads": [{ "field": "source.gap_mm", "sd": 0.1 }],
                                 "variants": 10 }),
    ));
    assert!(p[0].field.starts_with("tolerances.spreads[0]"), "{p:?}");
    // Too many rays in all: named with the rule.
    let s = study(
        example("bike"),
        json!([{ "field": "source.gap_mm", "sigma": 0.01 }]),
        2000,
        1_000_000,
    );
    let p = s.prepare_tolerance().unwrap_err();
    assert_eq!(p[0].field, "scenario.trace.rays");
    assert!(
        p[0].message
            .contains("must be at most 10⁹, got 1000000 × 2003"),
        "{}",
        p[0].message
    );
}

#[test]
fn the_command_prints_the_report_and_one_csv_row_per_variant() {
    let bin = env!("CARGO_BIN_EXE_tirtrace");
    let file = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/studies/bike_light_tolerances.json"
    );
    let run = |extra: &[&str]| {
        let out = std::process::Command::new(bin)
            .args(["study", file, "--rays", "500", "--threads", "2"])
            .args(extra)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8(out.stdout).unwrap()
    };
    let report: Value = serde_json::from_str(&run(&[])).unwrap();
    let variants = report["variants_drawn"].as_u64().unwrap();
    assert_eq!(
        report["variants"].as_array().unwrap().len() as u64,
        variants
    );
    assert_eq!(
        report["sensitivity"]["one_at_a_time"]
            .as_array()
            .unwrap()
            .len(),
        5
    );
    let csv = run(&["--csv"]);
    let mut lines = csv.lines();
    assert!(lines
        .next()
        .unwrap()
        .starts_with(r#""variant","source.offset_mm[0]","source.offset_mm[1]","source.gap_mm","#));
    assert_eq!(lines.count() as u64, variants);
}

#[test]
fn a_field_with_every_element_spreads_each_number_on_its_own() {
    // route[*].bend.radius_mm names both bends of the thermostat: each gets its own spread
    // (drawn independently, ranked on its own), in route order, after which come the others.
    let s = study(
        example("thermostat"),
        json!([ { "field": "route[*].bend.radius_mm", "half_width": 0.3 },
                { "field": "source.gap_mm", "sigma": 0.02 } ]),
        4,
        1000,
    );
    let tirtrace::study::Plan::Tolerance(plan) = &s.plan else {
        panic!("a tolerance study")
    };
    let fields: Vec<&str> = plan.spreads.iter().map(|s| s.field.text.as_str()).collect();
    assert_eq!(
        fields,
        [
            "route[1].bend.radius_mm",
            "route[3].bend.radius_mm",
            "source.gap_mm"
        ]
    );
    let report = run(&s);
    assert_eq!(report.sensitivity.one_at_a_time.len(), 3);
    // A [*] that names nothing is named as such.
    let p = problems(json!({ "version": 1, "scenario": example("thermostat"),
        "tolerances": { "spreads": [ { "field": "route[*].taper.length_mm", "sigma": 0.1 } ],
                        "variants": 4 } }));
    assert_eq!(p[0].field, "tolerances.spreads[0].field");
    assert!(
        p[0].message.contains("no element of route"),
        "{}",
        p[0].message
    );
}

#[test]
fn every_spread_zero_gives_the_nominal_answer_exactly() {
    // Zero tolerances (switched off without removing them): every variant is the nominal
    // design, traced with the nominal's rays, so each delivers the nominal share bit for bit;
    // the spread is exactly zero, every percentile is the nominal, every one-at-a-time effect
    // is exactly zero and no correlation exists (nothing varies).
    let s = study(
        example("bike"),
        json!([ { "field": "source.offset_mm[0]", "sigma": 0.0 },
                { "field": "source.gap_mm", "half_width": 0.0 } ]),
        6,
        3000,
    );
    let r = run(&s);
    assert_eq!(r.variants_traced, 6);
    for v in &r.variants {
        assert_eq!(v.delivered, Some(r.nominal), "{v:?}");
        assert_eq!(v.difference.map(|d| d.share), Some(0.0));
    }
    let d = r.delivered.as_ref().unwrap();
    assert_eq!(d.standard_deviation, Some(0.0));
    for p in [d.mean, d.p05, d.p50, d.p95] {
        assert_eq!(p, r.nominal.share);
    }
    for o in &r.sensitivity.one_at_a_time {
        assert_eq!(o.effect.map(|e| e.share), Some(0.0), "{o:?}");
    }
    for c in &r.sensitivity.correlation {
        assert_eq!(c.r, None, "{c:?}");
    }
    // Below zero is still refused, by field.
    let p = problems(json!({ "version": 1, "scenario": example("bike"),
        "tolerances": { "spreads": [ { "field": "source.gap_mm", "sigma": -0.1 } ],
                        "variants": 4 } }));
    assert_eq!(p[0].field, "tolerances.spreads[0].sigma");
    assert!(
        p[0].message.contains("must be at least 0"),
        "{}",
        p[0].message
    );
}
