//! The editor's frame time, driven headless through `egui_kittest` (no GPU: the UI's logic,
//! layout and tessellation, not rasterisation): 120 frames of a vertex drag on the demo light
//! guide and on the 30,004-edge notched plate (`benches/data/plate_30004.ron`), each turned
//! into a free outline first. Prints the median and 95th-percentile UI time per frame, and
//! how many frames pass between the last edit of the drag and its trace on screen with frames
//! paced at 60 per second. Criterion then times one whole drag.
//!
//! With `RAYDRAFT_EDITOR_REPORT_ONLY=1` it prints the figures and skips criterion.

use std::time::{Duration, Instant};

use criterion::{Criterion, criterion_group, criterion_main};
use egui::{Event, Modifiers, PointerButton};
use egui_kittest::Harness;
use raydraft::app::{Command, EditorApp, Options};
use raydraft::geom::Vec2;
use raydraft::scene::{ObjectKind, Shape};

const FRAMES: usize = 120;
const FRAME_BUDGET: Duration = Duration::from_micros(16_667);

fn harness(scene_file: Option<&str>) -> (Harness<'static, EditorApp>, Option<tempfile::TempDir>) {
    let (file, dir) = match scene_file {
        Some(text) => {
            let dir = tempfile::tempdir().expect("temp dir");
            let path = dir.path().join("scene.ron");
            std::fs::write(&path, text).expect("write the bench scene");
            (Some(path), Some(dir))
        }
        None => (None, None),
    };
    let mut app = EditorApp::new(Options { file, ..Options::default() });
    let id = app.doc.scene.objects.iter().find(|o| matches!(o.kind, ObjectKind::Solid(_))).map_or(1, |o| o.id);
    app.push(Command::Select(vec![id]));
    app.push(Command::MakeFreeOutline);
    let h = Harness::builder()
        .with_size(egui::vec2(1280.0, 820.0))
        .build_ui_state(|ui, app: &mut EditorApp| app.frame_ui(ui), app);
    (h, dir)
}

/// The top-right-most vertex of the first solid's free outline.
fn corner(h: &Harness<'_, EditorApp>) -> Option<Vec2> {
    let o = h.state().doc.scene.objects.iter().find(|o| matches!(o.kind, ObjectKind::Solid(_)))?;
    let ObjectKind::Solid(s) = &o.kind else { return None };
    let Shape::Outline { points, .. } = &s.shape else { return None };
    points.iter().max_by(|a, b| (a.0 + a.1).total_cmp(&(b.0 + b.1))).map(|p| Vec2::new(p.0, p.1))
}

fn button(h: &mut Harness<'_, EditorApp>, pos: egui::Pos2, pressed: bool) {
    h.event(Event::PointerButton { pos, button: PointerButton::Primary, pressed, modifiers: Modifiers::NONE });
}

/// One drag; returns the UI time of every frame and the frames from the last edit until its
/// trace was on screen (frames paced at 60 per second).
fn drag(h: &mut Harness<'_, EditorApp>) -> (Vec<Duration>, usize) {
    let Some(at) = corner(h) else { return (Vec::new(), 0) };
    let from = h.state().view.screen_from_scene(at);
    h.event(Event::PointerMoved(from));
    button(h, from, true);
    h.step();
    let mut times = Vec::with_capacity(FRAMES);
    let mut with_trace = Vec::new();
    for k in 0..FRAMES {
        let p = from + egui::vec2(0.0, -((k % 40) as f32) * 0.5);
        h.event(Event::PointerMoved(p));
        let before = h.state().worker.n_finished;
        let t = Instant::now();
        h.step();
        times.push(t.elapsed());
        if h.state().worker.n_finished != before {
            with_trace.push(t.elapsed());
        }
    }
    with_trace.sort();
    if let Some(m) = with_trace.get(with_trace.len() / 2) {
        println!(
            "  {} of {FRAMES} frames took in a new trace; their median {:.2} ms",
            with_trace.len(),
            m.as_secs_f64() * 1e3
        );
    }
    button(h, from, false);
    h.step();
    let mut frames = 0;
    while frames < 2_000 {
        let app = h.state();
        if app.worker.shown_revision() == Some(app.doc.revision) && !app.worker.is_running() {
            break;
        }
        let t = Instant::now();
        h.step();
        frames += 1;
        std::thread::sleep(FRAME_BUDGET.saturating_sub(t.elapsed()));
    }
    (times, frames)
}

fn report(name: &str, h: &mut Harness<'_, EditorApp>) {
    let (mut times, frames) = drag(h);
    times.sort();
    if times.is_empty() {
        println!("editor/{name}: no vertex to drag");
        return;
    }
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    println!(
        "editor/{name}: {FRAMES} frames of a vertex drag: median {:.2} ms, p95 {:.2} ms, max {:.2} ms per frame; \
         {frames} frames (at 60 per second) from the last edit to its trace on screen",
        ms(times[times.len() / 2]),
        ms(times[times.len() * 95 / 100]),
        ms(times[times.len() - 1]),
    );
}

fn editor(c: &mut Criterion) {
    let cases: [(&str, Option<&str>); 2] =
        [("light_guide", None), ("plate_30004", Some(include_str!("data/plate_30004.ron")))];
    let report_only = std::env::var_os("RAYDRAFT_EDITOR_REPORT_ONLY").is_some();
    for (name, text) in cases {
        let (mut h, _dir) = harness(text);
        h.run_steps(3);
        // Let the first trace finish so the drag starts from a settled editor.
        for _ in 0..2_000 {
            h.step();
            if h.state().worker.shown_revision() == Some(h.state().doc.revision) {
                break;
            }
            std::thread::sleep(Duration::from_millis(5));
        }
        report(name, &mut h);
        if !report_only {
            let mut group = c.benchmark_group("editor");
            group.sample_size(10);
            group.bench_function(format!("{name}/vertex drag, {FRAMES} frames"), |b| b.iter(|| drag(&mut h)));
            group.finish();
        }
    }
}

criterion_group!(benches, editor);
criterion_main!(benches);
