//! The published JSON Schemas (`docs/schema/`) against the types they are generated from, the
//! example documents, and broken documents the core refuses. Native only: it reads the committed
//! files from disk and validates with a native-only crate.
#![cfg(not(target_arch = "wasm32"))]

use std::path::{Path, PathBuf};

use serde_json::{json, Value};
use tirtrace::quick::QuickDesign;
use tirtrace::scenario::Scenario;
use tirtrace::schema::{schema_json, DOCUMENTS};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn read_json(path: &Path) -> Value {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn validator(name: &str) -> jsonschema::Validator {
    let schema: Value = serde_json::from_str(&schema_json(name).unwrap()).unwrap();
    jsonschema::draft202012::new(&schema)
        .unwrap_or_else(|e| panic!("the {name} schema is not a valid JSON Schema: {e}"))
}

/// The JSON files of a folder of examples, sorted.
fn examples(folder: &str) -> Vec<PathBuf> {
    let mut files: Vec<PathBuf> = std::fs::read_dir(root().join(folder))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    files.sort();
    assert!(!files.is_empty(), "no examples in {folder}");
    files
}

/// Every `$ref` in a schema.
fn refs(v: &Value, out: &mut Vec<String>) {
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                match (k.as_str(), x) {
                    ("$ref", Value::String(r)) => out.push(r.clone()),
                    _ => refs(x, out),
                }
            }
        }
        Value::Array(xs) => xs.iter().for_each(|x| refs(x, out)),
        _ => {}
    }
}

#[test]
fn committed_schemas_are_what_the_types_generate() {
    for (name, _) in DOCUMENTS {
        let path = root().join(format!("docs/schema/{name}.schema.json"));
        let committed = std::fs::read_to_string(&path).unwrap_or_default();
        let generated = schema_json(name).unwrap();
        assert!(
            committed == generated,
            "{} is not what the types generate now; regenerate it with\n    \
             cargo run --quiet -- schema {name} > docs/schema/{name}.schema.json",
            path.display()
        );
        // Self-contained: no identifier of its own, and every reference inside the file.
        let schema: Value = serde_json::from_str(&generated).unwrap();
        assert!(schema.get("$id").is_none(), "{name}: a $id");
        let mut found = Vec::new();
        refs(&schema, &mut found);
        assert!(!found.is_empty(), "{name}: expected references to $defs");
        for r in found {
            let pointer = r.strip_prefix('#').unwrap_or_else(|| panic!("{name}: {r}"));
            assert!(
                schema.pointer(pointer).is_some(),
                "{name}: {r} points nowhere"
            );
        }
    }
}

#[test]
fn mounts_and_coatings_place_a_zone_alike() {
    // The document writes a zone's place (segment, from/to along it, the sector) out in each
    // kind of zone (tirtrace::scenario::ZonePlace says why): the two must not drift apart. Each
    // field has the same type, range, default and need in both; only the words differ.
    let schema: Value = serde_json::from_str(&schema_json("scenario").unwrap()).unwrap();
    let defs = &schema["$defs"];
    let fields = [
        "segment",
        "from_mm",
        "to_mm",
        "sector_from_deg",
        "sector_to_deg",
    ];
    let place = |kind: &str| {
        let def = &defs[kind];
        let mut props = Vec::new();
        for f in fields {
            let mut p = def["properties"][f].clone();
            assert!(p.is_object(), "{kind}.{f}");
            p.as_object_mut().unwrap().remove("description");
            let required = def["required"].as_array().unwrap().iter().any(|r| r == f);
            props.push((f, p, required));
        }
        props
    };
    assert_eq!(place("Contact"), place("Coating"));
    // The reader refuses a bad place alike too, naming the field.
    let text = |list: &str, zone: Value| {
        let mut doc =
            read_json(&root().join("examples/scenarios/bike_light_charge_indicator.json"));
        doc["guide"][list] = serde_json::json!([zone]);
        doc.to_string()
    };
    for (f, bad) in [
        ("segment", serde_json::json!(-1)),
        ("from_mm", serde_json::json!("x")),
    ] {
        let mut mount = serde_json::json!({ "segment": 0, "from_mm": 0, "to_mm": 1, "medium": { "library": "pmma" } });
        let mut coat =
            serde_json::json!({ "kind": "black", "segment": 0, "from_mm": 0, "to_mm": 1 });
        mount[f] = bad.clone();
        coat[f] = bad;
        let a = tirtrace::scenario::Scenario::from_json(&text("contacts", mount))
            .unwrap_err()
            .to_string();
        let b = tirtrace::scenario::Scenario::from_json(&text("coatings", coat))
            .unwrap_err()
            .to_string();
        assert!(a.contains(&format!("guide.contacts[0].{f}")), "{a}");
        // The same words; only where in the text differs (the documents differ in length).
        let words = |m: &str| m.split(" (character").next().unwrap().to_string();
        assert_eq!(words(&a).replace("contacts", "coatings"), words(&b));
    }
}

#[test]
fn schema_names_are_unique_and_unknown_names_have_none() {
    let mut names: Vec<&str> = DOCUMENTS.iter().map(|(n, _)| *n).collect();
    names.sort();
    names.dedup();
    assert_eq!(names.len(), DOCUMENTS.len());
    assert!(schema_json("scenarios").is_none());
}

#[test]
fn example_scenarios_and_designs_validate() {
    let scenario = validator("scenario");
    for path in examples("examples/scenarios") {
        let doc = read_json(&path);
        let errors: Vec<String> = scenario.iter_errors(&doc).map(|e| e.to_string()).collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        // The core reads it too: the schema and the reader agree on it.
        let s = Scenario::from_json(&doc.to_string()).unwrap();
        assert!(s.problems().is_empty(), "{}", path.display());
    }
    let design = validator("design");
    for path in examples("examples/designs") {
        let doc = read_json(&path);
        let errors: Vec<String> = design.iter_errors(&doc).map(|e| e.to_string()).collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        QuickDesign::from_json(&doc.to_string()).unwrap();
    }
    let default = serde_json::to_value(QuickDesign::default()).unwrap();
    assert!(design.is_valid(&default));
    let study = validator("study");
    for path in examples("examples/studies") {
        let doc = read_json(&path);
        let errors: Vec<String> = study.iter_errors(&doc).map(|e| e.to_string()).collect();
        assert!(errors.is_empty(), "{}: {errors:?}", path.display());
        tirtrace::study::Study::from_json(&doc.to_string()).unwrap();
    }
}

#[test]
fn broken_studies_fail_the_schema_as_the_reader_refuses_them() {
    let good = read_json(&root().join("examples/studies/thermostat_first_bend.json"));
    let study = validator("study");
    type Spoil = dyn Fn(&mut serde_json::Value);
    let broken: [(&str, &Spoil); 5] = [
        ("unknown field", &|d| d["vary"]["colour"] = 1.into()),
        ("version 2", &|d| d["version"] = 2.into()),
        ("no vary", &|d| {
            _ = d.as_object_mut().unwrap().remove("vary")
        }),
        (
            "steps 0",
            &|d| {
                d["vary"] = serde_json::json!({ "field": "source.gap_mm", "from": 0.1, "to": 0.5, "steps": 0 })
            },
        ),
        ("scenario with an unknown field", &|d| {
            d["scenario"]["guide"]["colour"] = 1.into()
        }),
    ];
    for (what, spoil) in broken {
        let mut doc = good.clone();
        spoil(&mut doc);
        assert!(!study.is_valid(&doc), "{what}: the schema takes it");
        assert!(
            tirtrace::study::Study::from_json(&doc.to_string()).is_err(),
            "{what}: the reader takes it"
        );
    }
}

/// A valid scenario with one change made by `edit`.
fn edited(edit: impl FnOnce(&mut Value)) -> Value {
    let mut doc = read_json(&root().join("examples/scenarios/bike_light_charge_indicator.json"));
    edit(&mut doc);
    doc
}

/// Whether the core takes a scenario: it reads, and its checks find no problem.
fn core_accepts(doc: &Value) -> bool {
    Scenario::from_json(&doc.to_string()).is_ok_and(|s| s.problems().is_empty())
}

#[test]
fn broken_scenarios_fail_the_schema_as_they_fail_the_core() {
    let schema = validator("scenario");
    let broken: Vec<(&str, Value)> = vec![
        (
            "unknown top-level field",
            edited(|d| d["colour"] = json!("red")),
        ),
        (
            "unknown guide field",
            edited(|d| d["guide"]["length_mm"] = json!(3)),
        ),
        (
            "missing source",
            edited(|d| drop(d.as_object_mut().unwrap().remove("source"))),
        ),
        ("version 2", edited(|d| d["version"] = json!(2))),
        ("empty route", edited(|d| d["route"] = json!([]))),
        (
            "65 segments",
            edited(|d| d["route"] = json!(vec![json!({ "straight": { "length_mm": 1.0 } }); 65])),
        ),
        (
            "unknown segment kind",
            edited(|d| d["route"][0] = json!({ "spiral": {} })),
        ),
        (
            "zero diameter",
            edited(|d| d["guide"]["section"] = json!({ "round": { "diameter_mm": 0 } })),
        ),
        (
            "wavelength in µm",
            edited(|d| d["source"]["wavelength_nm"] = json!(0.57)),
        ),
        (
            "tilt of 90°",
            edited(|d| d["source"]["tilt_deg"] = json!(90)),
        ),
        (
            "bend of 181°",
            edited(|d| d["route"][2]["bend"]["angle_deg"] = json!(181)),
        ),
        (
            "bend radius 0",
            edited(|d| d["route"][2]["bend"]["radius_mm"] = json!(0)),
        ),
        (
            "unknown material",
            edited(|d| d["guide"]["material"] = json!({ "library": "unobtainium" })),
        ),
        (
            "custom index below 1",
            edited(|d| {
                d["guide"]["material"] = json!({ "custom": { "model": "constant", "n": 0.9 } })
            }),
        ),
        (
            "no flux",
            edited(|d| d["source"]["flux"] = json!({ "lm": 0 })),
        ),
        (
            "fractional rays",
            edited(|d| d["trace"]["rays"] = json!(1.5)),
        ),
        ("negative seed", edited(|d| d["trace"]["seed"] = json!(-5))),
        (
            "seed of 2^53",
            edited(|d| d["trace"]["seed"] = json!(1u64 << 53)),
        ),
        ("no rays", edited(|d| d["trace"]["rays"] = json!(0))),
        (
            "disk and window",
            edited(|d| {
                d["receiver"] =
                    json!({ "diameter_mm": 3, "width_mm": 2, "height_mm": 1, "distance_mm": 1 })
            }),
        ),
        (
            "window without height",
            edited(|d| d["receiver"] = json!({ "width_mm": 2, "distance_mm": 1 })),
        ),
        (
            "table of one row",
            edited(|d| {
                d["source"]["emitter"]["led"]["pattern"] =
                    json!({ "table": { "points": [[0, 1]] } })
            }),
        ),
        (
            "sector past a full turn",
            edited(|d| d["guide"]["contacts"][0]["sector_to_deg"] = json!(400)),
        ),
    ];
    for (what, doc) in broken {
        assert!(!core_accepts(&doc), "{what}: the core takes it");
        assert!(!schema.is_valid(&doc), "{what}: the schema takes it");
    }
}

#[test]
fn documents_the_core_takes_pass_the_schema() {
    let schema = validator("scenario");
    let taken: Vec<(&str, Value)> = vec![
        (
            "whole number written as a decimal",
            edited(|d| d["trace"]["rays"] = json!(2000.0)),
        ),
        (
            "largest seed",
            edited(|d| d["trace"]["seed"] = json!((1u64 << 53) - 1)),
        ),
        (
            "defaults left out",
            edited(|d| {
                let o = d.as_object_mut().unwrap();
                o.remove("trace");
                o.remove("name");
                d["source"].as_object_mut().unwrap().remove("gap_medium");
            }),
        ),
        (
            "disk with a null width",
            edited(|d| {
                d["receiver"] = json!({ "diameter_mm": 3, "width_mm": null, "distance_mm": 1 })
            }),
        ),
        (
            "window",
            edited(|d| d["receiver"] = json!({ "width_mm": 2, "height_mm": 1, "distance_mm": 0 })),
        ),
        (
            "radiant flux",
            edited(|d| d["source"]["flux"] = json!({ "mw": 5 })),
        ),
        (
            "lambertian",
            edited(|d| d["source"]["emitter"]["led"]["pattern"] = json!("lambertian")),
        ),
    ];
    for (what, doc) in taken {
        assert!(core_accepts(&doc), "{what}: the core refuses it");
        let errors: Vec<String> = schema.iter_errors(&doc).map(|e| e.to_string()).collect();
        assert!(errors.is_empty(), "{what}: {errors:?}");
    }
}

#[test]
fn the_command_line_prints_the_committed_schemas() {
    let run = |name: &str| {
        std::process::Command::new(env!("CARGO_BIN_EXE_tirtrace"))
            .args(["schema", name])
            .output()
            .unwrap()
    };
    for (name, _) in DOCUMENTS {
        let out = run(name);
        assert!(out.status.success(), "tirtrace schema {name}");
        let committed =
            std::fs::read_to_string(root().join(format!("docs/schema/{name}.schema.json")));
        assert_eq!(String::from_utf8(out.stdout).unwrap(), committed.unwrap());
    }
    let out = run("study-plan");
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("possible values: scenario, design"), "{err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
}
