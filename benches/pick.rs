//! Picking costs: the nearest ray segment of a trace with 10⁶ stored events, and the nearest
//! edge / object of a scene holding a notched plate of 30,004 edges, both through the free
//! functions (which generate the plate's outline on every call) and through a prebuilt
//! `PickGeometry`.
//!
//! The trace is synthetic: 100,000 rays of 10 events each, random walks of 1–20 mm steps in
//! a 100 mm square, from a fixed seed. Each iteration answers 16 fixed-seed query points with
//! a 0.5 mm tolerance. Throughput is in queries.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use raydraft::geom::{Vec2, unit};
use raydraft::optics::Material;
use raydraft::rng::Rng;
use raydraft::scene::pick::{PickGeometry, nearest_edge, nearest_object};
use raydraft::scene::{ObjectKind, Scene, Shape, Solid, TraceMode};
use raydraft::trace::pick::nearest_ray_segment;
use raydraft::trace::{Budget, Event, EventKind, NONE, RayRecord, Trace};

const QUERIES: usize = 16;
const SEED: u64 = 0x0B1C_0FFE;

fn synthetic_trace(n_rays: usize, events_per_ray: usize) -> Trace {
    let mut rng = Rng::new(SEED);
    let mut rays = Vec::with_capacity(n_rays);
    let mut events = Vec::with_capacity(n_rays * events_per_ray);
    for r in 0..n_rays {
        rays.push(RayRecord {
            id: r as u32,
            parent: NONE,
            source: 0,
            wavelength_nm: 550.0,
            first_event: events.len(),
            n_events: events_per_ray as u32,
        });
        let mut p = Vec2::new(rng.range(0.0, 100.0), rng.range(0.0, 100.0));
        for k in 0..events_per_ray {
            events.push(Event {
                point: p,
                after_s: 0.5,
                after_p: 0.5,
                before_s: 0.5,
                before_p: 0.5,
                ray: r as u32,
                object_slot: NONE,
                edge: NONE,
                medium: 0,
                n1: 1.0,
                n2: 1.0,
                incidence_deg: 0.0,
                kind: if k == 0 { EventKind::Launch } else { EventKind::Refract },
            });
            p = (p + unit(rng.uniform() * std::f64::consts::TAU) * rng.range(1.0, 20.0)).map(|c| c.clamp(0.0, 100.0));
        }
    }
    let n_events = events.len() as u64;
    Trace {
        mode: TraceMode::Principal,
        revision: 0,
        objects: Vec::new(),
        rays,
        events,
        budget: Budget::default(),
        detectors: Vec::new(),
        medium_names: vec!["air".into()],
        medium_objects: vec![None],
        wavelengths: vec![550.0],
        n_rays: n_rays as u64,
        n_events,
        events_truncated: false,
        events_held_peak: 0,
        cancelled: false,
        warnings: Vec::new(),
    }
}

fn queries() -> Vec<Vec2> {
    let mut rng = Rng::new(SEED + 1);
    (0..QUERIES).map(|_| Vec2::new(rng.range(0.0, 100.0), rng.range(0.0, 100.0))).collect()
}

fn plate_scene() -> Scene {
    let mut s = Scene::new("bench");
    s.materials.push(Material::constant("n1.49", 1.49));
    let shape = Shape::NotchedPlate {
        position: (0.0, 0.0),
        length: 100.0,
        thickness: 3.0,
        notches: 10_000,
        notch_depth: 0.0027,
        notch_angle_deg: 90.0,
        notch_start: 5.0,
        notch_end: 95.0,
        density_ratio: 1.0,
        rotation_deg: 0.0,
    };
    s.add("plate", ObjectKind::Solid(Solid { shape, material: "n1.49".into() }));
    s
}

fn pick(c: &mut Criterion) {
    let trace = synthetic_trace(100_000, 10);
    let points = queries();
    let mut g = c.benchmark_group("pick");
    g.throughput(Throughput::Elements(QUERIES as u64));
    g.bench_function("nearest_ray_segment/1M_events", |b| {
        b.iter(|| points.iter().filter(|&&p| nearest_ray_segment(&trace, black_box(p), 0.5).is_some()).count());
    });
    let scene = plate_scene();
    let near_plate: Vec<Vec2> = points.iter().map(|p| Vec2::new(p.x, p.y * 0.04)).collect();
    g.bench_function("nearest_edge/30004_edges", |b| {
        b.iter(|| near_plate.iter().filter(|&&p| nearest_edge(&scene, black_box(p), 0.5).is_some()).count());
    });
    g.bench_function("nearest_object/30004_edges", |b| {
        b.iter(|| near_plate.iter().filter(|&&p| nearest_object(&scene, black_box(p), 0.5).is_some()).count());
    });
    let geometry = PickGeometry::new(&scene);
    g.bench_function("prebuilt_nearest_edge/30004_edges", |b| {
        b.iter(|| near_plate.iter().filter(|&&p| geometry.nearest_edge(black_box(p), 0.5).is_some()).count());
    });
    g.bench_function("prebuilt_nearest_object/30004_edges", |b| {
        b.iter(|| near_plate.iter().filter(|&&p| geometry.nearest_object(black_box(p), 0.5).is_some()).count());
    });
    g.finish();
}

criterion_group!(benches, pick);
criterion_main!(benches);
