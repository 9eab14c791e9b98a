//! The Monte Carlo tracer against closed-form optics and its own invariants.
//! Sources are named at each check; docs/REFERENCES.md holds the check values.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

mod common;
use common::Rng;

use serde_json::{json, Value};
use tirtrace::guide;
use tirtrace::scenario::Scenario;
use tirtrace::trace::{FluxUnit, Prepared, SegmentKind, TraceReport};

fn scenario(v: Value) -> Scenario {
    Scenario::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{e}"))
}

fn run(s: &Scenario) -> TraceReport {
    let p = Prepared::new(s).unwrap_or_else(|e| panic!("{e}"));
    p.report(&p.trace_all_serial(0))
}

/// A round guide in `surroundings` with `route`, fed by `emitter` through `gap_medium`.
fn round_guide(
    d_mm: f64,
    material: Value,
    surroundings: Value,
    route: Value,
    emitter: Value,
    gap_medium: Value,
    rays: u64,
) -> Scenario {
    scenario(json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": d_mm } },
                   "material": material, "surroundings": surroundings },
        "route": route,
        "source": { "emitter": emitter, "wavelength_nm": 587.56, "gap_mm": 0.0,
                    "gap_medium": gap_medium },
        "trace": { "rays": rays, "seed": 11, "max_interactions": 100000 }
    }))
}

#[test]
fn lossless_straight_guide_leaks_nothing_it_accepted() {
    // An unclad PMMA rod in air (n ≥ √2) guides every ray that enters from air (docs/REFERENCES.md §3,
    // derived: NA = √(n² − 1) ≥ 1);
    // a clad guide fed by a beam inside its acceptance cone (NA 0.51 → 30.69°, Keiser) likewise.
    let cases = [
        (
            json!({"library": "pmma"}),
            json!({"library": "air"}),
            json!({"led": {"area": {"disk": {"diameter_mm": 1.5}}, "pattern": "lambertian"}}),
        ),
        (
            json!({"custom": {"model": "constant", "n": 1.492}}),
            json!({"custom": {"model": "constant", "n": 1.402}}),
            json!({"beam": {"diameter_mm": 1.8, "divergence_half_angle_deg": 29.0}}),
        ),
    ];
    for (material, around, emitter) in cases {
        let s = round_guide(
            2.0,
            material,
            around,
            json!([{"straight": {"length_mm": 60}}]),
            emitter,
            json!({"library": "air"}),
            20_000,
        );
        let r = run(&s);
        assert_eq!(
            r.budget.leaked.share, 0.0,
            "side leakage in a lossless straight guide"
        );
        assert_eq!(r.budget.absorbed.share, 0.0);
        assert_eq!(r.budget.stopped.share, 0.0);
        // Everything that entered leaves through a face.
        let entered = 1.0 - r.budget.missed_entry.share - r.budget.reflected_entry.share;
        assert!((r.budget.delivered.share + r.budget.returned.share - entered).abs() < 1e-12);
        assert!(r.budget.delivered.share > 0.8);
    }
}

#[test]
fn meridional_lambertian_coupling_is_na_squared() {
    // Keiser, Optical Communications Essentials (2004) §8.1.2: a Lambertian source coupled to a
    // step-index guide delivers NA² (source in air; in a medium n₀ the acceptance is
    // sin θa = NA/n₀, so (NA/n₀)²), Fresnel excluded. A tiny source on the axis launches only
    // meridional rays; an index-matched gap (n₀ = n_core) removes the entry Fresnel loss. In a
    // guide 1000 diameters long, unguided rays below the critical angle leak away.
    let (n1, n2) = (1.492, 1.402);
    let s = round_guide(
        1.0,
        json!({"custom": {"model": "constant", "n": n1}}),
        json!({"custom": {"model": "constant", "n": n2}}),
        json!([{"straight": {"length_mm": 1000}}]),
        json!({"led": {"area": {"disk": {"diameter_mm": 1e-3}}, "pattern": "lambertian"}}),
        json!({"custom": {"model": "constant", "n": n1}}),
        40_000,
    );
    let r = run(&s);
    let guided = r.budget.delivered.share + r.budget.returned.share;
    let na = guide::numerical_aperture(n1, n2);
    let want = (na / n1).powi(2);
    let ci = r.budget.delivered.ci95 + r.budget.returned.ci95;
    // Rays a hair below the critical angle reflect with R → 1 and may survive: allow 0.002.
    assert!(
        (guided - want).abs() < ci + 0.002,
        "guided {guided} ± {ci}, (NA/n0)² = {want}"
    );
}

#[test]
fn skew_rays_follow_the_ray_invariants() {
    // In a straight round guide every ray keeps its angle θz to the axis and its skewness, so
    // it meets the wall always at the same angle α with cos α = sin θz √(1 − (b/a)²), b being
    // the distance of its projected path from the axis (A. W. Snyder, J. D. Love, Optical
    // Waveguide Theory, 1983, ch. 2, from memory; derived from the cylinder's symmetry). A ray is
    // trapped iff sin α > n_clad/n_core. So the trapped share of a Lambertian source filling the
    // face is an integral we estimate independently here and compare with the 3D trace; it
    // exceeds the bound-ray share (NA/n₀)² by the skew rays trapped at steep θz.
    let (n1, n2) = (1.492, 1.402);
    let a = 0.5;
    let s = round_guide(
        2.0 * a,
        json!({"custom": {"model": "constant", "n": n1}}),
        json!({"custom": {"model": "constant", "n": n2}}),
        json!([{"straight": {"length_mm": 1000}}]),
        json!({"led": {"area": {"disk": {"diameter_mm": 2.0 * a * 0.999}}, "pattern": "lambertian"}}),
        json!({"custom": {"model": "constant", "n": n1}}),
        40_000,
    );
    let r = run(&s);
    let traced = r.budget.delivered.share + r.budget.returned.share;
    let ci = r.budget.delivered.ci95 + r.budget.returned.ci95;
    // Independent estimate: uniform point on the face, Lambertian direction.
    let mut rng = Rng(5);
    let n = 400_000;
    let mut trapped = 0usize;
    for _ in 0..n {
        let rad = a * 0.999 * rng.next().sqrt();
        let phi = std::f64::consts::TAU * rng.next();
        let (x, y) = (rad * phi.cos(), rad * phi.sin());
        let cos_t = rng.next().sqrt();
        let sin_t = (1.0 - cos_t * cos_t).sqrt();
        let psi = std::f64::consts::TAU * rng.next();
        let (ux, uy) = (psi.cos(), psi.sin());
        // Distance of the projected line from the axis.
        let b = (x * uy - y * ux).abs();
        let cos_alpha = sin_t * (1.0 - (b / a).powi(2)).max(0.0).sqrt();
        if (1.0 - cos_alpha * cos_alpha).sqrt() > n2 / n1 {
            trapped += 1;
        }
    }
    let want = trapped as f64 / n as f64;
    let want_ci = 1.96 * (want * (1.0 - want) / n as f64).sqrt();
    assert!(want > (guide::numerical_aperture(n1, n2) / n1).powi(2) + 0.01);
    assert!(
        (traced - want).abs() < ci + want_ci + 0.002,
        "traced {traced} ± {ci}, invariants {want} ± {want_ci}"
    );
}

/// A 2 mm PMMA rod in air with a 90° bend turning towards 30° about the axis, its inner radius
/// `ratio_factor` × the leak-free value for `launch_deg` from air, after a lead-in of `lead_mm`.
/// The exit face is bonded to an index-matched window so no light is reflected back into the
/// bend with the steeper angles the bend gave it (docs/REFERENCES.md §4, caution).
fn bend_case(
    ratio_factor: f64,
    emitter: Value,
    offset_mm: [f64; 2],
    launch_deg: f64,
    lead_mm: f64,
    rays: u64,
) -> (TraceReport, f64) {
    let d = 2.0;
    let n = tirtrace::index::library::MaterialChoice::library("pmma")
        .n_rel_air(587.56, "m")
        .unwrap();
    let theta = guide::max_internal_angle_rad(n, 1.0, 1.0, f64::to_radians(launch_deg));
    let ratio = guide::leak_free_bend_ratio(n, 1.0, theta).unwrap();
    let r_in = ratio_factor * ratio * d;
    let mut route = vec![];
    if lead_mm > 0.0 {
        route.push(json!({"straight": {"length_mm": lead_mm}}));
    }
    route.push(json!({"bend": {"radius_mm": r_in + 0.5 * d, "angle_deg": 90, "turn_deg": 30}}));
    route.push(json!({"straight": {"length_mm": 4}}));
    let s = scenario(json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": d } },
                   "material": {"library": "pmma"}, "surroundings": {"library": "air"},
                   "exit_medium": {"library": "pmma"} },
        "route": route,
        "source": { "emitter": emitter, "wavelength_nm": 587.56, "gap_mm": 0.0,
                    "offset_mm": offset_mm },
        "trace": { "rays": rays, "seed": 11 }
    }));
    let p = Prepared::new(&s).unwrap();
    #[cfg(not(target_arch = "wasm32"))]
    let batch = p.trace_all_parallel(0, 0).unwrap();
    #[cfg(target_arch = "wasm32")]
    let batch = p.trace_all_serial(0);
    (p.report(&batch), ratio)
}

fn bend_leak(r: &TraceReport) -> tirtrace::stats::Share {
    let i = r
        .segments
        .iter()
        .position(|s| s.kind == SegmentKind::Bend)
        .unwrap();
    r.segments[i].leaked
}

#[test]
fn bend_criterion_axial_launch() {
    // R_in/d ≥ n_out/(n_core cos θmax − n_out) keeps every ray totally reflected through a
    // circular bend (docs/REFERENCES.md §4, derived; axial form R_in = d/(n − 1), Engineering Plastics
    // Handbook, McGraw-Hill 2006, ch. 1). Collimated axial beam filling the face.
    let beam = json!({"beam": {"diameter_mm": 1.98, "divergence_half_angle_deg": 0.0}});
    let (r, _) = bend_case(1.01, beam.clone(), [0.0, 0.0], 0.0, 4.0, 30_000);
    assert_eq!(
        bend_leak(&r).share,
        0.0,
        "leak at 1.01× the leak-free radius"
    );
    let (r, _) = bend_case(0.9, beam, [0.0, 0.0], 0.0, 4.0, 30_000);
    let leak = bend_leak(&r);
    assert!(
        leak.share > 5.0 * leak.ci95 && leak.share > 0.005,
        "no leak at 0.9×: {leak:?}"
    );
}

#[test]
fn bend_criterion_lambertian_from_air_with_skew_rays() {
    // The same criterion with θmax from a Lambertian LED in air, sin θmax = 1/n (docs/REFERENCES.md §4):
    // exact for skew rays too in a torus (angular momentum about the bend axis). A wide LED
    // after a lead-in sends mostly skew rays: nothing may leak at 1.01×.
    let wide = json!({"led": {"area": {"disk": {"diameter_mm": 1.6}}, "pattern": "lambertian"}});
    let (r, ratio) = bend_case(1.01, wide, [0.3, -0.2], 90.0, 4.0, 200_000);
    // Closed form for a launch from air filling the face: 1/(√(n² − 1) − 1) (docs/REFERENCES.md §4).
    let n = r.n_core;
    assert!(
        (ratio - 1.0 / ((n * n - 1.0).sqrt() - 1.0)).abs() < 1e-9,
        "{ratio}"
    );
    assert_eq!(
        bend_leak(&r).share,
        0.0,
        "leak at 1.01× the leak-free radius"
    );
    // Near the threshold only rays entering at grazing incidence from air, close to the inner
    // wall, can leak: a tiny share of a Lambertian LED's power. A small LED at the inner edge of
    // a face where the bend starts puts those rays where they count.
    let (c, s) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
    let edge = json!({"led": {"area": {"disk": {"diameter_mm": 0.1}}, "pattern": "lambertian"}});
    let (r, _) = bend_case(
        1.01,
        edge.clone(),
        [0.94 * c, 0.94 * s],
        90.0,
        0.0,
        1_000_000,
    );
    assert_eq!(bend_leak(&r).share, 0.0, "edge LED: leak at 1.01×");
    let (r, _) = bend_case(0.9, edge, [0.94 * c, 0.94 * s], 90.0, 0.0, 1_000_000);
    let leak = bend_leak(&r);
    assert!(
        leak.share > 4.0 * leak.ci95,
        "edge LED: no clear leak at 0.9×: {leak:?}"
    );
}

#[test]
fn beer_lambert_on_an_axial_beam() {
    // Beer–Lambert, P = P₀ e^(−αL), loss in dB = 10 log10(e) αL = 4.343 αL (the definition of
    // attenuation in dB, e.g. G. Keiser, Optical Fiber Communications, ch. 3; docs/REFERENCES.md §6,
    // computed). Index-matched faces: no Fresnel
    // loss, so every ray leaves with exactly 10^(−A L / 10) of its power.
    let n = 1.49;
    for (db_per_m, length_mm) in [(0.4, 1000.0), (1000.0, 20.0)] {
        let s = scenario(json!({
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": 2.0 } },
                       "material": {"custom": {"model": "constant", "n": n}},
                       "surroundings": {"custom": {"model": "constant", "n": n - 1e-9}},
                       "attenuation_db_per_m": db_per_m },
            "route": [{"straight": {"length_mm": length_mm}}],
            "source": { "emitter": {"beam": {"diameter_mm": 1.5, "divergence_half_angle_deg": 0}},
                        "wavelength_nm": 650, "gap_medium": {"custom": {"model": "constant", "n": n}} },
            "trace": { "rays": 5000, "seed": 2 }
        }));
        let r = run(&s);
        let want = 10f64.powf(-db_per_m * length_mm / 1000.0 / 10.0);
        assert!(
            (r.delivered.share - want).abs() < 1e-12,
            "{} vs {want}",
            r.delivered.share
        );
        assert!((r.budget.absorbed.share - (1.0 - want)).abs() < 1e-12);
        assert!(r.delivered.ci95 < 1e-12, "every ray is identical");
    }
}

#[test]
fn outputs_add_up_to_the_delivered_share() {
    let text = include_str!("../examples/scenarios/thermostat_status_led.json");
    let mut s = Scenario::from_json(text).unwrap();
    s.trace.rays = 20_000;
    let r = run(&s);
    let d = r.delivered.share;
    let map: f64 = r.exit_map.share.iter().sum();
    assert!((map - d).abs() < 1e-12, "exit map {map} vs delivered {d}");
    let ang: f64 = r.angular_map.share.iter().sum();
    assert!((ang - d).abs() < 1e-12);
    // Σ (share per sr × ring solid angle) = delivered.
    let rings: f64 = r
        .intensity
        .share_per_sr
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let (a0, a1) = ((i as f64).to_radians(), ((i + 1) as f64).to_radians());
            v * std::f64::consts::TAU * (a0.cos() - a1.cos())
        })
        .sum();
    assert!((rings - d).abs() < 1e-12);
    let leak_profile: f64 = r.leak_along_route.share.iter().sum();
    assert!((leak_profile - r.budget.leaked.share - r.budget.contact.share).abs() < 1e-12);
    let rec = r.receiver.unwrap();
    assert!(rec.share <= d && rec.share > 0.0);
    // A window as large as the exit face, right on it, catches every delivered ray; a disk
    // inscribed in a square window catches no more than the window.
    let mut on_face = s.clone();
    on_face.receiver = Some(tirtrace::scenario::Receiver {
        diameter_mm: None,
        width_mm: Some(3.0),
        height_mm: Some(3.0),
        distance_mm: 0.0,
    });
    let f = run(&on_face);
    assert_eq!(f.receiver.unwrap().share, f.delivered.share);
    let window = |disk: bool| {
        let mut w = s.clone();
        w.receiver = Some(tirtrace::scenario::Receiver {
            diameter_mm: disk.then_some(4.0),
            width_mm: (!disk).then_some(4.0),
            height_mm: (!disk).then_some(4.0),
            distance_mm: 3.0,
        });
        run(&w).receiver.unwrap().share
    };
    assert!(window(true) < window(false));
    let abs = r.absolute.unwrap();
    assert!((abs.delivered.value - 1.2 * d).abs() < 1e-12);
    assert!((abs.delivered.ci95 - 1.2 * r.delivered.ci95).abs() < 1e-12);
    assert_eq!(abs.unit, FluxUnit::Lumen);
    assert!(abs.mean_exit_luminance.unwrap().value > 0.0);
}

#[test]
fn rectangular_bend_criterion_across_width_and_height() {
    // A rectangular bar's bend walls are two cylinders about the bend axis and two planes
    // normal to it: neither turns a ray about that axis, so the angular momentum argument of
    // docs/REFERENCES.md §4 holds and the criterion is exact with d the size across the bend.
    let n = tirtrace::index::library::MaterialChoice::library("pmma")
        .n_rel_air(587.56, "m")
        .unwrap();
    let axial = 1.0 / (n - 1.0);
    for (turn, across) in [(0.0, 3.0), (90.0, 1.5)] {
        let leak_at = |factor: f64| {
            let r_in = factor * axial * across;
            let s = scenario(json!({
                "version": 1,
                "guide": { "section": { "rectangular": { "width_mm": 3.0, "height_mm": 1.5 } },
                           "material": {"library": "pmma"}, "surroundings": {"library": "air"},
                           "exit_medium": {"library": "pmma"} },
                "route": [{"straight": {"length_mm": 3}},
                          {"bend": {"radius_mm": r_in + 0.5 * across, "angle_deg": 90, "turn_deg": turn}},
                          {"straight": {"length_mm": 3}}],
                // A beam wider than the bar fills the whole face, out to the inner wall.
                "source": { "emitter": {"beam": {"diameter_mm": 3.4, "divergence_half_angle_deg": 0}},
                            "wavelength_nm": 587.56 },
                "trace": { "rays": 20000, "seed": 4 }
            }));
            run(&s).segments[1].leaked
        };
        assert_eq!(leak_at(1.01).share, 0.0, "turn {turn}: leak at 1.01×");
        let l = leak_at(0.9);
        assert!(
            l.share > 5.0 * l.ci95 && l.share > 0.005,
            "turn {turn}: no leak at 0.9×: {l:?}"
        );
    }
}

#[test]
fn narrowing_taper_obeys_etendue() {
    // Étendue is conserved in lossless optics (R. Winston, J. C. Miñano, P. Benítez, Nonimaging
    // Optics, 2005; docs/REFERENCES.md §5): light entering a face of area A_in from air, filling the
    // hemisphere, can leave a face of area A_out into air only up to A_out/A_in of it.
    // A 3 mm PMMA rod narrowing to 1.5 mm: at most a quarter of what entered comes out; the
    // same taper the other way round (widening) loses nothing to its walls.
    let taper = |from: f64, to: f64| {
        scenario(json!({
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": from } },
                       "material": {"library": "pmma"}, "surroundings": {"library": "air"} },
            "route": [{"straight": {"length_mm": 5}},
                      {"taper": {"length_mm": 20, "end_section": {"round": {"diameter_mm": to}}}},
                      {"straight": {"length_mm": 5}}],
            "source": { "emitter": {"led": {"area": {"disk": {"diameter_mm": from * 0.999}}, "pattern": "lambertian"}},
                        "wavelength_nm": 587.56 },
            "trace": { "rays": 40000, "seed": 8 }
        }))
    };
    let r = run(&taper(3.0, 1.5));
    let entered = 1.0 - r.budget.missed_entry.share - r.budget.reflected_entry.share;
    let bound = (1.5f64 / 3.0).powi(2) * entered;
    assert!(
        r.delivered.share <= bound + r.delivered.ci95,
        "{} > étendue bound {bound}",
        r.delivered.share
    );
    assert!(
        r.delivered.share > 0.5 * bound,
        "the taper should still pass most of what it can"
    );
    // Widening: bond the exit to an index-matched window, else the exit face reflects light back
    // into the taper, which then narrows for it and lets it out.
    let mut widening = taper(1.5, 3.0);
    widening.guide.exit_medium = Some(tirtrace::index::library::MaterialChoice::library("pmma"));
    let r = run(&widening);
    assert_eq!(
        r.budget.leaked.share, 0.0,
        "a widening taper in air keeps every ray it accepted"
    );
}

#[test]
fn contact_zones() {
    let text = include_str!("../examples/scenarios/thermostat_status_led.json");
    let mut s = Scenario::from_json(text).unwrap();
    s.trace.rays = 20_000;
    // A contact whose medium is the surroundings changes nothing, ray for ray.
    let mut same = s.clone();
    same.guide.contacts[0].medium = tirtrace::index::library::MaterialChoice::library("air");
    let mut none = s.clone();
    none.guide.contacts.clear();
    // Both walks step every wall hit: a segment with a contact is always stepped, one without
    // is taken in closed form a run at a time, and after the bends the two walks' rounding
    // parts a few rays (tests/straight_closed_form.rs); here the contact alone is compared.
    let stepped = |s: &Scenario| {
        let p = Prepared::new(s).unwrap().stepping_every_hit();
        p.report(&p.trace_all_serial(0))
    };
    let (a, b) = (stepped(&same), stepped(&none));
    assert_eq!(a.delivered, b.delivered);
    assert_eq!(a.budget.contact.share, 0.0);
    // An index-matched glue spot all round a straight segment takes every ray that meets the
    // wall there (no total internal reflection, no Fresnel reflection: n_contact = n_core).
    let mut glued = none.clone();
    glued.guide.contacts.push(tirtrace::scenario::Contact {
        name: "glue".into(),
        segment: 0,
        from_mm: 0.0,
        to_mm: 6.0,
        sector_from_deg: 0.0,
        sector_to_deg: 360.0,
        medium: tirtrace::index::library::MaterialChoice::library("pmma"),
    });
    let g = run(&glued);
    assert_eq!(g.segments[0].leaked.share, 0.0);
    assert!(g.contacts[0].lost.share > 0.3, "{:?}", g.contacts[0].lost);
    assert!(g.delivered.share < b.delivered.share);
    // The real clip (polycarbonate, denser than PMMA) on one sector takes a share that is
    // larger than zero and smaller than the segment's whole wall would.
    let clip = run(&s);
    let lost = clip.contacts[0].lost;
    assert!(lost.share > 3.0 * lost.ci95 && lost.share < 0.5, "{lost:?}");
}

#[test]
fn segment_hand_off_has_no_gaps_and_no_double_hits() {
    // A 60 mm rod traced as one straight and as six 10 mm straights (or a bend cut into three
    // 30° bends, each turning the same way about the transported section axes) is the same guide: the same rays must meet the walls the same number of times
    // and deliver the same share. All reflections here are total (PMMA in air, n > √2) and the
    // exit is index-matched, so no random decision after the entry face can differ.
    let case = |route: Value| {
        let s = scenario(json!({
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": 2.0 } },
                       "material": {"library": "pmma"}, "surroundings": {"library": "air"},
                       "exit_medium": {"library": "pmma"} },
            "route": route,
            "source": { "emitter": {"led": {"area": {"disk": {"diameter_mm": 1.5}}, "pattern": "lambertian"}},
                        "wavelength_nm": 587.56 },
            "trace": { "rays": 5000, "seed": 3 }
        }));
        let r = run(&s);
        let hits: u64 = r.segments.iter().map(|s| s.wall_hits).sum();
        (r.delivered.share, hits)
    };
    let one = case(json!([{"straight": {"length_mm": 60}}]));
    let six = case(Value::Array(vec![
        json!({"straight": {"length_mm": 10}});
        6
    ]));
    assert!(one.0 > 0.9, "{one:?}");
    assert_eq!(one, six);
    let bend = case(json!([{"straight": {"length_mm": 5}},
        {"bend": {"radius_mm": 40, "angle_deg": 90, "turn_deg": 45}}, {"straight": {"length_mm": 5}}]));
    let cut = case(json!([{"straight": {"length_mm": 5}},
        {"bend": {"radius_mm": 40, "angle_deg": 30, "turn_deg": 45}},
        {"bend": {"radius_mm": 40, "angle_deg": 30, "turn_deg": 45}},
        {"bend": {"radius_mm": 40, "angle_deg": 30, "turn_deg": 45}}, {"straight": {"length_mm": 5}}]));
    assert_eq!(bend.1, cut.1, "wall hits differ: {bend:?} vs {cut:?}");
    assert!((bend.0 - cut.0).abs() < 1e-12);
}
