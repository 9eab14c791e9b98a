//! The bend a sweep varies, when its field is a bend's centre-line radius
//! (`route[i].bend.radius_mm`): which segment it is, and the closed-form smallest leak-free
//! centre-line radius for the scenario's actual launch (what `tirtrace check` gives, from
//! [`crate::check::figures`]), for the sweep chart's marker.

use serde::{Deserialize, Serialize};

use super::path::Step;
use super::{Plan, Study};

/// The varied bend of a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct VariedBend {
    /// Index of the bend in the route (its leak is `segments_leaked[segment]` of each point).
    pub segment: usize,
    /// Smallest centre-line radius (mm) that keeps every launched ray totally reflected in this
    /// bend, closed form: the leak-free inner radius R_in = d·n_out / (n_core cos θmax − n_out)
    /// (`docs/REFERENCES.md` §4) plus half the size across the bend. `None` when no leak-free
    /// radius exists for the launch, or the base scenario has problems.
    pub leak_free_radius_mm: Option<f64>,
}

impl Study {
    /// The bend this study's sweep varies the radius of, if it is a sweep of
    /// `route[i].bend.radius_mm`.
    pub fn varied_bend(&self) -> Option<VariedBend> {
        #[allow(unreachable_patterns)] // other plans vary no bend
        let plan = match &self.plan {
            Plan::Sweep(plan) => plan,
            _ => return None,
        };
        // One field set to numbers (a grid or factors vary no single radius).
        let [axis] = plan.axes.as_slice() else {
            return None;
        };
        if !matches!(axis.settings.first(), Some(super::Setting::Number(_))) {
            return None;
        }
        let segment = match axis.field.steps.as_slice() {
            [Step::Key(route), Step::Index(i), Step::Key(bend), Step::Key(radius)]
                if route == "route" && bend == "bend" && radius == "radius_mm" =>
            {
                *i
            }
            _ => return None,
        };
        let leak_free_radius_mm = crate::check::figures(&self.scenario)
            .ok()
            .and_then(|f| f.bends.into_iter().find(|b| b.segment == segment))
            .and_then(|b| {
                let half_across_mm = b.centre_radius_mm - b.inner_radius_mm;
                b.leak_free_inner_radius_mm.map(|r| r + half_across_mm)
            });
        Some(VariedBend {
            segment,
            leak_free_radius_mm,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn study(field: &str) -> Study {
        let scenario =
            std::fs::read_to_string("examples/scenarios/thermostat_status_led.json").unwrap();
        let text = format!(
            r#"{{"version": 1, "scenario": {scenario},
               "vary": {{"field": "{field}", "values": [6, 9]}}}}"#
        );
        Study::from_json(&text).unwrap()
    }

    #[test]
    fn a_bend_radius_names_its_segment_and_the_check_radius() {
        let s = study("route[1].bend.radius_mm");
        let bend = s.varied_bend().expect("a bend's radius is varied");
        assert_eq!(bend.segment, 1);
        // The same figure `tirtrace check` prints, moved from the inner wall to the centre line.
        let figures = crate::check::figures(&s.scenario).unwrap();
        let b = &figures.bends[0];
        let expected = b.leak_free_inner_radius_mm.unwrap() + b.size_across_mm / 2.0;
        let got = bend.leak_free_radius_mm.unwrap();
        assert!((got - expected).abs() < 1e-12, "{got} vs {expected}");
        assert!(got > b.size_across_mm / 2.0);
    }

    #[test]
    fn other_fields_are_not_a_bend() {
        assert_eq!(study("source.gap_mm").varied_bend(), None);
        assert_eq!(study("route[1].bend.angle_deg").varied_bend(), None);
    }
}
