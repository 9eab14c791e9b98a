//! The far-field intensity map (src/far_field.rs) against the outside world: its bookkeeping,
//! a Lambertian LED through a straight square rod with flat faces (Lambert's law and the Fresnel
//! equations), a collimated beam, and the polar intensity curve where they overlap. Sources at
//! each check and in docs/REFERENCES.md §13.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

use serde_json::{json, Value};
use tirtrace::far_field::{self, cell_edge_deg, CELLS};
use tirtrace::scenario::Scenario;
use tirtrace::trace::{IntensityUnit, Prepared, TraceReport};

fn scenario(v: Value) -> Scenario {
    Scenario::from_json(&v.to_string()).unwrap_or_else(|e| panic!("{e}"))
}

fn run(s: &Scenario) -> TraceReport {
    let p = Prepared::new(s).unwrap_or_else(|e| panic!("{e}"));
    p.report(&p.trace_all_serial(0))
}

/// An example scenario (read at compile time, so that the checks run in wasm too) at `rays`.
fn example(name: &str, rays: u64) -> Scenario {
    let text = match name {
        "thermostat_status_led.json" => {
            include_str!("../examples/scenarios/thermostat_status_led.json")
        }
        "panel_indicator_domed_lens.json" => {
            include_str!("../examples/scenarios/panel_indicator_domed_lens.json")
        }
        "panel_status_bar_rectangular_chip.json" => {
            include_str!("../examples/scenarios/panel_status_bar_rectangular_chip.json")
        }
        _ => panic!("no example {name} here"),
    };
    let mut s = Scenario::from_json(text).unwrap();
    s.trace.rays = rays;
    s
}

const N_ROD: f64 = 1.5;

/// A straight square rod, 3 mm × 3 mm × 20 mm, index 1.5, lossless, in air, flat faces, fed by
/// `emitter` centred on its entry face (no gap).
fn square_rod(emitter: Value, rays: u64) -> Scenario {
    scenario(json!({
        "version": 1,
        "guide": { "section": { "rectangular": { "width_mm": 3.0, "height_mm": 3.0 } },
                   "material": { "custom": { "model": "constant", "n": N_ROD } },
                   "surroundings": { "library": "air" } },
        "route": [{ "straight": { "length_mm": 20.0 } }],
        "source": { "emitter": emitter, "wavelength_nm": 550, "gap_mm": 0.0,
                    "gap_medium": { "library": "air" } },
        "trace": { "rays": rays, "seed": 5, "max_interactions": 100000 }
    }))
}

#[test]
fn the_map_and_the_sideways_light_add_up_to_the_delivered_share() {
    // Bookkeeping: every delivered ray lands once, in a cell or sideways. A flat exit (the
    // thermostat) and a domed one, which can send light out at 90° or more from its axis.
    for name in [
        "thermostat_status_led.json",
        "panel_indicator_domed_lens.json",
    ] {
        let r = run(&example(name, 20_000));
        let f = &r.far_field;
        assert_eq!((f.cells, f.cell_deg), (45, 4.0), "{name}");
        assert_eq!(f.share.len(), CELLS * CELLS);
        let on_map: f64 = f.share.iter().sum();
        let d = r.delivered.share;
        assert!(d > 0.1, "{name}: {d}");
        assert!(
            (on_map + f.sideways.share - d).abs() < 1e-12,
            "{name}: map {on_map} + sideways {} vs delivered {d}",
            f.sideways.share
        );
        // Σ (intensity × cell solid angle) = the map's share: the cells' solid angles are the
        // ones divided by.
        let back: f64 = (0..CELLS * CELLS)
            .map(|k| f.share_per_sr[k] * far_field::solid_angle_of_cell_sr(k))
            .sum();
        assert!((back - on_map).abs() < 1e-12, "{name}");
        assert!(f
            .share_per_sr
            .iter()
            .chain(&f.ci95_per_sr)
            .all(|v| v.is_finite() && *v >= 0.0));
    }
    // A nearly hemispherical dome on a 3 mm rod sends some light out at 90° or more from the
    // axis (from its rim, whose normal is nearly square to the axis): counted apart, and the
    // bookkeeping still holds.
    let dome = scenario(json!({
        "version": 1,
        "guide": { "section": { "round": { "diameter_mm": 3.0 } },
                   "material": { "custom": { "model": "constant", "n": N_ROD } },
                   "surroundings": { "library": "air" },
                   "exit_face": { "dome": { "radius_mm": 1.51 } } },
        "route": [{ "straight": { "length_mm": 10.0 } }],
        "source": { "emitter": { "led": { "area": { "disk": { "diameter_mm": 1.0 } },
                                          "pattern": "lambertian" } },
                    "wavelength_nm": 550, "gap_mm": 0.0 },
        "trace": { "rays": 20_000, "seed": 3 }
    }));
    let r = run(&dome);
    let f = &r.far_field;
    // Well above its noise: more than five standard errors.
    assert!(
        f.sideways.share > 5.0 * f.sideways.ci95 / 1.96,
        "{:?}",
        f.sideways
    );
    let on_map: f64 = f.share.iter().sum();
    assert!((on_map + f.sideways.share - r.delivered.share).abs() < 1e-12);
}

/// Unpolarised Fresnel reflectance from index `n1` into `n2` at incidence cos θᵢ = `cos_i`: the
/// mean of the s and p reflectances (the Fresnel equations: M. Born and E. Wolf, *Principles of
/// Optics*, §1.5; W. J. Smith, *Modern Optical Engineering*, 4th ed., eqs. 11.1–11.2; E. Hecht,
/// *Optics*, ch. 4, from memory; docs/REFERENCES.md §2). Written out here, apart from the core's
/// `interface` module.
fn fresnel_unpolarised(cos_i: f64, n1: f64, n2: f64) -> f64 {
    let sin_t = n1 / n2 * (1.0 - cos_i * cos_i).sqrt();
    if sin_t >= 1.0 {
        return 1.0;
    }
    let cos_t = (1.0 - sin_t * sin_t).sqrt();
    let rs = (n1 * cos_i - n2 * cos_t) / (n1 * cos_i + n2 * cos_t);
    let rp = (n2 * cos_i - n1 * cos_t) / (n2 * cos_i + n1 * cos_t);
    0.5 * (rs * rs + rp * rp)
}

/// The intensity a Lambertian LED in air delivers through the square rod at θ from the axis,
/// share of the emitted power per sr. Lambert's law, I(θ) = cos θ / π per unit emitted power
/// (from memory, any radiometry text). A straight rod with flat walls and faces keeps each ray's
/// angle to its axis; its walls flip the signs of the side components, which leaves the
/// Lambertian pattern of a centred emitter unchanged, and the rod (n ≥ √2) totally reflects
/// every ray entering from air. The flat exit gives back sin θ = n sin θ' (Snell), so the pattern
/// leaves as it came in, times the Fresnel transmittance of both faces at the same pair of
/// angles; the light the exit face reflects comes back from the entry face at the same angle
/// (reflected with the same R by reciprocity), so the passes add up to
/// T² Σ (R²)ᵏ = (1 − R)² / (1 − R²) = (1 − R) / (1 + R).
fn lambertian_through_rod(cos_theta: f64) -> f64 {
    let r = fresnel_unpolarised(cos_theta, 1.0, N_ROD);
    cos_theta / std::f64::consts::PI * (1.0 - r) / (1.0 + r)
}

/// The expected share in the cell `h` × `v` (degrees) for an intensity law `law(cos θ)`: by
/// midpoint quadrature of I dΩ, dΩ = sec²α sec²β / (1 + tan²α + tan²β)^{3/2} dα dβ.
fn expected_share(h: (f64, f64), v: (f64, f64), law: impl Fn(f64) -> f64) -> f64 {
    let steps = 24;
    let (da, db) = ((h.1 - h.0) / steps as f64, (v.1 - v.0) / steps as f64);
    let mut sum = 0.0;
    for i in 0..steps {
        for j in 0..steps {
            let a = (h.0 + (i as f64 + 0.5) * da).to_radians();
            let b = (v.0 + (j as f64 + 0.5) * db).to_radians();
            let s2 = 1.0 + a.tan().powf(2.0) + b.tan().powf(2.0);
            let d_omega = 1.0 / (a.cos().powf(2.0) * b.cos().powf(2.0) * s2.powf(1.5));
            sum += law(1.0 / s2.sqrt()) * d_omega;
        }
    }
    sum * da.to_radians() * db.to_radians()
}

/// Compare the map's intensities along both axes (the middle row and column) with a law: each
/// cell's expected intensity is its expected share p over its solid angle Ω, both by quadrature
/// here (independent of the map's closed form); z = (traced − expected) / σ, σ the binomial
/// standard error √(p (1 − p) / N) / Ω (every ray has weight 1 here). Returns (mean z², largest
/// |z|, share of cells whose 95 % interval holds the expected intensity, cells compared).
fn compare_axes(r: &TraceReport, law: impl Fn(f64) -> f64) -> (f64, f64, f64, usize) {
    let f = &r.far_field;
    let mid = CELLS / 2;
    let n = r.rays as f64;
    let mut cells: Vec<usize> = (0..CELLS).map(|c| mid * CELLS + c).collect();
    cells.extend(
        (0..CELLS)
            .filter(|&row| row != mid)
            .map(|row| row * CELLS + mid),
    );
    let (mut z2, mut worst, mut inside, mut count) = (0.0, 0.0_f64, 0, 0);
    for k in cells {
        let (row, col) = (k / CELLS, k % CELLS);
        let h = (cell_edge_deg(col), cell_edge_deg(col + 1));
        let v = (cell_edge_deg(row), cell_edge_deg(row + 1));
        let p = expected_share(h, v, &law);
        let omega = expected_share(h, v, |_| 1.0);
        // Cells expecting fewer than 20 rays (grazing, near ±90°) have no usable normal interval.
        if p * n < 20.0 {
            continue;
        }
        let (expected, sigma) = (p / omega, (p * (1.0 - p) / n).sqrt() / omega);
        let z = (f.share_per_sr[k] - expected) / sigma;
        z2 += z * z;
        worst = worst.max(z.abs());
        if (f.share_per_sr[k] - expected).abs() <= f.ci95_per_sr[k] {
            inside += 1;
        }
        count += 1;
    }
    (
        z2 / count as f64,
        worst,
        inside as f64 / count as f64,
        count,
    )
}

#[test]
fn a_lambertian_led_through_a_square_rod_keeps_lamberts_law_times_fresnel() {
    // Lambertian through two flat faces: I(θ) = cos θ / π × (1 − R(θ)) / (1 + R(θ))
    // (lambertian_through_rod: Lambert's law; the Fresnel equations, Born & Wolf §1.5), compared
    // cell by cell along both axes of the map (docs/REFERENCES.md §13).
    let led = json!({ "led": { "area": { "disk": { "diameter_mm": 1.0 } },
                               "pattern": "lambertian" } });
    let r = run(&square_rod(led, 400_000));
    assert!(
        r.budget.leaked.share == 0.0,
        "total reflection at every wall"
    );
    let (mean_z2, worst, inside, count) = compare_axes(&r, lambertian_through_rod);
    assert!(count >= 70, "{count} cells compared");
    // The cells' z² average to 1 ± √(2/k) (χ² over its k degrees of freedom, k ≈ 77: ± 0.16);
    // 0.55…1.5 is beyond 3 standard deviations either way, and no single cell beyond 4σ.
    assert!(
        (0.55..1.5).contains(&mean_z2) && worst < 4.0,
        "mean z² {mean_z2}, largest |z| {worst} over {count} cells"
    );
    assert!(
        inside >= 0.88,
        "{inside} of the cells' 95 % intervals hold the law"
    );
    // The check can fail: Lambert's law without the Fresnel factor (8 % more on the axis, much
    // more at large angles) is far outside.
    let (no_fresnel, _, _, _) = compare_axes(&r, |c| c / std::f64::consts::PI);
    eprintln!("mean z² {mean_z2} (without Fresnel {no_fresnel}), largest |z| {worst}");
    assert!(
        no_fresnel > 3.0,
        "mean z² {no_fresnel} for the law without Fresnel"
    );
    // Every delivered ray leaves forward through a flat face.
    assert_eq!(r.far_field.sideways.share, 0.0);
}

#[test]
fn a_collimated_beam_lands_in_the_axis_cell_only() {
    // A beam along the axis through flat faces stays on the axis (Snell at normal incidence):
    // the whole delivered share in the middle cell, its intensity that share over the cell's
    // exact solid angle.
    let beam = json!({ "beam": { "diameter_mm": 1.0, "divergence_half_angle_deg": 0 } });
    let r = run(&square_rod(beam, 4_000));
    let f = &r.far_field;
    let axis = f.axis_cell().unwrap();
    assert_eq!(axis, 22 * CELLS + 22);
    // (To rounding: the map and the budget sum the same weights in different orders.)
    assert!((f.share[axis] - r.delivered.share).abs() < 1e-12);
    assert!(r.delivered.share > 0.9);
    assert!(f
        .share
        .iter()
        .enumerate()
        .all(|(k, &v)| k == axis || v == 0.0));
    // Ω of the ±2° cell by quadrature, apart from the map's closed form.
    let omega = expected_share((-2.0, 2.0), (-2.0, 2.0), |_| 1.0);
    let want = r.delivered.share / omega;
    assert!(
        (f.share_per_sr[axis] - want).abs() < 1e-6 * want,
        "{} vs {want}",
        f.share_per_sr[axis]
    );
}

#[test]
fn the_axis_cell_agrees_with_the_on_axis_intensity() {
    // Where they overlap: the map's middle cell (±2° both ways) and the intensity curve's
    // on-axis figure (the mean over the 5° cone) are means over nearly the same directions of a
    // smooth pattern; they agree within their intervals (positively correlated, as the cell lies
    // in the cone, so the root sum of squares is a generous bound). With a flux in lm, the cell's
    // intensity in cd likewise against the on-axis intensity of the absolute figures.
    for (name, rays) in [
        ("thermostat_status_led.json", 200_000),
        ("panel_status_bar_rectangular_chip.json", 200_000),
    ] {
        let r = run(&example(name, rays));
        let f = &r.far_field;
        let axis = f.axis_cell().unwrap();
        let cone = &r.intensity.on_axis;
        let (cell, cell_ci) = (f.share_per_sr[axis], f.ci95_per_sr[axis]);
        assert!(
            cell > 0.0 && cell_ci > 0.0 && cell_ci < 0.3 * cell,
            "{name}: {cell} ± {cell_ci}"
        );
        let bound = (cell_ci.powf(2.0) + cone.ci95_per_sr.powf(2.0)).sqrt();
        assert!(
            (cell - cone.share_per_sr).abs() <= bound,
            "{name}: cell {cell} ± {cell_ci} vs cone {} ± {}",
            cone.share_per_sr,
            cone.ci95_per_sr
        );
        if let Some(a) = &r.absolute {
            let fa = f
                .absolute
                .as_ref()
                .expect("a flux gives the map in absolute units");
            assert_eq!(fa.intensity_unit, a.intensity_unit);
            let on_axis = &a.on_axis_intensity;
            let bound = (fa.ci95[axis].powf(2.0) + on_axis.ci95.powf(2.0)).sqrt();
            assert!(
                (fa.intensity[axis] - on_axis.value).abs() <= bound,
                "{name}"
            );
            // The same scale as the absolute figures: flux × share per sr.
            let flux = a.delivered.value / r.delivered.share;
            assert!((fa.intensity[axis] - flux * cell).abs() <= 1e-12 * flux * cell);
        }
    }
}

#[test]
fn a_source_in_lumens_gives_candelas_and_none_gives_shares_only() {
    let mut s = example("thermostat_status_led.json", 4_096);
    let r = run(&s);
    let a = r.far_field.absolute.as_ref().unwrap();
    assert_eq!(a.intensity_unit, IntensityUnit::Candela);
    assert_eq!(a.intensity.len(), CELLS * CELLS);
    s.source.flux = None;
    let r = run(&s);
    assert!(r.far_field.absolute.is_none());
    // And a report written before the map reads back with an empty one.
    let mut json: Value = serde_json::to_value(&r).unwrap();
    json.as_object_mut().unwrap().remove("far_field");
    let back = tirtrace::export::report_from_json(&json.to_string()).unwrap();
    assert_eq!(back.far_field.cells, 0);
    assert!(!tirtrace::export::report_csv(&back, "x").contains("Intensity map"));
}

#[test]
fn the_csv_lists_every_cell_with_its_interval() {
    let r = run(&example("thermostat_status_led.json", 20_000));
    let csv = tirtrace::export::report_csv(&r, "Thermostat");
    let (_, map) = csv
        .split_once("\"Intensity map beyond the exit face")
        .unwrap();
    let lines: Vec<&str> = map.lines().collect();
    assert!(lines[0].contains("horizontal angle atan2(x, z), vertical angle atan2(y, z)"));
    assert!(lines[0].contains("cells of 4°"));
    assert_eq!(
        lines[1],
        "horizontal from °,horizontal to °,vertical from °,vertical to °,solid angle sr,\
         % of emitted,± %,% of emitted per sr,± % per sr,intensity cd,± cd"
    );
    let rows: Vec<Vec<f64>> = lines[2..2 + CELLS * CELLS]
        .iter()
        .map(|l| l.split(',').map(|x| x.parse().unwrap()).collect())
        .collect();
    // Rows by vertical angle from −90° up, within a row by horizontal angle.
    assert_eq!(rows[0][..4], [-90.0, -86.0, -90.0, -86.0]);
    assert_eq!(rows[1][..4], [-86.0, -82.0, -90.0, -86.0]);
    assert_eq!(rows[CELLS * CELLS - 1][..4], [86.0, 90.0, 86.0, 90.0]);
    let omega: f64 = rows.iter().map(|r| r[4]).sum();
    assert!((omega - std::f64::consts::TAU).abs() < 1e-9);
    let percent: f64 = rows.iter().map(|r| r[5]).sum();
    let f = &r.far_field;
    let want = 100.0 * (r.delivered.share - f.sideways.share);
    assert!((percent - want).abs() < 1e-6, "{percent} vs {want}");
    for (k, row) in rows.iter().enumerate() {
        assert_eq!(row.len(), 11);
        assert_eq!(row[7], tirtrace::export::percent(f.share_per_sr[k]));
        assert_eq!(row[8], tirtrace::export::percent(f.ci95_per_sr[k]));
        assert!(row[10] >= 0.0 && row[10].is_finite());
    }
    assert!(lines[2 + CELLS * CELLS].is_empty());
    assert!(lines[3 + CELLS * CELLS].starts_with("\"Reaches the window at 90° or more"));
}

#[cfg(not(target_arch = "wasm32"))]
#[test]
fn the_map_is_the_same_for_any_thread_count_and_seeded() {
    // Batches merged in batch order: the map is bit for bit the serial one on 1 to 3 threads,
    // and a different seed gives a different map.
    let mut s = example("panel_indicator_domed_lens.json", 5 * 4096 + 100);
    let p = Prepared::new(&s).unwrap();
    let serial = p.report(&p.trace_all_serial(0)).far_field;
    for threads in [1, 2, 3] {
        let parallel = p
            .report(&p.trace_all_parallel(threads, 0).unwrap())
            .far_field;
        assert_eq!(parallel, serial, "{threads} threads");
    }
    s.trace.seed += 1;
    let p = Prepared::new(&s).unwrap();
    assert_ne!(p.report(&p.trace_all_serial(0)).far_field, serial);
}
