//! What a trace names: objects by their id in the file, edges in the order the file gives
//! them, and the scene revision it was made from.

mod common;
use common::{beam, config, constant, run, scene};
use raydraft::scene::{ObjectKind, Polarization, Shape, Solid, TraceMode};

/// A 10 mm square written clockwise in the file: edge 0 left, 1 top, 2 right, 3 bottom.
fn clockwise_square() -> Shape {
    Shape::Outline { points: vec![(0.0, 0.0), (0.0, 10.0), (10.0, 10.0), (10.0, 0.0)], bulges: Vec::new() }
}

#[test]
fn a_clockwise_outline_reports_its_edges_in_file_order() {
    let mut s = scene();
    let material = constant(&mut s, 1.5);
    s.add("square", ObjectKind::Solid(Solid { shape: clockwise_square(), material }));
    // A beam straight down onto the top face.
    beam(&mut s, (5.0, 20.0), 2.0, -90.0, 3, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Principal));
    let first_hits: Vec<_> = t.rays.iter().filter_map(|r| t.events_of(r).get(1)).collect();
    assert_eq!(first_hits.len(), 3);
    for e in first_hits {
        assert!((e.point.y - 10.0).abs() < 1e-9, "the first hit is on the top face: {e:?}");
        assert_eq!(e.edge, 1, "the top face is edge 1 in the file");
    }
}
