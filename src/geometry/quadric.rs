//! Ray–quadric helpers shared by the cone/cylinder of a round straight or taper and the two
//! cylinders of a rectangular bend: the ray o + t d meets the quadric where the quadratic
//! q(t) = a t² + 2 b t + c vanishes, q < 0 inside.

/// Smallest t > 0 at which the ray o + t d leaves the region q(t) < 0 of the quadratic
/// q = a t² + 2 b t + c (crossing with q' > 0), subject to `valid(t)`.
#[inline]
pub(super) fn quadratic_exit(a: f64, b: f64, c: f64, valid: impl Fn(f64) -> bool) -> Option<f64> {
    let mut best: Option<f64> = None;
    if a.abs() < 1e-300 {
        if b > 0.0 {
            let t = -c / (2.0 * b);
            if t > 0.0 && valid(t) {
                best = Some(t);
            }
        }
        return best;
    }
    let disc = b * b - a * c;
    if disc < 0.0 {
        return None;
    }
    let q = -(b + b.signum() * disc.sqrt());
    let roots = if q != 0.0 { [q / a, c / q] } else { [0.0, 0.0] };
    for t in roots {
        // Outgoing where the derivative 2(a t + b) is positive.
        if t > 0.0 && a * t + b > 0.0 && valid(t) && best.is_none_or(|x| t < x) {
            best = Some(t);
        }
    }
    best
}

/// `sq − r2`, the constant term of a ray–cylinder (or cone) quadratic, but exactly 0 when it is
/// within the rounding of a computed point (a few ε·(sq + r2)): a start on the wall after a
/// reflection. Otherwise a start that rounds to just outside, heading in at a grazing angle
/// (below ~1e-8 rad), makes the discriminant negative: the ray seems to miss the wall it is
/// on and walks out through it.
#[inline]
pub(super) fn on_wall_snap(sq: f64, r2: f64) -> f64 {
    let c = sq - r2;
    if c.abs() <= 16.0 * f64::EPSILON * (sq + r2) {
        0.0
    } else {
        c
    }
}

/// First t > 0 at which the ray enters the region q(t) < 0 from outside (q' < 0).
#[inline]
pub(super) fn quadratic_entry(a: f64, b: f64, c: f64) -> Option<f64> {
    let disc = b * b - a * c;
    if a <= 0.0 || disc < 0.0 {
        return None;
    }
    let q = -(b + b.signum() * disc.sqrt());
    if q == 0.0 {
        return None;
    }
    let (r1, r2) = (q / a, c / q);
    let t = r1.min(r2);
    (t > 0.0 && a * t + b < 0.0).then_some(t)
}
