//! Charts, generic over the plotters drawing backend: the page draws them on a canvas, the tests
//! draw them to SVG.

use plotters::coord::Shift;
use plotters::prelude::*;

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
pub fn draw_bend_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    design: &QuickDesign,
) -> Result<(), TirError> {
    let curve = bend_curve(design)?;
    let figures = design.figures()?;
    area.fill(&WHITE).map_err(draw_err)?;
    let curve_max = curve.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    let y_max = (curve_max.min(25.0).max(figures.bend_ratio) * 1.15).max(1.0);
    let ink = RGBColor(0x1f, 0x2a, 0x37);
    let curve_colour = RGBColor(0x00, 0x6d, 0x77);
    let bend_colour = RGBColor(0xb3, 0x41, 0x2a);
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(52)
        .build_cartesian_2d(0.0..90.0, 0.0..y_max)
        .map_err(draw_err)?;
    chart
        .configure_mesh()
        .x_desc("launch half-angle in front of the entry face (°)")
        .y_desc("leak-free inner radius / diameter")
        .axis_desc_style(("sans-serif", 14).into_font().color(&ink))
        .label_style(("sans-serif", 12).into_font().color(&ink))
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .draw()
        .map_err(draw_err)?;
    chart
        .draw_series(LineSeries::new(
            curve.iter().copied().filter(|p| p.1 <= y_max),
            curve_colour.stroke_width(3),
        ))
        .map_err(draw_err)?
        .label("leak-free R/d")
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], curve_colour.stroke_width(3))
        });
    chart
        .draw_series(LineSeries::new(
            [(0.0, figures.bend_ratio), (90.0, figures.bend_ratio)],
            bend_colour.stroke_width(2),
        ))
        .map_err(draw_err)?
        .label("your bend's R/d")
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], bend_colour.stroke_width(2))
        });
    if let Some(r) = figures.leak_free_ratio.filter(|r| *r <= y_max) {
        chart
            .draw_series(std::iter::once(Circle::new(
                (design.launch_half_angle_deg, r),
                6,
                curve_colour.filled(),
            )))
            .map_err(draw_err)?;
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(0xcc, 0xcc, 0xcc))
        .label_font(("sans-serif", 12).into_font().color(&ink))
        .draw()
        .map_err(draw_err)?;
    area.present().map_err(draw_err)?;
    Ok(())
}
