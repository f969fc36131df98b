//! The classic results of geometric optics, reproduced through the full trace (sources,
//! geometry, media, Snell, Fresnel and the power budget together), not only the formulas.

#![allow(clippy::unreadable_literal)]

mod common;

use common::*;
use raydraft::geom::{Vec2, angle_of};
use raydraft::optics::fresnel::{brewster_angle, critical_angle};
use raydraft::scene::{Polarization, Shape, TraceMode};
use raydraft::trace::EventKind;

/// Deviation in degrees of a single narrow ray through `scene`, traced along its principal path.
fn deviation(scene: &raydraft::scene::Scene, incoming: Vec2) -> f64 {
    let t = run(scene, &config(scene, TraceMode::Principal));
    let out = final_direction(&t, 0);
    (angle_of(incoming) - angle_of(out)).to_degrees().rem_euclid(360.0)
}

fn prism_scene(n: f64, apex_deg: f64, incidence_deg: f64) -> (raydraft::scene::Scene, Vec2) {
    // Prism with its base on the x axis, apex up. A single ray aimed at the middle of the
    // left face, arriving at `incidence_deg` from the face's normal.
    let mut s = scene();
    let side = 20.0;
    solid(&mut s, "prism", Shape::Prism { position: (0.0, 0.0), apex_deg, side, rotation_deg: 0.0 }, n);
    let half = apex_deg.to_radians() / 2.0;
    let left = Vec2::new(-side * half.sin(), 0.0);
    let apex = Vec2::new(0.0, side * half.cos());
    let mid = (left + apex) / 2.0;
    let face = (apex - left).normalize();
    let outward = Vec2::new(-face.y, face.x);
    let inward = -outward;
    // Rotate the inward normal counter-clockwise by the incidence angle, so the ray rises
    // onto the face from below its normal, the usual way through a prism.
    let a = incidence_deg.to_radians();
    let d = Vec2::new(inward.x * a.cos() - inward.y * a.sin(), inward.x * a.sin() + inward.y * a.cos());
    let start = mid - d * 30.0;
    beam(&mut s, (start.x, start.y), 0.0, angle_of(d).to_degrees(), 1, Polarization::Unpolarized);
    (s, d)
}

#[test]
fn prism_minimum_deviation_by_sweeping_incidence() {
    // D_min = 2·asin(n·sin(A/2)) − A (Hecht, *Optics*, 5th ed., 2017, §5.5.1, eq. 5.54 — the
    // section and equation numbers from memory). For n = 1.5, A = 60°: 37.180756°.
    for (n, apex) in [(1.5, 60.0), (1.7, 45.0), (1.45, 30.0)] {
        let expected = 2.0 * (n * (apex / 2.0f64).to_radians().sin()).asin().to_degrees() - apex;
        let dev = |inc: f64| {
            let (s, d) = prism_scene(n, apex, inc);
            deviation(&s, d)
        };
        // Coarse sweep, then golden-section refinement around the smallest value.
        let mut best = (f64::INFINITY, 0.0);
        let mut inc = 10.0;
        while inc < 85.0 {
            let d = dev(inc);
            if d < best.0 {
                best = (d, inc);
            }
            inc += 0.5;
        }
        let (mut lo, mut hi) = (best.1 - 0.5, best.1 + 0.5);
        let g = (5f64.sqrt() - 1.0) / 2.0;
        for _ in 0..60 {
            let a = hi - g * (hi - lo);
            let b = lo + g * (hi - lo);
            if dev(a) < dev(b) {
                hi = b;
            } else {
                lo = a;
            }
        }
        let inc_min = lo.midpoint(hi);
        let found = dev(inc_min);
        assert!((found - expected).abs() < 1e-6, "n={n} A={apex}: D_min {found} vs {expected}");
        // At minimum deviation the ray crosses symmetrically: θi = (D_min + A)/2.
        assert!((inc_min - expected.midpoint(apex)).abs() < 1e-3, "incidence at minimum {inc_min}");
    }
}

#[test]
fn right_angle_prism_returns_the_beam_by_two_tirs() {
    // Two reflections on faces at 90° turn any in-plane ray through exactly 180°; with n = 1.5
    // both are total internal reflections while the tilt α at the hypotenuse satisfies
    // |α| < asin(n·sin(45° − θc)) = 4.7876° (computed from Snell's law at the hypotenuse and
    // the critical angle at the two faces; the mirror pair is Hecht 2017 §5.5.2, from memory).
    let n: f64 = 1.5;
    let theta_c = critical_angle(n, 1.0).expect("glass in air has a critical angle");
    let limit = (n * (45f64.to_radians() - theta_c).sin()).asin().to_degrees();
    assert!((limit - 4.7876).abs() < 1e-4, "limit {limit}");
    for alpha in [0.0, 1.0, -2.5, 4.0, -4.7, limit - 0.02, -(limit - 0.02)] {
        let mut s = scene();
        solid(&mut s, "prism", Shape::Prism { position: (0.0, 0.0), apex_deg: 90.0, side: 20.0, rotation_deg: 0.0 }, n);
        // Up into the hypotenuse (the base), tilted by α, aimed left of centre.
        let dir_deg = 90.0 - alpha;
        let d = raydraft::geom::unit(f64::to_radians(dir_deg));
        let target = Vec2::new(-4.0, 0.0);
        let start = target - d * 10.0;
        beam(&mut s, (start.x, start.y), 0.0, dir_deg, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let ev = t.events_of(&t.rays[0]);
        let tirs = ev.iter().filter(|e| e.kind == EventKind::Tir).count();
        assert_eq!(tirs, 2, "α = {alpha}: {tirs} TIRs in {:?}", ev.iter().map(|e| e.kind).collect::<Vec<_>>());
        let out = final_direction(&t, 0);
        let turn = (angle_of(out) - angle_of(d)).rem_euclid(std::f64::consts::TAU);
        assert!((turn - std::f64::consts::PI).abs() < 1e-9, "α = {alpha}: turned {}", turn.to_degrees());
    }
    // Beyond the limit one reflection is no longer total.
    let mut s = scene();
    solid(&mut s, "prism", Shape::Prism { position: (0.0, 0.0), apex_deg: 90.0, side: 20.0, rotation_deg: 0.0 }, n);
    let dir_deg: f64 = 90.0 - 6.0;
    let d = raydraft::geom::unit(dir_deg.to_radians());
    let start = Vec2::new(-4.0, 0.0) - d * 10.0;
    beam(&mut s, (start.x, start.y), 0.0, dir_deg, 1, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Principal));
    let tirs = t.events_of(&t.rays[0]).iter().filter(|e| e.kind == EventKind::Tir).count();
    assert!(tirs < 2, "6° tilt should break a TIR");
}

#[test]
fn parallel_plate_transmits_one_minus_r_over_one_plus_r() {
    // Incoherent multiple reflections in a lossless plate: T = (1 − R)/(1 + R) for each
    // polarisation (Born & Wolf, *Principles of Optics*, 7th ed., 1999, §7.6.1 for the sum
    // of the geometric series, section number from memory). R from the sine and tangent forms
    // (Smith, *Modern Optical Engineering*, 4th ed., 2008, eq. 11.1, from memory), computed
    // here independently of the engine.
    let n: f64 = 1.5;
    let ti = 45f64.to_radians();
    let tt = (ti.sin() / n).asin();
    let rs = ((ti - tt).sin() / (ti + tt).sin()).powi(2);
    let rp = ((ti - tt).tan() / (ti + tt).tan()).powi(2);
    for (pol, r) in [(Polarization::S, rs), (Polarization::P, rp)] {
        let mut s = scene();
        solid(&mut s, "plate", rect(0.0, 0.0, 400.0, 10.0), n);
        // Down at 45° onto the top face, from the upper left.
        beam(&mut s, (-20.0, 25.0), 0.0, -45.0, 1, pol);
        detector(&mut s, "below", (-200.0, -30.0), (250.0, -30.0));
        detector(&mut s, "above", (-200.0, 40.0), (250.0, 40.0));
        let mut c = config(&s, TraceMode::Tree);
        c.settings.threshold = 1e-14;
        let t = run(&s, &c);
        let below = t.budget.detected[0] / t.budget.launched;
        let above = t.budget.detected[1] / t.budget.launched;
        let expected = (1.0 - r) / (1.0 + r);
        assert!((below - expected).abs() < 1e-9, "{pol:?}: T {below} vs {expected}");
        assert!((above - 2.0 * r / (1.0 + r)).abs() < 1e-9, "{pol:?}: R {above}");
    }
}

#[test]
fn plate_shifts_a_ray_sideways() {
    // d = t·sinθ·[1 − cosθ/√(n² − sin²θ)] (Jenkins & White, *Fundamentals of
    // Optics*, 4th ed., 1976, from memory): n = 1.5, t = 10 mm at 45° → 3.29142 mm and at
    // 30° → 1.93814 mm.
    for (deg, want) in [(45.0f64, 3.29142), (30.0, 1.93814)] {
        let mut s = scene();
        solid(&mut s, "plate", rect(0.0, -5.0, 400.0, 10.0), 1.5);
        let d = raydraft::geom::unit((-90.0 + deg).to_radians());
        let start = Vec2::new(0.0, 0.0) - d * 20.0;
        beam(&mut s, (start.x, start.y), 0.0, -90.0 + deg, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let ev = t.events_of(&t.rays[0]);
        let exit = ev.iter().filter(|e| e.kind == EventKind::Refract).nth(1).expect("second refraction").point;
        // Distance of the exit point from the undeviated line through the entry point.
        let shift = (exit - Vec2::new(0.0, 0.0)).perp(&d).abs();
        assert!((shift - want).abs() < 1e-5, "{deg}°: shift {shift} vs {want}");
    }
}

/// Where a ray leaving the last refraction crosses the axis y = 0.
fn axis_crossing(t: &raydraft::trace::Trace, ray: usize) -> f64 {
    let ev = t.events_of(&t.rays[ray]);
    let last = ev.iter().rev().find(|e| e.kind == EventKind::Refract).expect("a refraction");
    let d = final_direction(t, ray);
    let k = -last.point.y / d.y;
    last.point.x + d.x * k
}

#[test]
fn ball_lens_focuses_at_its_effective_focal_length() {
    // EFL = nD/(4(n − 1)) from the centre (derived from the thick-lens equation with
    // R₁ = −R₂ = D/2 and d = D, Hecht 2017 §6.2, from memory): D = 10 mm, n = 1.5 → 7.5 mm;
    // n = 2 → 5 mm (on the surface).
    for (n, want) in [(1.5, 7.5), (2.0, 5.0)] {
        let mut s = scene();
        solid(&mut s, "ball", Shape::Ball { position: (0.0, 0.0), radius: 5.0 }, n);
        beam(&mut s, (-20.0, 0.01), 0.0, 0.0, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let f = axis_crossing(&t, 0);
        assert!((f - want).abs() / want < 1e-4, "n={n}: focus at {f} vs {want}");
    }
}

#[test]
fn thick_lenses_match_the_lensmaker_equation() {
    // 1/f = (n−1)[1/R₁ − 1/R₂ + (n−1)d/(nR₁R₂)], BFL = f[1 − (n−1)d/(nR₁)] (Hecht 2017 §6.2,
    // from memory). Case 1: R = ±50, d = 5, n = 1.5 → BFL 49.1525. Case 2: plano-convex
    // R₁ = 100, flat back, d = 10 → BFL 193.333.
    for (r1, r2, d, want_bfl) in [(50.0, -50.0, 5.0, 49.1525), (100.0, 0.0, 10.0, 193.3333)] {
        let mut s = scene();
        solid(
            &mut s,
            "lens",
            Shape::Lens { position: (0.0, 0.0), diameter: 20.0, thickness: d, r1, r2, rotation_deg: 0.0 },
            1.5,
        );
        s.settings.margin = 400.0;
        beam(&mut s, (-30.0, 0.01), 0.0, 0.0, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let bfl = axis_crossing(&t, 0) - d / 2.0;
        assert!((bfl - want_bfl).abs() / want_bfl < 1e-4, "R1={r1}: BFL {bfl} vs {want_bfl}");
    }
}

#[test]
fn core_cladding_guide_accepts_rays_inside_its_numerical_aperture() {
    // NA = √(n₁² − n₂²) = 0.242487 for n₁ = 1.48, n₂ = 1.46: acceptance 14.0334° in air
    // (Saleh & Teich, *Fundamentals of Photonics*, 2nd ed., 2007, §9.1, section number from
    // memory; in 2D every ray is meridional, so it is exact). From the library's critical
    // angle at the core wall: NA = n₁·cos θc.
    let theta_c = critical_angle(1.48, 1.46).expect("core denser than cladding");
    let na = 1.48 * theta_c.cos();
    assert!((na - 0.242487).abs() < 1e-6, "NA {na}");
    assert!((na.asin().to_degrees() - 14.0334).abs() < 1e-4);
    for (angle, guided) in [(13.5, true), (-13.9, true), (14.2, false), (-14.5, false), (20.0, false)] {
        let mut s = scene();
        solid(&mut s, "cladding", rect(50.0, 0.0, 100.0, 4.0), 1.46);
        // The core shares the cladding's end faces (a touching, nested solid).
        solid(&mut s, "core", rect(50.0, 0.0, 100.0, 1.0), 1.48);
        let d = raydraft::geom::unit(f64::to_radians(angle));
        let start = Vec2::new(0.0, 0.0) - d * 5.0;
        beam(&mut s, (start.x, start.y), 0.0, angle, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let ev = t.events_of(&t.rays[0]);
        // Inside the core every hit on the core's long faces must be a TIR when guided.
        let at_core_wall: Vec<_> = ev.iter().filter(|e| e.point.y.abs() > 0.49 && e.point.y.abs() < 0.51).collect();
        assert!(!at_core_wall.is_empty(), "{angle}°: never reached the core wall");
        let first = at_core_wall[0];
        if guided {
            assert!(at_core_wall.iter().all(|e| e.kind == EventKind::Tir), "{angle}° should be guided");
            assert_eq!(ev[1].medium, 2, "{angle}°: the ray must enter the core (medium 2)");
        } else {
            assert_eq!(first.kind, EventKind::Refract, "{angle}° should leak into the cladding");
        }
    }
}

#[test]
fn a_fused_silica_prism_disperses_by_its_published_index() {
    // Deviation of a ray through a prism from two applications of Snell's law, with the index
    // of fused silica from Malitson 1965 (JOSA 55:1205) at the F, d and C lines: the trace must
    // give the same exit angle to 1e-9 rad, and blue must bend most (normal dispersion).
    let silica = raydraft::optics::library_material("fused-silica").expect("library");
    let apex = 60.0f64;
    let inc = 50.0f64;
    let mut devs = Vec::new();
    for nm in [
        raydraft::optics::material::LINE_F_NM,
        raydraft::optics::material::LINE_D_NM,
        raydraft::optics::material::LINE_C_NM,
    ] {
        let (mut s, d) = prism_scene(1.0, apex, inc);
        if let raydraft::scene::ObjectKind::Solid(sol) = &mut s.objects[0].kind {
            sol.material = "fused-silica".into();
        }
        if let raydraft::scene::ObjectKind::BeamSource(b) = &mut s.objects[1].kind {
            b.emission.spectrum[0].nm = nm;
        }
        let n = silica.index_rel_air(nm);
        let a = apex.to_radians();
        let t1 = (inc.to_radians().sin() / n).asin();
        let t2 = a - t1;
        let out = (n * t2.sin()).asin();
        let expected = (inc.to_radians() + out - a).to_degrees();
        let got = deviation(&s, d);
        assert!((got - expected).abs() < 1e-7, "{nm} nm: {got} vs {expected}");
        devs.push(got);
    }
    assert!(devs[0] > devs[1] && devs[1] > devs[2], "F > d > C deviation: {devs:?}");
}

#[test]
fn zero_length_edges_and_repeated_vertices_are_harmless() {
    // A square drawn with a repeated corner: the zero-length edge is never hit, and a ray
    // through that very corner keeps a consistent medium.
    let mut s = scene();
    solid(
        &mut s,
        "square",
        Shape::Outline {
            points: vec![(0.0, 0.0), (10.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)],
            bulges: vec![],
        },
        1.5,
    );
    beam(&mut s, (-5.0, 15.0), 0.0, -45.0, 1, Polarization::Unpolarized);
    beam(&mut s, (-5.0, 5.0), 0.0, 0.0, 1, Polarization::Unpolarized);
    for mode in [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo] {
        let t = run(&s, &config(&s, mode));
        assert!(t.events.iter().all(|e| e.edge != 1 || e.object_slot != 0), "the zero-length edge was hit");
    }
}

#[test]
fn p_light_at_brewsters_angle_is_not_reflected() {
    // At tan θB = n₂/n₁ the p reflectance vanishes (Hecht 2017 §8.6.1, from memory): 56.3099°
    // for air → 1.5, where Rs = 0.14793 (computed from Smith, *Modern Optical Engineering*,
    // 4th ed. (2008), eq. 11.1, from memory). Traced in tree mode with no threshold, a p-polarised beam sends no
    // power to a detector placed to catch the reflection.
    let n: f64 = 1.5;
    let brewster = brewster_angle(1.0, n).to_degrees();
    assert!((brewster - 56.3099).abs() < 1e-4, "Brewster {brewster}");
    for (pol, want) in [(Polarization::P, 0.0), (Polarization::S, 0.14793)] {
        let mut s = scene();
        solid(&mut s, "block", rect(0.0, -10.0, 200.0, 20.0), n);
        // Down onto the top face at θB from the normal, arriving from the upper left.
        let d = raydraft::geom::unit((-90.0 + brewster).to_radians());
        let start = Vec2::new(0.0, 0.0) - d * 20.0;
        beam(&mut s, (start.x, start.y), 0.0, -90.0 + brewster, 1, pol);
        // The reflection leaves up and to the right and crosses y = 30 mm at x ≈ 45 mm; light
        // reflected inside the block comes out about 27 mm further right, past the detector.
        detector(&mut s, "reflection", (30.0, 30.0), (60.0, 30.0));
        let mut c = config(&s, TraceMode::Tree);
        c.settings.threshold = 0.0;
        let t = run(&s, &c);
        let r = t.budget.detected[0] / t.budget.launched;
        assert!((r - want).abs() < 1e-5, "{pol:?}: reflected {r} vs {want}");
    }
}

#[test]
fn a_thick_lens_has_the_lensmakers_focal_length() {
    // Effective focal length from a paraxial ray: f = −h / tan u′ for a ray entering parallel
    // at height h (Hecht 2017 §6.2, from memory). R = ±50 mm, d = 5 mm, n = 1.5 → f = 50.8475 mm
    // (computed from the thick-lens equation).
    let mut s = scene();
    solid(
        &mut s,
        "lens",
        Shape::Lens { position: (0.0, 0.0), diameter: 20.0, thickness: 5.0, r1: 50.0, r2: -50.0, rotation_deg: 0.0 },
        1.5,
    );
    let h = 0.01;
    beam(&mut s, (-30.0, h), 0.0, 0.0, 1, Polarization::Unpolarized);
    s.settings.margin = 100.0;
    let t = run(&s, &config(&s, TraceMode::Principal));
    let d = final_direction(&t, 0);
    let f = -h / (d.y / d.x);
    assert!((f - 50.8475).abs() / 50.8475 < 1e-4, "f = {f}");
}
