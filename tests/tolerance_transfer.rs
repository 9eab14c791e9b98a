//! What the page needs of a tolerance study: batches that cross between workers (read back as
//! written, refused when from another study), merged in batch order by the generic
//! `PrefixMerger` to the same report as one run, and a report read back as written (for the
//! page's CSV and chart). Native only (the page's exports wrap exactly these calls).
#![cfg(not(target_arch = "wasm32"))]

use serde_json::{json, Value};
use tirtrace::study::{Study, ToleranceBatch, ToleranceReport};
use tirtrace::trace::PrefixMerger;

fn bike() -> Value {
    serde_json::from_str(include_str!(
        "../examples/scenarios/bike_light_charge_indicator.json"
    ))
    .unwrap()
}

/// A small tolerance study on the bike light: a gap spread wide enough that some variants and
/// the one-at-a-time minus point are refused (negative gap), 3 batches of rays.
fn small(sigma_gap: f64, variants: u64) -> Study {
    let mut scenario = bike();
    scenario["trace"] = json!({ "rays": 2 * 4096 + 50, "seed": 5 });
    let doc = json!({ "version": 1, "scenario": scenario,
        "tolerances": { "spreads": [
            { "field": "source.gap_mm", "sigma": sigma_gap },
            { "field": "source.offset_mm[0]", "half_width": 0.1 } ],
        "variants": variants } });
    Study::from_json(&doc.to_string()).unwrap()
}

#[test]
fn batches_read_back_merge_in_order_to_the_same_report_as_one_run() {
    let t = small(0.3, 12).prepare_tolerance().unwrap();
    assert_eq!(t.batch_count(), 3);
    let whole = t.report(&t.trace_all_serial());
    assert!(whole.variants_refused > 0 && whole.variants_traced > 0);
    // As a worker sends them: JSON out and back, added out of order.
    let sent: Vec<ToleranceBatch> = (0..3)
        .map(|b| {
            let text = serde_json::to_string(&t.trace_batch(b)).unwrap();
            serde_json::from_str(&text).unwrap()
        })
        .collect();
    assert!(sent.iter().all(|b| t.fits(b)));
    let mut merger = PrefixMerger::new();
    merger.add(2, sent[2].clone());
    merger.add(0, sent[0].clone());
    assert!(merger.fold_to(3).is_none(), "batch 1 is still on its way");
    merger.add(1, sent[1].clone());
    let merged = merger.fold_to(3).unwrap();
    assert_eq!(t.report(merged), whole);
}

#[test]
fn a_batch_of_another_study_does_not_fit() {
    let t = small(0.3, 12).prepare_tolerance().unwrap();
    let own = t.trace_batch(0);
    // Fewer variants; a gap spread so small that no variant is refused (other units traced).
    for other in [small(0.3, 11), small(0.001, 12)] {
        let o = other.prepare_tolerance().unwrap();
        assert!(!t.fits(&o.trace_batch(0)));
    }
    // A variant's result dropped, or a unit over another number of rays.
    let mut broken = own.clone();
    let i = broken.variants.iter().position(Option::is_some).unwrap();
    broken.variants[i] = None;
    assert!(!t.fits(&broken));
    let mut broken = own.clone();
    broken.variants[i].as_mut().unwrap().delivered.n += 1;
    assert!(!t.fits(&broken));
    assert!(t.fits(&own));
}

#[test]
fn the_report_reads_back_as_written() {
    let s = small(0.3, 12);
    let t = s.prepare_tolerance().unwrap();
    let report = t.report(&t.trace_all_serial());
    let text = serde_json::to_string(&report).unwrap();
    let back: ToleranceReport = serde_json::from_str(&text).unwrap();
    assert_eq!(back, report);
    assert_eq!(serde_json::to_string(&back).unwrap(), text);
    assert_eq!(
        tirtrace::study::tolerance::report_csv(&back),
        tirtrace::study::tolerance::report_csv(&report)
    );
}

/// The tolerance chart of `report` drawn to an SVG of 900 × 620 pixels.
fn chart_svg(report: &ToleranceReport) -> String {
    use plotters::prelude::*;
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (900, 620)).into_drawing_area();
        tirtrace::chart::draw_tolerance_chart(&area, report, 1.0).unwrap();
    }
    svg
}

#[test]
fn the_chart_marks_the_nominal_and_percentiles_and_ranks_the_tolerances() {
    let t = small(0.3, 12).prepare_tolerance().unwrap();
    let report = t.report(&t.trace_all_serial());
    let svg = chart_svg(&report);
    let d = report.delivered.as_ref().unwrap();
    // Each mark labelled with its value in per cent as the chart writes it.
    for (name, x) in [
        ("nominal", report.nominal.share),
        ("5 %", d.p05),
        ("median", d.p50),
        ("95 %", d.p95),
    ] {
        let decimals = 1 + usize::from(svg.contains(&format!("{name} {:.2}", 100.0 * x)));
        assert!(
            svg.contains(&format!("{name} {:.*}", decimals, 100.0 * x)),
            "{name} not labelled"
        );
    }
    assert!(svg.contains("delivered over the variants (% of the emitted light)"));
    assert!(svg.contains("(% points, ± 95 %)"));
    // The gap's minus point is refused (negative gap): only the offset gets a bar.
    assert!(svg.contains("source.offset[0] (mm)"));
    assert!(!svg.contains("source.gap (mm)"));
    assert!(!svg.contains("NaN") && !svg.contains("inf"));
    // The count axis labels whole numbers only, each once (12 variants: ticks fall between them).
    let whole: Vec<&str> = svg
        .split("</text>")
        .filter_map(|t| t.rsplit('>').next().map(str::trim))
        .filter(|t| !t.is_empty() && t.chars().all(|c| c.is_ascii_digit()))
        .collect();
    assert!(
        whole.contains(&"0"),
        "the count axis is labelled: {whole:?}"
    );
    let mut unique = whole.clone();
    unique.sort_unstable();
    unique.dedup();
    assert_eq!(
        unique.len(),
        whole.len(),
        "a count labelled twice: {whole:?}"
    );
    // Nothing traced yet: a message instead of axes.
    let mut empty = report.clone();
    empty.delivered = None;
    assert!(chart_svg(&empty).contains("no variant traced yet"));
}
