//! A sweep's chart: delivered (%) against the varied value with its 95 % band, the difference
//! to the reference point (the first traced point) with its band in a second panel, and, when
//! the varied field is a bend's radius, that bend's leak and the closed-form leak-free radius.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::{
    cartesian, clamp_scale, draw_axes, draw_err, draw_legend, draw_line, ink_font, pixels,
    tick_decimals, tick_text,
};
use crate::error::TirError;
use crate::study::{SweepReport, VariedBend};
use crate::units::LengthUnit;

/// Tick labels along a sweep's x axis at most (plotters' default).
const X_LABELS: usize = 11;

/// A field path's name without its unit suffix (an element of a list, `offset_mm[0]`, keeps its
/// index after the unit-less name) and the unit the suffix names; `None` without a known suffix.
fn split_unit(field: &str) -> Option<(String, &'static str)> {
    const UNITS: [(&str, &str); 6] = [
        ("_db_per_m", "dB/m"),
        ("_mm", "mm"),
        ("_deg", "°"),
        ("_nm", "nm"),
        ("_lm", "lm"),
        ("_mw", "mW"),
    ];
    let (name, index) = match field.rfind('[') {
        Some(i) if field.ends_with(']') && !field[i..].contains('.') => field.split_at(i),
        _ => (field, ""),
    };
    UNITS.iter().find_map(|&(suffix, unit)| {
        name.strip_suffix(suffix)
            .map(|stem| (format!("{stem}{index}"), unit))
    })
}

/// The axis title of a field path: the path without its unit suffix, then the unit in
/// brackets (`route[1].bend.radius_mm` → `route[1].bend.radius (mm)`).
pub fn field_axis_title(field: &str) -> String {
    match split_unit(field) {
        Some((stem, unit)) => format!("{stem} ({unit})"),
        None => field.to_string(),
    }
}

/// How a chart shows a varied field along an axis: its title and, for a length (a `…_mm` path,
/// not a factor), its values in the unit chosen for lengths.
pub(super) struct FieldAxis {
    /// The axis title (`route[1].bend.radius (in)`, `factor on every route[*].bend.radius_mm`).
    pub(super) title: String,
    /// The unit shown when the field is a length, else `None` (shown as stored).
    length: Option<LengthUnit>,
}

impl FieldAxis {
    /// The axis of `field`, a factor on it when `factor`; lengths shown in `unit`.
    pub(super) fn new(field: &str, factor: bool, unit: LengthUnit) -> Self {
        if factor {
            return Self {
                title: format!("factor on every {field}"),
                length: None,
            };
        }
        match split_unit(field) {
            Some((stem, "mm")) => Self {
                title: format!("{stem} ({})", unit.name()),
                length: Some(unit),
            },
            _ => Self {
                title: field_axis_title(field),
                length: None,
            },
        }
    }

    /// A value of the field (stored units: mm for a length) where the chart draws it.
    pub(super) fn shown(&self, value: f64) -> f64 {
        self.length.map_or(value, |u| u.from_mm(value))
    }

    /// A value of the field written with `decimals` decimals (a length: as many in mm, two more
    /// in inches, [`LengthUnit::fixed`]).
    pub(super) fn fixed(&self, value: f64, decimals: usize) -> String {
        match self.length {
            Some(u) => u.fixed(value, decimals),
            None => format!("{value:.decimals$}"),
        }
    }

    /// A value of the field as a legend writes it (lengths in the unit shown, without noise).
    pub(super) fn text(&self, value: f64) -> String {
        match self.length {
            Some(u) => u.shown(value),
            None => format!("{value}"),
        }
    }
}

/// One traced point for drawing: value, and (share, ci95) of delivered, difference and the
/// varied bend's leak, all in per cent.
struct Drawn {
    x: f64,
    delivered: (f64, f64),
    difference: (f64, f64),
    bend_leak: Option<(f64, f64)>,
}

/// A band's outline (upper edge out, lower edge back) of `(x, value, half-width)`; infinite
/// half-widths (fewer than two rays) are left out of the band.
fn band(points: &[(f64, f64, f64)]) -> Vec<(f64, f64)> {
    let finite: Vec<_> = points.iter().filter(|p| p.2.is_finite()).collect();
    let mut outline: Vec<(f64, f64)> = finite.iter().map(|p| (p.0, p.1 + p.2)).collect();
    outline.extend(finite.iter().rev().map(|p| (p.0, p.1 - p.2)));
    outline
}

/// Range `lo..hi` padded by 8 % (and at least `min_pad`) on both sides.
fn padded(lo: f64, hi: f64, min_pad: f64) -> std::ops::Range<f64> {
    let pad = ((hi - lo) * 0.08).max(min_pad);
    (lo - pad)..(hi + pad)
}

/// Colours of a grid's curves, one per value of its second field (cycled beyond six).
const GRID_COLOURS: [RGBColor; 6] = [
    RGBColor(0x28, 0x5f, 0x96),
    RGBColor(0xb3, 0x41, 0x2a),
    RGBColor(0x2e, 0x7d, 0x32),
    RGBColor(0x7b, 0x3f, 0x98),
    RGBColor(0xa0, 0x6a, 0x00),
    RGBColor(0x00, 0x6d, 0x77),
];

/// One curve of a grid: its legend and its points (x, delivered %, its 95 % half-width).
type GridCurve = (String, Vec<(f64, f64, f64)>);

/// A grid's value of its second field (on `axis`) as a legend shows it.
fn grid_label(v: &serde_json::Value, axis: &FieldAxis) -> String {
    match v {
        serde_json::Value::String(t) => t.clone(),
        serde_json::Value::Number(n) => n.as_f64().map(|x| axis.text(x)).unwrap_or_default(),
        _ => String::new(),
    }
}

/// A grid (`and_field`): delivered (%) against the first field, one curve with its 95 % band
/// per value of the second field, in the order the report lists them. Refused points are left
/// out. Every point was traced with the same rays, so the curves differ by the design.
fn draw_grid_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &SweepReport,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    area.fill(&WHITE).map_err(draw_err)?;
    let x_axis = FieldAxis::new(&report.field, report.factor, unit);
    let and_field = report.and_field.clone().unwrap_or_default();
    let and_axis = FieldAxis::new(&and_field, report.and_factor, unit);
    // The second field's values in first-seen order, each with its traced points.
    let mut curves: Vec<GridCurve> = Vec::new();
    for p in &report.points {
        let label = grid_label(
            p.and_value.as_ref().unwrap_or(&serde_json::Value::Null),
            &and_axis,
        );
        let k = match curves.iter().position(|(l, _)| *l == label) {
            Some(k) => k,
            None => {
                curves.push((label, Vec::new()));
                curves.len() - 1
            }
        };
        if let (Some(x), Some(r)) = (p.value.as_f64().filter(|x| x.is_finite()), &p.result) {
            let ci = if r.delivered.ci95.is_finite() {
                r.delivered.ci95
            } else {
                0.0
            };
            curves[k]
                .1
                .push((x_axis.shown(x), 100.0 * r.delivered.share, 100.0 * ci));
        }
    }
    let all: Vec<&(f64, f64, f64)> = curves.iter().flat_map(|(_, c)| c).collect();
    if all.is_empty() {
        let (w, h) = area.dim_in_pixel();
        area.draw(&Text::new(
            "no point traced yet",
            (w as i32 / 2, h as i32 / 2),
            ink_font(px(14.0)).pos(Pos::new(HPos::Center, VPos::Center)),
        ))
        .map_err(draw_err)?;
        return area.present().map_err(draw_err);
    }
    let (x_lo, x_hi) = all
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.0), hi.max(p.0))
        });
    let (y_lo, y_hi) = all
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.1 - p.2), hi.max(p.1 + p.2))
        });
    let x_range = padded(x_lo, x_hi, 1e-6 * x_hi.abs().max(1.0));
    let y_range = padded(y_lo.max(0.0), y_hi.min(100.0), 0.5);
    let y_range = y_range.start.max(0.0)..y_range.end.min(100.0);
    let (x_title, and_title) = (&x_axis.title, &and_axis.title);
    let label_font = ink_font(px(12.0));
    let x_decimals = tick_decimals(x_range.clone(), X_LABELS, 2);
    let mut chart = cartesian(area, 10.0, scale, x_range, y_range.clone())?;
    draw_axes(
        &mut chart,
        (x_title, "delivered, share of the emitted light (%)"),
        ink_font(px(13.0)),
        label_font.clone(),
        (&|x| tick_text(*x, x_decimals), &|y| format!("{y:.1}")),
    )?;
    for (k, (label, points)) in curves.iter().enumerate() {
        let colour = GRID_COLOURS[k % GRID_COLOURS.len()];
        let outline: Vec<(f64, f64)> = band(points)
            .into_iter()
            .map(|(x, y)| (x, y.clamp(y_range.start, y_range.end)))
            .collect();
        if outline.len() >= 4 {
            chart
                .draw_series(std::iter::once(Polygon::new(
                    outline,
                    colour.mix(0.15).filled(),
                )))
                .map_err(draw_err)?;
        }
        draw_line(
            &mut chart,
            points.iter().map(|p| (p.0, p.1)),
            colour,
            2,
            scale,
            &format!("{and_title} = {label}"),
        )?;
        chart
            .draw_series(
                points
                    .iter()
                    .map(|p| Circle::new((p.0, p.1), px(3.5), colour.filled())),
            )
            .map_err(draw_err)?;
    }
    draw_legend(&mut chart, SeriesLabelPosition::LowerRight, label_font)?;
    area.present().map_err(draw_err)
}

/// Draw the sweep chart of `report` on `area`: on top delivered (%) with its 95 % band (and the
/// varied bend's leak with its band, when `bend` is given), below the difference to the
/// reference point with its band; a vertical marker at the bend's closed-form leak-free radius
/// when it lies near the swept values. Refused points are not drawn (the page's table lists
/// them with their problems). `scale` as for [`super::draw_bend_chart`].
pub fn draw_sweep_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &SweepReport,
    bend: Option<&VariedBend>,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    if report.and_field.is_some() && report.points.iter().any(|p| p.value.is_number()) {
        return draw_grid_chart(area, report, scale, unit);
    }
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    area.fill(&WHITE).map_err(draw_err)?;
    let x_axis = FieldAxis::new(&report.field, report.factor, unit);
    let pct = |s: &crate::stats::Share| (100.0 * s.share, 100.0 * s.ci95);
    let drawn: Vec<Drawn> = report
        .points
        .iter()
        .filter(|_| report.and_field.is_none())
        .filter_map(|p| {
            let r = p.result.as_ref()?;
            Some(Drawn {
                x: x_axis.shown(p.value.as_f64().filter(|x| x.is_finite())?),
                delivered: pct(&r.delivered),
                difference: pct(&r.difference),
                bend_leak: bend.and_then(|b| r.segments_leaked.get(b.segment)).map(pct),
            })
        })
        .collect();
    if drawn.is_empty() {
        let (w, h) = area.dim_in_pixel();
        let traced = report.points.iter().any(|p| p.result.is_some());
        let message = if traced {
            "the chart draws one varied number; the table lists every point"
        } else {
            "no point traced yet"
        };
        area.draw(&Text::new(
            message,
            (w as i32 / 2, h as i32 / 2),
            ink_font(px(14.0)).pos(Pos::new(HPos::Center, VPos::Center)),
        ))
        .map_err(draw_err)?;
        return area.present().map_err(draw_err);
    }
    let x_title = &x_axis.title;
    let (x_lo, x_hi) = drawn
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), d| {
            (lo.min(d.x), hi.max(d.x))
        });
    let span = (x_hi - x_lo).max(1e-9);
    // The leak-free radius is drawn as a line when it lies within two sweep spans of the
    // values (the axis grows to hold it), else named in words at the chart's edge.
    // (The varied field is that bend's radius: a length, drawn and written in the unit shown.)
    let leak_free_mm = bend
        .and_then(|b| b.leak_free_radius_mm)
        .filter(|r| r.is_finite());
    let leak_free_text = leak_free_mm
        .map(|r| format!("{} {}", unit.fixed(r, 2), unit.name()))
        .unwrap_or_default();
    let leak_free = leak_free_mm.map(|r| x_axis.shown(r));
    let near = |r: &f64| *r >= x_lo - 2.0 * span && *r <= x_hi + 2.0 * span;
    let marker = leak_free.filter(near);
    let off_chart = leak_free.filter(|r| !near(r));
    let (x_lo, x_hi) = match marker {
        Some(r) => (x_lo.min(r), x_hi.max(r)),
        None => (x_lo, x_hi),
    };
    let x_range = padded(x_lo, x_hi, 1e-6 * x_hi.abs().max(1.0));
    let x_decimals = if x_hi - x_lo < 1.0 {
        3
    } else if x_hi - x_lo < 10.0 {
        2
    } else {
        1
    };
    let tick_decimals = tick_decimals(x_range.clone(), X_LABELS, x_decimals);
    let (top, bottom) = area.split_vertically(area.dim_in_pixel().1 * 3 / 5);

    // Top panel: delivered and the bend's leak, per cent of the emitted power.
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for d in &drawn {
        for (v, c) in std::iter::once(d.delivered).chain(d.bend_leak) {
            let c = if c.is_finite() { c } else { 0.0 };
            lo = lo.min(v - c);
            hi = hi.max(v + c);
        }
    }
    let y_range = padded(lo.max(0.0), hi.min(100.0), 0.5);
    let y_range = y_range.start.max(0.0)..y_range.end.min(100.0);
    let delivered_colour = RGBColor(0x28, 0x5f, 0x96);
    let delivered_band = RGBColor(0xb8, 0xd4, 0xe8);
    let leak_colour = RGBColor(0xb3, 0x41, 0x2a);
    let leak_band = RGBColor(0xf0, 0xcf, 0xc4);
    let marker_colour = RGBColor(0x00, 0x6d, 0x77);
    let label_font = ink_font(px(12.0));
    let x_format = move |x: &f64| tick_text(*x, tick_decimals);
    {
        let mut chart = cartesian(&top, 10.0, scale, x_range.clone(), y_range.clone())?;
        // Far from the values, the leak-free radius is named under the axis instead of drawn.
        let top_x_title = match off_chart {
            Some(r) if r > x_hi => {
                format!("{x_title} · leak-free from {leak_free_text} (closed form) →")
            }
            Some(_) => format!("← leak-free from {leak_free_text} (closed form) · {x_title}"),
            None => x_title.clone(),
        };
        draw_axes(
            &mut chart,
            (&top_x_title, "share of the emitted light (%)"),
            ink_font(px(13.0)),
            label_font.clone(),
            (&x_format, &|y| format!("{y:.1}")),
        )?;
        let mut bands = vec![(
            drawn
                .iter()
                .map(|d| (d.x, d.delivered.0, d.delivered.1))
                .collect::<Vec<_>>(),
            delivered_band,
        )];
        if bend.is_some() {
            bands.push((
                drawn
                    .iter()
                    .filter_map(|d| d.bend_leak.map(|l| (d.x, l.0, l.1)))
                    .collect(),
                leak_band,
            ));
        }
        for (points, colour) in &bands {
            let outline: Vec<(f64, f64)> = band(points)
                .into_iter()
                .map(|(x, y)| (x, y.clamp(y_range.start, y_range.end)))
                .collect();
            if outline.len() >= 4 {
                chart
                    .draw_series(std::iter::once(Polygon::new(
                        outline,
                        colour.mix(0.8).filled(),
                    )))
                    .map_err(draw_err)?;
            }
        }
        draw_line(
            &mut chart,
            drawn.iter().map(|d| (d.x, d.delivered.0)),
            delivered_colour,
            2,
            scale,
            "delivered (band: 95 %)",
        )?;
        chart
            .draw_series(
                drawn
                    .iter()
                    .map(|d| Circle::new((d.x, d.delivered.0), px(3.5), delivered_colour.filled())),
            )
            .map_err(draw_err)?;
        if let Some(b) = bend {
            draw_line(
                &mut chart,
                drawn.iter().filter_map(|d| d.bend_leak.map(|l| (d.x, l.0))),
                leak_colour,
                2,
                scale,
                &format!("leaked in this bend (segment {})", b.segment + 1),
            )?;
        }
        if let Some(r) = marker {
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(r, y_range.start), (r, y_range.end)],
                    marker_colour.stroke_width(px(2.0)),
                )))
                .map_err(draw_err)?;
            let right_half = r > (x_range.start + x_range.end) / 2.0;
            let (anchor, pos) = if right_half {
                (r - span * 0.01, Pos::new(HPos::Right, VPos::Top))
            } else {
                (r + span * 0.01, Pos::new(HPos::Left, VPos::Top))
            };
            let y_text = y_range.end - 0.04 * (y_range.end - y_range.start);
            chart
                .draw_series(std::iter::once(Text::new(
                    format!("leak-free from here (closed form): {leak_free_text}"),
                    (anchor, y_text),
                    label_font.clone().pos(pos),
                )))
                .map_err(draw_err)?;
        }
        draw_legend(
            &mut chart,
            SeriesLabelPosition::UpperLeft,
            label_font.clone(),
        )?;
    }

    // Bottom panel: the difference to the reference point, percentage points.
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for d in &drawn {
        let c = if d.difference.1.is_finite() {
            d.difference.1
        } else {
            0.0
        };
        lo = lo.min(d.difference.0 - c);
        hi = hi.max(d.difference.0 + c);
    }
    let y_range = padded(lo.min(0.0), hi.max(0.0), 0.05);
    let mut chart = cartesian(&bottom, 10.0, scale, x_range, y_range.clone())?;
    let reference = report
        .reference
        .and_then(|i| report.points.get(i))
        .and_then(|p| p.value.as_f64())
        .map(|x| {
            // At least two significant digits: 0.1 mm is 0.0039 in, not 0.004.
            let x = x_axis.shown(x);
            let digits = if x == 0.0 || !x.is_finite() {
                0
            } else {
                1 - libm::floor(libm::log10(x.abs())) as i64
            };
            let decimals = x_decimals.max(digits.clamp(0, 12) as usize);
            format!("{x:.decimals$}")
        })
        .unwrap_or_default();
    draw_axes(
        &mut chart,
        (x_title, &format!("difference to {reference} (% points)")),
        ink_font(px(13.0)),
        label_font.clone(),
        (&x_format, &|y| format!("{y:.2}")),
    )?;
    let points: Vec<_> = drawn
        .iter()
        .map(|d| (d.x, d.difference.0, d.difference.1))
        .collect();
    let outline = band(&points);
    if outline.len() >= 4 {
        chart
            .draw_series(std::iter::once(Polygon::new(
                outline,
                delivered_band.mix(0.8).filled(),
            )))
            .map_err(draw_err)?;
    }
    chart
        .draw_series(std::iter::once(PathElement::new(
            vec![(x_lo, 0.0), (x_hi, 0.0)],
            RGBColor(0x99, 0x99, 0x99).stroke_width(1),
        )))
        .map_err(draw_err)?;
    draw_line(
        &mut chart,
        drawn.iter().map(|d| (d.x, d.difference.0)),
        delivered_colour,
        2,
        scale,
        "delivered minus the first point (band: 95 %, same rays)",
    )?;
    if let Some(r) = marker {
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(r, y_range.start), (r, y_range.end)],
                marker_colour.stroke_width(px(2.0)),
            )))
            .map_err(draw_err)?;
    }
    draw_legend(&mut chart, SeriesLabelPosition::LowerRight, label_font)?;
    area.present().map_err(draw_err)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::study::Study;

    /// The example study at few rays, with `values` for the first bend's radius.
    fn traced(values: &str) -> (SweepReport, Option<VariedBend>) {
        let text = std::fs::read_to_string("examples/studies/thermostat_first_bend.json").unwrap();
        let mut doc: serde_json::Value = serde_json::from_str(&text).unwrap();
        doc["scenario"]["trace"]["rays"] = 3000.into();
        doc["vary"] = serde_json::from_str(&format!(
            r#"{{"field": "route[1].bend.radius_mm", "values": {values}}}"#
        ))
        .unwrap();
        let study = Study::from_json(&doc.to_string()).unwrap();
        let sweep = study.prepare_sweep().unwrap();
        (sweep.report(&sweep.trace_all_serial()), study.varied_bend())
    }

    fn svg(report: &SweepReport, bend: Option<&VariedBend>) -> String {
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (800, 600)).into_drawing_area();
            draw_sweep_chart(&area, report, bend, 1.0, LengthUnit::Mm).unwrap();
        }
        svg
    }

    #[test]
    fn a_bend_sweep_shows_its_leak_and_the_leak_free_radius() {
        let (report, bend) = traced("[8, 16, 24, 32]");
        let bend = bend.expect("the first bend's radius is varied");
        let r = bend
            .leak_free_radius_mm
            .expect("PMMA in air: a leak-free radius");
        assert!((8.0..=32.0).contains(&r), "marker among the values: {r}");
        let svg = svg(&report, Some(&bend));
        assert!(svg.contains("leak-free from here (closed form)"));
        assert!(svg.contains("route[1].bend.radius (mm)"));
        assert!(svg.contains("leaked in this bend (segment 2)"));
        assert!(svg.contains("difference to 8.0 (% points)"), "reference");
        // Far beyond the values, it is named at the edge instead.
        let (near_report, _) = traced("[3, 4]");
        let edge = svg_with(&near_report, &bend);
        assert!(edge.contains("(closed form) →") && !edge.contains("from here"));
        assert!(!svg.contains("NaN"));
    }

    #[test]
    fn refused_points_are_left_out_and_nothing_drawn_is_nan() {
        // 1 mm is below the smallest radius a 3 mm guide's bend may have: refused.
        let (report, bend) = traced("[1, 6, 9]");
        assert!(report.points[0].result.is_none() && !report.points[0].problems.is_empty());
        let svg = svg(&report, bend.as_ref());
        assert!(!svg.contains("NaN"));
        assert!(
            svg.contains("difference to 6.00 (% points)"),
            "the first traced point"
        );
        // Without a bend: no leak line, no marker.
        let plain = svg_without_bend(&report);
        assert!(!plain.contains("leak-free from here"));
        assert!(!plain.contains("leaked in this bend"));
    }

    fn svg_with(report: &SweepReport, bend: &VariedBend) -> String {
        svg(report, Some(bend))
    }

    fn svg_without_bend(report: &SweepReport) -> String {
        svg(report, None)
    }

    #[test]
    fn axis_titles_carry_the_unit() {
        assert_eq!(
            field_axis_title("route[1].bend.radius_mm"),
            "route[1].bend.radius (mm)"
        );
        assert_eq!(
            field_axis_title("source.offset_mm[0]"),
            "source.offset[0] (mm)"
        );
        assert_eq!(field_axis_title("source.tilt_deg"), "source.tilt (°)");
        assert_eq!(
            field_axis_title("guide.attenuation_db_per_m"),
            "guide.attenuation (dB/m)"
        );
        assert_eq!(
            field_axis_title("route[0].straight.length"),
            "route[0].straight.length"
        );
    }

    /// The texts of an SVG that are numbers (tick labels), in drawing order.
    fn numbers(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let inside = t.split_once('>')?.1.split("</text>").next()?.trim();
                inside.parse::<f64>().is_ok().then(|| inside.to_string())
            })
            .collect()
    }

    fn svg_in(report: &SweepReport, bend: Option<&VariedBend>, unit: LengthUnit) -> String {
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (800, 600)).into_drawing_area();
            draw_sweep_chart(&area, report, bend, 1.0, unit).unwrap();
        }
        svg
    }

    #[test]
    fn a_radius_sweep_in_inches_draws_and_writes_inches() {
        let (report, bend) = traced("[8, 16, 24, 32]");
        let bend = bend.unwrap();
        let r = bend.leak_free_radius_mm.unwrap();
        let svg = svg_in(&report, Some(&bend), LengthUnit::Inch);
        assert!(svg.contains("route[1].bend.radius (in)"), "the x axis");
        assert!(
            !svg.contains("(mm)") && !svg.contains(" mm"),
            "no millimetres left"
        );
        assert!(svg.contains(&format!(
            "leak-free from here (closed form): {} in",
            LengthUnit::Inch.fixed(r, 2)
        )));
        // 8 mm = 0.31496 in, written to the sweep's decimals.
        assert!(svg.contains("difference to 0.315 (% points)"), "reference");
        // 8 … 32 mm = 0.31 … 1.26 in: ticks every 0.1 in, not converted millimetre ticks.
        let ticks = numbers(&svg);
        for t in ["0.300", "0.500", "1.000", "1.200"] {
            assert!(ticks.iter().any(|x| x == t), "{t} in {ticks:?}");
        }
        // (The x axis's labels are the ones with three decimals; the y axes' have one or two.)
        let x_ticks = ticks
            .iter()
            .filter(|t| t.split_once('.').unwrap().1.len() == 3);
        for t in x_ticks {
            let inches: f64 = t.parse().unwrap();
            assert!((0.2..1.4).contains(&inches), "{t} in {ticks:?}");
        }
        // Far from the values, the closed-form radius is named in inches at the edge.
        let (near_report, _) = traced("[3, 4]");
        let edge = svg_in(&near_report, Some(&bend), LengthUnit::Inch);
        assert!(edge.contains(&format!(
            "leak-free from {} in (closed form) →",
            LengthUnit::Inch.fixed(r, 2)
        )));
        // In millimetres, as before.
        let mm = svg_in(&report, Some(&bend), LengthUnit::Mm);
        assert!(mm.contains(&format!("leak-free from here (closed form): {r:.2} mm")));
        assert!(mm.contains("difference to 8.0 (% points)"));
    }

    #[test]
    fn a_small_length_in_inches_keeps_two_significant_digits() {
        let text = std::fs::read_to_string("examples/studies/thermostat_first_bend.json").unwrap();
        let mut doc: serde_json::Value = serde_json::from_str(&text).unwrap();
        doc["scenario"]["trace"]["rays"] = 2000.into();
        doc["vary"] = serde_json::json!({ "field": "source.gap_mm", "values": [0.1, 0.3, 0.5] });
        let study = Study::from_json(&doc.to_string()).unwrap();
        let sweep = study.prepare_sweep().unwrap();
        let report = sweep.report(&sweep.trace_all_serial());
        let svg = svg_in(&report, None, LengthUnit::Inch);
        assert!(svg.contains("source.gap (in)"));
        // 0.1 mm = 0.003937 in; the x ticks 0.002 in apart (0.1 … 0.5 mm = 0.004 … 0.020 in).
        assert!(svg.contains("difference to 0.0039 (% points)"), "reference");
        let ticks = numbers(&svg);
        for t in ["0.004", "0.010", "0.020"] {
            assert!(ticks.iter().any(|x| x == t), "{t} in {ticks:?}");
        }
        let mm = svg_in(&report, None, LengthUnit::Mm);
        assert!(
            mm.contains("difference to 0.100 (% points)"),
            "reference in mm"
        );
    }

    #[test]
    fn a_grid_of_lengths_in_inches_converts_both_fields() {
        let text = std::fs::read_to_string("examples/studies/thermostat_first_bend.json").unwrap();
        let mut doc: serde_json::Value = serde_json::from_str(&text).unwrap();
        doc["scenario"]["trace"]["rays"] = 2000.into();
        doc["vary"] = serde_json::json!({ "field": "route[1].bend.radius_mm", "values": [8, 16] });
        doc["and_vary"] =
            serde_json::json!({ "field": "route[3].bend.radius_mm", "values": [6, 12] });
        let study = Study::from_json(&doc.to_string()).unwrap();
        let sweep = study.prepare_sweep().unwrap();
        let report = sweep.report(&sweep.trace_all_serial());
        let svg = svg_in(&report, None, LengthUnit::Inch);
        assert!(svg.contains("route[1].bend.radius (in)"), "the x axis");
        // 6 mm = 0.23622 in and 12 mm = 0.47244 in, to 0.0001 in.
        assert!(
            svg.contains("route[3].bend.radius (in) = 0.2362"),
            "a curve per radius"
        );
        assert!(svg.contains("route[3].bend.radius (in) = 0.4724"));
        let mm = svg_in(&report, None, LengthUnit::Mm);
        assert!(mm.contains("route[3].bend.radius (mm) = 6"));
        assert!(!svg.contains("NaN") && !mm.contains("NaN"));
    }

    #[test]
    fn a_grid_draws_one_curve_per_value_of_its_second_field() {
        let text =
            std::fs::read_to_string("examples/studies/thermostat_bends_and_material.json").unwrap();
        let mut doc: serde_json::Value = serde_json::from_str(&text).unwrap();
        doc["scenario"]["trace"]["rays"] = 2000.into();
        let study = Study::from_json(&doc.to_string()).unwrap();
        let sweep = study.prepare_sweep().unwrap();
        let report = sweep.report(&sweep.trace_all_serial());
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (800, 600)).into_drawing_area();
            draw_sweep_chart(&area, &report, None, 1.0, LengthUnit::Mm).unwrap();
        }
        assert!(
            svg.contains("guide.material.library = pmma"),
            "a curve per material"
        );
        assert!(svg.contains("guide.material.library = polycarbonate"));
        assert!(
            svg.contains("factor on every route[*].bend.radius_mm"),
            "the x axis"
        );
        assert!(!svg.contains("NaN") && !svg.contains("no point traced"));
    }
}
