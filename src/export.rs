//! Trace reports out and back in: the CSV form of the energy budget and the per-segment and
//! per-contact tables (what `tirtrace trace --csv` prints and the page offers for download), and
//! the helpers that let [`TraceReport`] be read back from its JSON or JS form.
//!
//! No physics here: numbers are written in the shortest form that reads back exactly.

use serde::de::{Deserializer, Error};
use serde::Deserialize;

use crate::trace::{Named, TraceReport};

/// A number for the CSV: shortest form that reads back exactly, with −0 written as 0.
fn csv_num(x: f64) -> f64 {
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

/// The report as CSV: the budget (one row per mechanism: `mechanism,share,ci95`), a blank line,
/// the per-segment table (`index,kind,start_mm,length_mm,leaked,leaked_ci95,absorbed,
/// absorbed_ci95,wall_hits`), a blank line and the contacts (`contact,segment,lost,lost_ci95`,
/// names quoted), then the light turned back at the exit face ([`turn_back_csv`]). Every line
/// ends with a newline; this is exactly what `tirtrace trace --csv` prints.
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
    s + &turn_back_csv(report)
}

/// The light turned back at the exit face, three tables each after a blank line
/// ([`crate::trace::ExitTurnBack`]): what reaches the exit face and what it turns back
/// (`exit_face,share,ci95,of_reaching,of_reaching_ci95`: shares of the emitted light, and of the
/// light reaching the face, empty when none reaches it), where the turned-back light ended
/// (`after_turn_back,share,ci95`, shares of the emitted light that sum to `turned_back`), and its
/// leakage by segment (`index,leaked_after_turn_back,leaked_after_turn_back_ci95`).
fn turn_back_csv(report: &TraceReport) -> String {
    let t = &report.exit_turn_back;
    let of = t.of_reaching.as_ref();
    let mut s = String::from("\nexit_face,share,ci95,of_reaching,of_reaching_ci95\n");
    for (name, share, fraction) in [
        ("reached", &t.reached, None),
        ("turned_back", &t.turned_back, of.map(|f| &f.turned_back)),
        (
            "turned_back_by_total_reflection",
            &t.by_total_reflection,
            of.map(|f| &f.by_total_reflection),
        ),
        (
            "turned_back_by_fresnel",
            &t.by_fresnel,
            of.map(|f| &f.by_fresnel),
        ),
    ] {
        let fraction = fraction.map_or(",".to_string(), |f| {
            format!("{},{}", csv_num(f.share), csv_num(f.ci95))
        });
        s += &format!(
            "{name},{},{},{fraction}\n",
            csv_num(share.share),
            csv_num(share.ci95)
        );
    }
    let e = &t.ended;
    s += "\nafter_turn_back,share,ci95\n";
    for (name, share) in [
        ("delivered_later", &e.delivered_later),
        ("returned", &e.returned),
        ("leaked", &e.leaked),
        ("contact", &e.contact),
        ("absorbed", &e.absorbed),
        ("stopped", &e.stopped),
    ] {
        s += &format!("{name},{},{}\n", csv_num(share.share), csv_num(share.ci95));
    }
    s += "\nindex,leaked_after_turn_back,leaked_after_turn_back_ci95\n";
    for g in &report.segments {
        let l = &g.leaked_after_turn_back;
        s += &format!("{},{},{}\n", g.index, csv_num(l.share), csv_num(l.ci95));
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
