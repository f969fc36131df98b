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
    (EditorApp::new(Options { file: Some(path), prefs_path: None }), dir)
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
    let reopened = EditorApp::new(Options { file: Some(out), prefs_path: None });
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
