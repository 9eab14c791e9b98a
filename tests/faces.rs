//! Shaped end faces against the outside world: a domed exit face focuses a collimated beam
//! where the paraxial formula of a single refracting surface puts it, a domed entry face with a
//! point source at its focus sends the light along the axis, a cut face deviates a collimated
//! beam by Snell's law, and a textured face's light follows its microfacet model; then the
//! faces' checks and the flat default.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use glam::DVec3;
use serde_json::{json, Value};
use tirtrace::faces::rough::{cross, facet_event, Crossing, FacetEvent};
use tirtrace::interface::fresnel_reflectance;
use tirtrace::scenario::Scenario;
use tirtrace::trace::{Fate, Path, Prepared};

/// Index of the test rods: a constant 1.5 (an invented glass), in air.
const N_ROD: f64 = 1.5;

/// A straight round rod 3 mm across and 10 mm long of index 1.5 in air, with the given faces,
/// fed by `emitter` at `gap_mm`.
fn rod(entry_face: Value, exit_face: Value, emitter: Value, gap_mm: f64, rays: u64) -> Prepared {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}},
                  "material": {"custom": {"model": "constant", "n": N_ROD}},
                  "surroundings": {"library": "air"},
                  "entry_face": entry_face, "exit_face": exit_face},
        "route": [{"straight": {"length_mm": 10.0}}],
        "source": {"emitter": emitter, "wavelength_nm": 550, "gap_mm": gap_mm},
        "trace": {"rays": rays, "seed": 11}
    });
    let s = Scenario::from_json(&doc.to_string()).unwrap();
    assert!(s.problems().is_empty(), "{:?}", s.problems());
    let p = Prepared::new(&s).unwrap();
    // Air is the reference of every index: 1 exactly.
    assert_eq!(p.indices.n_out, 1.0);
    p
}

/// A collimated beam `diameter_mm` across along the axis.
fn beam(diameter_mm: f64) -> Value {
    json!({"beam": {"diameter_mm": diameter_mm, "divergence_half_angle_deg": 0}})
}

/// The delivered paths that went straight through: emitter, entry face, exit face, beyond.
fn straight_through(p: &Prepared, keep: usize) -> Vec<Path> {
    p.trace_batch(0, keep)
        .paths
        .into_iter()
        .filter(|path| path.fate == Fate::Delivered && path.points.len() == 4)
        .collect()
}

fn v(p: [f64; 3]) -> DVec3 {
    DVec3::from_array(p)
}

/// A domed exit face focuses a collimated beam at the image distance of a single spherical
/// refracting surface, n₁/s + n₂/s' = (n₂ − n₁)/R: with s = ∞, n₁ = 1.5 (the rod), n₂ = 1 (air)
/// and the centre of curvature on the rod's side (R = −4 mm), s' = n₂R/(n₂ − n₁) = 4/0.5 = 8 mm
/// from the vertex. Source: E. Hecht, *Optics*, 5th ed. (Pearson, 2017), §5.2.3, eq. (5.8)
/// (section number from memory). A ray at height h crosses the axis nearer, by the spherical
/// aberration, ∝ h² to first order: the crossings of rays within h ≤ 0.2 mm (h/R ≤ 0.05) are
/// fitted by s'(h) = s'₀ − k h² and s'₀, the paraxial focus, must be within 10⁻⁴ of 8 mm; the
/// rays far out must focus nearer by what the fit predicts there at least (k > 0).
#[test]
fn a_domed_exit_face_focuses_a_collimated_beam_where_the_paraxial_formula_says() {
    let radius_mm = 4.0;
    let p = rod(
        json!("flat"),
        json!({"dome": {"radius_mm": radius_mm}}),
        beam(0.4),
        1.0,
        4096,
    );
    let sag = radius_mm - (radius_mm * radius_mm - 1.5 * 1.5_f64).sqrt();
    let vertex_z = 10.0 + sag;
    let expected = radius_mm / (N_ROD - 1.0);
    let crossings: Vec<(f64, f64)> = straight_through(&p, 400)
        .iter()
        .map(|path| {
            let (a, b) = (v(path.points[2]), v(path.points[3]));
            let d = b - a;
            // Where the meridional ray crosses the axis: a + t d with (a + t d).xy = 0.
            let t = -a.truncate().dot(d.truncate()) / d.truncate().length_squared();
            let crossing = a + t * d;
            assert!(crossing.truncate().length() < 1e-9);
            (a.truncate().length(), crossing.z - vertex_z)
        })
        .filter(|&(h, _)| h > 0.02)
        .collect();
    assert!(crossings.len() > 300, "{} rays", crossings.len());
    // Least squares of s' on h².
    let n = crossings.len() as f64;
    let mx = crossings.iter().map(|&(h, _)| h * h).sum::<f64>() / n;
    let my = crossings.iter().map(|&(_, s)| s).sum::<f64>() / n;
    let sxy = crossings
        .iter()
        .map(|&(h, s)| (h * h - mx) * (s - my))
        .sum::<f64>();
    let sxx = crossings
        .iter()
        .map(|&(h, _)| (h * h - mx) * (h * h - mx))
        .sum::<f64>();
    let slope = sxy / sxx;
    let paraxial = my - slope * mx;
    assert!(
        (paraxial - expected).abs() < 1e-4 * expected,
        "paraxial focus {paraxial} mm from the vertex, the formula {expected}"
    );
    assert!(slope < 0.0, "spherical aberration {slope} mm/mm²");
    for &(h, s) in &crossings {
        assert!(
            (s - (paraxial + slope * h * h)).abs() < 1e-3,
            "h = {h}: {s}"
        );
    }
}

/// A point source at the focus of a domed entry face, s = n₁R/(n₂ − n₁) = 4/0.5 = 8 mm in front
/// of the vertex (n₁ = 1 air, n₂ = 1.5, R = 4 mm; Hecht, *Optics*, 5th ed., §5.2.3, eq. (5.8),
/// from memory), is sent along the axis: every paraxial ray inside runs parallel to it.
#[test]
fn a_point_source_at_the_focus_of_a_domed_entry_face_is_sent_along_the_axis() {
    let radius_mm = 4.0;
    let sag = radius_mm - (radius_mm * radius_mm - 1.5 * 1.5_f64).sqrt();
    let focus = radius_mm / (N_ROD - 1.0);
    let point = json!({"led": {"area": {"disk": {"diameter_mm": 0.001}},
                               "pattern": {"half_intensity": {"half_angle_deg": 0.5}}}});
    let p = rod(
        json!({"dome": {"radius_mm": radius_mm}}),
        json!("flat"),
        point,
        focus + sag,
        4096,
    );
    let paths = straight_through(&p, 400);
    assert!(paths.len() > 300, "{} paths", paths.len());
    let mut widest = 0.0_f64;
    for path in &paths {
        let (a, b) = (v(path.points[1]), v(path.points[2]));
        let d = (b - a).normalize();
        widest = widest.max(a.truncate().length());
        // Paraxial: the ray at height h ≤ 0.07 mm (h/R < 0.02) is parallel to 1e-4 rad.
        assert!(d.truncate().length() < 1e-4, "{d:?} at {a:?}");
    }
    assert!(widest > 0.03, "the rays meet the dome at up to {widest} mm");
}

/// A collimated beam along the axis onto a domed entry face (R = 2 mm) meets the sphere at
/// height h at the incidence θ with sin θ = h/R, so the share reflected there is the beam's
/// mean of the unpolarised Fresnel reflectance, (2/H²) ∫₀^H R(θ(h)) h dh over its radius H
/// (Fresnel's equations, M. Born and E. Wolf, *Principles of Optics*, 7th ed., §1.5.2, written
/// out here; the integral by Simpson's rule). The entry face's reflection is split by expected
/// value (each ray tallies its R and enters with 1 − R), so the share carries only the beam's
/// sampling, not a draw per ray: it must agree within its 95 % interval (or 10⁻⁶, the
/// integral's own accuracy with room), and that interval must be under a tenth of the binomial
/// one √(p(1 − p)/n) a draw per ray would give (measured: 7·10⁻⁵ of it; with the ray's own draw
/// from its scrambled point, 0.22 of it, and the test fails).
#[test]
fn a_domed_entry_face_reflects_the_beams_mean_fresnel_reflectance() {
    let (radius_mm, beam_mm) = (2.0, 2.8);
    let p = rod(
        json!({"dome": {"radius_mm": radius_mm}}),
        json!("flat"),
        beam(beam_mm),
        1.0,
        40_960,
    );
    let fresnel = |cos_i: f64| {
        let (n1, n2) = (1.0, N_ROD);
        let sin_t = n1 / n2 * (1.0 - cos_i * cos_i).sqrt();
        let cos_t = (1.0 - sin_t * sin_t).sqrt();
        let rs = (n1 * cos_i - n2 * cos_t) / (n1 * cos_i + n2 * cos_t);
        let rp = (n2 * cos_i - n1 * cos_t) / (n2 * cos_i + n1 * cos_t);
        0.5 * (rs * rs + rp * rp)
    };
    let top = 0.5 * beam_mm;
    let steps = 2000;
    let f = |k: usize| {
        let h = top * k as f64 / steps as f64;
        let s = h / radius_mm;
        fresnel((1.0 - s * s).sqrt()) * h
    };
    let simpson: f64 = (0..=steps)
        .map(|k| {
            let c = if k == 0 || k == steps {
                1.0
            } else if k % 2 == 1 {
                4.0
            } else {
                2.0
            };
            c * f(k)
        })
        .sum::<f64>()
        * (top / steps as f64)
        / 3.0;
    let want = 2.0 * simpson / (top * top);
    let r = p.report(&p.trace_all_serial(0));
    let reflected = r.budget.reflected_entry;
    let binomial = 1.96 * (want * (1.0 - want) / r.rays as f64).sqrt();
    println!("reflected at the dome {reflected:?}, the Fresnel mean {want}, binomial ± {binomial}");
    assert!(want > 0.04 && want < 0.06, "{want}");
    assert!(
        (reflected.share - want).abs() <= reflected.ci95.max(1e-6),
        "{reflected:?} against {want}"
    );
    assert!(
        reflected.ci95 < 0.1 * binomial,
        "{reflected:?}, binomial ± {binomial}"
    );
    assert!((r.budget_sum - 1.0).abs() < 1e-12, "{}", r.budget_sum);
}

/// A cut exit face at α to the section turns an axial beam by Snell's law: it meets the face at
/// α and leaves at θ = asin(n sin α) from the face's normal, δ = θ − α from the axis, towards
/// the cut's thick side (+height), as a prism turns light towards its base. Source: Snell's law, M. Born and E. Wolf, *Principles of
/// Optics*, 7th ed., §1.5.1.
#[test]
fn a_cut_exit_face_turns_a_collimated_beam_by_snells_law() {
    for angle_deg in [10.0_f64, 25.0, 40.0] {
        let p = rod(
            json!("flat"),
            json!({"cut": {"angle_deg": angle_deg}}),
            beam(2.0),
            1.0,
            4096,
        );
        let alpha = angle_deg.to_radians();
        let sin_t = N_ROD * alpha.sin();
        let paths = straight_through(&p, 200);
        if sin_t >= 1.0 {
            assert!(paths.is_empty(), "{angle_deg}°: beyond the critical angle");
            continue;
        }
        let delta = sin_t.asin() - alpha;
        assert!(paths.len() > 100, "{angle_deg}°: {} paths", paths.len());
        for path in &paths {
            let d = (v(path.points[3]) - v(path.points[2])).normalize();
            assert!(d.x.abs() < 1e-12);
            assert!(d.y > 0.0, "{angle_deg}°: turned towards −height");
            let turned = d.y.atan2(d.z);
            assert!(
                (turned - delta).abs() < 1e-12,
                "{angle_deg}°: turned {} rad, Snell {delta}",
                turned
            );
        }
    }
    // Beyond the critical angle (asin(1/1.5) = 41.8°) the face turns the whole beam back.
    let p = rod(
        json!("flat"),
        json!({"cut": {"angle_deg": 45.0}}),
        beam(2.0),
        1.0,
        4096,
    );
    let r = p.report(&p.trace_all_serial(0));
    let t = r.exit_turn_back.of_reaching.unwrap();
    assert!(t.by_total_reflection.share > 0.99, "{t:?}");
}

/// The textured face's first facet against its published model. At normal incidence the facet
/// normals seen by the ray follow D(m) cos θm, so P(tan θm < x) = x²/(α² + x²) for GGX
/// (B. Walter, S. R. Marschner, H. Li, K. E. Torrance, "Microfacet models for refraction through
/// rough surfaces", EGSR 2007, eq. (33)); the ray leaves by refraction at the facet with the
/// probability 1 − F, unpolarised Fresnel (Born and Wolf, §1.5.2), in the direction Snell's law
/// gives there — the model's transmitted density (their eq. (21) without the outgoing ray's
/// shadowing, which our face sends to another facet). The histogram of the polar angle of the
/// transmitted light, from 400 000 sampled facets, against that density integrated over each
/// 5° bin: Pearson's χ² with 17 degrees of freedom under 60 (p ≈ 10⁻⁶ by chance), and a model
/// with a roughness 10 % off must fail it.
#[test]
fn a_textured_face_transmits_as_its_microfacet_model_says() {
    let alpha = 0.3;
    let (n_i, n_t) = (N_ROD, 1.0);
    let samples = 400_000;
    let bins = 18;
    let mut counts = vec![0.0; bins + 1];
    let mut seed = 0x1234_5678_u64;
    let mut uniform = move || {
        // SplitMix64, the test's own numbers.
        seed = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = seed;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    };
    let d = -DVec3::Z;
    for _ in 0..samples {
        let u = [uniform(), uniform(), uniform()];
        if let FacetEvent::Refracted(t) = facet_event(d, n_i, n_t, alpha, u) {
            let theta = (-t.z).clamp(-1.0, 1.0).acos().to_degrees();
            counts[((theta / 5.0) as usize).min(bins)] += 1.0;
        }
    }
    let expected = |alpha_model: f64| {
        let mut e = vec![0.0; bins + 1];
        let cdf = |th: f64| {
            let x = th.tan();
            x * x / (alpha_model * alpha_model + x * x)
        };
        let steps = 200_000;
        let top = std::f64::consts::FRAC_PI_2;
        for k in 0..steps {
            let (a, b) = (
                top * k as f64 / steps as f64,
                top * (k + 1) as f64 / steps as f64,
            );
            let m = 0.5 * (a + b);
            let sin_t = n_i / n_t * m.sin();
            if sin_t >= 1.0 {
                continue;
            }
            let transmitted = 1.0 - fresnel_reflectance(m.cos(), n_i, n_t);
            // The refracted ray is θt from the facet normal, which is θm from the axis.
            let theta = (sin_t.asin() - m).abs().to_degrees();
            e[((theta / 5.0) as usize).min(bins)] +=
                (cdf(b) - cdf(a)) * transmitted * samples as f64;
        }
        e
    };
    let chi2 = |e: &[f64]| {
        counts
            .iter()
            .zip(e)
            .filter(|(_, &e)| e > 5.0)
            .map(|(&o, &e)| (o - e) * (o - e) / e)
            .sum::<f64>()
    };
    let model = chi2(&expected(alpha));
    assert!(model < 60.0, "χ² = {model} against the model");
    let off = chi2(&expected(1.1 * alpha));
    assert!(off > 60.0, "χ² = {off} against a model 10 % rougher");
}

/// Whatever the facets do, a ray crossing a textured face leaves on one side or the other:
/// reflected back (z > 0) or transmitted (z < 0), a unit direction.
#[test]
fn a_ray_always_leaves_a_textured_face() {
    let mut k = 0u64;
    let mut uniform = move || {
        k += 1;
        ((k.wrapping_mul(0x9E37_79B9_7F4A_7C15)) >> 11) as f64 / (1u64 << 53) as f64
    };
    for i in 0..2000 {
        let theta = (i as f64 / 2000.0) * 1.5;
        let d = DVec3::new(theta.sin(), 0.0, -theta.cos());
        for (n_i, n_t, alpha) in [(1.5, 1.0, 0.05), (1.5, 1.0, 1.0), (1.0, 1.5, 0.5)] {
            match cross(d, n_i, n_t, alpha, &mut uniform) {
                Crossing::Reflected(r, _) => assert!(r.z > 0.0 && (r.length() - 1.0).abs() < 1e-9),
                Crossing::Transmitted(t) => {
                    assert!(t.z < 0.0 && (t.length() - 1.0).abs() < 1e-9)
                }
            }
        }
    }
}

fn problems_of(entry_face: Value, exit_face: Value, gap_mm: f64, distance_mm: f64) -> Vec<String> {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"rectangular": {"width_mm": 4.0, "height_mm": 2.0}},
                  "material": {"library": "pmma"}, "surroundings": {"library": "air"},
                  "entry_face": entry_face, "exit_face": exit_face},
        "route": [{"straight": {"length_mm": 10.0}},
                  {"taper": {"length_mm": 5.0, "end_section": {"rectangular": {"width_mm": 3.0, "height_mm": 1.0}}}}],
        "source": {"emitter": {"led": {"area": {"square": {"side_mm": 0.5}}, "pattern": "lambertian"}},
                   "wavelength_nm": 550, "gap_mm": gap_mm},
        "receiver": {"diameter_mm": 5.0, "distance_mm": distance_mm}
    });
    Scenario::from_json(&doc.to_string())
        .unwrap()
        .problems()
        .into_iter()
        .map(|p| p.to_string())
        .collect()
}

#[test]
fn face_problems_name_the_field_and_the_allowed_range() {
    // A dome must be wider than half the section across its corners: √(2² + 1²) = 2.236 mm at
    // the entry, √(1.5² + 0.5²) = 1.581 mm at the taper's end.
    let p = problems_of(
        json!({"dome": {"radius_mm": 2.0}}),
        json!({"dome": {"radius_mm": 1.5}}),
        5.0,
        5.0,
    );
    assert_eq!(p.len(), 2, "{p:?}");
    assert!(
        p[0].starts_with("guide.entry_face.dome.radius_mm must be more than 2.236"),
        "{p:?}"
    );
    assert!(
        p[1].starts_with("guide.exit_face.dome.radius_mm must be more than 1.581"),
        "{p:?}"
    );
    let p = problems_of(
        json!({"cut": {"angle_deg": 70}}),
        json!({"textured": {"roughness": 0}}),
        5.0,
        5.0,
    );
    assert_eq!(p.len(), 2, "{p:?}");
    assert!(
        p[0].starts_with("guide.entry_face.cut.angle_deg must be at most 60°, got 70"),
        "{p:?}"
    );
    assert!(
        p[1].starts_with("guide.exit_face.textured.roughness must be at least 0.01, got 0"),
        "{p:?}"
    );
    let p = problems_of(
        json!({"textured": {"roughness": 0.2}}),
        json!("flat"),
        5.0,
        5.0,
    );
    assert_eq!(p.len(), 1, "{p:?}");
    assert!(
        p[0].starts_with("guide.entry_face must be flat, dome, cut or pocket"),
        "{p:?}"
    );
    // What stands out needs room: a 30° cut rises 2 tan 30° = 1.155 mm towards the LED, a dome
    // of 2 mm over the exit's 1.581 mm rim 0.775 mm towards the receiver.
    let p = problems_of(
        json!({"cut": {"angle_deg": 30}}),
        json!({"dome": {"radius_mm": 2.0}}),
        1.0,
        0.5,
    );
    assert_eq!(p.len(), 2, "{p:?}");
    assert!(
        p[0].starts_with(
            "source.gap_mm must be more than 1.154701 mm, the height the entry face's cut"
        ),
        "{p:?}"
    );
    assert!(
        p[1].starts_with("receiver.distance_mm must be more than 0.775"),
        "{p:?}"
    );
    assert!(problems_of(
        json!({"cut": {"angle_deg": 30}}),
        json!({"dome": {"radius_mm": 2.0}}),
        1.2,
        0.8
    )
    .is_empty());
    // Unknown shapes and fields are refused with the field's path.
    let doc = json!({"version": 1, "guide": {"section": {"round": {"diameter_mm": 3}}, "material": {"library": "pmma"},
        "surroundings": {"library": "air"}, "exit_face": {"dome": {"radius": 3}}},
        "route": [{"straight": {"length_mm": 10}}],
        "source": {"emitter": {"beam": {"diameter_mm": 1}}, "wavelength_nm": 550}});
    let e = Scenario::from_json(&doc.to_string())
        .unwrap_err()
        .to_string();
    assert!(e.contains("guide.exit_face"), "{e}");
}

/// A flat face written out is the document without it: it reads, writes and traces exactly as a
/// document that never had the field.
#[test]
fn a_flat_face_is_the_document_without_one() {
    let p = rod(json!("flat"), json!("flat"), beam(2.0), 1.0, 5000);
    let text = serde_json::to_string(&p.scenario).unwrap();
    assert!(
        !text.contains("entry_face") && !text.contains("exit_face"),
        "{text}"
    );
    let mut doc: Value = serde_json::from_str(&text).unwrap();
    doc["guide"]["exit_face"] = json!("flat");
    let same = Prepared::new(&Scenario::from_json(&doc.to_string()).unwrap()).unwrap();
    assert_eq!(p.trace_all_serial(3), same.trace_all_serial(3));
}

/// The 3D view's outline draws a shaped face to scale: the entry dome of the panel example
/// (R = 4 mm over a 1.5 mm rim) stands R − √(R² − 1.5²) towards the LED, its rim on the entry
/// plane; the exit dome (R = 2.5 mm) as far beyond the exit plane along the exit axis; the
/// bounds hold them; a flat face adds no lines.
#[test]
fn the_outline_draws_shaped_faces_to_scale() {
    let text = include_str!("../examples/scenarios/panel_indicator_domed_lens.json");
    let s = Scenario::from_json(text).unwrap();
    let o = tirtrace::outline::route_outline(&s).unwrap();
    assert_eq!(o.faces.len(), 2);
    let sag = |r: f64| r - (r * r - 1.5 * 1.5_f64).sqrt();
    let entry = &o.faces[0];
    assert!((entry.height_mm - sag(4.0)).abs() < 1e-12);
    let lowest = entry
        .lines
        .iter()
        .flatten()
        .map(|p| p[2])
        .fold(f64::INFINITY, f64::min);
    assert!((lowest + sag(4.0)).abs() < 1e-12, "{lowest}");
    for p in &entry.lines[0] {
        assert!(p[2].abs() < 1e-12 && ((p[0] * p[0] + p[1] * p[1]).sqrt() - 1.5).abs() < 1e-12);
    }
    assert!(o.bounds.min[2] <= lowest);
    let exit = &o.faces[1];
    let (origin, z) = (DVec3::from(o.exit.origin), DVec3::from(o.exit.z));
    let highest = exit
        .lines
        .iter()
        .flatten()
        .map(|&p| (DVec3::from(p) - origin).dot(z))
        .fold(f64::NEG_INFINITY, f64::max);
    assert!((highest - sag(2.5)).abs() < 1e-12, "{highest}");
    let flat = Scenario::from_json(&text.replace(
        "\"exit_face\": { \"dome\": { \"radius_mm\": 2.5 } }",
        "\"exit_face\": \"flat\"",
    ))
    .unwrap();
    assert_eq!(
        tirtrace::outline::route_outline(&flat).unwrap().faces.len(),
        1
    );
}

/// A point LED (1 µm across) at the centre of a hemispherical pocket (R = 1 mm, as deep as its
/// radius, the LED on the entry plane) sends every ray along a radius: each meets the pocket's surface square
/// on and goes on undeviated (Snell's law at normal incidence), and the light reflected there,
/// which goes back to the centre and out of the mouth, is the normal-incidence Fresnel
/// reflectance ((n − 1)/(n + 1))² = 0.04 for n = 1.5 (Born and Wolf, *Principles of Optics*,
/// 7th ed., §1.5.2) within its Monte Carlo 95 % interval.
#[test]
fn a_point_led_at_the_centre_of_a_pocket_meets_it_square_on() {
    let point = json!({"led": {"area": {"disk": {"diameter_mm": 0.001}}, "pattern": "lambertian"}});
    let p = rod(
        json!({"pocket": {"radius_mm": 1.0, "depth_mm": 1.0}}),
        json!("flat"),
        point,
        0.0,
        40_000,
    );
    for path in p.trace_batch(0, 300).paths {
        if path.fate == Fate::ReflectedEntry || path.points.len() < 3 {
            continue;
        }
        let (a, b, c) = (v(path.points[0]), v(path.points[2]), v(path.points[3]));
        // The LED, 1 µm across, is within 0.5 µm of the centre: radial to 10⁻³.
        assert!(((b - a).length() - 1.0).abs() < 1e-3, "{:?}", path.points);
        let (before, after) = ((b - a).normalize(), (c - b).normalize());
        assert!(
            (before - after).length() < 1e-3,
            "deviated: {before:?} → {after:?}"
        );
    }
    let r = p.report(&p.trace_all_serial(0));
    let reflected = r.budget.reflected_entry;
    assert!(
        (reflected.share - 0.04).abs() < reflected.ci95.max(1e-3),
        "{reflected:?}"
    );
}

/// A pocket is a concave surface, air to glass, with its centre of curvature on the air side
/// (R = −1 mm): a collimated beam is spread as from a virtual focus s′ = n₂R/(n₂ − n₁) = 1.5 ×
/// (−1)/0.5 = −3 mm, in front of the vertex (Hecht, *Optics*, 5th ed., §5.2.3, eq. (5.8), from
/// memory). The rays within h ≤ 0.05 mm of the axis, traced back, cross it there within 0.5 %.
#[test]
fn a_pocket_spreads_a_collimated_beam_from_the_virtual_focus_of_the_paraxial_formula() {
    let p = rod(
        json!({"pocket": {"radius_mm": 1.0, "depth_mm": 0.5}}),
        json!("flat"),
        beam(0.1),
        0.5,
        4096,
    );
    let vertex_z = 0.5;
    let mut seen = 0;
    for path in p.trace_batch(0, 400).paths {
        // Emitter, mouth, pocket surface, then on inside the guide.
        if path.points.len() < 4 || path.fate == Fate::ReflectedEntry {
            continue;
        }
        let (a, b) = (v(path.points[2]), v(path.points[3]));
        let h = a.truncate().length();
        if !(0.01..=0.05).contains(&h) {
            continue;
        }
        let d = b - a;
        let t = -a.truncate().dot(d.truncate()) / d.truncate().length_squared();
        let s_image = (a + t * d).z - vertex_z;
        assert!(
            (s_image + 3.0).abs() < 0.015,
            "h = {h}: virtual focus at {s_image}"
        );
        seen += 1;
    }
    assert!(seen > 100, "{seen} rays");
}

#[test]
fn pocket_problems_name_the_field_and_the_allowed_range() {
    let problems = |face: Value, first: Value| {
        let doc = json!({"version": 1,
            "guide": {"section": {"round": {"diameter_mm": 3}}, "material": {"library": "pmma"},
                      "surroundings": {"library": "air"}, "entry_face": face},
            "route": [first, {"straight": {"length_mm": 5}}],
            "source": {"emitter": {"beam": {"diameter_mm": 1, "divergence_half_angle_deg": 0}}, "wavelength_nm": 550}});
        Scenario::from_json(&doc.to_string())
            .unwrap()
            .problems()
            .into_iter()
            .map(|p| p.to_string())
            .collect::<Vec<_>>()
    };
    let straight = json!({"straight": {"length_mm": 4}});
    let p = problems(
        json!({"pocket": {"radius_mm": 1, "depth_mm": 1.2}}),
        straight.clone(),
    );
    assert_eq!(p.len(), 1, "{p:?}");
    assert!(
        p[0].starts_with("guide.entry_face.pocket.depth_mm must be at most 1 mm"),
        "{p:?}"
    );
    // A 2 mm sphere 1 mm deep opens √(1 × 3) = 1.73 mm: 3.46 mm across, wider than the 3 mm rod.
    let p = problems(
        json!({"pocket": {"radius_mm": 2, "depth_mm": 1}}),
        straight.clone(),
    );
    assert!(
        p[0].starts_with(
            "guide.entry_face.pocket.radius_mm with a depth of 1 mm opens a mouth 3.464"
        ),
        "{p:?}"
    );
    let p = problems(
        json!({"pocket": {"radius_mm": 1, "depth_mm": 0.5}}),
        json!({"bend": {"radius_mm": 5, "angle_deg": 90}}),
    );
    assert!(
        p[0].starts_with("guide.entry_face a pocket needs the route to start with a straight"),
        "{p:?}"
    );
    let p = problems(
        json!({"pocket": {"radius_mm": 1, "depth_mm": 0.5}}),
        json!({"straight": {"length_mm": 0.4}}),
    );
    assert!(p[0].starts_with("guide.entry_face.pocket.depth_mm must be less than the first straight's length (0.4 mm)"), "{p:?}");
    assert!(problems(
        json!({"pocket": {"radius_mm": 1, "depth_mm": 0.5}}),
        straight
    )
    .is_empty());
}

/// A point LED (1 µm across) inside a hemispherical pocket (R = 1.4 mm, as deep as its
/// radius), 1 µm above the entry plane on the axis, tilted 60° from the axis. A ray heading
/// back (dz < 0) leaves through the mouth unless it runs within h/R = 7·10⁻⁴ rad of the plane
/// (then it meets the pocket's side first); every other ray meets the pocket's surface. The
/// share of a Lambertian emitter's power on the far side of a plane tilted α to its own is
/// (1 − cos α)/2 (the configuration factor from a plane element to a plane through it at an
/// angle, complemented: J. R. Howell, *A Catalog of Radiation Heat Transfer Configuration
/// Factors*, from memory; integrating cos θ over the lune gives it, and a direct sum over 4·10⁵
/// directions gives 0.2499 for α = 60°, our own check): 1/4 here, less the grazing band's
/// ~4·10⁻⁴, a tenth of the interval. The traced share that missed the entry matches it.
#[test]
fn an_led_inside_a_pocket_sends_the_light_heading_back_out_of_its_mouth() {
    let doc = json!({
        "version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3.0}},
                  "material": {"custom": {"model": "constant", "n": N_ROD}},
                  "surroundings": {"library": "air"},
                  "entry_face": {"pocket": {"radius_mm": 1.4, "depth_mm": 1.4}}},
        "route": [{"straight": {"length_mm": 10.0}}],
        "source": {"emitter": {"led": {"area": {"disk": {"diameter_mm": 0.001}}, "pattern": "lambertian"}},
                   "wavelength_nm": 550, "gap_mm": -0.001, "tilt_deg": 60, "tilt_toward_deg": 30},
        "trace": {"rays": 40_000, "seed": 5}
    });
    let s = Scenario::from_json(&doc.to_string()).unwrap();
    assert!(s.problems().is_empty(), "{:?}", s.problems());
    let p = Prepared::new(&s).unwrap();
    let r = p.report(&p.trace_all_serial(0));
    let missed = r.budget.missed_entry;
    assert!(
        (missed.share - 0.25).abs() < missed.ci95,
        "missed {missed:?}, expected 0.25"
    );
    // The sampled paths: a ray that missed left through the mouth; one that entered met the
    // pocket's surface (on the sphere) and went on by Snell's law, n₁ sin θ₁ = n₂ sin θ₂.
    let centre = DVec3::ZERO;
    let mut entered = 0;
    for path in p.trace_batch(0, 400).paths {
        let (a, b) = (v(path.points[0]), v(path.points[1]));
        if path.fate == Fate::Missed {
            assert!(b.z.abs() < 1e-9 && b.truncate().length() < 1.4, "{b:?}");
            continue;
        }
        assert!(((b - centre).length() - 1.4).abs() < 1e-9, "{b:?}");
        if path.fate == Fate::ReflectedEntry || path.points.len() < 3 {
            continue;
        }
        let c = v(path.points[2]);
        let normal = (b - centre).normalize();
        let (d1, d2) = ((b - a).normalize(), (c - b).normalize());
        let (sin1, sin2) = (d1.cross(normal).length(), d2.cross(normal).length());
        assert!((sin1 - N_ROD * sin2).abs() < 1e-9, "{sin1} vs {sin2}");
        entered += 1;
    }
    assert!(entered > 200, "{entered}");
}

/// Moving the LED across the entry plane into the pocket changes nothing abruptly: the budgets
/// at a gap of +1 µm (launched across the gap into the mouth) and −1 µm (launched inside the
/// pocket) agree within their intervals, share by share.
#[test]
fn an_led_moved_into_a_pocket_gives_the_same_budget_as_one_just_below_it() {
    let at = |gap_mm: f64| {
        let p = rod(
            json!({"pocket": {"radius_mm": 1.2, "depth_mm": 0.8}}),
            json!("flat"),
            json!({"led": {"area": {"square": {"side_mm": 0.5}}, "pattern": "lambertian"}}),
            gap_mm,
            40_000,
        );
        p.report(&p.trace_all_serial(0)).budget
    };
    let (below, inside) = (at(0.001), at(-0.001));
    for ((name, _, a), (_, _, b)) in below.shares().iter().zip(inside.shares().iter()) {
        let ci = (a.ci95 * a.ci95 + b.ci95 * b.ci95).sqrt();
        assert!(
            (a.share - b.share).abs() <= ci.max(1e-12),
            "{name}: {a:?} vs {b:?}"
        );
    }
}

/// The gap may go below 0 only with a pocket, and only less deep than it; the LED must fit.
#[test]
fn an_led_in_a_pocket_must_fit_in_it() {
    let problems = |face: Value, emitter: Value, gap_mm: f64| {
        let doc = json!({"version": 1,
            "guide": {"section": {"round": {"diameter_mm": 3}}, "material": {"library": "pmma"},
                      "surroundings": {"library": "air"}, "entry_face": face},
            "route": [{"straight": {"length_mm": 5}}],
            "source": {"emitter": emitter, "wavelength_nm": 550, "gap_mm": gap_mm}});
        Scenario::from_json(&doc.to_string())
            .unwrap()
            .problems()
            .into_iter()
            .map(|p| p.to_string())
            .collect::<Vec<_>>()
    };
    let pocket = json!({"pocket": {"radius_mm": 1, "depth_mm": 0.8}});
    let chip = |side: f64| json!({"led": {"area": {"square": {"side_mm": side}}, "pattern": "lambertian"}});
    assert!(problems(pocket.clone(), chip(0.5), -0.3).is_empty());
    let p = problems(json!("flat"), chip(0.5), -0.3);
    assert!(
        p[0].starts_with("source.gap_mm must be at least 0 mm"),
        "{p:?}"
    );
    let p = problems(pocket.clone(), chip(0.5), -0.8);
    assert!(
        p[0].starts_with("source.gap_mm must be more than -0.8 mm")
            && p[0].contains("inside the entry face's pocket"),
        "{p:?}"
    );
    // A 1.2 mm chip 0.5 mm up in a 1 mm sphere centred 0.2 mm below the plane: its corners are
    // √(0.6² + 0.6² + 0.7²) = 1.100 mm from the centre, 0.1 mm past the surface.
    // Tilted 30°, a 2 mm chip 0.1 mm in front of the entry plane lifts an edge 0.4 mm past it,
    // into the material beside the pocket.
    let doc = json!({"version": 1,
        "guide": {"section": {"round": {"diameter_mm": 3}}, "material": {"library": "pmma"},
                  "surroundings": {"library": "air"}, "entry_face": pocket},
        "route": [{"straight": {"length_mm": 5}}],
        "source": {"emitter": chip(2.0), "wavelength_nm": 550, "gap_mm": 0.1, "tilt_deg": 30}});
    let p: Vec<String> = Scenario::from_json(&doc.to_string())
        .unwrap()
        .problems()
        .into_iter()
        .map(|p| p.to_string())
        .collect();
    assert!(
        p.len() == 1 && p[0].starts_with("source.gap_mm puts part of the LED above the entry face"),
        "{p:?}"
    );
    let p = problems(pocket, chip(1.2), -0.5);
    assert_eq!(p.len(), 1, "{p:?}");
    assert!(
        p[0].starts_with(
            "source.gap_mm puts part of the LED above the entry face, inside its pocket"
        ) && p[0].contains("reaches 0.1 mm past the pocket's surface"),
        "{p:?}"
    );
}
