//! A document that cannot be read is told in plain words: never the reader's own terms
//! (`expected f64`, `invalid type`, `unit variant`, `trailing characters`, `expected value`,
//! `missing field \`section\``), NaN and Infinity named, whole-number fields the same in every
//! place (`2.0` is 2), text after the document refused, and no long number spelled out.

#[cfg(target_arch = "wasm32")]
use wasm_bindgen_test::wasm_bindgen_test as test;

use serde_json::{json, Value};
use tirtrace::problems::{check_scenario, Problem};
use tirtrace::quick::QuickDesign;
use tirtrace::study::Study;

const THERMOSTAT: &str = include_str!("../examples/scenarios/thermostat_status_led.json");

/// Words of the JSON reader and of Rust's types that no message may show.
const JARGON: [&str; 16] = [
    "expected f64",
    "expected u32",
    "expected u64",
    "expected usize",
    "invalid type",
    "invalid value",
    "invalid length",
    "unit variant",
    "struct variant",
    "trailing characters",
    "expected value",
    "missing field `",
    "unknown field `",
    "unknown variant `",
    "EOF while",
    " at line ",
];

fn with(edit: impl FnOnce(&mut Value)) -> String {
    let mut doc: Value = serde_json::from_str(THERMOSTAT).unwrap();
    edit(&mut doc);
    doc.to_string()
}

fn only_problem(text: &str) -> Problem {
    let c = check_scenario(text);
    assert!(!c.ok, "accepted: {text}");
    assert_eq!(c.problems.len(), 1, "{:?}", c.problems);
    let p = c.problems[0].clone();
    for word in JARGON {
        assert!(!p.message.contains(word), "“{word}” in: {}", p.message);
    }
    // What the form shows after the field's label is the message without the path.
    assert!(p.message.ends_with(&p.says), "{p:?}");
    assert!(!p.says.contains(&p.field) || p.field == "scenario", "{p:?}");
    p
}

#[test]
fn wrong_kinds_of_value_say_what_is_expected() {
    type Edit = fn(&mut Value);
    let cases: [(Edit, &str, &str); 11] = [
        (
            |d| d["source"]["wavelength_nm"] = json!("590 nm"),
            "source.wavelength_nm",
            "must be a number, got the text “590 nm”",
        ),
        (
            |d| d["source"]["wavelength_nm"] = Value::Null,
            "source.wavelength_nm",
            "must be a number, not null",
        ),
        (
            |d| d["guide"]["section"] = json!("round"),
            "guide.section.round",
            "needs its settings: write {\"round\": { … }}, not \"round\" alone",
        ),
        (
            |d| d["guide"]["section"] = json!({}),
            "guide.section",
            "is empty: give one of its choices with its settings",
        ),
        (
            |d| d["guide"]["material"] = Value::Null,
            "guide.material",
            "must be given (null is not allowed here)",
        ),
        (
            |d| {
                d["guide"]["material"] =
                    json!({ "library": "pmma", "custom": { "model": "constant", "n": 1.5 } })
            },
            "guide.material",
            "gives more than one choice: keep only one",
        ),
        (
            |d| {
                d["guide"].as_object_mut().unwrap().remove("section");
            },
            "guide",
            "needs the field “section”",
        ),
        (
            |d| d["guide"]["sekshun"] = json!(1),
            "guide.sekshun",
            "is not a field here; the fields here are section, material,",
        ),
        (
            |d| d["source"]["offset_mm"] = json!([1]),
            "source.offset_mm",
            "must be a list of 2, got 1 item",
        ),
        (
            |d| d["guide"]["contacts"][0]["segment"] = json!(-1),
            "guide.contacts[0].segment",
            "must be a whole number: the segment's place in the route",
        ),
        (
            |d| d["route"][0] = json!({ "corkscrew": { "length_mm": 3 } }),
            "route[0]",
            "“corkscrew” is not one of the choices here: straight, bend, taper, corner",
        ),
    ];
    for (edit, field, words) in cases {
        let p = only_problem(&with(edit));
        assert_eq!(p.field, field, "{p:?}");
        assert!(p.says.contains(words), "{field}: {}", p.says);
    }
}

#[test]
fn nan_infinity_and_broken_json_are_named() {
    for (bad, words) in [
        ("NaN", "NaN is not a number JSON allows"),
        ("Infinity", "Infinity is not a number JSON allows"),
        ("-Infinity", "-Infinity is not a number JSON allows"),
        ("True", "write true, in lower case"),
        ("blue", "text must be in double quotes (\"blue\")"),
        ("1e999", "has a number too large for any field"),
    ] {
        let text = THERMOSTAT.replacen(
            "\"wavelength_nm\": 590",
            &format!("\"wavelength_nm\": {bad}"),
            1,
        );
        assert_ne!(text, THERMOSTAT);
        let p = only_problem(&text);
        assert_eq!(p.field, "source.wavelength_nm", "{bad}: {p:?}");
        assert!(p.says.contains(words), "{bad}: {}", p.says);
        // Where, in the designer's terms: line and column of the text.
        assert!(p.says.contains("(line 23, column "), "{bad}: {}", p.says);
    }
    for (text, words) in [
        (
            format!("{THERMOSTAT} x"),
            "has more text after the end of the document",
        ),
        (
            format!("{THERMOSTAT}{{}}"),
            "has more text after the end of the document",
        ),
        (
            THERMOSTAT[..THERMOSTAT.len() / 2].to_string(),
            "ends too early",
        ),
        (
            "{ version: 1 }".to_string(),
            "a field's name must be in double quotes",
        ),
        (
            "[]".to_string(),
            "the document must be an object { … }, got a list [ … ]",
        ),
    ] {
        let p = only_problem(&text);
        assert_eq!(p.field, "scenario", "{p:?}");
        assert!(p.message.contains(words), "{}", p.message);
    }
}

#[test]
fn whole_numbers_are_read_the_same_in_every_field() {
    // 2.0 is 2 wherever a whole number is asked for: the version, a mount's segment and every
    // trace setting read like the rest.
    let text = with(|d| {
        d["version"] = json!(1.0);
        d["guide"]["contacts"][0]["segment"] = json!(2.0);
        d["trace"] = json!({ "rays": 2000.0, "seed": 7.0, "max_interactions": 1e4 });
    });
    let c = check_scenario(&text);
    assert!(c.ok, "{:?}", c.problems);
    // And a fraction is refused in each, with the field's own rule.
    for (edit, field, rule) in [
        (
            (|d: &mut Value| d["version"] = json!(1.5)) as fn(&mut Value),
            "version",
            "must be a whole number, got 1.5",
        ),
        (
            |d| d["guide"]["contacts"][0]["segment"] = json!(0.5),
            "guide.contacts[0].segment",
            "must be a whole number",
        ),
        (
            |d| d["trace"]["rays"] = json!(2.5),
            "trace.rays",
            "must be a whole number from 1 to 10⁹, got 2.5",
        ),
    ] {
        let p = only_problem(&with(edit));
        assert_eq!(p.field, field);
        assert!(p.says.starts_with(rule), "{}", p.says);
    }
}

#[test]
fn long_numbers_and_long_texts_are_not_spelled_out() {
    let long = format!("1{}", "0".repeat(300));
    let text = THERMOSTAT.replacen("\"gap_mm\": 0.3", &format!("\"gap_mm\": {long}.5"), 1);
    assert_ne!(text, THERMOSTAT);
    let p = only_problem(&text);
    assert_eq!(p.field, "source.gap_mm");
    assert_eq!(p.says, "must be at most 1000 mm, got 1e300");
    let paste = "x".repeat(5000);
    let p = only_problem(&with(|d| d["source"]["wavelength_nm"] = json!(paste)));
    assert!(p.message.len() < 200, "{}", p.message);
}

#[test]
fn the_study_and_quick_look_readers_speak_the_same_words() {
    let scenario: Value = serde_json::from_str(THERMOSTAT).unwrap();
    let study = json!({ "version": 1.0, "scenario": scenario,
                        "vary": { "field": "source.gap_mm", "values": [0.1, 0.2] } });
    assert!(Study::from_json(&study.to_string()).is_ok());
    let problems = Study::from_json(&format!("{study} trailing")).unwrap_err();
    assert!(
        problems[0]
            .message
            .contains("has more text after the end of the document"),
        "{problems:?}"
    );
    let bad = json!({ "version": 1, "scenario": scenario, "vary": { "field": 3 } });
    let problems = Study::from_json(&bad.to_string()).unwrap_err();
    assert_eq!(problems[0].field, "vary.field");
    assert!(
        problems[0]
            .message
            .contains("must be text in quotes, got 3"),
        "{problems:?}"
    );
    let quick = serde_json::to_value(QuickDesign::default()).unwrap();
    let mut wrong = quick.clone();
    wrong["diameter_mm"] = json!("thick");
    let e = QuickDesign::from_json(&wrong.to_string())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("diameter_mm must be a number, got the text “thick”"),
        "{e}"
    );
    let mut whole = quick;
    whole["version"] = json!(1.0);
    assert!(QuickDesign::from_json(&whole.to_string()).is_ok());
    for word in JARGON {
        assert!(!e.contains(word), "{e}");
    }
}
