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
            "ray,parent,x_mm,y_mm,direction_deg,wavelength_nm,power_s_w,power_p_w,kind,object_id,object,edge,n1,n2,incidence_deg"
        )
    );
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len() as u64, json["n_events"].as_u64().expect("n_events"));
    assert!(rows.iter().all(|r| r.split(',').count() == 15));
    assert!(rows.iter().any(|r| r.contains(",tir,1,lower prism,")));
    // Detectors in the JSON carry their id and name.
    let detectors = json["detectors"].as_array().expect("detectors");
    assert_eq!(detectors.len(), 1);
    assert_eq!((detectors[0]["id"].as_u64(), detectors[0]["name"].as_str()), (Some(4), Some("eyepiece plane")));
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
    (
        "unknown_material.ron",
        "unknown_material.ron:5:9: error: object 1 \"block\": the material \"unobtainium\" is not defined",
    ),
    (
        "self_intersecting.ron",
        "self_intersecting.ron:5:9: error: object 1 \"bow tie\": the outline is not a usable outline",
    ),
    ("newer_version.ron", "the scene is version 99"),
    ("unknown_shape_field.ron", "unknown_shape_field.ron:5:"),
    (
        "negative_cauchy.ron",
        "negative_cauchy.ron:9:9: error: object 1 \"block\": the material \"inverted\" gives no usable index at 550 nm",
    ),
    (
        "sellmeier_pole.ron",
        "sellmeier_pole.ron:9:9: error: object 1 \"block\": the material \"resonant\" gives no usable index at 500 nm",
    ),
    (
        "infinite_weights.ron",
        "infinite_weights.ron:5:9: error: object 1 \"beam\": the spectral weights add up to more than the largest number",
    ),
    ("huge_power.ron", "huge_power.ron:5:9: error: object 1 \"beam a\": power_w must be from 0 to 1e12 W, it is 1e308"),
    ("far_absorber.ron", "far_absorber.ron:6:9: error: object 2 \"far wall\": it reaches (3e10, "),
    ("tiny_solid.ron", "tiny_solid.ron:6:9: error: object 2 \"speck\": it is 1e-12 mm across"),
    ("huge_bulge.ron", "huge_bulge.ron:5:9: error: object 1 \"mirror\": a bulge of 1e300 is beyond ±1e6"),
    ("zero_length_mirror.ron", "zero_length_mirror.ron:5:9: error: object 1 \"mirror\": piece 1 has zero length"),
];

/// Words each broken file's message must also contain.
const ALSO: &[(&str, &str)] = &[
    ("unknown_shape_field.ron", "Unexpected field named `rotation_degs`"),
    ("far_absorber.ron", "outside the supported area of ±1e6 mm"),
    ("tiny_solid.ron", "too small for the trace to resolve"),
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
        for (_, also) in ALSO.iter().filter(|(n, _)| n == name) {
            assert!(err.contains(also), "{name}: expected {also:?} in\n{err}");
        }
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

#[test]
fn more_threads_than_the_cap_are_refused() {
    let out = raydraft(&["trace", "scenes/prism_fold.ron", "--threads", "257"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--threads must be from 1 to 256, it is 257"), "{}", text(&out.stderr));
    let out = raydraft(&["trace", "scenes/prism_fold.ron", "--threads", "0"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn folders_and_devices_are_refused_as_scene_files_by_check_and_trace() {
    let mut cases = vec![("scenes", "is a folder, not a scene file")];
    if cfg!(unix) {
        cases.push(("/dev/zero", "is a device, pipe or socket, not a scene file"));
    }
    for (path, expected) in cases {
        for command in ["check", "trace"] {
            let out = raydraft(&[command, path]);
            assert_eq!(out.status.code(), Some(2), "{command} {path}");
            assert!(text(&out.stderr).contains(expected), "{command} {path}: {}", text(&out.stderr));
        }
    }
}

#[test]
fn check_and_trace_both_give_the_reason_a_file_cannot_be_read() {
    let dir = tempfile::tempdir().expect("temp dir");
    let missing = dir.path().join("missing.ron");
    let not_text = dir.path().join("latin1.ron");
    // "é" in Latin-1 on line 2: not UTF-8.
    std::fs::write(&not_text, b"(\n    title: \"caf\xe9\",\n)").expect("write");
    for command in ["check", "trace"] {
        let out = raydraft(&[command, missing.to_str().expect("path")]);
        assert_eq!(out.status.code(), Some(2));
        let err = text(&out.stderr);
        assert!(err.contains("missing.ron: cannot read the file: "), "{command}: {err}");
        assert!(err.to_lowercase().contains("no such file"), "{command}: {err}");

        let out = raydraft(&[command, not_text.to_str().expect("path")]);
        assert_eq!(out.status.code(), Some(2));
        let err = text(&out.stderr);
        assert!(err.contains("latin1.ron:2:16: the file is not UTF-8 text"), "{command}: {err}");
    }
}

#[test]
fn a_byte_order_mark_is_accepted() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("bom.ron");
    let scene = std::fs::read_to_string("scenes/prism_fold.ron").expect("demo");
    std::fs::write(&path, format!("\u{feff}{scene}")).expect("write");
    let out = raydraft(&["check", path.to_str().expect("path")]);
    assert!(out.status.success(), "{}", text(&out.stderr));
}

#[test]
fn a_huge_token_is_cut_in_the_message() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("long.ron");
    let token = "x".repeat(10_000_000);
    std::fs::write(&path, format!("(version: 1, objects: [], {token}: 1)")).expect("write");
    for command in ["check", "trace"] {
        let out = raydraft(&[command, path.to_str().expect("path")]);
        assert_eq!(out.status.code(), Some(2));
        let err = text(&out.stderr);
        assert!(err.len() < 1000, "{command}: {} bytes of message", err.len());
        assert!(err.contains(&format!("{}…", "x".repeat(59))), "{command}: {err}");
    }
}

#[test]
fn an_output_may_not_overwrite_the_scene_or_another_output() {
    let dir = tempfile::tempdir().expect("temp dir");
    let scene = dir.path().join("s.ron");
    std::fs::copy("scenes/prism_fold.ron", &scene).expect("copy");
    let before = std::fs::read(&scene).expect("read");
    let s = scene.to_str().expect("path");
    // The same file by another spelling of its path.
    let other_spelling = dir.path().join(".").join("s.ron");
    for flag in ["--svg", "--csv", "--events"] {
        let out = raydraft(&["trace", s, flag, other_spelling.to_str().expect("path")]);
        assert_eq!(out.status.code(), Some(2), "{flag}");
        assert!(text(&out.stderr).contains("is the scene file itself"), "{flag}: {}", text(&out.stderr));
    }
    assert_eq!(std::fs::read(&scene).expect("read"), before, "the scene was overwritten");

    let a = dir.path().join("a.out");
    let a_again = dir.path().join(".").join("a.out");
    let out = raydraft(&["trace", s, "--svg", a.to_str().expect("path"), "--csv", a_again.to_str().expect("path")]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--svg and --csv both write to"), "{}", text(&out.stderr));
    assert!(!a.exists());
}

#[test]
fn check_lists_a_warning_for_coincident_solids_with_their_place() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("twins.ron");
    std::fs::write(
        &path,
        r#"(
    version: 1,
    objects: [
        (id: 1, name: "a", kind: Solid((shape: Rectangle(position: (0.0, 0.0), width: 10.0, height: 5.0), material: "pmma"))),
        (id: 2, name: "b", kind: Solid((shape: Rectangle(position: (0.0, 0.0), width: 10.0, height: 5.0), material: "water"))),
        (id: 3, name: "beam", kind: BeamSource((center: (-20.0, 0.0), width: 1.0, direction_deg: 0.0,
            emission: (rays: 3, power_w: 1.0, spectrum: [(nm: 550.0, weight: 1.0)])))),
    ],
)"#,
    )
    .expect("write");
    let out = raydraft(&["check", path.to_str().expect("path")]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("twins.ron:5:9: warning: object 2 \"b\": it has the same outline as solid 1 \"a\""), "{s}");
    assert!(s.contains("1 warning"), "{s}");
}

/// Ctrl+C stops a long trace cleanly: the partial budget is printed, marked, and the exit
/// code is 130. The signal is sent once the handler's thread exists (it is installed before
/// any tracing starts), so the test does not depend on timing.
#[cfg(target_os = "linux")]
#[test]
fn ctrl_c_stops_a_trace_with_a_partial_budget() {
    use std::process::Stdio;
    let mut child = Command::new(env!("CARGO_BIN_EXE_raydraft"))
        .args(["trace", "scenes/light_guide.ron", "--json", "--rays", "10000000", "--threads", "1"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start raydraft");
    let tasks = format!("/proc/{}/task", child.id());
    // The handler's thread and the trace's worker: at least three threads in all.
    while std::fs::read_dir(&tasks).map_or(0, Iterator::count) < 3 {
        assert!(child.try_wait().expect("wait").is_none(), "raydraft ended before it was interrupted");
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    let status = Command::new("kill").args(["-INT", &child.id().to_string()]).status().expect("kill");
    assert!(status.success());
    let out = child.wait_with_output().expect("wait");
    assert_eq!(out.status.code(), Some(130), "{}", text(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(json["partial"], true);
    assert!(json["closure_error"].as_f64().expect("closure") < 1e-9);
    assert!(text(&out.stderr).contains("the budget above is partial"), "{}", text(&out.stderr));
}

#[test]
fn the_events_table_names_objects_by_id_and_edges_as_written() {
    // A square written clockwise: edge 0 left, 1 top, 2 right, 3 bottom. Ids are not
    // positions: the square is the second object and has id 7.
    let scene = r#"(
        version: 1,
        settings: (mode: Principal),
        objects: [
            (id: 3, name: "lamp", kind: BeamSource((center: (5.0, 20.0), width: 2.0, direction_deg: -90.0,
                emission: (rays: 3, power_w: 1.0, spectrum: [(nm: 550.0, weight: 1.0)])))),
            (id: 7, name: "square", kind: Solid((
                shape: Outline(points: [(0.0, 0.0), (0.0, 10.0), (10.0, 10.0), (10.0, 0.0)]),
                material: "pmma"))),
        ],
    )"#;
    let dir = tempfile::tempdir().expect("temp dir");
    let file = dir.path().join("square.ron");
    std::fs::write(&file, scene).expect("scene written");
    let events = dir.path().join("events.csv");
    let out = raydraft(&["trace", file.to_str().expect("path"), "--events", events.to_str().expect("path")]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let table = std::fs::read_to_string(&events).expect("events written");
    let mut lines = table.lines();
    let header: Vec<&str> = lines.next().expect("header").split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).expect("column");
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let launch = rows.iter().find(|r| r[col("kind")] == "launch").expect("a launch");
    assert_eq!((launch[col("object_id")], launch[col("object")]), ("3", "lamp"));
    // Each ray's first hit is the top face, y = 10.
    let top: Vec<&Vec<&str>> =
        rows.iter().filter(|r| r[col("kind")] == "refract" && r[col("y_mm")].parse::<f64>() == Ok(10.0)).collect();
    assert_eq!(top.len(), 3, "{table}");
    for r in top {
        assert_eq!((r[col("object_id")], r[col("object")], r[col("edge")]), ("7", "square", "1"));
    }
}

#[test]
fn the_json_budget_lists_absorbers_and_detectors_by_id_and_name() {
    let out = raydraft(&["trace", "scenes/light_guide.ron", "--json", "--rays", "20"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let absorbers = json["absorbers"].as_array().expect("absorbers");
    let sheet = absorbers.iter().find(|a| a["id"] == 3).expect("the reflector sheet absorbs");
    assert_eq!(sheet["name"], "reflector sheet");
    assert!(sheet["power_w"].as_f64().expect("power") > 0.0);
    let detectors = json["detectors"].as_array().expect("detectors");
    assert_eq!((detectors[0]["id"].as_u64(), detectors[0]["name"].as_str()), (Some(4), Some("viewing plane")));
}

#[test]
fn a_killed_run_never_leaves_a_truncated_output_in_place_of_a_good_one() {
    // Whenever the run is killed, the events table is either the good file that was there
    // before or the complete new one: outputs are written to a temporary file and renamed.
    let dir = tempfile::tempdir().expect("temp dir");
    let events = dir.path().join("events.csv");
    let old = "a good table from an earlier run\n";
    for wait_ms in [0u64, 30, 80, 150, 300, 600] {
        std::fs::write(&events, old).expect("old table");
        let mut child = Command::new(env!("CARGO_BIN_EXE_raydraft"))
            .args(["trace", "scenes/light_guide.ron", "--rays", "3000", "--events"])
            .arg(&events)
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .expect("start raydraft");
        std::thread::sleep(std::time::Duration::from_millis(wait_ms));
        let _ = child.kill(); // SIGKILL on Unix
        let _ = child.wait();
        let now = std::fs::read_to_string(&events).expect("the table is still there");
        if now != old {
            assert!(now.starts_with("ray,parent,") && now.ends_with('\n'), "a truncated table after {wait_ms} ms");
            let columns = now.lines().next().map_or(0, |h| h.split(',').count());
            assert!(now.lines().all(|l| l.split(',').count() == columns), "a cut row after {wait_ms} ms");
        }
        let leftovers: Vec<_> = std::fs::read_dir(dir.path())
            .expect("list")
            .filter_map(Result::ok)
            .filter(|e| e.file_name() != "events.csv")
            .collect();
        // A temporary file may be left by a kill, but it never replaces the table.
        for e in leftovers {
            assert!(e.file_name().to_string_lossy().ends_with(".tmp"), "{:?}", e.file_name());
        }
    }
}
