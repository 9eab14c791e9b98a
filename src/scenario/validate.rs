//! Validation of the scenario document: every field checked against its range in
//! [`crate::limits`], in document order (the order problems are listed in: guide, route,
//! contacts, source, receiver, trace settings), then the indices resolved at the wavelength.
//! Every problem names its field path, the allowed range and the value found.

use super::table::table_has_power;
use super::{
    bend_half_size_mm, Contact, Emitter, EmitterArea, FaceCoating, Flux, Guide, Pattern, Receiver,
    Scenario, ScenarioIndices, Section, Segment, Source, TraceSettings, ZonePlace,
    SCENARIO_VERSION,
};
use crate::error::{show, FieldError};
use crate::guide;
use crate::limits::{
    FieldErrors, Range, ATTENUATION_DB_PER_M, AZIMUTH_DEG, BEND_ANGLE_DEG, BEND_RADIUS_MAX_MM,
    CONE_HALF_ANGLE_DEG, CORNER_ANGLE_DEG, CORNER_REFLECTANCE, EMITTER_MM, FLUX, GAP_MM,
    HALF_INTENSITY_ANGLE_DEG, MAX_INTERACTIONS, MAX_SEGMENTS, MAX_WHOLE, OFFSET_MM, RAYS,
    RECEIVER_DISTANCE_MM, RECEIVER_MM, SECTION_MM, SECTOR_DEG, SECTOR_END_DEG, SEGMENT_LENGTH_MM,
    TABLE_ANGLE_DEG, TABLE_INTENSITY, TABLE_ROWS, TILT_DEG,
};

impl Scenario {
    /// Validate and resolve the indices at the source's wavelength; on failure, every problem
    /// found, in document order.
    pub fn check(&self) -> Result<ScenarioIndices, Vec<FieldError>> {
        let mut out = FieldErrors::default();
        out.version(self.version, SCENARIO_VERSION);
        check_guide(&self.guide, &mut out);
        let exit_section = check_route(self.guide.section, &self.route, &mut out);
        let pocket = crate::faces::check_faces(self, exit_section, &mut out);
        for (k, contact) in self.guide.contacts.iter().enumerate() {
            check_contact(k, contact, self.guide.section, &self.route, &mut out);
        }
        for (k, coating) in self.guide.coatings.iter().enumerate() {
            super::coating::check_coating(k, coating, self.guide.section, &self.route, &mut out);
        }
        let problems_before_source = out.0.len();
        let wavelength_nm = check_source(&self.source, pocket.map(|p| p.depth_mm), &mut out);
        if let (Some(pocket), true) = (pocket, out.0.len() == problems_before_source) {
            crate::faces::check_led_in_pocket(&self.source, &pocket, &mut out);
        }
        if let Some(receiver) = &self.receiver {
            check_receiver(receiver, &mut out);
        }
        check_trace(&self.trace, &mut out);
        let indices = wavelength_nm.and_then(|wl| self.indices_at(wl, &mut out));
        out.verdict(indices)
    }

    /// Every medium's index at the wavelength, and whether the surroundings let the guide guide.
    fn indices_at(&self, wavelength_nm: f64, out: &mut FieldErrors) -> Option<ScenarioIndices> {
        let (g, wl) = (&self.guide, wavelength_nm);
        let n_core = out.keep(g.material.n_rel_air(wl, "guide.material"));
        let n_out = out.keep(g.surroundings.n_rel_air(wl, "guide.surroundings"));
        let n_gap = out.keep(self.source.gap_medium.n_rel_air(wl, "source.gap_medium"));
        let n_exit = match &g.exit_medium {
            Some(m) => out.keep(m.n_rel_air(wl, "guide.exit_medium")),
            None => n_out,
        };
        let n_contacts: Vec<Option<f64>> = g
            .contacts
            .iter()
            .enumerate()
            .map(|(k, c)| {
                out.keep(
                    c.medium
                        .n_rel_air(wl, &format!("guide.contacts[{k}].medium")),
                )
            })
            .collect();
        let (Some(n_core), Some(n_out), Some(n_gap), Some(n_exit)) = (n_core, n_out, n_gap, n_exit)
        else {
            return None;
        };
        out.keep(guide::check_guiding(n_core, n_out, "guide.surroundings"))?;
        Some(ScenarioIndices {
            n_core,
            n_out,
            n_exit,
            n_gap,
            n_contacts: n_contacts.into_iter().collect::<Option<Vec<f64>>>()?,
        })
    }
}

fn check_guide(g: &Guide, out: &mut FieldErrors) {
    out.keep(check_section(g.section, "guide.section"));
    out.range(
        "guide.attenuation_db_per_m",
        g.attenuation_db_per_m,
        ATTENUATION_DB_PER_M,
    );
}

/// A section's sizes; only the first problem (a taper's end section is taken up only when
/// valid).
fn check_section(section: Section, path: &str) -> Result<(), FieldError> {
    match section {
        Section::Round { diameter_mm } => {
            SECTION_MM.check(&format!("{path}.round.diameter_mm"), diameter_mm)?;
        }
        Section::Rectangular {
            width_mm,
            height_mm,
        } => {
            SECTION_MM.check(&format!("{path}.rectangular.width_mm"), width_mm)?;
            SECTION_MM.check(&format!("{path}.rectangular.height_mm"), height_mm)?;
        }
    }
    Ok(())
}

/// The route's segments, following the section through tapers; the section at the exit face.
fn check_route(entry: Section, route: &[Segment], out: &mut FieldErrors) -> Section {
    if route.is_empty() || route.len() > MAX_SEGMENTS {
        out.push(
            "route",
            format!(
                "must have 1 to {MAX_SEGMENTS} segments, got {}",
                route.len()
            ),
        );
    }
    let mut section = entry;
    for (i, segment) in route.iter().enumerate() {
        match *segment {
            Segment::Straight { length_mm } => {
                let field = format!("route[{i}].straight.length_mm");
                out.range(&field, length_mm, SEGMENT_LENGTH_MM);
            }
            Segment::Bend {
                radius_mm,
                angle_deg,
                turn_deg,
            } => {
                let path = format!("route[{i}].bend");
                check_bend(&path, section, radius_mm, angle_deg, turn_deg, out);
            }
            Segment::Corner {
                angle_deg,
                turn_deg,
                coating,
            } => {
                let path = format!("route[{i}].corner");
                check_corner(&path, section, angle_deg, turn_deg, coating, out);
            }
            Segment::Taper {
                length_mm,
                end_section,
            } => {
                let path = format!("route[{i}].taper");
                out.range(&format!("{path}.length_mm"), length_mm, SEGMENT_LENGTH_MM);
                if let Some(end) = check_taper_end(&path, section, end_section, out) {
                    section = end;
                }
            }
        }
    }
    section
}

fn check_bend(
    path: &str,
    section: Section,
    radius_mm: f64,
    angle_deg: f64,
    turn_deg: f64,
    out: &mut FieldErrors,
) {
    out.range(&format!("{path}.angle_deg"), angle_deg, BEND_ANGLE_DEG);
    out.range(&format!("{path}.turn_deg"), turn_deg, AZIMUTH_DEG);
    let Some(half) = bend_half_size_mm(section, turn_deg) else {
        return;
    };
    // The inner wall must keep a positive radius.
    let radius = Range::open_closed(half, BEND_RADIUS_MAX_MM)
        .unit(" mm")
        .note(" (half the pipe's size across the bend, so that its inner wall keeps a radius)");
    out.range(&format!("{path}.radius_mm"), radius_mm, radius);
    check_rectangular_turn(path, section, turn_deg, out);
}

/// A reflecting corner: its angle, its direction (across the width or the height of a
/// rectangular guide, as for a bend) and its coating's reflectance.
fn check_corner(
    path: &str,
    section: Section,
    angle_deg: f64,
    turn_deg: f64,
    coating: Option<FaceCoating>,
    out: &mut FieldErrors,
) {
    out.range(&format!("{path}.angle_deg"), angle_deg, CORNER_ANGLE_DEG);
    out.range(&format!("{path}.turn_deg"), turn_deg, AZIMUTH_DEG);
    if let Some(c) = coating {
        out.range(
            &format!("{path}.coating.reflectance"),
            c.reflectance,
            CORNER_REFLECTANCE,
        );
    }
    check_rectangular_turn(path, section, turn_deg, out);
}

/// A rectangular guide turns across its width or its height only.
fn check_rectangular_turn(path: &str, section: Section, turn_deg: f64, out: &mut FieldErrors) {
    if matches!(section, Section::Rectangular { .. }) && turn_deg.is_finite() {
        let r = turn_deg.rem_euclid(90.0);
        if r > 1e-9 && 90.0 - r > 1e-9 {
            out.push(
                format!("{path}.turn_deg"),
                format!(
                    "must be 0, 90, 180 or 270 for a rectangular guide (turn across the width or \
                     the height), got {}",
                    show(turn_deg)
                ),
            );
        }
    }
}

/// A taper's end section: the same shape as the guide where it starts, and valid; `None` when
/// it is not (the route then goes on with the section it had).
fn check_taper_end(
    path: &str,
    section: Section,
    end_section: Section,
    out: &mut FieldErrors,
) -> Option<Section> {
    if end_section.kind() != section.kind() {
        out.push(
            format!("{path}.end_section"),
            format!(
                "must be {} like the guide at this point, got {}",
                section.kind(),
                end_section.kind()
            ),
        );
        return None;
    }
    out.keep(check_section(end_section, &format!("{path}.end_section")))?;
    Some(end_section)
}

/// A contact zone (a mount): on a segment, within its length, on a sector of the perimeter.
fn check_contact(k: usize, c: &Contact, entry: Section, route: &[Segment], out: &mut FieldErrors) {
    let mount = if c.name.trim().is_empty() {
        format!("Mount {}", k + 1)
    } else {
        format!("The mount “{}”", c.name.trim())
    };
    let place = c.place();
    let path = format!("guide.contacts[{k}]");
    check_zone_place(
        &path,
        &mount,
        " (where the mount starts)",
        &place,
        entry,
        route,
        out,
    );
}

/// A zone of the wall at `path`, called `label` in messages (`The mount “clip”`): on a
/// segment, within its length, on a sector of the perimeter; `starts` notes the start in the
/// end's range (` (where the mount starts)`). A zone that no longer fits its segment (the
/// segment was shortened, or the zone moved) is told as such — where it starts or ends against
/// where the segment ends — never as a range whose ends cross.
pub(super) fn check_zone_place(
    path: &str,
    label: &str,
    starts: &'static str,
    c: &ZonePlace,
    entry: Section,
    route: &[Segment],
    out: &mut FieldErrors,
) {
    let mount = label;
    match route.get(c.segment) {
        None => out.push(
            format!("{path}.segment"),
            format!(
                "must name a route segment, 0 to {}, got {}",
                route.len().saturating_sub(1),
                c.segment
            ),
        ),
        Some(segment) => {
            let section = route[..c.segment]
                .iter()
                .fold(entry, |section, s| s.section_after(section));
            let length_mm = segment.length_mm(section);
            let end = format!(
                "past the end of its segment (segment {} is {} mm long)",
                c.segment + 1,
                show(libm::round(length_mm * 1000.0) / 1000.0)
            );
            let from_ok = out
                .range(
                    &format!("{path}.from_mm"),
                    c.from_mm,
                    Range::closed(0.0, f64::INFINITY).unit(" mm"),
                )
                .is_some();
            if from_ok && length_mm.is_finite() && c.from_mm >= length_mm {
                out.push(
                    format!("{path}.from_mm"),
                    format!("{mount} starts at {} mm, {end}", show(c.from_mm)),
                );
            }
            if c.to_mm.is_finite() && length_mm.is_finite() && c.to_mm > length_mm {
                out.push(
                    format!("{path}.to_mm"),
                    format!("{mount} ends at {} mm, {end}", show(c.to_mm)),
                );
            } else if from_ok {
                let after_start = Range::open_closed(c.from_mm, f64::INFINITY)
                    .unit(" mm")
                    .note(starts);
                out.range(&format!("{path}.to_mm"), c.to_mm, after_start);
            } else {
                let to = Range::open_closed(0.0, f64::INFINITY).unit(" mm");
                out.range(&format!("{path}.to_mm"), c.to_mm, to);
            }
        }
    }
    let sector_from_deg = out.range(
        &format!("{path}.sector_from_deg"),
        c.sector_from_deg,
        SECTOR_DEG,
    );
    // The end follows the start only when the start is valid: a range whose ends cross
    // (`more than 400° and at most 360°`) says nothing useful.
    let sector_to = match sector_from_deg {
        Some(from) => SECTOR_END_DEG.above(from.max(0.0)),
        None => SECTOR_END_DEG.note(""),
    };
    out.range(&format!("{path}.sector_to_deg"), c.sector_to_deg, sector_to);
}

/// The source; its wavelength when valid. With a pocket of depth `pocket_depth_mm` in the
/// entry face the gap may be negative, less than the depth: the LED then sits inside the pocket.
fn check_source(s: &Source, pocket_depth_mm: Option<f64>, out: &mut FieldErrors) -> Option<f64> {
    let wavelength_nm = out.range(
        "source.wavelength_nm",
        s.wavelength_nm,
        crate::limits::WAVELENGTH_NM,
    );
    let gap = match pocket_depth_mm {
        Some(depth_mm) => crate::limits::Range {
            lo: -depth_mm,
            lo_closed: false,
            ..GAP_MM
                .note(" (below 0 the LED sits inside the entry face's pocket, less deep than it)")
        },
        None => GAP_MM,
    };
    out.range("source.gap_mm", s.gap_mm, gap);
    out.range("source.offset_mm[0]", s.offset_mm[0], OFFSET_MM);
    out.range("source.offset_mm[1]", s.offset_mm[1], OFFSET_MM);
    out.range("source.tilt_deg", s.tilt_deg, TILT_DEG);
    out.range("source.tilt_toward_deg", s.tilt_toward_deg, AZIMUTH_DEG);
    check_emitter(&s.emitter, out);
    match s.flux {
        Some(Flux::Mw(x)) => out.range("source.flux.mw", x, FLUX.unit(" mW")),
        Some(Flux::Lm(x)) => out.range("source.flux.lm", x, FLUX.unit(" lm")),
        None => None,
    };
    wavelength_nm
}

fn check_emitter(emitter: &Emitter, out: &mut FieldErrors) {
    match emitter {
        Emitter::Led { area, pattern } => {
            match *area {
                EmitterArea::Disk { diameter_mm } => {
                    let field = "source.emitter.led.area.disk.diameter_mm";
                    out.range(field, diameter_mm, EMITTER_MM);
                }
                EmitterArea::Square { side_mm } => {
                    let field = "source.emitter.led.area.square.side_mm";
                    out.range(field, side_mm, EMITTER_MM);
                }
                EmitterArea::Rectangle {
                    width_mm,
                    height_mm,
                } => {
                    let field = "source.emitter.led.area.rectangle.width_mm";
                    out.range(field, width_mm, EMITTER_MM);
                    let field = "source.emitter.led.area.rectangle.height_mm";
                    out.range(field, height_mm, EMITTER_MM);
                }
            }
            match pattern {
                Pattern::Lambertian => {}
                Pattern::HalfIntensity { half_angle_deg } => {
                    let field = "source.emitter.led.pattern.half_intensity.half_angle_deg";
                    out.range(field, *half_angle_deg, HALF_INTENSITY_ANGLE_DEG);
                }
                Pattern::Table { points } => {
                    out.keep(check_table(points));
                }
            }
        }
        Emitter::Beam {
            diameter_mm,
            divergence_half_angle_deg,
        } => {
            out.range("source.emitter.beam.diameter_mm", *diameter_mm, EMITTER_MM);
            out.range(
                "source.emitter.beam.divergence_half_angle_deg",
                *divergence_half_angle_deg,
                CONE_HALF_ANGLE_DEG,
            );
        }
    }
}

/// An intensity table: its size, angles ascending from 0, intensities in range, some power at
/// the sampler's resolution; only the first problem.
fn check_table(points: &[[f64; 2]]) -> Result<(), FieldError> {
    let p = "source.emitter.led.pattern.table.points";
    if !TABLE_ROWS.contains(points.len() as u64) {
        return Err(FieldError::new(
            p,
            format!(
                "needs {} to {} [angle_deg, relative_intensity] pairs, got {}",
                TABLE_ROWS.min,
                TABLE_ROWS.max,
                points.len()
            ),
        ));
    }
    if points[0][0] != 0.0 {
        return Err(FieldError::new(
            format!("{p}[0][0]"),
            format!(
                "must be 0 (the table starts on the axis), got {}",
                show(points[0][0])
            ),
        ));
    }
    for (i, [angle_deg, intensity]) in points.iter().enumerate() {
        if i > 0 {
            let after_previous = TABLE_ANGLE_DEG.above(points[i - 1][0]);
            after_previous.check(&format!("{p}[{i}][0]"), *angle_deg)?;
        }
        TABLE_INTENSITY.check(&format!("{p}[{i}][1]"), *intensity)?;
    }
    if points.iter().all(|q| q[1] == 0.0) {
        return Err(FieldError::new(p, "must have some non-zero intensity"));
    }
    if !table_has_power(points) {
        return Err(FieldError::new(
            p,
            "holds no power at the sampling resolution (about 0.044°): widen the pattern",
        ));
    }
    Ok(())
}

/// A receiver: a disk or a window, at a distance.
fn check_receiver(r: &Receiver, out: &mut FieldErrors) {
    match (r.diameter_mm, r.width_mm, r.height_mm) {
        (Some(d), None, None) => {
            out.range("receiver.diameter_mm", d, RECEIVER_MM);
        }
        (None, Some(w), Some(h)) => {
            out.range("receiver.width_mm", w, RECEIVER_MM);
            out.range("receiver.height_mm", h, RECEIVER_MM);
        }
        _ => out.push(
            "receiver",
            "needs either diameter_mm (a round detector) or width_mm and height_mm (a window), \
             not both",
        ),
    }
    out.range("receiver.distance_mm", r.distance_mm, RECEIVER_DISTANCE_MM);
}

fn check_trace(t: &TraceSettings, out: &mut FieldErrors) {
    out.count("trace.rays", t.rays, RAYS);
    out.count(
        "trace.seed",
        t.seed,
        crate::limits::Count::new(0, MAX_WHOLE),
    );
    out.count(
        "trace.max_interactions",
        t.max_interactions.into(),
        MAX_INTERACTIONS,
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A corner's problems: its angle, a rectangular guide's turn direction, its coating, and a
    /// mount past the end of a corner (whose length is its two legs).
    #[test]
    fn corner_problems_name_the_field_and_the_range() {
        let text = r#"{
            "version": 1,
            "guide": {
                "section": { "rectangular": { "width_mm": 3, "height_mm": 2 } },
                "material": { "library": "pmma" }, "surroundings": { "library": "air" },
                "contacts": [ { "segment": 1, "from_mm": 1, "to_mm": 4, "medium": { "library": "pdms" } } ]
            },
            "route": [
                { "straight": { "length_mm": 3 } },
                { "corner": { "angle_deg": 90, "turn_deg": 0 } },
                { "corner": { "angle_deg": 170, "turn_deg": 45, "coating": { "reflectance": 1.2 } } },
                { "corner": { "angle_deg": 10 } }
            ],
            "source": {
                "emitter": { "led": { "area": { "square": { "side_mm": 0.5 } }, "pattern": "lambertian" } },
                "wavelength_nm": 550, "gap_mm": 0.2
            }
        }"#;
        let scenario = Scenario::from_json(text).unwrap();
        let messages: Vec<String> = scenario
            .check()
            .unwrap_err()
            .iter()
            .map(ToString::to_string)
            .collect();
        let expected = [
            "route[2].corner.angle_deg must be at most 165°, got 170",
            "route[2].corner.coating.reflectance must be at most 1, got 1.2",
            "route[2].corner.turn_deg must be 0, 90, 180 or 270 for a rectangular guide (turn across the width or the height), got 45",
            "route[3].corner.angle_deg must be at least 15°, got 10",
            // A right angle across the 3 mm width: legs of 1.5 mm each.
            "guide.contacts[0].to_mm: Mount 1 ends at 4 mm, past the end of its segment (segment 2 is 3 mm long)",
        ];
        assert_eq!(messages, expected);
    }

    /// Every kind of problem at once: all are listed, with their messages, in document order
    /// (the messages and order of the base version, which the page and the command line show).
    #[test]
    fn problems_are_listed_in_document_order() {
        let text = r#"{
            "version": 2,
            "guide": {
                "section": { "rectangular": { "width_mm": 4, "height_mm": -2 } },
                "material": { "library": "pmma" }, "surroundings": { "library": "air" },
                "attenuation_db_per_m": -1,
                "contacts": [
                    { "segment": 5, "from_mm": 0, "to_mm": 1, "sector_from_deg": 400,
                      "sector_to_deg": 10, "medium": { "library": "pdms" } },
                    { "segment": 0, "from_mm": 2, "to_mm": 1, "medium": { "library": "pdms" } }
                ]
            },
            "route": [
                { "straight": { "length_mm": 3 } },
                { "bend": { "radius_mm": 1, "angle_deg": 200, "turn_deg": 45 } },
                { "taper": { "length_mm": 0, "end_section": { "round": { "diameter_mm": 2 } } } }
            ],
            "source": {
                "emitter": { "led": { "area": { "square": { "side_mm": 0 } },
                    "pattern": { "table": { "points": [[0, 1], [50, 1], [40, 1]] } } } },
                "wavelength_nm": 100, "gap_mm": -1, "tilt_deg": 90, "flux": { "lm": 0 }
            },
            "receiver": { "diameter_mm": 1, "width_mm": 2, "distance_mm": -1 },
            "trace": { "rays": 0, "max_interactions": 0 }
        }"#;
        let scenario = Scenario::from_json(text).unwrap();
        let messages: Vec<String> = scenario
            .check()
            .unwrap_err()
            .iter()
            .map(ToString::to_string)
            .collect();
        let expected = [
            "version must be 1 (this version of tirtrace), got 2",
            "guide.section.rectangular.height_mm must be at least 0.001 mm, got -2",
            "guide.attenuation_db_per_m must be at least 0 dB/m, got -1",
            "route[1].bend.angle_deg must be at most 180°, got 200",
            "route[1].bend.radius_mm must be more than 2 mm (half the pipe's size across the bend, so that its inner wall keeps a radius), got 1",
            "route[1].bend.turn_deg must be 0, 90, 180 or 270 for a rectangular guide (turn across the width or the height), got 45",
            "route[2].taper.length_mm must be at least 0.001 mm, got 0",
            "route[2].taper.end_section must be rectangular like the guide at this point, got round",
            "guide.contacts[0].segment must name a route segment, 0 to 2, got 5",
            // The end of the sector is not held to a start that is itself refused.
            "guide.contacts[0].sector_from_deg must be less than 360°, got 400",
            "guide.contacts[1].to_mm must be more than 2 mm (where the mount starts), got 1",
            "source.wavelength_nm must be at least 200 nm, got 100",
            "source.gap_mm must be at least 0 mm, got -1",
            "source.tilt_deg must be less than 90°, got 90",
            "source.emitter.led.area.square.side_mm must be at least 0.001 mm, got 0",
            "source.emitter.led.pattern.table.points[2][0] must be more than 50° (the previous row's angle: angles ascend), got 40",
            "source.flux.lm must be more than 0 lm, got 0",
            "receiver needs either diameter_mm (a round detector) or width_mm and height_mm (a window), not both",
            "receiver.distance_mm must be at least 0 mm, got -1",
            "trace.rays must be a whole number from 1 to 10⁹, got 0",
            "trace.max_interactions must be a whole number from 1 to 10⁷, got 0",
        ];
        assert_eq!(messages, expected);
    }

    /// A mount that no longer fits its segment says where it starts or ends against the
    /// segment's end, under its own name, never a range whose ends cross ("> 6 mm and ≤ 1.5
    /// mm").
    #[test]
    fn a_mount_past_its_segment_says_so() {
        let text = r#"{
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": 2.5 } },
                       "material": { "library": "pmma" }, "surroundings": { "library": "air" },
                       "contacts": [
                { "name": "clip", "segment": 0, "from_mm": 6, "to_mm": 8,
                  "medium": { "library": "pdms" } },
                { "segment": 0, "from_mm": 1, "to_mm": 8, "medium": { "library": "pdms" } } ] },
            "route": [{ "straight": { "length_mm": 1.5 } }],
            "source": { "emitter": { "beam": { "diameter_mm": 2, "divergence_half_angle_deg": 8 } },
                        "wavelength_nm": 550 }
        }"#;
        let errors = Scenario::from_json(text).unwrap().check().unwrap_err();
        let messages: Vec<String> = errors.iter().map(ToString::to_string).collect();
        assert_eq!(
            messages,
            [
                "guide.contacts[0].from_mm: The mount “clip” starts at 6 mm, past the end of its \
                 segment (segment 1 is 1.5 mm long)",
                "guide.contacts[0].to_mm: The mount “clip” ends at 8 mm, past the end of its \
                 segment (segment 1 is 1.5 mm long)",
                "guide.contacts[1].to_mm: Mount 2 ends at 8 mm, past the end of its segment \
                 (segment 1 is 1.5 mm long)",
            ]
        );
    }

    /// The surroundings must have the lower index, or nothing is guided.
    #[test]
    fn surroundings_of_higher_index_are_refused() {
        let text = r#"{
            "version": 1,
            "guide": { "section": { "round": { "diameter_mm": 3 } },
                       "material": { "library": "pdms" },
                       "surroundings": { "custom": { "model": "constant", "n": 1.6 } } },
            "route": [{ "straight": { "length_mm": 6 } }],
            "source": { "emitter": { "beam": { "diameter_mm": 2.5, "divergence_half_angle_deg": 8 } },
                        "wavelength_nm": 550 }
        }"#;
        let errors = Scenario::from_json(text).unwrap().check().unwrap_err();
        assert_eq!(
            errors.iter().map(ToString::to_string).collect::<Vec<_>>(),
            ["guide.surroundings must have a lower index than the guide for light to be guided: \
              surroundings n = 1.6000, guide n = 1.4336"]
        );
    }
}
