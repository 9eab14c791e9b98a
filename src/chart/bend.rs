//! The quick look's chart: the leak-free inner radius over diameter against the launch
//! half-angle, with the drawn bend and the design's launch marked.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::{
    cartesian, clamp_scale, draw_axes, draw_err, draw_legend, draw_line, ink_font, pixels,
};
use crate::error::TirError;
use crate::guide;
use crate::quick::QuickDesign;

/// The leak-free R_in/d versus launch half-angle (degrees, in the launch medium) for the design's
/// materials; angles where no leak-free radius exists are left out.
pub fn bend_curve(design: &QuickDesign) -> Result<Vec<(f64, f64)>, TirError> {
    let ix = design
        .check()
        .map_err(|mut v| TirError::Field(v.remove(0)))?;
    Ok((0..=180)
        .filter_map(|i| {
            let launch_deg = i as f64 * 0.5;
            let theta = guide::max_internal_angle_rad(
                ix.n_core,
                ix.n_out,
                ix.n_launch,
                launch_deg.to_radians(),
            );
            guide::leak_free_bend_ratio(ix.n_core, ix.n_out, theta).map(|r| (launch_deg, r))
        })
        .collect())
}

/// Draw the leak-free bend chart: the curve, the drawn bend's R_in/d as a level line and the
/// current launch half-angle as the design point.
///
/// `scale` multiplies fonts, line widths and margins (the device pixel ratio on the page, so the
/// chart stays sharp on dense screens); values outside 0.5…4 are clamped.
pub fn draw_bend_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    design: &QuickDesign,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    let curve = bend_curve(design)?;
    let figures = design.figures()?;
    area.fill(&WHITE).map_err(draw_err)?;
    let curve_max = curve.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    let y_max = (curve_max.min(25.0).max(figures.bend_ratio) * 1.15).max(1.0);
    let curve_colour = RGBColor(0x00, 0x6d, 0x77);
    let bend_colour = RGBColor(0xb3, 0x41, 0x2a);
    let mut chart = cartesian(area, 12.0, scale, 0.0..90.0, 0.0..y_max)?;
    draw_axes(
        &mut chart,
        (
            "launch half-angle in front of the entry face (°)",
            "leak-free inner radius / diameter",
        ),
        ink_font(px(14.0)),
        ink_font(px(12.0)),
        (&|x| format!("{x:.0}"), &|y| {
            if y_max > 8.0 {
                format!("{y:.0}")
            } else {
                format!("{y:.1}")
            }
        }),
    )?;
    draw_line(
        &mut chart,
        curve.iter().copied().filter(|p| p.1 <= y_max),
        curve_colour,
        3,
        scale,
        "leak-free R/d",
    )?;
    draw_line(
        &mut chart,
        [(0.0, figures.bend_ratio), (90.0, figures.bend_ratio)],
        bend_colour,
        2,
        scale,
        "your bend's R/d",
    )?;
    match figures.leak_free_ratio {
        Some(r) if r <= y_max => {
            chart
                .draw_series(std::iter::once(Circle::new(
                    (design.launch_half_angle_deg, r),
                    px(6.0),
                    curve_colour.filled(),
                )))
                .map_err(draw_err)?;
        }
        _ => {
            // Off the chart or no leak-free radius at all: mark the launch angle at the top.
            let note = if figures.leak_free_ratio.is_none() {
                "your launch: no leak-free radius"
            } else {
                "your launch: off the chart"
            };
            let x = design.launch_half_angle_deg;
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(x, 0.0), (x, y_max)],
                    curve_colour.stroke_width(px(2.0)),
                )))
                .map_err(draw_err)?;
            let anchor_x = if x > 45.0 { x - 1.0 } else { x + 1.0 };
            let pos = if x > 45.0 {
                Pos::new(HPos::Right, VPos::Top)
            } else {
                Pos::new(HPos::Left, VPos::Top)
            };
            chart
                .draw_series(std::iter::once(Text::new(
                    note,
                    (anchor_x, y_max * 0.97),
                    ink_font(px(12.0)).pos(pos),
                )))
                .map_err(draw_err)?;
        }
    }
    draw_legend(
        &mut chart,
        SeriesLabelPosition::LowerRight,
        ink_font(px(12.0)),
    )?;
    area.present().map_err(draw_err)?;
    Ok(())
}
