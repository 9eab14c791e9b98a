//! Charts, generic over the plotters drawing backend: the page draws them on a canvas, the tests
//! draw them to SVG. The quick look's leak-free bend chart is in `bend.rs`, a trace report's
//! exit-face map and intensity chart in `report.rs`, a sweep's chart in `sweep.rs`, a tolerance study's in `tolerance.rs`; this file
//! holds what they share (scale, fonts, axes, labelled lines, the legend box).

mod bend;
mod far_field;
mod find;
mod report;
mod sweep;
mod tolerance;

use std::ops::Range;

use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;

use crate::error::TirError;

pub use bend::{bend_curve, draw_bend_chart};
pub use far_field::draw_far_field;
pub use find::draw_find_chart;
pub use report::{
    draw_exit_map, draw_intensity, draw_receiver_map, map_scale_top, sequential_colour, MapScale,
    MAP_SCALE_CELL_CI, MAP_SCALE_PERCENTILE,
};
pub use sweep::{draw_sweep_chart, field_axis_title};
pub use tolerance::draw_tolerance_chart;

fn draw_err<E: std::fmt::Debug>(e: E) -> TirError {
    TirError::Draw(format!("{e:?}"))
}

/// The drawing scale from a pixel ratio: values outside 0.5…4 are clamped, non-finite ones give 1.
fn clamp_scale(scale: f64) -> f64 {
    if scale.is_finite() {
        scale.clamp(0.5, 4.0)
    } else {
        1.0
    }
}

/// Font sizes, line widths and margins in pixels at drawing scale `scale` (from
/// [`clamp_scale`]): `px(x)` is x·scale rounded.
fn pixels(scale: f64) -> impl Fn(f64) -> u32 {
    move |x: f64| (x * scale).round() as u32
}

/// Decimals for the tick labels of an axis over `range` with at most `labels` labels: at least
/// `at_least`, and as many as the ticks plotters places there need to be written exactly (steps
/// of 1, 2 or 5 times a power of ten, so 0.005 in needs three), at most nine.
fn tick_decimals(range: Range<f64>, labels: usize, at_least: usize) -> usize {
    use plotters::coord::ranged1d::{BoldPoints, Ranged};
    let span = (range.end - range.start).abs();
    if !(span.is_finite() && span > 0.0) {
        return at_least;
    }
    let ticks = RangedCoordf64::from(range).key_points(BoldPoints(labels));
    let mut decimals = at_least;
    let mut factor = 1.0;
    for _ in 0..decimals {
        factor *= 10.0;
    }
    let exact = |factor: f64| {
        ticks
            .iter()
            .all(|t| (libm::round(t * factor) / factor - t).abs() <= 1e-9 * span)
    };
    while decimals < 9 && !exact(factor) {
        decimals += 1;
        factor *= 10.0;
    }
    decimals
}

/// A tick label: `x` with `decimals` decimals, never a negative zero (a tick at −1e-18, where
/// plotters' steps add up to almost 0, reads 0.00, not -0.00).
fn tick_text(x: f64, decimals: usize) -> String {
    let text = format!("{x:.decimals$}");
    match text.strip_prefix('-') {
        Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
        _ => text,
    }
}

/// The charts' text and axis colour.
const INK: RGBColor = RGBColor(0x1f, 0x2a, 0x37);

/// The charts' text: sans-serif of `size` pixels in [`INK`].
fn ink_font(size: u32) -> TextStyle<'static> {
    ("sans-serif", size).into_font().color(&INK)
}

/// A chart with linear axes `x` and `y` on `area`: a margin of `margin` pixels (at scale 1) and
/// room for the axis labels.
fn cartesian<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    margin: f64,
    scale: f64,
    x: Range<f64>,
    y: Range<f64>,
) -> Result<Chart<'a, DB>, TirError> {
    let px = pixels(scale);
    ChartBuilder::on(area)
        .margin(px(margin))
        .x_label_area_size(px(40.0))
        .y_label_area_size(px(52.0))
        .build_cartesian_2d(x, y)
        .map_err(draw_err)
}

/// A chart on linear f64 axes.
type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// A label formatter for an axis.
type Formatter<'f> = &'f dyn Fn(&f64) -> String;

/// The axes of a line chart with a light grid: their descriptions `(x, y)` in `desc_font`, tick
/// labels in `label_font`, written by `(x, y)` formatters.
fn draw_axes<DB: DrawingBackend>(
    chart: &mut Chart<'_, DB>,
    (x_desc, y_desc): (&str, &str),
    desc_font: TextStyle<'_>,
    label_font: TextStyle<'_>,
    (x_format, y_format): (Formatter<'_>, Formatter<'_>),
) -> Result<(), TirError> {
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .axis_desc_style(desc_font)
        .label_style(label_font)
        .x_label_formatter(x_format)
        .y_label_formatter(y_format)
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .draw()
        .map_err(draw_err)
}

/// A line through `points`, `width` pixels wide at scale 1 (the legend's sample is always
/// `width` pixels), listed in the legend as `label`.
fn draw_line<DB: DrawingBackend>(
    chart: &mut Chart<'_, DB>,
    points: impl IntoIterator<Item = (f64, f64)>,
    colour: RGBColor,
    width: u32,
    scale: f64,
    label: &str,
) -> Result<(), TirError> {
    chart
        .draw_series(LineSeries::new(
            points,
            colour.stroke_width(pixels(scale)(width as f64)),
        ))
        .map_err(draw_err)?
        .label(label)
        .legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(width))
        });
    Ok(())
}

/// The legend of the labelled series, at `position`, on a white box.
fn draw_legend<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, DB>,
    position: SeriesLabelPosition,
    font: TextStyle<'_>,
) -> Result<(), TirError> {
    chart
        .configure_series_labels()
        .position(position)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(0xcc, 0xcc, 0xcc))
        .label_font(font)
        .draw()
        .map_err(draw_err)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tick_labels_have_the_decimals_their_ticks_need() {
        // Ticks 0.02 in apart need two decimals, 0.005 in apart three; never fewer than asked.
        assert_eq!(tick_decimals(-0.07..0.07, 7, 0), 2);
        assert_eq!(tick_decimals(-0.012..0.012, 7, 2), 3);
        assert_eq!(tick_decimals(-12.0..12.0, 7, 0), 0);
        assert_eq!(tick_decimals(-12.0..12.0, 7, 1), 1);
        assert_eq!(
            tick_decimals(1.0..1.0, 7, 1),
            1,
            "an empty range keeps the least"
        );
        assert_eq!(tick_decimals(0.0..f64::INFINITY, 7, 2), 2);
    }

    #[test]
    fn a_tick_at_almost_zero_reads_zero() {
        assert_eq!(tick_text(-1.7e-18, 2), "0.00");
        assert_eq!(tick_text(-0.004, 2), "0.00");
        assert_eq!(tick_text(-0.05, 2), "-0.05");
        assert_eq!(tick_text(0.0, 0), "0");
        assert_eq!(tick_text(-3.0, 1), "-3.0");
    }
}
