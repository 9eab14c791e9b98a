//! Mergeable Monte Carlo statistics: the one estimator behind every share a trace reports and
//! its 95 % confidence half-width.
//!
//! Every reported share is the mean of per-ray contributions x (a ray's weight in a tally or a
//! histogram bin). An [`Estimate`] holds the count n, the mean x̄, the sum of squared
//! deviations M₂ = Σ(x − x̄)² and, when the rays came in replicates, the spread of the replicate
//! means; it gives the share x̄ with the half-width from the replicates (Student's t, see
//! [`Estimate::half_width95`]) or else 1.96 √(M₂/(n − 1)/n) (normal approximation). Two
//! accumulations feed it, both exact in real arithmetic:
//! - a tally every ray contributes to (the budget's columns, the receiver, the studies' paired
//!   differences) keeps, per replicate of [`REPLICATE_RAYS`] consecutive rays, the sums of
//!   x − shift and (x − shift)² with the replicate's first ray's value as the shift
//!   ([`ShiftedSums`]), so that a tally on which every ray agrees has exactly zero spread;
//!   replicates and then batches merge by Chan et al.'s pairwise update (T. F. Chan, G. H. Golub,
//!   R. J. LeVeque, "Algorithms for computing the sample variance", Am. Stat. 37, 242 (1983)),
//!   always in order, so results do not depend on thread count. The same update also keeps the
//!   spread of the replicate means, Σ n_j (m_j − x̄)², and the interval comes from that
//!   (Student's t with J − 1 degrees of freedom) once there are [`LEAST_REPLICATES`]: the
//!   rays of one replicate share a scrambled point set (randomized quasi-Monte Carlo, see
//!   `trace::sequence`) and are not independent, the replicates are;
//! - a histogram in which each ray lands in at most one bin keeps Σx and Σx² per bin, merged by
//!   addition (no per-ray work for the bins a ray misses), and becomes an estimate at the end
//!   ([`Estimate::from_raw_sums`]); per bin, and per fixed group of bins (the intensity curve's
//!   windows, a map's uniformity blocks), it also keeps Σ S_j²/n_j over the replicates, from
//!   which the spread of the replicate means follows (`trace::Hist`). A sum over bins that are
//!   not one group has only the per-ray spread: for the scrambled source points that is the
//!   interval of independent rays, which their variance does not exceed in practice.
//!
//! Fewer than two rays: no spread can be estimated, and [`Estimate::half_width95`] says so
//! (`None`). A [`Share`] writes that as an infinite half-width (JSON `null`, read back as ∞); the
//! trace report's per-bin lists (maps, intensity curve, route profile) write 0 there, as the
//! report always has.

use serde::{Deserialize, Serialize};

/// Running mean and sum of squared deviations of per-ray contributions, and of the means of
/// the independent replicates they were traced in.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    /// Number of rays.
    pub n: u64,
    /// Mean contribution per ray.
    pub mean: f64,
    /// Sum of squared deviations from the mean.
    pub m2: f64,
    /// Number of independent replicates merged (0 when the rays were not traced in replicates:
    /// the per-ray spread gives the interval).
    #[serde(default)]
    pub replicates: u64,
    /// Σ n_j (m_j − x̄)² over the replicates j (n_j rays, mean m_j each).
    #[serde(default)]
    pub replicates_m2: f64,
}

/// The fewest replicates whose spread gives a share's interval; below it the per-ray spread
/// does.
pub const LEAST_REPLICATES: u64 = 8;

/// Rays in one independent replicate: consecutive rays whose source points are one
/// independently scrambled point set ([`crate::trace`]'s sequence). A batch holds a whole
/// number of them; paired per-ray figures in ray order group the same way.
pub const REPLICATE_RAYS: u64 = 256;

/// The two-sided 95 % quantile of Student's t distribution with `dof` degrees of freedom
/// (`dof` ≥ 1): the interval's multiplier when the spread comes from `dof + 1` replicates.
///
/// Up to 30 degrees of freedom from the standard table (from memory: M. Abramowitz and
/// I. A. Stegun, *Handbook of Mathematical Functions*, NBS 1964, Table 26.10, P = 0.05 two-sided);
/// beyond, the Cornish–Fisher expansion in 1/ν about the normal quantile z = 1.959964
/// (Abramowitz and Stegun 26.7.5), whose first neglected term is below 10⁻⁵ there.
pub fn t_quantile_975(dof: u64) -> f64 {
    const TABLE: [f64; 30] = [
        12.706, 4.303, 3.182, 2.776, 2.571, 2.447, 2.365, 2.306, 2.262, 2.228, 2.201, 2.179, 2.160,
        2.145, 2.131, 2.120, 2.110, 2.101, 2.093, 2.086, 2.080, 2.074, 2.069, 2.064, 2.060, 2.056,
        2.052, 2.048, 2.045, 2.042,
    ];
    match dof {
        0 => f64::INFINITY,
        1..=30 => TABLE[dof as usize - 1],
        _ => {
            let z = 1.959_963_984_540_054_f64;
            let nu = dof as f64;
            let (z2, z3) = (z * z, z * z * z);
            let (z5, z7) = (z3 * z2, z3 * z2 * z2);
            let g1 = (z3 + z) / 4.0;
            let g2 = (5.0 * z5 + 16.0 * z3 + 3.0 * z) / 96.0;
            let g3 = (3.0 * z7 + 19.0 * z5 + 17.0 * z3 - 15.0 * z) / 384.0;
            z + g1 / nu + g2 / (nu * nu) + g3 / (nu * nu * nu)
        }
    }
}

/// A share of the emitted power with its 95 % confidence half-width.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Share {
    /// The estimated share (0…1).
    pub share: f64,
    /// 95 % confidence half-width ([`Estimate::half_width95`]: from the spread of the replicate
    /// means with Student's t, else 1.96 per-ray standard errors); infinite when fewer than two
    /// rays were traced.
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
            ..Estimate::default()
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
            ..Estimate::default()
        }
    }

    /// The estimate of the mean difference x − x₀ from paired samples (the same ray traced
    /// in two scenarios with common random numbers): the per-pair differences d_k = x_k − x₀,k
    /// are summed shifted by the first ([`ShiftedSums`]). Its half-width is that of the mean of
    /// d, Var(d) = Var(x) + Var(x₀) − 2 Cov(x, x₀): the more the pairs agree, the narrower than
    /// two independent runs' √(a² + b²). The slices are per-ray figures in ray order from a
    /// batch's first ray (batches hold whole replicates), so each [`REPLICATE_RAYS`] consecutive pairs are one replicate and the
    /// interval comes from their spread as a trace's does ([`Estimate::of_replicates`]). Pairs
    /// beyond the shorter slice are ignored.
    pub fn of_differences(x: &[f64], x0: &[f64]) -> Estimate {
        let n = x.len().min(x0.len());
        Estimate::of_replicates(x[..n].iter().zip(&x0[..n]).map(|(a, b)| a - b))
    }

    /// The estimate of per-ray figures given in ray order from a batch's first ray: each
    /// [`REPLICATE_RAYS`] consecutive figures (the last group may be shorter) are summed shifted
    /// by their first ([`ShiftedSums`]) and merged as one replicate, in order.
    pub fn of_replicates(x: impl IntoIterator<Item = f64>) -> Estimate {
        let mut total = [Estimate::default()];
        let mut sums = ShiftedSums::new(1);
        for v in x {
            sums.add(&[v]);
            if sums.n == REPLICATE_RAYS {
                sums.close_replicate(&mut total);
            }
        }
        sums.close_replicate(&mut total);
        total[0]
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
        let between = delta * delta * (self.n as f64 * other.n as f64) / n as f64;
        *self = Estimate {
            n,
            mean,
            m2: self.m2 + other.m2 + between,
            replicates: self.replicates + other.replicates,
            replicates_m2: self.replicates_m2 + other.replicates_m2 + between,
        };
    }

    /// The estimate of k·x: the mean times k, every spread times k².
    pub fn scaled(self, k: f64) -> Estimate {
        Estimate {
            mean: k * self.mean,
            m2: k * k * self.m2,
            replicates_m2: k * k * self.replicates_m2,
            ..self
        }
    }

    /// This estimate (of the rays of one replicate) as one whole replicate: its mean is one
    /// replicate mean, with no spread between replicates yet.
    pub fn as_replicate(self) -> Estimate {
        Estimate {
            replicates: 1,
            replicates_m2: 0.0,
            ..self
        }
    }

    /// The 95 % confidence half-width of the mean; `None` below two rays, where no spread can
    /// be estimated.
    ///
    /// Rays traced in at least [`LEAST_REPLICATES`] independent replicates: from the spread of
    /// the replicate means, t √(s²/n) with s² = Σ n_j (m_j − x̄)² / (J − 1) over the J
    /// replicates and t Student's quantile with J − 1 degrees of freedom
    /// ([`t_quantile_975`]). With equal replicates of r rays this is t √(Var(m_j)/J): the
    /// batch-means interval, which stays right when the rays of a replicate are not
    /// independent (a scrambled point set's are not: that is where its lower variance comes
    /// from). Otherwise from the per-ray spread, 1.96 √(s²/n) with s² = M₂/(n − 1).
    pub fn half_width95(&self) -> Option<f64> {
        let v = self.variance_of_mean()?;
        Some(if self.replicates >= LEAST_REPLICATES {
            t_quantile_975(self.replicates - 1) * v.sqrt()
        } else {
            1.96 * v.sqrt()
        })
    }

    /// The estimated variance of the mean, s²/n, from the same spread as
    /// [`Estimate::half_width95`] (the replicate means' from at least [`LEAST_REPLICATES`]
    /// replicates, else the per-ray); `None` below two rays.
    pub fn variance_of_mean(&self) -> Option<f64> {
        if self.replicates >= LEAST_REPLICATES {
            let s2 = self.replicates_m2 / (self.replicates - 1) as f64;
            return Some(s2 / self.n as f64);
        }
        (self.n > 1).then(|| self.m2 / (self.n - 1) as f64 / self.n as f64)
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

impl Estimate {
    /// [`Estimate::fraction_of`] with its interval from the replicates when the part, the whole
    /// and `sum` (per ray, the whole plus the part, over the same rays) were traced in at least
    /// [`LEAST_REPLICATES`] of them; else the per-ray interval of [`Estimate::fraction_of`].
    ///
    /// The ratio r = T̄/R̄ to first order (the delta method, as there) has the variance of
    /// D̄ = T̄ − r R̄ over R̄²; over the replicates, D's spread is
    /// Σ n_j (d_j − D̄)² = M_T + r² M_R − 2 r C_TR, with M the spreads of the replicate means
    /// ([`Estimate::replicates_m2`]) and C_TR their co-spread, which the sum gives exactly:
    /// M_S = M_T + M_R + 2 C_TR. The half-width is then Student's t with J − 1 degrees of freedom
    /// times √(s²/n) / R̄, s² = Σ n_j (d_j − D̄)² / (J − 1), as a share's
    /// ([`Estimate::half_width95`]). A scrambled point set's rays are not independent, so this
    /// is the interval that stays right; the per-ray one ignores what the scrambling and the exit
    /// face's schedule take away (three times too wide for what a face turns back by Fresnel
    /// reflection).
    pub fn fraction_of_replicated(&self, whole: &Estimate, sum: &Estimate) -> Option<Share> {
        let plain = self.fraction_of(whole)?;
        let j = self.replicates;
        if j < LEAST_REPLICATES
            || whole.replicates != j
            || sum.replicates != j
            || whole.n != self.n
            || sum.n != self.n
        {
            return Some(plain);
        }
        let r = plain.share;
        let co = 0.5 * (sum.replicates_m2 - self.replicates_m2 - whole.replicates_m2);
        let m_d = (self.replicates_m2 + r * r * whole.replicates_m2 - 2.0 * r * co).max(0.0);
        let s2 = m_d / (j - 1) as f64;
        Some(Share {
            share: r,
            ci95: t_quantile_975(j - 1) * (s2 / self.n as f64).sqrt() / whole.mean,
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

    /// Close a replicate: merge each column's estimate over the rays added, as one replicate
    /// ([`Estimate::as_replicate`]), into `totals` (one per column, in replicate order), and
    /// empty the sums for the next replicate. Nothing is merged when no ray was added.
    pub fn close_replicate(&mut self, totals: &mut [Estimate]) {
        debug_assert_eq!(totals.len(), self.shift.len());
        if self.n == 0 {
            return;
        }
        for (j, total) in totals.iter_mut().enumerate() {
            let e = Estimate::from_shifted_sums(self.n, self.shift[j], self.sum[j], self.sumsq[j]);
            total.merge(&e.as_replicate());
        }
        self.n = 0;
        self.sum.iter_mut().for_each(|v| *v = 0.0);
        self.sumsq.iter_mut().for_each(|v| *v = 0.0);
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

    /// A fraction's interval from the replicates: over 12 replicates of 256 rays (each reaching
    /// with a weight R_i and turning back all of it or none, T_i ∈ {0, R_i}, in a pattern that
    /// gives the replicates different fractions), the half-width equals the one computed
    /// directly from the replicate means d_j = m_T,j − r m_R,j, t₁₁ √(Σ (d_j − d̄)²/11 / 12) / R̄;
    /// with fewer than LEAST_REPLICATES replicates, or no sum, it is the per-ray interval.
    #[test]
    fn a_fraction_of_a_whole_has_its_interval_from_the_replicates() {
        let r_rays = REPLICATE_RAYS as usize;
        let (mut whole, mut part) = (Vec::new(), Vec::new());
        for j in 0..12 {
            for k in 0..r_rays {
                let w = 0.5 + 0.5 * ((k * 7 + j * 3) % 11) as f64 / 10.0;
                let back = (k + j) % (3 + j % 4) == 0;
                whole.push(w);
                part.push(if back { w } else { 0.0 });
            }
        }
        let sum: Vec<f64> = whole.iter().zip(&part).map(|(a, b)| a + b).collect();
        let (t, r, s) = (
            Estimate::of_replicates(part.iter().copied()),
            Estimate::of_replicates(whole.iter().copied()),
            Estimate::of_replicates(sum.iter().copied()),
        );
        let f = t.fraction_of_replicated(&r, &s).unwrap();
        let ratio = part.iter().sum::<f64>() / whole.iter().sum::<f64>();
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let d: Vec<f64> = (0..12)
            .map(|j| {
                let span = j * r_rays..(j + 1) * r_rays;
                mean(&part[span.clone()]) - ratio * mean(&whole[span])
            })
            .collect();
        let d_mean = mean(&d);
        let s2 = d.iter().map(|x| (x - d_mean) * (x - d_mean)).sum::<f64>() / 11.0;
        let want = t_quantile_975(11) * (s2 / 12.0).sqrt() / mean(&whole);
        assert!((f.share - ratio).abs() < 1e-14, "{f:?} against {ratio}");
        assert!(
            (f.ci95 - want).abs() < 1e-9 * want,
            "{f:?} against ± {want}"
        );
        // The per-ray interval is another one (here narrower: the pattern makes the replicates
        // differ more than independent rays would).
        let plain = t.fraction_of(&r).unwrap();
        assert!(
            (plain.ci95 - f.ci95).abs() > 0.5 * f.ci95,
            "{plain:?} against {f:?}"
        );
        // Seven replicates: the per-ray interval.
        let first = |v: &[f64]| Estimate::of_replicates(v[..7 * r_rays].iter().copied());
        let (t7, r7, s7) = (first(&part), first(&whole), first(&sum));
        assert_eq!(t7.fraction_of_replicated(&r7, &s7), t7.fraction_of(&r7));
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

    /// Student's quantile: the table's values and, beyond it, the expansion against the same
    /// table's 40, 60 and 120 degrees of freedom (2.021, 2.000, 1.980; Abramowitz and Stegun
    /// Table 26.10, from memory), and the normal 1.960 far out.
    #[test]
    fn students_quantile_follows_the_table_and_tends_to_the_normal() {
        assert_eq!(t_quantile_975(0), f64::INFINITY);
        assert_eq!(t_quantile_975(1), 12.706);
        assert_eq!(t_quantile_975(15), 2.131);
        for (dof, want) in [(31, 2.040), (40, 2.021), (60, 2.000), (120, 1.980)] {
            let t = t_quantile_975(dof);
            assert!((t - want).abs() < 1.5e-3, "{dof}: {t} against {want}");
        }
        assert!((t_quantile_975(1_000_000) - 1.959_964).abs() < 1e-5);
        // Never rising with more degrees of freedom.
        for dof in 1..500 {
            assert!(t_quantile_975(dof + 1) <= t_quantile_975(dof), "{dof}");
        }
    }

    /// Replicates: the interval comes from the spread of the replicate means, t √(Var(m_j)/J)
    /// for J equal replicates, whatever the spread within each; the mean and the per-ray M₂ are
    /// those of all the rays; fewer than LEAST_REPLICATES replicates fall back on the per-ray
    /// spread.
    #[test]
    fn replicates_give_the_interval_from_their_means() {
        // 10 replicates of 256 rays: replicate j holds values j/10 and 1 − j/10 alternately (mean
        // ½ each, large spread within), plus a small offset (j − 4.5)·10⁻³ on every value.
        let r = REPLICATE_RAYS as usize;
        let mut x = Vec::new();
        for j in 0..10 {
            let off = (j as f64 - 4.5) * 1e-3;
            for k in 0..r {
                let v = if k % 2 == 0 {
                    j as f64 / 10.0
                } else {
                    1.0 - j as f64 / 10.0
                };
                x.push(v + off);
            }
        }
        let e = Estimate::of_replicates(x.iter().copied());
        assert_eq!((e.n, e.replicates), (2560, 10));
        let means: Vec<f64> = (0..10).map(|j| 0.5 + (j as f64 - 4.5) * 1e-3).collect();
        let m = means.iter().sum::<f64>() / 10.0;
        let var_m = means.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / 9.0;
        let want = t_quantile_975(9) * (var_m / 10.0).sqrt();
        let got = e.half_width95().unwrap();
        assert!((e.mean - m).abs() < 1e-15, "{e:?}");
        assert!(
            (got - want).abs() < 1e-12 * want.max(1e-300) + 1e-17,
            "{got} against {want}"
        );
        // The per-ray M₂ is all the rays' own.
        let mean = x.iter().sum::<f64>() / x.len() as f64;
        let m2: f64 = x.iter().map(|v| (v - mean) * (v - mean)).sum();
        assert!((e.m2 - m2).abs() < 1e-9 * m2);
        // The per-ray interval would be far wider: the spread within replicates is not noise
        // the mean carries when it is balanced in every replicate.
        assert!(1.96 * (m2 / 2559.0 / 2560.0).sqrt() > 4.0 * got);
        // Seven replicates: the per-ray interval.
        let few = Estimate::of_replicates(x[..7 * r].iter().copied());
        assert_eq!(few.replicates, 7);
        let mean7 = x[..7 * r].iter().sum::<f64>() / (7 * r) as f64;
        let m2_7: f64 = x[..7 * r].iter().map(|v| (v - mean7) * (v - mean7)).sum();
        let per_ray = 1.96 * (m2_7 / (7 * r - 1) as f64 / (7 * r) as f64).sqrt();
        assert!((few.half_width95().unwrap() - per_ray).abs() < 1e-12);
    }

    /// A last, shorter replicate weighs by its rays, and merging replicate estimates in order
    /// in two parts gives the whole's (what batches merged in order do).
    #[test]
    fn replicates_merge_in_order_and_weigh_by_their_rays() {
        let x: Vec<f64> = (0..(9 * REPLICATE_RAYS + 100))
            .map(|k| ((k * 7919) % 1000) as f64 / 1000.0)
            .collect();
        let whole = Estimate::of_replicates(x.iter().copied());
        assert_eq!(whole.replicates, 10);
        let cut = 4 * REPLICATE_RAYS as usize;
        let mut parts = Estimate::of_replicates(x[..cut].iter().copied());
        parts.merge(&Estimate::of_replicates(x[cut..].iter().copied()));
        assert_eq!(parts.replicates, 10);
        assert!((parts.mean - whole.mean).abs() < 1e-15);
        assert!((parts.replicates_m2 - whole.replicates_m2).abs() < 1e-12);
        // Directly: Σ n_j (m_j − x̄)².
        let mean = x.iter().sum::<f64>() / x.len() as f64;
        let direct: f64 = x
            .chunks(REPLICATE_RAYS as usize)
            .map(|c| {
                let m = c.iter().sum::<f64>() / c.len() as f64;
                c.len() as f64 * (m - mean) * (m - mean)
            })
            .sum();
        assert!(
            (whole.replicates_m2 - direct).abs() < 1e-12,
            "{whole:?} against {direct}"
        );
        // Scaling by ½ halves the mean and the half-width.
        let half = whole.scaled(0.5);
        assert!((half.mean - 0.5 * whole.mean).abs() < 1e-15);
        let (a, b) = (half.half_width95().unwrap(), whole.half_width95().unwrap());
        assert!((a - 0.5 * b).abs() < 1e-15);
    }
}
