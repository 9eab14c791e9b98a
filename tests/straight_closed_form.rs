//! The reflections along an untapered straight run in closed form (`geometry::StraightRun`)
//! against the walk's own stepping, hit by hit (`Placed::next`, then the mirror reflection,
//! repeated): the same hits, in the same order, at the same points, to 1e-9 mm, over many
//! random rays in round and rectangular runs, both ways, starting on an end plane, mid-run and
//! on the wall; a ray square to the axis and one hitting nothing. Then whole traces: the walk
//! taking straights in closed form against the same scenarios stepped hit by hit, same seed —
//! every budget share within the two results' combined 95 % interval, the same wall
//! interactions per segment, and nearly every ray's fate the same ray by ray (both walks draw
//! their random numbers in the same order: one per wall hit below the critical angle; a ray
//! that goes another way also shifts the exit face's schedule for its replicate's later rays).
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;
#[cfg(target_arch = "wasm32")]
wasm_bindgen_test::wasm_bindgen_test_configure!(run_in_browser);

mod common;
use common::Rng;

use glam::DVec3;
use serde_json::{json, Value};
use tirtrace::geometry::{Axial, Frame, Next, Placed, Shape, StraightRun};
use tirtrace::interface::reflect;
use tirtrace::scenario::Scenario;
use tirtrace::trace::{Prepared, RayTallies};

/// An untapered straight run placed at the origin, axis along z.
fn run_segment(round: bool, hw: f64, hh: f64, length: f64) -> Placed {
    Placed {
        shape: Shape::Axial(Axial {
            length,
            hw0: hw,
            hh0: if round { hw } else { hh },
            kw: 0.0,
            kh: 0.0,
        }),
        round,
        frame: Frame {
            origin: DVec3::ZERO,
            x: DVec3::X,
            y: DVec3::Y,
            z: DVec3::Z,
        },
        s_start_mm: 0.0,
        length_mm: length,
    }
}

/// A hit as the stepping walk finds it: distance from the start, point, outward normal,
/// direction arriving and leaving.
#[derive(Debug, Clone, Copy)]
struct SteppedHit {
    t: f64,
    point: DVec3,
    normal: DVec3,
    d_in: DVec3,
    d_out: DVec3,
}

/// The walk's stepping through one segment: every wall hit, then the end-plane arrival (point,
/// direction); `None` beyond `most` hits.
fn stepped(
    placed: &Placed,
    mut o: DVec3,
    mut d: DVec3,
    most: usize,
) -> Option<(Vec<SteppedHit>, DVec3, DVec3)> {
    let mut hits = Vec::new();
    let mut t_sum = 0.0;
    loop {
        match placed.next(o, d) {
            Next::Wall { t, normal } => {
                o += t * d;
                t_sum += t;
                let d_out = reflect(d, normal);
                hits.push(SteppedHit {
                    t: t_sum,
                    point: o,
                    normal,
                    d_in: d,
                    d_out,
                });
                d = d_out;
                if hits.len() > most {
                    return None;
                }
            }
            Next::End { t } | Next::Start { t } => return Some((hits, o + t * d, d)),
            Next::Coated { .. } => panic!("no coated face in a straight"),
        }
    }
}

/// A random unit direction at polar angle acos(cz) from ±z, azimuth `azimuth_rad`.
fn direction(cz: f64, azimuth_rad: f64, forward: bool) -> DVec3 {
    let sz = (1.0 - cz * cz).sqrt();
    let z = if forward { cz } else { -cz };
    DVec3::new(sz * azimuth_rad.cos(), sz * azimuth_rad.sin(), z)
}

/// A random ray in the run: start on the end plane it leaves from, mid-run, or on the wall
/// heading in; skew or meridional (round), across one pair of walls or both (rectangular).
fn random_ray(rng: &mut Rng, placed: &Placed) -> (DVec3, DVec3) {
    let Shape::Axial(a) = placed.shape else {
        unreachable!()
    };
    let forward = rng.chance(0.5);
    // Polar angle from the axis up to 85°.
    let cz = rng.range(0.087, 1.0);
    let where_ = rng.below(3);
    let z = match where_ {
        0 if forward => 0.0,
        0 => a.length,
        _ => rng.range(0.0, a.length),
    };
    if placed.round {
        let (r, phi) = if where_ == 2 {
            (a.hw0, rng.range(0.0, std::f64::consts::TAU))
        } else {
            (
                a.hw0 * rng.next().sqrt(),
                rng.range(0.0, std::f64::consts::TAU),
            )
        };
        let o = DVec3::new(r * phi.cos(), r * phi.sin(), z);
        let azimuth = if rng.chance(0.3) {
            // Meridional: in the plane of the axis and the start point.
            phi + if rng.chance(0.5) {
                0.0
            } else {
                std::f64::consts::PI
            }
        } else {
            rng.range(0.0, std::f64::consts::TAU)
        };
        let mut d = direction(cz, azimuth, forward);
        if where_ == 2 && d.x * o.x + d.y * o.y > 0.0 {
            // On the wall: heading in.
            d.x = -d.x;
            d.y = -d.y;
        }
        (o, d)
    } else {
        let mut o = DVec3::new(rng.range(-a.hw0, a.hw0), rng.range(-a.hh0, a.hh0), z);
        let azimuth = match rng.below(4) {
            0 => 0.0,
            1 => std::f64::consts::FRAC_PI_2,
            _ => rng.range(0.0, std::f64::consts::TAU),
        } + if rng.chance(0.5) {
            0.0
        } else {
            std::f64::consts::PI
        };
        let mut d = direction(cz, azimuth, forward);
        if where_ == 2 {
            // On an x or a y wall, heading in.
            let f = rng.below(2);
            let half = if f == 0 { a.hw0 } else { a.hh0 };
            o[f] = rng.sign() * half;
            if d[f] * o[f] > 0.0 {
                d[f] = -d[f];
            }
        }
        (o, d)
    }
}

/// The closed form's hits (distance, state) and end arrival of a ray.
fn closed(
    placed: &Placed,
    o: DVec3,
    d: DVec3,
) -> (
    StraightRun,
    Vec<(f64, tirtrace::geometry::straight_run::WallState)>,
) {
    let Shape::Axial(a) = placed.shape else {
        unreachable!()
    };
    let run = StraightRun::new(&a, placed.round, o, d);
    let hits = run.hits().map(|h| (h.t, run.state(&h))).collect();
    (run, hits)
}

fn distance(a: DVec3, b: DVec3) -> f64 {
    (a - b).length()
}

#[test]
fn closed_form_hits_are_the_stepped_hits() {
    let mut rng = Rng(0x5354_5241_4947_4854);
    let (mut compared, mut at_the_edge, mut hits_compared) = (0, 0, 0usize);
    let mut worst: f64 = 0.0;
    for case in 0..4000 {
        let round = case % 2 == 0;
        let placed = run_segment(
            round,
            rng.range(0.3, 3.0),
            rng.range(0.3, 3.0),
            rng.range(1.0, 100.0),
        );
        let (o, d) = random_ray(&mut rng, &placed);
        let Some((steps, end_point, end_dir)) = stepped(&placed, o, d, 20_000) else {
            continue;
        };
        let (run, hits) = closed(&placed, o, d);
        let count = run
            .hit_count()
            .expect("a ray at most 85° from the axis has a count");
        if count as usize != steps.len() {
            // Only a hit within rounding of the end plane may be counted one way or the other.
            let last_t = steps.last().map_or(f64::INFINITY, |h| h.t);
            let edge = (last_t - run.t_end()).abs().min(
                hits.last()
                    .map_or(f64::INFINITY, |h| (h.0 - run.t_end()).abs()),
            );
            assert!(
                edge < 1e-9 * run.t_end().max(1.0),
                "case {case}: {count} hits in closed form, {} stepped",
                steps.len()
            );
            at_the_edge += 1;
            continue;
        }
        compared += 1;
        // 1e-9 mm, and beyond it the stepping walk's own rounding for hits far along the run:
        // each of its steps starts from a point that its on-wall snap accepts as on the wall
        // within 16 ε of the half-size, and a start off the wall by δr moves the next hit along
        // the ray by about δr / cos θ — at grazing incidence (cos θ → 0) stepping drifts by up to
        // 64 ε a / cos θ a hit, where the closed form turns hit 0 by j · 2α at once.
        let Shape::Axial(axial) = placed.shape else {
            unreachable!()
        };
        let cos_least = (0..if round { 1 } else { 2 })
            .map(|f| run.cos_incidence(f))
            .filter(|&c| c > 0.0)
            .fold(1.0, f64::min);
        let per_hit = 64.0 * f64::EPSILON * axial.hw0.max(axial.hh0) / cos_least;
        let tolerance = |j: usize| 1e-9 + j as f64 * per_hit;
        for (j, (s, (t, c))) in steps.iter().zip(&hits).enumerate() {
            let error = (s.t - t)
                .abs()
                .max(distance(s.point, c.point))
                .max(distance(s.normal, c.normal))
                .max(distance(s.d_in, c.d_in))
                .max(distance(s.d_out, c.d_out));
            worst = worst.max(error);
            assert!(
                error < tolerance(j),
                "case {case} ({}), hit {j} of {count}: stepped {s:?}, closed form t {t} {c:?}",
                if round { "round" } else { "rectangular" }
            );
            hits_compared += 1;
        }
        let (point, dir, _) = run.end_arrival().unwrap();
        assert!(
            distance(point, end_point) < tolerance(steps.len())
                && distance(dir, end_dir) < tolerance(steps.len()),
            "case {case}: end arrival {point} {dir}, stepped {end_point} {end_dir}"
        );
        // The last hit found directly is the last of the sequence.
        assert_eq!(run.last_hit(), run.hits().last(), "case {case}");
    }
    assert!(compared > 3800, "{compared} rays compared");
    assert!(
        at_the_edge <= 5,
        "{at_the_edge} rays with a hit at the end plane"
    );
    assert!(hits_compared > 100_000, "{hits_compared} hits compared");
    eprintln!("{compared} rays, {hits_compared} hits, worst difference {worst:e} mm");
}

#[test]
fn both_rectangular_families_alternate_in_time_order() {
    // A run 2 × 1 mm, 20 mm long; from the centre with d ∝ (1, 1, 4): x walls every 2·1/dx,
    // first at 1/dx, y walls every 2·0.5/dy, first at 0.5/dy (dx = dy): y, x, y, y, x, y, …
    let placed = run_segment(false, 1.0, 0.5, 20.0);
    let d = DVec3::new(1.0, 1.0, 4.0).normalize();
    let (run, hits) = closed(&placed, DVec3::ZERO, d);
    let t_end = 20.0 / d.z;
    let expected_x = ((t_end - 1.0 / d.x) / (2.0 / d.x)).ceil() as usize;
    let expected_y = ((t_end - 0.5 / d.y) / (1.0 / d.y)).ceil() as usize;
    assert_eq!(run.hit_count(), Some((expected_x + expected_y) as u64));
    let families: Vec<usize> = run.hits().map(|h| h.family).collect();
    assert_eq!(&families[..6], &[1, 0, 1, 1, 0, 1]);
    for w in hits.windows(2) {
        assert!(w[0].0 < w[1].0 + 1e-12, "hits out of time order");
    }
    // Each hit lies on the wall of its family.
    for (h, (_, s)) in run.hits().zip(&hits) {
        let half = [1.0, 0.5][h.family];
        assert!((s.point[h.family].abs() - half).abs() < 1e-12);
        assert!(s.point[1 - h.family].abs() <= [1.0, 0.5][1 - h.family] + 1e-12);
    }
}

#[test]
fn a_ray_square_to_the_axis_has_no_count() {
    for round in [true, false] {
        let placed = run_segment(round, 1.5, 1.0, 10.0);
        let Shape::Axial(a) = placed.shape else {
            unreachable!()
        };
        for d in [
            DVec3::new(0.6, 0.8, 0.0),
            DVec3::new(1.0, 0.0, 0.0),
            // Nearly square: billions of hits.
            DVec3::new(1.0, 0.0, 1e-12).normalize(),
        ] {
            let run = StraightRun::new(&a, round, DVec3::new(0.1, 0.2, 5.0), d);
            assert_eq!(run.hit_count(), None, "round {round}, d {d}");
            assert_eq!(run.hits().count(), 0);
            assert_eq!(run.end_arrival(), None);
        }
    }
}

#[test]
fn a_near_axial_ray_hits_nothing() {
    for round in [true, false] {
        let placed = run_segment(round, 1.5, 1.0, 10.0);
        let Shape::Axial(a) = placed.shape else {
            unreachable!()
        };
        for (o, d) in [
            (DVec3::ZERO, DVec3::Z),
            (
                DVec3::new(0.2, -0.1, 0.0),
                DVec3::new(1e-3, 2e-3, 1.0).normalize(),
            ),
            (
                DVec3::new(0.2, -0.1, 10.0),
                DVec3::new(1e-3, 2e-3, -1.0).normalize(),
            ),
        ] {
            let run = StraightRun::new(&a, round, o, d);
            assert_eq!(run.hit_count(), Some(0), "round {round}, d {d}");
            assert_eq!(run.last_hit(), None);
            let (point, dir, t) = run.end_arrival().unwrap();
            let z_end = if d.z > 0.0 { 10.0 } else { 0.0 };
            assert!((point.z - z_end).abs() < 1e-12);
            assert_eq!(dir, d);
            assert!((t - run.t_end()).abs() < 1e-12);
            let (steps, end_point, _) = stepped(&placed, o, d, 10).unwrap();
            assert!(steps.is_empty());
            assert!(distance(point, end_point) < 1e-12);
        }
    }
}

/// A scenario with long straights: `section`, `route`, `around` (the surroundings) and the
/// interaction cap.
fn scenario(section: Value, route: Value, around: Value, cap: u32, rays: u64) -> Scenario {
    let doc = json!({
        "version": 1,
        "name": "long straights",
        "guide": {
            "section": section,
            "material": {"library": "pmma"},
            "surroundings": around,
            "attenuation_db_per_m": 2.0
        },
        "route": route,
        "source": {
            "emitter": {"led": {"area": {"square": {"side_mm": 1.0}}, "pattern": "lambertian"}},
            "wavelength_nm": 590,
            "gap_mm": 0.2
        },
        "trace": {"rays": rays, "seed": 7, "max_interactions": cap}
    });
    Scenario::from_json(&doc.to_string()).unwrap()
}

/// The scenarios compared, each with whether its route bends: after a bend's curved walls the
/// two walks' rounding (1e-15 mm apart) grows until a few rays go another way — tracing the
/// stepping walk with every hand-over moved by one part in 10¹⁵ parts its rays from the
/// unmoved ones as much (309 of 24 576 rays on the round route in air, 0.5 % of the wall
/// interactions) — so there only the statistics agree; along straights alone the walks
/// agree ray by ray. The bending routes stop a ray at 1000 interactions: a ray that takes
/// another way may be one caught for thousands (bouncing between the end faces, or square to
/// a straight's axis), which would swing the interaction totals by as much on its own.
fn scenarios() -> Vec<(&'static str, bool, Scenario)> {
    let air = json!({"library": "air"});
    let water = json!({"library": "water"});
    let round = json!({"round": {"diameter_mm": 3.0}});
    let rect = json!({"rectangular": {"width_mm": 3.0, "height_mm": 1.5}});
    let bends = json!([
        {"straight": {"length_mm": 50.0}},
        {"bend": {"radius_mm": 12.0, "angle_deg": 90, "turn_deg": 0}},
        {"straight": {"length_mm": 75.0}},
        {"bend": {"radius_mm": 10.0, "angle_deg": 60, "turn_deg": 90}},
        {"straight": {"length_mm": 60.0}}
    ]);
    let straight = json!([{"straight": {"length_mm": 80.0}}, {"straight": {"length_mm": 40.0}}]);
    let rays = 24_576;
    vec![
        // Every straight hit totally reflected; the exit face turns rays back through both.
        (
            "round, straight, air",
            false,
            scenario(round.clone(), straight.clone(), air.clone(), 10_000, rays),
        ),
        (
            "rectangular, straight, air",
            false,
            scenario(rect.clone(), straight.clone(), air.clone(), 10_000, rays),
        ),
        // Below the critical angle against water: a Fresnel draw at each hit, leaks.
        (
            "round, straight, water",
            false,
            scenario(round.clone(), straight.clone(), water.clone(), 10_000, rays),
        ),
        (
            "rectangular, straight, water",
            false,
            scenario(rect.clone(), straight.clone(), water.clone(), 10_000, rays),
        ),
        // A cap that stops rays inside the straights: there the walk steps.
        (
            "round, straight, water, cap 12",
            false,
            scenario(round.clone(), straight, water.clone(), 12, rays),
        ),
        (
            "round, bends, air",
            true,
            scenario(round.clone(), bends.clone(), air.clone(), 1_000, rays),
        ),
        (
            "round, bends, water",
            true,
            scenario(round, bends.clone(), water, 1_000, rays),
        ),
        (
            "rectangular, bends, air",
            true,
            scenario(rect, bends, air, 1_000, rays),
        ),
    ]
}

/// Both walks' merged batches and per-ray figures.
fn both(s: &Scenario) -> [(tirtrace::trace::Batch, Vec<RayTallies>); 2] {
    let closed = Prepared::new(s).unwrap();
    let stepped = closed.clone().stepping_every_hit();
    [closed, stepped].map(|p| {
        let mut rays = vec![RayTallies::default()];
        let mut total = p.trace_batch_per_ray_all(0, &mut rays[0]);
        for b in 1..p.batch_count() {
            let mut r = RayTallies::default();
            total.merge(&p.trace_batch_per_ray_all(b, &mut r));
            rays.push(r);
        }
        (total, rays)
    })
}

#[test]
fn traces_in_closed_form_agree_with_stepping_every_hit() {
    for (name, bends, s) in scenarios() {
        let p = Prepared::new(&s).unwrap();
        let [(closed, closed_rays), (stepped, stepped_rays)] = both(&s);
        let (rc, rs) = (p.report(&closed), p.report(&stepped));
        assert!(
            (rc.budget_sum - 1.0).abs() < 1e-9,
            "{name}: budget sums to {}",
            rc.budget_sum
        );
        let rays = closed.rays as f64;
        for ((key, _, a), (_, _, b)) in rc.budget.shares().into_iter().zip(rs.budget.shares()) {
            // Within the combined 95 % interval; a share of one or two rays (the stopped ones
            // on a bending route) has no normal interval, so three rays' weight is allowed too.
            let allowed = (a.ci95 * a.ci95 + b.ci95 * b.ci95).sqrt() + 3.0 / rays;
            assert!(
                (a.share - b.share).abs() <= allowed,
                "{name}: {key} {} ± {} in closed form, {} ± {} stepped",
                a.share,
                a.ci95,
                b.share,
                b.ci95
            );
        }
        // Ray by ray: both walks draw the same random numbers in the same order.
        let (mut compared, mut differ) = (0usize, 0usize);
        for (c, t) in closed_rays.iter().zip(&stepped_rays) {
            for i in 0..c.delivered.len() {
                compared += 1;
                let same = (c.delivered[i] - t.delivered[i]).abs() < 1e-9
                    && c.leaked
                        .iter()
                        .zip(&t.leaked)
                        .all(|(a, b)| (a[i] - b[i]).abs() < 1e-9);
                differ += usize::from(!same);
            }
        }
        let hits = |b: &tirtrace::trace::Batch| (b.wall_interactions, b.wall_hits.clone());
        if bends {
            // The statistics: a few rays on another way, the wall interactions within 1 %.
            assert!(
                differ * 100 < 3 * compared,
                "{name}: {differ} of {compared} rays differ"
            );
            let (a, b) = (
                closed.wall_interactions as f64,
                stepped.wall_interactions as f64,
            );
            assert!(
                (a - b).abs() < 0.01 * b,
                "{name}: {a} wall interactions in closed form, {b} stepped"
            );
            for (seg, (a, b)) in closed.wall_hits.iter().zip(&stepped.wall_hits).enumerate() {
                let (a, b) = (*a as f64, *b as f64);
                assert!(
                    (a - b).abs() < 0.02 * b,
                    "{name}: segment {seg}: {a} wall hits, {b} stepped"
                );
            }
        } else {
            // Straights alone: every ray alike, every interaction counted alike.
            assert_eq!(differ, 0, "{name}: {differ} of {compared} rays differ");
            assert_eq!(hits(&closed), hits(&stepped), "{name}: wall interactions");
        }
        assert!(
            closed.wall_interactions > closed.rays,
            "{name}: the rays meet the walls"
        );
        eprintln!(
            "{name}: {differ} of {compared} rays differ; {} and {} wall interactions",
            closed.wall_interactions, stepped.wall_interactions
        );
    }
}

#[test]
fn kept_paths_have_every_hit() {
    // The drawn paths keep a vertex per wall hit, as stepping does, at the same points.
    let mut parts = 0;
    for (name, _, s) in scenarios().into_iter().filter(|c| !c.1) {
        let closed = Prepared::new(&s).unwrap();
        let stepped = closed.clone().stepping_every_hit();
        let (a, b) = (closed.trace_batch(0, 200), stepped.trace_batch(0, 200));
        assert_eq!(a.paths.len(), 200);
        let mut longest = 0;
        for (pa, pb) in a.paths.iter().zip(&b.paths) {
            assert_eq!(pa.fate, pb.fate, "{name}");
            assert_eq!(pa.points.len(), pb.points.len(), "{name}");
            assert_eq!(pa.cut_short, pb.cut_short, "{name}");
            // Parts of the light that left on the way: at the same hits, of the same weight.
            assert_eq!(pa.parts_left.len(), pb.parts_left.len(), "{name}");
            for (u, v) in pa.parts_left.iter().zip(&pb.parts_left) {
                assert_eq!((u.vertex, u.fate), (v.vertex, v.fate), "{name}");
                assert!(
                    (u.weight - v.weight).abs() < 1e-9,
                    "{name}: {u:?} against {v:?}"
                );
            }
            parts += pa.parts_left.len();
            longest = longest.max(pa.points.len());
            for (u, v) in pa.points.iter().zip(&pb.points) {
                let gap = DVec3::from_array(*u).distance(DVec3::from_array(*v));
                assert!(gap < 1e-8, "{name}: a vertex {gap} mm from the stepped one");
            }
        }
        // Rays through the 80 mm straight meet its wall many times (unless they leak or are
        // stopped first): paths are long.
        assert!(longest > 12, "{name}: longest kept path {longest} vertices");
    }
    // Some drawn rays left part of their light in a straight (met below the critical angle).
    assert!(parts > 0, "no parts left");
}
