//! Print the leak-free inner bend radius over diameter for each library material in air, for a
//! few launch half-angles, built in code rather than from a file.
//!
//! Run with `cargo run --example leak_free_table`.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm

use tirtrace::index::library::{materials, MaterialChoice};
use tirtrace::quick::QuickDesign;

fn main() {
    let launches = [0.0, 15.0, 30.0, 60.0, 90.0];
    print!("{:<40}", "material at 590 nm, in air");
    for a in launches {
        print!("{:>9}", format!("{a}°"));
    }
    println!();
    for m in materials().iter().filter(|m| m.id != "air") {
        print!("{:<40}", m.name);
        for launch in launches {
            let design = QuickDesign {
                material: MaterialChoice::library(m.id),
                launch_half_angle_deg: launch,
                ..QuickDesign::default()
            };
            let cell = match design.figures() {
                Ok(f) => match f.leak_free_ratio {
                    Some(r) => format!("{r:.2}"),
                    None => "none".to_string(),
                },
                Err(_) => "n/a".to_string(),
            };
            print!("{cell:>9}");
        }
        println!();
    }
}
