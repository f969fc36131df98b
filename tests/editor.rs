//! The editor driven through `egui_kittest`: real pointer and key events into the real app
//! state, waiting for the background trace with harness steps.

use std::time::Duration;

use egui::{Event, Modifiers, PointerButton, Pos2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use raydraft::app::{Command, EditorApp, Options, Tool};
use raydraft::geom::Vec2;
use raydraft::scene::{ObjectKind, Shape};

/// A square of PMMA lit by a beam from the left, with a detector behind it.
const SQUARE: &str = r#"(
    version: 1,
    title: "square",
    objects: [
        (id: 1, name: "block", kind: Solid((
            shape: Outline(points: [(0.0, 0.0), (20.0, 0.0), (20.0, 20.0), (0.0, 20.0)]),
            material: "pmma",
        ))),
        (id: 2, name: "beam", kind: BeamSource((
            center: (-10.0, 10.0), width: 10.0, direction_deg: 0.0,
            emission: (rays: 9, power_w: 1.0, spectrum: [(nm: 550.0, weight: 1.0)]),
        ))),
        (id: 3, name: "screen", kind: Detector((path: (points: [(40.0, -20.0), (40.0, 40.0)])))),
    ],
)"#;

fn app_with(text: &str) -> (EditorApp, tempfile::TempDir) {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("square.ron");
    std::fs::write(&path, text).expect("write scene");
    (EditorApp::new(Options { file: Some(path), ..Options::default() }), dir)
}

fn harness(mut app: EditorApp) -> Harness<'static, EditorApp> {
    // The legend floats over the canvas's corner; keep it out of the way of the clicks.
    app.prefs.show_legend = false;
    Harness::builder()
        .with_size(egui::vec2(1280.0, 820.0))
        .build_ui_state(|ui, app: &mut EditorApp| app.frame_ui(ui), app)
}

/// Steps until the trace on screen belongs to the current scene.
fn wait_for_trace(h: &mut Harness<'_, EditorApp>) {
    for _ in 0..500 {
        h.step();
        let app = h.state();
        if app.worker.shown_revision() == Some(app.doc.revision) && !app.worker.is_running() {
            return;
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    panic!("the trace did not arrive");
}

fn screen(h: &Harness<'_, EditorApp>, x: f64, y: f64) -> Pos2 {
    h.state().view.screen_from_scene(Vec2::new(x, y))
}

fn press(h: &mut Harness<'_, EditorApp>, pos: Pos2, pressed: bool) {
    h.event(Event::PointerMoved(pos));
    h.event(Event::PointerButton { pos, button: PointerButton::Primary, pressed, modifiers: Modifiers::NONE });
    h.step();
}

fn click(h: &mut Harness<'_, EditorApp>, pos: Pos2) {
    press(h, pos, true);
    press(h, pos, false);
}

/// A click whose press and release arrive in the same frame (a quick tap, or a click sent
/// by a tool like xdotool).
fn quick_click(h: &mut Harness<'_, EditorApp>, pos: Pos2) {
    h.event(Event::PointerMoved(pos));
    h.step();
    for pressed in [true, false] {
        h.event(Event::PointerButton { pos, button: PointerButton::Primary, pressed, modifiers: Modifiers::NONE });
    }
    h.step();
}

fn drag(h: &mut Harness<'_, EditorApp>, from: Pos2, to: Pos2) {
    h.event(Event::PointerMoved(from));
    h.step();
    press(h, from, true);
    for k in 1..=6 {
        let p = from + (to - from) * (k as f32 / 6.0);
        h.event(Event::PointerMoved(p));
        h.step();
    }
    press(h, to, false);
    h.step();
}

fn block_points(app: &EditorApp) -> (Vec<(f64, f64)>, Vec<f64>) {
    match &app.doc.scene.object(1).expect("block").kind {
        ObjectKind::Solid(s) => match &s.shape {
            Shape::Outline { points, bulges } => (points.clone(), bulges.clone()),
            other => panic!("not a free outline: {other:?}"),
        },
        _ => panic!("not a solid"),
    }
}

#[test]
fn drawing_a_solid_by_clicks_adds_one_undoable_object() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    h.step();
    let before = h.state().doc.scene.objects.len();
    h.state_mut().push(Command::SetTool(Tool::Solid));
    h.step();
    let corners = [(30.0, 0.0), (36.0, 0.0), (33.0, 6.0)];
    for (x, y) in corners {
        let p = screen(&h, x, y);
        click(&mut h, p);
    }
    // Clicking the first vertex closes the outline.
    let p = screen(&h, 30.0, 0.0);
    click(&mut h, p);
    h.step();
    let app = h.state();
    assert_eq!(app.doc.scene.objects.len(), before + 1);
    let new = app.doc.scene.objects.last().expect("new object");
    match &new.kind {
        ObjectKind::Solid(s) => match &s.shape {
            Shape::Outline { points, .. } => assert_eq!(points, &vec![(30.0, 0.0), (36.0, 0.0), (33.0, 6.0)]),
            other => panic!("expected a free outline, got {other:?}"),
        },
        other => panic!("expected a solid, got {other:?}"),
    }
    assert_eq!(app.tool, Tool::Select);
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::Z);
    h.step();
    assert_eq!(h.state().doc.scene.objects.len(), before);
    h.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, egui::Key::Z);
    h.step();
    assert_eq!(h.state().doc.scene.objects.len(), before + 1);
}

#[test]
fn dragging_an_edge_middle_bends_it_into_an_arc() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    // The middle of the bottom edge, pulled 3 mm down (outward: to the right of a → b).
    let from = screen(&h, 10.0, 0.0);
    let to = screen(&h, 10.0, -3.0);
    drag(&mut h, from, to);
    let (_, bulges) = block_points(h.state());
    // Sagitta 3 mm over a 20 mm chord: bulge = 2·3/20 = 0.3 (tan of a quarter of the arc angle).
    assert!((bulges[0] - 0.3).abs() < 0.02, "bulge {bulges:?}");
    assert!(bulges[1..].iter().all(|b| *b == 0.0));
    // One undo step for the whole drag.
    h.state_mut().push(Command::Undo);
    h.step();
    let (_, bulges) = block_points(h.state());
    assert!(bulges.iter().all(|b| *b == 0.0), "{bulges:?}");
}

#[test]
fn dragging_a_vertex_retraces_and_undoes_as_one_step() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    let finished = h.state().worker.n_finished;
    let detected_before = h.state().worker.trace().expect("trace").budget.detected_total();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    // Move the top-right corner far up and right: the block's exit face tilts.
    let from = screen(&h, 20.0, 20.0);
    let to = screen(&h, 30.0, 26.0);
    drag(&mut h, from, to);
    let (points, _) = block_points(h.state());
    assert_eq!(points[2], (30.0, 26.0));
    wait_for_trace(&mut h);
    let app = h.state();
    assert!(app.worker.n_finished > finished, "no retrace after the drag");
    let detected_after = app.worker.trace().expect("trace").budget.detected_total();
    assert!(detected_after.is_finite() && detected_before.is_finite());
    assert!(app.doc.is_modified());
    assert!(app.title().contains('•'));
    h.state_mut().push(Command::Undo);
    h.step();
    assert_eq!(block_points(h.state()).0[2], (20.0, 20.0));
    h.state_mut().push(Command::Redo);
    h.step();
    assert_eq!(block_points(h.state()).0[2], (30.0, 26.0));
}

#[test]
fn saving_and_reopening_gives_the_same_scene() {
    let (app, dir) = app_with(SQUARE);
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    h.key_press(egui::Key::ArrowRight);
    h.step();
    let out = dir.path().join("moved.ron");
    h.state_mut().push(Command::SaveAs(out.clone()));
    h.step();
    assert!(!h.state().doc.is_modified());
    assert_eq!(block_points(h.state()).0[0], (1.0, 0.0));
    let reopened = EditorApp::new(Options { file: Some(out), ..Options::default() });
    assert_eq!(reopened.doc.scene, h.state().doc.scene);
}

#[test]
fn an_absorbing_material_changes_the_budget() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    let absorbed_before = h.state().worker.trace().expect("trace").budget.absorbed;
    let mut m = raydraft::optics::Material::constant("grey glass", 1.5);
    m.absorption_per_mm = 0.05;
    h.state_mut().push(Command::Edit(raydraft::app::Edit::InsertMaterial { index: 0, material: m }));
    h.state_mut().push(Command::Edit(raydraft::app::Edit::SetMaterial { id: 1, material: "grey glass".into() }));
    h.step();
    wait_for_trace(&mut h);
    let b = &h.state().worker.trace().expect("trace").budget;
    // Beer–Lambert over 20 mm at 0.05/mm keeps e^-1 ≈ 37 % (common practice), so well over
    // half of what enters the block is absorbed.
    assert!(b.absorbed > absorbed_before + 0.4 * b.launched, "absorbed {} of {}", b.absorbed, b.launched);
}

#[test]
fn closing_with_unsaved_changes_asks_first() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    h.key_press(egui::Key::ArrowUp);
    h.step();
    assert!(h.state().doc.is_modified());
    h.input_mut().viewports.entry(egui::ViewportId::ROOT).or_default().events.push(egui::ViewportEvent::Close);
    h.step();
    h.step();
    assert!(h.state().is_confirming_discard(), "no confirmation asked");
    h.get_by_label("Cancel").click();
    h.step();
    h.step();
    assert!(!h.state().is_confirming_discard());
    assert!(h.state().doc.is_modified(), "cancel must keep the changes");

    // Asked again, "Discard changes" lets the window close.
    h.input_mut().viewports.entry(egui::ViewportId::ROOT).or_default().events.push(egui::ViewportEvent::Close);
    h.step();
    h.step();
    assert!(h.state().is_confirming_discard());
    h.get_by_label("Discard changes").click();
    h.step();
    let closes = h
        .output()
        .viewport_output
        .get(&egui::ViewportId::ROOT)
        .is_some_and(|v| v.commands.contains(&egui::ViewportCommand::Close));
    assert!(closes, "discarding must close the window");
}

#[test]
fn the_demo_scene_opens_and_traces() {
    let mut h = harness(EditorApp::new(Options::default()));
    wait_for_trace(&mut h);
    let app = h.state();
    assert_eq!(app.doc.display_name(), "untitled");
    assert!(!app.doc.is_modified());
    let t = app.worker.trace().expect("trace");
    assert!(t.budget.launched > 0.0);
    assert!(t.budget.closure_error() < 1e-9);
}

/// The square of `SQUARE` with one ray arriving at its left face (x = 0) at y = 10, 20°
/// from the face's normal.
const TILTED: &str = r#"(
    version: 2,
    title: "tilted",
    next_id: 4,
    objects: [
        (id: 1, name: "block", kind: Solid((
            shape: Outline(points: [(0.0, 0.0), (20.0, 0.0), (20.0, 20.0), (0.0, 20.0)]),
            material: "pmma",
        ))),
        (id: 2, name: "beam", kind: BeamSource((
            center: (-10.0, 6.360303), width: 0.001, direction_deg: 20.0,
            emission: (rays: 1, power_w: 1.0, spectrum: [(nm: 550.0, weight: 1.0)]),
        ))),
        (id: 3, name: "screen", kind: Detector((path: (points: [(40.0, -20.0), (40.0, 40.0)])))),
    ],
)"#;

#[test]
fn clicking_a_ray_explains_its_refraction_with_snell_and_fresnel() {
    let (app, _dir) = app_with(TILTED);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    h.state_mut().push(Command::SetTool(Tool::InspectRay));
    h.step();
    // A point on the incoming ray, in air.
    let y = 10.0 - 5.0 * 20f64.to_radians().tan();
    let p = screen(&h, -5.0, y);
    click(&mut h, p);
    h.step();
    let app = h.state();
    let x = app.analysis.ray.as_ref().and_then(|r| r.explanation.as_ref()).expect("the ray is explained");
    let s = x.steps.iter().find(|s| s.kind == raydraft::trace::EventKind::Refract).expect("a refraction");
    assert!((s.point - Vec2::new(0.0, 10.0)).norm() < 1e-4, "at {:?}", s.point);
    let i = s.incidence_deg.expect("an angle");
    assert!((i - 20.0).abs() < 1e-4, "incidence {i}");
    // Snell's law, n₁ sin θ₁ = n₂ sin θ₂, and the Fresnel reflectance for s polarisation,
    // Rs = ((n₁cos θ₁ − n₂cos θ₂)/(n₁cos θ₁ + n₂cos θ₂))² (Hecht 2017, Optics, 5th ed.,
    // §4.6.2, from memory), worked out here from the indices the inspector shows.
    let (n1, n2) = (s.n1, s.n2);
    assert!((n1 - 1.0).abs() < 1e-12 && n2 > 1.45 && n2 < 1.52, "n {n1} -> {n2}");
    let t = (n1 * i.to_radians().sin() / n2).asin();
    assert!((s.refraction_deg.expect("refracted") - t.to_degrees()).abs() < 1e-9);
    let (ci, ct) = (i.to_radians().cos(), t.cos());
    let rs = ((n1 * ci - n2 * ct) / (n1 * ci + n2 * ct)).powi(2);
    assert!((s.fresnel.expect("Fresnel").rs - rs).abs() < 1e-9);
    // The inspector's window is open with its table.
    let _ = h.get_by_label("Copy as text");
}

#[test]
fn the_escape_cone_of_a_face_is_the_critical_angle() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    h.state_mut().push(Command::SetTool(Tool::EscapeCone));
    h.step();
    let p = screen(&h, 20.0, 5.0);
    quick_click(&mut h, p);
    h.step();
    let app = h.state();
    let pick = app.analysis.cone.as_ref().expect("a cone was picked");
    let c = pick.cone.as_ref().expect("the cone");
    let pmma = app.doc.scene.material("pmma").expect("pmma").index_rel_air(550.0);
    assert!((c.n_inside - pmma).abs() < 1e-12);
    assert!((c.n_outside - 1.0).abs() < 1e-12);
    // The critical angle, sin θc = n₂/n₁ (Snell's law at a refraction angle of 90°).
    assert!((c.half_angle_deg.expect("a cone") - (1.0 / pmma).asin().to_degrees()).abs() < 1e-9);
    assert!((c.outward_normal - Vec2::new(1.0, 0.0)).norm() < 1e-9);
    assert!((c.point - Vec2::new(20.0, 5.0)).norm() < 0.5);
}

#[test]
fn the_optical_path_tool_sums_index_times_length() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    h.state_mut().push(Command::SetTool(Tool::OpticalPath));
    h.step();
    for (x, y) in [(-5.0, 3.0), (25.0, 3.0)] {
        let p = screen(&h, x, y);
        click(&mut h, p);
    }
    h.step();
    let app = h.state();
    let text = format!("{:?}", app.analysis.measure);
    let pmma = app.doc.scene.material("pmma").expect("pmma").index_rel_air(550.0);
    // 5 mm of air, 20 mm of PMMA, 5 mm of air (points snap to the 1 mm grid).
    let want = 5.0 + 20.0 * pmma + 5.0;
    assert!(app.status.contains(&format!("{want:.4}")), "status {:?}, measure {text}", app.status);
}

#[test]
fn a_row_of_escaped_light_marks_its_edge() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    h.step();
    let share = {
        let app = h.state_mut();
        let by = app.escaped_by_edge().expect("escaped light").clone();
        by.shares.into_iter().find(|s| s.surface.is_some()).expect("light leaves through an edge")
    };
    let surface = share.surface.clone().expect("a surface");
    h.get_by_label(&format!("edge {} of \"{}\"", surface.edge, surface.object)).click();
    h.step();
    h.step();
    let app = h.state();
    assert_eq!(app.analysis.highlight.as_ref(), Some(&surface));
    assert_eq!(app.selection, vec![surface.object_id]);
}

#[test]
fn a_sweep_runs_in_the_background_and_matches_the_library() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    wait_for_trace(&mut h);
    // Fold the panels above it so the sweep's controls are on screen.
    for header in ["Properties", "Power budget", "Analysis", "Parameter sweep"] {
        h.get_by_label(header).click();
        // Let the panel's fold animation finish before the next click.
        h.run_steps(20);
    }
    {
        let s = &mut h.state_mut().sweep;
        s.param = "beam.direction_deg".to_owned();
        s.metric = "detected:screen".to_owned();
        s.from = -30.0;
        s.to = 30.0;
        s.steps = 3;
    }
    h.step();
    h.get_by_label("Run sweep").click();
    for _ in 0..500 {
        h.step();
        if h.state().sweep.result.is_some() || h.state().sweep.error.is_some() {
            break;
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    let app = h.state();
    let got = app.sweep.result.clone().unwrap_or_else(|| panic!("no result: {:?}", app.sweep.error));
    let scene = &app.doc.scene;
    let param = raydraft::analysis::ParamPath::parse(scene, "beam.direction_deg").expect("param");
    let metric = raydraft::analysis::Metric::parse(scene, "detected:screen").expect("metric");
    let want = raydraft::analysis::sweep(scene, &param, -30.0, 30.0, 3, &metric, &raydraft::trace::Control::new())
        .expect("sweep");
    assert_eq!(got.points, want);
    assert!(!got.partial);
    assert!(got.csv().starts_with("value,metric\n-30,"));
}

/// Whether the window title shows the modified marker.
fn marked_modified(h: &Harness<'_, EditorApp>) -> bool {
    let app = h.state();
    assert_eq!(app.title().contains('•'), app.doc.is_modified());
    app.doc.is_modified()
}

#[test]
fn undoing_back_to_the_saved_scene_clears_the_modified_marker() {
    let (app, _dir) = app_with(SQUARE);
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    assert!(!marked_modified(&h));
    h.key_press(egui::Key::ArrowRight);
    h.step();
    assert!(marked_modified(&h));
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::Z);
    h.step();
    assert!(!marked_modified(&h), "undone back to the saved scene");
    h.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, egui::Key::Z);
    h.step();
    assert!(marked_modified(&h), "redone: modified again");
    // Two edits that cancel out leave the document as saved, too.
    h.key_press(egui::Key::ArrowLeft);
    h.step();
    h.step();
    assert_eq!(block_points(h.state()).0[0], (0.0, 0.0));
    assert!(!marked_modified(&h));
    // After a save the saved state moves: undoing past it is a change again.
    h.key_press(egui::Key::ArrowUp);
    h.step();
    h.state_mut().push(Command::Save);
    h.step();
    assert!(!marked_modified(&h));
    h.state_mut().push(Command::Undo);
    h.step();
    assert!(marked_modified(&h));
}

/// A folder this process cannot create files in: a temporary folder made read-only, or,
/// where permissions do not bind (tests run as root), a folder of the kernel's sysfs.
#[cfg(unix)]
fn unwritable_dir(tmp: &std::path::Path) -> Option<std::path::PathBuf> {
    use std::os::unix::fs::PermissionsExt;
    let dir = tmp.join("read-only");
    std::fs::create_dir(&dir).expect("folder");
    std::fs::set_permissions(&dir, std::fs::Permissions::from_mode(0o555)).expect("read-only");
    let writable = |d: &std::path::Path| {
        let probe = d.join("raydraft-probe.ron");
        let ok = std::fs::write(&probe, "x").is_ok();
        let _ = std::fs::remove_file(&probe);
        ok
    };
    [dir, std::path::PathBuf::from("/sys")].into_iter().find(|d| d.is_dir() && !writable(d))
}

#[cfg(unix)]
#[test]
fn saving_into_a_read_only_folder_keeps_the_document_and_says_why() {
    let (app, dir) = app_with(SQUARE);
    let Some(read_only) = unwritable_dir(dir.path()) else {
        eprintln!("skipped: no folder here refuses writing (running as root without sysfs)");
        return;
    };
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    h.key_press(egui::Key::ArrowRight);
    h.step();
    let before = h.state().doc.scene.clone();
    let target = read_only.join("moved.ron");
    h.state_mut().push(Command::SaveAs(target.clone()));
    // The error window measures itself in its first frame and shows in the next.
    h.run_steps(3);
    let app = h.state();
    assert!(app.doc.is_modified(), "a failed save must leave the document modified");
    assert_eq!(app.doc.scene, before, "and intact");
    assert_eq!(app.doc.path.as_deref(), Some(dir.path().join("square.ron").as_path()), "and on its own file");
    let error = app.dialogs.error.clone().expect("an error is shown");
    assert!(error.contains(&target.display().to_string()), "names the file: {error}");
    assert!(error.contains("permission denied") || error.contains("read-only"), "says why: {error}");
    assert!(h.query_by_label_contains("Could not save").is_some(), "the error window is on screen");
    assert!(!target.exists());
}

#[test]
fn saving_over_a_file_changed_on_disk_asks_first() {
    let (app, dir) = app_with(SQUARE);
    let path = dir.path().join("square.ron");
    let mut h = harness(app);
    h.step();
    h.state_mut().push(Command::Select(vec![1]));
    h.step();
    h.key_press(egui::Key::ArrowRight);
    h.step();
    // Someone else changes the file meanwhile.
    let theirs = SQUARE.replace("title: \"square\"", "title: \"their square\"");
    std::fs::write(&path, &theirs).expect("their change");
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::S);
    h.step();
    h.step();
    assert!(h.state().dialogs.save_conflict.is_some(), "no question asked");
    assert!(h.query_by_label_contains("was changed by another program").is_some());
    h.get_by_label("Cancel").click();
    h.step();
    h.step();
    assert!(h.state().dialogs.save_conflict.is_none());
    assert!(h.state().doc.is_modified());
    assert_eq!(std::fs::read_to_string(&path).expect("read"), theirs, "cancel keeps their file");

    // Overwrite replaces their change with the document.
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::S);
    h.step();
    h.step();
    h.get_by_label("Overwrite").click();
    h.step();
    h.step();
    assert!(!h.state().doc.is_modified());
    let saved = raydraft::scene::file::load(&path).expect("saved file");
    assert_eq!(saved.scene, h.state().doc.scene);
    h.key_press(egui::Key::ArrowRight);
    h.step();
    let text = std::fs::read(&path).expect("read");
    std::fs::write(&path, &text).expect("rewrite the same bytes");
    h.key_press_modifiers(Modifiers::COMMAND, egui::Key::S);
    h.step();
    h.step();
    assert!(h.state().dialogs.save_conflict.is_none(), "the same bytes are no change");
    assert!(!h.state().doc.is_modified());
}
