//! How checking and compiling grow with the size of a scene, on the inputs that used to be
//! quadratic: a notched plate stood upright (rotated by 90°), solids nested inside each other
//! and many separate solids, each at about 1,000, 10,000 and 100,000 edges. Each iteration
//! is a whole `Compiled::new` (validation, outlines, crossing and overlap checks, nesting,
//! BVH, index table).

use std::hint::black_box;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use raydraft::scene::{Object, ObjectKind, Scene, Shape, Solid};
use raydraft::trace::Compiled;

const EDGES: [usize; 3] = [1_000, 10_000, 100_000];

/// Makes a scene of about this many edges.
type MakeScene = fn(usize) -> Scene;

fn push(s: &mut Scene, shape: Shape) {
    // Pushed directly: `Scene::add` looks for a free id among all objects each time.
    let id = s.objects.len() as u64 + 1;
    s.objects.push(Object {
        id,
        name: format!("solid {id}"),
        kind: ObjectKind::Solid(Solid { shape, material: "pmma".into() }),
    });
}

fn square(c: (f64, f64), w: f64) -> Shape {
    Shape::Rectangle { position: c, width: w, height: w, rotation_deg: 0.0 }
}

/// A plate 100 × 3 mm with notches making about `edges` edges, turned upright.
fn upright_plate(edges: usize) -> Scene {
    let notches = (edges - 4) / 3;
    let pitch = 90.0 / notches as f64;
    let mut s = Scene::new("upright plate");
    push(
        &mut s,
        Shape::NotchedPlate {
            position: (0.0, 0.0),
            length: 100.0,
            thickness: 3.0,
            notches: notches as u32,
            notch_depth: 0.3 * pitch,
            notch_angle_deg: 90.0,
            notch_start: 5.0,
            notch_end: 95.0,
            density_ratio: 1.0,
            rotation_deg: 90.0,
        },
    );
    s
}

/// Concentric squares, one inside the next (4 edges each).
fn nested_squares(edges: usize) -> Scene {
    let mut s = Scene::new("nested squares");
    for k in 0..edges / 4 {
        push(&mut s, square((0.0, 0.0), 2.0 * (k + 1) as f64));
    }
    s
}

/// Separate unit squares on a grid (4 edges each).
fn separate_squares(edges: usize) -> Scene {
    let mut s = Scene::new("separate squares");
    let n = edges / 4;
    let side = (n as f64).sqrt().ceil() as usize;
    for k in 0..n {
        push(&mut s, square((2.0 * (k % side) as f64, 2.0 * (k / side) as f64), 1.0));
    }
    s
}

fn scaling(c: &mut Criterion) {
    let cases: [(&str, MakeScene); 3] =
        [("upright_plate", upright_plate), ("nested_squares", nested_squares), ("separate_squares", separate_squares)];
    for (name, make) in cases {
        let mut g = c.benchmark_group(format!("scaling/{name}"));
        g.sample_size(10);
        for edges in EDGES {
            let scene = make(edges);
            let compiled = Compiled::new(&scene);
            assert!(
                compiled.warnings().iter().all(|w| w.contains("no light source")),
                "{name}: {:?}",
                &compiled.warnings()[..compiled.warnings().len().min(3)]
            );
            let n_edges = compiled.edges().len();
            assert!(n_edges.abs_diff(edges) < 8, "{name}: {n_edges} edges");
            g.throughput(Throughput::Elements(n_edges as u64));
            g.bench_with_input(BenchmarkId::from_parameter(edges), &scene, |b, s| {
                b.iter(|| Compiled::new(black_box(s)));
            });
        }
        g.finish();
    }
}

criterion_group!(benches, scaling);
criterion_main!(benches);
