//! The figures a designer judges an exit by, from a trace's histograms: how uniform the exit
//! face's irradiance is, and the receiver's (the detector's) when the scenario has one (least
//! over greatest, and the coefficient of variation; one function for both surfaces,
//! [`Uniformity::of_map`]), and the exit beam's half-intensity full angle.
//!
//! Least over greatest has an interval of its own ([`min_over_max`]). Every other figure is a
//! smooth function f of histogram bins' shares S_k (the mean over n rays of a ray's
//! weight in bin k; a ray lands in one bin at most) and carries a 95 % interval by the delta
//! method (first-order propagation; from memory, e.g. W. G. Cochran, *Sampling Techniques*,
//! 3rd ed., Wiley 1977, ch. 6): Var f ≈ gᵀ C g / … with g_k = ∂f/∂S_k. Because a ray lands in
//! at most one bin, the per-ray covariance is exact: C_kl = δ_kl E[x_k²] − S_k S_l, so
//! Var f = (Σ g_k² Q_k − (Σ g_k S_k)²) / (n − 1) with Q_k = Σx_k²/n (derived; for one bin it
//! is the bin's own [`crate::stats::Estimate::half_width95`] squared over 1.96²). This is the
//! per-ray spread every other figure of the report uses, so the figures follow the batches'
//! merge bit for bit (any thread count, native and wasm).

use serde::{Deserialize, Serialize};

use crate::scenario::Section;
use crate::stats::Estimate;
use crate::trace::{Hist, IntensityWindow, Value};

/// Blocks across and down of the grid over which the exit face's uniformity is judged. The exit
/// map's cells are too small for it (41 across: at 10⁵ rays a cell holds ~80 rays, ±22 %), so
/// they are grouped into 9 × 9 blocks of whole cells (5, 4, 5, 4, 5, 4, 5, 4, 5 cells each
/// way, symmetric about the axis). A grid of about nine points each way is how panel
/// uniformity is commonly sampled (common practice, no source).
pub const UNIFORMITY_BLOCKS: usize = 9;

/// A block counts towards the uniformity when it lies wholly on the exit face and its share is
/// known to within this fraction (the 95 % half-width over the share): blocks with too few rays
/// would give their noise as non-uniformity. The figures say how many blocks counted.
pub const UNIFORMITY_MAX_RELATIVE_CI95: f64 = 0.2;

/// A figure with an interval that need not be symmetric, e.g. one that cannot go below 0.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Bounded {
    /// The figure.
    pub value: f64,
    /// Lower end of its 95 % interval.
    pub low95: f64,
    /// Upper end of its 95 % interval.
    pub high95: f64,
}

/// How uniform the exit face's irradiance is over the blocks of [`UNIFORMITY_BLOCKS`] that
/// count ([`UNIFORMITY_MAX_RELATIVE_CI95`]).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Uniformity {
    /// Blocks across and down.
    pub blocks: usize,
    /// Blocks wholly on the exit face (all of them on a rectangular face).
    pub blocks_on_face: usize,
    /// Of those, the blocks whose share is known well enough to count.
    pub blocks_counted: usize,
    /// The rule for counting: a block's 95 % half-width over its share at most this
    /// ([`UNIFORMITY_MAX_RELATIVE_CI95`]).
    pub counted_within_relative_ci95: f64,
    /// Least over greatest irradiance of the blocks counted, with a 95 % interval for the ratio
    /// of the blocks' true irradiances that allows for the extremes being picked from the same
    /// noisy rays ([`min_over_max`]: the value leans low, the interval reaches up to where the
    /// truth may be). `None` below two blocks.
    pub min_over_max: Option<Bounded>,
    /// Coefficient of variation (standard deviation over mean) of the irradiance of the blocks
    /// counted, with the blocks' own noise taken out: CV² = (s² − v̄)/Ē², s² the blocks' sample
    /// variance, v̄ the mean of their irradiance's variances (each block's variance of the mean,
    /// from its replicates as its interval is; the method of moments; from
    /// memory). The interval is the delta method's on CV², its ends' square roots (0 where the
    /// end is below 0); near CV = 0 it is wider than need be. `None` below two blocks.
    pub coefficient_of_variation: Option<Bounded>,
}

/// The outline a map's blocks must lie on wholly to count: the map spans its bounding box
/// (2 × half-width across, 2 × half-height down), centred on the exit axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapOutline {
    /// Half the box's width, mm.
    pub half_width_mm: f64,
    /// Half the box's height, mm.
    pub half_height_mm: f64,
    /// Round (the ellipse inscribed in the box; a circle for every outline here), else the box.
    pub round: bool,
}

impl MapOutline {
    /// The exit face's outline.
    pub fn of_section(exit: &Section) -> MapOutline {
        let (half_width_mm, half_height_mm) = exit.half_sizes_mm();
        MapOutline {
            half_width_mm,
            half_height_mm,
            round: matches!(exit, Section::Round { .. }),
        }
    }
}

/// The exit figures of a trace.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct ExitFigures {
    /// Uniformity of the irradiance on the exit face.
    pub exit_face_uniformity: Uniformity,
    /// Uniformity of the irradiance on the receiver (the detector), judged as the exit face's
    /// over the receiver's map ([`crate::trace::receiver_map`]); only when the scenario has one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub receiver_uniformity: Option<Uniformity>,
    /// Full angle at half the maximum intensity beyond the exit face, degrees: twice the angle
    /// from the axis at which the intensity (per 1° ring, smoothed over three rings) first
    /// falls below half the maximum's, going out from the maximum's window
    /// ([`half_intensity_reference`]: the on-axis cone unless a ring is clearly brighter),
    /// interpolated linearly between the ring centres on either side. `None` when it never
    /// falls to half within 90°.
    pub half_intensity_full_angle_deg: Option<Value>,
}

/// The exit figures as a CSV table after a blank line (the end of `tirtrace trace --csv` and the
/// page's download): one row per figure with its value and the ends of its 95 % interval (empty
/// when the figure is not known), the detector's uniformity after the exit face's when the
/// scenario has a receiver, then the rule the uniformity follows (per surface).
pub fn csv(f: &ExitFigures) -> String {
    use crate::export::{csv_num, csv_text};
    let u = &f.exit_face_uniformity;
    let mut s = String::from("\n\"Exit figures\",value,low 95 %,high 95 %\n");
    let mut row = |what: &str, v: Option<(f64, f64, f64)>| {
        s += &csv_text(what);
        match v {
            // An interval from fewer than two rays is unknown: its ends are left empty.
            Some((v, lo, hi)) if !(lo.is_finite() && hi.is_finite()) => {
                s += &format!(",{},,\n", csv_num(v));
            }
            Some((v, lo, hi)) => {
                s += &format!(",{},{},{}\n", csv_num(v), csv_num(lo), csv_num(hi));
            }
            None => s += ",,,\n",
        }
    };
    let symmetric = |v: &Value| (v.value, v.value - v.ci95, v.value + v.ci95);
    let bounded = |b: &Bounded| (b.value, b.low95, b.high95);
    let mut uniformity_rows = |place: &str, u: &Uniformity| {
        row(
            &format!("{place}: least over greatest irradiance"),
            u.min_over_max.as_ref().map(bounded),
        );
        row(
            &format!("{place}: coefficient of variation of the irradiance"),
            u.coefficient_of_variation.as_ref().map(bounded),
        );
    };
    uniformity_rows("Exit face", u);
    if let Some(r) = &f.receiver_uniformity {
        uniformity_rows("On the detector", r);
    }
    row(
        "Half-intensity full angle (°)",
        f.half_intensity_full_angle_deg.as_ref().map(symmetric),
    );
    let mut blocks = |title: &str, on: &str, u: &Uniformity| {
        s += &format!(
            "\n{},across and down,{},counted\n{},{},{},{}\n",
            csv_text(title),
            on,
            csv_text(&format!(
                "counted when known to ±{} %",
                u.counted_within_relative_ci95 * 100.0
            )),
            u.blocks,
            u.blocks_on_face,
            u.blocks_counted
        );
    };
    blocks("Exit face blocks", "wholly on the face", u);
    if let Some(r) = &f.receiver_uniformity {
        blocks("Detector blocks", "wholly on the detector", r);
    }
    s
}

/// Variance of f from its gradient over the bins of `h` (pairs of bin index and ∂f/∂S_k; a bin
/// may appear more than once, its parts add), over `rays` rays (the module's formula).
fn delta_variance(h: &Hist, rays: u64, gradient: &[(usize, f64)]) -> f64 {
    if rays < 2 {
        return f64::INFINITY;
    }
    let n = rays as f64;
    let mut g = std::collections::BTreeMap::<usize, f64>::new();
    for &(k, v) in gradient {
        *g.entry(k).or_insert(0.0) += v;
    }
    let (mut quad, mut lin) = (0.0, 0.0);
    for (&k, &gk) in &g {
        quad += gk * gk * h.sumsq[k] / n;
        lin += gk * h.sum[k] / n;
    }
    ((quad - lin * lin) / (n - 1.0)).max(0.0)
}

/// The edges of `blocks` blocks of whole cells over `cells` cells: round(k · cells / blocks).
fn block_edges(cells: usize, blocks: usize) -> Vec<usize> {
    (0..=blocks)
        .map(|k| (2 * k * cells + blocks) / (2 * blocks))
        .collect()
}

/// Each cell's uniformity block on a map of `cells` × `cells` (row-major; block by·B + bx for
/// B = [`UNIFORMITY_BLOCKS`] blocks each way, [`block_edges`]), and the number of blocks: the
/// groups of a map's histogram, so that a block's share has an interval from its replicates.
pub fn block_of_cell(cells: usize) -> (Vec<u32>, usize) {
    let edges = block_edges(cells, UNIFORMITY_BLOCKS);
    let mut group_of = vec![crate::trace::NO_GROUP; cells * cells];
    for by in 0..UNIFORMITY_BLOCKS {
        for bx in 0..UNIFORMITY_BLOCKS {
            for y in edges[by]..edges[by + 1] {
                for x in edges[bx]..edges[bx + 1] {
                    group_of[y * cells + x] = (by * UNIFORMITY_BLOCKS + bx) as u32;
                }
            }
        }
    }
    (group_of, UNIFORMITY_BLOCKS * UNIFORMITY_BLOCKS)
}

/// A block of the exit map: its cells, share estimate and area.
struct Block {
    cells: Vec<usize>,
    share: Estimate,
    area_mm2: f64,
}

impl Uniformity {
    /// From the exit map `h` (`cells` × `cells`, row-major from −y, over the exit section's
    /// bounding box) over `rays` rays.
    pub fn of_exit_map(h: &Hist, rays: u64, cells: usize, exit: &Section) -> Uniformity {
        Uniformity::of_map(h, rays, cells, &MapOutline::of_section(exit))
    }

    /// From a map `h` (`cells` × `cells`, row-major from −y, over the bounding box of
    /// `outline`) over `rays` rays: the blocks wholly on the outline count when known well
    /// enough. The exit face's and the receiver's figures both come from here.
    pub fn of_map(h: &Hist, rays: u64, cells: usize, outline: &MapOutline) -> Uniformity {
        let (hw, hh) = (outline.half_width_mm, outline.half_height_mm);
        let round = outline.round;
        let edges = block_edges(cells, UNIFORMITY_BLOCKS);
        let (cw, ch) = (2.0 * hw / cells as f64, 2.0 * hh / cells as f64);
        // A corner of the grid, as a fraction of the half-sizes (−1 … 1).
        let at = |edge: usize| 2.0 * edge as f64 / cells as f64 - 1.0;
        let mut on_face = Vec::new();
        for by in 0..UNIFORMITY_BLOCKS {
            for bx in 0..UNIFORMITY_BLOCKS {
                let (x0, x1, y0, y1) = (edges[bx], edges[bx + 1], edges[by], edges[by + 1]);
                let inside = !round
                    || [(x0, y0), (x1, y0), (x0, y1), (x1, y1)]
                        .iter()
                        .all(|&(x, y)| {
                            let (u, v) = (at(x), at(y));
                            u * u + v * v <= 1.0 + 1e-12
                        });
                if !inside {
                    continue;
                }
                let cells_in: Vec<usize> = (y0..y1)
                    .flat_map(|y| (x0..x1).map(move |x| y * cells + x))
                    .collect();
                let block = by * UNIFORMITY_BLOCKS + bx;
                on_face.push(Block {
                    area_mm2: (x1 - x0) as f64 * cw * (y1 - y0) as f64 * ch,
                    share: h.group_estimate(rays, cells_in.iter().copied(), Some(block)),
                    cells: cells_in,
                });
            }
        }
        let counted: Vec<&Block> = on_face
            .iter()
            .filter(|b| {
                b.share.mean > 0.0
                    && b.share
                        .half_width95()
                        .is_some_and(|w| w <= UNIFORMITY_MAX_RELATIVE_CI95 * b.share.mean)
            })
            .collect();
        let (min_over_max, coefficient_of_variation) = if counted.len() < 2 {
            (None, None)
        } else {
            (
                Some(min_over_max(&counted)),
                Some(coefficient_of_variation(h, rays, &counted)),
            )
        };
        Uniformity {
            blocks: UNIFORMITY_BLOCKS,
            blocks_on_face: on_face.len(),
            blocks_counted: counted.len(),
            counted_within_relative_ci95: UNIFORMITY_MAX_RELATIVE_CI95,
            min_over_max,
            coefficient_of_variation,
        }
    }
}

/// Every cell of a block with the same gradient `g` (the block's share is its cells' sum).
fn over_cells(b: &Block, g: f64) -> impl Iterator<Item = (usize, f64)> + '_ {
    b.cells.iter().map(move |&k| (k, g))
}

/// Upper-tail quantile of the standard normal distribution: the z with Q(z) = p, Q(z) =
/// ½ erfc(z/√2) (from memory, any statistics text, e.g. M. Abramowitz, I. A. Stegun, *Handbook
/// of Mathematical Functions*, 1964, 26.2.2 and 7.1.2), by bisection on [0, 40] for 0 < p ≤ ½
/// (libm's erfc: the same bits native and in wasm).
pub fn normal_upper_quantile(p: f64) -> f64 {
    let (mut lo, mut hi) = (0.0f64, 40.0f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if 0.5 * libm::erfc(mid * std::f64::consts::FRAC_1_SQRT_2) > p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// R = E_min / E_max over the m blocks (irradiance E_i = S_i / A_i, standard error σ_i from the
/// block's 95 % half-width over 1.96: its replicates' spread, each block being one of the map's
/// groups, else its per-ray spread), with a 95 % interval for the true ratio ρ = μ_min / μ_max of
/// the blocks' true irradiances μ_i.
///
/// R leans low: the least and greatest blocks are picked from the same noisy rays, so noise
/// pushes the least down and the greatest up (on a uniform face of 81 blocks known to ±1 % each,
/// R ≈ 1 − 5 σ/μ, while ρ = 1). A symmetric interval about R by the delta method misses ρ most
/// of the time there. The interval here is built instead from one-sided bounds of the blocks,
/// E_i ± z σ_i, and holds at 95 % whatever the ties (each block's E_i taken as normal, as every
/// interval of the report does):
/// - Low end, min_i(E_i − z₁σ_i) / max_i(E_i + z₁σ_i). Let j be the block truly least and k the
///   one truly greatest (fixed by the scenario, not chosen from the rays). When E_j − z₁σ_j ≤ μ_j
///   and E_k + z₁σ_k ≥ μ_k, the numerator is at most μ_min and the denominator at least μ_max,
///   so the end is at most ρ. Two one-sided statements, each allowed 1.25 % (Bonferroni's
///   inequality, P(A ∪ B) ≤ P(A) + P(B); from memory, any probability text): z₁ = Q⁻¹(0.0125)
///   = 2.24, whatever m.
/// - High end, min_i(E_i + z₂σ_i) / max_i(E_i − z₂σ_i), at most 1 (1 when the denominator is not
///   above 0). It is at least ρ when every block's upper bound is above its μ_i and every lower
///   bound below: 2m one-sided statements, each allowed 2.5 %/(2m) (Bonferroni):
///   z₂ = Q⁻¹(0.0125/m), 3.6 for 81 blocks.
///
/// Together the two ends miss ρ at most 2.5 % + 2.5 % of the time. The price is width: the high
/// end is wider than a delta-method interval by about z₂/1.96, and the interval is conservative
/// (tests/detector_uniformity.rs measures its coverage over 200 seeds against closed forms).
fn min_over_max(blocks: &[&Block]) -> Bounded {
    let e = |b: &Block| b.share.mean / b.area_mm2;
    // A block's standard error of irradiance (its share's 95 % half-width over 1.96; counted
    // blocks always have one).
    let sigma = |b: &Block| b.share.half_width95().unwrap_or(f64::INFINITY) / 1.96 / b.area_mm2;
    let m = blocks.len() as f64;
    let z1 = normal_upper_quantile(0.0125);
    let z2 = normal_upper_quantile(0.0125 / m);
    // The blocks' irradiances moved by z standard errors (z = 0: as estimated).
    let moved = |z: f64| {
        blocks
            .iter()
            .map(move |b| if z == 0.0 { e(b) } else { e(b) + z * sigma(b) })
    };
    let least = |z: f64| moved(z).fold(f64::INFINITY, f64::min);
    let greatest = |z: f64| moved(z).fold(f64::NEG_INFINITY, f64::max);
    let value = least(0.0) / greatest(0.0);
    let low95 = (least(-z1) / greatest(z1)).clamp(0.0, value);
    let high_down = greatest(-z2);
    let high95 = if high_down > 0.0 {
        (least(z2) / high_down).clamp(value, 1.0)
    } else {
        1.0
    };
    Bounded {
        value,
        low95,
        high95,
    }
}

/// CV² = σ²/Ē² with σ² = s² − v̄ ([`Uniformity::coefficient_of_variation`]); its gradient
/// ∂CV²/∂S_i = (2 (E_i − Ē)/((m − 1) Ē²) − 2 σ²/(m Ē³)) / A_i, the noise term v̄ held fixed
/// (its own spread is of higher order in 1/n).
fn coefficient_of_variation(h: &Hist, rays: u64, blocks: &[&Block]) -> Bounded {
    let m = blocks.len() as f64;
    let e: Vec<f64> = blocks.iter().map(|b| b.share.mean / b.area_mm2).collect();
    let mean = e.iter().sum::<f64>() / m;
    let s2 = e.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (m - 1.0);
    let noise = blocks
        .iter()
        .map(|b| b.share.variance_of_mean().unwrap_or(0.0) / (b.area_mm2 * b.area_mm2))
        .sum::<f64>()
        / m;
    let sigma2 = s2 - noise;
    let cv2 = sigma2 / (mean * mean);
    let gradient: Vec<(usize, f64)> = blocks
        .iter()
        .zip(&e)
        .flat_map(|(b, &ei)| {
            let g = (2.0 * (ei - mean) / ((m - 1.0) * mean * mean)
                - 2.0 * sigma2 / (m * mean * mean * mean))
                / b.area_mm2;
            over_cells(b, g)
        })
        .collect();
    let half = 1.96 * delta_variance(h, rays, &gradient).sqrt();
    let root = |x: f64| x.max(0.0).sqrt();
    Bounded {
        value: root(cv2),
        low95: root(cv2 - half),
        high95: root(cv2 + half),
    }
}

/// A point of the intensity curve as a linear function of the angle histogram's bins: its angle
/// (degrees), its value (share per sr) and its gradient over the bins.
struct Point {
    angle_deg: f64,
    value: f64,
    gradient: Vec<(usize, f64)>,
}

/// Solid angle of the ring between polar angles `from_deg` and `to_deg` about the axis, sr:
/// Ω = 2π (cos from − cos to) (from memory, any radiometry text).
fn ring_sr(from_deg: f64, to_deg: f64) -> f64 {
    std::f64::consts::TAU * (libm::cos(from_deg.to_radians()) - libm::cos(to_deg.to_radians()))
}

/// The window whose intensity is the maximum of the half-intensity angle: the on-axis cone,
/// unless the peak window (a ring) is brighter than it by more than the sum of their 95 %
/// half-widths (a beam brightest off its axis). The brightest of several windows of a flat top
/// leans high on noise (by ~1.5 % at 10⁵ rays for a Lambertian exit, which moved the angle
/// down by ~1.5°); the cone does not.
pub fn half_intensity_reference<'a>(
    on_axis: &'a IntensityWindow,
    peak: &'a IntensityWindow,
) -> &'a IntensityWindow {
    if peak.share_per_sr - on_axis.share_per_sr > peak.ci95_per_sr + on_axis.ci95_per_sr {
        peak
    } else {
        on_axis
    }
}

/// The half-intensity full angle ([`ExitFigures::half_intensity_full_angle_deg`]) from the
/// angle histogram `h` (1° rings from the axis) over `rays` rays and the window `peak` whose
/// intensity is the maximum ([`half_intensity_reference`]).
pub fn half_intensity_full_angle(h: &Hist, rays: u64, peak: &IntensityWindow) -> Option<Value> {
    let bins = h.sum.len();
    let n = rays as f64;
    if rays == 0 || peak.share_per_sr <= 0.0 {
        return None;
    }
    let (from, to) = (peak.from_deg as usize, (peak.to_deg as usize).min(bins));
    let peak_gradient: Vec<(usize, f64)> =
        (from..to).map(|k| (k, 1.0 / peak.solid_angle_sr)).collect();
    let peak_point = Point {
        angle_deg: peak.centre_deg(),
        value: peak.share_per_sr,
        gradient: peak_gradient.clone(),
    };
    // Ring i smoothed over rings i − 1 … i + 1 (those that exist): the mean of their
    // intensities, each its share over its solid angle.
    let ring = |i: usize| {
        let (lo, hi) = (i.saturating_sub(1), (i + 1).min(bins - 1));
        let weight = 1.0 / (hi - lo + 1) as f64;
        let gradient: Vec<(usize, f64)> = (lo..=hi)
            .map(|k| (k, weight / ring_sr(k as f64, (k + 1) as f64)))
            .collect();
        let value = gradient.iter().map(|&(k, g)| g * h.sum[k] / n).sum();
        Point {
            angle_deg: i as f64 + 0.5,
            value,
            gradient,
        }
    };
    let half = 0.5 * peak.share_per_sr;
    let mut before = peak_point;
    for i in to..bins {
        let p = ring(i);
        if p.value < half {
            // θ = θa + (θb − θa)(Ja − H)/(Ja − Jb), H = P/2; its gradient over Ja, Jb and P.
            let (a, b) = (&before, &p);
            let span = b.angle_deg - a.angle_deg;
            let drop = a.value - b.value;
            let theta = a.angle_deg + span * (a.value - half) / drop;
            let d_a = span * (half - b.value) / (drop * drop);
            let d_b = span * (a.value - half) / (drop * drop);
            let d_h = -span / drop;
            let gradient: Vec<(usize, f64)> = a
                .gradient
                .iter()
                .map(|&(k, g)| (k, 2.0 * d_a * g))
                .chain(b.gradient.iter().map(|&(k, g)| (k, 2.0 * d_b * g)))
                .chain(peak_gradient.iter().map(|&(k, g)| (k, 2.0 * d_h * 0.5 * g)))
                .collect();
            return Some(Value {
                value: 2.0 * theta,
                ci95: 1.96 * delta_variance(h, rays, &gradient).sqrt(),
            });
        }
        before = p;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_are_whole_cells_symmetric_about_the_axis() {
        let e = block_edges(41, 9);
        assert_eq!(e, vec![0, 5, 9, 14, 18, 23, 27, 32, 36, 41]);
        let sizes: Vec<usize> = e.windows(2).map(|w| w[1] - w[0]).collect();
        let mut reversed = sizes.clone();
        reversed.reverse();
        assert_eq!(sizes, reversed);
    }
}
