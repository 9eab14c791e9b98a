//! The report's single figures that a designer quotes: the peak and on-axis intensity, the mean
//! luminance of the exit face, and the exit map's colour scale. Each must converge as rays are
//! added (no figure may come from one tiny, noisy bin) and agree with a closed form where one
//! exists. Sources are named at each check.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use plotters::prelude::*;
use serde_json::{json, Value as Json};
use std::f64::consts::PI;
use tirtrace::chart::{draw_exit_map, map_scale_top};
use tirtrace::scenario::Scenario;
use tirtrace::trace::{peak_windows, Prepared, TraceReport, Value, AXIS_CONE_HALF_ANGLE_DEG};

const THERMOSTAT: &str = include_str!("../examples/scenarios/thermostat_status_led.json");

fn traced(s: &Scenario) -> TraceReport {
    let p = Prepared::new(s).unwrap_or_else(|e| panic!("{e}"));
    p.report(&p.trace_all_serial(0))
}

/// A short lossless straight rod of constant index 1.5 in air, 3 mm across and 5 mm long, fed
/// by `emitter` through 0.1 mm of air, with a source flux of 1 lm.
fn short_straight(emitter: Json, rays: u64, seed: u64) -> Scenario {
    let doc = json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": 3.0 } },
                   "material": { "custom": { "model": "constant", "n": 1.5 } },
                   "surroundings": { "library": "air" } },
        "route": [ { "straight": { "length_mm": 5.0 } } ],
        "source": { "emitter": emitter, "wavelength_nm": 550, "gap_mm": 0.1,
                    "gap_medium": { "library": "air" }, "flux": { "lm": 1.0 } },
        "trace": { "rays": rays, "seed": seed }
    });
    Scenario::from_json(&doc.to_string()).unwrap_or_else(|e| panic!("{e}"))
}

fn lambertian_chip() -> Json {
    json!({ "led": { "area": { "square": { "side_mm": 0.5 } }, "pattern": "lambertian" } })
}

/// Solid angle of the cone about the axis that the on-axis figure averages over, sr:
/// Ω = 2π (1 − cos θc).
fn axis_cone_sr() -> f64 {
    2.0 * PI * (1.0 - (AXIS_CONE_HALF_ANGLE_DEG as f64).to_radians().cos())
}

/// Share of the light meeting the faces at normal incidence that leaves the exit face of a
/// lossless rod: entry transmission T, then the exit face transmits T and sends R back, the
/// entry face returns R of that, and so on: T² Σ R²ᵏ = (1 − R)/(1 + R), with R = ((n − 1)/(n + 1))²
/// (Fresnel at normal incidence: M. Born, E. Wolf, Principles of Optics, §1.5; docs/REFERENCES.md
/// §2 gives R = 0.04 for n = 1.5).
fn normal_incidence_throughput(n: f64) -> f64 {
    let amplitude = (n - 1.0) / (n + 1.0);
    let r = amplitude * amplitude;
    (1.0 - r) / (1.0 + r)
}

/// The on-axis intensity of the short straight rod fed by a Lambertian chip, averaged over the
/// axis cone, per lumen emitted: a Lambertian emitter of flux Φ has I(θ) = (Φ/π) cos θ (from
/// memory, any radiometry text: ∫ I₀ cos θ dΩ over the hemisphere is π I₀). A straight rod keeps
/// every ray's angle to the axis (refraction in and out with parallel flat faces, and total
/// reflection at a wall parallel to the axis), and every ray within 5° of the axis misses the
/// wall, so beyond the exit face I(θ) = (Φ/π) cos θ × the Fresnel throughput; its mean over the
/// cone of half-angle θc is (Φ/π) (1 + cos θc)/2 × (1 − R)/(1 + R) (derived: ∫ cos θ dΩ over the
/// cone is π sin² θc). R's change within 5° of normal is below 10⁻⁴ of the figure (the Fresnel
/// formulas of docs/REFERENCES.md §2).
fn lambertian_axis_cd_per_lm() -> f64 {
    let cone_mean_cos = 0.5 * (1.0 + (AXIS_CONE_HALF_ANGLE_DEG as f64).to_radians().cos());
    cone_mean_cos / PI * normal_incidence_throughput(1.5)
}

/// `v` agrees with the closed form `want` within three standard errors (1.53 × its 95 %
/// half-width): with a dozen checks per test, 95 % intervals would miss one by chance alone in
/// about half the runs of another random stream.
fn assert_covers(what: &str, v: Value, want: f64) {
    assert!(
        (v.value - want).abs() <= 3.0 / 1.96 * v.ci95,
        "{what}: {} ± {} does not cover the closed form {want}",
        v.value,
        v.ci95
    );
}

#[test]
fn the_peak_windows_tile_the_hemisphere_and_each_spans_the_axis_cone() {
    let w = peak_windows(90);
    assert_eq!(w[0], (0, AXIS_CONE_HALF_ANGLE_DEG));
    assert_eq!(w.last().unwrap().1, 90);
    let least = axis_cone_sr();
    for pair in w.windows(2) {
        assert_eq!(pair[0].1, pair[1].0, "windows must touch: {w:?}");
    }
    for &(a, b) in &w {
        let omega = 2.0 * PI * ((a as f64).to_radians().cos() - (b as f64).to_radians().cos());
        assert!(omega >= least * (1.0 - 1e-12), "{a}..{b}: {omega} sr");
    }
}

#[test]
fn a_lambertian_exit_gives_the_closed_form_on_axis_and_peak_intensity() {
    // Five seeds at 10⁵ rays (the page's starting count): every figure agrees with the closed
    // form, and each is known to 10 %. The first 1° ring (the old on-axis figure) was known
    // only to ±35 % here, and the brightest ring (the old peak) leaned high: 0.46 ± 0.14 cd on
    // one seed against 0.293.
    let want = lambertian_axis_cd_per_lm();
    for seed in 1..=5 {
        let r = traced(&short_straight(lambertian_chip(), 100_000, seed));
        let a = r.absolute.clone().expect("a flux was given");
        for (what, v) in [
            ("on-axis intensity", a.on_axis_intensity),
            ("peak intensity", a.peak_intensity),
        ] {
            assert_covers(&format!("seed {seed}: {what}"), v, want);
            assert!(
                v.ci95 < 0.1 * v.value,
                "seed {seed}: {what} known only to ±{} of {}",
                v.ci95,
                v.value
            );
        }
        // The mean luminance of the exit face along its axis: I(0)/A for a flat face
        // (I = ∫ L cos θ dA, the definition of luminance; from memory), A = π (1.5 mm)².
        let area_m2 = PI * 1.5e-3 * 1.5e-3;
        let l = a.mean_exit_luminance.expect("luminous flux");
        assert_covers(&format!("seed {seed}: luminance"), l, want / area_m2);
        assert!((l.value * area_m2 - a.on_axis_intensity.value).abs() < 1e-12 * l.value);
    }
}

#[test]
fn a_collimated_exit_is_reported_as_its_mean_over_the_axis_cone() {
    // A beam of 0.5° half-angle leaves the rod within 0.5° of the axis: all the delivered flux
    // lies in the axis cone, so the stated smoothing gives exactly delivered flux / cone solid
    // angle, and the delivered share is the Fresnel throughput of a normal ray.
    let beam = json!({ "beam": { "diameter_mm": 1.0, "divergence_half_angle_deg": 0.5 } });
    let r = traced(&short_straight(beam, 20_000, 3));
    let a = r.absolute.clone().unwrap();
    let omega = axis_cone_sr();
    for (what, v) in [("on-axis", a.on_axis_intensity), ("peak", a.peak_intensity)] {
        let want = a.delivered.value / omega;
        assert!(
            (v.value - want).abs() < 1e-12 * want,
            "{what}: {v:?} vs {want}"
        );
    }
    assert_eq!(a.peak_angle_deg, 0.0, "the peak is the cone about the axis");
    let d = r.delivered;
    assert!(
        (d.share - normal_incidence_throughput(1.5)).abs() <= d.ci95.max(1e-3),
        "{d:?}"
    );
}

#[test]
fn the_peak_intensity_converges_as_rays_are_added() {
    // The two-bend example peaks on its axis. Eight runs of 10⁵ rays against one of 10⁶: each
    // lower-count figure is known to 10 % and agrees with the higher-count one within their
    // intervals, and ten times the rays shrink the interval by more than 2 (fixed windows: by √10 ≈ 3.2,
    // less only where the brightest window changes). The brightest 1° ring was known to ±8 % to
    // ±35 % at 10⁵ rays, and its interval did not shrink as the rays grew on some seeds (the
    // ring picked changes with the noise).
    let mut s = Scenario::from_json(THERMOSTAT).unwrap();
    s.trace.rays = 1_000_000;
    s.trace.seed = 4;
    let many = traced(&s).absolute.unwrap().peak_intensity;
    for seed in [1, 2, 3, 5, 6, 7, 8, 9] {
        s.trace.rays = 100_000;
        s.trace.seed = seed;
        let few = traced(&s).absolute.unwrap().peak_intensity;
        assert!(
            few.ci95 < 0.1 * few.value,
            "seed {seed}: known only to ±{} of {} at 10⁵ rays",
            few.ci95,
            few.value
        );
        // Within three standard errors of the difference (1.53 × the combined 95 % half-width):
        // eight 95 % checks would miss once in three runs by chance alone.
        let combined = (few.ci95 * few.ci95 + many.ci95 * many.ci95).sqrt();
        assert!(
            (few.value - many.value).abs() <= 3.0 / 1.96 * combined,
            "seed {seed}: {few:?} at 10⁵ rays vs {many:?} at 10⁶"
        );
        assert!(
            many.ci95 < 0.5 * few.ci95,
            "seed {seed}: interval {} at 10⁵ rays, {} at 10⁶",
            few.ci95,
            many.ci95
        );
    }
}

/// Every `<rect>` fill of an SVG, in drawing order.
fn rect_fills(svg: &str) -> Vec<String> {
    svg.split("<rect")
        .skip(1)
        .filter_map(|t| {
            let tag = t.split('>').next()?;
            Some(tag.split(" fill=\"").nth(1)?.split('"').next()?.to_string())
        })
        .collect()
}

fn exit_map_svg(r: &TraceReport) -> String {
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (600, 400)).into_drawing_area();
        draw_exit_map(&area, r, 1.0, tirtrace::units::LengthUnit::Mm).unwrap();
    }
    svg
}

#[test]
fn one_bright_cell_does_not_set_the_exit_maps_colour_scale() {
    let mut s = Scenario::from_json(THERMOSTAT).unwrap();
    s.trace.rays = 100_000;
    let r = traced(&s);
    let plain = exit_map_svg(&r);
    assert!(
        plain.contains("Colour scale: 1 is the 99th percentile of the cells known to ±50 % (95 %)"),
        "the rule is written under the map: {plain}"
    );
    let brightest = (0..r.exit_map.share_per_area.len())
        .max_by(|&a, &b| r.exit_map.share_per_area[a].total_cmp(&r.exit_map.share_per_area[b]))
        .unwrap();
    // One cell twenty times brighter: a noisy one (a single heavy ray: its interval is wider
    // than its value) or even a steady one. Only that cell's colour may change.
    for ci_of_share in [1.96, 0.01] {
        let mut spiked = r.clone();
        let m = &mut spiked.exit_map;
        m.share[brightest] *= 20.0;
        m.share_per_area[brightest] *= 20.0;
        m.ci95[brightest] = ci_of_share * m.share[brightest];
        // Leaving the steady cells (the noisy case) moves the percentile by one rank at most.
        let (was, is) = (
            map_scale_top(&r.exit_map).unwrap(),
            map_scale_top(m).unwrap(),
        );
        // The lit cells' values in order: the new top is the old one or its neighbour by rank.
        let mut lit: Vec<f64> = r
            .exit_map
            .share_per_area
            .iter()
            .copied()
            .filter(|v| *v > 0.0)
            .collect();
        lit.sort_by(f64::total_cmp);
        let at = lit.iter().position(|&v| v == was.top_per_mm2).unwrap();
        assert!(
            lit[at.saturating_sub(1)..=(at + 1).min(lit.len() - 1)].contains(&is.top_per_mm2),
            "{was:?} → {is:?}"
        );
        // Colours against the same map with that cell dark: a noisy spike leaves the steady
        // cells as a dark cell does (the scale is theirs), a steady one stays among them and
        // below the percentile (the plain map is the reference).
        let reference = if ci_of_share > 1.0 {
            let mut dark = r.clone();
            let d = &mut dark.exit_map;
            (
                d.share[brightest],
                d.share_per_area[brightest],
                d.ci95[brightest],
            ) = (0.0, 0.0, 0.0);
            assert_eq!(map_scale_top(d).unwrap().top_per_mm2, is.top_per_mm2);
            exit_map_svg(&dark)
        } else {
            plain.clone()
        };
        let (a, b) = (rect_fills(&reference), rect_fills(&exit_map_svg(&spiked)));
        assert_eq!(a.len(), b.len());
        // A channel may move by one level (rounding).
        let channels = |hex: &str| -> Vec<i32> {
            let h = hex.trim_start_matches('#');
            (0..3)
                .map(|i| {
                    h.get(2 * i..2 * i + 2)
                        .and_then(|c| i32::from_str_radix(c, 16).ok())
                        .unwrap_or(-99)
                })
                .collect()
        };
        let changed = a
            .iter()
            .zip(&b)
            .filter(|(x, y)| {
                let (x, y) = (channels(x), channels(y));
                x.iter().zip(&y).any(|(p, q)| (p - q).abs() > 1)
            })
            .count();
        assert!(
            changed <= 1,
            "{changed} cells changed colour (interval {ci_of_share} × value)"
        );
    }
}
