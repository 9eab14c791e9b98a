//! Mergeable Monte Carlo statistics: the one estimator behind every share a trace reports and
//! its 95 % confidence half-width.
//!
//! Every reported share is the mean of per-ray contributions x (a ray's weight in a tally or a
//! histogram bin). An [`Estimate`] holds the count n, the mean x̄ and the sum of squared
//! deviations M₂ = Σ(x − x̄)², and gives the share x̄ with the half-width 1.96 √(M₂/(n − 1)/n)
//! (normal approximation). Two accumulations feed it, both exact in real arithmetic:
//! - a tally every ray contributes to (the budget's columns, the receiver) keeps, per batch,
//!   the sums of x − shift and (x − shift)² with the first ray's value as the shift
//!   ([`ShiftedSums`]), so that a tally on which every ray agrees has exactly zero spread;
//!   batches merge by Chan et al.'s pairwise update (T. F. Chan, G. H. Golub, R. J. LeVeque,
//!   "Algorithms for computing the sample variance", Am. Stat. 37, 242 (1983)), always in batch
//!   order, so results do not depend on thread count;
//! - a histogram in which each ray lands in at most one bin keeps Σx and Σx² per bin, merged by
//!   addition (no per-ray work for the bins a ray misses), and becomes an estimate at the end
//!   ([`Estimate::from_raw_sums`]).
//!
//! Fewer than two rays: no spread can be estimated, and [`Estimate::half_width95`] says so
//! (`None`). A [`Share`] writes that as an infinite half-width (JSON `null`, read back as ∞); the
//! trace report's per-bin lists (maps, intensity curve, route profile) write 0 there, as the
//! report always has.

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
    /// 95 % confidence half-width (normal approximation, 1.96 standard errors); infinite when
    /// fewer than two rays were traced.
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

    /// From the count and the plain sums Σx and Σx² (a histogram bin, where most rays add 0):
    /// mean Σx/n, M₂ = Σx² − (Σx)²/n (never below 0).
    pub fn from_raw_sums(n: u64, sum: f64, sumsq: f64) -> Estimate {
        if n == 0 {
            return Estimate::default();
        }
        let nf = n as f64;
        Estimate {
            n,
            mean: sum / nf,
            m2: (sumsq - sum * sum / nf).max(0.0),
        }
    }

    /// The estimate of the mean difference x − x₀ from paired samples (the same ray traced
    /// in two scenarios with common random numbers): the per-pair differences d_k = x_k − x₀,k
    /// are summed shifted by the first ([`ShiftedSums`]). Its half-width is
    /// 1.96 √(Var(d)/n) with Var(d) = Var(x) + Var(x₀) − 2 Cov(x, x₀): the more the pairs
    /// agree, the narrower than two independent runs' √(a² + b²). Pairs beyond the shorter
    /// slice are ignored.
    pub fn of_differences(x: &[f64], x0: &[f64]) -> Estimate {
        let mut sums = ShiftedSums::new(1);
        for (a, b) in x.iter().zip(x0) {
            sums.add(&[a - b]);
        }
        let d = sums.estimates().next().unwrap_or_default();
        d
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

    /// The 95 % confidence half-width of the mean, 1.96 √(s²/n) with s² = M₂/(n − 1); `None`
    /// below two rays, where no spread can be estimated.
    pub fn half_width95(&self) -> Option<f64> {
        (self.n > 1).then(|| 1.96 * (self.m2 / (self.n - 1) as f64 / self.n as f64).sqrt())
    }

    /// The share with its 95 % confidence half-width ([`Estimate::half_width95`]; infinite below
    /// two rays).
    pub fn share(&self) -> Share {
        Share {
            share: self.mean,
            ci95: self.half_width95().unwrap_or(f64::INFINITY),
        }
    }

    /// The fraction T̄/R̄ of a whole R that a part T of it is, with its 95 % half-width, when every
    /// ray's part is either all of its whole or nothing (T_i ∈ {0, R_i}, e.g. the light turned
    /// back at a face of the light reaching it); both estimates over the same rays. `None` when
    /// the whole is 0 (nothing to take a fraction of).
    ///
    /// The ratio estimator r = T̄/R̄ has, to first order (the delta method), the variance
    /// Var(T − r R) / (n R̄²) (from memory: W. G. Cochran, *Sampling Techniques*, 3rd ed.,
    /// Wiley 1977, ch. 6, the ratio estimator), with
    /// s²(T − rR) = s²_T + r² s²_R − 2 r s_TR. The covariance needs Σ T_i R_i, which the two
    /// estimates do not hold in general; here T_i R_i = T_i², so Σ T_i R_i = M₂_T + n T̄² and
    /// s_TR = (M₂_T + n T̄ (T̄ − R̄)) / (n − 1). For 0/1 weights this is the binomial
    /// r(1 − r)/(n R̄): the part's count among the rays that reach the whole. Infinite below two
    /// rays.
    pub fn fraction_of(&self, whole: &Estimate) -> Option<Share> {
        if whole.mean <= 0.0 || whole.n == 0 {
            return None;
        }
        let r = self.mean / whole.mean;
        if self.n < 2 || whole.n != self.n {
            return Some(Share {
                share: r,
                ci95: f64::INFINITY,
            });
        }
        let n = self.n as f64;
        let s2_t = self.m2 / (n - 1.0);
        let s2_r = whole.m2 / (n - 1.0);
        let s_tr = (self.m2 + n * self.mean * (self.mean - whole.mean)) / (n - 1.0);
        let s2_d = (s2_t + r * r * s2_r - 2.0 * r * s_tr).max(0.0);
        Some(Share {
            share: r,
            ci95: 1.96 * (s2_d / n).sqrt() / whole.mean,
        })
    }
}

/// One batch's running sums for several tallies at once: per column, the sums of (x − shift)
/// and (x − shift)², where the shift is the first ray's contribution.
#[derive(Debug, Clone)]
pub struct ShiftedSums {
    n: u64,
    shift: Vec<f64>,
    sum: Vec<f64>,
    sumsq: Vec<f64>,
}

impl ShiftedSums {
    /// Empty sums for `columns` tallies.
    pub fn new(columns: usize) -> ShiftedSums {
        ShiftedSums {
            n: 0,
            shift: vec![0.0; columns],
            sum: vec![0.0; columns],
            sumsq: vec![0.0; columns],
        }
    }

    /// Add one ray's contributions, one per column (the first ray's become the shifts).
    #[inline]
    pub fn add(&mut self, x: &[f64]) {
        debug_assert_eq!(x.len(), self.shift.len());
        if self.n == 0 {
            self.shift.copy_from_slice(x);
        }
        for (((x, shift), sum), sumsq) in x
            .iter()
            .zip(&self.shift)
            .zip(&mut self.sum)
            .zip(&mut self.sumsq)
        {
            let d = x - shift;
            *sum += d;
            *sumsq += d * d;
        }
        self.n += 1;
    }

    /// The estimate of each column over the rays added.
    pub fn estimates(&self) -> impl Iterator<Item = Estimate> + '_ {
        (0..self.shift.len())
            .map(|j| Estimate::from_shifted_sums(self.n, self.shift[j], self.sum[j], self.sumsq[j]))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn below_two_rays_there_is_no_interval() {
        let none = Estimate::from_raw_sums(0, 0.0, 0.0);
        assert_eq!(none.half_width95(), None);
        assert_eq!(none.share().share, 0.0);
        let one = Estimate::from_raw_sums(1, 0.5, 0.25);
        assert_eq!(one.half_width95(), None);
        assert_eq!(
            one.share(),
            Share {
                share: 0.5,
                ci95: f64::INFINITY
            }
        );
        let two = Estimate::from_raw_sums(2, 1.0, 1.0);
        // x = {0, 1}: mean ½, s² = ½, half-width 1.96 √(½/2) = 0.98.
        assert_eq!(two.share().share, 0.5);
        assert!((two.half_width95().unwrap() - 0.98).abs() < 1e-15);
    }

    #[test]
    fn shifted_and_raw_sums_agree_with_a_direct_computation() {
        let xs = [0.25, 0.0, 1.0, 0.5, 0.0, 0.75, 0.0];
        let n = xs.len() as f64;
        let mean = xs.iter().sum::<f64>() / n;
        let m2: f64 = xs.iter().map(|x| (x - mean) * (x - mean)).sum();
        let mut shifted = ShiftedSums::new(1);
        let (mut s, mut q) = (0.0, 0.0);
        for x in xs {
            shifted.add(&[x]);
            s += x;
            q += x * x;
        }
        let a = shifted.estimates().next().unwrap();
        let b = Estimate::from_raw_sums(xs.len() as u64, s, q);
        for e in [a, b] {
            assert_eq!(e.n, 7);
            assert!(
                (e.mean - mean).abs() < 1e-15 && (e.m2 - m2).abs() < 1e-14,
                "{e:?}"
            );
        }
        // Split in two batches and merged (Chan et al.): the same estimate.
        let (mut first, mut second) = (ShiftedSums::new(1), ShiftedSums::new(1));
        xs[..3].iter().for_each(|&x| first.add(&[x]));
        xs[3..].iter().for_each(|&x| second.add(&[x]));
        let mut merged = first.estimates().next().unwrap();
        merged.merge(&second.estimates().next().unwrap());
        assert!((merged.mean - mean).abs() < 1e-15 && (merged.m2 - m2).abs() < 1e-14);
    }

    #[test]
    fn differences_of_pairs_are_the_difference_of_means_with_their_own_spread() {
        let x0 = [0.0, 1.0, 1.0, 0.0, 1.0, 0.5];
        // Every pair moved by the same 0.25: the mean difference is 0.25 with no spread.
        let x: Vec<f64> = x0.iter().map(|v| v + 0.25).collect();
        let d = Estimate::of_differences(&x, &x0);
        assert_eq!(d.n, 6);
        assert!((d.mean - 0.25).abs() < 1e-15);
        assert_eq!(d.half_width95(), Some(0.0));
        // Identical samples: exactly zero.
        let same = Estimate::of_differences(&x0, &x0);
        assert_eq!((same.mean, same.m2), (0.0, 0.0));
        // One pair differs by 1: mean 1/6, M₂ = Σ(d − 1/6)² = 5/36 + 25/36 = 5/6.
        let mut y = x0;
        y[0] = 1.0;
        let one = Estimate::of_differences(&y, &x0);
        assert!((one.mean - 1.0 / 6.0).abs() < 1e-15 && (one.m2 - 5.0 / 6.0).abs() < 1e-15);
    }

    #[test]
    fn a_fraction_of_a_whole_has_the_ratio_estimators_interval() {
        // Rays reaching a face with weight R_i (0 when they do not), turned back with T_i ∈ {0, R_i}.
        let reached = [1.0, 0.8, 0.0, 0.9, 1.0, 0.5, 0.7, 0.0, 1.0, 0.6];
        let turned = [1.0, 0.0, 0.0, 0.9, 0.0, 0.5, 0.0, 0.0, 1.0, 0.0];
        let mut sums = ShiftedSums::new(2);
        for (r, t) in reached.iter().zip(&turned) {
            sums.add(&[*r, *t]);
        }
        let e: Vec<Estimate> = sums.estimates().collect();
        let f = e[1].fraction_of(&e[0]).unwrap();
        // Directly: r = ΣT/ΣR, s² of D_i = T_i − r R_i about its mean (0), half-width
        // 1.96 √(s²_D/n) / R̄ (the ratio estimator's delta-method interval).
        let n = reached.len() as f64;
        let (st, sr): (f64, f64) = (turned.iter().sum(), reached.iter().sum());
        let r = st / sr;
        let d: Vec<f64> = reached
            .iter()
            .zip(&turned)
            .map(|(a, b)| b - r * a)
            .collect();
        let d_mean = d.iter().sum::<f64>() / n;
        let s2_d = d.iter().map(|x| (x - d_mean) * (x - d_mean)).sum::<f64>() / (n - 1.0);
        let want = 1.96 * (s2_d / n).sqrt() / (sr / n);
        assert!((f.share - r).abs() < 1e-15, "{f:?} against {r}");
        assert!((f.ci95 - want).abs() < 1e-14, "{f:?} against ± {want}");
        // 0/1 weights: the binomial interval over the rays that reach the whole.
        let mut sums = ShiftedSums::new(2);
        for k in 0..1000 {
            let r = if k % 4 == 0 { 0.0 } else { 1.0 };
            let t = if r > 0.0 && k % 3 == 0 { 1.0 } else { 0.0 };
            sums.add(&[r, t]);
        }
        let e: Vec<Estimate> = sums.estimates().collect();
        let f = e[1].fraction_of(&e[0]).unwrap();
        let (m, p) = (750.0, 250.0 / 750.0);
        assert!((f.share - p).abs() < 1e-15);
        assert!(
            (f.ci95 - 1.96 * (p * (1.0 - p) / m).sqrt()).abs() < 2e-5,
            "{f:?}"
        );
        // No whole: no fraction; one ray: no interval.
        assert_eq!(Estimate::default().fraction_of(&Estimate::default()), None);
        let one = Estimate::from_raw_sums(1, 0.5, 0.25);
        assert_eq!(one.fraction_of(&one).unwrap().ci95, f64::INFINITY);
    }

    #[test]
    fn a_tally_every_ray_agrees_on_has_no_spread() {
        let mut sums = ShiftedSums::new(2);
        for _ in 0..5 {
            sums.add(&[0.1, 0.0]);
        }
        for e in sums.estimates() {
            assert_eq!(e.m2, 0.0);
            assert_eq!(e.half_width95(), Some(0.0));
        }
    }
}
