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

/// Control points of the maps' sequential palette, from no light (0, a warm near-white that
/// blends with the page) to the peak (1, a deep indigo), through pale green, teal and blue. Our
/// own ramp, chosen so that its CIE lightness L* falls steadily from about 98 to about 15: equal
/// steps of the value read as steps of darkness, and it stays ordered in grey scale (the tests
/// check that L* decreases along the whole ramp).
const PALETTE: [(f64, [u8; 3]); 6] = [
    (0.0, [250, 248, 240]),
    (0.15, [222, 235, 214]),
    (0.35, [150, 205, 190]),
    (0.55, [70, 160, 175]),
    (0.75, [40, 95, 150]),
    (1.0, [35, 30, 80]),
];

/// The palette colour of a value between 0 (no light) and 1 (the peak), linearly interpolated
/// between [`PALETTE`]'s control points in sRGB. Values outside 0…1 are clamped; NaN gives the
/// colour of 0.
pub fn sequential_colour(value: f64) -> RGBColor {
    let t = if value.is_nan() {
        0.0
    } else {
        value.clamp(0.0, 1.0)
    };
    let i = PALETTE
        .windows(2)
        .position(|w| t <= w[1].0)
        .unwrap_or(PALETTE.len() - 2);
    let ((t0, c0), (t1, c1)) = (PALETTE[i], PALETTE[i + 1]);
    let f = (t - t0) / (t1 - t0);
    let mix = |a: u8, b: u8| (a as f64 + f * (b as f64 - a as f64)).round() as u8;
    RGBColor(mix(c0[0], c1[0]), mix(c0[1], c1[1]), mix(c0[2], c1[2]))
}

/// A positive number with three significant figures, in plain notation when it is neither very
/// large nor very small.
fn sig3(x: f64) -> String {
    if !x.is_finite() {
        return "–".to_string();
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let digits = libm::floor(libm::log10(x.abs())) as i32;
    if !(-4..6).contains(&digits) {
        format!("{x:.2e}")
    } else {
        format!("{x:.*}", (2 - digits).max(0) as usize)
    }
}

/// Decimals for axis labels over a span of `span` (mm or degrees).
fn label_decimals(span: f64) -> usize {
    if span < 1.0 {
        2
    } else if span < 10.0 {
        1
    } else {
        0
    }
}

/// The drawing scale from a pixel ratio: values outside 0.5…4 are clamped, non-finite ones give 1.
fn clamp_scale(scale: f64) -> f64 {
    if scale.is_finite() {
        scale.clamp(0.5, 4.0)
    } else {
        1.0
    }
}

/// Colours and fonts shared by the report charts.
const INK: RGBColor = RGBColor(0x1f, 0x2a, 0x37);
const FRAME: RGBColor = RGBColor(0x99, 0x99, 0x99);

/// Write `message` in the middle of `area` (under a caption): for a chart with nothing to show.
fn draw_message<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    message: &str,
    scale: f64,
) -> Result<(), TirError> {
    let (w, h) = area.dim_in_pixel();
    let px = |x: f64| (x * scale).round() as u32;
    area.draw(&Text::new(
        message.to_string(),
        (w as i32 / 2, h as i32 / 2),
        ("sans-serif", px(14.0))
            .into_font()
            .color(&INK)
            .pos(Pos::new(HPos::Center, VPos::Center)),
    ))
    .map_err(draw_err)
}

/// Check that a report's exit-face map has its declared shape and a usable extent.
fn check_map(map: &crate::trace::ExitMap) -> Result<(), TirError> {
    let n = map.cells;
    let field = |f: &str, m: String| TirError::Field(crate::FieldError::new(f, m));
    if n == 0 || n > 10_000 {
        return Err(field(
            "report.exit_map.cells",
            format!("must be ≥ 1 and ≤ 10000, got {n}"),
        ));
    }
    if map.share_per_area.len() != n * n {
        return Err(field(
            "report.exit_map.share_per_area",
            format!(
                "must hold cells² = {} values, got {}",
                n * n,
                map.share_per_area.len()
            ),
        ));
    }
    for (f, v) in [
        ("report.exit_map.width_mm", map.width_mm),
        ("report.exit_map.height_mm", map.height_mm),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(field(f, format!("must be a size > 0 mm, got {v}")));
        }
    }
    Ok(())
}

/// Draw the exit-face irradiance map of a trace report: one coloured cell per map cell
/// (irradiance relative to the brightest cell, [`sequential_colour`]), mm axes at equal scale
/// across the face's width and height axes, a colour scale, and a caption giving the peak as a
/// share of the emitted power per mm². A map with no light gets a message instead.
///
/// `scale` multiplies fonts, line widths and margins (the device pixel ratio on the page);
/// values outside 0.5…4 are clamped. Errors: a map whose cell count and values disagree (a
/// malformed report), or a drawing backend failure.
pub fn draw_exit_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = |x: f64| (x * scale).round() as u32;
    let map = &report.exit_map;
    check_map(map)?;
    area.fill(&WHITE).map_err(draw_err)?;
    let peak = map
        .share_per_area
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .fold(0.0_f64, f64::max);
    let title_font = ("sans-serif", px(14.0)).into_font().color(&INK);
    if peak <= 0.0 {
        let body = area
            .titled("Exit-face irradiance", title_font)
            .map_err(draw_err)?;
        draw_message(
            &body,
            "No light reached the exit face: nothing to map.",
            scale,
        )?;
        return area.present().map_err(draw_err);
    }
    let caption = format!(
        "Exit-face irradiance (peak {} % of the emitted power per mm²)",
        sig3(100.0 * peak)
    );
    let body = area.titled(&caption, title_font).map_err(draw_err)?;
    let (map_area, bar_area) =
        body.split_horizontally(body.dim_in_pixel().0.saturating_sub(px(96.0)));
    let label_font = ("sans-serif", px(12.0)).into_font().color(&INK);

    // Equal mm per pixel across and down: widen the shorter range to the plotting area's shape.
    let (hw, hh) = (0.5 * map.width_mm, 0.5 * map.height_mm);
    let build = |x: f64, y: f64| {
        ChartBuilder::on(&map_area)
            .margin(px(8.0))
            .x_label_area_size(px(40.0))
            .y_label_area_size(px(52.0))
            .build_cartesian_2d(-x..x, -y..y)
            .map_err(draw_err)
    };
    let (pw, ph) = build(hw, hh)?.plotting_area().dim_in_pixel();
    let (pw, ph) = (pw.max(1) as f64, ph.max(1) as f64);
    let (x_half, y_half) = if hw / hh > pw / ph {
        (hw, hw * ph / pw)
    } else {
        (hh * pw / ph, hh)
    };
    let mut chart = build(x_half, y_half)?;
    let x_dec = label_decimals(2.0 * x_half);
    let y_dec = label_decimals(2.0 * y_half);
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc("along the width axis (mm)")
        .y_desc("along the height axis (mm)")
        .axis_desc_style(label_font.clone())
        .label_style(label_font.clone())
        .x_label_formatter(&|x| format!("{:.*}", x_dec, x + 0.0))
        .y_label_formatter(&|y| format!("{:.*}", y_dec, y + 0.0))
        .x_labels(7)
        .y_labels(7)
        .axis_style(FRAME)
        .draw()
        .map_err(draw_err)?;
    let n = map.cells;
    let (cw, ch) = (map.width_mm / n as f64, map.height_mm / n as f64);
    chart
        .draw_series((0..n * n).map(|k| {
            let (row, col) = (k / n, k % n);
            let v = map.share_per_area[k];
            let rel = if v.is_finite() { v / peak } else { 0.0 };
            let (x0, y0) = (-hw + col as f64 * cw, -hh + row as f64 * ch);
            Rectangle::new(
                [(x0, y0), (x0 + cw, y0 + ch)],
                sequential_colour(rel).filled(),
            )
        }))
        .map_err(draw_err)?;
    // The map's extent: the exit face's bounding box.
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(-hw, -hh), (hw, hh)],
            FRAME.stroke_width(px(1.0).max(1)),
        )))
        .map_err(draw_err)?;

    // The colour scale: relative irradiance 0…1.
    let mut bar = ChartBuilder::on(&bar_area)
        .margin_top(px(8.0))
        .margin_bottom(px(48.0))
        .margin_left(px(10.0))
        .margin_right(px(4.0))
        .set_label_area_size(LabelAreaPosition::Right, px(40.0))
        .build_cartesian_2d(0.0..1.0, 0.0..1.0)
        .map_err(draw_err)?;
    bar.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc("relative irradiance")
        .axis_desc_style(label_font.clone())
        .label_style(label_font)
        .y_label_formatter(&|y| format!("{y:.1}"))
        .y_labels(6)
        .axis_style(FRAME)
        .draw()
        .map_err(draw_err)?;
    let steps = 100;
    bar.draw_series((0..steps).map(|i| {
        let (y0, y1) = (i as f64 / steps as f64, (i + 1) as f64 / steps as f64);
        Rectangle::new(
            [(0.0, y0), (1.0, y1)],
            sequential_colour(0.5 * (y0 + y1)).filled(),
        )
    }))
    .map_err(draw_err)?;
    area.present().map_err(draw_err)
}

/// Draw the intensity beyond the exit face against the angle from the exit axis (degrees,
/// 1° rings) relative to the brightest ring, with its 95 % confidence band when the report
/// carries one per ring. With a source flux the caption gives the peak in absolute units. A
/// report with no delivered light gets a message instead.
///
/// `scale` as for [`draw_exit_map`]. Errors: angle and value lists of different lengths (a
/// malformed report), or a drawing backend failure.
pub fn draw_intensity<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = |x: f64| (x * scale).round() as u32;
    let it = &report.intensity;
    if it.angle_deg.len() != it.share_per_sr.len() {
        return Err(TirError::Field(crate::FieldError::new(
            "report.intensity.share_per_sr",
            format!(
                "must hold one value per angle ({}), got {}",
                it.angle_deg.len(),
                it.share_per_sr.len()
            ),
        )));
    }
    area.fill(&WHITE).map_err(draw_err)?;
    let title_font = ("sans-serif", px(14.0)).into_font().color(&INK);
    let points: Vec<(f64, f64, f64)> = it
        .angle_deg
        .iter()
        .zip(&it.share_per_sr)
        .enumerate()
        .filter(|(_, (a, v))| a.is_finite() && v.is_finite())
        .map(|(i, (&a, &v))| {
            let ci = it.ci95_per_sr.get(i).copied().filter(|c| c.is_finite());
            (a, v, ci.unwrap_or(f64::NAN))
        })
        .collect();
    let peak = points.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    if peak <= 0.0 {
        let body = area
            .titled("Intensity beyond the exit face", title_font)
            .map_err(draw_err)?;
        draw_message(
            &body,
            "No light left the exit face: no intensity to show.",
            scale,
        )?;
        return area.present().map_err(draw_err);
    }
    let band =
        it.ci95_per_sr.len() == it.share_per_sr.len() && points.iter().all(|p| p.2.is_finite());
    let caption = match &report.absolute {
        Some(a) => format!(
            "Intensity beyond the exit face, relative to its peak ({} {} at {:.1}°)",
            sig3(a.peak_intensity.value),
            a.intensity_unit,
            a.peak_angle_deg
        ),
        None => "Intensity beyond the exit face, relative to its peak".to_string(),
    };
    let body = area.titled(&caption, title_font).map_err(draw_err)?;
    let label_font = ("sans-serif", px(12.0)).into_font().color(&INK);
    let hi_max = if band {
        points
            .iter()
            .map(|p| (p.1 + p.2) / peak)
            .fold(1.0, f64::max)
    } else {
        1.0
    };
    let y_max = hi_max.clamp(1.05, 1.5);
    let x_max = libm::ceil(points.iter().map(|p| p.0).fold(90.0, f64::max));
    let mut chart = ChartBuilder::on(&body)
        .margin(px(10.0))
        .x_label_area_size(px(40.0))
        .y_label_area_size(px(52.0))
        .build_cartesian_2d(0.0..x_max, 0.0..y_max)
        .map_err(draw_err)?;
    chart
        .configure_mesh()
        .x_desc("angle from the exit axis (°)")
        .y_desc("relative intensity")
        .axis_desc_style(label_font.clone())
        .label_style(label_font.clone())
        .x_label_formatter(&|x| format!("{x:.0}"))
        .y_label_formatter(&|y| format!("{y:.1}"))
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .draw()
        .map_err(draw_err)?;
    let line_colour = RGBColor(0x28, 0x5f, 0x96);
    let band_colour = RGBColor(0xb8, 0xd4, 0xe8);
    if band {
        // The band as one polygon: upper edge out, lower edge back, clipped to the chart.
        let mut outline: Vec<(f64, f64)> = points
            .iter()
            .map(|p| (p.0, ((p.1 + p.2) / peak).min(y_max)))
            .collect();
        outline.extend(
            points
                .iter()
                .rev()
                .map(|p| (p.0, ((p.1 - p.2) / peak).max(0.0))),
        );
        chart
            .draw_series(std::iter::once(Polygon::new(outline, band_colour.filled())))
            .map_err(draw_err)?
            .label("95 % confidence band")
            .legend(move |(x, y)| {
                Rectangle::new([(x, y - 5), (x + 18, y + 5)], band_colour.filled())
            });
    }
    chart
        .draw_series(LineSeries::new(
            points.iter().map(|p| (p.0, p.1 / peak)),
            line_colour.stroke_width(px(2.0)),
        ))
        .map_err(draw_err)?
        .label("intensity (peak = 1)")
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], line_colour.stroke_width(2))
        });
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(0xcc, 0xcc, 0xcc))
        .label_font(label_font)
        .draw()
        .map_err(draw_err)?;
    area.present().map_err(draw_err)
}
