//! Charts, generic over the plotters drawing backend: the page draws them on a canvas, the tests
//! draw them to SVG.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

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

fn draw_err<E: std::fmt::Debug>(e: E) -> TirError {
    TirError::Draw(format!("{e:?}"))
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
    let scale = if scale.is_finite() {
        scale.clamp(0.5, 4.0)
    } else {
        1.0
    };
    let px = |x: f64| (x * scale).round() as u32;
    let curve = bend_curve(design)?;
    let figures = design.figures()?;
    area.fill(&WHITE).map_err(draw_err)?;
    let curve_max = curve.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    let y_max = (curve_max.min(25.0).max(figures.bend_ratio) * 1.15).max(1.0);
    let ink = RGBColor(0x1f, 0x2a, 0x37);
    let curve_colour = RGBColor(0x00, 0x6d, 0x77);
    let bend_colour = RGBColor(0xb3, 0x41, 0x2a);
    let mut chart = ChartBuilder::on(area)
        .margin(px(12.0))
        .x_label_area_size(px(40.0))
        .y_label_area_size(px(52.0))
        .build_cartesian_2d(0.0..90.0, 0.0..y_max)
        .map_err(draw_err)?;
    chart
        .configure_mesh()
        .x_desc("launch half-angle in front of the entry face (°)")
        .y_desc("leak-free inner radius / diameter")
        .axis_desc_style(("sans-serif", px(14.0)).into_font().color(&ink))
        .label_style(("sans-serif", px(12.0)).into_font().color(&ink))
        .x_label_formatter(&|x| format!("{x:.0}"))
        .y_label_formatter(&|y| {
            if y_max > 8.0 {
                format!("{y:.0}")
            } else {
                format!("{y:.1}")
            }
        })
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .draw()
        .map_err(draw_err)?;
    chart
        .draw_series(LineSeries::new(
            curve.iter().copied().filter(|p| p.1 <= y_max),
            curve_colour.stroke_width(px(3.0)),
        ))
        .map_err(draw_err)?
        .label("leak-free R/d")
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], curve_colour.stroke_width(3))
        });
    chart
        .draw_series(LineSeries::new(
            [(0.0, figures.bend_ratio), (90.0, figures.bend_ratio)],
            bend_colour.stroke_width(px(2.0)),
        ))
        .map_err(draw_err)?
        .label("your bend's R/d")
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], bend_colour.stroke_width(2))
        });
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
                    ("sans-serif", px(12.0)).into_font().color(&ink).pos(pos),
                )))
                .map_err(draw_err)?;
        }
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::LowerRight)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(0xcc, 0xcc, 0xcc))
        .label_font(("sans-serif", px(12.0)).into_font().color(&ink))
        .draw()
        .map_err(draw_err)?;
    area.present().map_err(draw_err)?;
    Ok(())
}
