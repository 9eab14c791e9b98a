//! The native command line: figures of the example designs, and one-line errors on bad input.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#![cfg(not(target_arch = "wasm32"))]

use std::io::Write;
use std::process::{Command, Stdio};

fn tirtrace(args: &[&str], stdin: &str) -> (bool, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_tirtrace"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(stdin.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    (
        out.status.success(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

#[test]
fn every_example_design_gives_figures() {
    for entry in std::fs::read_dir("examples").unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let (ok, out, err) = tirtrace(&["figures", path.to_str().unwrap()], "");
            assert!(ok, "{}: {err}", path.display());
            let v: serde_json::Value = serde_json::from_str(&out).unwrap();
            let design =
                tirtrace::quick::QuickDesign::from_json(&std::fs::read_to_string(&path).unwrap())
                    .unwrap();
            // The CLI prints exactly the core's figures.
            assert_eq!(v, serde_json::to_value(design.figures().unwrap()).unwrap());
        }
    }
}

#[test]
fn bad_input_gives_one_line_and_a_failure_code() {
    let (ok, out, err) = tirtrace(
        &["figures", "-"],
        r#"{"version":1,"material":{"library":"pmma"},"wavelength_nm":590,
            "surroundings":{"library":"air"},"launch_medium":{"library":"air"},
            "diameter_mm":-3,"launch_half_angle_deg":30,"bend_inner_radius_mm":6,"bend_angle_deg":90}"#,
    );
    assert!(!ok);
    assert!(out.is_empty());
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains("diameter_mm must be > 0 mm") && err.contains("got -3"),
        "{err}"
    );
    let (ok, _, err) = tirtrace(&["figures", "-"], "{ not json");
    assert!(
        !ok && err.starts_with("tirtrace: could not read the design"),
        "{err}"
    );
    let (ok, _, err) = tirtrace(&["figures", "no/such/file.json"], "");
    assert!(
        !ok && err.contains("could not read no/such/file.json"),
        "{err}"
    );
}

#[test]
fn materials_are_listed_with_sources() {
    let (ok, out, _) = tirtrace(&["materials"], "");
    assert!(ok);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let list = v.as_array().unwrap();
    assert!(list.len() >= 8);
    assert!(list
        .iter()
        .all(|m| !m["source"].as_str().unwrap().is_empty()));
}
