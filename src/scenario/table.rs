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

/// An intensity table read from pasted text ([`read_pasted_table`]): its points, ready for
/// `Pattern::Table`, and what was done to the text on the way, for people.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PastedTable {
    /// `[angle_deg, relative_intensity]`, angles ascending from 0.
    pub points: Vec<[f64; 2]>,
    /// The first row was a header (words, not numbers) and was left out.
    pub header_skipped: bool,
    /// The table ran from −90° to 90°: its two halves were averaged at each angle off the axis
    /// (the pattern is taken as the same all round the axis).
    pub halves_averaged: bool,
}

/// Read a table pasted from a data sheet or a spreadsheet: one row per line, two columns,
/// angle (degrees off the axis) and relative intensity, separated by tabs, semicolons, commas
/// or spaces. A row with a tab or a semicolon may write decimals with a comma (`0,5`), as
/// spreadsheets in many languages copy them. A first row of words is a header and is left out.
/// Angles from −90° to 90° (a pattern measured across the axis) are folded onto 0–90°: the
/// two halves are each interpolated linearly at every angle either gives and averaged — the
/// tracer takes the pattern as the same all round the axis; a half that stops short counts
/// only where it has values. On failure, a sentence naming the row and what it needs.
pub fn read_pasted_table(text: &str) -> Result<PastedTable, String> {
    let lines: Vec<&str> = text
        .lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .collect();
    let mut rows: Vec<[f64; 2]> = Vec::with_capacity(lines.len());
    let mut header_skipped = false;
    for (i, line) in lines.iter().enumerate() {
        match row_numbers(line) {
            Some(row) => rows.push(row),
            None if i == 0 && line.chars().any(char::is_alphabetic) => header_skipped = true,
            None => {
                let shown: String = line.chars().take(40).collect();
                return Err(format!(
                    "Row {} of the table must be two numbers “angle, relative intensity”, got “{shown}”",
                    i + 1
                ));
            }
        }
    }
    if rows.len() < 2 {
        return Err("The table needs at least two rows “angle, relative intensity”".to_string());
    }
    if let Some((k, r)) = rows
        .iter()
        .enumerate()
        .find(|(_, r)| !(-90.0..=90.0).contains(&r[0]))
    {
        return Err(format!(
            "Row {} of the table: the angle must be from −90° to 90°, got {}°",
            k + 1 + usize::from(header_skipped),
            crate::error::show(r[0])
        ));
    }
    let halves_averaged = rows.iter().any(|r| r[0] < 0.0);
    let points = if halves_averaged {
        fold_halves(&rows)
    } else {
        let mut points = rows;
        points.sort_by(|a, b| a[0].total_cmp(&b[0]));
        points
    };
    Ok(PastedTable {
        points,
        header_skipped,
        halves_averaged,
    })
}

/// The two numbers of a row, or `None`.
fn row_numbers(line: &str) -> Option<[f64; 2]> {
    let decimal_comma = line.contains('\t') || line.contains(';');
    let cells: Vec<String> = line
        .split(|c: char| c == '\t' || c == ';' || c.is_whitespace() || (c == ',' && !decimal_comma))
        .filter(|c| !c.is_empty())
        .map(|c| {
            let c = c.trim_end_matches('°').replace('−', "-");
            if decimal_comma {
                c.replace(',', ".")
            } else {
                c
            }
        })
        .collect();
    match cells.as_slice() {
        [a, b] => {
            let (a, b) = (a.parse::<f64>().ok()?, b.parse::<f64>().ok()?);
            (a.is_finite() && b.is_finite()).then_some([a, b])
        }
        _ => None,
    }
}

/// A table across the axis folded onto 0–90°: every angle either half gives, each half
/// interpolated there where it reaches, the values averaged.
fn fold_halves(rows: &[[f64; 2]]) -> Vec<[f64; 2]> {
    let half = |keep: fn(f64) -> bool| -> Vec<[f64; 2]> {
        let mut h: Vec<[f64; 2]> = rows
            .iter()
            .filter(|r| keep(r[0]))
            .map(|r| [r[0].abs(), r[1]])
            .collect();
        h.sort_by(|a, b| a[0].total_cmp(&b[0]));
        h.dedup_by(|a, b| a[0] == b[0]);
        h
    };
    let plus = half(|a| a >= 0.0);
    let minus = half(|a| a <= 0.0);
    let at = |h: &[[f64; 2]], x: f64| -> Option<f64> {
        let (first, last) = (h.first()?, h.last()?);
        if x < first[0] || x > last[0] {
            return None;
        }
        let i = h.partition_point(|p| p[0] < x);
        if h[i][0] == x {
            return Some(h[i][1]);
        }
        let (a, b) = (h[i - 1], h[i]);
        Some(a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0]))
    };
    let mut angles: Vec<f64> = plus.iter().chain(&minus).map(|p| p[0]).collect();
    angles.sort_by(f64::total_cmp);
    angles.dedup();
    angles
        .into_iter()
        .filter_map(|x| match (at(&plus, x), at(&minus, x)) {
            (Some(a), Some(b)) => Some([x, 0.5 * (a + b)]),
            (Some(v), None) | (None, Some(v)) => Some([x, v]),
            (None, None) => None,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_pasted_table_with_a_header_and_semicolons_reads() {
        let t = read_pasted_table("Angle (°);Relative intensity\n0;1,0\n30;0,8\n60;0,3\n90;0\n")
            .unwrap();
        assert!(t.header_skipped && !t.halves_averaged);
        assert_eq!(
            t.points,
            [[0.0, 1.0], [30.0, 0.8], [60.0, 0.3], [90.0, 0.0]]
        );
        let t = read_pasted_table("0\t1\n45\t0.5\n").unwrap();
        assert_eq!(t.points, [[0.0, 1.0], [45.0, 0.5]]);
        let t = read_pasted_table("0, 1\n45, 0.5").unwrap();
        assert_eq!(t.points, [[0.0, 1.0], [45.0, 0.5]]);
    }

    #[test]
    fn a_table_across_the_axis_is_folded_by_averaging_its_halves() {
        // Lopsided on purpose: 0.9 at −30°, 0.7 at +30°; −60° is not measured, so the minus
        // half is interpolated there between −30° (0.9) and −90° (0): 0.45.
        let t = read_pasted_table("-90 0\n-30 0.9\n0 1\n30 0.7\n60 0.2\n90 0").unwrap();
        assert!(t.halves_averaged);
        assert_eq!(
            t.points,
            [
                [0.0, 1.0],
                [30.0, 0.5 * (0.9 + 0.7)],
                [60.0, 0.5 * (0.2 + 0.45)],
                [90.0, 0.0]
            ]
        );
    }

    #[test]
    fn a_bad_row_or_angle_is_named() {
        assert_eq!(
            read_pasted_table("0 1\n30 x\n").unwrap_err(),
            "Row 2 of the table must be two numbers “angle, relative intensity”, got “30 x”"
        );
        assert!(read_pasted_table("0 1\n120 0\n")
            .unwrap_err()
            .contains("from −90° to 90°, got 120°"));
        assert!(read_pasted_table("Angle Intensity\n0 1\n")
            .unwrap_err()
            .contains("at least two rows"));
    }
}
