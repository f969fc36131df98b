//! Edit-to-finished-trace latency: one vertex of a solid moves, the compiled scene is
//! brought up to date (`Compiled::update`) and the scene is traced again in tree mode on
//! one thread. On the demo light guide and on notched plates of 3,004 and 30,004 edges
//! (`benches/data/`). Besides the whole step, the parts are timed alone: the check of the
//! edited scene (`validate_with` on the kept checks), the whole update (check and BVH refit)
//! and the trace.
//!
//! With `RAYDRAFT_EDIT_STEPS=N` in the environment the bench skips criterion and runs N
//! edit steps per scene instead (plus one in the setup), for counting instructions:
//!
//! ```sh
//! RAYDRAFT_EDIT_STEPS=20 RAYDRAFT_EDIT_ONLY=plate_30004 valgrind --tool=callgrind target/release/deps/edit-<hash>
//! ```

use std::hint::black_box;

use criterion::{Criterion, criterion_group};
use raydraft::scene::validate::validate_with;
use raydraft::scene::{ObjectKind, Scene, Shape};
use raydraft::trace::{BvhUpdate, Compiled, Control, TraceConfig, trace_compiled};

fn load(text: &str, name: &str) -> Scene {
    raydraft::scene::file::from_str(text, name).expect("the bench scene loads").scene
}

/// Turns the first solid into a free outline and returns the index of its object and of a
/// vertex in the middle of it (a notch tip on the plates).
fn free_first_solid(s: &mut Scene) -> (usize, usize) {
    for (i, o) in s.objects.iter_mut().enumerate() {
        if let ObjectKind::Solid(solid) = &mut o.kind {
            let outline = solid.shape.outline().expect("outline");
            let points: Vec<(f64, f64)> = outline.vertices.iter().map(|v| (v.x, v.y)).collect();
            let vertex = (points.len() / 2) | 1;
            solid.shape = Shape::Outline { points, bulges: outline.bulges };
            return (i, vertex);
        }
    }
    panic!("no solid");
}

/// Moves the vertex a little, up on even steps and back on odd ones.
fn nudge(s: &mut Scene, (object, vertex): (usize, usize), step: u64) {
    if let ObjectKind::Solid(solid) = &mut s.objects[object].kind
        && let Shape::Outline { points, .. } = &mut solid.shape
    {
        points[vertex].1 += if step % 2 == 0 { 1e-4 } else { -1e-4 };
    }
}

fn cases() -> [(&'static str, Scene); 3] {
    [
        ("light_guide", load(include_str!("../scenes/light_guide.ron"), "light_guide.ron")),
        ("plate_3004", load(include_str!("data/plate_3004.ron"), "plate_3004.ron")),
        ("plate_30004", load(include_str!("data/plate_30004.ron"), "plate_30004.ron")),
    ]
}

/// Tree mode on one thread.
fn config(scene: &Scene) -> TraceConfig {
    let mut config = TraceConfig::from_scene(scene);
    config.settings.mode = raydraft::scene::TraceMode::Tree;
    config.threads = Some(1);
    config
}

fn edit(c: &mut Criterion) {
    for (name, mut scene) in cases() {
        let at = free_first_solid(&mut scene);
        let config = config(&scene);
        let mut compiled = Compiled::new(&scene);
        nudge(&mut scene, at, 0);
        let report = compiled.update(&scene);
        assert_eq!((report.outlines_checked, report.bvh), (1, BvhUpdate::Refitted), "{name}");
        let t = trace_compiled(&scene, &compiled, &config, &Control::new());
        assert!(t.warnings.is_empty(), "{name}: {:?}", t.warnings);
        eprintln!("{name}: {} edges, {} rays, {} events", compiled.edges().len(), t.n_rays, t.n_events);

        let mut g = c.benchmark_group(format!("edit/{name}"));
        let mut step = 1;
        g.bench_function("retrace", |b| {
            b.iter(|| {
                nudge(&mut scene, at, step);
                step += 1;
                compiled.update(&scene);
                trace_compiled(black_box(&scene), &compiled, &config, &Control::new())
            });
        });
        g.bench_function("update", |b| {
            b.iter(|| {
                nudge(&mut scene, at, step);
                step += 1;
                compiled.update(black_box(&scene))
            });
        });
        g.bench_function("validate", |b| {
            b.iter(|| {
                nudge(&mut scene, at, step);
                step += 1;
                let mut checks = compiled.checks().clone();
                validate_with(black_box(&scene), &mut checks)
            });
        });
        g.bench_function("trace", |b| {
            b.iter(|| trace_compiled(black_box(&scene), &compiled, &config, &Control::new()));
        });
        g.finish();
    }
}

/// Runs `steps` edit steps on each scene (for instruction counts under callgrind).
fn steps(steps: u64) {
    let only = std::env::var("RAYDRAFT_EDIT_ONLY").unwrap_or_default();
    for (name, mut scene) in cases() {
        if !name.contains(&only) {
            continue;
        }
        let at = free_first_solid(&mut scene);
        let config = config(&scene);
        let mut compiled = Compiled::new(&scene);
        let mut events = 0;
        for step in 0..=steps {
            nudge(&mut scene, at, step);
            compiled.update(&scene);
            events += trace_compiled(&scene, &compiled, &config, &Control::new()).n_events;
        }
        eprintln!("{name}: {} steps, {events} events", steps + 1);
    }
}

criterion_group!(benches, edit);

fn main() {
    if let Some(n) = std::env::var("RAYDRAFT_EDIT_STEPS").ok().and_then(|v| v.parse().ok()) {
        steps(n);
        return;
    }
    benches();
    Criterion::default().configure_from_args().final_summary();
}
