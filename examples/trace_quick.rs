//! Build a scenario in code (a soil sensor's ambient-light window: a short PDMS light pipe under
//! water-logged soil), trace it and print the budget.
//!
//! Run with `cargo run --release --example trace_quick [scenario.json]`.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use tirtrace::scenario::Scenario;
use tirtrace::trace::Prepared;

fn main() {
    let scenario = match std::env::args().nth(1) {
        Some(path) => Scenario::from_json(&std::fs::read_to_string(path).unwrap()).unwrap(),
        None => Scenario::from_json(
            r#"{
            "version": 1,
            "name": "Soil sensor ambient-light window",
            "guide": { "section": { "round": { "diameter_mm": 4 } },
                       "material": { "library": "pdms" }, "surroundings": { "library": "water" } },
            "route": [ { "straight": { "length_mm": 8 } },
                       { "bend": { "radius_mm": 12, "angle_deg": 45 } } ],
            "source": { "emitter": { "beam": { "diameter_mm": 3, "divergence_half_angle_deg": 20 } },
                        "wavelength_nm": 550 },
            "trace": { "rays": 50000, "seed": 3 }
        }"#,
        )
        .unwrap(),
    };
    let prepared = Prepared::new(&scenario).unwrap_or_else(|e| panic!("{e}"));
    let report = prepared.report(&prepared.trace_all_serial(0));
    println!("{}", serde_json::to_string_pretty(&report.budget).unwrap());
    println!("budget sum {}", report.budget_sum);
    for s in &report.segments {
        println!(
            "segment {} {}: leaked {:.4} ± {:.4}, absorbed {:.5}, wall hits {}",
            s.index, s.kind, s.leaked.share, s.leaked.ci95, s.absorbed.share, s.wall_hits
        );
    }
}
