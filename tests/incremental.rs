//! A compiled scene brought up to date edit by edit (`Compiled::update`) must trace exactly
//! like one compiled afresh: a fixed-seed loop over random scenes and random edits (moved
//! vertices, sources, materials, thin elements, settings, solids added and removed), each
//! applied directly to a copy of the scene.

mod common;

use common::*;
use raydraft::rng::Rng;
use raydraft::scene::{Mirror, ObjectKind, Path, Scene, Shape, TraceMode};
use raydraft::trace::{BvhUpdate, Compiled, Control, Trace, TraceConfig, trace_compiled};

fn random_solid(rng: &mut Rng, s: &mut Scene) {
    let c = (rng.range(-20.0, 20.0), rng.range(-20.0, 20.0));
    let n = rng.range(1.2, 2.0);
    let shape = match rng.below(4) {
        0 => rect(c.0, c.1, rng.range(2.0, 12.0), rng.range(2.0, 12.0)),
        1 => Shape::Ball { position: c, radius: rng.range(1.0, 6.0) },
        2 => Shape::Prism {
            position: c,
            apex_deg: rng.range(30.0, 100.0),
            side: rng.range(3.0, 10.0),
            rotation_deg: rng.range(0.0, 360.0),
        },
        _ => Shape::NotchedPlate {
            position: c,
            length: 12.0,
            thickness: 2.0,
            notches: 2 + rng.below(10) as u32,
            notch_depth: 0.1,
            notch_angle_deg: 90.0,
            notch_start: 1.0,
            notch_end: 11.0,
            density_ratio: 1.0,
            rotation_deg: rng.range(0.0, 360.0),
        },
    };
    solid(s, "solid", shape, n);
}

fn random_scene(rng: &mut Rng) -> Scene {
    let mut s = scene();
    for _ in 0..=rng.below(4) {
        random_solid(rng, &mut s);
    }
    // A solid nested in the first one, sometimes.
    if rng.uniform() < 0.4
        && let Some(ObjectKind::Solid(first)) = s.objects.first().map(|o| o.kind.clone())
        && let Ok(o) = first.shape.outline()
        && let Some(p) = o.interior_point()
    {
        solid(&mut s, "bubble", Shape::Ball { position: (p.x, p.y), radius: 0.05 }, 1.0);
    }
    s.add(
        "mirror",
        ObjectKind::Mirror(Mirror {
            path: Path::segment((-25.0, -25.0), (25.0, -25.0)),
            reflectance: 0.9,
            one_sided: false,
        }),
    );
    detector(&mut s, "det", (-25.0, 25.0), (25.0, 25.0));
    point(&mut s, (rng.range(-22.0, 22.0), rng.range(-22.0, 22.0)), 0.0, 360.0, 16);
    s.settings.max_depth = 40;
    s.settings.margin = 5.0;
    s
}

/// One random edit, applied in place.
fn edit(rng: &mut Rng, s: &mut Scene) -> &'static str {
    let solids: Vec<usize> =
        s.objects.iter().enumerate().filter(|(_, o)| matches!(o.kind, ObjectKind::Solid(_))).map(|(i, _)| i).collect();
    match rng.below(8) {
        0 | 1 if !solids.is_empty() => {
            // Move one vertex (turning a primitive into a free outline first) or all of them.
            let i = solids[rng.below(solids.len())];
            let ObjectKind::Solid(solid) = &mut s.objects[i].kind else { return "none" };
            let Ok(o) = solid.shape.outline() else { return "none" };
            let mut points: Vec<(f64, f64)> = o.vertices.iter().map(|v| (v.x, v.y)).collect();
            let (dx, dy) = (rng.range(-0.3, 0.3), rng.range(-0.3, 0.3));
            if rng.uniform() < 0.5 {
                let k = rng.below(points.len());
                points[k] = (points[k].0 + dx, points[k].1 + dy);
            } else {
                for p in &mut points {
                    *p = (p.0 + dx, p.1 + dy);
                }
            }
            solid.shape = Shape::Outline { points, bulges: o.bulges.clone() };
            "move vertices"
        }
        2 => {
            for o in &mut s.objects {
                if let ObjectKind::PointSource(p) = &mut o.kind {
                    p.position = (p.position.0 + rng.range(-2.0, 2.0), p.position.1 + rng.range(-2.0, 2.0));
                    p.start_deg = rng.range(-30.0, 30.0);
                }
            }
            "source"
        }
        3 if !s.materials.is_empty() => {
            let k = rng.below(s.materials.len());
            s.materials[k].dispersion = raydraft::optics::material::Dispersion::Constant { n: rng.range(1.1, 2.2) };
            s.materials[k].absorption_per_mm = rng.range(0.0, 0.05);
            "material"
        }
        4 => {
            random_solid(rng, s);
            "add solid"
        }
        5 if !solids.is_empty() => {
            s.objects.remove(solids[rng.below(solids.len())]);
            "remove solid"
        }
        6 => {
            for o in &mut s.objects {
                match &mut o.kind {
                    ObjectKind::Mirror(m) => m.reflectance = rng.range(0.5, 1.0),
                    ObjectKind::Detector(d) => d.path.points[0].1 = rng.range(20.0, 28.0),
                    _ => {}
                }
            }
            "thin elements"
        }
        _ => {
            s.settings.threshold = rng.range(1e-5, 1e-3);
            "settings"
        }
    }
}

fn trace_of(s: &Scene, c: &Compiled) -> Trace {
    let mut cfg = TraceConfig::from_scene(s);
    cfg.settings.mode = TraceMode::Tree;
    trace_compiled(s, c, &cfg, &Control::new())
}

fn assert_same(a: &Trace, b: &Trace, what: &str) {
    assert_eq!(a.warnings, b.warnings, "{what}: warnings");
    assert_eq!(a.budget, b.budget, "{what}: budget");
    assert_eq!(a.rays, b.rays, "{what}: rays");
    assert_eq!(a.events, b.events, "{what}: events");
    assert_eq!(a.detectors, b.detectors, "{what}: detectors");
    assert_eq!((a.n_rays, a.n_events), (b.n_rays, b.n_events), "{what}: counts");
}

#[test]
fn updated_compile_traces_like_a_fresh_one() {
    let mut rng = Rng::new(0x005E_ED0F_ED17);
    let mut edits = 0;
    for _ in 0..40 {
        let mut s = random_scene(&mut rng);
        let mut compiled = Compiled::new(&s);
        for _ in 0..8 {
            let what = edit(&mut rng, &mut s);
            compiled.update(&s);
            let fresh = Compiled::new(&s);
            assert_eq!(compiled.warnings(), fresh.warnings(), "{what}");
            assert_same(&trace_of(&s, &compiled), &trace_of(&s, &fresh), what);
            edits += 1;
        }
    }
    assert_eq!(edits, 320);
}

#[test]
fn an_update_redoes_only_what_changed() {
    let mut s = scene();
    for k in 0..30 {
        solid(&mut s, &format!("block {k}"), rect(3.0 * f64::from(k), 0.0, 2.0, 2.0), 1.5);
    }
    let lamp = point(&mut s, (-5.0, 0.0), -10.0, 10.0, 8);
    let mut c = Compiled::new(&s);

    // A source moved: nothing geometric is redone.
    if let Some(ObjectKind::PointSource(p)) = s.objects.iter_mut().find(|o| o.id == lamp).map(|o| &mut o.kind) {
        p.position.1 = 0.3;
    }
    let r = c.update(&s);
    assert_eq!((r.outlines_checked, r.pairs_checked, r.bvh, r.nesting), (0, 0, BvhUpdate::Kept, false));

    // One vertex of one block moved: that outline is checked again, with its neighbours only,
    // and the BVH is refitted.
    let ObjectKind::Solid(block) = &mut s.objects[4].kind else { panic!("a solid") };
    let o = block.shape.outline().expect("outline");
    let mut points: Vec<(f64, f64)> = o.vertices.iter().map(|v| (v.x, v.y)).collect();
    points[0].0 -= 0.2;
    block.shape = Shape::Outline { points, bulges: Vec::new() };
    let r = c.update(&s);
    assert_eq!(r.outlines_checked, 1);
    assert!(r.pairs_checked <= 2, "{r:?}");
    assert_eq!(r.bvh, BvhUpdate::Refitted);
    assert_same(&trace_of(&s, &c), &trace_of(&s, &Compiled::new(&s)), "moved vertex");

    // A block removed: the BVH is rebuilt.
    s.objects.remove(7);
    let r = c.update(&s);
    assert_eq!((r.outlines_checked, r.bvh), (0, BvhUpdate::Rebuilt));
}

#[test]
fn a_background_job_traces_a_shared_compiled_scene() {
    let mut s = scene();
    solid(&mut s, "block", rect(0.0, 0.0, 10.0, 4.0), 1.5);
    point(&mut s, (-8.0, 0.5), -20.0, 20.0, 16);
    let mut compiled = std::sync::Arc::new(Compiled::new(&s));
    let mut cfg = TraceConfig::from_scene(&s);
    cfg.threads = Some(1);
    let held = raydraft::trace::TraceJob::start_compiled(s.clone(), std::sync::Arc::clone(&compiled), cfg.clone());
    // Edit while the job may still hold the compiled scene: `make_mut` copies it then.
    let ObjectKind::Solid(block) = &mut s.objects[0].kind else { panic!("a solid") };
    block.shape = rect(0.0, 0.0, 10.0, 5.0);
    std::sync::Arc::make_mut(&mut compiled).update(&s);
    let job = raydraft::trace::TraceJob::start_compiled(s.clone(), std::sync::Arc::clone(&compiled), cfg.clone());
    let t = job.wait().expect("trace");
    assert_same(&t, &trace_compiled(&s, &Compiled::new(&s), &cfg, &Control::new()), "background job");
    assert!(held.wait().is_some());
}
