//! A trace report's charts: the exit-face irradiance map (with its sequential palette) and the
//! intensity beyond the exit face against the angle from its axis.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::{
    cartesian, clamp_scale, draw_axes, draw_err, draw_legend, draw_line, ink_font, pixels,
    tick_decimals, tick_text,
};
use crate::error::TirError;
use crate::units::LengthUnit;

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
/// between `PALETTE`'s control points in sRGB. Values outside 0…1 are clamped; NaN gives the
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
pub(super) fn sig3(x: f64) -> String {
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

/// Decimals for axis labels over a span of `span` (in the unit shown, or degrees), at least.
fn label_decimals(span: f64) -> usize {
    if span < 1.0 {
        2
    } else if span < 10.0 {
        1
    } else {
        0
    }
}

/// The frame drawn round the exit map and the colour scale.
pub(super) const FRAME: RGBColor = RGBColor(0x99, 0x99, 0x99);

/// Write `message` in the middle of `area` (under a caption): for a chart with nothing to show.
fn draw_message<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    message: &str,
    scale: f64,
) -> Result<(), TirError> {
    let (w, h) = area.dim_in_pixel();
    let px = pixels(scale);
    area.draw(&Text::new(
        message.to_string(),
        (w as i32 / 2, h as i32 / 2),
        ink_font(px(14.0)).pos(Pos::new(HPos::Center, VPos::Center)),
    ))
    .map_err(draw_err)
}

/// A report chart with nothing to show: `title` on top of the (already filled) `area`,
/// `message` in the middle, and the drawing presented.
pub(super) fn draw_nothing_to_show<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    title: &str,
    message: &str,
    scale: f64,
) -> Result<(), TirError> {
    let body = area
        .titled(title, ink_font(pixels(scale)(14.0)))
        .map_err(draw_err)?;
    draw_message(&body, message, scale)?;
    area.present().map_err(draw_err)
}

/// Check that a report's map (at `path`, e.g. `report.exit_map`) has its declared shape and a
/// usable extent.
fn check_map(map: &crate::trace::ExitMap, path: &str) -> Result<(), TirError> {
    let n = map.cells;
    let field =
        |f: &str, m: String| TirError::Field(crate::FieldError::new(format!("{path}.{f}"), m));
    if n == 0 || n > 10_000 {
        return Err(field("cells", format!("must be ≥ 1 and ≤ 10000, got {n}")));
    }
    if map.share_per_area.len() != n * n {
        return Err(field(
            "share_per_area",
            format!(
                "must hold cells² = {} values, got {}",
                n * n,
                map.share_per_area.len()
            ),
        ));
    }
    for (f, v) in [("width_mm", map.width_mm), ("height_mm", map.height_mm)] {
        if !(v.is_finite() && v > 0.0) {
            return Err(field(f, format!("must be a size > 0 mm, got {v}")));
        }
    }
    Ok(())
}

/// The percentile of the cells' irradiance that tops the exit map's colour scale.
pub const MAP_SCALE_PERCENTILE: f64 = 99.0;

/// The largest 95 % half-width, as a fraction of a cell's value, of a cell that may set the exit
/// map's colour scale: ±50 % means about 16 rays or more in the cell (1.96/√16 ≈ 0.49 for rays
/// of equal weight).
pub const MAP_SCALE_CELL_CI: f64 = 0.5;

/// Where the exit map's colour scale tops out ([`map_scale_top`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MapScale {
    /// Share of the emitted power per mm² drawn in the top colour (relative irradiance 1); cells
    /// above it are drawn in the top colour too.
    pub top_per_mm2: f64,
    /// Whether the top comes from the cells known to ±[`MAP_SCALE_CELL_CI`] (else, when no cell
    /// is, from every lit cell).
    pub from_steady_cells: bool,
    /// Cells brighter than the top.
    pub cells_above: usize,
}

/// The exit map's colour scale, chosen so that no single noisy cell sets it: the
/// [`MAP_SCALE_PERCENTILE`]th percentile (nearest rank) of the share per mm² of the cells whose
/// 95 % half-width is at most [`MAP_SCALE_CELL_CI`] of their value; of every lit cell when no
/// cell is known that well (too few rays). `None` when no cell holds light. Cells without a
/// finite value count as dark.
pub fn map_scale_top(map: &crate::trace::ExitMap) -> Option<MapScale> {
    let (top_per_mm2, from_steady_cells, cells_above) =
        steady_scale_top(&map.share_per_area, &map.share, &map.ci95)?;
    Some(MapScale {
        top_per_mm2,
        from_steady_cells,
        cells_above,
    })
}

/// The rule of [`map_scale_top`] over any map's cells: each cell's `value` (what is coloured),
/// `share` and `ci95` (its share and that share's 95 % half-width). Returns the top, whether it
/// comes from the steady cells, and how many cells are brighter; `None` when no cell holds light.
pub(super) fn steady_scale_top(
    values: &[f64],
    share: &[f64],
    ci95: &[f64],
) -> Option<(f64, bool, usize)> {
    let value = |k: usize| {
        let v = values[k];
        if v.is_finite() {
            v
        } else {
            0.0
        }
    };
    let lit: Vec<usize> = (0..values.len()).filter(|&k| value(k) > 0.0).collect();
    let steady: Vec<f64> = lit
        .iter()
        .filter(|&&k| {
            let share = share.get(k).copied().unwrap_or(f64::NAN);
            let ci = ci95.get(k).copied().unwrap_or(f64::NAN);
            ci.is_finite() && ci <= MAP_SCALE_CELL_CI * share
        })
        .map(|&k| value(k))
        .collect();
    let from_steady_cells = !steady.is_empty();
    let mut values = if from_steady_cells {
        steady
    } else {
        lit.iter().map(|&k| value(k)).collect()
    };
    if values.is_empty() {
        return None;
    }
    values.sort_by(f64::total_cmp);
    // Nearest rank: the smallest value with at least p % of the values at or below it.
    let rank = libm::ceil(MAP_SCALE_PERCENTILE / 100.0 * values.len() as f64) as usize;
    let top = values[rank.clamp(1, values.len()) - 1];
    let cells_above = lit.iter().filter(|&&k| value(k) > top).count();
    Some((top, from_steady_cells, cells_above))
}

/// The rule of a map's colour scale ([`map_scale_top`]), as written under the map.
pub(super) fn map_scale_rule(from_steady_cells: bool) -> String {
    let cells = if from_steady_cells {
        format!(
            "the cells known to ±{:.0} % (95 %)",
            100.0 * MAP_SCALE_CELL_CI
        )
    } else {
        "all lit cells (too few rays for any cell to be known to ±50 %)".to_string()
    };
    format!(
        "Colour scale: 1 is the {:.0}th percentile of {cells}; brighter cells are drawn as 1.",
        MAP_SCALE_PERCENTILE
    )
}

/// Draw the exit-face irradiance map of a trace report: one coloured cell per map cell
/// (irradiance relative to the top of the colour scale, [`sequential_colour`]), axes in `unit`
/// (mm or inches) at equal scale across the face's width and height axes, a colour scale, a
/// caption giving the scale's top as a share of the emitted power per mm² (per in² in inches:
/// × 645.16), and under the map the rule that sets that top ([`map_scale_top`]: a high
/// percentile of the steady cells, never one noisy cell). A map with no light gets a message
/// instead.
///
/// `scale` multiplies fonts, line widths and margins (the device pixel ratio on the page);
/// values outside 0.5…4 are clamped. Errors: a map whose cell count and values disagree (a
/// malformed report), or a drawing backend failure.
pub fn draw_exit_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    let words = MapWords {
        path: "report.exit_map",
        title: "Exit-face irradiance",
        nothing: "No light reached the exit face: nothing to map.",
    };
    draw_irradiance_map(area, &report.exit_map, &words, scale, unit)
}

/// Draw the irradiance map of the receiver (the detector) of a trace report, as
/// [`draw_exit_map`] draws the exit face's, over the detector's bounding box. A report without
/// a detector, or with no light on it, gets a message instead.
pub fn draw_receiver_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    let title = "Detector irradiance";
    let Some(map) = &report.receiver_map else {
        area.fill(&WHITE).map_err(draw_err)?;
        return draw_nothing_to_show(
            area,
            title,
            "The design has no detector.",
            clamp_scale(scale),
        );
    };
    let words = MapWords {
        path: "report.receiver_map",
        title,
        nothing: "No light reached the detector: nothing to map.",
    };
    draw_irradiance_map(area, map, &words, scale, unit)
}

/// The words of an irradiance map: where it sits in the report (for errors), its title, and the
/// message when it holds no light.
struct MapWords {
    path: &'static str,
    title: &'static str,
    nothing: &'static str,
}

/// An irradiance map ([`draw_exit_map`]).
fn draw_irradiance_map<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    map: &crate::trace::ExitMap,
    words: &MapWords,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    check_map(map, words.path)?;
    area.fill(&WHITE).map_err(draw_err)?;
    let Some(colour_scale) = map_scale_top(map) else {
        return draw_nothing_to_show(area, words.title, words.nothing, scale);
    };
    let peak = colour_scale.top_per_mm2;
    let caption = format!(
        "{} (1 = {} % of the emitted power per {})",
        words.title,
        sig3(100.0 * unit.per_area_from_per_mm2(peak)),
        unit.area_name()
    );
    let (area_h, foot_h) = (area.dim_in_pixel().1, px(22.0));
    let (chart_area, foot) = area.split_vertically(area_h.saturating_sub(foot_h));
    foot.draw(&Text::new(
        map_scale_rule(colour_scale.from_steady_cells),
        (px(8.0) as i32, foot_h as i32 / 2),
        ink_font(px(12.0)).pos(Pos::new(HPos::Left, VPos::Center)),
    ))
    .map_err(draw_err)?;
    let area = &chart_area;
    let body = area
        .titled(&caption, ink_font(px(14.0)))
        .map_err(draw_err)?;
    let (map_area, bar_area) =
        body.split_horizontally(body.dim_in_pixel().0.saturating_sub(px(96.0)));
    let label_font = ink_font(px(12.0));

    // Equal lengths per pixel across and down: widen the shorter range to the plotting area's
    // shape. The chart's coordinates are in the unit shown, so its ticks fall on round values of
    // that unit.
    let (hw, hh) = (
        0.5 * unit.from_mm(map.width_mm),
        0.5 * unit.from_mm(map.height_mm),
    );
    let build = |x: f64, y: f64| cartesian(&map_area, 8.0, scale, -x..x, -y..y);
    let (pw, ph) = build(hw, hh)?.plotting_area().dim_in_pixel();
    let (pw, ph) = (pw.max(1) as f64, ph.max(1) as f64);
    let (x_half, y_half) = if hw / hh > pw / ph {
        (hw, hw * ph / pw)
    } else {
        (hh * pw / ph, hh)
    };
    let mut chart = build(x_half, y_half)?;
    const LABELS: usize = 7;
    let x_dec = tick_decimals(-x_half..x_half, LABELS, label_decimals(2.0 * x_half));
    let y_dec = tick_decimals(-y_half..y_half, LABELS, label_decimals(2.0 * y_half));
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(format!("along the width axis ({})", unit.name()))
        .y_desc(format!("along the height axis ({})", unit.name()))
        .axis_desc_style(label_font.clone())
        .label_style(label_font.clone())
        .x_label_formatter(&|x| tick_text(*x, x_dec))
        .y_label_formatter(&|y| tick_text(*y, y_dec))
        .x_labels(LABELS)
        .y_labels(LABELS)
        .axis_style(FRAME)
        .draw()
        .map_err(draw_err)?;
    let n = map.cells;
    let (cw, ch) = (2.0 * hw / n as f64, 2.0 * hh / n as f64);
    chart
        .draw_series((0..n * n).map(|k| {
            let (row, col) = (k / n, k % n);
            let v = map.share_per_area[k];
            let rel = if v.is_finite() { v / peak } else { 0.0 };
            // Above the scale's top: drawn in the top colour (sequential_colour clamps).
            let (x0, y0) = (-hw + col as f64 * cw, -hh + row as f64 * ch);
            Rectangle::new(
                [(x0, y0), (x0 + cw, y0 + ch)],
                sequential_colour(rel).filled(),
            )
        }))
        .map_err(draw_err)?;
    // The map's extent: the exit face's (or the detector's) bounding box.
    chart
        .draw_series(std::iter::once(Rectangle::new(
            [(-hw, -hh), (hw, hh)],
            FRAME.stroke_width(px(1.0).max(1)),
        )))
        .map_err(draw_err)?;

    // The colour scale: relative irradiance 0…1.
    draw_colour_bar(&bar_area, "relative irradiance", label_font, &px)?;
    area.present().map_err(draw_err)
}

/// The colour bar beside a map: the sequential scale from 0 to 1 (relative to the map's top),
/// titled `title`, in `area`.
pub(super) fn draw_colour_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    title: &str,
    label_font: TextStyle,
    px: &impl Fn(f64) -> u32,
) -> Result<(), TirError> {
    let mut bar = ChartBuilder::on(area)
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
        .y_desc(title)
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
    Ok(())
}

/// An intensity with three significant figures in the unit (cd or mW/sr) or a smaller one with
/// an SI prefix, so that it reads without an exponent: "304 mcd", "12.5 µW/sr".
pub(super) fn intensity_text(value: f64, unit: crate::trace::IntensityUnit) -> String {
    use crate::trace::IntensityUnit;
    let units: [(f64, &str); 4] = match unit {
        IntensityUnit::Candela => [(1.0, "cd"), (1e-3, "mcd"), (1e-6, "µcd"), (1e-9, "ncd")],
        IntensityUnit::MilliwattPerSteradian => [
            (1e3, "W/sr"),
            (1.0, "mW/sr"),
            (1e-3, "µW/sr"),
            (1e-6, "nW/sr"),
        ],
    };
    let (factor, name) = units
        .iter()
        .copied()
        .find(|&(f, _)| value.abs() >= f)
        .unwrap_or(units[units.len() - 1]);
    format!("{} {name}", sig3(value / factor))
}

/// Where the peak window lies, for a caption: "the 5° cone about the axis" or "27° to 28° off
/// axis".
fn window_text(w: &crate::trace::IntensityWindow) -> String {
    if w.from_deg == 0.0 {
        format!("the {:.0}° cone about the axis", w.to_deg)
    } else {
        format!("{:.0}° to {:.0}° off axis", w.from_deg, w.to_deg)
    }
}

/// Draw the intensity beyond the exit face against the angle from the exit axis (degrees,
/// 1° rings) relative to the reported peak (the mean over the brightest window of at least the
/// 5° cone's solid angle, [`crate::trace::Intensity::peak`], marked on the chart), with the
/// rings' 95 % confidence band when the report carries one per ring. A noisy ring may rise above
/// 1; the axis makes room for it. With a source flux the caption gives the peak in absolute
/// units. A report with no delivered light gets a message instead.
///
/// `scale` as for [`draw_exit_map`]. Errors: angle and value lists of different lengths (a
/// malformed report), or a drawing backend failure.
pub fn draw_intensity<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
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
    let brightest_ring = points.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    let window = &it.peak;
    let peak = window.share_per_sr;
    if brightest_ring <= 0.0 || !(peak.is_finite() && peak > 0.0) {
        return draw_nothing_to_show(
            area,
            "Intensity beyond the exit face",
            "No light left the exit face: no intensity to show.",
            scale,
        );
    }
    let band =
        it.ci95_per_sr.len() == it.share_per_sr.len() && points.iter().all(|p| p.2.is_finite());
    let caption = match &report.absolute {
        Some(a) => format!(
            "Intensity beyond the exit face (1 = peak: {}, mean over {})",
            intensity_text(a.peak_intensity.value, a.intensity_unit),
            window_text(window)
        ),
        None => format!(
            "Intensity beyond the exit face (1 = peak: the mean over {})",
            window_text(window)
        ),
    };
    let body = area
        .titled(&caption, ink_font(px(14.0)))
        .map_err(draw_err)?;
    let label_font = ink_font(px(12.0));
    let y_max = (1.1 * brightest_ring / peak).max(1.1);
    let x_max = libm::ceil(points.iter().map(|p| p.0).fold(90.0, f64::max));
    let mut chart = cartesian(&body, 10.0, scale, 0.0..x_max, 0.0..y_max)?;
    let y_decimals = if y_max < 3.0 { 1 } else { 0 };
    draw_axes(
        &mut chart,
        ("angle from the exit axis (°)", "relative intensity"),
        label_font.clone(),
        label_font.clone(),
        (&|x| format!("{x:.0}"), &|y| format!("{y:.*}", y_decimals)),
    )?;
    let line_colour = RGBColor(0x28, 0x5f, 0x96);
    let band_colour = RGBColor(0xb8, 0xd4, 0xe8);
    let window_colour = RGBColor(0xc2, 0x41, 0x0c);
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
    draw_line(
        &mut chart,
        points.iter().map(|p| (p.0, p.1 / peak)),
        line_colour,
        2,
        scale,
        "intensity in 1° rings",
    )?;
    draw_line(
        &mut chart,
        [(window.from_deg, 1.0), (window.to_deg, 1.0)],
        window_colour,
        4,
        scale,
        "peak: mean over its window",
    )?;
    draw_legend(&mut chart, SeriesLabelPosition::UpperRight, label_font)?;
    area.present().map_err(draw_err)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::Scenario;
    use crate::trace::{Prepared, TraceReport};

    /// The thermostat example (a 3 mm round pipe) traced with few rays.
    fn thermostat() -> TraceReport {
        let text =
            std::fs::read_to_string("examples/scenarios/thermostat_status_led.json").unwrap();
        let mut s = Scenario::from_json(&text).unwrap();
        s.trace.rays = 20_000;
        let p = Prepared::new(&s).unwrap();
        p.report(&p.trace_all_serial(0))
    }

    #[test]
    fn the_detector_map_is_drawn_with_its_own_title_and_size_or_says_there_is_none() {
        // The thermostat's detector: 4 mm round, 1 mm beyond a 3 mm exit face.
        let report = thermostat();
        let map = report
            .receiver_map
            .as_ref()
            .expect("the example has a receiver");
        assert_eq!((map.width_mm, map.height_mm), (4.0, 4.0));
        let lit: f64 = map.share.iter().sum();
        let on = report.receiver.unwrap().share;
        assert!((lit - on).abs() < 1e-12, "{lit} against {on}");
        let draw = |report: &TraceReport| {
            let mut svg = String::new();
            {
                let area = SVGBackend::with_string(&mut svg, (600, 400)).into_drawing_area();
                draw_receiver_map(&area, report, 1.0, LengthUnit::Mm).unwrap();
            }
            svg
        };
        let svg = draw(&report);
        assert!(svg.contains("Detector irradiance (1 = "), "{svg}");
        assert!(!svg.contains("Exit-face"), "{svg}");
        let mut bare = report.clone();
        bare.receiver_map = None;
        assert!(draw(&bare).contains("The design has no detector."));
        // A malformed map names its own place in the report.
        let mut bad = report.clone();
        bad.receiver_map.as_mut().unwrap().cells = 0;
        let mut svg = String::new();
        let area = SVGBackend::with_string(&mut svg, (60, 40)).into_drawing_area();
        let e = draw_receiver_map(&area, &bad, 1.0, LengthUnit::Mm).unwrap_err();
        assert!(
            e.to_string().starts_with("report.receiver_map.cells"),
            "{e}"
        );
    }

    fn exit_map_svg(report: &TraceReport, unit: LengthUnit) -> String {
        exit_map_svg_sized(report, unit, (600, 400))
    }

    fn exit_map_svg_sized(report: &TraceReport, unit: LengthUnit, size: (u32, u32)) -> String {
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, size).into_drawing_area();
            draw_exit_map(&area, report, 1.0, unit).unwrap();
        }
        svg
    }

    /// The texts of an SVG, in drawing order.
    fn texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let inside = t.split_once('>')?.1.split("</text>").next()?;
                Some(inside.trim().to_string())
            })
            .collect()
    }

    /// The tick labels: the texts that are numbers, except the colour scale's 0.0 … 1.0.
    fn ticks(svg: &str) -> Vec<String> {
        texts(svg)
            .into_iter()
            .filter(|t| t.parse::<f64>().is_ok())
            .collect()
    }

    #[test]
    fn the_exit_map_in_inches_has_inch_axes_ticks_and_area() {
        let report = thermostat();
        let mm = exit_map_svg(&report, LengthUnit::Mm);
        let inch = exit_map_svg(&report, LengthUnit::Inch);
        assert!(mm.contains("along the width axis (mm)") && mm.contains("per mm²)"));
        assert!(inch.contains("along the width axis (in)"), "{inch}");
        assert!(inch.contains("along the height axis (in)"));
        assert!(inch.contains("of the emitted power per in²)"));
        assert!(!inch.contains("(mm)") && !inch.contains("mm²"));
        // The caption's top: the same share per mm² times 645.16 mm² per in².
        let top = map_scale_top(&report.exit_map).unwrap().top_per_mm2;
        assert!(mm.contains(&format!("1 = {} % of", sig3(100.0 * top))));
        assert!(inch.contains(&format!("1 = {} % of", sig3(100.0 * 645.16 * top))));
        // A 3 mm face spans ±0.059 in: ticks at round inch values (0.02 in apart), written
        // with two decimals, never a converted millimetre value such as 0.0394.
        let tick_texts = ticks(&inch);
        for t in ["-0.04", "-0.02", "0.00", "0.02", "0.04"] {
            assert!(tick_texts.iter().any(|x| x == t), "{t} in {tick_texts:?}");
        }
        for t in &tick_texts {
            let decimals = t.split_once('.').map_or(0, |(_, d)| d.len());
            assert!(decimals <= 2, "{t} in {tick_texts:?}");
            let v: f64 = t.parse().unwrap();
            assert!(v.abs() <= 1.0, "{t}: inch ticks of a 3 mm face");
        }
        // The millimetre drawing keeps its own ticks.
        let mm_ticks = ticks(&mm);
        assert!(mm_ticks.iter().any(|x| x == "1.0"), "{mm_ticks:?}");
        assert!(!inch.contains("NaN") && !mm.contains("NaN"));
    }

    #[test]
    fn no_tick_reads_minus_zero() {
        // At these sizes plotters' ticks land a hair below 0 in one unit or the other.
        let report = thermostat();
        for size in [(600, 400), (780, 390), (420, 360), (1560, 780)] {
            for unit in [LengthUnit::Mm, LengthUnit::Inch] {
                let svg = exit_map_svg_sized(&report, unit, size);
                let zeros: Vec<String> = ticks(&svg)
                    .into_iter()
                    .filter(|t| t.parse::<f64>() == Ok(0.0))
                    .collect();
                assert!(!zeros.is_empty(), "{size:?} {unit:?}: a tick at 0");
                assert!(
                    zeros.iter().all(|t| !t.starts_with('-')),
                    "{size:?} {unit:?}: {zeros:?}"
                );
            }
        }
    }

    #[test]
    fn a_tiny_face_in_inches_gets_the_decimals_its_ticks_need() {
        // A 0.5 mm face spans ±0.0098 in: ticks 0.005 in apart need three decimals.
        let mut report = thermostat();
        report.exit_map.width_mm = 0.5;
        report.exit_map.height_mm = 0.5;
        let tick_texts = ticks(&exit_map_svg(&report, LengthUnit::Inch));
        let colour_scale = ["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"];
        let axes: Vec<&String> = tick_texts
            .iter()
            .filter(|t| !colour_scale.contains(&t.as_str()))
            .collect();
        for t in ["-0.010", "-0.005", "0.000", "0.005", "0.010"] {
            assert!(axes.iter().any(|x| *x == t), "{t} in {axes:?}");
        }
        for t in &axes {
            assert_eq!(t.split_once('.').map(|(_, d)| d.len()), Some(3), "{t}");
        }
    }
}
