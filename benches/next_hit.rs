//! Nearest-hit queries on a notched light-guide plate: `raydraft`'s BVH against parry's
//! `Polyline` on the same segments and the same rays.
//!
//! The plate is 100 mm × 3 mm with N 90° V-notches along its bottom face between 5 and 95 mm
//! (N = 100, 1,000, 10,000, so about 300, 3,000 and 30,000 edges). Ray origins are uniform in
//! the part of the plate above the notch tips, directions uniform on the circle, all from a
//! fixed seed. Building both structures happens outside the timed loop. Before timing, every
//! ray is checked to give the same nearest distance from both (to 1e-9 mm).

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use parry2d_f64::math::Vector as PVec;
use parry2d_f64::query::{Ray, RayCast};
use parry2d_f64::shape::Polyline;
use raydraft::geom::{Bvh, Edge, Vec2, unit};
use raydraft::rng::Rng;
use raydraft::scene::Shape;

const RAYS: usize = 4096;
const SEED: u64 = 0x00C0_FFEE;
const LENGTH: f64 = 100.0;
const THICKNESS: f64 = 3.0;

/// The plate's closed outline as vertices, and the notch depth.
fn plate(notches: u32) -> (Vec<Vec2>, f64) {
    let pitch = 90.0 / f64::from(notches);
    let depth = 0.3 * pitch;
    let shape = Shape::NotchedPlate {
        position: (0.0, 0.0),
        length: LENGTH,
        thickness: THICKNESS,
        notches,
        notch_depth: depth,
        notch_angle_deg: 90.0,
        notch_start: 5.0,
        notch_end: 95.0,
        density_ratio: 1.0,
        rotation_deg: 0.0,
    };
    let outline = shape.outline().expect("the bench plate is valid");
    assert!(outline.bulges.iter().all(|&b| b == 0.0), "the plate has straight edges only");
    (outline.vertices, depth)
}

/// Fixed-seed rays: origins strictly inside the plate above the notch tips, unit directions.
fn rays(depth: f64) -> Vec<(Vec2, Vec2)> {
    let mut s = Rng::new(SEED);
    (0..RAYS)
        .map(|_| {
            let x = 1e-3 + s.uniform() * (LENGTH - 2e-3);
            let y = depth + 1e-3 + s.uniform() * (THICKNESS - depth - 2e-3);
            (Vec2::new(x, y), unit(s.uniform() * std::f64::consts::TAU))
        })
        .collect()
}

fn parry_polyline(vertices: &[Vec2]) -> Polyline {
    let n = vertices.len() as u32;
    let pts = vertices.iter().map(|v| PVec::new(v.x, v.y)).collect();
    let idx = (0..n).map(|i| [i, (i + 1) % n]).collect();
    Polyline::new(pts, Some(idx))
}

/// Nearest distance from parry. `solid` is `false`: the polyline is a hollow boundary and
/// the ray must run on to the first segment it meets even though it starts inside the
/// closed outline, which is what our BVH answers. (A 2D segment has no interior, so parry
/// gives the same for `true`; `false` states the intent.)
#[inline]
fn parry_nearest(p: &Polyline, o: Vec2, d: Vec2) -> Option<f64> {
    let ray = Ray::new(PVec::new(o.x, o.y), PVec::new(d.x, d.y));
    p.cast_local_ray_and_get_normal(&ray, f64::MAX, false).map(|h| h.time_of_impact)
}

#[inline]
fn ours_nearest(b: &Bvh, o: Vec2, d: Vec2) -> Option<f64> {
    b.cast(o, d, 0.0, f64::INFINITY).map(|h| h.t)
}

fn next_hit(c: &mut Criterion) {
    for notches in [100u32, 1_000, 10_000] {
        let (vertices, depth) = plate(notches);
        let n = vertices.len();
        let edges: Vec<Edge> = (0..n).map(|i| Edge::segment(vertices[i], vertices[(i + 1) % n])).collect();
        let bvh = Bvh::build(&edges);
        let poly = parry_polyline(&vertices);
        let rays = rays(depth);
        for (k, &(o, d)) in rays.iter().enumerate() {
            let (a, b) = (ours_nearest(&bvh, o, d), parry_nearest(&poly, o, d));
            match (a, b) {
                (Some(a), Some(b)) => assert!((a - b).abs() <= 1e-9, "ray {k}: raydraft {a} vs parry {b}"),
                other => panic!("ray {k} from {o:?} along {d:?}: {other:?} (both must hit the closed outline)"),
            }
        }
        let mut g = c.benchmark_group(format!("next_hit/{}_edges", edges.len()));
        g.throughput(Throughput::Elements(RAYS as u64));
        g.bench_with_input(BenchmarkId::new("raydraft_bvh", notches), &rays, |bench, rays| {
            bench.iter(|| {
                let mut sum = 0.0;
                for &(o, d) in rays {
                    sum += ours_nearest(&bvh, black_box(o), black_box(d)).unwrap_or(0.0);
                }
                sum
            });
        });
        g.bench_with_input(BenchmarkId::new("parry_polyline", notches), &rays, |bench, rays| {
            bench.iter(|| {
                let mut sum = 0.0;
                for &(o, d) in rays {
                    sum += parry_nearest(&poly, black_box(o), black_box(d)).unwrap_or(0.0);
                }
                sum
            });
        });
        g.finish();
    }
}

criterion_group!(benches, next_hit);
criterion_main!(benches);
