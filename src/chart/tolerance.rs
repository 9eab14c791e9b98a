//! A tolerance study's chart: on top the histogram of delivered (%) over the traced variants
//! with the nominal and the 5/50/95 % percentiles marked and labelled; below, the one-at-a-time
//! ranking as horizontal bars (effect per standard deviation, % points) with their 95 % intervals.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::{cartesian, clamp_scale, draw_axes, draw_err, ink_font, pixels};
use crate::error::TirError;
use crate::study::ToleranceReport;

/// Draw the tolerance chart of `report` on `area`. Nothing non-finite is drawn: an effect whose
/// interval is infinite (fewer than two rays) is drawn without its interval, a refused
/// one-at-a-time point is left out of the bars. `scale` as for [`super::draw_bend_chart`].
pub fn draw_tolerance_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &ToleranceReport,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    area.fill(&WHITE).map_err(draw_err)?;
    let Some(spread) = report
        .delivered
        .as_ref()
        .filter(|d| !d.histogram.counts.is_empty())
    else {
        let (w, h) = area.dim_in_pixel();
        area.draw(&Text::new(
            "no variant traced yet",
            (w as i32 / 2, h as i32 / 2),
            ink_font(px(14.0)).pos(Pos::new(HPos::Center, VPos::Center)),
        ))
        .map_err(draw_err)?;
        return area.present().map_err(draw_err);
    };
    let bars: Vec<(String, f64, f64)> = report
        .sensitivity
        .one_at_a_time
        .iter()
        .filter_map(|o| {
            let e = o.effect?;
            let ci = if e.ci95.is_finite() { e.ci95 } else { 0.0 };
            e.share
                .is_finite()
                .then(|| (o.field.clone(), 100.0 * e.share, 100.0 * ci))
        })
        .collect();
    let (w, h) = area.dim_in_pixel();
    let split = if bars.is_empty() { h } else { h * 11 / 20 };
    let (top, bottom) = area.split_vertically(split);
    let label_font = ink_font(px(12.0));
    let desc_font = ink_font(px(13.0));

    // Top: histogram of delivered (%), with the nominal and the percentiles.
    let edges: Vec<f64> = spread.histogram.edges.iter().map(|e| 100.0 * e).collect();
    let nominal = 100.0 * report.nominal.share;
    let marks = [
        ("5 %", 100.0 * spread.p05, RGBColor(0x6b, 0x72, 0x80)),
        ("median", 100.0 * spread.p50, RGBColor(0x28, 0x5f, 0x96)),
        ("95 %", 100.0 * spread.p95, RGBColor(0x6b, 0x72, 0x80)),
    ];
    let lo = edges.iter().copied().fold(nominal, f64::min);
    let hi = edges.iter().copied().fold(nominal, f64::max);
    let pad = ((hi - lo) * 0.08).max(0.05);
    let x_range = (lo - pad)..(hi + pad);
    let most = spread
        .histogram
        .counts
        .iter()
        .copied()
        .max()
        .unwrap_or(1)
        .max(1) as f64;
    let decimals = if hi - lo < 0.5 { 2 } else { 1 };
    {
        let mut chart = cartesian(&top, 10.0, scale, x_range.clone(), 0.0..most * 1.3)?;
        draw_axes(
            &mut chart,
            (
                "delivered over the variants (% of the emitted light)",
                "variants",
            ),
            desc_font.clone(),
            label_font.clone(),
            // Counts of variants are whole: a tick between two whole numbers gets no label (else
            // small counts read "0 0 1 1 2 2").
            (&|x| format!("{x:.decimals$}"), &|y| {
                if (y - y.round()).abs() < 1e-9 {
                    format!("{y:.0}")
                } else {
                    String::new()
                }
            }),
        )?;
        let fill = RGBColor(0xb8, 0xd4, 0xe8);
        // One equal-width bin when every variant delivered the same: a thin bar of its own.
        let bins: Vec<(f64, f64, u64)> = if edges.len() == 2 && edges[1] <= edges[0] {
            let w = (x_range.end - x_range.start) * 0.01;
            vec![(edges[0] - w, edges[0] + w, spread.histogram.counts[0])]
        } else {
            edges
                .windows(2)
                .zip(&spread.histogram.counts)
                .map(|(e, &c)| (e[0], e[1], c))
                .collect()
        };
        chart
            .draw_series(
                bins.iter()
                    .map(|&(a, b, c)| Rectangle::new([(a, 0.0), (b, c as f64)], fill.filled())),
            )
            .map_err(draw_err)?;
        chart
            .draw_series(bins.iter().map(|&(a, b, c)| {
                Rectangle::new(
                    [(a, 0.0), (b, c as f64)],
                    RGBColor(0x28, 0x5f, 0x96).stroke_width(1),
                )
            }))
            .map_err(draw_err)?;
        // Marks: the percentiles (thin), the nominal (thick, dark red), each labelled on top.
        let top_y = most * 1.3;
        let rows = [most * 1.22, most * 1.12, most * 1.22];
        for ((name, x, colour), y) in marks.iter().zip(rows) {
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(*x, 0.0), (*x, y * 0.97)],
                    colour.stroke_width(px(1.5)),
                )))
                .map_err(draw_err)?;
            chart
                .draw_series(std::iter::once(Text::new(
                    format!("{name} {x:.decimals$}"),
                    (*x, y),
                    label_font.clone().pos(Pos::new(HPos::Center, VPos::Bottom)),
                )))
                .map_err(draw_err)?;
        }
        let red = RGBColor(0xb3, 0x41, 0x2a);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(nominal, 0.0), (nominal, top_y * 0.8)],
                red.stroke_width(px(2.5)),
            )))
            .map_err(draw_err)?;
        chart
            .draw_series(std::iter::once(Text::new(
                format!("nominal {nominal:.decimals$}"),
                (nominal, top_y * 0.8),
                ink_font(px(12.0))
                    .color(&red)
                    .pos(Pos::new(HPos::Left, VPos::Bottom)),
            )))
            .map_err(draw_err)?;
    }
    if bars.is_empty() {
        return area.present().map_err(draw_err);
    }

    // Bottom: the one-at-a-time effects as horizontal bars, most influential on top.
    let reach = bars
        .iter()
        .map(|(_, e, c)| e.abs() + c)
        .fold(0.0, f64::max)
        .max(1e-3)
        * 1.15;
    let n = bars.len() as f64;
    let (left, right) = bottom.split_horizontally((w as f64 * 0.30) as u32);
    {
        let mut chart = cartesian(&right, 10.0, scale, -reach..reach, 0.0..n)?;
        chart
            .configure_mesh()
            .x_desc("effect of one standard deviation on delivered (% points, ± 95 %)")
            .axis_desc_style(desc_font)
            .label_style(label_font.clone())
            .x_label_formatter(&|x| format!("{x:+.2}"))
            .y_labels(0)
            .disable_y_mesh()
            .light_line_style(RGBColor(0xee, 0xee, 0xee))
            .draw()
            .map_err(draw_err)?;
        let bar = RGBColor(0x28, 0x5f, 0x96);
        for (i, (_, e, c)) in bars.iter().enumerate() {
            let y = n - i as f64 - 0.5;
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(0.0, y - 0.3), (*e, y + 0.3)],
                    bar.mix(0.75).filled(),
                )))
                .map_err(draw_err)?;
            if *c > 0.0 {
                chart
                    .draw_series(std::iter::once(PathElement::new(
                        vec![(e - c, y), (e + c, y)],
                        INK_BAR.stroke_width(px(2.0)),
                    )))
                    .map_err(draw_err)?;
                for end in [e - c, e + c] {
                    chart
                        .draw_series(std::iter::once(PathElement::new(
                            vec![(end, y - 0.15), (end, y + 0.15)],
                            INK_BAR.stroke_width(px(2.0)),
                        )))
                        .map_err(draw_err)?;
                }
            }
        }
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(0.0, 0.0), (0.0, n)],
                INK_BAR.stroke_width(1),
            )))
            .map_err(draw_err)?;
        // The fields' names at the left of their bars (on the left area, same rows).
        let (_, lh) = left.dim_in_pixel();
        let plot_top = px(10.0) as f64;
        let plot_h = lh as f64 - plot_top - px(10.0) as f64 - px(40.0) as f64;
        for (i, (field, _, _)) in bars.iter().enumerate() {
            let y = plot_top + plot_h * (i as f64 + 0.5) / n;
            left.draw(&Text::new(
                super::field_axis_title(field),
                (left.dim_in_pixel().0 as i32 - px(4.0) as i32, y as i32),
                label_font.clone().pos(Pos::new(HPos::Right, VPos::Center)),
            ))
            .map_err(draw_err)?;
        }
    }
    area.present().map_err(draw_err)
}

/// Error bars' ink.
const INK_BAR: RGBColor = RGBColor(0x1f, 0x2a, 0x37);
