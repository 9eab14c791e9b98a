//! The far-field intensity map of a trace report ([`crate::far_field`]): the intensity over the
//! horizontal and vertical angle beyond the exit face, drawn as coloured cells like the exit-face
//! map, with the same sequential palette and the same rule for the top of its colour scale.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::report::{
    draw_colour_bar, draw_nothing_to_show, intensity_text, map_scale_rule, sequential_colour, sig3,
    steady_scale_top, FRAME,
};
use super::{cartesian, clamp_scale, draw_err, ink_font, pixels};
use crate::error::TirError;

/// The title over the map.
const TITLE: &str = "Intensity map beyond the exit face";

/// Check that a report's far-field map has its declared shape.
fn check(f: &crate::far_field::FarField) -> Result<(), TirError> {
    let n = f.cells;
    let field = |p: &str, m: String| TirError::Field(crate::FieldError::new(p, m));
    if n > 1000 {
        return Err(field(
            "report.far_field.cells",
            format!("must be ≤ 1000, got {n}"),
        ));
    }
    for (p, len) in [
        ("report.far_field.share_per_sr", f.share_per_sr.len()),
        ("report.far_field.share", f.share.len()),
        ("report.far_field.ci95", f.ci95.len()),
    ] {
        if len != n * n {
            return Err(field(
                p,
                format!("must hold cells² = {} values, got {len}", n * n),
            ));
        }
    }
    if n > 0 && !(f.cell_deg.is_finite() && (f.cell_deg * n as f64 - 180.0).abs() < 1e-9) {
        return Err(field(
            "report.far_field.cell_deg",
            format!("must be 180° / cells, got {}", f.cell_deg),
        ));
    }
    Ok(())
}

/// Draw the far-field intensity map of a trace report: one coloured cell per map cell (its
/// intensity relative to the top of the colour scale, [`sequential_colour`]), horizontal and
/// vertical angle in degrees at equal scale, a colour scale, a caption giving the scale's top
/// (in cd or mW/sr when the source has a flux, else in % of the emitted power per sr), and
/// under the map the angles' definition and the rule that sets the top (the exit map's:
/// [`super::map_scale_top`], a high percentile of the cells known to ±50 %, never one noisy
/// cell). A report with no map, or no light on it, gets a message instead.
///
/// `scale` as for [`super::draw_exit_map`]. Errors: a map whose cell count and values disagree
/// (a malformed report), or a drawing backend failure.
pub fn draw_far_field<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    report: &crate::trace::TraceReport,
    scale: f64,
) -> Result<(), TirError> {
    let scale = clamp_scale(scale);
    let px = pixels(scale);
    let f = &report.far_field;
    check(f)?;
    area.fill(&WHITE).map_err(draw_err)?;
    if f.cells == 0 {
        return draw_nothing_to_show(
            area,
            TITLE,
            "This report has no intensity map: trace the design again.",
            scale,
        );
    }
    // The scale in absolute units when there are any (a constant factor: the same cell tops it).
    let absolute = f
        .absolute
        .as_ref()
        .filter(|a| a.intensity.len() == f.share_per_sr.len());
    let values = absolute.map_or(&f.share_per_sr, |a| &a.intensity);
    let Some((top, from_steady_cells, _)) = steady_scale_top(values, &f.share, &f.ci95) else {
        return draw_nothing_to_show(
            area,
            TITLE,
            "No light left the exit face: nothing to map.",
            scale,
        );
    };
    let caption = match absolute {
        Some(a) => format!("{TITLE} (1 = {})", intensity_text(top, a.intensity_unit)),
        None => format!(
            "{TITLE} (1 = {} % of the emitted power per sr)",
            sig3(100.0 * top)
        ),
    };
    let foot_lines = [
        "Angles in the exit face's frame (z its outward normal): horizontal atan2(x, z), towards"
            .to_string(),
        format!(
            "its width axis x; vertical atan2(y, z), towards its height axis y. Cells of {}°.",
            f.cell_deg
        ),
        map_scale_rule(from_steady_cells),
    ];
    let line_h = px(17.0);
    let foot_h = line_h * foot_lines.len() as u32 + px(6.0);
    let area_h = area.dim_in_pixel().1;
    let (chart_area, foot) = area.split_vertically(area_h.saturating_sub(foot_h));
    for (i, line) in foot_lines.iter().enumerate() {
        foot.draw(&Text::new(
            line.clone(),
            (px(8.0) as i32, (line_h * i as u32 + line_h / 2) as i32),
            ink_font(px(12.0)).pos(Pos::new(HPos::Left, VPos::Center)),
        ))
        .map_err(draw_err)?;
    }
    let body = chart_area
        .titled(&caption, ink_font(px(14.0)))
        .map_err(draw_err)?;
    let (map_area, bar_area) =
        body.split_horizontally(body.dim_in_pixel().0.saturating_sub(px(96.0)));
    let label_font = ink_font(px(12.0));

    // Equal degrees per pixel across and down: the map's area narrowed (or shortened) about its
    // middle until the plotting area is square, so that the axes span ±90° exactly.
    let half = 90.0;
    let (pw, ph) = cartesian(&map_area, 8.0, scale, -half..half, -half..half)?
        .plotting_area()
        .dim_in_pixel();
    let (cut_x, cut_y) = (pw.saturating_sub(ph), ph.saturating_sub(pw));
    let square = map_area.margin(cut_y / 2, cut_y - cut_y / 2, cut_x / 2, cut_x - cut_x / 2);
    let mut chart = cartesian(&square, 8.0, scale, -half..half, -half..half)?;
    // Ask for a tick every 10° (plotters picks a round step: 10°, dividing 30°) and write every
    // third.
    let tick_count = libm::ceil(2.0 * half / 10.0) as usize + 1;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc("Horizontal angle, °")
        .y_desc("Vertical angle, °")
        .axis_desc_style(label_font.clone())
        .label_style(label_font.clone())
        .x_label_formatter(&|x| angle_tick(*x, half))
        .y_label_formatter(&|y| angle_tick(*y, half))
        .x_labels(tick_count)
        .y_labels(tick_count)
        .axis_style(FRAME)
        .draw()
        .map_err(draw_err)?;
    let n = f.cells;
    let cell = f.cell_deg;
    chart
        .draw_series((0..n * n).map(|k| {
            let (row, col) = (k / n, k % n);
            let v = values[k];
            let rel = if v.is_finite() { v / top } else { 0.0 };
            let (x0, y0) = (-half + col as f64 * cell, -half + row as f64 * cell);
            Rectangle::new(
                [(x0, y0), (x0 + cell, y0 + cell)],
                sequential_colour(rel).filled(),
            )
        }))
        .map_err(draw_err)?;
    // The map's extent (±90° both ways) and its axes through the exit axis.
    let thin = FRAME.stroke_width(px(1.0).max(1));
    chart
        .draw_series([
            Rectangle::new([(-half, -half), (half, half)], thin),
            Rectangle::new([(-half, 0.0), (half, 0.0)], thin),
            Rectangle::new([(0.0, -half), (0.0, half)], thin),
        ])
        .map_err(draw_err)?;

    // The colour scale: relative intensity 0…1.
    draw_colour_bar(&bar_area, "relative intensity", label_font, &px)?;
    area.present().map_err(draw_err)
}

/// A tick label of an angle axis: whole degrees at multiples of 30° within ±`half`, nothing
/// elsewhere (the widened side of the chart holds no angles), never "-0".
fn angle_tick(x: f64, half: f64) -> String {
    let whole = libm::round(x);
    if (x - whole).abs() > 1e-6 || libm::fmod(whole, 30.0) != 0.0 || whole.abs() > half {
        return String::new();
    }
    format!("{}", whole + 0.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::Scenario;
    use crate::trace::{Prepared, TraceReport};

    fn report(flux: bool) -> TraceReport {
        let text =
            std::fs::read_to_string("examples/scenarios/thermostat_status_led.json").unwrap();
        let mut s = Scenario::from_json(&text).unwrap();
        s.trace.rays = 20_000;
        if !flux {
            s.source.flux = None;
        }
        let p = Prepared::new(&s).unwrap();
        p.report(&p.trace_all_serial(0))
    }

    fn svg(report: &TraceReport) -> String {
        let mut svg = String::new();
        {
            let area = SVGBackend::with_string(&mut svg, (900, 450)).into_drawing_area();
            draw_far_field(&area, report, 1.0).unwrap();
        }
        svg
    }

    #[test]
    fn the_map_has_angle_axes_its_scale_and_its_rule() {
        let r = report(true);
        let with_flux = svg(&r);
        assert!(
            with_flux.contains("Horizontal angle, °") && with_flux.contains("Vertical angle, °")
        );
        assert!(with_flux.contains("horizontal atan2(x, z)") && with_flux.contains("Cells of 4°."));
        assert!(with_flux.contains("Colour scale: 1 is the 99th percentile of the cells known"));
        // The caption's top: the steady cells' 99th percentile, in cd (the source is in lm).
        let f = &r.far_field;
        let a = f.absolute.as_ref().unwrap();
        let (top, steady, _) = steady_scale_top(&a.intensity, &f.share, &f.ci95).unwrap();
        assert!(steady);
        let unit = intensity_text(top, a.intensity_unit);
        assert!(unit.ends_with("cd"), "{unit}");
        assert!(with_flux.contains(&format!("(1 = {unit})")), "{unit}");
        let texts: Vec<&str> = with_flux
            .split("<text")
            .skip(1)
            .filter_map(|t| Some(t.split_once('>')?.1.split("</text>").next()?.trim()))
            .collect();
        let ticks: Vec<&str> = texts
            .iter()
            .copied()
            .filter(|t| t.parse::<i32>().is_ok())
            .collect();
        // Each axis: every 30° from −90° to 90°, and nothing else.
        let want = ["-90", "-60", "-30", "0", "30", "60", "90"];
        assert_eq!(ticks, [want, want].concat(), "{texts:?}");
        assert!(!with_flux.contains("NaN"));
        // Without a flux: the top in % of the emitted power per sr.
        let shares = svg(&report(false));
        assert!(shares.contains("% of the emitted power per sr)"));
        assert!(!shares.contains("NaN"));
    }

    #[test]
    fn a_map_without_light_or_cells_says_so() {
        let mut r = report(false);
        r.far_field.share.iter_mut().for_each(|v| *v = 0.0);
        r.far_field.share_per_sr.iter_mut().for_each(|v| *v = 0.0);
        assert!(svg(&r).contains("No light left the exit face"));
        r.far_field = Default::default();
        assert!(svg(&r).contains("This report has no intensity map"));
        // A malformed map is refused by name.
        let mut r = report(false);
        r.far_field.share_per_sr.pop();
        let mut out = String::new();
        let area = SVGBackend::with_string(&mut out, (300, 200)).into_drawing_area();
        let e = draw_far_field(&area, &r, 1.0).unwrap_err().to_string();
        assert!(e.contains("report.far_field.share_per_sr"), "{e}");
    }
}
