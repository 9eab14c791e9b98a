//! An LED's intensity table (`Pattern::Table`): relative intensity against angle from the axis,
//! linearly interpolated, and its cumulative power on the grid the source sampler integrates it
//! on. The validation (does the table hold power at all?) and the sampler (inverting the
//! cumulative) both read the table through these functions, so they agree to the last step.

use std::f64::consts::FRAC_PI_2;

/// Steps of the integration grid over 0–90° (about 0.044° each).
pub const TABLE_STEPS: usize = 2048;

/// Relative intensity of a table at angle θ (degrees), linear between points, 0 beyond the last.
pub fn table_intensity(points: &[[f64; 2]], angle_deg: f64) -> f64 {
    let i = points.partition_point(|p| p[0] <= angle_deg);
    if i == 0 {
        return points[0][1];
    }
    if i >= points.len() {
        let last = points[points.len() - 1];
        return if angle_deg <= last[0] { last[1] } else { 0.0 };
    }
    let (a, b) = (points[i - 1], points[i]);
    a[1] + (b[1] - a[1]) * (angle_deg - a[0]) / (b[0] - a[0])
}

/// Cumulative power of a table pattern on the sampling grid: ∫ I(θ) sin θ dθ by the midpoint
/// rule over [`TABLE_STEPS`] steps from 0 to 90°; the last entry is the total.
pub fn table_cdf(points: &[[f64; 2]]) -> Vec<f64> {
    let step_rad = FRAC_PI_2 / TABLE_STEPS as f64;
    let mut cdf = Vec::with_capacity(TABLE_STEPS + 1);
    let mut acc = 0.0;
    cdf.push(0.0);
    for k in 0..TABLE_STEPS {
        let theta = (k as f64 + 0.5) * step_rad;
        acc += table_intensity(points, theta.to_degrees()) * libm::sin(theta) * step_rad;
        cdf.push(acc);
    }
    cdf
}

/// Whether a table pattern holds any power at the sampling resolution (90°/2048 ≈ 0.044°).
pub fn table_has_power(points: &[[f64; 2]]) -> bool {
    table_cdf(points).last().is_some_and(|&p| p > 0.0)
}
