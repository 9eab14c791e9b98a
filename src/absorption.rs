//! Bulk absorption along a path: the Beer–Lambert law, P = P₀ e^(−αL) (α the attenuation
//! coefficient per mm, L the path length in mm), as the tracer applies it to a ray's weight once
//! per segment.
//!
//! A light pipe's paths are short against its absorption length: at 0.3 dB/m, α = 6.9·10⁻⁵ per
//! mm, and a ray's path through one segment gives x = αL of a few thousandths. There the Taylor
//! series of 1 − e^(−x) converges fast, and a few multiplications give both the part absorbed
//! and the part kept to within rounding without calling the exponential, which took 4 % of the
//! trace's time on the benchmark route.

/// Above this x = αL the exponential itself is called ([`absorbed_and_kept`]).
const SERIES_MAX: f64 = 1.0 / 128.0;

/// The shares of a ray's weight a path with x = αL ≥ 0 absorbs and keeps: (1 − e^(−x), e^(−x)),
/// which sum to 1 to rounding.
///
/// For x ≤ 1/128, 1 − e^(−x) = x (1 − x/2 (1 − x/3 (1 − x/4 (1 − x/5 (1 − x/6 (1 − x/7)))))),
/// the Taylor series of the exponential to x⁷ in nested form; the first term left out, x⁸/8!,
/// is below 10⁻¹⁹ of the absorbed part there, far under its rounding. The kept part is 1 minus
/// that. Above, e^(−x) and −(e^(−x) − 1) from `libm` (identical native and wasm; the second
/// keeps the absorbed part's relative precision, which 1 − e^(−x) would lose for small x).
#[inline]
pub fn absorbed_and_kept(x: f64) -> (f64, f64) {
    if x <= SERIES_MAX {
        const C: [f64; 6] = [
            1.0 / 7.0,
            1.0 / 6.0,
            1.0 / 5.0,
            1.0 / 4.0,
            1.0 / 3.0,
            1.0 / 2.0,
        ];
        let mut s = 1.0;
        for c in C {
            s = 1.0 - x * c * s;
        }
        let absorbed = x * s;
        (absorbed, 1.0 - absorbed)
    } else {
        (-libm::expm1(-x), libm::exp(-x))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against `libm` (a general-purpose reference library): the kept part within 2 ulp of
    /// exp(−x), the absorbed part within 4 ulp (relative) of −expm1(−x), from tiny x through
    /// the switch to the exponential to a path that keeps almost nothing; the two sum to 1
    /// within rounding.
    #[test]
    fn matches_the_exponential() {
        let mut x = 1e-12;
        while x < 40.0 {
            let (absorbed, kept) = absorbed_and_kept(x);
            let exact_kept = libm::exp(-x);
            let exact_absorbed = -libm::expm1(-x);
            assert!(
                (kept - exact_kept).abs() <= 2.0 * f64::EPSILON,
                "x {x}: kept {kept} vs {exact_kept}"
            );
            assert!(
                (absorbed - exact_absorbed).abs() <= 4.0 * f64::EPSILON * exact_absorbed,
                "x {x}: absorbed {absorbed} vs {exact_absorbed}"
            );
            assert!((absorbed + kept - 1.0).abs() <= 2.0 * f64::EPSILON, "x {x}");
            x *= 1.07;
        }
        assert_eq!(absorbed_and_kept(0.0), (0.0, 1.0));
    }
}
