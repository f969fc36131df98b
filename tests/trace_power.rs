//! Power accounting through the trace: the escape cone of a slab, Beer–Lambert absorption,
//! budget closure, reversibility, determinism across threads and cancellation.

#![allow(clippy::unreadable_literal)]

mod common;

use common::*;
use raydraft::geom::{Vec2, unit};
use raydraft::optics::fresnel::critical_angle;
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
    // angle (derived: with dN/dθ constant the rays toward a face span π and those inside the
    // escape cone 2θc; 0.464559 for n = 1.5 and 0.541705 for n = 1.33, computed).
    // Monte Carlo tolerance 4√(p(1−p)/N) (common practice: four standard deviations of a
    // binomial fraction).
    for (n, p) in [(1.5, 0.464559), (1.33, 0.541705)] {
        let rays = 40_000;
        let s = slab_with_lamp(n, rays);
        let mut c = config(&s, TraceMode::MonteCarlo);
        c.settings.seed = 20261202;
        let t = run(&s, &c);
        let got = t.budget.detected_total() / t.budget.launched;
        let tol = 4.0 * (p * (1.0 - p) / f64::from(rays)).sqrt();
        assert!((got - p).abs() < tol, "n={n}: escaped {got} vs {p} ± {tol}");
        // The same fraction from the library's critical angle (what the escape-cone analysis
        // reports).
        let theta_c = critical_angle(n, 1.0).expect("a critical angle");
        assert!((2.0 * theta_c / std::f64::consts::PI - p).abs() < 1e-6);
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
    // emitter, n = 1.5: 0.41332 (s) and 0.44825 (p) (computed: the escape-cone fraction
    // weighted by Ts and Tp from the Fresnel equations, Smith, *Modern Optical Engineering*,
    // 4th ed. (2008), eq. 11.1, from memory).
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
    // a path of 10/cos θt = 11.3389 mm → 0.321778 (computed; the Beer–Lambert law,
    // common practice).
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
        // 24 parallel rays (several chunks of work), all with the same path in the plate.
        beam(&mut s, (start.x, start.y), 2.0, -90.0 + deg, 24, Polarization::Unpolarized);
        let t = run(&s, &config(&s, TraceMode::Principal));
        let ev = t.events_of(&t.rays[0]);
        let refr: Vec<&Event> = ev.iter().filter(|e| e.kind == EventKind::Refract).collect();
        let ratio = f64::from(refr[1].before_s + refr[1].before_p) / f64::from(refr[0].after_s + refr[0].after_p);
        assert!((ratio - want).abs() < 1e-6, "{deg}°: T {ratio} vs {want}");
        // A principal path passes interfaces without Fresnel loss, so the plate absorbs
        // 1 − T of the launched power, and nothing else absorbs.
        let b = &t.budget;
        assert!((b.absorbed_in_media[1] - b.launched * (1.0 - want)).abs() < 1e-6, "{:?}", b.absorbed_in_media);
        assert_eq!(b.absorbed_in_media[0], 0.0, "the ambient air does not absorb");
        assert!((b.absorbed - b.absorbed_in_media[1]).abs() < 1e-12);
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
    // A background job can be abandoned and a new one started. Cancelling right after the
    // start stops it long before its 200 000 rays (hundreds of milliseconds of work) are done.
    let job = TraceJob::start(s.clone(), config(&s, TraceMode::MonteCarlo));
    job.cancel();
    let t = job.wait().expect("the worker answers");
    assert!(t.cancelled, "the job ran to the end: {} rays", t.n_rays);
    assert!(t.n_rays < 200_000);
    assert!(t.budget.closure_error() < 1e-9, "a cancelled trace still accounts for what it traced");
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
    // since reflections keep the angle (derived: the cosine-weighted flux within ±θc is
    // sin θc of the total; 0.666667 for n = 1.5, 0.751880 for n = 1.33).
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

/// A wide block of n = 1.5 with its top face at y = 0 and a beam arriving at 45° on the
/// origin; a short detector across the first-surface reflection, 10 mm from the hit point.
/// Light reflected inside the block comes out more than 40 mm further on and misses it.
fn block_at_45(rays: u32, pol: Polarization) -> raydraft::scene::Scene {
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, -25.0, 400.0, 50.0), 1.5);
    let d = unit((-45.0f64).to_radians());
    let start = -d * 10.0;
    beam(&mut s, (start.x, start.y), 1.0, -45.0, rays, pol);
    let c = Vec2::new(1.0, 1.0).normalize() * 10.0;
    let across = Vec2::new(-1.0, 1.0).normalize() * 2.0;
    detector(&mut s, "reflection", ((c - across).x, (c - across).y), ((c + across).x, (c + across).y));
    s
}

#[test]
fn first_surface_reflection_at_45_degrees_in_tree_and_monte_carlo_modes() {
    // Air → 1.5 at 45°: Rs 0.09201, Rp 0.00847, unpolarised mean 0.05024 (computed from the
    // Fresnel equations, Smith, *Modern Optical Engineering*, 4th ed. (2008), eq. 11.1, from memory).
    for (pol, want) in [(Polarization::S, 0.09201), (Polarization::P, 0.00847), (Polarization::Unpolarized, 0.05024)] {
        let s = block_at_45(50, pol);
        let t = run(&s, &config(&s, TraceMode::Tree));
        let got = t.budget.detected[0] / t.budget.launched;
        assert!((got - want).abs() < 1e-5, "tree {pol:?}: R {got} vs {want}");
    }
    // Monte Carlo: each ray is reflected with probability R (tolerance 4√(p(1−p)/N), common
    // practice) and keeps its whole power.
    let rays = 20_000;
    let s = block_at_45(rays, Polarization::Unpolarized);
    let mut c = config(&s, TraceMode::MonteCarlo);
    c.settings.seed = 45;
    let t = run(&s, &c);
    let (got, want) = (t.budget.detected[0] / t.budget.launched, 0.05024);
    let tol = 4.0 * (want * (1.0 - want) / f64::from(rays)).sqrt();
    assert!((got - want).abs() < tol, "Monte Carlo: R {got} vs {want} ± {tol}");
}

#[test]
fn monte_carlo_rays_keep_their_power_and_carry_the_polarisation_of_their_branch() {
    // An unpolarised ray reflected at 45° on glass is mostly s: s share Rs/(Rs + Rp) =
    // 0.09201/0.10048 = 0.91574; a transmitted one has s share Ts/(Ts + Tp) = 0.90799/1.89952
    // = 0.47801 (computed from Smith, *Modern Optical Engineering*, 4th ed. (2008), eq. 11.1, from memory). The
    // ray's total power is unchanged by the choice: the choice carries the probability.
    let s = block_at_45(400, Polarization::Unpolarized);
    let mut c = config(&s, TraceMode::MonteCarlo);
    c.settings.seed = 3;
    let t = run(&s, &c);
    let (mut n_reflect, mut n_refract) = (0, 0);
    for e in t.events.iter().filter(|e| e.n1 == 1.0 && e.n2 == 1.5) {
        let before = f64::from(e.before_s + e.before_p);
        let after = f64::from(e.after_s + e.after_p);
        assert!((after - before).abs() < 1e-6 * before, "{e:?}");
        let s_share = f64::from(e.after_s) / after;
        match e.kind {
            EventKind::Reflect => {
                n_reflect += 1;
                assert!((s_share - 0.91574).abs() < 1e-4, "reflected s share {s_share}");
            }
            EventKind::Refract => {
                n_refract += 1;
                assert!((s_share - 0.47801).abs() < 1e-4, "refracted s share {s_share}");
            }
            _ => {}
        }
    }
    assert!(n_reflect > 0 && n_refract > 300, "{n_reflect} reflected, {n_refract} refracted");
}

#[test]
fn tree_mode_drops_a_ray_only_once_its_power_is_below_the_threshold() {
    // A beam launched inside a block of n = 1.5 and α = 0.1/mm reaches the face 10 mm away
    // with e^(−1) = 0.367879 of its power (Beer–Lambert, common practice). With a threshold
    // of 0.5 it is dropped there; with 0.3 it goes on, and at normal incidence the face
    // reflects R = ((n − 1)/(n + 1))² = 0.04 (Hecht 2017 eq. 4.67, from memory), a branch
    // below the threshold, and passes the rest out of the block.
    let survive = (-1.0f64).exp();
    let block = || {
        let mut s = scene();
        let mut m = raydraft::optics::Material::constant("absorbing", 1.5);
        m.absorption_per_mm = 0.1;
        s.materials.push(m);
        s.add(
            "block",
            raydraft::scene::ObjectKind::Solid(raydraft::scene::Solid {
                shape: rect(0.0, 0.0, 20.0, 100.0),
                material: "absorbing".into(),
            }),
        );
        beam(&mut s, (0.0, 0.0), 4.0, 0.0, 20, Polarization::Unpolarized);
        s
    };
    let s = block();
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 0.5;
    let t = run(&s, &c);
    let b = &t.budget;
    assert!((b.below_threshold / b.launched - survive).abs() < 1e-9, "dropped {}", b.below_threshold);
    assert!((b.absorbed_in_media[1] / b.launched - (1.0 - survive)).abs() < 1e-9);
    assert_eq!(b.escaped, 0.0);
    for r in &t.rays {
        let kinds: Vec<EventKind> = t.events_of(r).iter().map(|e| e.kind).collect();
        assert_eq!(kinds, [EventKind::Launch, EventKind::Dropped]);
    }

    c.settings.threshold = 0.3;
    let t = run(&s, &c);
    let b = &t.budget;
    assert!((b.escaped / b.launched - 0.96 * survive).abs() < 1e-9, "escaped {}", b.escaped);
    assert!((b.below_threshold / b.launched - 0.04 * survive).abs() < 1e-9);

    // A detector inside the block 9 mm from the beam: e^(−0.9) = 0.40657 arrives, below the
    // threshold of 0.5, so the ray is dropped before the detector counts it.
    let mut s = block();
    detector(&mut s, "inside", (9.0, -10.0), (9.0, 10.0));
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 0.5;
    let t = run(&s, &c);
    let b = &t.budget;
    assert_eq!(b.detected[0], 0.0, "nothing below the threshold is detected");
    assert!((b.below_threshold / b.launched - (-0.9f64).exp()).abs() < 1e-9, "{b:?}");

    // A lossless mirror and a detector with the threshold at the full power: the ray is never
    // below it, so all of it is detected.
    let mut s = scene();
    beam(&mut s, (-10.0, 0.0), 4.0, 0.0, 20, Polarization::Unpolarized);
    s.add(
        "mirror",
        raydraft::scene::ObjectKind::Mirror(raydraft::scene::Mirror {
            path: raydraft::scene::Path::segment((0.0, -5.0), (0.0, 5.0)),
            reflectance: 1.0,
            one_sided: false,
        }),
    );
    detector(&mut s, "back", (-20.0, -5.0), (-20.0, 5.0));
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 1.0;
    let t = run(&s, &c);
    assert!((t.budget.detected[0] - t.budget.launched).abs() < 1e-12, "{:?}", t.budget);
}

#[test]
fn a_source_of_zero_power_traces_without_nan_in_every_mode() {
    // Power 0 is a valid source (only ratios matter); its rays meet a glass block and every
    // stored power stays a number (0), with nothing launched or lost. Monte Carlo rescales a
    // ray's power by its chosen branch's share, 0/0 here, which must give 0.
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, 0.0, 10.0, 10.0), 1.5);
    beam(&mut s, (-10.0, 0.0), 4.0, 20.0, 16, Polarization::Unpolarized);
    if let raydraft::scene::ObjectKind::BeamSource(b) = &mut s.objects[1].kind {
        b.emission.power_w = 0.0;
    }
    for mode in [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo] {
        let t = run(&s, &config(&s, mode));
        assert_eq!(t.budget.launched, 0.0);
        assert_eq!(t.budget.closure_error(), 0.0, "{mode:?}: nothing launched, nothing unaccounted");
        // Tree mode drops branches without power at the first split; the others go on.
        let reached = t.events.iter().any(|e| e.kind == EventKind::Refract);
        assert_eq!(reached, mode != TraceMode::Tree, "{mode:?}");
        assert!(t.events.iter().all(|e| e.after_s == 0.0 && e.after_p == 0.0), "{mode:?}");
    }
}

#[test]
fn tree_mode_drops_a_transmitted_part_below_the_threshold() {
    // A beam meets a lossless block of n = 1.5 at normal incidence: R = ((n − 1)/(n + 1))² =
    // 0.04 and T = 0.96 (Hecht 2017 eq. 4.67, from memory). With a threshold of 0.97 both
    // parts are below it, so the whole launched power is dropped at the first face and none
    // escapes; a transmitted part that went on would leave through the far face.
    let mut s = scene();
    solid(&mut s, "block", rect(10.0, 0.0, 10.0, 40.0), 1.5);
    beam(&mut s, (-5.0, 0.0), 4.0, 0.0, 20, Polarization::Unpolarized);
    let mut c = config(&s, TraceMode::Tree);
    c.settings.threshold = 0.97;
    let b = run(&s, &c).budget;
    assert!((b.below_threshold / b.launched - 1.0).abs() < 1e-12, "dropped {}", b.below_threshold);
    assert_eq!(b.escaped, 0.0);
    // Just under T, the transmitted part goes on and the reflected 0.04 is dropped; at the
    // far face T² = 0.9216 and R·T = 0.0384 are both below 0.95, so nothing escapes either,
    // but the first face's reflection is all that was dropped there.
    c.settings.threshold = 0.95;
    let t = run(&s, &c);
    let kinds: Vec<EventKind> = t.events_of(&t.rays[0]).iter().map(|e| e.kind).collect();
    assert!(kinds.len() >= 3, "the transmitted part reaches the far face: {kinds:?}");
    assert_eq!(t.budget.escaped, 0.0);
}
