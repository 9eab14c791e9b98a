//! The route outline the page draws: segments join with no gap or kink, bend samples lie on the
//! bend's centre-line circle at the scenario's radius and turn the way `turn_deg` says, the arc
//! length increases to the route's length, the section's axes stay orthonormal, the outline ends
//! on the exit face, and the bounds hold it all — on every example scenario and on random valid
//! routes. Expected values are derived here from the scenario document (plane geometry), not
//! taken from the placement code.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

mod common;
use common::{random_route, RandomRoute, Rng, RouteDraws};

use glam::DVec3;
use serde_json::json;
use tirtrace::outline::{
    route_outline, OutlinePoint, RouteOutline, MAX_BEND_STEP_DEG, MIN_BEND_POINTS,
};
use tirtrace::scenario::{Scenario, Section, Segment, SegmentKind};

/// Every example scenario (compiled in, so the wasm run checks them too).
const EXAMPLES: [(&str, &str); 11] = [
    (
        "bench_three_bends.json",
        include_str!("../examples/scenarios/bench_three_bends.json"),
    ),
    (
        "bike_light_charge_indicator.json",
        include_str!("../examples/scenarios/bike_light_charge_indicator.json"),
    ),
    (
        "board_corner_indicator.json",
        include_str!("../examples/scenarios/board_corner_indicator.json"),
    ),
    (
        "clad_plastic_fibre.json",
        include_str!("../examples/scenarios/clad_plastic_fibre.json"),
    ),
    (
        "diffused_status_window.json",
        include_str!("../examples/scenarios/diffused_status_window.json"),
    ),
    (
        "kettle_base_led_in_pocket.json",
        include_str!("../examples/scenarios/kettle_base_led_in_pocket.json"),
    ),
    (
        "panel_indicator_domed_lens.json",
        include_str!("../examples/scenarios/panel_indicator_domed_lens.json"),
    ),
    (
        "panel_status_bar_rectangular_chip.json",
        include_str!("../examples/scenarios/panel_status_bar_rectangular_chip.json"),
    ),
    (
        "right_angle_pipe_mirrored_bend.json",
        include_str!("../examples/scenarios/right_angle_pipe_mirrored_bend.json"),
    ),
    (
        "soil_sensor_ambient_light_window.json",
        include_str!("../examples/scenarios/soil_sensor_ambient_light_window.json"),
    ),
    (
        "thermostat_status_led.json",
        include_str!("../examples/scenarios/thermostat_status_led.json"),
    ),
];

/// Joins and frames agree to this, mm (or as a component of a unit vector).
const JOIN_TOL: f64 = 1e-9;

fn v(a: [f64; 3]) -> DVec3 {
    DVec3::from(a)
}

fn close(a: DVec3, b: DVec3, tol: f64) -> bool {
    (a - b).length() <= tol
}

/// The direction of travel at a sample: width × height.
fn tangent(p: &OutlinePoint) -> DVec3 {
    v(p.width_axis).cross(v(p.height_axis))
}

/// The angle between two vectors, accurate for small and large angles alike.
fn angle(a: DVec3, b: DVec3) -> f64 {
    a.cross(b).length().atan2(a.dot(b))
}

/// Centre of the circle through three points.
fn circumcentre(a: DVec3, b: DVec3, c: DVec3) -> DVec3 {
    let (ab, ac) = (b - a, c - a);
    let n = ab.cross(ac);
    a + (ac.length_squared() * n.cross(ab) + ab.length_squared() * ac.cross(n))
        / (2.0 * n.length_squared())
}

/// Check every property of an outline against its scenario; `what` names the case.
fn check_outline(what: &str, scenario: &Scenario, o: &RouteOutline) {
    let route = &scenario.route;
    assert_eq!(o.segments.len(), route.len(), "{what}");
    let mut at_section = scenario.guide.section;
    let total: f64 = route
        .iter()
        .map(|seg| {
            let length = seg.length_mm(at_section);
            at_section = seg.section_after(at_section);
            length
        })
        .sum();
    assert!(
        (o.length_mm - total).abs() <= 1e-9 * total.max(1.0),
        "{what}"
    );

    // The entry frame is the global frame, and the first sample sits on it.
    let first = &o.segments[0].points[0];
    assert_eq!(o.entry.origin, [0.0; 3], "{what}");
    assert_eq!(
        (o.entry.x, o.entry.y, o.entry.z),
        ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0])
    );
    assert!(close(v(first.centre), DVec3::ZERO, JOIN_TOL), "{what}");
    assert!(close(v(first.width_axis), DVec3::X, JOIN_TOL), "{what}");
    assert!(close(v(first.height_axis), DVec3::Y, JOIN_TOL), "{what}");
    assert_eq!(first.s_mm, 0.0, "{what}");

    // The section, followed through tapers (from the document).
    let mut section = scenario.guide.section;
    let mut s_start = 0.0;
    for (i, (seg, doc)) in o.segments.iter().zip(route).enumerate() {
        let at = format!("{what}: segment {i}");
        assert_eq!(seg.index, i, "{at}");
        assert_eq!(seg.round, matches!(section, Section::Round { .. }), "{at}");
        assert!(
            (seg.s_start_mm - s_start).abs() <= 1e-9 * s_start.max(1.0),
            "{at}"
        );
        let doc_length_mm = doc.length_mm(section);
        assert!((seg.length_mm - doc_length_mm).abs() <= 1e-12 * doc_length_mm.max(1.0));
        let pts = &seg.points;
        assert!(pts.len() >= 2, "{at}");
        assert_eq!(pts[0].s_mm, seg.s_start_mm, "{at}");
        assert!(
            (pts[pts.len() - 1].s_mm - (seg.s_start_mm + seg.length_mm)).abs() <= 1e-12 * total,
            "{at}"
        );
        let (hw, hh) = section.half_sizes_mm();
        for (k, p) in pts.iter().enumerate() {
            // Orthonormal section axes.
            let (w, h) = (v(p.width_axis), v(p.height_axis));
            assert!((w.length() - 1.0).abs() <= 1e-12, "{at} point {k}");
            assert!((h.length() - 1.0).abs() <= 1e-12, "{at} point {k}");
            assert!(w.dot(h).abs() <= 1e-12, "{at} point {k}");
            assert!(p.half_width_mm > 0.0 && p.half_height_mm > 0.0, "{at}");
            if k > 0 {
                assert!(p.s_mm > pts[k - 1].s_mm, "{at}: s must increase");
            }
        }
        match *doc {
            Segment::Straight { length_mm } => {
                assert_eq!(seg.kind, SegmentKind::Straight, "{at}");
                assert_eq!(pts.len(), 2, "{at}");
                // The chord runs along the direction of travel, as long as the segment.
                let chord = v(pts[1].centre) - v(pts[0].centre);
                assert!(close(chord, length_mm * tangent(&pts[0]), 1e-9 * length_mm));
                for p in pts {
                    assert_eq!((p.half_width_mm, p.half_height_mm), (hw, hh), "{at}");
                }
            }
            Segment::Taper {
                length_mm,
                end_section,
            } => {
                assert_eq!(seg.kind, SegmentKind::Taper, "{at}");
                let chord = v(pts[pts.len() - 1].centre) - v(pts[0].centre);
                assert!(close(chord, length_mm * tangent(&pts[0]), 1e-9 * length_mm));
                let (hw1, hh1) = end_section.half_sizes_mm();
                let (a, b) = (&pts[0], &pts[pts.len() - 1]);
                assert_eq!((a.half_width_mm, a.half_height_mm), (hw, hh), "{at}");
                assert!((b.half_width_mm - hw1).abs() <= 1e-12 * hw1, "{at}");
                assert!((b.half_height_mm - hh1).abs() <= 1e-12 * hh1, "{at}");
                section = end_section;
            }
            Segment::Bend {
                radius_mm,
                angle_deg,
                turn_deg,
            } => {
                assert_eq!(seg.kind, SegmentKind::Bend, "{at}");
                assert!(pts.len() >= MIN_BEND_POINTS, "{at}: {} points", pts.len());
                let tol = 1e-9 * radius_mm.max(1.0);
                // The centre: the circle through the first, a quarter-way and the last samples.
                let c = circumcentre(
                    v(pts[0].centre),
                    v(pts[pts.len() / 4].centre),
                    v(pts[pts.len() - 1].centre),
                );
                let a = v(pts[0].centre);
                // It lies at the radius towards the turn direction: from the width axis towards
                // the height axis by turn_deg.
                let psi = turn_deg.to_radians();
                let toward = psi.cos() * v(pts[0].width_axis) + psi.sin() * v(pts[0].height_axis);
                assert!(
                    close(c, a + radius_mm * toward, tol),
                    "{at}: centre {c} from {a}"
                );
                let plane = tangent(&pts[0]).cross(toward);
                for (k, p) in pts.iter().enumerate() {
                    let q = v(p.centre);
                    // On the circle of the document's radius, in the bend's plane.
                    assert!(
                        ((q - c).length() - radius_mm).abs() <= tol,
                        "{at} point {k}"
                    );
                    assert!((q - c).dot(plane).abs() <= tol, "{at} point {k}");
                    // Heading along the circle.
                    assert!(tangent(p).dot(q - c).abs() <= 1e-9, "{at} point {k}");
                    // The section keeps its size.
                    assert_eq!((p.half_width_mm, p.half_height_mm), (hw, hh), "{at}");
                    if k > 0 {
                        // s grows by the arc between the samples, at most 3° of turn.
                        let r0 = v(pts[k - 1].centre) - c;
                        let r1 = q - c;
                        let turn = angle(r0, r1);
                        assert!(
                            (p.s_mm - pts[k - 1].s_mm - radius_mm * turn).abs() <= 1e-7,
                            "{at} point {k}"
                        );
                        assert!(turn.to_degrees() <= MAX_BEND_STEP_DEG + 1e-9, "{at}");
                    }
                    // The section's axes turn with the guide: the same turn direction, taken
                    // from this sample's axes, still points at the centre.
                    let toward_here = psi.cos() * v(p.width_axis) + psi.sin() * v(p.height_axis);
                    assert!(close(c - q, radius_mm * toward_here, tol), "{at} point {k}");
                }
                // The whole angle is turned.
                let turned = angle(tangent(&pts[0]), tangent(&pts[pts.len() - 1]));
                let expect = angle_deg.to_radians();
                assert!(
                    (turned - expect).abs() <= 1e-9,
                    "{at}: {turned} vs {expect}"
                );
            }
            Segment::Corner {
                angle_deg,
                turn_deg,
                ..
            } => {
                assert_eq!(seg.kind, SegmentKind::Corner, "{at}");
                assert_eq!(pts.len(), 3, "{at}");
                // Two legs of equal length meeting at the face, each half the segment.
                let leg = 0.5 * doc_length_mm;
                let tol = 1e-9 * leg.max(1.0);
                let (a, m, b) = (v(pts[0].centre), v(pts[1].centre), v(pts[2].centre));
                assert!(close(m - a, leg * tangent(&pts[0]), tol), "{at}");
                assert!(close(b - m, leg * tangent(&pts[2]), tol), "{at}");
                // The outgoing axis is turned by the angle towards the turn direction.
                let psi = turn_deg.to_radians();
                let toward = psi.cos() * v(pts[0].width_axis) + psi.sin() * v(pts[0].height_axis);
                let th = angle_deg.to_radians();
                let out = th.cos() * tangent(&pts[0]) + th.sin() * toward;
                assert!(close(tangent(&pts[2]), out, 1e-9), "{at}");
                // The face: the section stretched across the turn by 1/sin(θ/2), square to the
                // bisecting normal (incoming − outgoing axis).
                let normal = (tangent(&pts[0]) - out).normalize();
                let (fw, fh) = (v(pts[1].width_axis), v(pts[1].height_axis));
                assert!(
                    fw.dot(normal).abs() <= 1e-9 && fh.dot(normal).abs() <= 1e-9,
                    "{at}"
                );
                let stretch = 1.0 / (0.5 * th).sin();
                let (sw, sh) = (pts[1].half_width_mm, pts[1].half_height_mm);
                assert!(
                    (sw - hw * stretch).abs() <= 1e-9 * sw
                        || (sh - hh * stretch).abs() <= 1e-9 * sh,
                    "{at}: face {sw} × {sh}"
                );
                for p in [&pts[0], &pts[2]] {
                    assert_eq!((p.half_width_mm, p.half_height_mm), (hw, hh), "{at}");
                }
            }
        }
        // Joins: the next segment starts where this one ends, with the same axes and section.
        if let Some(next) = o.segments.get(i + 1) {
            let (end, start) = (&pts[pts.len() - 1], &next.points[0]);
            assert!(close(v(end.centre), v(start.centre), JOIN_TOL), "{at}: gap");
            assert!(
                close(v(end.width_axis), v(start.width_axis), JOIN_TOL),
                "{at}"
            );
            assert!(
                close(v(end.height_axis), v(start.height_axis), JOIN_TOL),
                "{at}"
            );
            assert!(
                (end.half_width_mm - start.half_width_mm).abs() <= JOIN_TOL,
                "{at}"
            );
            assert!(
                (end.half_height_mm - start.half_height_mm).abs() <= JOIN_TOL,
                "{at}"
            );
            assert!((end.s_mm - start.s_mm).abs() <= JOIN_TOL, "{at}");
        }
        s_start += doc_length_mm;
    }

    // The outline ends on the exit face, at the route's length.
    let last_seg = &o.segments[o.segments.len() - 1];
    let last = &last_seg.points[last_seg.points.len() - 1];
    assert!(
        (last.s_mm - o.length_mm).abs() <= 1e-12 * o.length_mm,
        "{what}"
    );
    assert!(close(v(last.centre), v(o.exit.origin), JOIN_TOL), "{what}");
    assert!(close(v(last.width_axis), v(o.exit.x), JOIN_TOL), "{what}");
    assert!(close(v(last.height_axis), v(o.exit.y), JOIN_TOL), "{what}");
    assert!(close(tangent(last), v(o.exit.z), JOIN_TOL), "{what}");

    // Source and receiver from the document.
    let src = &scenario.source;
    assert_eq!(
        o.source_mm,
        [src.offset_mm[0], src.offset_mm[1], -src.gap_mm],
        "{what}"
    );
    match (&scenario.receiver, &o.receiver) {
        (None, None) => {}
        (Some(r), Some(ro)) => {
            let expect = v(o.exit.origin) + r.distance_mm * v(o.exit.z);
            assert!(close(v(ro.centre), expect, JOIN_TOL), "{what}");
            assert_eq!(ro.normal, o.exit.z, "{what}");
            assert_eq!(ro.round, r.diameter_mm.is_some(), "{what}");
            let hw = r.diameter_mm.or(r.width_mm).unwrap() / 2.0;
            assert_eq!(ro.half_width_mm, hw, "{what}");
        }
        _ => panic!("{what}: the receiver is drawn exactly when there is one"),
    }

    // The bounds hold every sample's section, the emitter and the receiver.
    let inside = |p: DVec3, slack: f64| {
        (0..3).all(|i| p[i] >= o.bounds.min[i] - slack && p[i] <= o.bounds.max[i] + slack)
    };
    for seg in &o.segments {
        for p in &seg.points {
            let (c, w, h) = (v(p.centre), v(p.width_axis), v(p.height_axis));
            for (a, b) in [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)] {
                // Rim points (corners of a rectangle; for a round section, points on its circle).
                let (fa, fb) = if seg.round {
                    (a * 0.5f64.sqrt(), b * 0.5f64.sqrt())
                } else {
                    (a, b)
                };
                let rim = c + fa * p.half_width_mm * w + fb * p.half_height_mm * h;
                assert!(inside(rim, 1e-9), "{what}: {rim} outside the bounds");
            }
        }
    }
    assert!(inside(v(o.source_mm), 0.0), "{what}");
    if let Some(r) = &o.receiver {
        assert!(inside(v(r.centre), 0.0), "{what}");
    }
}

#[test]
fn every_example_scenario_outlines_cleanly() {
    for (name, text) in EXAMPLES {
        let scenario = Scenario::from_json(text).unwrap();
        let o = route_outline(&scenario).unwrap();
        check_outline(name, &scenario, &o);
    }
}

#[test]
fn examples_without_coatings_report_and_draw_nothing_new() {
    // Light absorbed by coatings along the route is reported and drawn only for a design with
    // coatings: an example without keeps its report's and its outline's JSON as they were (no
    // such profile, no coated zones), so the page shows it as before.
    let mut without = 0;
    for (name, text) in EXAMPLES {
        let mut scenario = Scenario::from_json(text).unwrap();
        let coated = !scenario.guide.coatings.is_empty();
        scenario.trace.rays = 2_000;
        let p = tirtrace::trace::Prepared::new(&scenario).unwrap();
        let report = p.report(&p.trace_all_serial(0));
        let report = serde_json::to_value(&report).unwrap();
        let outline = serde_json::to_value(route_outline(&scenario).unwrap()).unwrap();
        assert_eq!(
            report.get("coating_along_route").is_some(),
            coated,
            "{name}"
        );
        assert_eq!(outline.get("coatings").is_some(), coated, "{name}");
        without += usize::from(!coated);
    }
    assert!(without >= 5, "{without} examples without coatings");
}

#[cfg(not(target_arch = "wasm32"))]
#[test]
fn the_example_list_is_complete() {
    let mut files: Vec<String> = std::fs::read_dir("examples/scenarios")
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .filter(|f| f.ends_with(".json"))
        .collect();
    files.sort();
    let listed: Vec<&str> = EXAMPLES.iter().map(|e| e.0).collect();
    assert_eq!(files, listed, "add new example scenarios to EXAMPLES");
}

/// The routes of [`random_scenario`]: 1–8 segments of every kind, bends of 1° to 180° (often
/// exactly 180°) from 1.01 to 200 half-sizes across, and corners, turned any way a section allows.
const ROUTES: RouteDraws = RouteDraws {
    size_mm: (0.3, 6.0),
    max_segments: 8,
    straight_below: 0.3,
    bend_below: 0.8,
    corner_below: 0.9,
    straight_mm: |rng| rng.log_range(0.05, 200.0),
    round_turn_deg: (-360.0, 360.0),
    rect_turns: (8, 4.0),
    bend: |rng, across| {
        let angle = if rng.chance(0.1) {
            180.0
        } else {
            rng.range(1.0, 180.0)
        };
        (across * rng.log_range(1.01, 200.0), angle)
    },
    taper_factor: (0.5, 1.6),
    taper_mm: (0.5, 30.0),
};

/// A random valid scenario: round or rectangular, 1–8 segments of every kind ([`ROUTES`]), an
/// offset source and sometimes a receiver.
fn random_scenario(rng: &mut Rng) -> Scenario {
    let RandomRoute { section, route, .. } = random_route(rng, &ROUTES);
    let mut doc = json!({
        "version": 1,
        "guide": {"section": section, "material": {"library": "pmma"},
                  "surroundings": {"library": "air"}},
        "route": route,
        "source": {
            "emitter": {"led": {"area": {"disk": {"diameter_mm": rng.range(0.1, 2.0)}},
                                "pattern": "lambertian"}},
            "wavelength_nm": 550, "gap_mm": rng.range(0.0, 3.0),
            "offset_mm": [rng.range(-1.0, 1.0), rng.range(-1.0, 1.0)],
            "tilt_deg": rng.range(0.0, 40.0), "tilt_toward_deg": rng.range(0.0, 360.0)
        }
    });
    if rng.chance(0.5) {
        doc["receiver"] = if rng.chance(0.5) {
            json!({"diameter_mm": rng.range(0.5, 10.0), "distance_mm": rng.range(0.0, 20.0)})
        } else {
            json!({"width_mm": rng.range(0.5, 10.0), "height_mm": rng.range(0.5, 10.0),
                   "distance_mm": rng.range(0.0, 20.0)})
        };
    }
    let s = Scenario::from_json(&doc.to_string()).unwrap();
    assert!(s.problems().is_empty(), "{:?}\n{doc}", s.problems());
    s
}

#[test]
fn random_valid_routes_outline_cleanly() {
    for seed in 0..300 {
        let mut rng = Rng(seed * 7919 + 17);
        let scenario = random_scenario(&mut rng);
        let o = route_outline(&scenario).unwrap();
        check_outline(&format!("seed {seed}"), &scenario, &o);
    }
}

/// A straight then a quarter bend, worked by hand: a 10 mm run along +z, then a bend of
/// centre-line radius 5 mm turning towards +x (turn 0°, the width axis) or +y (turn 90°, the
/// height axis): the bend's centre is 5 mm across from the end of the run, and the exit face
/// sits 5 mm along that side and 5 mm further on, facing along it.
#[test]
fn a_quarter_bend_ends_where_plane_geometry_says() {
    for (turn, side) in [(0.0, DVec3::X), (90.0, DVec3::Y), (180.0, -DVec3::X)] {
        let text = json!({
            "version": 1,
            "guide": {"section": {"round": {"diameter_mm": 2.0}}, "material": {"library": "pmma"},
                      "surroundings": {"library": "air"}},
            "route": [{"straight": {"length_mm": 10.0}},
                      {"bend": {"radius_mm": 5.0, "angle_deg": 90.0, "turn_deg": turn}}],
            "source": {"emitter": {"led": {"area": {"square": {"side_mm": 0.5}},
                                            "pattern": "lambertian"}},
                       "wavelength_nm": 590, "gap_mm": 0.2}
        })
        .to_string();
        let o = route_outline(&Scenario::from_json(&text).unwrap()).unwrap();
        let exit = v(o.exit.origin);
        assert!(
            close(exit, 15.0 * DVec3::Z + 5.0 * side, 1e-12),
            "turn {turn}: {exit}"
        );
        assert!(close(v(o.exit.z), side, 1e-12), "turn {turn}");
        let expected_len = 10.0 + 5.0 * std::f64::consts::FRAC_PI_2;
        assert!((o.length_mm - expected_len).abs() < 1e-12);
        // 90° at ≤ 3° a step: 30 steps, 31 points.
        assert_eq!(o.segments[1].points.len(), 31);
        assert_eq!(o.receiver, None);
        // Bounds: the tube reaches 1 mm (its radius) around the centre line, which spans 0…5
        // towards the side turned to and 0…15 along z; the exit face's rim reaches z = 16; the
        // emitter sits 0.2 mm in front of the entry face (square to z, so no depth).
        let lateral = if side.y != 0.0 { DVec3::X } else { DVec3::Y };
        let toward = side.x + side.y;
        let along_side = |p: [f64; 3]| v(p).dot(side.abs()) * toward;
        let (lo, hi) = (along_side(o.bounds.min), along_side(o.bounds.max));
        let (lo, hi) = (lo.min(hi), lo.max(hi));
        assert!(
            (lo - -1.0).abs() < 1e-9 && (hi - 5.0).abs() < 1e-9,
            "turn {turn}: {lo}..{hi}"
        );
        assert!(
            (v(o.bounds.min).dot(lateral) + 1.0).abs() < 1e-9,
            "turn {turn}"
        );
        assert!(
            (v(o.bounds.max).dot(lateral) - 1.0).abs() < 1e-9,
            "turn {turn}"
        );
        assert!((o.bounds.min[2] + 0.2).abs() < 1e-12, "turn {turn}");
        assert!((o.bounds.max[2] - 16.0).abs() < 1e-9, "turn {turn}");
    }
}

#[test]
fn short_bends_keep_at_least_eight_points() {
    let text = json!({
        "version": 1,
        "guide": {"section": {"rectangular": {"width_mm": 2.0, "height_mm": 1.0}},
                  "material": {"library": "pmma"}, "surroundings": {"library": "air"}},
        "route": [{"bend": {"radius_mm": 4.0, "angle_deg": 2.0, "turn_deg": 90}}],
        "source": {"emitter": {"beam": {"diameter_mm": 0.5, "divergence_half_angle_deg": 1}},
                   "wavelength_nm": 633}
    })
    .to_string();
    let scenario = Scenario::from_json(&text).unwrap();
    let o = route_outline(&scenario).unwrap();
    assert_eq!(o.segments[0].points.len(), MIN_BEND_POINTS);
    // Turning across the height (turn 90°): the width stays along the bend axis.
    let p = &o.segments[0].points[3];
    assert_eq!((p.half_width_mm, p.half_height_mm), (1.0, 0.5));
    assert!(v(p.width_axis).dot(DVec3::X).abs() > 1.0 - 1e-12);
    check_outline("short bend", &scenario, &o);
}

#[test]
fn an_invalid_scenario_gets_its_problems_not_an_outline() {
    let text = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}}, "material": {"library": "pmma"},
                  "surroundings": {"library": "air"}},
        "route": [{"straight": {"length_mm": -1.0}},
                  {"bend": {"radius_mm": 1.0, "angle_deg": 90.0}}],
        "source": {"emitter": {"led": {"area": {"square": {"side_mm": 0.5}},
                                        "pattern": "lambertian"}},
                   "wavelength_nm": 590}
    })
    .to_string();
    let errors = route_outline(&Scenario::from_json(&text).unwrap()).unwrap_err();
    let fields: Vec<&str> = errors.iter().map(|e| e.field.as_str()).collect();
    assert_eq!(
        fields,
        ["route[0].straight.length_mm", "route[1].bend.radius_mm"]
    );
}
