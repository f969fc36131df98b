//! Whole traces of the demo light guide: a Fresnel-tree retrace (what happens on every drag
//! in the editor, so `Compiled::new` is inside the timed call) and a Monte Carlo run on one
//! thread against two.

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use raydraft::scene::{ObjectKind, Scene, TraceMode};
use raydraft::trace::{TraceConfig, trace};

/// Launched rays of the Monte Carlo run.
const MC_RAYS: u32 = 100_000;

/// The demo light guide, `scenes/light_guide.ron`: a PMMA plate 100 mm × 3 mm with 60 graded
/// V-notches on its bottom face, a reflector sheet below, a two-line LED at its left end and a
/// detector above.
fn light_guide() -> Scene {
    raydraft::scene::file::from_str(include_str!("../scenes/light_guide.ron"), "scenes/light_guide.ron")
        .expect("the demo scene loads")
        .scene
}

/// Spectral lines of the scene's sources (launched rays per source are per line).
fn lines(scene: &Scene) -> u32 {
    scene
        .objects
        .iter()
        .filter_map(|o| match &o.kind {
            ObjectKind::LambertianSource(l) => Some(l.emission.spectrum.len() as u32),
            _ => None,
        })
        .sum::<u32>()
        .max(1)
}

fn retrace(c: &mut Criterion) {
    let scene = light_guide();
    let mut cfg = TraceConfig::from_scene(&scene);
    cfg.settings.mode = TraceMode::Tree;
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
    g.bench_function("retrace_demo", |b| b.iter(|| trace(black_box(&scene), black_box(&cfg))));
    g.finish();
}

fn monte_carlo(c: &mut Criterion) {
    let scene = light_guide();
    let mut cfg = TraceConfig::from_scene(&scene);
    cfg.settings.mode = TraceMode::MonteCarlo;
    // MC_RAYS launched in all, shared over the LED's spectral lines.
    cfg.rays = Some(MC_RAYS / lines(&scene));
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
