//! Closed-form figures of a whole scenario, without tracing: the indices at the source's
//! wavelength, critical angle, numerical aperture, acceptance, entry Fresnel loss, the launch the
//! source produces, the largest internal ray angle, and for every bend its radii and whether it is
//! tighter than the leak-free radius for that launch.
//!
//! This is what `tirtrace check` prints. Everything here is a pure function of the scenario;
//! angles are radians inside and degrees in the serialised figures, indices are relative to air.
//!
//! Formulas: the critical angle, NA, acceptance, entry Fresnel loss, largest internal angle and
//! leak-free ratio are [`guide::launch_chain`]'s (formulas and `docs/REFERENCES.md` sections on
//! [`guide::LaunchChain`]), with the gap medium in front of the entry face; each bend's R_in/d
//! is set against that ratio, R_in/d ≥ n_out / (n_core cos θmax − n_out) (§4).

use serde::Serialize;

pub use crate::corner_check::{corner_figures, CornerFigures, CornerVerdict};
use crate::error::FieldError;
use crate::guide::{self, LaunchChain};
use crate::scenario::{
    bend_half_size_mm, Emitter, Scenario, ScenarioIndices, Section, Segment, Source,
};

/// Whether a bend keeps every launched ray totally reflected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BendVerdict {
    /// R_in/d is at least the leak-free ratio: no ray of the launch leaks at this bend on its way
    /// to the exit face (by the launch's largest internal angle; see
    /// [`ScenarioFigures::bend_note`]). Light the exit face turns back passes the bend again the
    /// other way, steeper than the launch, and may leak there ([`BendFigures::note`] says so).
    Ok,
    /// The bend is tighter than the leak-free radius, or no leak-free radius exists.
    Leaks,
}

/// Closed-form figures of one bend of the route.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BendFigures {
    /// Index of the bend in the route (0 is the first segment).
    pub segment: usize,
    /// Angle turned through, degrees.
    pub angle_deg: f64,
    /// Direction of the turn about the axis from the section's width axis, degrees.
    pub turn_deg: f64,
    /// Radius of the guide's centre line, mm.
    pub centre_radius_mm: f64,
    /// Radius of the inner wall: centre-line radius minus half the size across the bend, mm.
    pub inner_radius_mm: f64,
    /// Size of the section across the bend (diameter, width or height) where the bend is, mm.
    pub size_across_mm: f64,
    /// R_in/d: inner radius over the size across the bend.
    pub inner_radius_over_size: f64,
    /// Smallest leak-free R_in/d for the launch; `None` when no leak-free radius exists.
    pub leak_free_inner_radius_over_size: Option<f64>,
    /// Smallest leak-free inner radius for the launch, mm; `None` when none exists.
    pub leak_free_inner_radius_mm: Option<f64>,
    /// `ok` or `leaks`.
    pub verdict: BendVerdict,
    /// The verdict in words.
    pub note: String,
}

/// Closed-form figures of a whole scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioFigures {
    /// The scenario's label.
    pub name: String,
    /// Vacuum wavelength of the source, nm.
    pub wavelength_nm: f64,
    /// Guide index at the wavelength, relative to air.
    pub n_core: f64,
    /// Surroundings' index.
    pub n_surroundings: f64,
    /// Index of the medium beyond the exit face (the surroundings unless the guide names an
    /// exit medium).
    pub n_exit: f64,
    /// Index of the gap medium between source and entry face.
    pub n_gap: f64,
    /// Critical angle at the side wall, from the wall normal, degrees.
    pub critical_angle_deg: f64,
    /// √(n_core² − n_surroundings²).
    pub numerical_aperture: f64,
    /// Acceptance half-angle in the gap medium, degrees (90 when saturated).
    pub acceptance_half_angle_in_gap_deg: f64,
    /// True when every ray from the gap medium is accepted (NA ≥ n_gap).
    pub acceptance_saturated: bool,
    /// Fresnel reflection loss at the entry face at normal incidence (fraction).
    pub entry_fresnel_loss: f64,
    /// Largest angle to the guide axis the source sends into the gap medium, degrees.
    pub launch_half_angle_in_gap_deg: f64,
    /// Largest guided ray angle to the axis inside the guide for this launch, degrees.
    pub max_internal_angle_deg: f64,
    /// Every bend of the route, in route order.
    pub bends: Vec<BendFigures>,
    /// What the bend figures assume.
    pub bend_note: String,
    /// Every reflecting corner of the route, in route order (left out when there is none).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub corners: Vec<CornerFigures>,
}

/// The largest angle to the guide axis at which the source sends light into the gap medium, rad.
///
/// An LED pattern (Lambertian, cos^m or a table) emits up to 90° from its own axis, so whatever
/// its tilt it reaches 90° to the guide axis: π/2. A beam fills a cone of its divergence
/// half-angle about its axis, which is tilted from the guide axis by `tilt_deg`, so its rays reach
/// divergence + tilt, capped at π/2.
pub fn launch_half_angle_rad(source: &Source) -> f64 {
    let half_pi = std::f64::consts::FRAC_PI_2;
    match &source.emitter {
        Emitter::Led { .. } => half_pi,
        Emitter::Beam {
            divergence_half_angle_deg,
            ..
        } => (divergence_half_angle_deg + source.tilt_deg)
            .to_radians()
            .min(half_pi),
    }
}

/// The figures of every bend of `route`, starting from the entry section `start` and following
/// the section through tapers, for the launch `launch` (its largest internal angle θmax and its
/// leak-free ratio); `exit_turns_back` says whether the exit face reflects any light back into
/// the guide (any exit medium whose index differs from the guide's).
///
/// Inner radius R_in = R_centre − d/2 with d the section's size across the bend there
/// ([`bend_half_size_mm`]); the leak-free ratio is R_in/d ≥ n_out / (n_core cos θmax − n_out)
/// ([`guide::leak_free_bend_ratio`], `docs/REFERENCES.md` §4). The criterion holds for the launch
/// on its way to the exit face. A bend steepens the rays after it, so the exit face may turn some
/// back by total reflection, and Fresnel-reflects a little of the rest; that light meets the bend
/// again from the other side with angles the launch never had, so a leak-free bend's note says it
/// may leak there (`docs/REFERENCES.md` §4, caution).
pub fn bend_figures(
    start: Section,
    route: &[Segment],
    launch: &LaunchChain,
    exit_turns_back: bool,
) -> Vec<BendFigures> {
    let leak_free = launch.leak_free_ratio;
    let theta_max_deg = launch.max_internal_angle_rad.to_degrees();
    let mut section = start;
    let mut out = Vec::new();
    for (i, seg) in route.iter().enumerate() {
        match *seg {
            Segment::Straight { .. } | Segment::Corner { .. } => {}
            Segment::Taper { end_section, .. } => section = end_section,
            Segment::Bend {
                radius_mm,
                angle_deg,
                turn_deg,
            } => {
                let half = bend_half_size_mm(section, turn_deg).unwrap_or(f64::NAN);
                let size = 2.0 * half;
                let inner = radius_mm - half;
                let ratio = inner / size;
                let ok = leak_free.is_some_and(|r| ratio >= r);
                let note = match leak_free {
                    None => guide::no_leak_free_radius_note(theta_max_deg),
                    Some(r) if ok && exit_turns_back => format!(
                        "leak-free on the way to the exit face: R_in/d = {ratio:.3} ≥ {r:.3}, \
                         every ray up to {theta_max_deg:.1}° to the axis stays totally \
                         reflected; but light the exit face turns back (by total reflection or \
                         Fresnel reflection) passes this bend again in the other direction, \
                         steeper than the launch, and may leak here: the trace shows how much"
                    ),
                    Some(r) if ok => format!(
                        "leak-free: R_in/d = {ratio:.3} ≥ {r:.3}, every ray up to \
                         {theta_max_deg:.1}° to the axis stays totally reflected (the exit face \
                         is index-matched and turns no light back)"
                    ),
                    Some(r) => format!(
                        "leaks: R_in/d = {ratio:.3} < {r:.3}; an inner radius of at least \
                         {:.3} mm keeps every ray up to {theta_max_deg:.1}° to the axis",
                        r * size
                    ),
                };
                out.push(BendFigures {
                    segment: i,
                    angle_deg,
                    turn_deg,
                    centre_radius_mm: radius_mm,
                    inner_radius_mm: inner,
                    size_across_mm: size,
                    inner_radius_over_size: ratio,
                    leak_free_inner_radius_over_size: leak_free,
                    leak_free_inner_radius_mm: leak_free.map(|r| r * size),
                    verdict: if ok {
                        BendVerdict::Ok
                    } else {
                        BendVerdict::Leaks
                    },
                    note,
                });
            }
        }
    }
    out
}

/// The figures of a scenario whose indices are already resolved (see [`Scenario::check`]).
/// Requires `n_surroundings < n_core`, which [`Scenario::check`] guarantees.
pub fn figures_with_indices(scenario: &Scenario, ix: &ScenarioIndices) -> ScenarioFigures {
    let (n_core, n_out, n_gap) = (ix.n_core, ix.n_out, ix.n_gap);
    let launch = launch_half_angle_rad(&scenario.source);
    let chain = guide::launch_chain(n_core, n_out, n_gap, launch);
    ScenarioFigures {
        name: scenario.name.clone(),
        wavelength_nm: scenario.source.wavelength_nm,
        n_core,
        n_surroundings: n_out,
        n_exit: ix.n_exit,
        n_gap,
        critical_angle_deg: chain.critical_angle_rad.to_degrees(),
        numerical_aperture: chain.numerical_aperture,
        acceptance_half_angle_in_gap_deg: chain.acceptance_half_angle_rad.to_degrees(),
        acceptance_saturated: chain.acceptance_saturated,
        entry_fresnel_loss: chain.entry_fresnel_loss,
        launch_half_angle_in_gap_deg: launch.to_degrees(),
        max_internal_angle_deg: chain.max_internal_angle_rad.to_degrees(),
        bends: bend_figures(
            scenario.guide.section,
            &scenario.route,
            &chain,
            ix.n_exit != n_core,
        ),
        bend_note: "Bend figures use the largest internal angle of the launch at the entry \
                    face; a narrowing taper or an earlier bend raises ray angles, so a later \
                    bend may leak although marked as not leaking. A bend also steepens the \
                    rays after it, so the exit face may turn some of them back by total \
                    reflection (and a few more by Fresnel reflection) even when no bend leaks; \
                    that light passes the bends again in the other direction and may leak at \
                    one marked as not leaking. The trace reports how much light the exit face \
                    turns back and where it ends."
            .to_string(),
        corners: corner_figures(&scenario.route, &chain),
    }
}

/// Validate a scenario and compute its closed-form figures; on failure, every problem found,
/// each naming its field path and allowed range.
pub fn figures(scenario: &Scenario) -> Result<ScenarioFigures, Vec<FieldError>> {
    let ix = scenario.check()?;
    Ok(figures_with_indices(scenario, &ix))
}
