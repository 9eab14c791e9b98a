//! The rectangular emitting area: sampled uniformly over width × height along the emitter's own
//! axes, checked by the share of the light that misses a rectangular entry face it overhangs.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use serde_json::{json, Value};
use tirtrace::outline::route_outline;
use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, TraceReport};

fn scenario(area: Value, toward_deg: f64) -> Scenario {
    let v = json!({
        "version": 1,
        "guide": { "section": { "rectangular": { "width_mm": 1.0, "height_mm": 2.0 } },
                   "material": { "library": "pmma" }, "surroundings": { "library": "air" } },
        "route": [ { "straight": { "length_mm": 5 } } ],
        "source": { "emitter": { "led": { "area": area, "pattern": "lambertian" } },
                    "wavelength_nm": 590, "gap_mm": 0.0,
                    "tilt_deg": 0.0, "tilt_toward_deg": toward_deg },
        "trace": { "rays": 40960, "seed": 5 }
    });
    Scenario::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{e}"))
}

fn run(s: &Scenario) -> TraceReport {
    let p = Prepared::new(s).unwrap_or_else(|e| panic!("{e}"));
    p.report(&p.trace_all_serial(0))
}

#[test]
fn a_rectangular_chip_on_the_face_misses_what_overhangs_it() {
    // Geometry alone (no source needed): with no gap every ray starts on the entry plane, so the
    // share that misses the 1 × 2 mm face is the share of the chip's area outside it.
    let chip = json!({ "rectangle": { "width_mm": 1.6, "height_mm": 0.8 } });
    // Width across the face's 1 mm width: 1.0 × 0.8 of 1.6 × 0.8 lands, 0.375 misses.
    let across = run(&scenario(chip.clone(), 0.0));
    let m = across.budget.missed_entry;
    assert!(
        (m.share - 0.375).abs() < m.ci95 + 1e-12 && m.ci95 < 0.01,
        "{m:?} against 0.375"
    );
    // Turned a quarter turn in its plane (tilt_toward_deg = 90 with no tilt turns the emitter's
    // axes about the entry axis): the 1.6 mm width lies along the 2 mm height, nothing misses.
    let along = run(&scenario(chip, 90.0));
    assert_eq!(along.budget.missed_entry.share, 0.0);
    // A square of the same area (side √1.28) misses (√1.28 − 1)/√1.28 of its width.
    let side = 1.28f64.sqrt();
    let square = run(&scenario(json!({ "square": { "side_mm": side } }), 0.0));
    let m = square.budget.missed_entry;
    let want = (side - 1.0) / side;
    assert!((m.share - want).abs() < m.ci95, "{m:?} against {want}");
}

#[test]
fn a_rectangular_chip_is_outlined_to_scale_along_its_axes() {
    let chip = json!({ "rectangle": { "width_mm": 1.6, "height_mm": 0.8 } });
    let o = route_outline(&scenario(chip.clone(), 90.0)).unwrap();
    assert_eq!(
        (o.source_half_width_mm, o.source_half_height_mm),
        (0.8, 0.4)
    );
    assert_eq!(o.source_half_size_mm, 0.8);
    assert!(!o.source_round);
    // Turned a quarter turn: the width axis is the entry's y axis.
    let w = o.source_width_axis;
    assert!(
        w[0].abs() < 1e-15 && (w[1] - 1.0).abs() < 1e-15 && w[2] == 0.0,
        "{w:?}"
    );
    // The bounds hold the chip: 0.8 mm each way along y from the centre.
    assert!(o.bounds.min[1] <= -0.8 && o.bounds.max[1] >= 0.8);
}

#[test]
fn a_rectangular_chip_of_no_size_is_refused_by_name() {
    let v = json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": 3 } }, "material": { "library": "pmma" }, "surroundings": { "library": "air" } },
        "route": [ { "straight": { "length_mm": 5 } } ],
        "source": { "emitter": { "led": { "area": { "rectangle": { "width_mm": 1.6, "height_mm": 0 } },
                                          "pattern": "lambertian" } },
                    "wavelength_nm": 590, "gap_mm": 0.2 },
        "trace": { "rays": 4096, "seed": 5 }
    });
    let s = Scenario::from_json(&v.to_string()).unwrap();
    let problems = s.check().unwrap_err();
    assert_eq!(problems.len(), 1, "{problems:?}");
    let text = problems[0].to_string();
    assert!(
        text.starts_with("source.emitter.led.area.rectangle.height_mm must be at least 0.001 mm"),
        "{text}"
    );
}
