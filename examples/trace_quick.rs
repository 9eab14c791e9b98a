//! Build a scenario in code — a soil sensor's ambient-light window: a short silicone light pipe
//! in wet soil (water around it) carrying daylight from a small lens down to a photodiode —,
//! trace it and print the budget. Pass a scenario file to trace that instead.
//!
//! Run with `cargo run --release --example trace_quick [scenario.json]`.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use tirtrace::index::library::MaterialChoice;
use tirtrace::scenario::{
    Emitter, Guide, Receiver, Scenario, Section, Segment, Source, TraceSettings,
};
use tirtrace::trace::Prepared;

fn soil_sensor_window() -> Scenario {
    Scenario {
        version: tirtrace::scenario::SCENARIO_VERSION,
        name: "Soil sensor ambient-light window".into(),
        guide: Guide {
            section: Section::Round { diameter_mm: 4.0 },
            material: MaterialChoice::library("pdms"),
            surroundings: MaterialChoice::library("water"),
            attenuation_db_per_m: 20.0,
            contacts: Vec::new(),
            coatings: Vec::new(),
            exit_medium: None,
            entry_face: Default::default(),
            exit_face: Default::default(),
        },
        route: vec![
            Segment::Straight { length_mm: 8.0 },
            Segment::Bend {
                radius_mm: 12.0,
                angle_deg: 45.0,
                turn_deg: 0.0,
            },
            Segment::Straight { length_mm: 3.0 },
        ],
        source: Source {
            // Daylight gathered by a small lens arrives as a slightly diverging beam.
            emitter: Emitter::Beam {
                diameter_mm: 3.0,
                divergence_half_angle_deg: 20.0,
            },
            wavelength_nm: 550.0,
            gap_mm: 0.5,
            gap_medium: MaterialChoice::library("air"),
            offset_mm: [0.0, 0.0],
            tilt_deg: 0.0,
            tilt_toward_deg: 0.0,
            flux: None,
        },
        receiver: Some(Receiver {
            diameter_mm: None,
            width_mm: Some(2.0),
            height_mm: Some(2.0),
            distance_mm: 0.5,
        }),
        trace: TraceSettings {
            rays: 50_000,
            seed: 3,
            max_interactions: 10_000,
        },
    }
}

fn main() {
    let scenario = match std::env::args().nth(1) {
        Some(path) => {
            let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
            Scenario::from_json(&text).unwrap_or_else(|e| panic!("{e}"))
        }
        None => soil_sensor_window(),
    };
    let prepared = Prepared::new(&scenario).unwrap_or_else(|e| panic!("{e}"));
    let report = prepared.report(&prepared.trace_all_serial(0));
    println!("{}", serde_json::to_string_pretty(&report.budget).unwrap());
    println!("budget sum {}", report.budget_sum);
    if let Some(r) = report.receiver {
        println!("on the photodiode: {:.4} ± {:.4}", r.share, r.ci95);
    }
    for s in &report.segments {
        println!(
            "segment {} {}: leaked {:.4} ± {:.4}, absorbed {:.5}, wall hits {}",
            s.index, s.kind, s.leaked.share, s.leaked.ci95, s.absorbed.share, s.wall_hits
        );
    }
}
