//! Mergeable Monte Carlo statistics. Each batch keeps, per tally, the count, the sum and the sum
//! of squares of the per-ray contributions; batches merge by Chan et al.'s pairwise update
//! (T. F. Chan, G. H. Golub, R. J. LeVeque, "Algorithms for computing the sample variance",
//! Am. Stat. 37, 242 (1983)), always in batch order, so results do not depend on thread count.

use serde::{Deserialize, Serialize};

/// Running mean and sum of squared deviations of per-ray contributions.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    /// Number of rays.
    pub n: u64,
    /// Mean contribution per ray.
    pub mean: f64,
    /// Sum of squared deviations from the mean.
    pub m2: f64,
}

/// A share of the emitted power with its 95 % confidence half-width.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Share {
    /// The estimated share (0…1).
    pub share: f64,
    /// 95 % confidence half-width (normal approximation, 1.96 standard errors).
    #[serde(deserialize_with = "crate::export::ci95_or_infinite")]
    pub ci95: f64,
}

impl Estimate {
    /// From a batch's count and the sum and sum of squares of (x − shift): with the shift near
    /// the mean (e.g. the first sample) the variance suffers no cancellation, and it is exactly 0
    /// when every sample equals the shift.
    pub fn from_shifted_sums(n: u64, shift: f64, sum: f64, sumsq: f64) -> Estimate {
        if n == 0 {
            return Estimate::default();
        }
        let d = sum / n as f64;
        let m2 = (sumsq - sum * d).max(0.0);
        Estimate {
            n,
            mean: shift + d,
            m2,
        }
    }

    /// Merge another estimate into this one (Chan et al. 1983).
    pub fn merge(&mut self, other: &Estimate) {
        if other.n == 0 {
            return;
        }
        if self.n == 0 {
            *self = *other;
            return;
        }
        let n = self.n + other.n;
        let delta = other.mean - self.mean;
        let mean = self.mean + delta * other.n as f64 / n as f64;
        let m2 = self.m2 + other.m2 + delta * delta * (self.n as f64 * other.n as f64) / n as f64;
        *self = Estimate { n, mean, m2 };
    }

    /// The share with its 95 % confidence half-width, 1.96 √(s²/n).
    pub fn share(&self) -> Share {
        let ci95 = if self.n > 1 {
            1.96 * (self.m2 / (self.n - 1) as f64 / self.n as f64).sqrt()
        } else {
            f64::INFINITY
        };
        Share {
            share: self.mean,
            ci95,
        }
    }
}
