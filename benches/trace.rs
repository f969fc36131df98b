//! Whole traces of the demo light guide: a Fresnel-tree retrace (what happens on every drag
//! in the editor, so `Compiled::new` is inside the timed call) and a Monte Carlo run on one
//! thread against two.

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use raydraft::scene::{Detector, Emission, LambertianSource, ObjectKind, Path, Scene, Shape, Solid, TraceMode};
use raydraft::trace::{TraceConfig, trace};

/// Launched rays of the Monte Carlo run.
const MC_RAYS: u32 = 100_000;

/// The demo light guide. Until `scenes/light_guide.ron` lands on this branch the scene is
/// built in code; once it does, this body becomes
/// `ron::from_str(include_str!("../scenes/light_guide.ron")).expect("demo scene parses")`.
fn light_guide() -> Scene {
    built_light_guide()
}

/// A PMMA plate 100 mm × 3 mm with 60 graded V-notches (three times denser at the far end)
/// on its bottom face, lit by a Lambertian LED 0.2 mm from its left end face and watched by
/// a detector 2 mm above its top face.
fn built_light_guide() -> Scene {
    let mut s = Scene::new("light guide (bench)");
    s.add(
        "guide",
        ObjectKind::Solid(Solid {
            shape: Shape::NotchedPlate {
                position: (0.0, 0.0),
                length: 100.0,
                thickness: 3.0,
                notches: 60,
                notch_depth: 0.3,
                notch_angle_deg: 90.0,
                notch_start: 5.0,
                notch_end: 95.0,
                density_ratio: 3.0,
                rotation_deg: 0.0,
            },
            material: "pmma".to_owned(),
        }),
    );
    // Emits to the left of a → b, i.e. towards +x into the end face.
    s.add(
        "led",
        ObjectKind::LambertianSource(LambertianSource {
            a: (-0.2, 2.9),
            b: (-0.2, 0.1),
            emission: Emission::new(200, 1.0, 550.0),
        }),
    );
    s.add(
        "screen",
        ObjectKind::Detector(Detector { path: Path::segment((0.0, 5.0), (100.0, 5.0)), bins: 50, angle_bins: 50 }),
    );
    s
}

fn retrace(c: &mut Criterion) {
    let scene = light_guide();
    let mut cfg = TraceConfig::from_scene(&scene);
    cfg.mode = TraceMode::Tree;
    let t = trace(&scene, &cfg);
    assert!(t.warnings.is_empty(), "{:?}", t.warnings);
    eprintln!(
        "light guide, tree mode: {} launched rays, {} rays in all, {} events, detected {:.4} W of {:.4} W",
        t.rays.iter().filter(|r| r.parent == u32::MAX).count(),
        t.n_rays,
        t.n_events,
        t.budget.detected_total(),
        t.budget.launched
    );
    let mut g = c.benchmark_group("trace/light_guide_tree");
    g.bench_function("retrace_200_rays", |b| b.iter(|| trace(black_box(&scene), black_box(&cfg))));
    g.finish();
}

fn monte_carlo(c: &mut Criterion) {
    let scene = light_guide();
    let mut cfg = TraceConfig::from_scene(&scene);
    cfg.mode = TraceMode::MonteCarlo;
    cfg.rays = Some(MC_RAYS);
    let one = trace(&scene, &TraceConfig { threads: Some(1), ..cfg.clone() });
    let two = trace(&scene, &TraceConfig { threads: Some(2), ..cfg.clone() });
    assert_eq!(one.budget, two.budget, "the thread count must not change the result");
    eprintln!(
        "light guide, Monte Carlo: {} launched rays, {} events, {} stored",
        one.n_rays,
        one.n_events,
        one.events.len()
    );
    let mut g = c.benchmark_group("trace/light_guide_mc_100k");
    g.sample_size(10);
    g.throughput(Throughput::Elements(u64::from(MC_RAYS)));
    for threads in [1usize, 2] {
        let cfg = TraceConfig { threads: Some(threads), ..cfg.clone() };
        g.bench_with_input(BenchmarkId::new("threads", threads), &cfg, |b, cfg| {
            b.iter(|| trace(black_box(&scene), cfg));
        });
    }
    g.finish();
}

criterion_group!(benches, retrace, monte_carlo);
criterion_main!(benches);
