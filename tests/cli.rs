//! Runs the real `raydraft` binary on the demo scenes and on broken files.

use std::process::{Command, Output};

mod common;
use common::files_in;

fn raydraft(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_raydraft"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run raydraft")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[test]
fn every_demo_traces_to_json_with_a_closed_budget_and_an_svg() {
    let dir = tempfile::tempdir().expect("temp dir");
    for scene in files_in("scenes") {
        let name = scene.file_stem().expect("stem").to_string_lossy().into_owned();
        let svg = dir.path().join(format!("{name}.svg"));
        let csv = dir.path().join(format!("{name}.csv"));
        let out = raydraft(&[
            "trace",
            scene.to_str().expect("path"),
            "--mode",
            "tree",
            "--json",
            "--svg",
            svg.to_str().expect("path"),
            "--csv",
            csv.to_str().expect("path"),
        ]);
        assert!(out.status.success(), "{name}: {}", text(&out.stderr));
        let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(json["mode"], "tree");
        let launched = json["launched_w"].as_f64().expect("launched");
        assert!(launched > 0.0, "{name}");
        let detected: f64 =
            json["detected"].as_object().expect("detected").values().filter_map(serde_json::Value::as_f64).sum();
        let sinks = ["escaped_w", "absorbed_w", "trapped_w", "below_threshold_w"]
            .iter()
            .map(|k| json[k].as_f64().expect("sink"))
            .sum::<f64>()
            + detected;
        assert!(((launched - sinks) / launched).abs() < 1e-9, "{name}: {launched} vs {sinks}");
        assert!(json["closure_error"].as_f64().expect("closure") < 1e-9, "{name}");
        assert!(detected > 0.0, "{name}: the demo's detector sees nothing");

        let picture = std::fs::read_to_string(&svg).expect("svg written");
        let doc =
            roxmltree::Document::parse(&picture).unwrap_or_else(|e| panic!("{name}: SVG is not well-formed: {e}"));
        assert_eq!(doc.root_element().tag_name().name(), "svg");
        assert!(doc.descendants().any(|n| n.has_tag_name("polyline")), "{name}: no rays drawn");

        let table = std::fs::read_to_string(&csv).expect("csv written");
        assert!(table.starts_with("detector,bin,position_mm,"), "{name}");
        assert!(table.lines().count() > 1, "{name}");
    }
}

#[test]
fn the_text_budget_names_every_sink() {
    let out = raydraft(&["trace", "scenes/light_guide.ron"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    for word in [
        "launched",
        "detected by \"viewing plane\"",
        "escaped",
        "absorbed",
        "trapped",
        "below threshold",
        "closure error",
    ] {
        assert!(s.contains(word), "missing {word}:\n{s}");
    }
}

#[test]
fn the_events_table_has_one_row_per_event() {
    let dir = tempfile::tempdir().expect("temp dir");
    let events = dir.path().join("events.csv");
    let out = raydraft(&["trace", "scenes/prism_fold.ron", "--json", "--events", events.to_str().expect("path")]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let table = std::fs::read_to_string(&events).expect("events written");
    let mut lines = table.lines();
    assert_eq!(
        lines.next(),
        Some(
            "ray,parent,x_mm,y_mm,direction_deg,wavelength_nm,power_s_w,power_p_w,kind,object,edge,n1,n2,incidence_deg"
        )
    );
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len() as u64, json["n_events"].as_u64().expect("n_events"));
    assert!(rows.iter().all(|r| r.split(',').count() == 14));
    assert!(rows.iter().any(|r| r.contains(",tir,lower prism,")));
    // A launched ray of the beam travels along +x.
    let first: Vec<&str> = rows[0].split(',').collect();
    assert_eq!(first[8], "launch");
    assert!(first[4].parse::<f64>().expect("direction").abs() < 1e-9);
}

#[test]
fn overrides_change_the_trace() {
    let out =
        raydraft(&["trace", "scenes/lens_focus.ron", "--json", "--mode", "principal", "--rays", "5", "--threads", "1"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(json["mode"], "principal");
    // Principal mode does not split: one path per launched ray (5 rays x 3 lines).
    assert_eq!(json["n_rays"], 15);
}

#[test]
fn check_passes_every_demo() {
    for scene in files_in("scenes") {
        let out = raydraft(&["check", scene.to_str().expect("path")]);
        assert!(out.status.success(), "{}: {}{}", scene.display(), text(&out.stdout), text(&out.stderr));
        assert!(text(&out.stdout).contains("ok:"));
    }
}

/// Each broken file, and what its message must contain (a `file:line:col` where the
/// problem has a place).
const BROKEN: &[(&str, &str)] = &[
    ("syntax_error.ron", "syntax_error.ron:5:16: Expected comma"),
    ("unknown_field.ron", "unknown_field.ron:5:89: Unexpected field named `reflectence`"),
    ("wrong_type.ron", "wrong_type.ron:5:"),
    ("nan.ron", "nan.ron:5:81: the number `NaN` is not finite"),
    ("negative_rays.ron", "negative_rays.ron:6:"),
    ("zero_rays.ron", "rays must be from 1 to 10000000, it is 0"),
    ("absurd_rays.ron", "rays must be from 1 to 10000000, it is 4000000000"),
    ("unknown_material.ron", "the material \"unobtainium\" is not defined"),
    ("self_intersecting.ron", "cross each other"),
    ("newer_version.ron", "the scene is version 99"),
];

#[test]
fn check_refuses_every_broken_file_with_exit_code_2() {
    let on_disk: Vec<String> = files_in("tests/data/bad")
        .iter()
        .map(|p| p.file_name().expect("name").to_string_lossy().into_owned())
        .collect();
    for name in &on_disk {
        assert!(BROKEN.iter().any(|(n, _)| n == name), "{name} has no expectation here");
    }
    for (name, expected) in BROKEN {
        let path = format!("tests/data/bad/{name}");
        let out = raydraft(&["check", &path]);
        assert_eq!(out.status.code(), Some(2), "{name}");
        let err = text(&out.stderr);
        assert!(err.contains(expected), "{name}: expected {expected:?} in\n{err}");
        // The trace command refuses the same files the same way.
        let out = raydraft(&["trace", &path]);
        assert_eq!(out.status.code(), Some(2), "{name}");
        assert!(text(&out.stderr).starts_with("error: "), "{name}");
    }
}

#[test]
fn a_missing_file_is_bad_input() {
    let out = raydraft(&["trace", "scenes/no_such_scene.ron"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no_such_scene.ron: cannot read the file"));
}

#[test]
fn an_unwritable_output_is_an_other_failure() {
    let out = raydraft(&["trace", "scenes/prism_fold.ron", "--svg", "/no/such/folder/x.svg"]);
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("cannot write the picture to /no/such/folder/x.svg"));
}

#[test]
fn bad_arguments_exit_2() {
    assert_eq!(raydraft(&["trace", "scenes/prism_fold.ron", "--mode", "sideways"]).status.code(), Some(2));
    assert_eq!(raydraft(&["trace", "scenes/prism_fold.ron", "--rays", "0"]).status.code(), Some(2));
    assert_eq!(raydraft(&["frobnicate"]).status.code(), Some(2));
}

#[test]
fn index_prints_a_library_value_and_refuses_unknown_materials() {
    let out = raydraft(&["index", "fused-silica", "--wavelength", "587.5618"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    // nd = 1.4585 for fused silica: Malitson 1965, "Interspecimen comparison of the
    // refractive index of fused silica", JOSA 55, 1205.
    assert!(s.contains("n = 1.4584") || s.contains("n = 1.4585"), "{s}");
    assert!(s.contains("absolute"));

    let out = raydraft(&["index", "unobtainium", "--wavelength", "550"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no library material is called \"unobtainium\""));

    let out = raydraft(&["index", "--list"]);
    assert!(out.status.success());
    let s = text(&out.stdout);
    for name in ["air", "water", "fused-silica", "pmma", "polycarbonate"] {
        assert!(s.lines().any(|l| l.starts_with(name)), "{name} missing:\n{s}");
    }
}

#[test]
fn raydraft_file_reports_a_bad_scene_before_opening_a_window() {
    // The file is loaded (and a bad one rejected with its line and column) before any window.
    let out = raydraft(&["tests/data/bad/syntax_error.ron"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("syntax_error.ron:"), "{}", text(&out.stderr));
}

#[test]
fn bare_raydraft_without_a_display_says_the_window_could_not_open() {
    let out = Command::new(env!("CARGO_BIN_EXE_raydraft"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .env_remove("DISPLAY")
        .env_remove("WAYLAND_DISPLAY")
        .output()
        .expect("run raydraft");
    assert_eq!(out.status.code(), Some(1));
    assert!(text(&out.stderr).contains("the editor window could not be opened"), "{}", text(&out.stderr));
}
