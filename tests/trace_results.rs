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

#[test]
fn ids_survive_deleting_an_earlier_object() {
    let mut s = scene();
    let first = common::solid(&mut s, "spare block", common::rect(-50.0, -50.0, 5.0, 5.0), 1.5);
    let block = common::solid(&mut s, "block", common::rect(0.0, 0.0, 10.0, 10.0), 1.5);
    let det = common::detector(&mut s, "screen", (-10.0, -20.0), (10.0, -20.0));
    let sink = common::absorber(&mut s, "stop", (-10.0, 20.0), (10.0, 20.0));
    let lamp = beam(&mut s, (0.0, 8.0), 2.0, -90.0, 4, Polarization::Unpolarized);
    let check = |s: &raydraft::scene::Scene| {
        let t = run(s, &config(s, TraceMode::Tree));
        assert!(t.rays.iter().all(|r| r.source == lamp), "rays name their source by id");
        assert_eq!(t.detectors.len(), 1);
        assert_eq!(t.detectors[0].object, det);
        assert!(t.budget.detected[0] > 0.0);
        let hit_ids: Vec<u64> = t.events.iter().filter_map(|e| t.object_id_of(e)).collect();
        assert!(hit_ids.contains(&block) && hit_ids.contains(&det) && hit_ids.contains(&lamp));
        assert!(!hit_ids.contains(&first));
        // Medium 1 is the block (the only solid left after the deletion, the second before).
        let block_medium = t.medium_objects.iter().position(|&o| o == Some(block)).expect("the block's medium");
        assert!(t.events.iter().any(|e| e.medium as usize == block_medium));
        // Power reflected back up reaches the absorber, reported by its id.
        let absorbed: f64 = t.budget.absorbed_by_object.iter().filter(|(id, _)| *id == sink).map(|(_, w)| w).sum();
        assert!(absorbed > 0.0, "{:?}", t.budget.absorbed_by_object);
        assert_eq!(t.revision, s.revision);
        assert!(!t.is_stale(s));
        t
    };
    let before = check(&s);
    s.objects.remove(0);
    s.revision += 1;
    assert!(before.is_stale(&s), "a trace of an older revision is stale");
    let after = check(&s);
    assert_eq!(before.budget.detected, after.budget.detected);
}

#[test]
fn the_trace_takes_its_margin_from_the_config_not_the_scene() {
    let mut s = scene();
    common::solid(&mut s, "block", common::rect(0.0, 0.0, 10.0, 10.0), 1.5);
    beam(&mut s, (-10.0, 0.0), 0.0, 0.0, 1, Polarization::Unpolarized);
    s.settings.margin = 5.0;
    let escape_x = |margin: f64| {
        let mut c = config(&s, TraceMode::Principal);
        c.settings.margin = margin;
        let t = run(&s, &c);
        let e = t.events.iter().find(|e| e.kind == raydraft::trace::EventKind::Escape).expect("an escape");
        e.point.x
    };
    // The content spans x from −10 (the beam) to 5 (the block's right face).
    assert!((escape_x(5.0) - 10.0).abs() < 1e-9);
    assert!((escape_x(50.0) - 55.0).abs() < 1e-9);
}
