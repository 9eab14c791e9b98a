//! A search's chart: at each evaluated value, the bend's leak (% of the light entering it) or
//! the delivered share (%) with a 95 % band, the allowed-loss line, the answer with its 95 %
//! interval shaded, and the bend's closed-form leak-free radius marked.
//!
//! The leak's band: the fraction leaked/entered is X + m/e (X the allowed fraction, m the mean
//! per-ray margin, e the mean weight entering the bend), so its band is X + (m ± h)/e with h the
//! margin's 95 % half-width — the margin's interval, the one the search inverts, shown on the
//! fraction's scale (e is taken as known).

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::sweep::FieldAxis;
use super::{
    cartesian, clamp_scale, draw_axes, draw_err, draw_legend, draw_line, ink_font, pixels,
    tick_decimals, tick_text,
};
use crate::error::TirError;
use crate::study::find::{Criterion, FindReport};
use crate::units::LengthUnit;

/// Tick labels along the x axis at most (plotters' default).
const X_LABELS: usize = 11;

/// Draw the chart of a search `report` on `area`; `scale` as for [`super::draw_bend_chart`];
/// a searched length (a bend's radius, an offset or gap) and the closed-form radius drawn and
/// written in `unit`. Values refused by the scenario's check are not drawn.
pub fn draw_find_chart<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &FindReport,
    scale: f64,
    unit: LengthUnit,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    area.fill(&WHITE).map_err(draw_err)?;
    // The searched field's axis: every value below is where it is drawn (in the unit shown).
    let x_axis = FieldAxis::new(&report.field, report.field.contains("[*]"), unit);
    let x = |value: f64| x_axis.shown(value);
    let (allowed, leak) = match report.criterion {
        Criterion::BendLeakAtMost { fraction, .. } => (100.0 * fraction, true),
        Criterion::DeliveredLossAtMost { .. } => (f64::NAN, false),
    };
    // (value, y, half-width), per cent.
    let mut points: Vec<(f64, f64, f64)> = Vec::new();
    let mut threshold = allowed;
    for e in &report.evaluations {
        let (Some(m), Some(d)) = (e.margin, e.delivered) else {
            continue;
        };
        if leak {
            let Some(entered) = e.bend_entered.filter(|s| s.share > 0.0) else {
                continue;
            };
            let y = allowed + 100.0 * m.share / entered.share;
            points.push((x(e.value), y, 100.0 * m.ci95 / entered.share));
        } else {
            // E[margin] = (1 − X)·delivered₀ − delivered: the allowed delivered share.
            if threshold.is_nan() {
                threshold = 100.0 * (d.share + m.share);
            }
            points.push((x(e.value), 100.0 * d.share, 100.0 * d.ci95));
        }
    }
    if points.is_empty() {
        let (w, h) = area.dim_in_pixel();
        area.draw(&Text::new(
            "no value traced",
            (w as i32 / 2, h as i32 / 2),
            ink_font(px(14.0)).pos(Pos::new(HPos::Center, VPos::Center)),
        ))
        .map_err(draw_err)?;
        return area.present().map_err(draw_err);
    }
    let leak_free_mm = report
        .bend
        .as_ref()
        .and_then(|b| b.leak_free_centre_radius_mm)
        .filter(|r| r.is_finite());
    let leak_free = leak_free_mm.map(x);
    let (from, to) = (x(report.from), x(report.to));
    let mut x_lo = from;
    let mut x_hi = to;
    if let Some(r) = leak_free.filter(|r| *r <= x_hi + (x_hi - x_lo)) {
        x_lo = x_lo.min(r);
        x_hi = x_hi.max(r);
    }
    let pad = 0.04 * (x_hi - x_lo).max(1e-9);
    let x_range = (x_lo - pad)..(x_hi + pad);
    let finite = |c: f64| if c.is_finite() { c } else { 0.0 };
    let y_lo = points
        .iter()
        .map(|p| p.1 - finite(p.2))
        .fold(threshold, f64::min)
        .max(if leak { 0.0 } else { f64::NEG_INFINITY });
    let y_hi = points
        .iter()
        .map(|p| p.1 + finite(p.2))
        .fold(threshold, f64::max);
    // A leak axis up to 3× the allowed loss (large leaks at tight radii would flatten the rest).
    let y_hi = if leak {
        y_hi.min(3.0 * allowed).max(1.5 * allowed)
    } else {
        y_hi
    };
    let y_pad = 0.06 * (y_hi - y_lo).max(1e-6);
    let y_range = (y_lo - y_pad).max(if leak { 0.0 } else { y_lo - y_pad })..(y_hi + y_pad);
    let clamp = |y: f64| y.clamp(y_range.start, y_range.end);
    let label_font = ink_font(px(12.0));
    let x_title = &x_axis.title;
    let y_title = if leak {
        "leak of the light entering the bend (%)"
    } else {
        "delivered, share of the emitted light (%)"
    };
    let line_colour = RGBColor(0xb3, 0x41, 0x2a);
    let band_colour = RGBColor(0xf0, 0xcf, 0xc4);
    let answer_colour = RGBColor(0x28, 0x5f, 0x96);
    let marker_colour = RGBColor(0x2e, 0x7d, 0x32);
    let x_decimals = tick_decimals(x_range.clone(), X_LABELS, 1);
    let mut chart = cartesian(area, 10.0, scale, x_range.clone(), y_range.clone())?;
    draw_axes(
        &mut chart,
        (x_title, y_title),
        ink_font(px(13.0)),
        label_font.clone(),
        (&|x| tick_text(*x, x_decimals), &|y| format!("{y:.1}")),
    )?;
    // The answer's interval (ends beyond the range reach the range's ends).
    if let (Some(answer), Some(i)) = (report.answer, report.interval) {
        let a = x(answer);
        let low = i.low.map_or(from, x);
        let high = i.high.map_or(to, x);
        let answer_text = x_axis.fixed(answer, 2);
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(low, y_range.start), (high, y_range.end)],
                RGBColor(0xb8, 0xd4, 0xe8).mix(0.5).filled(),
            )))
            .map_err(draw_err)?;
        draw_line(
            &mut chart,
            [(a, y_range.start), (a, y_range.end)],
            answer_colour,
            2,
            scale,
            &format!("answer {answer_text} (shaded: its 95 % interval)"),
        )?;
    }
    // The band of every evaluated value, then the line through them.
    let mut outline: Vec<(f64, f64)> = points
        .iter()
        .filter(|p| p.2.is_finite())
        .map(|p| (p.0, clamp(p.1 + p.2)))
        .collect();
    outline.extend(
        points
            .iter()
            .rev()
            .filter(|p| p.2.is_finite())
            .map(|p| (p.0, clamp(p.1 - p.2))),
    );
    if outline.len() >= 4 {
        chart
            .draw_series(std::iter::once(Polygon::new(
                outline,
                band_colour.mix(0.8).filled(),
            )))
            .map_err(draw_err)?;
    }
    let what = if leak {
        "traced leak (band: 95 %)"
    } else {
        "delivered (band: 95 %)"
    };
    // The line through the values on the axis; a value above the axis (a large leak at a tight
    // radius, left off so the rest is not flattened) breaks the line and is marked by a
    // triangle on the top edge, named in the legend (its value is in the table).
    let on_axis = |p: &&(f64, f64, f64)| p.1 <= y_range.end;
    let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for p in &points {
        if on_axis(&p) {
            if let Some(run) = runs.last_mut() {
                run.push((p.0, p.1));
            }
        } else if runs.last().is_some_and(|r| !r.is_empty()) {
            runs.push(Vec::new());
        }
    }
    for (k, run) in runs.into_iter().filter(|r| !r.is_empty()).enumerate() {
        if k == 0 {
            draw_line(&mut chart, run, line_colour, 2, scale, what)?;
        } else {
            chart
                .draw_series(LineSeries::new(run, line_colour.stroke_width(px(2.0))))
                .map_err(draw_err)?;
        }
    }
    chart
        .draw_series(
            points
                .iter()
                .filter(on_axis)
                .map(|p| Circle::new((p.0, p.1), px(3.0), line_colour.filled())),
        )
        .map_err(draw_err)?;
    let above = points.iter().filter(|p| !on_axis(p)).count();
    if above > 0 {
        let top = y_range.end;
        let size = px(5.0);
        chart
            .draw_series(
                points
                    .iter()
                    .filter(|p| !on_axis(p))
                    .map(|p| TriangleMarker::new((p.0, top), size, line_colour.filled())),
            )
            .map_err(draw_err)?
            .label(format!("{above} value(s) above {top:.1} %: see the table"))
            .legend(move |(x, y)| TriangleMarker::new((x + 9, y), size, line_colour.filled()));
    }
    draw_line(
        &mut chart,
        [(x_range.start, threshold), (x_range.end, threshold)],
        INK_LINE,
        1,
        scale,
        &format!("allowed: {threshold:.2} %"),
    )?;
    if let (Some(r), Some(r_mm)) = (leak_free.filter(|r| x_range.contains(r)), leak_free_mm) {
        draw_line(
            &mut chart,
            [(r, y_range.start), (r, y_range.end)],
            marker_colour,
            2,
            scale,
            &format!(
                "leak-free for every ray (closed form): {} {}",
                unit.fixed(r_mm, 2),
                unit.name()
            ),
        )?;
    }
    draw_legend(&mut chart, SeriesLabelPosition::UpperRight, label_font)?;
    area.present().map_err(draw_err)
}

/// The allowed-loss line's colour.
const INK_LINE: RGBColor = RGBColor(0x1f, 0x2a, 0x37);

#[cfg(test)]
mod tests {
    use super::*;
    use crate::study::Study;

    /// The example search (smallest first bend radius leaking at most 1 %, 3 … 30 mm) at few rays.
    fn searched() -> FindReport {
        let text =
            std::fs::read_to_string("examples/studies/thermostat_smallest_bend.json").unwrap();
        let mut doc: serde_json::Value = serde_json::from_str(&text).unwrap();
        doc["scenario"]["trace"]["rays"] = 4096.into();
        let study = Study::from_json(&doc.to_string()).unwrap();
        study.prepare_find().unwrap().run_serial()
    }

    fn svg(report: &FindReport, unit: LengthUnit) -> String {
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (800, 500)).into_drawing_area();
            draw_find_chart(&area, report, 1.0, unit).unwrap();
        }
        svg
    }

    /// The texts of an SVG that are numbers (the axes' tick labels).
    fn numbers(svg: &str) -> Vec<f64> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                t.split_once('>')?
                    .1
                    .split("</text>")
                    .next()?
                    .trim()
                    .parse()
                    .ok()
            })
            .collect()
    }

    #[test]
    fn a_radius_search_in_inches_draws_and_writes_inches() {
        let report = searched();
        let answer = report.answer.expect("the example search finds a radius");
        let r = report
            .bend
            .as_ref()
            .and_then(|b| b.leak_free_centre_radius_mm)
            .expect("PMMA in air: a leak-free radius");
        let inch = svg(&report, LengthUnit::Inch);
        assert!(inch.contains("route[1].bend.radius (in)"), "the x axis");
        assert!(
            !inch.contains("(mm)") && !inch.contains(" mm"),
            "no millimetres left"
        );
        assert!(inch.contains(&format!(
            "answer {} (shaded",
            LengthUnit::Inch.fixed(answer, 2)
        )));
        if r <= 30.0 {
            assert!(inch.contains(&format!(
                "leak-free for every ray (closed form): {} in",
                LengthUnit::Inch.fixed(r, 2)
            )));
        }
        // 3 … 30 mm is 0.12 … 1.18 in: the x ticks are round inch values 0.2 in apart (the y
        // axis's, 0 … 3 %, are 0.5 apart), none of the millimetre chart's 5 … 30.
        let ticks = numbers(&inch);
        for t in [0.2, 0.4, 0.6, 0.8, 1.2] {
            assert!(ticks.contains(&t), "{t} in {ticks:?}");
        }
        assert!(ticks.iter().all(|&t| t <= 3.0), "{ticks:?}");
        let mm = svg(&report, LengthUnit::Mm);
        assert!(mm.contains("route[1].bend.radius (mm)"));
        assert!(mm.contains(&format!("answer {answer:.2} (shaded")));
        assert!(numbers(&mm).contains(&30.0), "the millimetre ticks");
        assert!(!inch.contains("NaN") && !mm.contains("NaN"));
    }
}
