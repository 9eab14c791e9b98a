//! Trace reports out and back in: the CSV form of the energy budget and the per-segment,
//! per-contact and (when there are any) per-coating tables (what `tirtrace trace --csv` prints and the page offers for download), and
//! the helpers that let [`TraceReport`] be read back from its JSON or JS form.
//!
//! No physics here: numbers are written in the shortest form that reads back exactly.

use serde::de::{Deserializer, Error};
use serde::Deserialize;

use crate::trace::{Budget, Named, TraceReport};

/// A number for the CSV: shortest form that reads back exactly, with −0 written as 0.
pub(crate) fn csv_num(x: f64) -> f64 {
    x + 0.0
}

/// A CSV field: quoted, inner quotes doubled; a name a spreadsheet would take for a formula
/// (starting with `=`, `+`, `-`, `@`, tab or carriage return) gets a leading `'` so it stays
/// text (names come from files and share links).
pub(crate) fn csv_text(s: &str) -> String {
    let guard = if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        "'"
    } else {
        ""
    };
    format!("\"{guard}{}\"", s.replace('"', "\"\""))
}

/// The budget's rows of the CSV in order: the report's key and the row's words —
/// [`Budget::MECHANISMS`] itself, named here beside the CSV that prints it.
pub const MECHANISMS: [(&str, &str); 9] = Budget::MECHANISMS;

/// A share as a percentage for the CSV, to 10⁻⁹ % (far below any interval), so that 100 × 0.0637
/// reads 6.37, not 6.369999999999999.
pub fn percent(x: f64) -> f64 {
    csv_num(libm::round(x * 1e11) / 1e9)
}

/// The report as CSV, in sections a spreadsheet shows as they are read, separated by a blank
/// line:
///
/// 1. a header block of `field,value` rows: what the file is, the design's name, the tirtrace
///    version, rays, seed, and the units (shares in % of the light the source emits, each with
///    its 95 % half-width; lengths in mm; flux in the source's unit when one is given);
/// 2. the energy budget, one row per mechanism in the page's words, with the flux and its
///    half-width when the source's flux is given;
/// 3. the absolute figures (flux delivered, on-axis and peak intensity, luminance, flux on the
///    detector), when the source's flux is given;
/// 4. the segments, numbered from 1 as the page numbers them: kind, start and length, leaks,
///    absorbed, wall hits;
/// 5. the mounts, with the segment they touch numbered from 1;
/// 6. the light turned back at the exit face ([`turn_back_csv`]);
/// 7. the exit figures ([`crate::exit_figures::csv`]);
/// 8. the far-field intensity map, a row per cell, and the light leaving at 90° or more from the
///    exit axis ([`crate::far_field::csv`]; left out for a report without the map).
///
/// Names are quoted (and guarded against formulas); every line ends with a newline. This is
/// exactly what `tirtrace trace --csv` prints and the page downloads.
pub fn report_csv(report: &TraceReport, design_name: &str) -> String {
    let b = &report.budget;
    let abs = report.absolute.as_ref();
    let flux_unit = abs.map(|a| a.unit.to_string());
    let mut s = String::from("\"tirtrace trace report\"\n");
    s += &format!("design,{}\n", csv_text(design_name));
    s += &format!("tirtrace version,{}\n", env!("CARGO_PKG_VERSION"));
    s += &format!("rays,{}\nseed,{}\n", report.rays, report.seed);
    s += "shares,\"% of the light the source emits, each with its 95 % half-width (±)\"\n";
    s += "lengths,mm\n";
    if let Some(unit) = &flux_unit {
        s += &format!("flux,{unit}\n");
    }
    let flux_head = flux_unit
        .as_ref()
        .map_or(String::new(), |u| format!(",flux {u},± flux {u}"));
    s += &format!("\n\"What becomes of the light\",%,± %{flux_head}\n");
    for (_, words, share) in b.shares() {
        s += &format!(
            "{},{},{}",
            csv_text(words),
            percent(share.share),
            percent(share.ci95)
        );
        if let Some(a) = abs {
            // The flux of each share: the delivered flux scales with the share.
            let per_share = if b.delivered.share > 0.0 {
                a.delivered.value / b.delivered.share
            } else {
                f64::NAN
            };
            if per_share.is_finite() {
                s += &format!(
                    ",{},{}",
                    csv_num(per_share * share.share),
                    csv_num(per_share * share.ci95)
                );
            } else {
                s += ",,";
            }
        }
        s += "\n";
    }
    if let Some(a) = abs {
        s += "\n\"Absolute figures\",value,± 95 %,unit\n";
        let intensity = a.intensity_unit.to_string();
        let unit = a.unit.to_string();
        let mut row = |what: &str, v: &crate::trace::Value, unit: &str| {
            s += &format!(
                "{},{},{},{}\n",
                csv_text(what),
                csv_num(v.value),
                csv_num(v.ci95),
                csv_text(unit)
            );
        };
        row("Flux reaching the window", &a.delivered, &unit);
        row(
            "Intensity along the exit axis",
            &a.on_axis_intensity,
            &intensity,
        );
        row(
            &format!(
                "Peak intensity ({}° from the axis)",
                csv_num(a.peak_angle_deg)
            ),
            &a.peak_intensity,
            &intensity,
        );
        if let Some(l) = &a.mean_exit_luminance {
            row(
                "Mean luminance of the exit face, along its axis",
                l,
                "cd/m²",
            );
        }
        if let Some(r) = &a.receiver {
            row("Flux on the detector", r, &unit);
        }
    }
    s += "\nsegment,kind,starts at (mm),length (mm),leaks %,± %,absorbed %,± %,wall hits\n";
    for g in &report.segments {
        s += &format!(
            "{},{},{},{},{},{},{},{},{}\n",
            g.index + 1,
            g.kind,
            csv_num(g.start_mm),
            csv_num(g.length_mm),
            percent(g.leaked.share),
            percent(g.leaked.ci95),
            percent(g.absorbed.share),
            percent(g.absorbed.ci95),
            g.wall_hits
        );
    }
    s += "\nmount,on segment,lost %,± %\n";
    for c in &report.contacts {
        s += &format!(
            "{},{},{},{}\n",
            csv_text(&c.name),
            c.segment + 1,
            percent(c.lost.share),
            percent(c.lost.ci95)
        );
    }
    if !report.coatings.is_empty() {
        s += "\ncoating,kind,on segment,reaches %,± %,absorbed %,± %\n";
        for c in &report.coatings {
            s += &format!(
                "{},{},{},{},{},{},{}\n",
                csv_text(&c.name),
                csv_text(&c.kind),
                c.segment + 1,
                percent(c.reached.share),
                percent(c.reached.ci95),
                percent(c.lost.share),
                percent(c.lost.ci95)
            );
        }
    }
    s + &turn_back_csv(report)
        + &crate::exit_figures::csv(&report.exit_figures)
        + &crate::far_field::csv(&report.far_field)
}

/// The light turned back at the exit face ([`crate::trace::ExitTurnBack`]), three tables each
/// after a blank line: what reaches the exit face and what it turns back, in % of the emitted
/// light and in % of the light reaching the face (empty when none reaches it); where the
/// turned-back light ended (in % of the emitted light, summing to the turned-back share; each is
/// already counted in the budget above); and its leaks by segment, numbered from 1.
fn turn_back_csv(report: &TraceReport) -> String {
    let t = &report.exit_turn_back;
    let of = t.of_reaching.as_ref();
    let mut s =
        String::from("\n\"At the exit face\",% of emitted,± %,% of the light reaching it,± %\n");
    for (words, share, fraction) in [
        ("Reaches the exit face", &t.reached, None),
        ("Turned back", &t.turned_back, of.map(|f| &f.turned_back)),
        (
            "Turned back by total reflection",
            &t.by_total_reflection,
            of.map(|f| &f.by_total_reflection),
        ),
        (
            "Turned back by Fresnel reflection",
            &t.by_fresnel,
            of.map(|f| &f.by_fresnel),
        ),
    ] {
        let fraction = fraction.map_or(",".to_string(), |f| {
            format!("{},{}", percent(f.share), percent(f.ci95))
        });
        s += &format!(
            "{},{},{},{fraction}\n",
            csv_text(words),
            percent(share.share),
            percent(share.ci95)
        );
    }
    let e = &t.ended;
    s += "\n\"Where the turned-back light ended (already counted above)\",% of emitted,± %\n";
    let mut ended = vec![
        ("Through the window on a later pass", &e.delivered_later),
        ("Comes back out of the entry face", &e.returned),
        ("Leaks out of the side walls", &e.leaked),
        ("Lost into mounts touching the pipe", &e.contact),
        ("Absorbed in the material", &e.absorbed),
        ("Stopped by the wall-hit limit", &e.stopped),
    ];
    // The coatings' row only for a scenario with coatings (none absorb anything otherwise).
    if !report.coatings.is_empty() {
        ended.insert(4, ("Absorbed by coatings on the wall", &e.coating));
    }
    for (words, share) in ended {
        s += &format!(
            "{},{},{}\n",
            csv_text(words),
            percent(share.share),
            percent(share.ci95)
        );
    }
    s += "\nsegment,leaks after a turn back %,± %\n";
    for g in &report.segments {
        let l = &g.leaked_after_turn_back;
        s += &format!("{},{},{}\n", g.index + 1, percent(l.share), percent(l.ci95));
    }
    s
}

/// Read a trace report back from its JSON text (as `tirtrace trace` prints it). Errors name the
/// field path, e.g. `exit_map.cells: invalid type ...`.
pub fn report_from_json(text: &str) -> Result<TraceReport, crate::TirError> {
    let de = &mut serde_json::Deserializer::from_str(text);
    serde_path_to_error::deserialize(de).map_err(|e| {
        let path = e.path().to_string();
        crate::TirError::Field(crate::FieldError::new(
            if path.is_empty() || path == "." || path == "?" {
                "report".to_string()
            } else {
                format!("report.{path}")
            },
            format!("could not be read: {}", e.into_inner()),
        ))
    })
}

/// Read a value written by name (a segment kind, a unit): a string, else serde's "invalid type
/// … expected a string"; a name not in the set gets serde's "unknown variant" error listing the
/// names allowed.
pub(crate) fn read_name<'de, D: Deserializer<'de>, T: Named>(d: D) -> Result<T, D::Error> {
    let name = String::deserialize(d)?;
    T::from_name(&name).ok_or_else(|| D::Error::unknown_variant(&name, T::NAMES))
}

/// Read a 95 % half-width back: JSON has no infinity, and serde_json writes the infinite
/// half-width of a one-ray estimate as `null`, so `null` reads back as +∞.
pub(crate) fn ci95_or_infinite<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::INFINITY))
}

#[cfg(test)]
mod tests {
    use super::percent;

    #[test]
    fn percentages_read_as_written() {
        assert_eq!(percent(0.0637), 6.37);
        assert_eq!(percent(0.7156), 71.56);
        assert_eq!(percent(1.0), 100.0);
        assert_eq!(percent(-0.0), 0.0);
        assert_eq!(percent(1.2345678901234e-3), 0.123456789);
    }
}
