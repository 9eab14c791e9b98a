//! Support shared by the test files: a seeded generator for property loops, so every case is
//! reproducible (SplitMix64: S. Vigna's finaliser of Java's SplittableRandom), independent of
//! the tracer's own generator.
#![allow(dead_code, clippy::disallowed_methods)]

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
