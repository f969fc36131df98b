//! Thin elements (mirrors, one-sided mirrors, beam splitters, absorbers) and what the trace
//! stores about them: the share of power each one reflects, passes and absorbs in every
//! mode, the power each object absorbed, and the angle of incidence kept on each event.
//!
//! Each check is against a closed form. A thin element's reflectance R, transmittance T and
//! absorptance A = 1 − R − T are its definition (energy conservation: R + T + A = 1); the
//! angles follow from the law of reflection and Snell's law (Hecht, *Optics*, 5th ed., 2017,
//! §4.3–4.4, section numbers from memory).

#![allow(clippy::unreadable_literal)]

mod common;

use common::*;
use raydraft::scene::{Mirror, ObjectKind, Path, Polarization, Splitter, TraceMode};
use raydraft::trace::{Event, EventKind};

/// A vertical mirror at x = 0 from (0, −5) to (0, 5): walking from the first point to the
/// last, its left side faces −x.
fn mirror_scene(reflectance: f64, one_sided: bool, from_left: bool) -> (raydraft::scene::Scene, u64, u64) {
    let mut s = scene();
    let (x, dir) = if from_left { (-10.0, 0.0) } else { (10.0, 180.0) };
    beam(&mut s, (x, 0.0), 4.0, dir, 20, Polarization::Unpolarized);
    let mirror = s.add(
        "mirror",
        ObjectKind::Mirror(Mirror { path: Path::segment((0.0, -5.0), (0.0, 5.0)), reflectance, one_sided }),
    );
    // Reflected light goes back towards the source, past it, onto this detector.
    let back_x = if from_left { -20.0 } else { 20.0 };
    let back = detector(&mut s, "back", (back_x, -5.0), (back_x, 5.0));
    (s, mirror, back)
}

#[test]
fn a_one_sided_mirror_reflects_only_from_its_left_side() {
    // Left side: reflects R of the power, absorbs 1 − R (definition of reflectance).
    // Right side: absorbs everything (scene::Mirror::one_sided).
    for mode in [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo] {
        let (s, mirror, _) = mirror_scene(0.8, true, true);
        let t = run(&s, &config(&s, mode));
        let l = t.budget.launched;
        assert!((t.budget.detected[0] / l - 0.8).abs() < 1e-12, "{mode:?} left: detected {}", t.budget.detected[0] / l);
        assert!((t.budget.absorbed_by(mirror) / l - 0.2).abs() < 1e-12, "{mode:?} left: absorbed");

        let (s, mirror, _) = mirror_scene(0.8, true, false);
        let t = run(&s, &config(&s, mode));
        let l = t.budget.launched;
        assert!(t.budget.detected[0].abs() < 1e-15, "{mode:?} right: nothing comes back");
        assert!((t.budget.absorbed_by(mirror) / l - 1.0).abs() < 1e-12, "{mode:?} right: all absorbed");
        assert!(t.events.iter().any(|e| e.kind == EventKind::Absorb && e.object_slot == 1));
    }
}

#[test]
fn a_two_sided_mirror_reflects_from_both_sides() {
    for from_left in [true, false] {
        let (s, mirror, _) = mirror_scene(0.8, false, from_left);
        let t = run(&s, &config(&s, TraceMode::Tree));
        let l = t.budget.launched;
        assert!((t.budget.detected[0] / l - 0.8).abs() < 1e-12, "from left {from_left}");
        assert!((t.budget.absorbed_by(mirror) / l - 0.2).abs() < 1e-12, "from left {from_left}");
    }
}

/// A splitter on the diagonal x = y: a beam going +x is reflected to +y or passes on to +x.
fn splitter_scene(r: f64, tr: f64, rays: u32) -> (raydraft::scene::Scene, u64) {
    let mut s = scene();
    beam(&mut s, (-10.0, 0.0), 2.0, 0.0, rays, Polarization::Unpolarized);
    let splitter = s.add(
        "splitter",
        ObjectKind::Splitter(Splitter {
            path: Path::segment((-5.0, -5.0), (5.0, 5.0)),
            reflectance: r,
            transmittance: tr,
        }),
    );
    detector(&mut s, "ahead", (20.0, -10.0), (20.0, 10.0));
    detector(&mut s, "up", (10.0, 20.0), (-10.0, 20.0));
    (s, splitter)
}

#[test]
fn monte_carlo_splitter_shares_follow_r_t_and_a() {
    // Each ray is reflected with probability R, passed with T and absorbed with A = 1 − R − T,
    // keeping its full power when it goes on (R + T + A = 1 by definition of the element).
    // Monte Carlo tolerance 4√(p(1−p)/N) (common practice: four standard deviations of a
    // binomial fraction).
    let (r, tr) = (0.3, 0.5);
    let rays = 20_000;
    let (s, splitter) = splitter_scene(r, tr, rays);
    let mut c = config(&s, TraceMode::MonteCarlo);
    c.settings.seed = 11;
    let t = run(&s, &c);
    let l = t.budget.launched;
    let tol = |p: f64| 4.0 * (p * (1.0 - p) / f64::from(rays)).sqrt();
    let (ahead, up, absorbed) =
        (t.budget.detected[0] / l, t.budget.detected[1] / l, t.budget.absorbed_by(splitter) / l);
    assert!((ahead - tr).abs() < tol(tr), "passed {ahead} vs {tr}");
    assert!((up - r).abs() < tol(r), "reflected {up} vs {r}");
    assert!((absorbed - 0.2).abs() < tol(0.2), "absorbed {absorbed} vs 0.2");
    assert!((t.budget.absorbed / l - absorbed).abs() < 1e-12, "only the splitter absorbs");
    // Every ray that goes on keeps its launched power: the choice carries the probability.
    let per_ray = l / f64::from(rays);
    for e in t.events.iter().filter(|e| matches!(e.kind, EventKind::Reflect | EventKind::Transmit)) {
        let after = f64::from(e.after_s + e.after_p);
        assert!((after - per_ray).abs() < 1e-6 * per_ray, "{e:?}");
    }
}

#[test]
fn a_lossless_splitter_absorbs_nothing() {
    // R + T = 1: A = 0, so nothing is absorbed and the detectors get everything (tree and
    // Monte Carlo modes; a principal path absorbs the smaller share, checked below).
    for mode in [TraceMode::Tree, TraceMode::MonteCarlo] {
        let (s, splitter) = splitter_scene(0.4, 0.6, 200);
        let t = run(&s, &config(&s, mode));
        assert!(t.budget.absorbed_by(splitter).abs() < 1e-12, "{mode:?}");
        assert!((t.budget.detected_total() / t.budget.launched - 1.0).abs() < 1e-12, "{mode:?}");
    }
}

#[test]
fn principal_path_splitter_keeps_the_larger_share() {
    // One path per ray: the larger of R and T goes on, the rest is absorbed by the element;
    // on a tie the ray passes straight on (scene::TraceMode::Principal).
    for (r, tr, ahead, up) in [(0.3, 0.5, 0.5, 0.0), (0.6, 0.3, 0.0, 0.6), (0.4, 0.4, 0.4, 0.0)] {
        let (s, splitter) = splitter_scene(r, tr, 16);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let l = t.budget.launched;
        assert!((t.budget.detected[0] / l - ahead).abs() < 1e-12, "R {r} T {tr}: ahead");
        assert!((t.budget.detected[1] / l - up).abs() < 1e-12, "R {r} T {tr}: up");
        assert!((t.budget.absorbed_by(splitter) / l - (1.0 - r.max(tr))).abs() < 1e-12, "R {r} T {tr}: absorbed");
    }
}

#[test]
fn absorbed_power_is_kept_per_object() {
    // Two absorbers side by side take each half of a uniform beam; a 70 % mirror in front of
    // a third absorber loses 30 % and the absorber behind the reflection takes the 70 %.
    // Many rays, so the budget is summed over several chunks of work.
    let mut s = scene();
    let first_beam = beam(&mut s, (-10.0, 0.0), 4.0, 0.0, 400, Polarization::Unpolarized);
    let low = absorber(&mut s, "low", (0.0, -3.0), (0.0, 0.0));
    let high = absorber(&mut s, "high", (0.0, 0.0 + 1e-9), (0.0, 3.0));
    beam(&mut s, (-10.0, 50.0), 2.0, 0.0, 100, Polarization::S);
    let mirror = s.add(
        "mirror",
        ObjectKind::Mirror(Mirror {
            path: Path::segment((-5.0, 45.0), (5.0, 55.0)),
            reflectance: 0.7,
            one_sided: false,
        }),
    );
    let sink = absorber(&mut s, "sink", (-10.0, 70.0), (10.0, 70.0));
    let t = run(&s, &config(&s, TraceMode::Tree));
    let l = t.budget.launched;
    // Each beam carries its power 1.0 (Emission::new), so the scene launches 2.0 in all.
    assert!((l - 2.0).abs() < 1e-12, "launched {l}");
    assert!((t.budget.absorbed_by(low) - 0.5).abs() < 1e-12, "low {}", t.budget.absorbed_by(low));
    assert!((t.budget.absorbed_by(high) - 0.5).abs() < 1e-12, "high {}", t.budget.absorbed_by(high));
    assert!((t.budget.absorbed_by(mirror) - 0.3).abs() < 1e-12, "mirror {}", t.budget.absorbed_by(mirror));
    assert!((t.budget.absorbed_by(sink) - 0.7).abs() < 1e-12, "sink {}", t.budget.absorbed_by(sink));
    // The per-object figures add up to the total absorbed, and a source absorbs nothing.
    let sum: f64 = t.budget.absorbed_by_object.iter().map(|(_, w)| w).sum();
    assert!((sum - t.budget.absorbed).abs() < 1e-12);
    assert_eq!(t.budget.absorbed_by(first_beam), 0.0, "a source absorbs nothing");
    assert_eq!(t.budget.absorbed_by(u64::MAX), 0.0, "no object has this id");
}

/// Incidence angles stored on the events of the first ray.
fn incidences(events: &[Event], kind: EventKind) -> Vec<f64> {
    events.iter().filter(|e| e.kind == kind).map(|e| f64::from(e.incidence_deg)).collect()
}

#[test]
fn events_store_the_angle_of_incidence() {
    // A mirror hit at 30° from its normal: the angle of incidence is 30° (law of reflection).
    let mut s = scene();
    beam(&mut s, (-10.0, 0.0), 0.0, 0.0, 1, Polarization::Unpolarized);
    let normal_deg = 150.0f64; // the mirror's normal makes 30° with the incoming −x side
    let along = (normal_deg + 90.0).to_radians();
    let (dx, dy) = (5.0 * along.cos(), 5.0 * along.sin());
    s.add(
        "mirror",
        ObjectKind::Mirror(Mirror { path: Path::segment((-dx, -dy), (dx, dy)), reflectance: 1.0, one_sided: false }),
    );
    let t = run(&s, &config(&s, TraceMode::Principal));
    let got = incidences(t.events_of(&t.rays[0]), EventKind::Reflect);
    assert_eq!(got.len(), 1);
    assert!((got[0] - 30.0).abs() < 1e-4, "mirror: {got:?}");

    // A plate of n = 1.5 hit at 45°: 45° at the entry face, then θt = 28.1255° at the exit
    // face (computed from Snell's law, n₁ sin θ₁ = n₂ sin θ₂, air → 1.5 at 45°).
    let mut s = scene();
    solid(&mut s, "plate", rect(0.0, 0.0, 100.0, 10.0), 1.5);
    beam(&mut s, (-10.0, 10.0), 0.0, -45.0, 1, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Principal));
    let got = incidences(t.events_of(&t.rays[0]), EventKind::Refract);
    assert_eq!(got.len(), 2, "{got:?}");
    assert!((got[0] - 45.0).abs() < 1e-4, "entry: {got:?}");
    assert!((got[1] - 28.1255).abs() < 1e-4, "exit: {got:?}");
    // The launch event has no surface: 0 there.
    assert_eq!(incidences(t.events_of(&t.rays[0]), EventKind::Launch), vec![0.0]);
}

#[test]
fn an_events_fresnel_coefficients_are_the_ones_applied() {
    // The inspector recomputes R and T from an event's stored indices and angle
    // (Event::fresnel): in tree mode they must reproduce the power split the trace made.
    let mut s = scene();
    solid(&mut s, "plate", rect(0.0, 0.0, 100.0, 10.0), 1.5);
    beam(&mut s, (-10.0, 10.0), 0.0, -60.0, 1, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let mut n_checked = 0;
    for e in t.events.iter().filter(|e| matches!(e.kind, EventKind::Refract | EventKind::Reflect) && e.n1 != e.n2) {
        let f = e.fresnel();
        let (bs, bp) = (f64::from(e.before_s), f64::from(e.before_p));
        let (want_s, want_p) =
            if e.kind == EventKind::Refract { (bs * f.ts, bp * f.tp) } else { (bs * f.rs, bp * f.rp) };
        // Stored powers and angles are f32: agree to a few parts in 10⁶.
        assert!((f64::from(e.after_s) - want_s).abs() < 1e-5 * bs, "{e:?}");
        assert!((f64::from(e.after_p) - want_p).abs() < 1e-5 * bp, "{e:?}");
        n_checked += 1;
    }
    assert!(n_checked >= 4, "checked {n_checked} events");
}

#[test]
fn tree_mode_splitter_shares_are_exact() {
    // Tree mode follows both branches with their exact shares: R, T and A = 1 − R − T.
    let (s, splitter) = splitter_scene(0.3, 0.5, 50);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let l = t.budget.launched;
    assert!((t.budget.detected[0] / l - 0.5).abs() < 1e-12, "ahead {}", t.budget.detected[0] / l);
    assert!((t.budget.detected[1] / l - 0.3).abs() < 1e-12, "up {}", t.budget.detected[1] / l);
    assert!((t.budget.absorbed_by(splitter) / l - 0.2).abs() < 1e-12, "absorbed");
    // The split keeps the s/p mix of the incoming ray on both branches.
    for e in t.events.iter().filter(|e| matches!(e.kind, EventKind::Reflect | EventKind::Transmit)) {
        let share = if e.kind == EventKind::Reflect { 0.3 } else { 0.5 };
        assert!((f64::from(e.after_s) - share * f64::from(e.before_s)).abs() < 1e-7, "{e:?}");
        assert!((f64::from(e.after_p) - share * f64::from(e.before_p)).abs() < 1e-7, "{e:?}");
    }
}

#[test]
fn a_detector_records_where_at_what_angle_and_how_much_arrives() {
    // A vertical detector from (0, −5) to (0, 5); one ray going up-right at 30° arrives at
    // (0, 1). Along the detector: 6 mm from its first point. Angle from the normal on the
    // side the ray came from, counter-clockwise positive: +30° (the ray's reverse direction
    // is turned 30° counter-clockwise from that normal; law of reflection geometry).
    for (from_left, want_angle) in [(true, 30.0), (false, -30.0)] {
        let mut s = scene();
        let (dir_deg, x): (f64, f64) = if from_left { (30.0, -10.0) } else { (150.0, 10.0) };
        let d = raydraft::geom::unit(dir_deg.to_radians());
        let start = raydraft::geom::Vec2::new(0.0, 1.0) - d * (x.abs() / d.x.abs());
        beam(&mut s, (start.x, start.y), 0.0, dir_deg, 1, Polarization::S);
        detector(&mut s, "screen", (0.0, -5.0), (0.0, 5.0));
        let t = run(&s, &config(&s, TraceMode::Principal));
        let hits = &t.detectors[0].hits;
        assert_eq!(hits.len(), 1);
        let h = hits[0];
        assert!((h.along - 6.0).abs() < 1e-9, "along {}", h.along);
        assert!((h.angle_deg - want_angle).abs() < 1e-9, "from left {from_left}: angle {}", h.angle_deg);
        assert!((h.power - t.budget.launched).abs() < 1e-15, "power {}", h.power);
        assert!((h.wavelength_nm - 587.5618).abs() < 1e-12);
    }
}

#[test]
fn a_ray_grazing_a_mirror_reflects_once() {
    // A fan of rays from 1e-6 mm off a mirror's line, 1e-8 to 1e-6 rad from grazing, meets
    // the mirror 1 to 100 mm on. By the law of reflection each leaves at the same tiny angle
    // on the side it came from and never meets the mirror again. The hit point is rounded
    // (≈ 1e-14 mm), and at such angles the mirror's own line lies up to 1e-6 mm along the
    // reflected ray, farther than the minimum hit distance: only the rule that a ray never
    // meets again the edge it leaves keeps it from a second reflection.
    let theta = 35f64.to_radians();
    let (c, s) = (theta.cos(), theta.sin());
    let mut sc = scene();
    // From the origin along 35°; its left side faces (−sin, cos).
    sc.add(
        "mirror",
        ObjectKind::Mirror(Mirror {
            path: Path::segment((0.0, 0.0), (120.0 * c, 120.0 * s)),
            reflectance: 1.0,
            one_sided: false,
        }),
    );
    let h = 1e-6;
    let (d_min, d_max) = (1e-8f64, 1e-6f64);
    point(&mut sc, (-h * s, h * c), 35.0 - d_max.to_degrees(), 35.0 - d_min.to_degrees(), 64);
    for mode in [TraceMode::Principal, TraceMode::Tree] {
        let t = run(&sc, &config(&sc, mode));
        for r in &t.rays {
            let ev = t.events_of(r);
            let reflections = ev.iter().filter(|e| e.kind == EventKind::Reflect).count();
            assert_eq!(reflections, 1, "{mode:?}: {ev:?}");
            // It leaves on the side it came from: left of the mirror.
            let end = ev.last().expect("events").point;
            assert!(-end.x * s + end.y * c > 0.0, "{mode:?}: ends right of the mirror at {end:?}");
        }
    }
}
