//! Real roots of small polynomials (degree ≤ 4) on an interval, by isolation: the roots of the
//! derivative split the interval into pieces on which the polynomial is monotone, and each piece
//! that changes sign holds exactly one root, found by safeguarded Newton–bisection to full
//! precision. This needs no closed-form quartic (whose cancellations lose grazing rays) and never
//! misses a root that crosses zero; a double root that only touches zero is, rightly for ray
//! tracing, not a crossing.
//!
//! Coefficients are ascending: `c[0] + c[1] t + c[2] t² + …`.

/// Horner evaluation of p(t) and p'(t).
#[inline]
fn eval_with_derivative(c: &[f64], t: f64) -> (f64, f64) {
    let mut p = 0.0;
    let mut dp = 0.0;
    for &ci in c.iter().rev() {
        dp = dp * t + p;
        p = p * t + ci;
    }
    (p, dp)
}

/// Σ|cₖ||t|ᵏ: the scale of the rounding error of evaluating `c` at `t`.
#[inline]
fn abs_eval(c: &[f64], t: f64) -> f64 {
    let t = t.abs();
    c.iter().rev().fold(0.0, |p, &ci| p * t + ci.abs())
}

/// Evaluate the polynomial at `t`.
#[inline]
pub fn eval(c: &[f64], t: f64) -> f64 {
    c.iter().rev().fold(0.0, |p, &ci| p * t + ci)
}

/// The one root of a monotone piece [a, b] with p(a) and p(b) of opposite signs (or zero).
fn polish(c: &[f64], a: f64, b: f64, pa: f64) -> f64 {
    polish_from(c, a, b, pa, 0.5 * (a + b))
}

/// [`polish`] starting Newton's iteration at `start` (inside [a, b]): from the end where the
/// function's curvature makes Newton converge monotonically, no step leaves the bracket.
#[inline]
fn polish_from(c: &[f64], mut a: f64, mut b: f64, pa: f64, start: f64) -> f64 {
    // Keep `a` on the side where p has the sign of p(a).
    let neg_at_a = pa <= 0.0;
    let mut t = start;
    for _ in 0..100 {
        let (p, dp) = eval_with_derivative(c, t);
        // Done when p is within the rounding of its own evaluation: no further step can tell
        // the root better (|error| ≤ 2·deg·u·Σ|cₖ||t|ᵏ, u = ε/2).
        if p.abs() <= 4.0 * f64::EPSILON * abs_eval(c, t) {
            return t;
        }
        if (p < 0.0) == neg_at_a {
            a = t;
        } else {
            b = t;
        }
        // Newton step, falling back to bisection when it leaves the bracket.
        let newton = t - p / dp;
        let next = if dp != 0.0 && newton > a.min(b) && newton < a.max(b) {
            newton
        } else {
            0.5 * (a + b)
        };
        if (next - t).abs() <= 1e-15 * t.abs().max(1e-300) || a == b {
            return next;
        }
        t = next;
    }
    t
}

/// All real roots of `c` (degree = c.len() − 1, at most 3 here) in [lo, hi], ascending, written
/// into `out`; returns how many. The leading coefficient must be non-zero.
pub fn roots_in(c: &[f64], lo: f64, hi: f64, out: &mut [f64; 4]) -> usize {
    let deg = c.len() - 1;
    let mut n = 0;
    match deg {
        0 => {}
        1 => {
            let t = -c[0] / c[1];
            if t >= lo && t <= hi {
                out[0] = t;
                n = 1;
            }
        }
        2 => {
            // Stable quadratic formula.
            let (a, b, cc) = (c[2], c[1], c[0]);
            let disc = b * b - 4.0 * a * cc;
            if disc >= 0.0 {
                let q = -0.5 * (b + b.signum() * disc.sqrt());
                let (mut r1, mut r2) = if q != 0.0 {
                    (q / a, cc / q)
                } else {
                    (0.0, 0.0)
                };
                if r1 > r2 {
                    std::mem::swap(&mut r1, &mut r2);
                }
                for r in [r1, r2] {
                    if r >= lo && r <= hi && (n == 0 || r != out[n - 1]) {
                        out[n] = r;
                        n += 1;
                    }
                }
            }
        }
        _ => {
            let mut d = [0.0; 4];
            for i in 1..=deg {
                d[i - 1] = c[i] * i as f64;
            }
            let mut crit = [0.0; 4];
            let m = roots_in(&d[..deg], lo, hi, &mut crit);
            let mut a = lo;
            let mut pa = eval(c, a);
            for b in crit[..m].iter().copied().chain(std::iter::once(hi)) {
                let pb = eval(c, b);
                if pa == 0.0 && (n == 0 || out[n - 1] != a) {
                    out[n] = a;
                    n += 1;
                } else if (pa < 0.0 && pb > 0.0) || (pa > 0.0 && pb < 0.0) {
                    out[n] = polish(c, a, b, pa);
                    n += 1;
                }
                a = b;
                pa = pb;
            }
            if pa == 0.0 && (n == 0 || out[n - 1] != a) && n < 4 {
                out[n] = a;
                n += 1;
            }
        }
    }
    n
}

/// Where a quartic first goes from ≤ 0 to > 0 (see [`first_upcrossing_bracket`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Upcrossing {
    /// Exactly here (the piece starts within rounding of zero, already rising).
    At(f64),
    /// Somewhere in (a, b], the only up-crossing there; p(a) = `pa` ≤ 0 < p(b).
    Between {
        /// Start of the bracket.
        a: f64,
        /// End of the bracket.
        b: f64,
        /// p(a).
        pa: f64,
        /// Whether p is convex on the bracket (Newton converges monotonically from b), else
        /// concave (from a).
        convex: bool,
    },
}

/// The first t in (lo, hi] where the quartic `c` (`c[4] > 0`) goes from ≤ 0 to > 0: where a ray
/// inside the region p < 0 leaves it. `None` when it stays inside (or only touches the boundary)
/// up to `hi`.
pub fn first_upcrossing_quartic(c: &[f64; 5], lo: f64, hi: f64) -> Option<f64> {
    Some(match first_upcrossing_bracket(c, lo, hi)? {
        Upcrossing::At(t) => t,
        Upcrossing::Between { a, b, pa, convex } => polish_quartic(c, a, b, pa, convex),
    })
}

/// Polish the up-crossing of a bracket from [`first_upcrossing_bracket`] on the quartic itself.
pub fn polish_quartic(c: &[f64; 5], a: f64, b: f64, pa: f64, convex: bool) -> f64 {
    polish_from(c, a, b, pa, if convex { b } else { a })
}

/// Bracket the first t in (lo, hi] where the quartic `c` (`c[4] > 0`) goes from ≤ 0 to > 0.
///
/// The roots of p'' (a quadratic, in closed form) split [lo, hi] into at most three pieces on
/// which p is convex or concave. On such a piece an up-crossing is unique, and it exists iff
/// p(a) ≤ 0 < p(b) — except on a concave piece with both ends ≤ 0 (its maximum may poke above
/// 0) and a convex piece starting above 0 (its minimum may dip below): only then is the extremum
/// found, as the one root of the monotone p' on that piece.
pub fn first_upcrossing_bracket(c: &[f64; 5], lo: f64, hi: f64) -> Option<Upcrossing> {
    let d1 = [c[1], 2.0 * c[2], 3.0 * c[3], 4.0 * c[4]];
    let d2 = [2.0 * c[2], 6.0 * c[3], 12.0 * c[4]];
    let mut infl = [0.0; 4];
    let m = roots_in(&d2, lo, hi, &mut infl);
    // A computed value within Horner's rounding bound (|error| ≤ 2·deg·u·Σ|cₖ||t|ᵏ, u = ε/2)
    // has no reliable sign. Near a double root that only touches zero the computed values
    // scatter around 0, and a "positive" one there would be taken for a crossing; so p counts
    // as positive only beyond that bound (then it truly is), and an up-crossing that starts
    // within the bound is at the start of its piece.
    let abs_c = c.map(f64::abs);
    let noise = |t: f64| 8.0 * f64::EPSILON * eval(&abs_c, t.abs());
    // The extremum of p on a piece [a, b] where p' is monotone, if p' changes sign there.
    let extremum = |a: f64, b: f64| -> Option<f64> {
        let (da, db) = (eval(&d1, a), eval(&d1, b));
        ((da < 0.0 && db > 0.0) || (da > 0.0 && db < 0.0)).then(|| polish(&d1, a, b, da))
    };
    // `p ≤ noise` and `p > noise` are decided without the bound whenever the sign of p already
    // settles them (the bound is ≥ 0), so the bound is only evaluated for p > 0.
    let inside = |p: f64, t: f64| p <= 0.0 || p <= noise(t);
    let mut a = lo;
    let mut pa = eval(c, a);
    let mut a_inside = inside(pa, a);
    for b in infl[..m].iter().copied().chain(std::iter::once(hi)) {
        let pb = eval(c, b);
        let b_inside = inside(pb, b);
        let convex = eval(&d2, 0.5 * (a + b)) >= 0.0;
        if a_inside && !b_inside {
            // Newton converges monotonically from b on a convex piece (the tangent lies below
            // the curve) and from a on a concave one (p' > 0 there, tangent above the curve).
            return Some(if pa > 0.0 {
                Upcrossing::At(a)
            } else {
                Upcrossing::Between { a, b, pa, convex }
            });
        }
        if a_inside && !convex {
            // Both ends inside on a concave piece: does the maximum get out?
            if let Some(t) = extremum(a, b) {
                let pt = eval(c, t);
                if pt > noise(t) {
                    return Some(if pa > 0.0 {
                        Upcrossing::At(a)
                    } else {
                        Upcrossing::Between {
                            a,
                            b: t,
                            pa,
                            convex: false,
                        }
                    });
                }
            }
        } else if !a_inside && convex && !b_inside {
            // Outside at both ends on a convex piece: does the minimum get back inside?
            if let Some(t) = extremum(a, b) {
                let pt = eval(c, t);
                if pt <= noise(t) {
                    return Some(if pt > 0.0 {
                        Upcrossing::At(t)
                    } else {
                        Upcrossing::Between {
                            a: t,
                            b,
                            pa: pt,
                            convex: true,
                        }
                    });
                }
            }
        }
        a = b;
        pa = pb;
        a_inside = b_inside;
    }
    None
}
