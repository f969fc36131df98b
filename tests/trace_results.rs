//! What a trace names: objects by their id in the file, edges in the order the file gives
//! them, and the scene revision it was made from.

mod common;
use common::{beam, config, constant, run, scene};
use raydraft::scene::{ObjectKind, Polarization, Shape, Solid, TraceMode};
use raydraft::trace::EventKind;

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
        let e = t.events.iter().find(|e| e.kind == EventKind::Escape).expect("an escape");
        e.point.x
    };
    // The content spans x from −10 (the beam) to 5 (the block's right face).
    assert!((escape_x(5.0) - 10.0).abs() < 1e-9);
    assert!((escape_x(50.0) - 55.0).abs() < 1e-9);
}

/// Two facing mirrors 10 mm apart with a beam between them, square to both: every ray
/// bounces until the event limit (`max_depth`) ends it.
fn mirror_cavity(rays: u32, max_depth: u32) -> raydraft::scene::Scene {
    use raydraft::scene::{Mirror, Path};
    let mut s = scene();
    for (name, x) in [("left", -5.0), ("right", 5.0)] {
        s.add(
            name,
            ObjectKind::Mirror(Mirror { path: Path::segment((x, -5.0), (x, 5.0)), reflectance: 1.0, one_sided: false }),
        );
    }
    beam(&mut s, (0.0, 0.0), 4.0, 0.0, rays, Polarization::Unpolarized);
    s.settings.max_depth = max_depth;
    s
}

#[test]
fn every_stored_event_names_its_ray_and_every_ray_its_events() {
    // 20 rays, traced in several chunks: each ray is its launch, max_depth = 5 reflections
    // at normal incidence (0°) and the limit event, 7 events, all naming the ray they belong
    // to.
    let s = mirror_cavity(20, 5);
    for mode in [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo] {
        let t = run(&s, &config(&s, mode));
        assert_eq!(t.rays.len(), 20, "{mode:?}");
        let mut next_event = 0;
        for (k, r) in t.rays.iter().enumerate() {
            assert_eq!(r.id as usize, k, "{mode:?}");
            assert_eq!(r.first_event, next_event, "{mode:?}: rays are stored one after another");
            assert_eq!(r.n_events, 7, "{mode:?} ray {k}");
            next_event += 7;
            let ev = t.events_of(r);
            assert!(ev.iter().all(|e| e.ray == r.id), "{mode:?} ray {k}: {ev:?}");
            let kinds: Vec<EventKind> = ev.iter().map(|e| e.kind).collect();
            let mut want = vec![EventKind::Launch];
            want.extend([EventKind::Reflect; 5]);
            want.push(EventKind::Limit);
            assert_eq!(kinds, want, "{mode:?} ray {k}");
            for e in &ev[1..6] {
                assert!(f64::from(e.incidence_deg).abs() < 1e-3, "{e:?}");
            }
        }
        assert_eq!(next_event, t.events.len());
        assert_eq!(t.n_events, t.events.len() as u64);
    }
}

#[test]
fn power_still_bouncing_at_the_event_limit_is_counted_as_trapped() {
    // Lossless mirrors keep all the power in the cavity: all of it is trapped, none escapes.
    let s = mirror_cavity(20, 5);
    for mode in [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo] {
        let t = run(&s, &config(&s, mode));
        let b = &t.budget;
        assert!((b.launched - 1.0).abs() < 1e-12, "{mode:?}: the beam's power is 1 W");
        assert!((b.trapped - 1.0).abs() < 1e-12, "{mode:?}: trapped {}", b.trapped);
        assert_eq!((b.escaped, b.absorbed, b.below_threshold), (0.0, 0.0, 0.0), "{mode:?}");
        // The limit event keeps the power that arrived and passes none on.
        for r in &t.rays {
            let last = t.events_of(r).last().expect("events");
            assert!((f64::from(last.before_s + last.before_p) - 0.05).abs() < 1e-7, "{last:?}");
            assert_eq!((last.after_s, last.after_p), (0.0, 0.0));
        }
    }
}

#[test]
fn the_budget_closure_is_the_unaccounted_share_of_the_launched_power() {
    // Conservation of energy: the power launched equals the sum of the sinks, and the closure
    // error is the share of it that no sink holds, |launched − Σ sinks| / launched (the
    // definition in `Budget::closure_error`). Powers of two keep every sum exact, so a sink
    // dropped, subtracted or multiplied in, or a wrong division, shows in the last digit.
    let b = raydraft::trace::Budget {
        launched: 2.0,
        escaped: 0.5,
        absorbed: 0.25,
        trapped: 0.125,
        below_threshold: 0.0625,
        detected: vec![0.031_25, 0.015_625],
        ..Default::default()
    };
    assert_eq!(b.detected_total(), 0.046_875);
    assert_eq!(b.accounted(), 0.984_375);
    assert_eq!(b.closure_error(), 0.507_812_5);
    // More accounted than launched counts the same way.
    let over = raydraft::trace::Budget { launched: 0.5, ..b.clone() };
    assert_eq!(over.closure_error(), 0.968_75);
    // Nothing launched: no share to speak of.
    assert_eq!(raydraft::trace::Budget { launched: 0.0, ..b }.closure_error(), 0.0);
}
