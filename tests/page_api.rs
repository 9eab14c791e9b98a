//! The core behind the design page's calls: every problem of a scenario with its field path,
//! the closed-form figures, a trace report read back from its JSON form, the CSV (the same text
//! as the command line's `--csv`), and the exit-map and intensity charts drawn to SVG at pixel
//! ratios 1 and 2, with a message instead of numbers when no light arrives.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use plotters::prelude::*;
use serde_json::{json, Value};
use tirtrace::chart::{draw_exit_map, draw_intensity, sequential_colour};
use tirtrace::export::{report_csv, report_from_json};
use tirtrace::index::library::MaterialChoice;
use tirtrace::problems::{check_scenario, read_scenario};
use tirtrace::scenario::{Emitter, Scenario, Segment};
use tirtrace::trace::{Prepared, TraceReport};

const THERMOSTAT: &str = include_str!("../examples/scenarios/thermostat_status_led.json");
const SOIL: &str = include_str!("../examples/scenarios/soil_sensor_ambient_light_window.json");
const BIKE: &str = include_str!("../examples/scenarios/bike_light_charge_indicator.json");

/// The report of a scenario traced with `rays` rays.
fn traced(text: &str, rays: u64) -> TraceReport {
    let mut scenario = Scenario::from_json(text).unwrap();
    scenario.trace.rays = rays;
    let prepared = Prepared::new(&scenario).unwrap();
    prepared.report(&prepared.trace_all_serial(0))
}

fn with(text: &str, edit: impl FnOnce(&mut Value)) -> String {
    let mut doc: Value = serde_json::from_str(text).unwrap();
    edit(&mut doc);
    doc.to_string()
}

#[test]
fn a_new_design_is_one_straight_lit_by_an_led_with_its_materials_attenuation() {
    let s = Scenario::new_design();
    assert!(s.problems().is_empty(), "{:?}", s.problems());
    assert_eq!(s.route.len(), 1);
    assert!(matches!(s.route[0], Segment::Straight { .. }));
    assert!(matches!(s.source.emitter, Emitter::Led { .. }));
    assert!(s.receiver.is_none() && s.guide.contacts.is_empty());
    let MaterialChoice::Library(id) = &s.guide.material else {
        panic!("a new design's material is a library one");
    };
    let typical = tirtrace::index::library::find(id)
        .unwrap()
        .attenuation_db_per_m;
    assert_eq!(s.guide.attenuation_db_per_m, typical);
    // The page keeps it as JSON: read back, it is the same design, and it traces.
    assert_eq!(Scenario::from_json(&s.to_json()).unwrap(), s);
    let report = traced(&s.to_json(), 4096);
    assert!(report.delivered.share > 0.0, "no light reaches the window");
}

#[test]
fn a_valid_scenario_has_no_problems() {
    for text in [THERMOSTAT, SOIL, BIKE] {
        let c = check_scenario(text);
        assert!(c.ok && c.problems.is_empty(), "{:?}", c.problems);
    }
}

#[test]
fn every_field_problem_is_listed_with_its_path() {
    let text = with(THERMOSTAT, |d| {
        d["route"][0]["straight"]["length_mm"] = json!(-2.0);
        d["route"][1]["bend"]["radius_mm"] = json!(-3.0);
        d["source"]["wavelength_nm"] = json!(20000.0);
        d["receiver"]["distance_mm"] = json!(-1.0);
    });
    let c = check_scenario(&text);
    assert!(!c.ok);
    let fields: Vec<&str> = c.problems.iter().map(|p| p.field.as_str()).collect();
    assert_eq!(
        fields,
        [
            "route[0].straight.length_mm",
            "route[1].bend.radius_mm",
            "source.wavelength_nm",
            "receiver.distance_mm"
        ]
    );
    // Each message is a whole sentence naming its field, the allowed range and the value given.
    for p in &c.problems {
        assert!(
            p.message.starts_with(&format!("{} must be", p.field)),
            "{p:?}"
        );
    }
    assert!(
        c.problems[1].message.contains("got -3"),
        "{:?}",
        c.problems[1]
    );
    assert!(
        c.problems[2].message.contains("must be at most 2500 nm"),
        "{:?}",
        c.problems[2]
    );
    // The same list the core's validation gives.
    let core: Vec<String> = Scenario::from_json(&text)
        .unwrap()
        .problems()
        .iter()
        .map(|e| e.to_string())
        .collect();
    let listed: Vec<&String> = c.problems.iter().map(|p| &p.message).collect();
    assert_eq!(listed, core.iter().collect::<Vec<_>>());
}

#[test]
fn a_document_that_cannot_be_read_gives_one_problem_at_its_path() {
    let cases = [
        (
            with(THERMOSTAT, |d| {
                d["route"][1]["bend"]["radius"] = json!(9.0);
            }),
            "route[1].bend.radius",
            "is not a field here; the fields here are radius_mm, angle_deg, turn_deg",
        ),
        (
            with(THERMOSTAT, |d| {
                d["source"]["wavelength_nm"] = json!("590 nm");
            }),
            "source.wavelength_nm",
            "must be a number, got the text “590 nm”",
        ),
        (
            with(THERMOSTAT, |d| {
                d["guide"].as_object_mut().unwrap().remove("material");
            }),
            "guide",
            "needs the field “material”",
        ),
        (
            "[1, 2]".to_string(),
            "scenario",
            "the document must be an object { … }, got a list [ … ]",
        ),
        (
            "3".to_string(),
            "scenario",
            "must be an object { … }, got 3",
        ),
        ("".to_string(), "scenario", "ends too early"),
        ("{\"version\": 1,".to_string(), "scenario", "ends too early"),
    ];
    for (text, field, words) in cases {
        let c = check_scenario(&text);
        assert!(!c.ok);
        assert_eq!(c.problems.len(), 1, "{:?}", c.problems);
        let p = &c.problems[0];
        assert_eq!(p.field, field, "{p:?}");
        assert!(p.message.contains(words), "{p:?}");
        // The same message as the command line's reader gives.
        assert_eq!(
            p.message,
            Scenario::from_json(&text).unwrap_err().to_string()
        );
        assert_eq!(read_scenario(&text).unwrap_err(), *p);
    }
}

#[test]
fn closed_form_figures_serialise_with_a_verdict_per_bend() {
    let scenario = read_scenario(THERMOSTAT).unwrap();
    let f = serde_json::to_value(tirtrace::check::figures(&scenario).unwrap()).unwrap();
    // PMMA at 590 nm in air: critical angle ≈ 42.2° (n ≈ 1.49; W. J. Smith, Modern Optical
    // Engineering, eq. 11.2, θc = asin(1/n)).
    let theta_c = f["critical_angle_deg"].as_f64().unwrap();
    assert!((theta_c - 42.2).abs() < 0.2, "{theta_c}");
    let bends = f["bends"].as_array().unwrap();
    assert_eq!(bends.len(), 2);
    for b in bends {
        assert!(
            ["ok", "leaks"].contains(&b["verdict"].as_str().unwrap()),
            "{b}"
        );
        assert!(b["inner_radius_over_size"].as_f64().unwrap() > 0.0);
    }
}

#[test]
fn a_report_reads_back_from_its_json_unchanged() {
    for (text, rays) in [(THERMOSTAT, 12_000), (SOIL, 9_000), (BIKE, 5_000)] {
        let report = traced(text, rays);
        let json = serde_json::to_string(&report).unwrap();
        let back = report_from_json(&json).unwrap();
        assert_eq!(back, report);
        // And writes the same JSON again.
        assert_eq!(serde_json::to_string(&back).unwrap(), json);
        assert_eq!(report_csv(&back, "n"), report_csv(&report, "n"));
    }
}

#[test]
fn a_one_ray_report_reads_back_with_its_infinite_intervals() {
    // One ray has no variance estimate: every interval is infinite, which JSON writes as null.
    let report = traced(THERMOSTAT, 1);
    assert!(report.delivered.ci95.is_infinite());
    let json = serde_json::to_string(&report).unwrap();
    assert!(json.contains("\"ci95\":null"));
    let back = report_from_json(&json).unwrap();
    assert!(back.delivered.ci95.is_infinite() && back.budget.leaked.ci95.is_infinite());
    assert_eq!(back.absolute.unwrap().delivered.ci95, f64::INFINITY);
}

#[test]
fn a_malformed_report_names_the_field() {
    let report = traced(THERMOSTAT, 4_096);
    let mut doc = serde_json::to_value(&report).unwrap();
    doc["segments"][1]["kind"] = json!("spiral");
    let e = report_from_json(&doc.to_string()).unwrap_err().to_string();
    assert!(e.starts_with("report.segments[1]"), "{e}");
    assert!(e.contains("spiral"), "{e}");
    let mut doc = serde_json::to_value(&report).unwrap();
    doc["exit_map"]["cells"] = json!("many");
    let e = report_from_json(&doc.to_string()).unwrap_err().to_string();
    assert!(e.starts_with("report.exit_map.cells"), "{e}");
}

#[test]
fn csv_has_a_header_block_then_the_budget_absolute_segment_and_mount_tables() {
    let report = traced(THERMOSTAT, 8_192);
    let csv = report_csv(&report, "Thermostat \"status\" LED");
    assert!(csv.ends_with('\n') && !csv.ends_with("\n\n"));
    let sections: Vec<&str> = csv.trim_end().split("\n\n").collect();
    // Then the exit figures (tests/exit_figures.rs checks them): three sections, the third the
    // detector's blocks (the design has a receiver); then the far-field map (tests/far_field.rs
    // checks it): two sections.
    assert_eq!(sections.len(), 13);
    assert!(sections[8].starts_with("\"Exit figures\","));
    assert!(sections[9].starts_with("\"Exit face blocks\","));
    assert!(sections[10].starts_with("\"Detector blocks\","));
    assert!(sections[11].starts_with("\"Intensity map beyond the exit face"));
    assert!(sections[12].starts_with("\"Reaches the window at 90° or more"));
    let head: Vec<&str> = sections[0].lines().collect();
    assert_eq!(head[1], "design,\"Thermostat \"\"status\"\" LED\"");
    assert_eq!(head[3], "rays,8192");
    assert_eq!(head[7], "flux,lm");
    let budget: Vec<&str> = sections[1].lines().collect();
    assert_eq!(
        budget[0],
        "\"What becomes of the light\",%,± %,flux lm,± flux lm"
    );
    let d = &report.budget.delivered;
    let abs = report.absolute.as_ref().unwrap();
    assert!(budget[1].starts_with(&format!(
        "\"Reaches the window (exit face)\",{},{},",
        tirtrace::export::percent(d.share),
        tirtrace::export::percent(d.ci95)
    )));
    let delivered_flux: f64 = budget[1].split(',').nth(3).unwrap().parse().unwrap();
    assert!((delivered_flux - abs.delivered.value).abs() <= 1e-12 * abs.delivered.value);
    assert!(sections[2].starts_with("\"Absolute figures\",value,± 95 %,unit\n"));
    assert_eq!(sections[3].lines().count(), 1 + report.segments.len());
    let contact: Vec<&str> = sections[4].lines().collect();
    assert_eq!(contact.len(), 2);
    // The mount touches the third segment: 3, as the page numbers segments.
    assert!(contact[1].starts_with("\"snap clip\",3,"), "{}", contact[1]);
    // The light turned back at the exit face: what reaches it and what it turns back (of the
    // emitted light, and of the light reaching it), where that light ended, and by segment.
    let t = &report.exit_turn_back;
    let pc = tirtrace::export::percent;
    let exit: Vec<&str> = sections[5].lines().collect();
    assert_eq!(
        exit[0],
        "\"At the exit face\",% of emitted,± %,% of the light reaching it,± %"
    );
    assert_eq!(
        exit[1],
        format!(
            "\"Reaches the exit face\",{},{},,",
            pc(t.reached.share),
            pc(t.reached.ci95)
        )
    );
    let of = t.of_reaching.as_ref().unwrap();
    assert_eq!(
        exit[3],
        format!(
            "\"Turned back by total reflection\",{},{},{},{}",
            pc(t.by_total_reflection.share),
            pc(t.by_total_reflection.ci95),
            pc(of.by_total_reflection.share),
            pc(of.by_total_reflection.ci95)
        )
    );
    assert_eq!(exit.len(), 5);
    let ended: Vec<&str> = sections[6].lines().collect();
    assert_eq!(
        ended[3],
        format!(
            "\"Leaks out of the side walls\",{},{}",
            pc(t.ended.leaked.share),
            pc(t.ended.leaked.ci95)
        )
    );
    assert_eq!(ended.len(), 7);
    let by_segment: Vec<&str> = sections[7].lines().collect();
    assert_eq!(by_segment[0], "segment,leaks after a turn back %,± %");
    let bend = &report.segments[1].leaked_after_turn_back;
    assert_eq!(
        by_segment[2],
        format!("2,{},{}", pc(bend.share), pc(bend.ci95))
    );
    assert_eq!(by_segment.len(), 1 + report.segments.len());
}

/// The command line's `--csv` prints exactly the core's CSV, both for the report traced here
/// and for the report read back from the command line's own JSON (as the page holds it).
#[cfg(not(target_arch = "wasm32"))]
#[test]
fn csv_is_the_command_lines_text() {
    use std::process::Command;
    let run = |args: &[&str]| {
        let out = Command::new(env!("CARGO_BIN_EXE_tirtrace"))
            .args(args)
            .output()
            .unwrap();
        assert!(out.status.success(), "{args:?}");
        String::from_utf8(out.stdout).unwrap()
    };
    for path in [
        "examples/scenarios/thermostat_status_led.json",
        "examples/scenarios/clad_plastic_fibre.json",
    ] {
        let cli_csv = run(&["trace", path, "--rays", "9000", "--csv"]);
        let cli_json = run(&["trace", path, "--rays", "9000"]);
        let text = std::fs::read_to_string(path).unwrap();
        let name = Scenario::from_json(&text).unwrap().name;
        assert_eq!(report_csv(&traced(&text, 9_000), &name), cli_csv, "{path}");
        assert_eq!(
            report_csv(&report_from_json(&cli_json).unwrap(), &name),
            cli_csv,
            "{path}"
        );
    }
}

/// The two report charts.
#[derive(Debug, Clone, Copy)]
enum Chart {
    ExitMap,
    Intensity,
}

/// Draw `chart` onto an SVG of `w` × `h` pixels at `scale`: the SVG text, or the error.
fn try_svg(
    w: u32,
    h: u32,
    scale: f64,
    report: &TraceReport,
    chart: Chart,
) -> Result<String, tirtrace::TirError> {
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area();
        match chart {
            Chart::ExitMap => draw_exit_map(&area, report, scale, tirtrace::units::LengthUnit::Mm)?,
            Chart::Intensity => draw_intensity(&area, report, scale)?,
        }
    }
    Ok(svg)
}

fn svg_of(w: u32, h: u32, scale: f64, report: &TraceReport, chart: Chart) -> String {
    try_svg(w, h, scale, report, chart).unwrap()
}

/// Every `<text>` element's (x, y, font size).
fn texts(svg: &str) -> Vec<(f64, f64, f64)> {
    let attr = |tag: &str, name: &str| -> Option<f64> {
        let rest = tag.split(&format!(" {name}=\"")).nth(1)?;
        rest.split('"').next()?.parse().ok()
    };
    svg.split("<text")
        .skip(1)
        .map(|t| {
            let tag = t.split('>').next().unwrap();
            (
                attr(tag, "x").unwrap(),
                attr(tag, "y").unwrap(),
                attr(tag, "font-size").unwrap(),
            )
        })
        .collect()
}

/// No number on the chart is NaN or infinite.
fn assert_no_bad_numbers(svg: &str) {
    for bad in ["NaN", "inf", "–"] {
        assert!(!svg.contains(bad), "the chart shows {bad}");
    }
}

const CHARTS: [(Chart, &str); 2] = [
    (Chart::ExitMap, "Exit-face irradiance (1 = "),
    (Chart::Intensity, "Intensity beyond the exit face (1 = peak"),
];

#[test]
fn charts_draw_legibly_at_pixel_ratio_1_and_2() {
    let report = traced(THERMOSTAT, 20_000);
    for (name, caption) in CHARTS {
        let mut sizes = Vec::new();
        for scale in [1.0, 2.0] {
            let (w, h) = ((600.0 * scale) as u32, (360.0 * scale) as u32);
            let svg = svg_of(w, h, scale, &report, name);
            assert!(svg.contains(caption), "{name:?}: {svg}");
            assert_no_bad_numbers(&svg);
            let t = texts(&svg);
            assert!(t.len() >= 8, "{name:?}: axis labels expected");
            for &(x, y, _) in &t {
                assert!(
                    (0.0..=w as f64).contains(&x) && (0.0..=h as f64).contains(&y),
                    "{name:?} at ×{scale}: text at ({x}, {y}) off a {w}×{h} canvas"
                );
            }
            let smallest = t.iter().map(|p| p.2).fold(f64::INFINITY, f64::min);
            sizes.push(smallest);
            // At least 12 CSS pixels (plotters writes the font size divided by 1.24).
            assert!(
                smallest * 1.24 >= 12.0 * scale - 0.5,
                "{name:?}: {smallest}"
            );
        }
        assert!(
            (sizes[1] / sizes[0] - 2.0).abs() < 0.05,
            "{name:?}: {sizes:?}"
        );
    }
    // With a source flux, the intensity chart gives the peak in absolute units.
    let svg = svg_of(600, 360, 1.0, &report, Chart::Intensity);
    assert!(svg.contains(" mcd, mean over "), "{svg}");
    assert!(svg.contains("95 % confidence band"));
    // The exit map is a colour grid: one cell per map cell (and a colour scale).
    let svg = svg_of(600, 360, 1.0, &report, Chart::ExitMap);
    let cells = report.exit_map.cells * report.exit_map.cells;
    assert!(
        svg.matches("<rect").count() >= cells + 50,
        "cells and colour scale"
    );
}

#[test]
fn charts_of_a_report_with_no_light_show_a_message() {
    let mut report = traced(THERMOSTAT, 4_096);
    for v in [
        &mut report.exit_map.share,
        &mut report.exit_map.ci95,
        &mut report.exit_map.share_per_area,
        &mut report.intensity.share_per_sr,
        &mut report.intensity.ci95_per_sr,
    ] {
        v.iter_mut().for_each(|x| *x = 0.0);
    }
    report.absolute = None;
    for (name, _) in CHARTS {
        for scale in [1.0, 2.0] {
            let svg = svg_of(600, 360, scale, &report, name);
            assert!(svg.contains("No light"), "{name:?}: {svg}");
            assert_no_bad_numbers(&svg);
        }
    }
    // An empty intensity list too.
    report.intensity.angle_deg.clear();
    report.intensity.share_per_sr.clear();
    report.intensity.ci95_per_sr.clear();
    let svg = svg_of(600, 360, 1.0, &report, Chart::Intensity);
    assert!(svg.contains("No light"));
}

#[test]
fn a_malformed_map_is_refused_with_its_field() {
    let mut report = traced(THERMOSTAT, 4_096);
    report.exit_map.share_per_area.pop();
    let e = try_svg(600, 360, 1.0, &report, Chart::ExitMap)
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("report.exit_map.share_per_area"), "{e}");
    report.intensity.share_per_sr.pop();
    let e = try_svg(600, 360, 1.0, &report, Chart::Intensity)
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("report.intensity.share_per_sr"), "{e}");
}

/// CIE 1976 lightness L* of an sRGB colour: the sRGB transfer function (IEC 61966-2-1:1999)
/// to linear light, relative luminance Y = 0.2126 R + 0.7152 G + 0.0722 B, then
/// L* = 116 f(Y) − 16 with f(t) = t^(1/3) above (6/29)³, else t/(3 (6/29)²) + 4/29 (CIE 15:2004).
fn lightness(c: RGBColor) -> f64 {
    let lin = |u: u8| {
        let v = u as f64 / 255.0;
        if v <= 0.04045 {
            v / 12.92
        } else {
            ((v + 0.055) / 1.055).powf(2.4)
        }
    };
    let y = 0.2126 * lin(c.0) + 0.7152 * lin(c.1) + 0.0722 * lin(c.2);
    let d = 6.0 / 29.0;
    let f = if y > d * d * d {
        y.cbrt()
    } else {
        y / (3.0 * d * d) + 4.0 / 29.0
    };
    116.0 * f - 16.0
}

#[test]
fn the_map_palette_is_ordered_in_lightness() {
    let steps = 512;
    let l: Vec<f64> = (0..=steps)
        .map(|i| lightness(sequential_colour(i as f64 / steps as f64)))
        .collect();
    // Strictly darker towards the peak, with a wide range (readable in grey scale).
    for (i, w) in l.windows(2).enumerate() {
        assert!(w[1] <= w[0], "L* rises at step {i}: {} → {}", w[0], w[1]);
    }
    assert!(l[0] > 95.0 && l[steps] < 20.0, "{} … {}", l[0], l[steps]);
    // Out-of-range values clamp; NaN is "no light".
    assert_eq!(sequential_colour(-1.0), sequential_colour(0.0));
    assert_eq!(sequential_colour(7.0), sequential_colour(1.0));
    assert_eq!(sequential_colour(f64::NAN), sequential_colour(0.0));
}

#[test]
fn whole_number_fields_say_so_with_their_range() {
    // Each states its own range, not the range of the number type behind it.
    for (field, value, range) in [
        ("rays", json!(1.5), "1 to 10⁹"),
        ("rays", json!(-5), "1 to 10⁹"),
        ("seed", json!(9_007_199_254_740_993u64), "0 to 2⁵³ − 1"),
        ("max_interactions", json!(1e12), "1 to 10⁷"),
        ("max_interactions", json!(99_999_999_999u64), "1 to 10⁷"),
    ] {
        let text = with(THERMOSTAT, |d| d["trace"][field] = value.clone());
        let c = check_scenario(&text);
        assert_eq!(c.problems.len(), 1, "{value}: {:?}", c.problems);
        let p = &c.problems[0];
        assert_eq!(p.field, format!("trace.{field}"));
        assert!(
            p.message
                .contains(&format!("must be a whole number from {range}")),
            "{value}: {}",
            p.message
        );
    }
    // In range once read, then checked like any other field.
    let text = with(THERMOSTAT, |d| d["trace"]["rays"] = json!(0));
    let c = check_scenario(&text);
    assert_eq!(c.problems[0].field, "trace.rays");
    assert!(
        c.problems[0]
            .message
            .contains("must be a whole number from 1 to 10⁹, got 0"),
        "{}",
        c.problems[0].message
    );
}

#[test]
fn csv_names_that_look_like_formulas_stay_text() {
    let text = with(THERMOSTAT, |d| {
        d["guide"]["contacts"][0]["name"] = json!("=HYPERLINK(\"x\")");
    });
    let mut scenario = Scenario::from_json(&text).unwrap();
    scenario.trace.rays = 4_096;
    let prepared = Prepared::new(&scenario).unwrap();
    let csv = report_csv(&prepared.report(&prepared.trace_all_serial(0)), "+1 cell");
    let contact = csv
        .trim_end()
        .split("\n\n")
        // Header, budget, absolute figures, segments, then the mounts.
        .nth(4)
        .unwrap()
        .lines()
        .nth(1)
        .unwrap();
    assert!(
        contact.starts_with("\"'=HYPERLINK(\"\"x\"\")\",3,"),
        "{contact}"
    );
    // The design's name too.
    assert!(csv.contains("design,\"'+1 cell\"\n"), "{csv}");
}
