//! Support shared by the test files: a seeded generator for property loops, so every case is
//! reproducible (SplitMix64: S. Vigna's finaliser of Java's SplittableRandom), independent of
//! the tracer's own generator; and random valid routes for scenario documents.
#![allow(dead_code, clippy::disallowed_methods)]

use serde_json::{json, Value};

/// Seeded generator for the property loops.
pub struct Rng(pub u64);

impl Rng {
    /// Uniform in [0, 1).
    pub fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E3779B97F4A7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58476D1CE4E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D049BB133111EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
    /// Log-uniform in [lo, hi] (both > 0).
    pub fn log_range(&mut self, lo: f64, hi: f64) -> f64 {
        lo * (hi / lo).powf(self.next())
    }
    /// Uniform integer in 0..n.
    pub fn below(&mut self, n: usize) -> usize {
        ((self.next() * n as f64) as usize).min(n - 1)
    }
    /// True with probability p.
    pub fn chance(&mut self, p: f64) -> bool {
        self.next() < p
    }
    /// ±1 with equal odds.
    pub fn sign(&mut self) -> f64 {
        if self.chance(0.5) {
            1.0
        } else {
            -1.0
        }
    }
    /// One element of a slice.
    pub fn pick<'a, T>(&mut self, xs: &'a [T]) -> &'a T {
        &xs[self.below(xs.len())]
    }
}

/// How [`random_route`] draws a route: each test file picks its own ranges (and so its own
/// cases; the draws come in a fixed order, so a seed always gives the same route).
pub struct RouteDraws {
    /// Range of the entry section's width and height (a round section's diameter), mm.
    pub size_mm: (f64, f64),
    /// Up to this many segments (at least one).
    pub max_segments: usize,
    /// A segment is a straight when its draw is below this, else a bend when below
    /// `bend_below`, else a taper.
    pub straight_below: f64,
    /// See `straight_below`.
    pub bend_below: f64,
    /// A segment that is no straight or bend is a reflecting corner (turned as a bend, 15° to
    /// 165°, coated one time in three) when its draw is below this, else a taper.
    pub corner_below: f64,
    /// A straight's length, mm.
    pub straight_mm: fn(&mut Rng) -> f64,
    /// Range of a round section's turn, degrees.
    pub round_turn_deg: (f64, f64),
    /// A rectangular section turns 90° × (k − offset) with k uniform in 0..count: (count, offset).
    pub rect_turns: (usize, f64),
    /// A bend's centre-line radius (mm) and angle (degrees), given the half-size across it.
    pub bend: fn(&mut Rng, f64) -> (f64, f64),
    /// Range of the factor a taper scales each half-size by.
    pub taper_factor: (f64, f64),
    /// Range of a taper's length, mm.
    pub taper_mm: (f64, f64),
}

/// A random route as scenario JSON: its entry section and its segments.
pub struct RandomRoute {
    /// The `guide.section` object.
    pub section: Value,
    /// The `route` list.
    pub route: Vec<Value>,
    /// Each segment's centre-line length, mm.
    pub lengths_mm: Vec<f64>,
}

/// A random valid route: a round or rectangular section and straights, bends (turned any way
/// the section allows, never tighter than its half-size across the bend), reflecting corners and
/// tapers, drawn as
/// `draws` says.
pub fn random_route(rng: &mut Rng, draws: &RouteDraws) -> RandomRoute {
    let round = rng.chance(0.5);
    let (w, h) = (
        rng.range(draws.size_mm.0, draws.size_mm.1),
        rng.range(draws.size_mm.0, draws.size_mm.1),
    );
    let section = if round {
        json!({"round": {"diameter_mm": w}})
    } else {
        json!({"rectangular": {"width_mm": w, "height_mm": h}})
    };
    let mut half = if round {
        (w / 2.0, w / 2.0)
    } else {
        (w / 2.0, h / 2.0)
    };
    let mut route = Vec::new();
    let mut lengths_mm = Vec::new();
    for _ in 0..1 + rng.below(draws.max_segments) {
        let kind = rng.next();
        if kind < draws.straight_below {
            let length_mm = (draws.straight_mm)(rng);
            route.push(json!({"straight": {"length_mm": length_mm}}));
            lengths_mm.push(length_mm);
        } else if kind < draws.corner_below {
            let turn = if round {
                rng.range(draws.round_turn_deg.0, draws.round_turn_deg.1)
            } else {
                let (count, offset) = draws.rect_turns;
                90.0 * (rng.below(count) as f64 - offset)
            };
            let across = if turn.to_radians().cos().abs() > 0.5 {
                half.0
            } else {
                half.1
            };
            if kind < draws.bend_below {
                let (radius_mm, angle_deg) = (draws.bend)(rng, across);
                route.push(
                    json!({"bend": {"radius_mm": radius_mm, "angle_deg": angle_deg, "turn_deg": turn}}),
                );
                lengths_mm.push(radius_mm * angle_deg.to_radians());
            } else {
                let angle_deg = rng.range(15.0, 165.0);
                let mut corner = json!({"angle_deg": angle_deg, "turn_deg": turn});
                if rng.chance(1.0 / 3.0) {
                    corner["coating"] = json!({"reflectance": rng.next()});
                }
                route.push(json!({ "corner": corner }));
                let t = (0.5 * angle_deg.to_radians()).tan();
                lengths_mm.push(2.0 * across * t.max(1.0 / t));
            }
        } else {
            let (lo, hi) = draws.taper_factor;
            let f = rng.range(lo, hi);
            let end = if round {
                half = (half.0 * f, half.0 * f);
                json!({"round": {"diameter_mm": 2.0 * half.0}})
            } else {
                half = (half.0 * f, half.1 * rng.range(lo, hi));
                json!({"rectangular": {"width_mm": 2.0 * half.0, "height_mm": 2.0 * half.1}})
            };
            let length_mm = rng.range(draws.taper_mm.0, draws.taper_mm.1);
            route.push(json!({"taper": {"length_mm": length_mm, "end_section": end}}));
            lengths_mm.push(length_mm);
        }
    }
    RandomRoute {
        section,
        route,
        lengths_mm,
    }
}
