//! The wall of a bend of round section: a torus tube (centre-line radius `rc` about local z,
//! tube radius `a`), met by solving the ray–torus quartic exactly (roots isolated, then polished
//! on the tube's distance function). Lengths in mm.

use glam::DVec3;

use super::roots;
use super::{Bend, Next};

impl Bend {
    /// What a ray (local origin `o`, unit direction `d`) inside a round bend meets first: the
    /// torus wall ([`torus_exit`]) with its outward normal (from the centre circle to the hit
    /// point), else an end plane.
    #[inline]
    pub fn next_torus(&self, o: DVec3, d: DVec3) -> Next {
        let (best, t_hi) = self.end_planes(o, d);
        let rc = self.rc;
        let a = self.radial_half;
        if let Some(t) = torus_exit(o, d, rc, a, t_hi) {
            // The normal is p minus the nearest point of the centre circle, normalised:
            // (x (ρ − rc)/ρ, y (ρ − rc)/ρ, z) / √((ρ − rc)² + z²), with one division for both.
            let p = o + t * d;
            let rho = (p.x * p.x + p.y * p.y).sqrt();
            let e = rho - rc;
            let inv = 1.0 / (rho * (e * e + p.z * p.z).sqrt());
            Next::Wall {
                t,
                normal: DVec3::new(p.x * e * inv, p.y * e * inv, p.z * rho * inv),
            }
        } else {
            best
        }
    }
}

/// Where a ray inside a torus tube (centre-line radius `rc` about local z, tube radius `a`)
/// first leaves it, within (0, t_hi]. Exact: the quartic
/// (|p|² + rc² − a²)² − 4 rc² (x² + y²) = 0 (which has the sign of the distance to the tube
/// minus `a` when rc > a) is solved by root isolation, then polished by Newton steps on the
/// distance function itself, which is better conditioned for large bend radii.
pub fn torus_exit(o: DVec3, d: DVec3, rc: f64, a: f64, t_hi: f64) -> Option<f64> {
    let rc2 = rc * rc;
    let b = o.dot(d);
    let c = o.length_squared() + rc2 - a * a;
    let alpha = d.x * d.x + d.y * d.y;
    let beta = o.x * d.x + o.y * d.y;
    let gamma = o.x * o.x + o.y * o.y;
    // p(0) = c² − 4 rc² γ is the difference of two numbers of size ~4 rc⁴ that nearly cancel
    // near the wall. Computed that way its rounding (~ε·rc⁴) buries the shallow dip of a grazing
    // ray that starts on the wall after a reflection: the sign of p near t = 0 is lost and the
    // exit just after it is missed (the ray walks out through the wall). So p(0) comes from the
    // exact factorisation g(0)·h(0), g = (ρ − rc)² + z² − a² = D (D + 2a) with D the distance
    // to the wall, h = (ρ + rc)² + z² − a²; and a start within rounding of the wall (D no larger
    // than a few ε·(rc + a), what a computed hit point carries) is taken as exactly on it, p(0) = 0:
    // otherwise a start that rounds to just outside, heading in at a grazing angle whose dip is
    // shallower than that rounding, never seems to enter and so never to leave.
    let rho0 = gamma.sqrt();
    let dist0 = ((rho0 - rc) * (rho0 - rc) + o.z * o.z).sqrt() - a;
    let p0 = if dist0.abs() <= 64.0 * f64::EPSILON * (rc + a) {
        0.0
    } else {
        dist0 * (dist0 + 2.0 * a) * ((rho0 + rc) * (rho0 + rc) + o.z * o.z - a * a)
    };
    if p0 == 0.0 {
        // On the wall: p'(0) = g'(0)·h(0) exactly (g(0) = 0), with h(0) = 4 rc ρ₀ there, so
        // p'(0) = 8 rc ((ρ₀ − rc) β + ρ₀ z₀ d_z): accurate even for a grazing ray, where the
        // expanded coefficient 4bc − 8rc²β cancels to noise.
        let dp0 = 8.0 * rc * ((rho0 - rc) * beta + rho0 * o.z * d.z);
        if dp0 < 0.0 {
            // Heading in (every reflected ray): the exit is the first positive root of the
            // cubic p(t)/t. On the wall c = |o|² + rc² − a² = 2 rc ρ₀, also exactly.
            let b2 = 4.0 * (b * b + rc * rho0 - rc2 * alpha);
            // First guess: g(t) = (ρ − rc)² + z² − a² ≈ g'(0) t + g''(0) t²/2 with g(0) = 0,
            // so t ≈ −2 g'(0)/g''(0); ρ' = β/ρ, ρ'' = (α − ρ'²)/ρ.
            let drho = beta / rho0;
            let e = rho0 - rc;
            let dg = e * drho + o.z * d.z;
            let ddg = drho * drho + e * (alpha - drho * drho) / rho0 + d.z * d.z;
            return cubic_exit(4.0 * b, b2, dp0, -2.0 * dg / ddg, rc + a, t_hi);
        }
    }
    let coeffs = [
        p0,
        4.0 * b * c - 8.0 * rc2 * beta,
        4.0 * b * b + 2.0 * c - 4.0 * rc2 * alpha,
        4.0 * b,
        1.0,
    ];
    let (lo, hi, pa, convex) = match roots::first_upcrossing_bracket(&coeffs, 0.0, t_hi)? {
        roots::Upcrossing::At(t) => return Some(t),
        roots::Upcrossing::Between { a, b, pa, convex } => (a, b, pa, convex),
    };
    // Find the crossing by safeguarded Halley iteration on g(t) = (ρ − rc)² + z² − a², which has
    // the sign of the quartic but is far closer to quadratic, so it converges in a few steps from
    // anywhere in the bracket (the quartic's own Newton crawls from a far end). Along the ray
    // ρ² = α t² + 2β t + γ, so ρ' = (α t + β)/ρ and ρ'' = (α − ρ'²)/ρ: g and its first two
    // derivatives cost one square root and one division.
    let a2 = a * a;
    let g = |t: f64| {
        let p = o + t * d;
        let rho = (p.x * p.x + p.y * p.y).sqrt();
        let inv = 1.0 / rho;
        let drho = (p.x * d.x + p.y * d.y) * inv;
        let e = rho - rc;
        let g = e * e + p.z * p.z - a2;
        let dg = 2.0 * (e * drho + p.z * d.z);
        let ddg = 2.0 * (drho * drho + e * (alpha - drho * drho) * inv + d.z * d.z);
        (g, dg, ddg)
    };
    let (mut g_lo, dg_lo, ddg_lo) = g(lo);
    // A start snapped onto the wall (p(0) = 0 above) is on it: g(0) computed there is rounding
    // noise, and a positive one would make g seem to disagree with the quartic at a start that
    // only rounds to outside. Measure g from that level instead (as if exactly on the wall).
    let shift = if lo == 0.0 && p0 == 0.0 && g_lo > 0.0 {
        g_lo
    } else {
        0.0
    };
    g_lo -= shift;
    let g_hi = g(hi).0 - shift;
    if !(g_lo <= 0.0 && g_hi > 0.0) {
        // g and the quartic disagree on a sign within rounding: stay with the quartic.
        return Some(roots::polish_quartic(&coeffs, lo, hi, pa, convex));
    }
    let (mut l, mut h) = (lo, hi);
    let tol = 1e-15 * (rc + a);
    // Start from the up-crossing of g's own second-order Taylor model at the bracket start: along
    // a chord of the tube g is nearly quadratic, so this lands within a hair of the root.
    let mut t = if convex { hi } else { lo };
    let disc = dg_lo * dg_lo - 2.0 * ddg_lo * g_lo;
    if ddg_lo > 0.0 && disc >= 0.0 {
        let guess = lo + (-dg_lo + disc.sqrt()) / ddg_lo;
        if guess > l && guess < h {
            t = guess;
        }
    }
    for _ in 0..100 {
        let (gt, dgt, ddgt) = g(t);
        let gt = gt - shift;
        if gt > 0.0 {
            h = t;
        } else {
            l = t;
        }
        // Halley's step (cubic convergence), else Newton's, else bisection: the first that
        // stays inside the bracket.
        let halley = t - 2.0 * gt * dgt / (2.0 * dgt * dgt - gt * ddgt);
        let (next, converging) = if halley > l && halley < h {
            (halley, true)
        } else {
            let newton = t - gt / dgt;
            if newton > l && newton < h {
                (newton, false)
            } else {
                (0.5 * (l + h), false)
            }
        };
        // Halley's error after a step of size s is ~s³/a² (less than the rounding of t once
        // s ≤ 1e-6·a), so `next` is then the root to machine precision.
        let step = (next - t).abs();
        if (converging && step <= 1e-6 * a) || step <= tol || h - l <= tol {
            return Some(next);
        }
        t = next;
    }
    Some(t)
}

/// The exit of a ray that starts on the torus wall heading in: the first positive root of the
/// monic cubic q(t) = t³ + a2 t² + a1 t + a0 = p(t)/t, a0 = p'(0) < 0, within (0, t_hi].
///
/// Root isolation in closed form: q' = 3t² + 2 a2 t + a1 has roots s₁ ≤ s₂ (a local maximum and
/// minimum of q). Since q(0) < 0, the first positive root lies on the rising piece (0, s₁] when
/// s₁ > 0 and q(s₁) > 0 (q is concave there), else on the rising, convex piece (max(s₂, 0), ∞).
/// On that piece q is monotone, so the root is unique and a bracketed Halley iteration (Newton
/// or bisection when a step would leave the bracket) finds it to rounding. `guess` starts it (the
/// caller gives where the tube's distance function's second-order Taylor model at the start
/// crosses zero: exact for a straight tube, within a hair of the root in a bend; anything
/// outside the piece, NaN included, starts from its middle). `size` (rc + a, mm) scales the
/// bracket's width tolerance.
#[inline]
fn cubic_exit(a2: f64, a1: f64, a0: f64, guess: f64, size: f64, t_hi: f64) -> Option<f64> {
    let q = |t: f64| ((t + a2) * t + a1) * t + a0;
    let disc = a2 * a2 - 3.0 * a1;
    let (mut lo, mut hi) = (0.0, t_hi);
    if disc > 0.0 {
        let sq = disc.sqrt();
        let s1 = (-a2 - sq) / 3.0;
        let s2 = (-a2 + sq) / 3.0;
        if s1 > 0.0 && q(s1) > 0.0 {
            hi = hi.min(s1);
        } else {
            lo = s2.max(0.0);
        }
    }
    if lo >= hi || q(hi) <= 0.0 {
        return None;
    }
    let mut t = if guess > lo && guess < hi {
        guess
    } else {
        0.5 * (lo + hi)
    };
    let tol = 4.0 * f64::EPSILON * size;
    for _ in 0..100 {
        let qt = q(t);
        if qt > 0.0 {
            hi = t;
        } else {
            lo = t;
        }
        let q1 = (3.0 * t + 2.0 * a2) * t + a1;
        let q2 = 6.0 * t + 2.0 * a2;
        let halley = t - 2.0 * qt * q1 / (2.0 * q1 * q1 - qt * q2);
        // Halley converges cubically: after a step of relative size s ≤ 1e-6 the error is of
        // order s³·t, below the rounding of t. Near a turning point of q (q' → 0, q ≠ 0) Halley's
        // step also shrinks without a root there, so the Newton step q/q' must be small too.
        // (The test comes before the bracket test: a converged step that rounds onto the
        // bracket's end is not a failure.)
        if (halley - t).abs() <= 1e-6 * t
            && qt.abs() <= 1e-6 * t * q1.abs()
            && halley >= lo
            && halley <= hi
        {
            return Some(halley);
        }
        t = if halley > lo && halley < hi {
            halley
        } else {
            let newton = t - qt / q1;
            if newton > lo && newton < hi {
                newton
            } else {
                0.5 * (lo + hi)
            }
        };
        if hi - lo <= tol {
            return Some(t);
        }
    }
    Some(t)
}
