//! Closed-form figures of a scenario's reflecting corners (what `tirtrace check` and the page
//! show beside the bends): whether the launch is totally reflected at the corner's face.
//!
//! Derivation (`docs/REFERENCES.md` §9). A corner turning by θ has a flat face bisecting the turn;
//! its outward normal m makes the angle φ = 90° − θ/2 with the incoming axis t (the face takes t
//! to t' by mirror reflection, so m ∥ t − t' and t·m = sin(θ/2)). A ray whose direction is at most
//! θmax from the axis lies in the cone of half-angle θmax about t; its angle to m, the incidence
//! at the face, therefore lies in [φ − θmax, φ + θmax], and both ends are reached by the rays in
//! the plane of t and m (the turn plane: the meridional rays there). Skew rays and meridional rays
//! in other planes lie inside that range, so the bound holds for every ray of the cone, not only
//! the meridional ones. Every ray meeting the face is totally reflected when the smallest
//! incidence exceeds the critical angle against the surroundings (Snell's law, `docs/REFERENCES.md`
//! §2):
//!
//! ```text
//! φ − θmax ≥ θc,   i.e.   90° − θ/2 − θmax ≥ asin(n_out / n_core).
//! ```
//!
//! A collimated launch (θmax = 0) at a right-angle corner in PMMA in air: 45° ≥ 42.2°, all
//! totally reflected. Below the critical angle the face reflects by Fresnel (unpolarised) and
//! lets the rest through: that is the corner's leak. A coated face reflects its reflectance R at
//! any incidence.
//!
//! What this leaves out: θmax is the launch's largest internal angle at the entry face (a
//! narrowing taper or a bend before the corner raises it, as for the bends); and a ray angled
//! towards the turn near the inner side can pass the face's inner end and cross straight into the
//! outgoing leg, meeting that leg's outer wall at incidence near 90° − θ (square on for a right
//! angle), where it mostly leaks. The trace counts both.

use serde::Serialize;

use crate::guide::LaunchChain;
use crate::scenario::Segment;

/// Whether a corner's face keeps the launch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CornerVerdict {
    /// Every ray of the launch meeting the bare face is totally reflected.
    Ok,
    /// Some rays of the launch meet the bare face below the critical angle.
    Leaks,
    /// The face is coated: it reflects its reflectance at any incidence.
    Coated,
}

/// Closed-form figures of one reflecting corner of the route.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CornerFigures {
    /// Index of the corner in the route (0 is the first segment).
    pub segment: usize,
    /// Angle turned through, degrees.
    pub angle_deg: f64,
    /// Direction of the turn about the axis from the section's width axis, degrees.
    pub turn_deg: f64,
    /// Incidence at the face of a ray along the axis, 90° − θ/2, degrees.
    pub face_incidence_deg: f64,
    /// Smallest incidence at the face for the launch, φ − θmax (at least 0), degrees.
    pub smallest_incidence_deg: f64,
    /// Largest incidence at the face for the launch, φ + θmax, degrees.
    pub largest_incidence_deg: f64,
    /// Critical angle against the surroundings, degrees.
    pub critical_angle_deg: f64,
    /// The coating's reflectance, when the face is coated.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coating_reflectance: Option<f64>,
    /// `ok`, `leaks` or `coated`.
    pub verdict: CornerVerdict,
    /// The verdict in words.
    pub note: String,
}

/// The incidence at the face of a ray along the axis for a corner turning by `angle_deg`:
/// φ = 90° − θ/2, degrees.
pub fn face_incidence_deg(angle_deg: f64) -> f64 {
    90.0 - 0.5 * angle_deg
}

/// Whether every ray within `max_internal_angle_deg` of the axis is totally reflected at the face
/// of a corner turning by `angle_deg`, for the critical angle `critical_angle_deg`:
/// φ − θmax ≥ θc (module documentation).
pub fn face_keeps_launch(
    angle_deg: f64,
    max_internal_angle_deg: f64,
    critical_angle_deg: f64,
) -> bool {
    face_incidence_deg(angle_deg) - max_internal_angle_deg >= critical_angle_deg
}

/// The figures of every corner of `route` for the launch `launch`.
pub fn corner_figures(route: &[Segment], launch: &LaunchChain) -> Vec<CornerFigures> {
    let theta_max = launch.max_internal_angle_rad.to_degrees();
    let critical = launch.critical_angle_rad.to_degrees();
    route
        .iter()
        .enumerate()
        .filter_map(|(i, seg)| match *seg {
            Segment::Corner {
                angle_deg,
                turn_deg,
                coating,
            } => {
                let phi = face_incidence_deg(angle_deg);
                let smallest = (phi - theta_max).max(0.0);
                let keeps = face_keeps_launch(angle_deg, theta_max, critical);
                let (verdict, note) = match coating {
                    Some(c) => (
                        CornerVerdict::Coated,
                        format!(
                            "coated face: reflects {:.1} % of the light meeting it at any \
                             incidence and absorbs the rest",
                            100.0 * c.reflectance
                        ),
                    ),
                    None if keeps => (
                        CornerVerdict::Ok,
                        format!(
                            "totally reflected: every ray up to {theta_max:.1}° to the axis meets \
                             the face at {smallest:.1}° or more, beyond the critical angle \
                             {critical:.1}°; rays passing the inner side of the turn can still \
                             meet the outgoing leg's outer wall, the trace shows how much"
                        ),
                    ),
                    None => (
                        CornerVerdict::Leaks,
                        format!(
                            "leaks: rays up to {theta_max:.1}° to the axis meet the face from \
                             {smallest:.1}°, below the critical angle {critical:.1}°; those \
                             below it are partly let through (Fresnel); a face at \
                             {phi:.1}° keeps rays up to {:.1}° only",
                            (phi - critical).max(0.0)
                        ),
                    ),
                };
                Some(CornerFigures {
                    segment: i,
                    angle_deg,
                    turn_deg,
                    face_incidence_deg: phi,
                    smallest_incidence_deg: smallest,
                    largest_incidence_deg: phi + theta_max,
                    critical_angle_deg: critical,
                    coating_reflectance: coating.map(|c| c.reflectance),
                    verdict,
                    note,
                })
            }
            _ => None,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn right_angle_keeps_a_collimated_launch_in_pmma_in_air() {
        // θc = asin(1/1.49) = 42.16° (Snell's law; Hecht, Optics, §4.7, from memory): a 45° face
        // keeps axial rays, and rays up to 2.8° from the axis, not 3°.
        let critical = libm::asin(1.0 / 1.49).to_degrees();
        assert!((critical - 42.155).abs() < 0.01);
        assert!(face_keeps_launch(90.0, 0.0, critical));
        assert!(face_keeps_launch(90.0, 2.8, critical));
        assert!(!face_keeps_launch(90.0, 3.0, critical));
        // A 120° turn meets axial rays at 30°: below the critical angle.
        assert!(!face_keeps_launch(120.0, 0.0, critical));
        // In water (n = 1.33) the critical angle is 63.2°: a right-angle face leaks.
        let in_water = libm::asin(1.33 / 1.49).to_degrees();
        assert!(!face_keeps_launch(90.0, 0.0, in_water));
    }
}
