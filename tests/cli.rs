//! The native command line: `trace` (every example scenario, budgets summing to 1, results
//! independent of the thread count, seeds that decide the result, the CSV form), `check` (the
//! closed-form bend figures against the leak-free criterion), `figures`, `materials`, and
//! one-line errors on bad input.
#![allow(clippy::disallowed_methods)] // checks may use std maths; the core uses libm
#![cfg(not(target_arch = "wasm32"))]

use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Stdio};

use serde_json::Value;
use tirtrace::limits::{DOCUMENT_BYTES, PATH_POINTS, PATH_POINTS_TOTAL};
use tirtrace::scenario::Scenario;
use tirtrace::trace::Prepared;

const THERMOSTAT: &str = "examples/scenarios/thermostat_status_led.json";
const BIKE: &str = "examples/scenarios/bike_light_charge_indicator.json";
const SOIL: &str = "examples/scenarios/soil_sensor_ambient_light_window.json";
const FIBRE: &str = "examples/scenarios/clad_plastic_fibre.json";
const MIRRORED_BEND: &str = "examples/scenarios/right_angle_pipe_mirrored_bend.json";

/// Run the binary; (success, exit code, stdout, stderr).
fn tirtrace(args: &[&str], stdin: &str) -> (bool, Option<i32>, String, String) {
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
        out.status.code(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

/// Run and insist on success with nothing on stderr (progress is shown only on a terminal).
fn ok_stdout(args: &[&str], stdin: &str) -> String {
    let (ok, _, out, err) = tirtrace(args, stdin);
    assert!(ok, "{args:?}: {err}");
    assert!(err.is_empty(), "{args:?} wrote to stderr: {err}");
    out
}

fn scenarios() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir("examples/scenarios")
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "json"))
        .collect();
    v.sort();
    v
}

fn read_scenario(path: &str) -> Scenario {
    Scenario::from_json(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

#[test]
fn the_four_demo_scenarios_are_there() {
    let names: Vec<String> = scenarios()
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    for want in [THERMOSTAT, BIKE, SOIL, FIBRE] {
        let file = want.rsplit('/').next().unwrap();
        assert!(names.iter().any(|n| n == file), "{file} missing: {names:?}");
    }
}

#[test]
fn every_example_scenario_checks_and_traces_with_a_closed_budget() {
    for path in scenarios() {
        let p = path.to_str().unwrap();
        // check prints exactly the core's closed-form figures.
        let out = ok_stdout(&["check", p], "");
        let v: Value = serde_json::from_str(&out).unwrap();
        let figures = tirtrace::check::figures(&read_scenario(p)).unwrap();
        assert_eq!(v, serde_json::to_value(&figures).unwrap(), "{p}");

        let out = ok_stdout(&["trace", p, "--rays", "20000"], "");
        let v: Value = serde_json::from_str(&out).unwrap();
        assert_eq!(v["rays"], 20000, "{p}");
        assert!(v.get("paths").is_none(), "{p}: paths printed unasked");
        let sum = f(&v["budget_sum"]);
        assert!((sum - 1.0).abs() <= 1e-9, "{p}: budget_sum {sum}");
        // The budget's mechanisms account for every tally.
        let shares: f64 = v["budget"]
            .as_object()
            .unwrap()
            .values()
            .map(|s| f(&s["share"]))
            .sum();
        assert!(
            (shares - 1.0).abs() <= 1e-9,
            "{p}: budget shares sum {shares}"
        );
        let nseg = read_scenario(p).route.len();
        assert_eq!(v["segments"].as_array().unwrap().len(), nseg, "{p}");
    }
}

#[test]
fn stdin_gives_the_same_as_the_file() {
    let text = std::fs::read_to_string(BIKE).unwrap();
    assert_eq!(
        ok_stdout(&["check", "-"], &text),
        ok_stdout(&["check", BIKE], "")
    );
    assert_eq!(
        ok_stdout(&["trace", "-", "--rays", "3000"], &text),
        ok_stdout(&["trace", BIKE, "--rays", "3000"], "")
    );
}

#[test]
fn thread_count_does_not_change_a_byte_and_matches_the_core() {
    // 9000 rays are three batches of 4096, so two threads really split the work.
    let args = |t: &'static str| ["trace", THERMOSTAT, "--rays", "9000", "--threads", t];
    let one = ok_stdout(&args("1"), "");
    let two = ok_stdout(&args("2"), "");
    assert_eq!(one, two);
    let all = ok_stdout(&args("0"), "");
    assert_eq!(one, all);

    // The same as the core traced serially, with the file's seed.
    let mut s = read_scenario(THERMOSTAT);
    s.trace.rays = 9000;
    let prepared = Prepared::new(&s).unwrap();
    let report = prepared.report(&prepared.trace_all_serial(0));
    let mut want = serde_json::to_value(&report).unwrap();
    want.as_object_mut().unwrap().remove("paths");
    let got: Value = serde_json::from_str(&one).unwrap();
    assert_eq!(got, want);
    assert_eq!(got["seed"], s.trace.seed);
}

#[test]
fn the_seed_decides_the_result() {
    let run = |seed: &str| ok_stdout(&["trace", BIKE, "--rays", "5000", "--seed", seed], "");
    let a = run("21");
    assert_eq!(a, run("21"));
    let b = run("22");
    assert_ne!(a, b);
    let (va, vb): (Value, Value) = (
        serde_json::from_str(&a).unwrap(),
        serde_json::from_str(&b).unwrap(),
    );
    assert_eq!(va["seed"], 21);
    assert_eq!(vb["seed"], 22);
    assert_ne!(va["budget"], vb["budget"]);
}

#[test]
fn paths_are_printed_only_when_asked() {
    let out = ok_stdout(&["trace", THERMOSTAT, "--rays", "100", "--paths", "5"], "");
    let v: Value = serde_json::from_str(&out).unwrap();
    let paths = v["paths"].as_array().unwrap();
    assert_eq!(paths.len(), 5);
    assert!(paths
        .iter()
        .all(|p| p["points"].as_array().unwrap().len() >= 2));
    // A short light pipe's paths are whole.
    assert!(paths.iter().all(|p| p["cut_short"] == false));
}

/// A bare 0.1 mm acrylic fibre 100 m long allowing 10⁷ wall hits a ray (valid): a ray meets the
/// wall some 400 000 times, so its whole path would be 10 MB.
const THIN_FIBRE_100_M: &str = r#"{
  "version": 1,
  "name": "0.1 mm fibre, 100 m",
  "guide": { "section": { "round": { "diameter_mm": 0.1 } }, "material": { "library": "pmma" },
             "surroundings": { "library": "air" }, "attenuation_db_per_m": 0 },
  "route": [ { "straight": { "length_mm": 100000 } } ],
  "source": { "emitter": { "led": { "area": { "disk": { "diameter_mm": 0.05 } }, "pattern": "lambertian" } },
              "wavelength_nm": 650, "gap_mm": 0.01 },
  "trace": { "rays": 3, "seed": 1, "max_interactions": 10000000 }
}"#;

#[test]
fn paths_of_a_long_thin_fibre_are_cut_short_and_said_so() {
    let (ok, _, out, err) = tirtrace(&["trace", "-", "--paths", "3"], THIN_FIBRE_100_M);
    assert!(ok, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    let paths = v["paths"].as_array().unwrap();
    assert_eq!(paths.len(), 3);
    for p in paths {
        assert_eq!(
            p["points"].as_array().unwrap().len(),
            PATH_POINTS,
            "{}",
            p["fate"]
        );
        assert_eq!(p["cut_short"], true);
    }
    assert_eq!(
        err,
        format!(
            "tirtrace: note: 3 of the 3 kept paths are cut short after their first {PATH_POINTS} \
             points (\"cut_short\": true); a path keeps at most {PATH_POINTS} points, and all of \
             them together {PATH_POINTS_TOTAL}\n"
        )
    );
    // The rays themselves went to their ends: the report is the one traced without paths.
    let mut without: Value =
        serde_json::from_str(&ok_stdout(&["trace", "-"], THIN_FIBRE_100_M)).unwrap();
    without["paths"] = v["paths"].clone();
    assert_eq!(v, without);
}

/// Run with standard input from the file `stdin`, within 2 GB of memory (a reader without a
/// bound then fails rather than take the machine's memory) and 60 s; (success, stderr).
fn tirtrace_bounded(args: &[&str], stdin: &str) -> (bool, String) {
    use std::time::{Duration, Instant};
    let mut child = Command::new("sh")
        .args(["-c", "ulimit -v 2000000 && exec \"$0\" \"$@\""])
        .arg(env!("CARGO_BIN_EXE_tirtrace"))
        .args(args)
        .stdin(std::fs::File::open(stdin).unwrap())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let deadline = Instant::now() + Duration::from_secs(60);
    while child.try_wait().unwrap().is_none() {
        if Instant::now() > deadline {
            child.kill().unwrap();
            panic!("{args:?} still reading after 60 s");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let out = child.wait_with_output().unwrap();
    (out.status.success(), String::from_utf8(out.stderr).unwrap())
}

#[test]
fn input_beyond_the_stated_size_is_refused_naming_the_file() {
    // A valid scenario padded with blanks to the most a document may be is read; one byte more
    // is refused, even though it is still a valid scenario.
    let scenario = std::fs::read_to_string(THERMOSTAT).unwrap();
    let padded = |bytes: u64| scenario.clone() + &" ".repeat(bytes as usize - scenario.len());
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR"));
    let (at_most, beyond) = (dir.join("at-most.json"), dir.join("beyond.json"));
    std::fs::write(&at_most, padded(DOCUMENT_BYTES)).unwrap();
    std::fs::write(&beyond, padded(DOCUMENT_BYTES + 1)).unwrap();
    let (at_most, beyond) = (at_most.to_str().unwrap(), beyond.to_str().unwrap());
    assert_eq!(
        ok_stdout(&["check", at_most], ""),
        ok_stdout(&["check", THERMOSTAT], "")
    );
    let err = one_line_error(&["check", beyond], "");
    assert_eq!(
        err,
        format!(
            "tirtrace: could not read {beyond}: it is larger than 16 MiB, the most the command \
             line reads of a document (a scenario or a study is a few kB)\n"
        )
    );
    // A stream without end is refused at that size, from a file or from standard input.
    let (ok, err) = tirtrace_bounded(&["check", "/dev/zero"], "/dev/null");
    assert!(
        !ok && err.starts_with("tirtrace: could not read /dev/zero: it is larger than 16 MiB"),
        "{err}"
    );
    for args in [["trace", "-"], ["study", "-"], ["figures", "-"]] {
        let (ok, err) = tirtrace_bounded(&args, "/dev/zero");
        assert!(
            !ok && err
                .starts_with("tirtrace: could not read standard input: it is larger than 16 MiB"),
            "{args:?}: {err}"
        );
    }
    // A piece to merge is parsed as it is read: one that is not JSON stops at its first byte.
    let study = "examples/studies/thermostat_first_bend.json";
    let (ok, err) = tirtrace_bounded(&["study", study, "--merge", "/dev/zero"], "/dev/null");
    assert!(
        !ok && err.starts_with(
            "tirtrace: /dev/zero could not be read as a piece of this study: expected value"
        ),
        "{err}"
    );
    // A piece with a byte-order mark is read as every document is.
    let args = ["study", study, "--rays", "4096"];
    let piece = ok_stdout(&[&args[..], &["--piece", "1/1"]].concat(), "");
    let file = dir.join("bom-piece.json");
    std::fs::write(&file, format!("\u{feff}{piece}")).unwrap();
    assert_eq!(
        ok_stdout(
            &[&args[..], &["--merge", file.to_str().unwrap()]].concat(),
            ""
        ),
        ok_stdout(&args, "")
    );
}

/// The CSV's sections, split at blank lines, each as rows of fields.
fn csv_sections(text: &str) -> Vec<Vec<Vec<String>>> {
    let split_row = |line: &str| -> Vec<String> {
        // Fields are plain, or quoted with inner quotes doubled.
        let mut fields = Vec::new();
        let mut cur = String::new();
        let mut quoted = false;
        let mut chars = line.chars().peekable();
        while let Some(c) = chars.next() {
            match (c, quoted) {
                ('"', true) if chars.peek() == Some(&'"') => {
                    cur.push('"');
                    chars.next();
                }
                ('"', _) => quoted = !quoted,
                (',', false) => fields.push(std::mem::take(&mut cur)),
                _ => cur.push(c),
            }
        }
        assert!(!quoted, "unterminated quote in {line}");
        fields.push(cur);
        fields
    };
    text.trim_end_matches('\n')
        .split("\n\n")
        .map(|sec| sec.lines().map(split_row).collect())
        .collect()
}

#[test]
fn csv_rows_parse_and_the_budget_sums_to_one() {
    for path in [THERMOSTAT, FIBRE, BIKE] {
        let csv = ok_stdout(&["trace", path, "--rays", "6000", "--csv"], "");
        let json: Value =
            serde_json::from_str(&ok_stdout(&["trace", path, "--rays", "6000"], "")).unwrap();
        let scenario = read_scenario(path);
        let mut secs = csv_sections(&csv);
        // The far-field map closes the file, two sections (tests/far_field.rs checks them).
        let far_field = secs.split_off(secs.len() - 2);
        assert!(far_field[0][0][0].starts_with("Intensity map beyond the exit face"));
        assert_eq!(far_field[0].len(), 2 + 45 * 45, "{path}: a row per cell");
        assert!(far_field[1][0][0].starts_with("Reaches the window at 90° or more"));
        // The exit figures before it, two sections, three with a receiver (the detector's
        // blocks; tests/exit_figures.rs checks them).
        let receiver = scenario.receiver.is_some();
        let exit_figures = secs.split_off(secs.len() - if receiver { 3 } else { 2 });
        assert_eq!(exit_figures[0][0][0], "Exit figures", "{path}: {csv}");
        assert_eq!(exit_figures[1][0][0], "Exit face blocks", "{path}: {csv}");
        if receiver {
            assert_eq!(exit_figures[2][0][0], "Detector blocks", "{path}: {csv}");
        }
        let absolute = !json["absolute"].is_null();
        // Header, budget, (absolute figures), segments, mounts, then three of the exit face.
        assert_eq!(secs.len(), if absolute { 8 } else { 7 }, "{path}: {csv}");

        // The header block: what the file is, the design, the version, rays, seed, units.
        let head = &secs[0];
        assert_eq!(head[0], ["tirtrace trace report"]);
        assert_eq!(head[1], ["design", scenario.name.as_str()]);
        assert_eq!(head[2], ["tirtrace version", env!("CARGO_PKG_VERSION")]);
        assert_eq!(head[3], ["rays", "6000"]);
        assert_eq!(head[4][0], "seed");
        assert_eq!(head[4][1], json["seed"].to_string());
        assert!(head[5][1].starts_with("% of the light the source emits"));
        assert_eq!(head[6], ["lengths", "mm"]);

        // The budget in the page's words and in %, with the flux when the source's is given.
        let budget = &secs[1];
        assert_eq!(budget[0][..3], ["What becomes of the light", "%", "± %"]);
        assert_eq!(budget.len(), 1 + tirtrace::export::MECHANISMS.len());
        let mut sum = 0.0;
        for (row, (key, words)) in budget[1..].iter().zip(tirtrace::export::MECHANISMS) {
            assert_eq!(row.len(), if absolute { 5 } else { 3 }, "{row:?}");
            assert_eq!(row[0], words);
            let percent: f64 = row[1].parse().unwrap();
            let ci: f64 = row[2].parse().unwrap();
            assert!((0.0..=100.0).contains(&percent) && ci >= 0.0, "{row:?}");
            // The same figures as the JSON report, as percentages.
            let share = f(&json["budget"][key]["share"]);
            assert_eq!(percent, tirtrace::export::percent(share), "{row:?}");
            sum += share;
        }
        assert!((sum - 1.0).abs() <= 1e-9, "{path}: shares sum to {sum}");
        if absolute {
            let flux: f64 = budget[1][3].parse().unwrap();
            assert!((flux - f(&json["absolute"]["delivered"]["value"])).abs() <= 1e-9 * flux.abs());
            assert_eq!(secs[2][0], ["Absolute figures", "value", "± 95 %", "unit"]);
            assert_eq!(secs[2][1][0], "Flux reaching the window");
        }

        // Segments and mounts numbered from 1, as on the page.
        let segs = &secs[secs.len() - 5];
        assert_eq!(
            segs[0],
            [
                "segment",
                "kind",
                "starts at (mm)",
                "length (mm)",
                "leaks %",
                "± %",
                "absorbed %",
                "± %",
                "wall hits"
            ]
        );
        let route = &scenario.route;
        assert_eq!(segs.len(), 1 + route.len());
        let mut section = scenario.guide.section;
        for (i, row) in segs[1..].iter().enumerate() {
            assert_eq!(row.len(), 9, "{row:?}");
            assert_eq!(row[0].parse::<usize>().unwrap(), i + 1);
            assert!(["straight", "bend", "taper", "corner"].contains(&row[1].as_str()));
            for x in &row[2..8] {
                let x: f64 = x.parse().unwrap();
                assert!(x.is_finite() && x >= 0.0, "{row:?}");
            }
            // The segment length is the route's centre-line length.
            let len: f64 = row[3].parse().unwrap();
            assert!((len - route[i].length_mm(section)).abs() < 1e-9, "{row:?}");
            section = route[i].section_after(section);
            row[8].parse::<u64>().unwrap();
        }

        let contacts = &secs[secs.len() - 4];
        assert_eq!(contacts[0], ["mount", "on segment", "lost %", "± %"]);
        let zones = &scenario.guide.contacts;
        assert_eq!(contacts.len(), 1 + zones.len());
        for (row, zone) in contacts[1..].iter().zip(zones) {
            assert_eq!(row[0], zone.name);
            assert_eq!(row[1].parse::<usize>().unwrap(), zone.segment + 1);
            row[2].parse::<f64>().unwrap();
            row[3].parse::<f64>().unwrap();
        }

        // The light turned back at the exit face, as in the JSON report: its shares, where it
        // ended (summing to the turned-back share), its leakage by segment.
        let turn = &json["exit_turn_back"];
        let exit = &secs[secs.len() - 3];
        assert_eq!(
            exit[0],
            [
                "At the exit face",
                "% of emitted",
                "± %",
                "% of the light reaching it",
                "± %"
            ]
        );
        let names = [
            ("Reaches the exit face", "reached", ""),
            ("Turned back", "turned_back", "turned_back"),
            (
                "Turned back by total reflection",
                "by_total_reflection",
                "by_total_reflection",
            ),
            (
                "Turned back by Fresnel reflection",
                "by_fresnel",
                "by_fresnel",
            ),
        ];
        assert_eq!(exit.len(), 1 + names.len());
        let pc = tirtrace::export::percent;
        for (row, (name, key, of)) in exit[1..].iter().zip(names) {
            assert_eq!(row[0], name);
            assert_eq!(row[1].parse::<f64>().unwrap(), pc(f(&turn[key]["share"])));
            if of.is_empty() {
                assert_eq!(row[3], "", "{row:?}");
            } else {
                let fraction: f64 = row[3].parse().unwrap();
                assert_eq!(
                    fraction,
                    pc(f(&turn["of_reaching"][of]["share"])),
                    "{row:?}"
                );
            }
        }
        let ended = &secs[secs.len() - 2];
        assert_eq!(
            ended[0][0],
            "Where the turned-back light ended (already counted above)"
        );
        assert_eq!(ended.len(), 1 + 6);
        let keys = [
            "delivered_later",
            "returned",
            "leaked",
            "contact",
            "absorbed",
            "stopped",
        ];
        let sum: f64 = ended[1..]
            .iter()
            .zip(keys)
            .map(|(row, key)| {
                let percent: f64 = row[1].parse().unwrap();
                assert_eq!(percent, pc(f(&turn["ended"][key]["share"])), "{row:?}");
                percent
            })
            .sum();
        let turned = pc(f(&turn["turned_back"]["share"]));
        assert!((sum - turned).abs() <= 1e-7, "{path}: {sum} ≠ {turned}");
        let by_segment = &secs[secs.len() - 1];
        assert_eq!(
            by_segment[0],
            ["segment", "leaks after a turn back %", "± %"]
        );
        assert_eq!(by_segment.len(), 1 + route.len());
        for (i, row) in by_segment[1..].iter().enumerate() {
            assert_eq!(row[0].parse::<usize>().unwrap(), i + 1);
            let percent: f64 = row[1].parse().unwrap();
            let leaked = f(&json["segments"][i]["leaked_after_turn_back"]["share"]);
            assert_eq!(percent, pc(leaked), "{row:?}");
        }
    }
}

/// A failing run: non-zero exit, nothing on stdout, exactly one `tirtrace: ` line on stderr.
fn one_line_error(args: &[&str], stdin: &str) -> String {
    let (ok, code, out, err) = tirtrace(args, stdin);
    assert!(!ok && code != Some(0), "{args:?} succeeded");
    assert!(out.is_empty(), "{args:?} printed: {out}");
    assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
    assert!(err.starts_with("tirtrace: "), "{err}");
    assert!(
        !err.contains("panicked") && !err.contains("backtrace"),
        "{err}"
    );
    err
}

#[test]
fn bad_input_gives_one_line_naming_the_field() {
    let thermostat = std::fs::read_to_string(THERMOSTAT).unwrap();

    // Unknown field.
    let unknown = thermostat.replacen("\"version\": 1,", "\"version\": 1, \"colour\": \"red\",", 1);
    assert_ne!(unknown, thermostat);
    for cmd in ["check", "trace"] {
        let err = one_line_error(&[cmd, "-"], &unknown);
        assert!(
            err.contains("colour is not a field here; the fields here are version, name,"),
            "{err}"
        );
    }

    // Negative radius in route[1].
    let negative = thermostat.replacen("\"radius_mm\": 9.0", "\"radius_mm\": -3", 1);
    assert_ne!(negative, thermostat);
    for cmd in ["check", "trace"] {
        let err = one_line_error(&[cmd, "-"], &negative);
        assert!(
            err.contains("route[1].bend.radius_mm must be more than 1.5 mm")
                && err.contains("got -3"),
            "{err}"
        );
    }

    // Options are checked with the scenario's ranges and named.
    let err = one_line_error(&["trace", THERMOSTAT, "--rays", "0"], "");
    assert!(
        err.contains("--rays must be a whole number from 1 to 10⁹") && err.contains("got “0”"),
        "{err}"
    );
    let err = one_line_error(&["trace", THERMOSTAT, "--rays", "1000000001"], "");
    assert!(err.contains("--rays must be"), "{err}");
    // Every whole-number option names its range, also for a negative number or a word (no
    // parser's "invalid digit found in string").
    for (option, value, range) in [
        ("--rays", "-5", "from 1 to 10⁹"),
        ("--rays", "2.5", "from 1 to 10⁹"),
        ("--seed", "-1", "from 0 to 2⁵³ − 1"),
        ("--seed", "x", "from 0 to 2⁵³ − 1"),
        ("--threads", "-2", "from 0 to 1024 (0 = all cores)"),
        ("--threads", "100000", "from 0 to 1024 (0 = all cores)"),
        ("--paths", "100000", "from 0 to 4096"),
        ("--paths", "-1", "from 0 to 4096"),
    ] {
        let err = one_line_error(&["trace", THERMOSTAT, option, value], "");
        assert!(
            err.contains(&format!("{option} must be a whole number {range}"))
                && err.contains(&format!("got “{value}”")),
            "{option} {value}: {err}"
        );
        assert!(!err.contains("invalid digit"), "{err}");
    }
    // A very long value is not echoed in full.
    let long = "9".repeat(400);
    let err = one_line_error(&["trace", THERMOSTAT, "--seed", &long], "");
    assert!(err.len() < 120, "{err}");

    // The file's own trace settings are checked under their own names.
    let zero_rays = thermostat.replacen("\"rays\": 200000", "\"rays\": 0", 1);
    assert_ne!(zero_rays, thermostat);
    let err = one_line_error(&["trace", "-"], &zero_rays);
    assert!(
        err.contains("trace.rays must be a whole number from 1 to 10⁹"),
        "{err}"
    );
    // ... and an option that fixes them wins.
    ok_stdout(&["trace", "-", "--rays", "50"], &zero_rays);

    let err = one_line_error(&["trace", "no/such/file.json"], "");
    assert!(err.contains("could not read no/such/file.json"), "{err}");
    let err = one_line_error(&["trace"], "");
    assert!(err.contains("<FILE>"), "{err}");
}

/// PMMA index, G. Beadie et al., Appl. Opt. 54, F139 (2015):
/// n² = A0 + A1 λ² + A2 λ⁴ + A3 λ⁻² + A4 λ⁻⁴ + A5 λ⁻⁶ + A6 λ⁻⁸, λ in µm (docs/REFERENCES.md §1).
fn pmma_beadie(lambda_um: f64) -> f64 {
    let a = [
        2.1778, 6.1209e-3, -1.5004e-3, 2.3678e-2, -4.2137e-3, 7.3417e-4, -4.5042e-5,
    ];
    let l2 = lambda_um * lambda_um;
    (a[0]
        + a[1] * l2
        + a[2] * l2 * l2
        + a[3] / l2
        + a[4] / (l2 * l2)
        + a[5] / (l2 * l2 * l2)
        + a[6] / (l2 * l2 * l2 * l2))
        .sqrt()
}

/// Leak-free bend, docs/REFERENCES.md §4 (derived; handbook axial form in the Engineering
/// Plastics Handbook, McGraw-Hill 2006, ch. 1): R_in/d ≥ n_out / (n_core cos θmax − n_out).
fn leak_free_ratio(n_core: f64, n_out: f64, theta_max: f64) -> Option<f64> {
    let denom = n_core * theta_max.cos() - n_out;
    (denom > 0.0).then(|| n_out / denom)
}

fn check_json(path: &str) -> Value {
    serde_json::from_str(&ok_stdout(&["check", path], "")).unwrap()
}

#[test]
fn thermostat_bends_are_tighter_than_leak_free_for_a_lambertian_led() {
    // The criterion itself against the computed table of docs/REFERENCES.md §4: n = 1.49 in
    // air, Lambertian launch from air (θair = 90°, sin θmax = 1/n): 9.562.
    let n = 1.49f64;
    let r = leak_free_ratio(n, 1.0, (1.0 / n).asin()).unwrap();
    assert!((r - 9.562).abs() < 1e-3, "{r}");

    let v = check_json(THERMOSTAT);
    let n_core = f(&v["n_core"]);
    // Beadie 2015 at 590 nm; the basis (air or vacuum) moves n by ~4e-4 only.
    assert!((n_core - pmma_beadie(0.590)).abs() < 1e-3, "{n_core}");
    assert_eq!(f(&v["n_surroundings"]), 1.0);
    assert_eq!(f(&v["n_gap"]), 1.0);
    // Lambertian LED in air: launch 90°, sin θmax = 1/n (below the guiding limit 90° − θc,
    // which equals it here since θc = asin(1/n)).
    assert_eq!(f(&v["launch_half_angle_in_gap_deg"]), 90.0);
    let theta_max = (1.0 / n_core).asin();
    assert!((f(&v["max_internal_angle_deg"]) - theta_max.to_degrees()).abs() < 1e-9);
    let want = leak_free_ratio(n_core, 1.0, theta_max).unwrap();
    // Equivalent form for this launch: n cos θmax = √(n² − 1).
    assert!((want - 1.0 / ((n_core * n_core - 1.0).sqrt() - 1.0)).abs() < 1e-9);

    // The file's bends: 3 mm rod, centre radii 9 and 7.5 mm.
    let bends = v["bends"].as_array().unwrap();
    assert_eq!(bends.len(), 2);
    for (b, (segment, centre)) in bends.iter().zip([(1, 9.0), (3, 7.5)]) {
        let d = 3.0;
        let ratio = (centre - d / 2.0) / d;
        assert_eq!(b["segment"], segment);
        assert!((f(&b["centre_radius_mm"]) - centre).abs() < 1e-12);
        assert!((f(&b["inner_radius_mm"]) - (centre - d / 2.0)).abs() < 1e-12);
        assert!((f(&b["size_across_mm"]) - d).abs() < 1e-12);
        assert!((f(&b["inner_radius_over_size"]) - ratio).abs() < 1e-12);
        let leak_free = f(&b["leak_free_inner_radius_over_size"]);
        assert!(
            (leak_free - want).abs() < 1e-9 * want,
            "{leak_free} vs {want}"
        );
        assert!((f(&b["leak_free_inner_radius_mm"]) - want * d).abs() < 1e-9 * want * d);
        // Tighter than leak-free: R_in/d < the criterion.
        assert!(ratio < want, "{ratio} vs {want}");
        assert_eq!(b["verdict"], "leaks");
    }
}

#[test]
fn bend_figures_follow_the_taper_and_the_launch() {
    // Bike light: the bend turns across the height (turn 90°) after a taper to 3 × 1.5 mm, so
    // the size across is 1.5 mm and the inner radius 5 − 0.75 mm (the file's geometry).
    let v = check_json(BIKE);
    let b = &v["bends"][0];
    assert_eq!(b["segment"], 2);
    assert!((f(&b["size_across_mm"]) - 1.5).abs() < 1e-12);
    assert!((f(&b["inner_radius_mm"]) - 4.25).abs() < 1e-12);
    let n_core = f(&v["n_core"]);
    let theta_max = (1.0 / n_core).asin(); // LED in air (docs/REFERENCES.md §4)
    let want = leak_free_ratio(n_core, 1.0, theta_max).unwrap();
    assert!((f(&b["leak_free_inner_radius_over_size"]) - want).abs() < 1e-9 * want);
    assert_eq!(
        b["verdict"],
        if 4.25 / 1.5 >= want { "ok" } else { "leaks" }
    );

    // Soil sensor: a beam of 8° divergence tilted 4° in water: launch 12° in the gap; the
    // 3 mm pipe's 60 mm bend has R_in/d = 58.5/3 = 19.5.
    let v = check_json(SOIL);
    assert!((f(&v["launch_half_angle_in_gap_deg"]) - 12.0).abs() < 1e-9);
    let (n_core, n_out, n_gap) = (f(&v["n_core"]), f(&v["n_surroundings"]), f(&v["n_gap"]));
    assert_eq!(n_out, n_gap, "water around and in front");
    // Snell at the flat entry face: n_gap sin 12° = n_core sin θmax.
    let theta_max = (n_gap * 12f64.to_radians().sin() / n_core).asin();
    assert!((f(&v["max_internal_angle_deg"]) - theta_max.to_degrees()).abs() < 1e-9);
    let want = leak_free_ratio(n_core, n_out, theta_max).unwrap();
    let b = &v["bends"][0];
    assert!((f(&b["inner_radius_over_size"]) - 19.5).abs() < 1e-12);
    assert!((f(&b["leak_free_inner_radius_over_size"]) - want).abs() < 1e-9 * want);
    assert_eq!(b["verdict"], if 19.5 >= want { "ok" } else { "leaks" });
    // Acceptance n_gap sin θa = NA (Keiser; docs/REFERENCES.md §3), not saturated in water.
    let na = (n_core * n_core - n_out * n_out).sqrt();
    assert!((f(&v["numerical_aperture"]) - na).abs() < 1e-12);
    assert!(
        (f(&v["acceptance_half_angle_in_gap_deg"]) - (na / n_gap).asin().to_degrees()).abs() < 1e-9
    );
    assert_eq!(v["acceptance_saturated"], false);

    // Clad fibre: NA < 1, so a Lambertian LED in air fills the core up to its guiding limit,
    // where n_core cos θmax = n_out: no leak-free radius exists (docs/REFERENCES.md §4).
    let v = check_json(FIBRE);
    let (n_core, n_out) = (f(&v["n_core"]), f(&v["n_surroundings"]));
    assert_eq!(n_out, 1.402);
    assert!(n_core * n_core - n_out * n_out < 1.0);
    let limit = 90.0 - (n_out / n_core).asin().to_degrees();
    assert!((f(&v["max_internal_angle_deg"]) - limit).abs() < 1e-9);
    // NA = √(1.492² − 1.402²) ≈ 0.5104 at 1.492 (docs/REFERENCES.md §3), ~0.505 at 650 nm here.
    assert!((f(&v["numerical_aperture"]) - 0.5104).abs() < 0.01);
    let bends = v["bends"].as_array().unwrap();
    assert_eq!(bends.len(), 3);
    for b in bends {
        assert!(b["leak_free_inner_radius_over_size"].is_null(), "{b}");
        assert!(b["leak_free_inner_radius_mm"].is_null(), "{b}");
        assert_eq!(b["verdict"], "leaks");
        assert!(b["note"]
            .as_str()
            .unwrap()
            .contains("no leak-free radius exists"));
    }
}

#[test]
fn entry_fresnel_loss_is_the_normal_incidence_reflectance() {
    // R = ((n1 − n2)/(n1 + n2))² (Born & Wolf §1.5; docs/REFERENCES.md §2: 1.5 in air → 0.04).
    for path in [THERMOSTAT, SOIL] {
        let v = check_json(path);
        let (n1, n2) = (f(&v["n_gap"]), f(&v["n_core"]));
        let r = ((n1 - n2) / (n1 + n2)).powi(2);
        assert!((f(&v["entry_fresnel_loss"]) - r).abs() < 1e-12, "{path}");
        let theta_c = (f(&v["n_surroundings"]) / n2).asin().to_degrees();
        assert!(
            (f(&v["critical_angle_deg"]) - theta_c).abs() < 1e-9,
            "{path}"
        );
    }
}

// ---- quick-look designs and the material list

#[test]
fn every_example_design_gives_figures() {
    for entry in std::fs::read_dir("examples/designs").unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "json") {
            let (ok, _, out, err) = tirtrace(&["figures", path.to_str().unwrap()], "");
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
    let (ok, _, out, err) = tirtrace(
        &["figures", "-"],
        r#"{"version":1,"material":{"library":"pmma"},"wavelength_nm":590,
            "surroundings":{"library":"air"},"launch_medium":{"library":"air"},
            "diameter_mm":-3,"launch_half_angle_deg":30,"bend_inner_radius_mm":6,"bend_angle_deg":90}"#,
    );
    assert!(!ok);
    assert!(out.is_empty());
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains("diameter_mm must be at least 0.001 mm") && err.contains("got -3"),
        "{err}"
    );
    let (ok, _, _, err) = tirtrace(&["figures", "-"], "{ not json");
    assert!(
        !ok && err.starts_with("tirtrace: could not read the design"),
        "{err}"
    );
    let (ok, _, _, err) = tirtrace(&["figures", "no/such/file.json"], "");
    assert!(
        !ok && err.contains("could not read no/such/file.json"),
        "{err}"
    );
}

#[test]
fn materials_are_listed_with_sources() {
    let (ok, _, out, _) = tirtrace(&["materials"], "");
    assert!(ok);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let list = v.as_array().unwrap();
    assert!(list.len() >= 8);
    assert!(list
        .iter()
        .all(|m| !m["source"].as_str().unwrap().is_empty()));
}

#[test]
fn a_reader_that_stops_early_is_not_an_error() {
    // `tirtrace trace … | head`: the pipe closes before the report is written.
    let mut child = Command::new(env!("CARGO_BIN_EXE_tirtrace"))
        .args([
            "trace",
            "examples/scenarios/thermostat_status_led.json",
            "--rays",
            "4096",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run tirtrace");
    drop(child.stdout.take());
    let out = child.wait_with_output().expect("wait for tirtrace");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(out.status.success(), "{:?}: {stderr}", out.status);
}

/// A sweep study of the thermostat's first bend radius, given on standard input.
fn radius_study(values: &str) -> String {
    let scenario = std::fs::read_to_string(THERMOSTAT).unwrap();
    format!(
        r#"{{ "version": 1, "scenario": {scenario},
             "vary": {{ "field": "route[1].bend.radius_mm", "values": {values} }} }}"#
    )
}

#[test]
fn sweep_prints_one_point_per_value_as_json_and_csv() {
    let study = radius_study("[1, 7.5, 9]");
    let json: Value = serde_json::from_str(&ok_stdout(
        &[
            "sweep",
            "-",
            "--rays",
            "5000",
            "--seed",
            "3",
            "--threads",
            "2",
        ],
        &study,
    ))
    .unwrap();
    assert_eq!(json["rays"], 5000);
    assert_eq!(json["seed"], 3);
    let points = json["points"].as_array().unwrap();
    assert_eq!(points.len(), 3);
    assert_eq!(
        points[0]["problems"][0]["field"],
        "scenario.route[1].bend.radius_mm"
    );
    assert_eq!(points[1]["result"]["difference"]["share"], 0.0);
    assert!(f(&points[2]["result"]["delivered"]["share"]) > 0.0);
    let csv = ok_stdout(&["study", "-", "--rays", "5000", "--csv"], &study);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines.len(), 4, "{csv}");
    assert!(lines[0].starts_with("\"route[1].bend.radius_mm\",\"delivered (share)\""));
    assert!(lines[1].starts_with("1,,") && lines[1].contains("must be more than 1.5 mm"));
    assert!(lines[2].starts_with("7.5,0."), "{}", lines[2]);
    let cells = |l: &str| l.split(',').count();
    assert_eq!(cells(lines[0]), cells(lines[2]));
    // Threads do not change a byte.
    let one = ok_stdout(&["study", "-", "--rays", "5000", "--threads", "1"], &study);
    let two = ok_stdout(&["study", "-", "--rays", "5000", "--threads", "2"], &study);
    assert_eq!(one, two);
}

#[test]
fn sweep_errors_name_the_field() {
    let e = one_line_error(&["study", "-", "--rays", "0"], &radius_study("[7, 9]"));
    assert!(e.contains("--rays must be a whole number from 1"), "{e}");
    let e = one_line_error(&["study", "-"], &radius_study("[7]"));
    assert!(
        e.contains("vary.values must list from 2 to 200 values, got 1"),
        "{e}"
    );
}

#[test]
fn the_example_study_sweeps_its_range() {
    let csv = ok_stdout(
        &[
            "sweep",
            "examples/studies/thermostat_first_bend.json",
            "--rays",
            "3000",
            "--csv",
        ],
        "",
    );
    let values: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    // from 4.5 to 12 in 5 equal steps, both ends included.
    assert_eq!(values, ["4.5", "6", "7.5", "9", "10.5", "12"]);
}

#[test]
fn a_sweep_in_pieces_merges_to_the_whole_run_byte_for_byte() {
    // Three pieces traced separately (as three tasks of a job runner would), merged in another
    // order: the report is the whole run's, byte for byte, JSON and CSV.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("sweep-pieces");
    std::fs::create_dir_all(&dir).unwrap();
    let study = radius_study("[1, 6, 9]");
    let args = ["study", "-", "--rays", "9000", "--seed", "4"];
    let mut names = Vec::new();
    for k in 1..=3 {
        let piece = ok_stdout(
            &[&args[..], &["--piece", &format!("{k}/3")]].concat(),
            &study,
        );
        let name = dir.join(format!("piece-{k}.json"));
        std::fs::write(&name, piece).unwrap();
        names.push(name.to_str().unwrap().to_string());
    }
    fn merge<'a>(args: &[&'a str], names: &[&'a String], extra: &[&'a str]) -> Vec<&'a str> {
        let mut a: Vec<&str> = args.to_vec();
        a.extend_from_slice(extra);
        a.push("--merge");
        a.extend(names.iter().map(|n| n.as_str()));
        a
    }
    let order = [&names[2], &names[0], &names[1]];
    assert_eq!(
        ok_stdout(&merge(&args, &order, &[]), &study),
        ok_stdout(&args, &study)
    );
    assert_eq!(
        ok_stdout(&merge(&args, &order, &["--csv"]), &study),
        ok_stdout(&[&args[..], &["--csv"]].concat(), &study)
    );
    // A missing piece, a piece given twice, another seed: named, nothing printed.
    let e = one_line_error(&merge(&args, &[&names[0], &names[2]], &[]), &study);
    assert!(e.contains("are missing") || e.contains("is missing"), "{e}");
    let e = one_line_error(
        &merge(&args, &[&names[0], &names[1], &names[1], &names[2]], &[]),
        &study,
    );
    assert!(e.contains("is in two pieces"), "{e}");
    let mut other = merge(&args, &order, &[]);
    other[5] = "5";
    let e = one_line_error(&other, &study);
    assert!(
        e.contains("another study") && e.contains("study.scenario.trace.seed"),
        "{e}"
    );
    let e = one_line_error(&[&args[..], &["--piece", "0/3"]].concat(), &study);
    assert!(e.contains("--piece must be K/N with 1 ≤ K ≤ N"), "{e}");
    // A piece written by an older build (version 2: fewer tally columns) is refused.
    let text = std::fs::read_to_string(&names[0]).unwrap();
    assert!(text.contains("\"piece_version\":3") || text.contains("\"piece_version\": 3"));
    let old = dir.join("piece-old.json");
    std::fs::write(
        &old,
        text.replacen("\"piece_version\":3", "\"piece_version\":2", 1)
            .replacen("\"piece_version\": 3", "\"piece_version\": 2", 1),
    )
    .unwrap();
    let old = old.to_str().unwrap().to_string();
    let e = one_line_error(&merge(&args, &[&old, &names[1], &names[2]], &[]), &study);
    assert!(e.contains("piece_version must be 3, got 2"), "{e}");
}

#[test]
fn a_tolerance_study_in_pieces_merges_to_the_whole_run_byte_for_byte() {
    // Three pieces of a study of two batches (one piece empty), merged in another order: the
    // whole run's report, byte for byte, JSON and CSV; a missing piece and another seed named.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("tolerance-pieces");
    std::fs::create_dir_all(&dir).unwrap();
    let file = "examples/studies/bike_light_tolerances.json";
    let args = ["study", file, "--rays", "5000", "--seed", "4"];
    let mut names = Vec::new();
    for k in 1..=3 {
        let piece = ok_stdout(&[&args[..], &["--piece", &format!("{k}/3")]].concat(), "");
        let name = dir.join(format!("piece-{k}.json"));
        std::fs::write(&name, piece).unwrap();
        names.push(name.to_str().unwrap().to_string());
    }
    let merge = |order: &[&String], extra: &[&str]| -> Vec<String> {
        let mut a: Vec<String> = args.iter().map(|s| s.to_string()).collect();
        a.extend(extra.iter().map(|s| s.to_string()));
        a.push("--merge".to_string());
        a.extend(order.iter().map(|n| n.to_string()));
        a
    };
    let order = [&names[2], &names[0], &names[1]];
    let run = |a: Vec<String>| ok_stdout(&a.iter().map(|s| s.as_str()).collect::<Vec<_>>(), "");
    assert_eq!(run(merge(&order, &[])), ok_stdout(&args, ""));
    assert_eq!(
        run(merge(&order, &["--csv"])),
        ok_stdout(&[&args[..], &["--csv"]].concat(), "")
    );
    let fail =
        |a: Vec<String>| one_line_error(&a.iter().map(|s| s.as_str()).collect::<Vec<_>>(), "");
    let e = fail(merge(&[&names[0], &names[1]], &[]));
    assert!(e.contains("batch 1 is missing"), "{e}");
    let mut other = merge(&order, &[]);
    other[5] = "5".to_string();
    let e = fail(other);
    assert!(
        e.contains("another study") && e.contains("study.scenario.trace.seed"),
        "{e}"
    );
    // A sweep's piece is not a tolerance study's.
    let sweep_piece = ok_stdout(
        &[
            "study",
            "examples/studies/thermostat_first_bend.json",
            "--rays",
            "5000",
            "--piece",
            "1/1",
        ],
        "",
    );
    let name = dir.join("sweep-piece.json");
    std::fs::write(&name, sweep_piece).unwrap();
    let e = fail(merge(&[&name.to_str().unwrap().to_string()], &[]));
    assert!(
        e.contains("could not be read as a piece of this study"),
        "{e}"
    );
}

#[test]
fn a_byte_order_mark_at_the_start_of_a_document_is_accepted() {
    // Some editors start a UTF-8 file with U+FEFF; it carries no content. Scenario, study and
    // quick-look design documents read with one give the same answer as without, from standard
    // input and from a file.
    let with_bom = |text: &str| format!("\u{feff}{text}");
    let scenario = std::fs::read_to_string(THERMOSTAT).unwrap();
    assert_eq!(
        ok_stdout(&["check", "-"], &with_bom(&scenario)),
        ok_stdout(&["check", "-"], &scenario)
    );
    let study = radius_study("[7, 9]");
    let args = ["study", "-", "--rays", "3000"];
    assert_eq!(
        ok_stdout(&args, &with_bom(&study)),
        ok_stdout(&args, &study)
    );
    let design =
        std::fs::read_to_string("examples/designs/bike_light_charge_indicator.json").unwrap();
    assert_eq!(
        ok_stdout(&["figures", "-"], &with_bom(&design)),
        ok_stdout(&["figures", "-"], &design)
    );
    let file = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("bom-scenario.json");
    std::fs::write(&file, with_bom(&scenario)).unwrap();
    assert_eq!(
        ok_stdout(&["check", file.to_str().unwrap()], ""),
        ok_stdout(&["check", THERMOSTAT], "")
    );
    // In the core, for every reader (the page hands text to these).
    assert!(tirtrace::scenario::Scenario::from_json(&with_bom(&scenario)).is_ok());
    assert!(tirtrace::study::Study::from_json(&with_bom(&study)).is_ok());
    assert!(tirtrace::quick::QuickDesign::from_json(&with_bom(&design)).is_ok());
}

/// `tirtrace check` gives each reflecting corner its closed-form verdict (the demo's 45° face
/// meets the LED's light from 3° on, below the critical angle: it leaks), and a route without a
/// corner prints no `corners` key, as before there were corners; a bad corner is refused naming
/// its field and range.
#[test]
fn check_gives_each_corner_its_verdict() {
    let out = ok_stdout(
        &["check", "examples/scenarios/board_corner_indicator.json"],
        "",
    );
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let corners = v["corners"].as_array().unwrap();
    assert_eq!(corners.len(), 1);
    assert_eq!(corners[0]["segment"], 1);
    assert_eq!(corners[0]["verdict"], "leaks");
    assert_eq!(corners[0]["face_incidence_deg"], 45.0);
    let plain: serde_json::Value =
        serde_json::from_str(&ok_stdout(&["check", THERMOSTAT], "")).unwrap();
    assert!(plain.get("corners").is_none());

    let mut doc: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string("examples/scenarios/board_corner_indicator.json").unwrap(),
    )
    .unwrap();
    doc["route"][1]["corner"]["angle_deg"] = serde_json::json!(170);
    let (ok, _, _, err) = tirtrace(&["check", "-"], &doc.to_string());
    assert!(!ok);
    assert!(
        err.contains("route[1].corner.angle_deg must be at most 165°, got 170"),
        "{err}"
    );
}

#[test]
fn csv_lists_the_coatings_as_the_json_report_does() {
    // The coated-bend example: its coating table (after the mounts) names each coating, its
    // kind and segment (from 1), and what reaches it and what it absorbs, in %, as the JSON
    // report; the budget's share of coatings is theirs.
    let args = ["trace", MIRRORED_BEND, "--rays", "5000"];
    let csv = ok_stdout(&[&args[..], &["--csv"]].concat(), "");
    let json: Value = serde_json::from_str(&ok_stdout(&args, "")).unwrap();
    let scenario = read_scenario(MIRRORED_BEND);
    let secs = csv_sections(&csv);
    let table = secs
        .iter()
        .find(|s| s[0][0] == "coating")
        .unwrap_or_else(|| panic!("no coating table: {csv}"));
    assert_eq!(
        table[0],
        [
            "coating",
            "kind",
            "on segment",
            "reaches %",
            "± %",
            "absorbed %",
            "± %"
        ]
    );
    assert_eq!(table.len(), 1 + scenario.guide.coatings.len());
    let percent = |v: &Value| tirtrace::export::percent(f(v)).to_string();
    let mut lost = 0.0;
    for (k, (row, c)) in table[1..].iter().zip(&scenario.guide.coatings).enumerate() {
        let r = &json["coatings"][k];
        assert_eq!(row[0], c.name);
        assert_eq!(row[1], c.kind.words());
        assert_eq!(row[2], (c.segment + 1).to_string());
        assert_eq!(row[3], percent(&r["reached"]["share"]));
        assert_eq!(row[5], percent(&r["lost"]["share"]));
        lost += f(&r["lost"]["share"]);
    }
    assert!(lost > 0.0);
    assert!((lost - f(&json["budget"]["coating"]["share"])).abs() < 1e-12);
    let budget = &secs[1];
    assert!(budget
        .iter()
        .any(|row| row[0] == "Absorbed by coatings on the wall"));
}
