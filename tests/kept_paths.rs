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

/// A 3 mm acrylic rod bent tightly (5 mm radius, where much light meets the outer wall below
/// the critical angle), white paint on the bend's back, then a straight.
fn painted_bend() -> Prepared {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}}, "material": {"library": "pmma"},
                  "surroundings": {"library": "air"},
                  "coatings": [{"name": "paint", "kind": {"white_paint": {"reflectance": 0.9}},
                                "segment": 1, "from_mm": 4.0, "to_mm": 7.8,
                                "sector_from_deg": 150, "sector_to_deg": 210}]},
        "route": [{"straight": {"length_mm": 3.0}},
                  {"bend": {"radius_mm": 5.0, "angle_deg": 90, "turn_deg": 0}},
                  {"straight": {"length_mm": 6.0}}],
        "source": {"emitter": {"led": {"area": {"square": {"side_mm": 1.0}}, "pattern": "lambertian"}},
                   "wavelength_nm": 590, "gap_mm": 0.2},
        "trace": {"rays": 4096, "seed": 3}
    });
    Prepared::new(&Scenario::from_json(&doc.to_string()).unwrap()).unwrap()
}

/// A kept path says where parts of its weight left while the ray went on (a wall's Fresnel
/// reflection below the critical angle, or a coating's, splits the weight): at one of its wall
/// hits, before its end, each part lighter than what the ray had. Drawn whole, no ray parts.
#[test]
fn a_kept_path_says_where_parts_of_its_weight_left() {
    let p = painted_bend();
    let batch = p.trace_batch(0, 400);
    let mut fates = Vec::new();
    for path in &batch.paths {
        let mut left = 0.0;
        let mut last_vertex = 0;
        for part in &path.parts_left {
            let v = part.vertex as usize;
            // Not the emitter, not the entry point, not past the path's last point (each part
            // here leaves at a wall hit the ray goes on from, well within the 625 points kept).
            assert!(
                v >= 2 && v + 1 < path.points.len(),
                "{v} of {}",
                path.points.len()
            );
            assert!(
                v >= last_vertex,
                "parts out of order: {:?}",
                path.parts_left
            );
            last_vertex = v;
            assert!(
                part.weight > 0.0 && part.weight < 1.0 - left,
                "{part:?} after {left}"
            );
            left += part.weight;
            // On the wall of the route.
            let on_wall = p.route.segments.iter().any(|placed| {
                let local = placed
                    .frame
                    .point_to_local(glam::DVec3::from(path.points[v]));
                placed.outside_mm(local).abs() < 1e-6
            });
            assert!(on_wall, "{:?} is not on the wall", path.points[v]);
            if part.fate == Fate::Leaked {
                // A part leaks only where the ray meets the wall below the critical angle: the
                // wall's normal bisects the turn from the incoming to the outgoing leg.
                let at = |k: usize| glam::DVec3::from(path.points[k]);
                let d_in = (at(v) - at(v - 1)).normalize();
                let d_out = (at(v + 1) - at(v)).normalize();
                let normal = (d_in - d_out).normalize();
                let cos_i = d_in.dot(normal);
                let sin_critical = p.indices.n_out / p.indices.n_core;
                let sin2_critical = sin_critical * sin_critical;
                assert!(
                    1.0 - cos_i * cos_i < sin2_critical + 1e-9,
                    "a part leaked at vertex {v}, met at sin²θ = {} above the critical {}",
                    1.0 - cos_i * cos_i,
                    sin2_critical
                );
            }
            fates.push((path.fate, part.fate));
        }
    }
    // Delivered rays that left a part through the side on their way, and parts the paint took.
    assert!(
        fates.contains(&(Fate::Delivered, Fate::Leaked)),
        "{fates:?}"
    );
    assert!(
        fates.iter().any(|&(_, part)| part == Fate::Coating),
        "{fates:?}"
    );
    assert!(fates
        .iter()
        .all(|&(_, part)| part == Fate::Leaked || part == Fate::Coating));
    let whole = painted_bend()
        .drawing_wall_reflections_whole()
        .trace_batch(0, 400);
    assert!(whole.paths.iter().all(|path| path.parts_left.is_empty()));
}
