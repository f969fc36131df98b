//! Every trace is bounded whatever its settings: tree branches per launched ray, and the
//! events held in memory, follow limits rather than the scene. Small limits, no clocks.

mod common;
use common::{beam, config, point, rect, run, scene, solid};
use raydraft::scene::{Polarization, Scene, Shape, TraceMode, file};

/// Two lossless glass plates facing each other with a beam bouncing between them: with no
/// threshold, every reflection splits and the tree doubles at every event.
fn two_plates() -> Scene {
    let mut s = scene();
    solid(&mut s, "upper", rect(0.0, 6.0, 60.0, 2.0), 1.5);
    solid(&mut s, "lower", rect(0.0, -6.0, 60.0, 2.0), 1.5);
    beam(&mut s, (-25.0, 0.0), 0.5, 80.0, 2, Polarization::Unpolarized);
    s.settings.max_depth = 40;
    s
}

#[test]
fn a_tree_with_no_threshold_stops_at_the_branch_limit() {
    let s = two_plates();
    for threshold in [0.0, 1e-30] {
        let mut c = config(&s, TraceMode::Tree);
        c.settings.threshold = threshold;
        c.max_branches_per_ray = 500;
        c.settings.max_stored_events = 10_000;
        let t = run(&s, &c);
        assert!(t.n_rays <= 2 * (500 + 1), "{} rays for 2 launched", t.n_rays);
        assert!(t.budget.below_threshold > 0.0, "the cut branches are counted below the threshold");
        assert!(t.warnings.iter().any(|w| w.contains("branches were not followed")), "{:?}", t.warnings);
    }
}

/// A PMMA ball with a point source just inside its rim aimed along it: every ray is trapped
/// by total internal reflection until the event limit.
fn trapped_in_a_ball(rays: u32, max_depth: u32) -> Scene {
    let mut s = scene();
    solid(&mut s, "ball", Shape::Ball { position: (0.0, 0.0), radius: 10.0 }, 1.49);
    point(&mut s, (9.5, 0.0), 89.0, 91.0, rays);
    s.settings.max_depth = max_depth;
    s
}

#[test]
fn the_event_cap_bounds_the_events_held_in_memory() {
    let s = trapped_in_a_ball(64, 20_000);
    let mut c = config(&s, TraceMode::Principal);
    c.settings.max_stored_events = 1000;
    let t = trace(&s, &c);
    assert!(t.n_events > 1_000_000, "{} events", t.n_events);
    assert!(t.budget.trapped > 0.99 * t.budget.launched);
    assert!(t.events.len() <= 1000);
    assert!(t.events_held_peak <= 2 * 1000, "{} events held at once", t.events_held_peak);
}

use raydraft::trace::trace;

#[test]
fn the_event_cap_keeps_whole_rays_up_to_the_cap() {
    let loaded = file::load(std::path::Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/scenes/light_guide.ron")))
        .expect("demo loads");
    let s = loaded.scene;
    let mut c = config(&s, TraceMode::Tree);
    c.settings.max_stored_events = 1000;
    let t = trace(&s, &c);
    assert!(t.events_truncated);
    assert!(!t.events.is_empty() && t.events.len() <= 1000, "{} events kept", t.events.len());
    assert!(t.warnings.iter().any(|w| w.contains("whole rays")), "{:?}", t.warnings);
    // The rays kept are complete, come first and hold every kept event.
    let mut next = 0;
    for (k, r) in t.rays.iter().enumerate() {
        assert_eq!(r.id as usize, k);
        assert_eq!(r.first_event, next);
        next += r.n_events as usize;
        let evs = t.events_of(r);
        assert!(evs.iter().all(|e| e.ray == r.id));
        assert!(evs.last().is_some_and(|e| e.kind.is_end()), "ray {k} ends");
    }
    assert_eq!(next, t.events.len());
    // The same events whatever the number of threads.
    for threads in [1, 2, 3] {
        let mut c1 = c.clone();
        c1.threads = Some(threads);
        let u = trace(&s, &c1);
        assert_eq!(u.events, t.events, "{threads} threads");
        assert_eq!(u.rays, t.rays);
    }
}

#[test]
fn a_first_ray_longer_than_the_cap_is_kept_cut_short() {
    // Every ray of the trapped ball has 2001 events: none fits whole under a cap of 500, so the
    // first one is kept cut to the cap (rather than showing nothing), the same for any threads.
    let s = trapped_in_a_ball(40, 2000);
    let mut c = config(&s, TraceMode::Principal);
    c.settings.max_stored_events = 500;
    let t = trace(&s, &c);
    assert_eq!(t.rays.len(), 1);
    assert_eq!(t.events.len(), 500);
    assert_eq!(t.rays[0].n_events, 500);
    assert!(t.events.iter().all(|e| e.ray == 0));
    assert!(t.warnings.iter().any(|w| w.contains("first ray alone")), "{:?}", t.warnings);
    for threads in [1, 2] {
        let mut c1 = c.clone();
        c1.threads = Some(threads);
        assert_eq!(trace(&s, &c1).events, t.events);
    }
    c.settings.max_stored_events = 0;
    let t = trace(&s, &c);
    assert!(t.rays.is_empty() && t.events.is_empty());
}

#[test]
fn a_huge_spectral_weight_beside_a_small_one_shares_the_power_finitely() {
    // Found by tests/file_fuzz.rs: weights 1e308 and 7 add up to a finite number, but
    // power × weight overflowed before the division and the budget became infinite.
    let text = r#"(
        version: 1,
        title: "one huge weight",
        objects: [
            (id: 1, name: "beam", kind: BeamSource((center: (0.0, 0.0), width: 1.0, direction_deg: 0.0,
                emission: (rays: 3, power_w: 3.5, spectrum: [(nm: 500.0, weight: 1e308), (nm: 600.0, weight: 7)])))),
        ],
    )"#;
    let scene = raydraft::scene::file::from_str(text, "weights.ron").expect("loads").scene;
    let t = raydraft::trace::trace(&scene, &raydraft::trace::TraceConfig::from_scene(&scene));
    let b = &t.budget;
    assert!((b.launched - 3.5).abs() < 1e-12, "launched {}", b.launched);
    assert!(b.closure_error() <= 1e-12);
    // The 600 nm line's share, 7/1e308 of the power, rounds to nothing; all of it escapes.
    assert!((b.escaped - 3.5).abs() < 1e-12);
}
