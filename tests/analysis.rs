//! The headless analysis: ray explanations, escape cones, escaped power by edge, detector
//! histograms and uniformity, and parameter sweeps, each checked against published values.

#![allow(clippy::unreadable_literal)]

mod common;

use std::f64::consts::PI;

use common::*;
use raydraft::analysis::{
    Metric, ParamPath, escape_cone, escaped_by_edge, explain_ray, intensity, irradiance, sweep, uniformity,
};
use raydraft::geom::Vec2;
use raydraft::scene::{LambertianSource, ObjectKind, Polarization, Scene, Shape, Solid, TraceMode};
use raydraft::trace::{Control, EventKind, NONE};

/// A glass block (top face on y = 0) and one ray arriving from above at `incidence_deg`.
fn glass_block_with_ray(n: f64, incidence_deg: f64) -> Scene {
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, -10.0, 100.0, 20.0), n);
    let a = incidence_deg.to_radians();
    // Start 10 mm above the surface so the ray lands on the origin.
    beam(&mut s, (-10.0 * a.tan(), 10.0), 0.0, -90.0 + incidence_deg, 1, Polarization::Unpolarized);
    s
}

/// The edge of solid `id` lying along y = `y`.
fn edge_on(s: &Scene, id: u64, y: f64) -> u32 {
    let Some(ObjectKind::Solid(solid)) = s.object(id).map(|o| &o.kind) else { panic!("no solid {id}") };
    let outline = solid.shape.outline().expect("outline");
    (0..outline.len())
        .find(|&k| {
            let e = outline.edge(k);
            (e.a.y - y).abs() < 1e-9 && (e.b.y - y).abs() < 1e-9
        })
        .expect("an edge on that line") as u32
}

#[test]
fn explanation_of_a_refraction_matches_snell_and_fresnel() {
    let s = glass_block_with_ray(1.5, 30.0);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let root = t.rays.iter().position(|r| r.parent == NONE).expect("a launched ray");
    let x = explain_ray(&s, &t, root).expect("explained");
    assert!(x.complete);
    assert_eq!(x.steps[0].kind, EventKind::Launch);
    let step = &x.steps[1];
    assert_eq!(step.kind, EventKind::Refract);
    let surface = step.surface.as_ref().expect("a surface");
    assert_eq!(surface.object, "block");
    assert_eq!(surface.edge, edge_on(&s, surface.object_id, 0.0));
    assert!((step.n1 - 1.0).abs() < 1e-7 && (step.n2 - 1.5).abs() < 1e-7);
    assert!((step.incidence_deg.expect("angle") - 30.0).abs() < 1e-5);
    // Snell: asin(sin 30°/1.5) = 19.4712°, computed from Snell's law (Hecht, *Optics*, 5th
    // ed., 2017, §4.4, section number from memory).
    assert!((step.refraction_deg.expect("refracts") - 19.4712206).abs() < 1e-4);
    // Fresnel at 30°, air→1.5: Rs 0.05780, Rp 0.02525, computed from the Fresnel equations
    // in their sine and tangent form (Smith, *Modern Optical Engineering*, 4th ed. (2008),
    // eq. 11.1, from memory; also Hecht 2017 §4.6, from memory).
    let f = step.fresnel.expect("an interface");
    assert!((f.rs - 0.05780).abs() < 1e-5, "Rs {}", f.rs);
    assert!((f.rp - 0.02525).abs() < 1e-5, "Rp {}", f.rp);
    assert!(step.critical_deg.is_none(), "no critical angle going into the denser medium");
    // Unpolarised: half the power in s, half in p; the refracted ray keeps 1 − R of each.
    assert!((step.power_before_w - 1.0).abs() < 1e-6);
    assert!((step.power_after_w - (0.5 * (1.0 - f.rs) + 0.5 * (1.0 - f.rp))).abs() < 1e-6);
    assert!(step.statement().contains("19.5°"), "{}", step.statement());
    // Optical path: 10/cos 30° in air, then 20/cos θt in glass at n = 1.5.
    let bottom = &x.steps[2];
    assert_eq!(bottom.kind, EventKind::Refract);
    let air = 10.0 / 30f64.to_radians().cos();
    let glass = 20.0 / 19.4712206f64.to_radians().cos();
    assert!((bottom.optical_path_mm - (air + 1.5 * glass)).abs() < 1e-4, "OPL {}", bottom.optical_path_mm);
    assert!((bottom.path_mm - (air + glass)).abs() < 1e-4);
    // The table form names the surface and the numbers.
    let text = x.to_string();
    assert!(text.contains("block") && text.contains("0.05780"), "{text}");
}

#[test]
fn explanation_of_a_branch_starts_at_its_source() {
    let s = glass_block_with_ray(1.5, 30.0);
    let t = run(&s, &config(&s, TraceMode::Tree));
    // The branch reflected at the top face.
    let k = t
        .rays
        .iter()
        .position(|r| r.parent == t.rays[0].id && t.events_of(r).first().is_some_and(|e| e.point.y.abs() < 1e-9))
        .expect("a reflected branch at the top");
    let x = explain_ray(&s, &t, k).expect("explained");
    assert_eq!(x.steps[0].kind, EventKind::Launch, "the path starts at the source");
    assert_eq!(x.steps[1].kind, EventKind::Reflect);
    assert!((x.steps[1].power_before_w - 1.0).abs() < 1e-6);
    let f = x.steps[1].fresnel.expect("an interface");
    assert!((x.steps[1].power_after_w - 0.5 * (f.rs + f.rp)).abs() < 1e-6);
    assert_eq!(x.steps.last().map(|s| s.kind), Some(EventKind::Escape));
}

#[test]
fn explanation_of_a_total_internal_reflection() {
    // A ray inside glass (n = 1.5) meeting the top face at 45°.
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, -10.0, 100.0, 20.0), 1.5);
    beam(&mut s, (-5.0, -5.0), 0.0, 45.0, 1, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let x = explain_ray(&s, &t, 0).expect("explained");
    let tir = x.steps.iter().find(|s| s.kind == EventKind::Tir).expect("a TIR");
    // Critical angle asin(1/1.5) = 41.8103°, computed from Snell's law with θt = 90° (Hecht
    // 2017 §4.7, section number from memory).
    assert!((tir.critical_deg.expect("a critical angle") - 41.810315).abs() < 1e-4);
    assert!((tir.incidence_deg.expect("angle") - 45.0).abs() < 1e-5);
    assert!(tir.refraction_deg.is_none());
    let f = tir.fresnel.expect("an interface");
    assert!(f.is_tir() && f.rs == 1.0 && f.rp == 1.0);
    assert_eq!(tir.statement(), "total internal reflection: 45.0° exceeds the critical angle 41.8°");
    assert!((tir.power_after_w - tir.power_before_w).abs() < 1e-9);
}

#[test]
fn escape_cone_of_water_and_glass() {
    let mut s = scene();
    let water =
        s.add("water", ObjectKind::Solid(Solid { shape: rect(0.0, -10.0, 40.0, 20.0), material: "water".to_owned() }));
    let glass = solid(&mut s, "glass", rect(100.0, -10.0, 40.0, 20.0), 1.5);
    let top = edge_on(&s, water, 0.0);
    let c = escape_cone(&s, water, top, Vec2::new(3.0, 0.0), 587.5618).expect("a cone");
    // Water relative to air at the d line: 1.33299 (Daimon & Masumura 2007, Appl. Opt.
    // 46:3811, the library's source, as tabulated relative to air in Polyanskiy 2024,
    // "Refractiveindex.info database of optical constants", Sci. Data 11:94). Its critical
    // angle, asin(1/1.33299) = 48.607°, agrees with asin(1/1.333) = 48.6066° (computed).
    // Tolerance 5e-5 (the air index used for "relative to air" differs slightly between
    // sources; common practice).
    assert!((c.n_inside - 1.33299).abs() < 5e-5, "n water {}", c.n_inside);
    assert!((c.n_outside - 1.0).abs() < 1e-12);
    let half = c.half_angle_deg.expect("a cone");
    assert!((half - (1.0 / c.n_inside).asin().to_degrees()).abs() < 1e-12);
    // 5e-5 in n moves the angle by 0.004°.
    assert!((half - 48.6066).abs() < 5e-3, "water critical angle {half}");
    assert!((c.outward_normal - Vec2::new(0.0, 1.0)).norm() < 1e-12);
    // Glass n = 1.5: asin(1/1.5) = 41.8103° (computed); 2θc/π = 0.464559 of an in-plane
    // isotropic emitter's rays toward the face leave (derived: the rays toward a face span
    // π and those inside the escape cone 2θc, with dN/dθ constant).
    let top = edge_on(&s, glass, 0.0);
    let g = escape_cone(&s, glass, top, Vec2::new(100.0, 0.0), 587.5618).expect("a cone");
    assert!((g.half_angle_deg.expect("a cone") - 41.810315).abs() < 1e-5);
    assert!((g.fraction_2d() - 0.464559).abs() < 1e-6);
    assert!(g.to_string().contains("41.81"));
}

#[test]
fn escape_cone_from_a_bubble_lets_everything_out() {
    let mut s = scene();
    solid(&mut s, "glass", rect(0.0, 0.0, 40.0, 40.0), 1.5);
    let bubble = solid(&mut s, "bubble", rect(0.0, 0.0, 4.0, 4.0), 1.0);
    let c = escape_cone(&s, bubble, edge_on(&s, bubble, 2.0), Vec2::new(0.0, 2.0), 550.0).expect("a cone");
    assert!((c.n_outside - 1.5).abs() < 1e-12, "outside is the glass around the bubble");
    assert!(c.all_leave());
    assert!(c.to_string().contains("every direction"));
    assert!(escape_cone(&s, bubble, 99, Vec2::new(0.0, 2.0), 550.0).is_err());
    assert!(escape_cone(&s, 12345, 0, Vec2::new(0.0, 2.0), 550.0).is_err());
}

#[test]
fn escaped_power_is_put_on_the_edge_it_left_through() {
    let s = glass_block_with_ray(1.5, 30.0);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let by = escaped_by_edge(&t);
    assert!(!by.truncated);
    let sum: f64 = by.shares.iter().map(|x| x.w).sum();
    assert!((sum - t.budget.escaped).abs() < 1e-6 * t.budget.launched, "{sum} vs {}", t.budget.escaped);
    assert!((by.stored_w - sum).abs() < 1e-12);
    // Most leaves through the bottom face; the part reflected at the top never entered.
    let first = by.shares[0].surface.as_ref().expect("a surface");
    assert_eq!(first.object, "block");
    assert_eq!(first.edge, edge_on(&s, first.object_id, -20.0));
    let outside = by.shares.iter().find(|x| x.surface.is_none()).expect("reflected before entering");
    assert_eq!(outside.label(), "no surface");
    assert!(by.shares.windows(2).all(|w| w[0].w >= w[1].w));
}

#[test]
fn escaped_power_says_when_events_were_cut() {
    let mut s = glass_block_with_ray(1.5, 30.0);
    s.settings.max_stored_events = 2;
    let t = run(&s, &config(&s, TraceMode::Tree));
    assert!(escaped_by_edge(&t).truncated);
}

#[test]
fn irradiance_of_a_point_source_on_a_line() {
    // A 2D isotropic point source of power P spreads P/2π per radian. A line at distance h
    // sees the direction θ (from the foot of the perpendicular) at x = h·tan θ, so
    // dθ = h dx/(h² + x²) and the irradiance is E(x) = (P/2π)·h/(h² + x²) (derived here from
    // 2D geometry). Averaged over a bin [x₁, x₂] that is (P/2π)(atan(x₂/h) − atan(x₁/h))/(x₂ − x₁).
    // The source sits off-centre so a reversed position along the detector shows.
    let (h, x0, half) = (10.0, 3.0, 20.0);
    let mut s = scene();
    point(&mut s, (x0, 0.0), 0.0, 360.0, 360_000);
    let id = detector(&mut s, "line", (-half, h), (half, h));
    if let Some(ObjectKind::Detector(d)) = s.objects.iter_mut().find(|o| o.id == id).map(|o| &mut o.kind) {
        d.bins = 40;
    }
    s.settings.max_stored_events = 1000;
    let t = run(&s, &config(&s, TraceMode::Tree));
    let bins = irradiance(&t.detectors[0], 40);
    let width = 2.0 * half / 40.0;
    let mut peak = 0.0f64;
    for b in &bins {
        let x = b.centre - half - x0;
        let want = ((x + width / 2.0) / h).atan() - ((x - width / 2.0) / h).atan();
        let want = want / (2.0 * PI) / width;
        peak = peak.max(want);
        assert!((b.density - want).abs() < 2e-3 * want, "x {}: {} vs {want}", b.centre, b.density);
    }
    // The peak sits over the source: (P/2π)/h at x = x0.
    assert!((peak - 1.0 / (2.0 * PI * h)).abs() < 0.01 / (2.0 * PI * h));
    let u = uniformity(&bins).expect("light arrived");
    assert!(u.min_over_max > 0.0 && u.min_over_max < 1.0 && u.cv > 0.0);
}

#[test]
fn intensity_of_a_lambertian_emitter() {
    // A 2D Lambertian emitter of power P has radiant intensity I(θ) = I₀ cos θ over
    // −90°…90°; ∫I₀ cos θ dθ = 2I₀ = P gives I(θ) = (P/2) cos θ per radian (derived here). A
    // very long detector parallel to a short emitter sees every ray at its emission angle.
    // Averaged over a bin [θ₁, θ₂] in degrees: (P/2)(sin θ₂ − sin θ₁)/(θ₂ − θ₁).
    let mut s = scene();
    let mut emission = raydraft::scene::Emission::new(180_000, 1.0, 550.0);
    emission.polarization = Polarization::Unpolarized;
    s.add("die", ObjectKind::LambertianSource(LambertianSource { a: (-0.05, 0.0), b: (0.05, 0.0), emission }));
    detector(&mut s, "far", (-5000.0, 1.0), (5000.0, 1.0));
    s.settings.max_stored_events = 1000;
    let t = run(&s, &config(&s, TraceMode::Tree));
    let bins = intensity(&t.detectors[0], 90);
    let peak = 0.5 * 2f64.to_radians(); // (P/2)·sin(2°)/2° at the centre, about
    for b in &bins {
        let (a, c) = ((b.centre - 1.0).to_radians(), (b.centre + 1.0).to_radians());
        let want = 0.5 * (c.sin() - a.sin()) / 2.0;
        assert!((b.density - want).abs() < 5e-3 * peak, "θ {}: {} vs {want}", b.centre, b.density);
    }
}

#[test]
fn detector_angle_is_counter_clockwise_from_the_normal() {
    // A ray going down-right at 30° from the vertical arrives from up-left: seen from the
    // detector, its source lies 30° counter-clockwise of the upward normal (the convention on
    // `DetectorHit::angle_deg`).
    let mut s = scene();
    beam(&mut s, (-5.0, 5.0 * 3f64.sqrt()), 0.0, -60.0, 1, Polarization::Unpolarized);
    detector(&mut s, "floor", (-10.0, 0.0), (10.0, 0.0));
    let t = run(&s, &config(&s, TraceMode::Tree));
    let hit = t.detectors[0].hits[0];
    assert!((hit.angle_deg - 30.0).abs() < 1e-9, "{}", hit.angle_deg);
    assert!((hit.along - 10.0).abs() < 1e-9, "{}", hit.along);
}

/// A water tank (top face on y = 0) with a beam inside heading for the surface and a detector
/// over the whole surface.
fn water_tank() -> Scene {
    let mut s = scene();
    s.add("water", ObjectKind::Solid(Solid { shape: rect(0.0, -20.0, 100.0, 40.0), material: "water".to_owned() }));
    beam(&mut s, (0.0, -10.0), 0.0, 50.0, 1, Polarization::Unpolarized);
    s.add(
        "sky",
        ObjectKind::Detector(raydraft::scene::Detector {
            path: raydraft::scene::Path {
                points: vec![(-45.0, 0.001), (-45.0, 30.0), (45.0, 30.0), (45.0, 0.001)],
                bulges: Vec::new(),
            },
            bins: 50,
            angle_bins: 50,
        }),
    );
    s
}

#[test]
fn sweep_finds_the_critical_angle_of_water() {
    let s = water_tank();
    let param = ParamPath::parse(&s, "beam.direction_deg").expect("a parameter");
    let metric = Metric::parse(&s, "detected:sky").expect("a metric");
    let control = Control::new();
    // direction = 90° − angle from the normal; sweep the angle from 40° to 55°.
    let coarse = sweep(&s, &param, 50.0, 35.0, 31, &metric, &control).expect("sweeps");
    assert_eq!(coarse.len(), 31);
    assert!(coarse[0].1 > 0.9, "at 40° nearly all leaves: {}", coarse[0].1);
    let k = coarse.iter().position(|&(_, w)| w == 0.0).expect("light trapped beyond the critical angle");
    assert!(coarse[k..].iter().all(|&(_, w)| w == 0.0));
    assert!(coarse[..k].windows(2).all(|w| w[1].1 < w[0].1), "falls toward the critical angle");
    let fine = sweep(&s, &param, coarse[k - 1].0, coarse[k].0, 101, &metric, &control).expect("sweeps");
    let j = fine.iter().position(|&(_, w)| w == 0.0).expect("a zero");
    let found = 90.0 - 0.5 * (fine[j - 1].0 + fine[j].0);
    // Critical angle of water: asin(1/1.333) = 48.6066° (computed from Snell's law); the
    // library's water (Daimon & Masumura 2007, Appl. Opt. 46:3811) gives 48.607°.
    assert!((found - 48.6066).abs() < 0.01, "critical angle found at {found}°");
}

#[test]
fn sweep_finds_the_minimum_deviation_of_a_prism() {
    // 60° prism, n = 1.5. The ray starts 1 mm outside the middle of the left face, so turning
    // it keeps it on the face.
    let (n, apex, side) = (1.5, 60.0, 20.0);
    let mut s = scene();
    solid(&mut s, "prism", Shape::Prism { position: (0.0, 0.0), apex_deg: apex, side, rotation_deg: 0.0 }, n);
    let half = (apex / 2.0f64).to_radians();
    let left = Vec2::new(-side * half.sin(), 0.0);
    let top = Vec2::new(0.0, side * half.cos());
    let mid = (left + top) / 2.0;
    let face = (top - left).normalize();
    let outward = Vec2::new(-face.y, face.x);
    let start = mid + outward * 1.0;
    // The inward normal points at −30°; incidence θi means direction −30° + θi.
    beam(&mut s, (start.x, start.y), 0.0, 0.0, 1, Polarization::Unpolarized);
    s.settings.mode = TraceMode::Principal;
    let param = ParamPath::parse(&s, "beam.direction_deg").expect("a parameter");
    let metric = Metric::parse(&s, "deviation").expect("a metric");
    let control = Control::new();
    let least = |v: &[(f64, f64)]| v.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1)).expect("values");
    let coarse = sweep(&s, &param, 0.0, 40.0, 41, &metric, &control).expect("sweeps");
    let (d0, _) = least(&coarse);
    let fine = sweep(&s, &param, d0 - 1.0, d0 + 1.0, 401, &metric, &control).expect("sweeps");
    let (dir, dmin) = least(&fine);
    // D_min = 2·asin(n·sin(A/2)) − A = 37.180756° for n = 1.5, A = 60° (Hecht, Optics, 5th
    // ed. 2017, §5.5.1, eq. 5.54, from memory), reached at θi = (D_min + A)/2 = 48.5904°.
    let expected = 2.0 * (n * half.sin()).asin().to_degrees() - apex;
    assert!((dmin - expected).abs() < 1e-5, "minimum deviation {dmin} vs {expected}");
    assert!((dir + 30.0 - expected.midpoint(apex)).abs() < 0.01, "incidence at the minimum {}", dir + 30.0);
}

#[test]
fn sweep_finds_brewsters_angle() {
    // A p-polarised ray onto a thick plate (n = 1.5), its reflection caught by a detector.
    let mut s = scene();
    solid(&mut s, "plate", rect(0.0, -25.0, 200.0, 50.0), 1.5);
    beam(&mut s, (0.0, 1.0), 0.0, -40.0, 1, Polarization::P);
    detector(&mut s, "reflected", (-5.0, 10.0), (40.0, 10.0));
    // Keep even the weakest reflections near Brewster's angle.
    s.settings.threshold = 1e-14;
    let param = ParamPath::parse(&s, "beam.direction_deg").expect("a parameter");
    let metric = Metric::parse(&s, "detected:reflected").expect("a metric");
    let control = Control::new();
    let least = |v: &[(f64, f64)]| v.iter().copied().min_by(|a, b| a.1.total_cmp(&b.1)).expect("values");
    // direction = −90° + θi; θi from 45° to 65°.
    let coarse = sweep(&s, &param, -45.0, -25.0, 41, &metric, &control).expect("sweeps");
    assert!(coarse.iter().all(|&(_, w)| w.is_finite()));
    let (d0, _) = least(&coarse);
    let fine = sweep(&s, &param, d0 - 0.5, d0 + 0.5, 201, &metric, &control).expect("sweeps");
    let (dir, rmin) = least(&fine);
    // Brewster's angle atan(1.5) = 56.3099° (computed from tan θB = n₂/n₁; IUPAC Compendium
    // of Chemical Terminology, the "Gold Book", entry "Brewster angle"), where Rp = 0.
    assert!((dir + 90.0 - 56.309932).abs() < 0.006, "Brewster at {}", dir + 90.0);
    assert!(rmin < 1e-6, "reflectance at the minimum {rmin}");
}

/// A scene with one object of each kind a path may name.
fn rich_scene() -> Scene {
    let mut s = scene();
    s.materials.push(raydraft::optics::Material::constant("glass", 1.5));
    s.add(
        "guide",
        ObjectKind::Solid(Solid {
            shape: Shape::NotchedPlate {
                position: (0.0, 0.0),
                length: 100.0,
                thickness: 3.0,
                notches: 10,
                notch_depth: 0.2,
                notch_angle_deg: 90.0,
                notch_start: 10.0,
                notch_end: 90.0,
                density_ratio: 1.0,
                rotation_deg: 0.0,
            },
            material: "glass".to_owned(),
        }),
    );
    point(&mut s, (-5.0, 1.5), -20.0, 20.0, 10);
    beam(&mut s, (0.0, 10.0), 2.0, -90.0, 10, Polarization::Unpolarized);
    detector(&mut s, "top", (0.0, 5.0), (100.0, 5.0));
    s
}

#[test]
fn parameters_are_found_by_name_or_id_through_any_field() {
    let s = rich_scene();
    let get = |text: &str| ParamPath::parse(&s, text).and_then(|p| p.get(&s));
    assert_eq!(get("beam.direction_deg"), Ok(-90.0));
    assert_eq!(get("guide.shape.notch_depth"), Ok(0.2));
    assert_eq!(get("lamp.emission.spectrum[0].nm"), Ok(587.5618));
    assert_eq!(get("lamp.position.x"), Ok(-5.0));
    assert_eq!(get("lamp.position[1]"), Ok(1.5));
    assert_eq!(get("settings.threshold"), Ok(1e-4));
    assert_eq!(get("materials[glass].dispersion.n"), Ok(1.5));
    let id = s.object_by_name("beam").expect("beam").id;
    assert_eq!(get(&format!("{id}.width")), Ok(2.0));

    let p = ParamPath::parse(&s, "guide.shape.notch_depth").expect("a parameter");
    let changed = p.set(&s, 0.35).expect("sets");
    match &changed.object_by_name("guide").map(|o| &o.kind) {
        Some(ObjectKind::Solid(Solid { shape: Shape::NotchedPlate { notch_depth, .. }, .. })) => {
            assert_eq!(*notch_depth, 0.35);
        }
        other => panic!("{other:?}"),
    }
    // Whole-number fields stay whole.
    let rays = ParamPath::parse(&s, "lamp.emission.rays").expect("a parameter");
    assert_eq!(rays.get(&rays.set(&s, 41.6).expect("sets")), Ok(42.0));
    assert!(rays.set(&s, -3.0).is_err(), "a count cannot be negative");
    let m = ParamPath::parse(&s, "materials[glass].dispersion.n").expect("a parameter");
    assert_eq!(m.set(&s, 1.6).expect("sets").material("glass").map(|g| g.index_rel_air(550.0)), Some(1.6));
}

#[test]
fn unknown_names_and_fields_list_what_exists() {
    let s = rich_scene();
    let err = |text: &str| ParamPath::parse(&s, text).expect_err("an error").to_string();
    let e = err("lens.width");
    assert!(e.contains("guide") && e.contains("beam") && e.contains("settings"), "{e}");
    let e = err("beam.angle");
    assert!(e.contains("direction_deg") && e.contains("width"), "{e}");
    let e = err("lamp.emission.spectrum[3].nm");
    assert!(e.contains("1 entries"), "{e}");
    let e = err("beam.emission.polarization");
    assert!(e.contains("not a number"), "{e}");
    let e = err("materials[steel].dispersion.n");
    assert!(e.contains("glass"), "{e}");
    let e = Metric::parse(&s, "detected:bottom").expect_err("an error").to_string();
    assert!(e.contains("top"), "{e}");
    let e = Metric::parse(&s, "brightness").expect_err("an error").to_string();
    assert!(e.contains("uniformity:NAME"), "{e}");
    assert!(Metric::parse(&s, "absorbed:guide").is_ok());
}

#[test]
fn a_cancelled_sweep_returns_what_it_finished() {
    let s = rich_scene();
    let p = ParamPath::parse(&s, "beam.width").expect("a parameter");
    let m = Metric::parse(&s, "escaped").expect("a metric");
    let control = Control::new();
    control.cancel();
    assert!(sweep(&s, &p, 1.0, 2.0, 5, &m, &control).expect("runs").is_empty());
    assert!(sweep(&s, &p, 1.0, 2.0, 0, &m, &Control::new()).is_err());
}

#[test]
fn svg_annotations_show_the_angles_and_the_critical_angle() {
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, -10.0, 100.0, 20.0), 1.5);
    beam(&mut s, (-5.0, -5.0), 0.0, 45.0, 1, Polarization::Unpolarized);
    let t = run(&s, &config(&s, TraceMode::Tree));
    let options = raydraft::export::svg::SvgOptions { annotate_ray: Some(0), ..Default::default() };
    let svg = raydraft::export::svg::render(&s, &t, &options);
    let doc = roxmltree::Document::parse(&svg).expect("well-formed SVG");
    let group = doc.descendants().find(|n| n.attribute("id") == Some("annotations")).expect("an annotation group");
    let texts: Vec<&str> = group.descendants().filter(|n| n.has_tag_name("text")).filter_map(|n| n.text()).collect();
    assert!(texts.iter().any(|t| t.contains("45.0°")), "{texts:?}");
    assert!(texts.iter().any(|t| t.contains("TIR: θc = 41.8°")), "{texts:?}");
    assert!(group.descendants().any(|n| n.has_tag_name("line")), "a normal is drawn");
    // Without the option nothing is added.
    let plain = raydraft::export::svg::render(&s, &t, &raydraft::export::svg::SvgOptions::default());
    assert!(!plain.contains("annotations"));
}

#[test]
fn json_analysis_lists_escaped_power_and_uniformity() {
    let mut s = glass_block_with_ray(1.5, 30.0);
    detector(&mut s, "floor", (-50.0, -30.0), (50.0, -30.0));
    let t = run(&s, &config(&s, TraceMode::Tree));
    let v = raydraft::export::json::analysis(&s, &t);
    let shares = v["escaped_by_edge"]["shares"].as_array().expect("a list");
    assert!(!shares.is_empty());
    assert_eq!(v["escaped_by_edge"]["truncated"], false);
    assert!(v["uniformity"]["floor"]["cv"].as_f64().is_some_and(|cv| cv > 0.0));
}

#[test]
fn a_value_that_breaks_the_scene_is_refused() {
    let s = rich_scene();
    let p = ParamPath::parse(&s, "beam.width").expect("a parameter");
    let m = Metric::parse(&s, "escaped").expect("a metric");
    let e = sweep(&s, &p, 1.0, -1.0, 3, &m, &Control::new()).expect_err("refused").to_string();
    assert!(e.contains("beam.width = -1 makes the scene invalid"), "{e}");
}

fn raydraft(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_raydraft"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run raydraft")
}

#[test]
fn command_line_sweep_prints_csv_and_refuses_unknown_names() {
    let out = raydraft(&[
        "sweep",
        "scenes/prism_fold.ron",
        "--param",
        "beam.direction_deg",
        "--from",
        "-6",
        "--to",
        "6",
        "--steps",
        "4",
        "--metric",
        "escaped",
    ]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let csv = String::from_utf8_lossy(&out.stdout);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "value,metric");
    assert_eq!(lines.len(), 5);
    assert!(lines[1].starts_with("-6,"));
    assert!(out.stderr.is_empty(), "no progress line when stderr is not a terminal");

    let out = raydraft(&[
        "sweep",
        "scenes/prism_fold.ron",
        "--param",
        "beam.angle",
        "--from",
        "0",
        "--to",
        "1",
        "--steps",
        "2",
        "--metric",
        "escaped",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("direction_deg"));
}

#[test]
fn command_line_explains_and_annotates_a_ray() {
    let dir = tempfile::tempdir().expect("temp dir");
    let svg = dir.path().join("ray.svg");
    let out = raydraft(&[
        "trace",
        "scenes/prism_fold.ron",
        "--ray",
        "0",
        "--svg",
        svg.to_str().expect("path"),
        "--annotate-ray",
        "0",
    ]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("total internal reflection"), "{text}");
    assert!(std::fs::read_to_string(&svg).expect("svg").contains(r#"id="annotations""#));
    let out = raydraft(&["trace", "scenes/prism_fold.ron", "--ray", "100000"]);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn a_sweep_of_source_power_matches_a_fresh_trace() {
    // The compiled scene is reused when only a source's power changes; the result must be
    // exactly what a fresh trace of the changed scene gives.
    let s = rich_scene();
    let p = ParamPath::parse(&s, "lamp.emission.power_w").expect("a parameter");
    assert!(p.leaves_compiled_scene(&s));
    assert!(!ParamPath::parse(&s, "beam.direction_deg").expect("a parameter").leaves_compiled_scene(&s));
    let m = Metric::parse(&s, "escaped").expect("a metric");
    let rows = sweep(&s, &p, 1.0, 3.0, 3, &m, &Control::new()).expect("sweeps");
    let fresh = {
        let changed = p.set(&s, 3.0).expect("sets");
        run(&changed, &config(&changed, changed.settings.mode)).budget.escaped
    };
    assert!((rows[2].1 - fresh).abs() <= 1e-12 * fresh.abs().max(1.0), "{} vs {fresh}", rows[2].1);
}

#[test]
fn optical_path_sums_index_times_length_through_nested_solids() {
    use raydraft::analysis::{angle_deg, optical_path};
    // A 20 × 10 mm slab of n = 1.5 with a 4 × 4 mm insert of n = 2.0 inside it. Along the
    // line y = 0 from x = −5 to 25 the optical path length is Σ nᵢ·lᵢ (its definition: Born &
    // Wolf 1999, Principles of Optics, 7th ed., §3.3.1, from memory):
    // 5·1 + 8·1.5 + 4·2 + 8·1.5 + 5·1 = 42 mm.
    let mut s = scene();
    solid(&mut s, "slab", rect(10.0, 0.0, 20.0, 10.0), 1.5);
    solid(&mut s, "insert", rect(10.0, 0.0, 4.0, 4.0), 2.0);
    let compiled = raydraft::trace::Compiled::new(&s);
    let o = optical_path(&s, &compiled, Vec2::new(-5.0, 0.0), Vec2::new(25.0, 0.0), 550.0).expect("a path");
    assert!((o.length_mm - 30.0).abs() < 1e-12);
    assert!((o.optical_mm - 42.0).abs() < 1e-9, "OPL {}", o.optical_mm);
    let n: Vec<f64> = o.pieces.iter().map(|p| p.n).collect();
    assert_eq!(n.len(), 5, "{o}");
    for (got, want) in n.iter().zip([1.0, 1.5, 2.0, 1.5, 1.0]) {
        assert!((got - want).abs() < 1e-12, "{o}");
    }
    // Starting inside the insert and going up: 2 mm of n = 2, 3 mm of n = 1.5, 5 mm of air.
    let o = optical_path(&s, &compiled, Vec2::new(10.0, 0.0), Vec2::new(10.0, 10.0), 550.0).expect("a path");
    assert!((o.optical_mm - (2.0 * 2.0 + 3.0 * 1.5 + 5.0)).abs() < 1e-9, "{o}");
    // The angle between two arms, in degrees, whichever way round.
    let c = Vec2::new(1.0, 1.0);
    assert!((angle_deg(c, Vec2::new(3.0, 1.0), Vec2::new(3.0, 3.0)) - 45.0).abs() < 1e-12);
    assert!((angle_deg(c, Vec2::new(3.0, 3.0), Vec2::new(3.0, 1.0)) - 45.0).abs() < 1e-12);
    assert!((angle_deg(c, Vec2::new(2.0, 1.0), Vec2::new(-5.0, 1.0)) - 180.0).abs() < 1e-12);
}
