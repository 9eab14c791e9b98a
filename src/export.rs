//! Trace reports out and back in: the CSV form of the energy budget and the per-segment and
//! per-contact tables (what `tirtrace trace --csv` prints and the page offers for download), and
//! the helpers that let [`TraceReport`] be read back from its JSON or JS form.
//!
//! No physics here: numbers are written in the shortest form that reads back exactly.

use serde::de::{Deserializer, Error};
use serde::Deserialize;

use crate::stats::Share;
use crate::trace::{Absolute, SegmentReport, TraceReport, Value};

/// A number for the CSV: shortest form that reads back exactly, with −0 written as 0.
fn csv_num(x: f64) -> f64 {
    x + 0.0
}

/// A CSV field: quoted, inner quotes doubled; a name a spreadsheet would take for a formula
/// (starting with `=`, `+`, `-`, `@`, tab or carriage return) gets a leading `'` so it stays
/// text (names come from files and share links).
fn csv_text(s: &str) -> String {
    let guard = if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        "'"
    } else {
        ""
    };
    format!("\"{guard}{}\"", s.replace('"', "\"\""))
}

/// The report as CSV: the budget (one row per mechanism: `mechanism,share,ci95`), a blank line,
/// the per-segment table (`index,kind,start_mm,length_mm,leaked,leaked_ci95,absorbed,
/// absorbed_ci95,wall_hits`), a blank line and the contacts (`contact,segment,lost,lost_ci95`,
/// names quoted). Every line ends with a newline; this is exactly what `tirtrace trace --csv`
/// prints.
pub fn report_csv(report: &TraceReport) -> String {
    let b = &report.budget;
    let mut s = String::from("mechanism,share,ci95\n");
    for (name, share) in [
        ("delivered", &b.delivered),
        ("missed_entry", &b.missed_entry),
        ("reflected_entry", &b.reflected_entry),
        ("leaked", &b.leaked),
        ("contact", &b.contact),
        ("absorbed", &b.absorbed),
        ("returned", &b.returned),
        ("stopped", &b.stopped),
    ] {
        s += &format!("{name},{},{}\n", csv_num(share.share), csv_num(share.ci95));
    }
    s += "\nindex,kind,start_mm,length_mm,leaked,leaked_ci95,absorbed,absorbed_ci95,wall_hits\n";
    for g in &report.segments {
        s += &format!(
            "{},{},{},{},{},{},{},{},{}\n",
            g.index,
            g.kind,
            csv_num(g.start_mm),
            csv_num(g.length_mm),
            csv_num(g.leaked.share),
            csv_num(g.leaked.ci95),
            csv_num(g.absorbed.share),
            csv_num(g.absorbed.ci95),
            g.wall_hits
        );
    }
    s += "\ncontact,segment,lost,lost_ci95\n";
    for c in &report.contacts {
        s += &format!(
            "{},{},{},{}\n",
            csv_text(&c.name),
            c.segment,
            csv_num(c.lost.share),
            csv_num(c.lost.ci95)
        );
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

/// The `'static` name in `allowed` equal to `s`, or serde's "unknown variant" error.
fn one_of<E: Error>(s: &str, allowed: &'static [&'static str]) -> Result<&'static str, E> {
    allowed
        .iter()
        .copied()
        .find(|a| *a == s)
        .ok_or_else(|| E::unknown_variant(s, allowed))
}

// `SegmentReport` and `Absolute` hold `&'static str` names, for which serde's derive would only
// read from `'static` input (it borrows every `&str`). They are read through these mirrors with
// owned names instead, and each name is mapped back to the report's own `'static` one. The
// conversions name every field, so a field added to the report without its mirror fails to
// compile.

/// [`SegmentReport`] as read, with an owned kind.
#[derive(Deserialize)]
struct SegmentReportRead {
    index: usize,
    kind: String,
    start_mm: f64,
    length_mm: f64,
    leaked: Share,
    absorbed: Share,
    wall_hits: u64,
}

impl<'de> Deserialize<'de> for SegmentReport {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<SegmentReport, D::Error> {
        let r = SegmentReportRead::deserialize(d)?;
        Ok(SegmentReport {
            index: r.index,
            kind: one_of(&r.kind, &["straight", "bend", "taper"])?,
            start_mm: r.start_mm,
            length_mm: r.length_mm,
            leaked: r.leaked,
            absorbed: r.absorbed,
            wall_hits: r.wall_hits,
        })
    }
}

/// [`Absolute`] as read, with owned units.
#[derive(Deserialize)]
struct AbsoluteRead {
    unit: String,
    intensity_unit: String,
    delivered: Value,
    peak_intensity: Value,
    peak_angle_deg: f64,
    on_axis_intensity: Value,
    mean_exit_luminance: Option<Value>,
    receiver: Option<Value>,
}

impl<'de> Deserialize<'de> for Absolute {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Absolute, D::Error> {
        let r = AbsoluteRead::deserialize(d)?;
        Ok(Absolute {
            unit: one_of(&r.unit, &["mW", "lm"])?,
            intensity_unit: one_of(&r.intensity_unit, &["mW/sr", "cd"])?,
            delivered: r.delivered,
            peak_intensity: r.peak_intensity,
            peak_angle_deg: r.peak_angle_deg,
            on_axis_intensity: r.on_axis_intensity,
            mean_exit_luminance: r.mean_exit_luminance,
            receiver: r.receiver,
        })
    }
}

/// Read a 95 % half-width back: JSON has no infinity, and serde_json writes the infinite
/// half-width of a one-ray estimate as `null`, so `null` reads back as +∞.
pub(crate) fn ci95_or_infinite<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::INFINITY))
}
