//! Power accounting through the trace: the escape cone of a slab, Beer–Lambert absorption,
//! budget closure, reversibility, determinism across threads and cancellation.

#![allow(clippy::unreadable_literal)]

mod common;

use common::*;
use raydraft::geom::{Vec2, unit};
use raydraft::scene::{Polarization, TraceMode};
use raydraft::trace::{Control, Event, EventKind, TraceJob, trace, trace_with};

/// A long slab in air with an isotropic source in the middle, detectors along both faces and
/// absorbers at both ends.
fn slab_with_lamp(n: f64, rays: u32) -> raydraft::scene::Scene {
    let mut s = scene();
    solid(&mut s, "slab", rect(0.0, 0.0, 100.0, 1.0), n);
    point(&mut s, (0.0, 0.0), 0.0, 360.0, rays);
    detector(&mut s, "above", (-60.0, 2.0), (60.0, 2.0));
    detector(&mut s, "below", (60.0, -2.0), (-60.0, -2.0));
    // Light trapped by TIR reaches the end faces; absorbers just outside them keep it from
    // reaching the detectors.
    absorber(&mut s, "left end", (-50.001, -3.0), (-50.001, 3.0));
    absorber(&mut s, "right end", (50.001, 3.0), (50.001, -3.0));
    s.settings.max_depth = 1000;
    s
}

#[test]
fn escape_cone_fraction_by_monte_carlo() {
    // An isotropic in-plane emitter inside a slab with parallel faces: the fraction leaving
    // through the faces is 2θc/π, also with Fresnel splitting, since reflected rays keep their
    // angle (references §3, derived there; 0.464559 for n = 1.5 and 0.541705 for n = 1.33).
    // Monte Carlo tolerance 4√(p(1−p)/N) (references §3).
    for (n, p) in [(1.5, 0.464559), (1.33, 0.541705)] {
        let rays = 40_000;
        let s = slab_with_lamp(n, rays);
        let mut c = config(&s, TraceMode::MonteCarlo);
        c.settings.seed = 20261202;
        let t = run(&s, &c);
        let got = t.budget.detected_total() / t.budget.launched;
        let tol = 4.0 * (p * (1.0 - p) / f64::from(rays)).sqrt();
        assert!((got - p).abs() < tol, "n={n}: escaped {got} vs {p} ± {tol}");
        // The closed form itself: 2·asin(1/n)/π.
        assert!((2.0 * (1.0 / n).asin() / std::f64::consts::PI - p).abs() < 1e-6);
    }
}

#[test]
fn escape_cone_fraction_in_tree_mode() {
    // The same fraction in tree mode with evenly spread rays: exact up to the spacing of the
    // rays (1/N) and the power left below the threshold.
    let (n, p) = (1.5, 0.464559);
    let s = slab_with_lamp(n, 3600);
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 1e-7;
    let t = run(&s, &c);
    let got = t.budget.detected_total() / t.budget.launched;
    assert!((got - p).abs() < 2e-3, "escaped {got} vs {p}");
}

#[test]
fn first_pass_transmission_with_fresnel() {
    // First-pass escape through the faces with Fresnel losses for s and p, 2D isotropic
    // emitter, n = 1.5: 0.41332 (s) and 0.44825 (p) (references §3, computed).
    for (pol, want) in [(Polarization::S, 0.41332), (Polarization::P, 0.44825)] {
        let mut s = slab_with_lamp(1.5, 20_000);
        if let raydraft::scene::ObjectKind::PointSource(ps) = &mut s.objects[1].kind {
            ps.emission.polarization = pol;
        }
        let mut c = config(&s, TraceMode::Tree);
        c.settings.max_depth = 2; // launch → first face → detector
        c.settings.threshold = 0.0;
        let t = run(&s, &c);
        let got = t.budget.detected_total() / t.budget.launched;
        assert!((got - want).abs() < 2e-4, "{pol:?}: first pass {got} vs {want}");
    }
}

#[test]
fn beer_lambert_inside_an_absorbing_plate() {
    // T = e^(−αL): α = 0.1/mm over L = 10 mm → 0.367879; a 10 mm plate at 45° with n = 1.5 has
    // a path of 11.3389 mm → 0.321778 (references §3; Beer–Lambert law).
    for (deg, want) in [(0.0f64, 0.367879441), (45.0, 0.321778)] {
        let mut s = scene();
        let mut m = raydraft::optics::Material::constant("absorbing", 1.5);
        m.absorption_per_mm = 0.1;
        s.materials.push(m);
        s.add(
            "plate",
            raydraft::scene::ObjectKind::Solid(raydraft::scene::Solid {
                shape: rect(0.0, -5.0, 400.0, 10.0),
                material: "absorbing".into(),
            }),
        );
        let d = unit((-90.0 + deg).to_radians());
        let start = Vec2::new(0.0, 0.0) - d * 10.0;
        beam(&mut s, (start.x, start.y), 0.0, -90.0 + deg, 1, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let ev = t.events_of(&t.rays[0]);
        let refr: Vec<&Event> = ev.iter().filter(|e| e.kind == EventKind::Refract).collect();
        let ratio = f64::from(refr[1].before_s + refr[1].before_p) / f64::from(refr[0].after_s + refr[0].after_p);
        assert!((ratio - want).abs() < 1e-6, "{deg}°: T {ratio} vs {want}");
        assert!((t.budget.absorbed_in_media[1] - (1.0 - ratio)).abs() < 1e-6);
    }
}

#[test]
fn a_principal_path_traced_backwards_retraces_itself() {
    // Reversibility of light paths (Hecht 2017 §4.3, Stokes relations; a consequence of
    // Snell's law being symmetric in n₁ sin θ₁ = n₂ sin θ₂).
    let mut s = scene();
    solid(
        &mut s,
        "lens",
        raydraft::scene::Shape::Lens {
            position: (0.0, 0.0),
            diameter: 20.0,
            thickness: 6.0,
            r1: 30.0,
            r2: -45.0,
            rotation_deg: 10.0,
        },
        1.6,
    );
    solid(
        &mut s,
        "prism",
        raydraft::scene::Shape::Prism { position: (25.0, -10.0), apex_deg: 50.0, side: 25.0, rotation_deg: 5.0 },
        1.7,
    );
    beam(&mut s, (-30.0, 0.0), 6.0, 3.0, 7, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Principal));
    for r in 0..t.rays.len() {
        let fwd: Vec<Vec2> = t.events_of(&t.rays[r]).iter().map(|e| e.point).collect();
        let last = *fwd.last().expect("events");
        let back_dir = -final_direction(&t, r);
        // Start the reverse ray a little inside the scene boundary along the same line.
        let start = last + back_dir * 1.0;
        let mut s2 = s.clone();
        s2.objects.retain(|o| !o.kind.is_source());
        beam(&mut s2, (start.x, start.y), 0.0, back_dir.y.atan2(back_dir.x).to_degrees(), 1, Polarization::Unpolarized);
        s2.settings.margin = 40.0;
        let t2 = run(&s2, &config(&s2, TraceMode::Principal));
        let back: Vec<Vec2> = t2.events_of(&t2.rays[0]).iter().map(|e| e.point).collect();
        // Interface points in reverse order must coincide.
        let f_inner = &fwd[1..fwd.len() - 1];
        let b_inner = &back[1..back.len() - 1];
        assert_eq!(f_inner.len(), b_inner.len(), "ray {r}: different number of interfaces");
        for (a, b) in f_inner.iter().zip(b_inner.iter().rev()) {
            assert!((a - b).norm() < 1e-9, "ray {r}: {a:?} vs {b:?}");
        }
    }
}

#[test]
fn results_do_not_depend_on_the_number_of_threads() {
    let s = slab_with_lamp(1.5, 3000);
    for mode in [TraceMode::Tree, TraceMode::MonteCarlo] {
        let mut c = config(&s, mode);
        c.threads = Some(1);
        let one = trace(&s, &c);
        c.threads = Some(2);
        let two = trace(&s, &c);
        assert_eq!(one.events, two.events, "{mode:?}");
        assert_eq!(one.rays, two.rays);
        assert_eq!(one.budget, two.budget);
        assert_eq!(one.detectors, two.detectors);
    }
}

#[test]
fn monte_carlo_is_reproducible_and_seed_dependent() {
    let s = slab_with_lamp(1.5, 500);
    let c = config(&s, TraceMode::MonteCarlo);
    let a = trace(&s, &c);
    let b = trace(&s, &c);
    assert_eq!(a.events, b.events);
    let mut c2 = c.clone();
    c2.settings.seed += 1;
    let d = trace(&s, &c2);
    assert_ne!(a.events, d.events);
}

#[test]
fn events_are_compact_and_the_cap_holds() {
    // A million events must fit well under 100 MB.
    assert!(std::mem::size_of::<Event>() <= 64, "Event is {} bytes", std::mem::size_of::<Event>());
    let s = slab_with_lamp(1.5, 3000);
    let mut c = config(&s, TraceMode::Tree);
    c.settings.max_stored_events = 1000;
    let t = trace(&s, &c);
    assert!(t.events.len() <= 1000);
    assert!(t.events_truncated);
    assert!(t.n_events > 1000);
    assert!(t.warnings.iter().any(|w| w.contains("max_stored_events")));
    assert!(t.budget.closure_error() < 1e-9, "the budget still covers every ray");
}

#[test]
fn a_cancelled_trace_stops_and_says_so() {
    let s = slab_with_lamp(1.5, 200_000);
    let control = Control::new();
    control.cancel();
    let t = trace_with(&s, &config(&s, TraceMode::MonteCarlo), &control);
    assert!(t.cancelled);
    assert!(t.n_rays < 200_000);
    // A background job can be abandoned and a new one started.
    let job = TraceJob::start(s.clone(), config(&s, TraceMode::MonteCarlo));
    job.cancel();
    let t = job.wait().expect("the worker answers");
    assert!(t.cancelled || t.n_rays == 200_000);
    let small = slab_with_lamp(1.5, 100);
    let mut job = TraceJob::start(small.clone(), config(&small, TraceMode::Tree));
    // Poll as an editor would each frame, without blocking, until the trace is ready.
    let started = std::time::Instant::now();
    while job.poll().is_none() {
        assert!(started.elapsed().as_secs() < 60, "the background trace never finished");
        std::thread::sleep(std::time::Duration::from_millis(1));
    }
    assert_eq!(job.progress(), (100, 100), "progress reaches the number of launched rays");
    let t = job.wait().expect("finished");
    assert!(!t.cancelled && t.budget.closure_error() < 1e-9);
}

#[test]
fn lambertian_emitter_in_a_slab_escapes_one_over_n() {
    // A cosine-weighted (Lambertian) emitter inside a slab: the flux inside the escape cone is
    // sin θc = 1/n in 2D, and with Fresnel splitting all of it still leaves through the faces
    // since reflections keep the angle (references §3: 0.666667 for n = 1.5, 0.751880 for
    // n = 1.33, derived there).
    for (n, want) in [(1.5, 0.666667), (1.33, 0.751880)] {
        let rays = 40_000;
        let mut s = slab_with_lamp(n, rays);
        s.objects.retain(|o| !o.kind.is_source());
        s.add(
            "emitter",
            raydraft::scene::ObjectKind::LambertianSource(raydraft::scene::LambertianSource {
                a: (-0.5, 0.0),
                b: (0.5, 0.0),
                emission: raydraft::scene::Emission::new(rays, 1.0, 587.5618),
            }),
        );
        let mut c = config(&s, TraceMode::MonteCarlo);
        c.settings.seed = 7;
        let t = run(&s, &c);
        let got = t.budget.detected_total() / t.budget.launched;
        let tol = 4.0 * (want * (1.0 - want) / f64::from(rays)).sqrt();
        assert!((got - want).abs() < tol, "n={n}: {got} vs {want} ± {tol}");
        // The emitter points up (to the left of a → b): in the first pass nothing goes down
        // except by reflection, so more reaches the detector above.
        assert!(t.budget.detected[0] > t.budget.detected[1]);
    }
}

#[test]
fn thin_elements_share_power_exactly_in_tree_mode() {
    // A splitter (R 0.3, T 0.5), a 90 % mirror and two detectors: the shares are
    // set by the element coefficients alone (definitions of reflectance and transmittance).
    let mut s = scene();
    beam(&mut s, (0.0, 0.0), 2.0, 0.0, 10, Polarization::S);
    s.add(
        "splitter",
        raydraft::scene::ObjectKind::Splitter(raydraft::scene::Splitter {
            path: raydraft::scene::Path::segment((10.0, -5.0), (20.0, 5.0)),
            reflectance: 0.3,
            transmittance: 0.5,
        }),
    );
    // The splitter sends its reflection up (+y) onto a mirror that returns it down through
    // the splitter.
    s.add(
        "mirror",
        raydraft::scene::ObjectKind::Mirror(raydraft::scene::Mirror {
            path: raydraft::scene::Path::segment((5.0, 20.0), (25.0, 20.0)),
            reflectance: 0.9,
            one_sided: false,
        }),
    );
    detector(&mut s, "ahead", (40.0, -10.0), (40.0, 10.0));
    detector(&mut s, "bottom", (0.0, -30.0), (30.0, -30.0));
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 0.0;
    let t = run(&s, &c);
    let l = t.budget.launched;
    // Ahead: transmitted directly, 0.5. Up: 0.3, the mirror returns 0.27 down to the
    // splitter, which passes 0.135 down to the bottom detector and reflects 0.081 back
    // towards the source, where it escapes.
    assert!((t.budget.detected[0] / l - 0.5).abs() < 1e-12, "ahead {}", t.budget.detected[0] / l);
    assert!((t.budget.detected[1] / l - 0.135).abs() < 1e-12, "bottom {}", t.budget.detected[1] / l);
    assert!((t.budget.escaped / l - 0.081).abs() < 1e-12, "escaped {}", t.budget.escaped / l);
    let absorbed = 0.2 + 0.03 + 0.27 * 0.2;
    assert!((t.budget.absorbed / l - absorbed).abs() < 1e-12, "absorbed {}", t.budget.absorbed / l);
}
