//! The editor's frame time, driven headless through `egui_kittest`: 120 frames of a vertex drag
//! on the demo light guide (turned into a free outline first). Prints the median and 95th
//! percentile UI time per frame and how many frames pass between an edit and its trace on
//! screen; criterion times one whole drag.

use std::time::{Duration, Instant};

use criterion::{Criterion, criterion_group, criterion_main};
use egui::{Event, Modifiers, PointerButton};
use egui_kittest::Harness;
use raydraft::app::{Command, EditorApp, Options};
use raydraft::geom::Vec2;
use raydraft::scene::{ObjectKind, Shape};

const FRAMES: usize = 120;

fn harness() -> Harness<'static, EditorApp> {
    let mut app = EditorApp::new(Options::default());
    app.push(Command::Select(vec![1]));
    app.push(Command::MakeFreeOutline);
    Harness::builder()
        .with_size(egui::vec2(1280.0, 820.0))
        .build_ui_state(|ui, app: &mut EditorApp| app.frame_ui(ui), app)
}

/// The plate's top-right corner, a vertex of its free outline.
fn corner(h: &Harness<'_, EditorApp>) -> Option<(usize, Vec2)> {
    let o = h.state().doc.scene.object(1)?;
    let ObjectKind::Solid(s) = &o.kind else { return None };
    let Shape::Outline { points, .. } = &s.shape else { return None };
    points
        .iter()
        .enumerate()
        .max_by(|a, b| (a.1.0 + a.1.1).total_cmp(&(b.1.0 + b.1.1)))
        .map(|(i, p)| (i, Vec2::new(p.0, p.1)))
}

/// One drag; returns the UI time of every frame and the frames from the last edit until its
/// trace was on screen.
fn drag(h: &mut Harness<'_, EditorApp>) -> (Vec<Duration>, usize) {
    let Some((_, at)) = corner(h) else { return (Vec::new(), 0) };
    let from = h.state().view.screen_from_scene(at);
    h.event(Event::PointerMoved(from));
    h.event(Event::PointerButton {
        pos: from,
        button: PointerButton::Primary,
        pressed: true,
        modifiers: Modifiers::NONE,
    });
    h.step();
    let mut times = Vec::with_capacity(FRAMES);
    for k in 0..FRAMES {
        let p = from + egui::vec2(0.0, -((k % 40) as f32));
        h.event(Event::PointerMoved(p));
        let t = Instant::now();
        h.step();
        times.push(t.elapsed());
    }
    h.event(Event::PointerButton {
        pos: from,
        button: PointerButton::Primary,
        pressed: false,
        modifiers: Modifiers::NONE,
    });
    h.step();
    let mut frames = 0;
    while frames < 10_000 {
        let app = h.state();
        if app.worker.shown_revision() == Some(app.doc.revision) {
            break;
        }
        std::thread::sleep(Duration::from_millis(1));
        h.step();
        frames += 1;
    }
    (times, frames)
}

fn editor(c: &mut Criterion) {
    let mut h = harness();
    h.run_steps(3);
    let (mut times, frames) = drag(&mut h);
    times.sort();
    if !times.is_empty() {
        let median = times[times.len() / 2];
        let p95 = times[times.len() * 95 / 100];
        println!(
            "editor: {FRAMES} frames of a vertex drag on the demo light guide: median {:.2} ms, p95 {:.2} ms per frame; {frames} frames from the last edit to its trace on screen",
            median.as_secs_f64() * 1e3,
            p95.as_secs_f64() * 1e3
        );
    }
    let mut group = c.benchmark_group("editor");
    group.sample_size(10);
    group.bench_function("vertex drag, 120 frames", |b| b.iter(|| drag(&mut h)));
    group.finish();
}

criterion_group!(benches, editor);
criterion_main!(benches);
