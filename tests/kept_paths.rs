//! Kept ray paths have a bounded size: a ray that meets the wall hundreds of thousands of times
//! (a thin fibre metres long) keeps its first vertices only and is marked cut short, all kept
//! paths together stay under their total, and keeping paths changes nothing else in a trace.
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use serde_json::json;
use tirtrace::limits::{PATHS, PATH_POINTS, PATH_POINTS_TOTAL};
use tirtrace::scenario::Scenario;
use tirtrace::trace::{path_points_each, Fate, Prepared};

/// A bare 0.1 mm acrylic fibre `length_mm` long fed by a small Lambertian LED: a ray at 30°
/// inside meets the wall some six times a millimetre.
fn thin_fibre(length_mm: f64, rays: u64) -> Prepared {
    let doc = json!({
        "version": 1,
        "name": "thin fibre",
        "guide": {"section": {"round": {"diameter_mm": 0.1}}, "material": {"library": "pmma"},
                  "surroundings": {"library": "air"}, "attenuation_db_per_m": 0},
        "route": [{"straight": {"length_mm": length_mm}}],
        "source": {"emitter": {"led": {"area": {"disk": {"diameter_mm": 0.05}}, "pattern": "lambertian"}},
                   "wavelength_nm": 650, "gap_mm": 0.01},
        "trace": {"rays": rays, "seed": 7, "max_interactions": 10_000_000}
    });
    let scenario = Scenario::from_json(&doc.to_string()).unwrap();
    assert!(scenario.problems().is_empty(), "{:?}", scenario.problems());
    Prepared::new(&scenario).unwrap()
}

#[test]
fn a_long_path_keeps_its_first_vertices_and_says_it_was_cut_short() {
    let p = thin_fibre(2000.0, 8);
    let batch = p.trace_batch(0, 8);
    assert_eq!(batch.paths.len(), 8);
    assert_eq!(path_points_each(8), PATH_POINTS);
    let cut: Vec<_> = batch.paths.iter().filter(|path| path.cut_short).collect();
    assert!(!cut.is_empty(), "no path of a 2 m thin fibre was cut short");
    for path in &batch.paths {
        if path.cut_short {
            assert_eq!(path.points.len(), PATH_POINTS);
        } else {
            assert!(path.points.len() < PATH_POINTS, "{}", path.points.len());
        }
    }
    // Every ray still goes to its end: nothing is stopped by the cap on what is kept.
    assert!(batch.paths.iter().all(|path| path.fate != Fate::Stopped));
    // A path keeps the same vertices however many others are kept (up to 1000 paths).
    let one = thin_fibre(2000.0, 8).trace_batch(0, 1);
    assert_eq!(one.paths[0], batch.paths[0]);
    // Keeping paths changes nothing else in the batch.
    let mut without = batch.clone();
    without.paths.clear();
    assert_eq!(without, p.trace_batch(0, 0));
}

#[test]
fn all_kept_paths_together_stay_under_their_total() {
    // 400 kept paths: each holds at most 250 000 / 400 = 625 vertices.
    let kept = 400;
    let each = path_points_each(kept);
    assert_eq!(each, PATH_POINTS_TOTAL / kept);
    assert!(each < PATH_POINTS);
    let p = thin_fibre(500.0, kept as u64);
    let batch = p.trace_batch(0, kept);
    assert_eq!(batch.paths.len(), kept);
    let total: usize = batch.paths.iter().map(|path| path.points.len()).sum();
    assert!(total <= PATH_POINTS_TOTAL, "{total} vertices kept");
    assert!(batch.paths.iter().all(|path| path.points.len() <= each));
    assert!(batch.paths.iter().any(|path| path.cut_short));
    // The most paths the command line keeps still draw more than a few wall hits each.
    assert!(path_points_each(PATHS.max as usize) >= 50);
    // Asking for more paths than batch 0 has rays keeps as much of each as asking for those.
    let few = thin_fibre(2000.0, 3);
    assert_eq!(few.trace_batch(0, 4096), few.trace_batch(0, 3));
}
