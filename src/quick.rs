//! The quick-look design document and the closed-form figures computed from it.
//!
//! This is the state of the first page and the input of `tirtrace figures`: one guide of round
//! or square section, its surroundings, the medium in front of its entry face, a launch cone and
//! one circular bend.

use schemars::JsonSchema;
use serde::{Deserialize, Serialize};

use crate::error::{FieldError, TirError};
use crate::guide;
use crate::index::library::MaterialChoice;
use crate::limits::{self, FieldErrors};

/// Current version of the quick-look document.
pub const QUICK_VERSION: u32 = 1;

/// The quick-look design document (JSON field names are part of the file format).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct QuickDesign {
    /// Document version, currently 1.
    #[serde(deserialize_with = "crate::scenario::whole_version")]
    #[schemars(transform = crate::schema::version(QUICK_VERSION))]
    pub version: u32,
    /// Guide material.
    pub material: MaterialChoice,
    /// Vacuum wavelength of the light, nm.
    #[schemars(transform = crate::schema::within(limits::WAVELENGTH_NM))]
    pub wavelength_nm: f64,
    /// Medium around the guide (air, water, a cladding…).
    pub surroundings: MaterialChoice,
    /// Medium between the source and the entry face.
    pub launch_medium: MaterialChoice,
    /// Guide diameter (or thickness across the bend), mm.
    #[schemars(transform = crate::schema::within(limits::SECTION_MM))]
    pub diameter_mm: f64,
    /// Half-angle of the launch in the launch medium, degrees: the edge of a hard cone, or an
    /// LED's half-intensity angle, as `launch_angle_is` says.
    #[schemars(transform = crate::schema::within(limits::CONE_HALF_ANGLE_DEG))]
    pub launch_half_angle_deg: f64,
    /// What `launch_half_angle_deg` is (default: the edge of a hard cone).
    #[serde(default)]
    pub launch_angle_is: LaunchAngle,
    /// Inner radius of the bend, mm.
    #[schemars(transform = crate::schema::within(limits::BEND_INNER_RADIUS_MM))]
    pub bend_inner_radius_mm: f64,
    /// Angle the bend turns through, degrees.
    #[schemars(transform = crate::schema::within(limits::BEND_ANGLE_DEG))]
    pub bend_angle_deg: f64,
}

/// What the quick look's launch angle means.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum LaunchAngle {
    /// The edge of a hard cone: no light beyond it (a lens, an aperture, a fibre's output).
    #[default]
    ConeEdge,
    /// An LED's half-intensity angle (a cos^m pattern): light goes on beyond it, dimmer, up to
    /// 90°; the figures are for the rays inside it.
    HalfIntensity,
}

impl Default for QuickDesign {
    /// An invented starting point: a 3 mm acrylic pipe carrying a status LED's light round a 90°
    /// bend to a front panel.
    fn default() -> Self {
        QuickDesign {
            version: QUICK_VERSION,
            material: MaterialChoice::library("pmma"),
            wavelength_nm: 590.0,
            surroundings: MaterialChoice::library("air"),
            launch_medium: MaterialChoice::library("air"),
            diameter_mm: 3.0,
            launch_half_angle_deg: 60.0,
            launch_angle_is: LaunchAngle::ConeEdge,
            bend_inner_radius_mm: 6.0,
            bend_angle_deg: 90.0,
        }
    }
}

/// Closed-form figures of a quick-look design. Angles in degrees for display.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct QuickFigures {
    /// Guide index at the wavelength, relative to air.
    pub n_core: f64,
    /// Surroundings' index.
    pub n_surroundings: f64,
    /// Launch medium's index.
    pub n_launch: f64,
    /// Critical angle at the side wall, measured from the wall normal.
    pub critical_angle_deg: f64,
    /// √(n_core² − n_surroundings²).
    pub numerical_aperture: f64,
    /// Acceptance half-angle in the launch medium.
    pub acceptance_half_angle_deg: f64,
    /// True when every ray from the launch medium is accepted (NA ≥ n_launch).
    pub acceptance_saturated: bool,
    /// Δ = (n_core² − n_out²)/(2 n_core²).
    pub relative_index_difference: f64,
    /// Fresnel reflection loss at the entry face at normal incidence (fraction).
    pub entry_fresnel_loss: f64,
    /// Largest guided ray angle to the axis inside the guide for this launch.
    pub max_internal_angle_deg: f64,
    /// Leak-free inner radius over diameter, `None` when no radius is leak-free.
    pub leak_free_ratio: Option<f64>,
    /// Leak-free inner radius, mm.
    pub leak_free_inner_radius_mm: Option<f64>,
    /// Plain-language explanation of the leak-free figure.
    pub leak_free_note: String,
    /// The drawn bend's inner radius over diameter.
    pub bend_ratio: f64,
    /// True when the drawn bend is tighter than the leak-free radius (or none exists).
    pub bend_leaks: bool,
    /// Share of a small Lambertian source's power inside the acceptance cone, (NA/n₀)² capped
    /// at 1, Fresnel loss excluded.
    pub lambertian_coupling: f64,
    /// Share of the source's power inside the launch cone the figures are for: 1 for a hard
    /// cone; for a half-intensity angle θ½ of a cos^m pattern, 1 − cos^(m+1) θ½ with
    /// m = −ln 2 / ln cos θ½ (so 0.75 for a Lambertian LED's 60°): the rest leaves at larger
    /// angles, which the leak-free radius does not cover.
    pub launch_power_in_cone: f64,
}

/// Indices of a validated design, relative to air.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Indices {
    /// Guide.
    pub n_core: f64,
    /// Surroundings.
    pub n_out: f64,
    /// Launch medium.
    pub n_launch: f64,
}

impl QuickDesign {
    /// Read a design from JSON text; unknown fields and wrong types are errors.
    pub fn from_json(text: &str) -> Result<Self, TirError> {
        crate::reading::read_document(text).map_err(|u| TirError::Parse(u.sentence()))
    }

    /// Every problem with the design, each naming its field and the allowed range. Empty when
    /// the design is valid.
    pub fn problems(&self) -> Vec<FieldError> {
        match self.check() {
            Ok(_) => Vec::new(),
            Err(v) => v,
        }
    }

    /// Validate and resolve the indices; on failure, every field error found, in document order.
    pub fn check(&self) -> Result<Indices, Vec<FieldError>> {
        let mut out = FieldErrors::default();
        out.version(self.version, QUICK_VERSION);
        let wl = out.range("wavelength_nm", self.wavelength_nm, limits::WAVELENGTH_NM);
        out.range("diameter_mm", self.diameter_mm, limits::SECTION_MM);
        let launch = match self.launch_angle_is {
            LaunchAngle::ConeEdge => limits::CONE_HALF_ANGLE_DEG,
            LaunchAngle::HalfIntensity => limits::HALF_INTENSITY_ANGLE_DEG,
        };
        out.range("launch_half_angle_deg", self.launch_half_angle_deg, launch);
        out.range(
            "bend_inner_radius_mm",
            self.bend_inner_radius_mm,
            limits::BEND_INNER_RADIUS_MM,
        );
        out.range(
            "bend_angle_deg",
            self.bend_angle_deg,
            limits::BEND_ANGLE_DEG,
        );
        let indices = wl.and_then(|wl| self.indices_at(wl, &mut out));
        out.verdict(indices)
    }

    /// Every medium's index at the wavelength, and whether the surroundings let the guide guide.
    fn indices_at(&self, wavelength_nm: f64, out: &mut FieldErrors) -> Option<Indices> {
        let wl = wavelength_nm;
        let n_core = out.keep(self.material.n_rel_air(wl, "material"));
        let n_out = out.keep(self.surroundings.n_rel_air(wl, "surroundings"));
        let n_launch = out.keep(self.launch_medium.n_rel_air(wl, "launch_medium"));
        let (n_core, n_out, n_launch) = (n_core?, n_out?, n_launch?);
        out.keep(guide::check_guiding(n_core, n_out, "surroundings"))?;
        Some(Indices {
            n_core,
            n_out,
            n_launch,
        })
    }

    /// The closed-form figures, or the first problem found.
    pub fn figures(&self) -> Result<QuickFigures, TirError> {
        let ix = self.check().map_err(|mut v| TirError::Field(v.remove(0)))?;
        let Indices {
            n_core,
            n_out,
            n_launch,
        } = ix;
        let chain = guide::launch_chain(
            n_core,
            n_out,
            n_launch,
            self.launch_half_angle_deg.to_radians(),
        );
        let ratio = chain.leak_free_ratio;
        let bend_ratio = self.bend_inner_radius_mm / self.diameter_mm;
        let theta_max_deg = chain.max_internal_angle_rad.to_degrees();
        let mut leak_free_note = match ratio {
            Some(_) => format!(
                "every meridional and skew ray up to {theta_max_deg:.1}° to the axis stays \
                 totally reflected through the bend"
            ),
            None => guide::no_leak_free_radius_note(theta_max_deg),
        };
        if self.launch_angle_is == LaunchAngle::HalfIntensity {
            leak_free_note.push_str(
                "; this is for the rays inside the LED's half-intensity angle: the LED's \
                 dimmer light beyond it enters at larger angles and may leak",
            );
        }
        Ok(QuickFigures {
            n_core,
            n_surroundings: n_out,
            n_launch,
            critical_angle_deg: chain.critical_angle_rad.to_degrees(),
            numerical_aperture: chain.numerical_aperture,
            acceptance_half_angle_deg: chain.acceptance_half_angle_rad.to_degrees(),
            acceptance_saturated: chain.acceptance_saturated,
            relative_index_difference: guide::relative_index_difference(n_core, n_out),
            entry_fresnel_loss: chain.entry_fresnel_loss,
            max_internal_angle_deg: theta_max_deg,
            leak_free_ratio: ratio,
            leak_free_inner_radius_mm: ratio.map(|r| r * self.diameter_mm),
            leak_free_note,
            bend_ratio,
            bend_leaks: ratio.is_none_or(|r| bend_ratio < r),
            lambertian_coupling: guide::lambertian_fraction_within(chain.acceptance_half_angle_rad),
            launch_power_in_cone: match self.launch_angle_is {
                LaunchAngle::ConeEdge => 1.0,
                LaunchAngle::HalfIntensity => {
                    let half = self.launch_half_angle_deg.to_radians();
                    guide::cos_power_fraction_within(guide::cos_power_exponent(half), half)
                }
            },
        })
    }
}

/// The quick look of one bend of a scenario, as its form can show it: the pipe's material (a
/// custom model as its constant index at the wavelength), the wavelength, the surroundings (air
/// or water by name, anything else by its index there), the gap medium as the launch medium (air
/// by name, anything else by its index), the section's size across the bend where it is, the
/// bend's inner radius (centre-line radius minus half that size) and angle, and the launch: an
/// LED's half-intensity angle (60° for a Lambertian LED), a hard cone of 90° for an LED given
/// by a table, a beam's divergence plus its tilt as a hard cone.
///
/// The quick look sees one bend of a round pipe from its own launch: it leaves out the bends and
/// tapers before this one, which can steepen the rays, and the LED's tilt. `segment` must be a
/// bend of a valid scenario; otherwise the problems found.
pub fn for_bend(
    scenario: &crate::scenario::Scenario,
    segment: usize,
) -> Result<QuickDesign, Vec<FieldError>> {
    use crate::scenario::{Emitter, Pattern};
    let figures = crate::check::figures(scenario)?;
    let Some(bend) = figures.bends.iter().find(|b| b.segment == segment) else {
        return Err(vec![FieldError::new(
            "segment",
            format!("must be a bend of the route, got segment {}", segment + 1),
        )]);
    };
    let by_name_or_index = |m: &MaterialChoice, n: f64, names: &[&str]| match m {
        MaterialChoice::Library(id) if names.contains(&id.as_str()) => m.clone(),
        _ => MaterialChoice::constant(n),
    };
    let material = match &scenario.guide.material {
        MaterialChoice::Library(_) => scenario.guide.material.clone(),
        MaterialChoice::Custom(_) => MaterialChoice::constant(figures.n_core),
    };
    let (launch_angle_is, launch_half_angle_deg) = match &scenario.source.emitter {
        Emitter::Led { pattern, .. } => match pattern {
            Pattern::Lambertian => (LaunchAngle::HalfIntensity, 60.0),
            Pattern::HalfIntensity { half_angle_deg } => {
                (LaunchAngle::HalfIntensity, *half_angle_deg)
            }
            Pattern::Table { .. } => (LaunchAngle::ConeEdge, 90.0),
        },
        Emitter::Beam { .. } => (LaunchAngle::ConeEdge, figures.launch_half_angle_in_gap_deg),
    };
    Ok(QuickDesign {
        version: QUICK_VERSION,
        material,
        wavelength_nm: figures.wavelength_nm,
        surroundings: by_name_or_index(
            &scenario.guide.surroundings,
            figures.n_surroundings,
            &["air", "water"],
        ),
        launch_medium: by_name_or_index(&scenario.source.gap_medium, figures.n_gap, &["air"]),
        diameter_mm: bend.size_across_mm,
        launch_half_angle_deg,
        launch_angle_is,
        bend_inner_radius_mm: bend.inner_radius_mm,
        bend_angle_deg: bend.angle_deg,
    })
}
