//! The quick-look design document: validation messages, figures, the ray fan and the chart.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use plotters::prelude::*;
use tirtrace::fan::{bend_fan, FanFate};
use tirtrace::index::library::MaterialChoice;
use tirtrace::quick::QuickDesign;

fn only_problem(d: &QuickDesign) -> (String, String) {
    let p = d.problems();
    assert_eq!(p.len(), 1, "{p:?}");
    (p[0].field.clone(), p[0].message.clone())
}

#[test]
fn default_design_is_valid_and_round_trips() {
    let d = QuickDesign::default();
    assert!(d.problems().is_empty());
    let text = serde_json::to_string(&d).unwrap();
    assert_eq!(QuickDesign::from_json(&text).unwrap(), d);
}

#[test]
fn every_bad_number_names_its_field_and_range() {
    // (mutation, field, words the message must hold)
    type Case = (fn(&mut QuickDesign), &'static str, &'static str);
    let cases: [Case; 11] = [
        (
            |d| d.diameter_mm = -3.0,
            "diameter_mm",
            "must be at least 0.001 mm",
        ),
        (|d| d.diameter_mm = 0.0, "diameter_mm", "got 0"),
        (|d| d.diameter_mm = f64::NAN, "diameter_mm", "not a number"),
        (|d| d.diameter_mm = f64::INFINITY, "diameter_mm", "infinite"),
        (
            |d| d.wavelength_nm = 100.0,
            "wavelength_nm",
            "must be at least 200 nm",
        ),
        (
            |d| d.launch_half_angle_deg = 95.0,
            "launch_half_angle_deg",
            "must be at most 90°",
        ),
        (
            |d| d.launch_half_angle_deg = -1.0,
            "launch_half_angle_deg",
            "must be at least 0°",
        ),
        (
            |d| d.bend_inner_radius_mm = 0.0,
            "bend_inner_radius_mm",
            "must be at least 0.001 mm",
        ),
        (
            |d| d.bend_angle_deg = 200.0,
            "bend_angle_deg",
            "must be at most 180°",
        ),
        (
            |d| d.material = MaterialChoice::constant(0.0),
            "material.custom.n",
            "must be at least 1",
        ),
        (
            |d| d.wavelength_nm = 405.0,
            "material.library",
            "420–1620 nm",
        ),
    ];
    for (mutate, field, words) in cases {
        let mut d = QuickDesign::default();
        mutate(&mut d);
        let (f, m) = only_problem(&d);
        assert_eq!(f, field);
        assert!(m.contains(words), "{field}: '{m}' lacks '{words}'");
        // figures() refuses with the same message instead of producing NaN.
        let e = d.figures().unwrap_err().to_string();
        assert!(e.contains(field), "{e}");
    }
}

#[test]
fn all_problems_are_reported_at_once() {
    let d = QuickDesign {
        diameter_mm: -1.0,
        bend_angle_deg: f64::NAN,
        ..QuickDesign::default()
    };
    let fields: Vec<_> = d.problems().into_iter().map(|p| p.field).collect();
    assert_eq!(fields, ["diameter_mm", "bend_angle_deg"]);
}

#[test]
fn another_version_is_refused() {
    let d = QuickDesign {
        version: 2,
        ..QuickDesign::default()
    };
    let (f, m) = only_problem(&d);
    assert_eq!(f, "version");
    assert_eq!(m, "must be 1 (this version of tirtrace), got 2");
}

#[test]
fn surroundings_denser_than_the_guide_is_refused() {
    let d = QuickDesign {
        material: MaterialChoice::constant(1.40),
        surroundings: MaterialChoice::library("water"),
        ..QuickDesign::default()
    };
    assert!(d.problems().is_empty());
    let d = QuickDesign {
        material: MaterialChoice::constant(1.30),
        ..d
    };
    let (f, m) = only_problem(&d);
    assert_eq!(f, "surroundings");
    assert!(m.contains("lower index than the guide"), "{m}");
}

#[test]
fn unknown_fields_and_wrong_types_are_refused() {
    let mut v = serde_json::to_value(QuickDesign::default()).unwrap();
    v["colour"] = serde_json::json!("red");
    let e = QuickDesign::from_json(&v.to_string())
        .unwrap_err()
        .to_string();
    assert!(e.contains("colour"), "{e}");
    let mut v = serde_json::to_value(QuickDesign::default()).unwrap();
    v["diameter_mm"] = serde_json::json!("three");
    assert!(QuickDesign::from_json(&v.to_string()).is_err());
}

#[test]
fn figures_of_an_acrylic_pipe_in_air() {
    // PMMA at 587.56 nm: n = 1.49253 (Beadie et al., Appl. Opt. 54, F139 (2015), computed,
    // docs/REFERENCES.md §1); critical angle asin(1/n); normal-incidence Fresnel ((n−1)/(n+1))².
    let d = QuickDesign {
        wavelength_nm: 587.56,
        launch_half_angle_deg: 0.0,
        ..QuickDesign::default()
    };
    let f = d.figures().unwrap();
    assert!((f.n_core - 1.49253).abs() < 6e-6);
    assert!((f.critical_angle_deg - (1.0 / f.n_core).asin().to_degrees()).abs() < 1e-12);
    assert!((f.critical_angle_deg - 42.07).abs() < 0.01);
    assert!((f.entry_fresnel_loss - ((f.n_core - 1.0) / (f.n_core + 1.0)).powi(2)).abs() < 1e-15);
    assert!(f.acceptance_saturated);
    assert_eq!(f.acceptance_half_angle_deg, 90.0);
    assert_eq!(f.lambertian_coupling, 1.0);
    // Axial launch: R_in = d/(n − 1) (docs/REFERENCES.md §4).
    let r = f.leak_free_ratio.unwrap();
    assert!((r - 1.0 / (f.n_core - 1.0)).abs() < 1e-12);
    assert!((f.leak_free_inner_radius_mm.unwrap() - r * d.diameter_mm).abs() < 1e-12);
    assert_eq!(f.bend_ratio, 2.0);
    assert!(f.bend_leaks, "R/d 2.0 is below the axial limit 2.03");
}

#[test]
fn clad_fibre_overfilled_has_no_leak_free_radius() {
    let d = QuickDesign {
        material: MaterialChoice::constant(1.492),
        surroundings: MaterialChoice::constant(1.402),
        launch_half_angle_deg: 60.0,
        diameter_mm: 1.0,
        bend_inner_radius_mm: 50.0,
        ..QuickDesign::default()
    };
    let f = d.figures().unwrap();
    assert_eq!(f.leak_free_ratio, None);
    assert_eq!(f.leak_free_inner_radius_mm, None);
    assert!(f.bend_leaks);
    assert!(f.leak_free_note.contains("no leak-free radius exists"));
    // NA 0.5104 → acceptance 30.69° in air (docs/REFERENCES.md §3).
    assert!((f.acceptance_half_angle_deg - 30.69).abs() < 5e-3);
    assert!(!f.acceptance_saturated);
}

fn escaped(d: &QuickDesign, rays: usize) -> usize {
    let ix = d.check().unwrap();
    bend_fan(d, ix, rays)
        .rays
        .iter()
        .filter(|r| r.fate == FanFate::Escaped)
        .count()
}

#[test]
fn ray_fan_obeys_the_meridional_bend_criterion() {
    // The 2D fan is exactly the meridional case of the criterion (docs/REFERENCES.md §4): no ray
    // escapes at 1.01× the leak-free radius (3001 rays), and at 0.99× even the page's 25-ray
    // fan shows escaping light, because its edge rays are aimed at the worst case.
    for (material, launch) in [
        ("pmma", 0.0),
        ("pmma", 30.0),
        ("polycarbonate", 60.0),
        ("fused_silica", 90.0),
    ] {
        let base = QuickDesign {
            material: MaterialChoice::library(material),
            launch_half_angle_deg: launch,
            bend_angle_deg: 180.0,
            ..QuickDesign::default()
        };
        let r = base.figures().unwrap().leak_free_ratio.unwrap();
        let at = |k: f64| QuickDesign {
            bend_inner_radius_mm: k * r * base.diameter_mm,
            ..base.clone()
        };
        assert_eq!(escaped(&at(1.01), 3001), 0, "{material} {launch}° at 1.01×");
        assert!(escaped(&at(0.99), 25) > 0, "{material} {launch}° at 0.99×");
    }
}

#[test]
fn ray_fan_geometry() {
    let d = QuickDesign::default();
    let fan = bend_fan(&d, d.check().unwrap(), 50);
    assert_eq!(fan.rays.len(), 50);
    assert_eq!(fan.walls.len(), 4);
    let (lo, hi) = fan.bounds;
    for r in &fan.rays {
        // Every ray starts on the entry face, inside the guide.
        assert_eq!(r.points[0].x, 0.0);
        assert!(r.points[0].y > 0.0 && r.points[0].y < d.diameter_mm);
        for p in &r.points {
            assert!(p.cmpge(lo).all() && p.cmple(hi).all());
        }
    }
    // With a launch that fills the guide and a generous bend, most rays get through.
    let guided = fan
        .rays
        .iter()
        .filter(|r| r.fate == FanFate::Guided)
        .count();
    assert!(guided > 0);
}

#[test]
fn bend_chart_curve_and_drawing() {
    let d = QuickDesign::default();
    let curve = tirtrace::chart::bend_curve(&d).unwrap();
    // A wider launch cone never allows a tighter bend.
    assert!(curve.windows(2).all(|w| w[1].1 >= w[0].1));
    assert_eq!(
        curve.len(),
        181,
        "PMMA in air has a leak-free radius at every launch angle"
    );
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (640, 400)).into_drawing_area();
        tirtrace::chart::draw_bend_chart(&area, &d, 1.0).unwrap();
    }
    assert!(svg.contains("leak-free inner radius / diameter"));
    assert!(svg.contains("<polyline") || svg.contains("<path"));
    // Invalid designs give the field error, not a drawing.
    let bad = QuickDesign {
        diameter_mm: -1.0,
        ..d
    };
    let mut svg = String::new();
    let area = SVGBackend::with_string(&mut svg, (640, 400)).into_drawing_area();
    let e = tirtrace::chart::draw_bend_chart(&area, &bad, 2.0).unwrap_err();
    assert!(e.to_string().contains("diameter_mm"));
}

/// The launch angle can be an LED's half-intensity angle: the figures are for the rays inside
/// it, and they say how much of the LED's power that cone holds. A Lambertian LED (half
/// intensity at 60°) puts sin² 60° = 75 % of its power inside 60° (the power of a Lambertian
/// emitter within θ is sin² θ: standard radiometry, e.g. McCluney, Introduction to Radiometry
/// and Photometry, 1994 — from memory).
#[test]
fn a_half_intensity_launch_says_how_much_power_its_cone_holds() {
    use tirtrace::quick::LaunchAngle;
    let cone = QuickDesign::default();
    assert_eq!(cone.launch_angle_is, LaunchAngle::ConeEdge);
    assert_eq!(cone.figures().unwrap().launch_power_in_cone, 1.0);
    let led = QuickDesign {
        launch_angle_is: LaunchAngle::HalfIntensity,
        launch_half_angle_deg: 60.0,
        ..QuickDesign::default()
    };
    let f = led.figures().unwrap();
    assert!(
        (f.launch_power_in_cone - 0.75).abs() < 1e-12,
        "{}",
        f.launch_power_in_cone
    );
    assert!(
        f.leak_free_note.contains("half-intensity angle"),
        "{}",
        f.leak_free_note
    );
    // The same cone as a hard edge gives the same leak-free radius: only the reading differs.
    assert_eq!(
        f.leak_free_inner_radius_mm,
        cone.figures().unwrap().leak_free_inner_radius_mm
    );
    // Since cos^m θ½ = 1/2, the share is 1 − cos^(m+1) θ½ = 1 − cos θ½ / 2: a narrow LED holds
    // only a little over half its power inside its half-intensity angle.
    let narrow = QuickDesign {
        launch_half_angle_deg: 15.0,
        ..led.clone()
    };
    let share = narrow.figures().unwrap().launch_power_in_cone;
    assert!(
        (share - (1.0 - 0.5 * 15f64.to_radians().cos())).abs() < 1e-12,
        "{share}"
    );
    // Its range is the half-intensity range of the designer (0.5° to 89.5°).
    let wide = QuickDesign {
        launch_half_angle_deg: 90.0,
        ..led
    };
    let (field, message) = only_problem(&wide);
    assert_eq!(field, "launch_half_angle_deg");
    assert_eq!(message, "must be at most 89.5°, got 90");
    // Read from a document, and the old documents (no launch_angle_is) read as a hard cone.
    let text = serde_json::to_string(&QuickDesign::default())
        .unwrap()
        .replace(",\"launch_angle_is\":\"cone_edge\"", "");
    assert!(!text.contains("launch_angle_is"));
    assert_eq!(
        QuickDesign::from_json(&text).unwrap(),
        QuickDesign::default()
    );
}

/// A bend of a designer's scenario opens in the quick look with the bend's own numbers, and the
/// two pages' closed forms agree on it for the same launch.
#[test]
fn a_bend_of_a_scenario_opens_in_the_quick_look() {
    use tirtrace::quick::{for_bend, LaunchAngle};
    use tirtrace::scenario::Scenario;
    let text = include_str!("../examples/scenarios/thermostat_status_led.json");
    let scenario = Scenario::from_json(text).unwrap();
    let figures = tirtrace::check::figures(&scenario).unwrap();
    let bend = &figures.bends[0];
    let q = for_bend(&scenario, bend.segment).unwrap();
    assert!(q.problems().is_empty(), "{:?}", q.problems());
    assert_eq!(q.diameter_mm, bend.size_across_mm);
    assert_eq!(
        q.bend_inner_radius_mm,
        bend.centre_radius_mm - bend.size_across_mm / 2.0
    );
    assert_eq!(q.bend_angle_deg, bend.angle_deg);
    assert_eq!(q.wavelength_nm, scenario.source.wavelength_nm);
    // A Lambertian LED: its half-intensity angle, 60°.
    assert_eq!(
        (q.launch_angle_is, q.launch_half_angle_deg),
        (LaunchAngle::HalfIntensity, 60.0)
    );
    // Given the designer's launch (an LED reaches 90°), the quick look's leak-free radius is
    // the designer's, to rounding.
    let hard = QuickDesign {
        launch_angle_is: LaunchAngle::ConeEdge,
        launch_half_angle_deg: figures.launch_half_angle_in_gap_deg,
        ..q.clone()
    };
    let quick = hard.figures().unwrap().leak_free_inner_radius_mm.unwrap();
    let designer = bend.leak_free_inner_radius_mm.unwrap();
    assert!((quick - designer).abs() < 1e-9, "{quick} vs {designer}");
    // Not a bend: said so.
    let e = for_bend(&scenario, 0).unwrap_err();
    assert!(
        e[0].to_string()
            .contains("must be a bend of the route, got segment 1"),
        "{e:?}"
    );
}
