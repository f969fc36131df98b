//! The editing layer: random edit sequences on random scenes. Applying the inverses (or
//! undoing through the history) gives back exactly the scene before; redoing gives exactly
//! the edited one; ids stay unique and are never given twice. Fixed seeds; set
//! `RAYDRAFT_FUZZ_SEED=N` to explore others.

use std::collections::HashSet;

use raydraft::optics::Material;
use raydraft::rng::Rng;
use raydraft::scene::{
    Absorber, BeamSource, Detector, Edit, Emission, History, LambertianSource, Mirror, Object, ObjectKind, Path,
    PointSource, Scene, Shape, Solid, TraceMode, apply,
};

fn seed() -> u64 {
    std::env::var("RAYDRAFT_FUZZ_SEED").ok().and_then(|s| s.parse().ok()).unwrap_or(20_261_202)
}

fn point(rng: &mut Rng) -> (f64, f64) {
    (rng.range(-50.0, 50.0), rng.range(-50.0, 50.0))
}

fn random_shape(rng: &mut Rng) -> Shape {
    let position = point(rng);
    let rotation_deg = rng.range(-180.0, 180.0);
    match rng.below(8) {
        0 => Shape::Rectangle { position, width: rng.range(1.0, 10.0), height: rng.range(1.0, 10.0), rotation_deg },
        1 => Shape::Prism { position, apex_deg: rng.range(20.0, 120.0), side: rng.range(2.0, 20.0), rotation_deg },
        2 => Shape::Lens {
            position,
            diameter: 10.0,
            thickness: rng.range(2.0, 5.0),
            r1: rng.range(10.0, 40.0),
            r2: -rng.range(10.0, 40.0),
            rotation_deg,
        },
        3 => Shape::Ball { position, radius: rng.range(0.5, 8.0) },
        4 => Shape::Wedge {
            position,
            length: rng.range(2.0, 10.0),
            thickness_start: rng.range(0.5, 3.0),
            thickness_end: rng.range(0.5, 3.0),
            rotation_deg,
        },
        5 => Shape::Pipe {
            position,
            width: 1.0,
            length_in: rng.range(1.0, 5.0),
            bend_radius: rng.range(2.0, 5.0),
            bend_deg: rng.range(-90.0, 90.0),
            length_out: rng.range(1.0, 5.0),
            rotation_deg,
        },
        6 => Shape::NotchedPlate {
            position,
            length: 20.0,
            thickness: 2.0,
            notches: 1 + rng.below(8) as u32,
            notch_depth: 0.2,
            notch_angle_deg: 90.0,
            notch_start: 2.0,
            notch_end: 18.0,
            density_ratio: rng.range(1.0, 3.0),
            rotation_deg,
        },
        _ => {
            let n = 3 + rng.below(5);
            let (cx, cy) = position;
            let points = (0..n)
                .map(|k| {
                    let a = std::f64::consts::TAU * k as f64 / n as f64;
                    let r = rng.range(2.0, 6.0);
                    (cx + r * a.cos(), cy + r * a.sin())
                })
                .collect();
            let bulges = if rng.below(2) == 0 { Vec::new() } else { (0..n).map(|_| rng.range(-0.3, 0.3)).collect() };
            Shape::Outline { points, bulges }
        }
    }
}

fn random_path(rng: &mut Rng) -> Path {
    let n = 2 + rng.below(3);
    let points = (0..n).map(|_| point(rng)).collect();
    let bulges = if rng.below(2) == 0 { Vec::new() } else { (0..n - 1).map(|_| rng.range(-0.5, 0.5)).collect() };
    Path { points, bulges }
}

fn random_kind(rng: &mut Rng) -> ObjectKind {
    let emission = Emission::new(5, 1.0, 550.0);
    match rng.below(8) {
        0..=2 => ObjectKind::Solid(Solid { shape: random_shape(rng), material: "pmma".to_owned() }),
        3 => ObjectKind::Mirror(Mirror { path: random_path(rng), reflectance: 0.9, one_sided: rng.below(2) == 0 }),
        4 => ObjectKind::Detector(Detector { path: random_path(rng), bins: 10, angle_bins: 10 }),
        5 => ObjectKind::Absorber(Absorber { path: random_path(rng) }),
        6 => {
            let s = rng.range(-180.0, 180.0);
            ObjectKind::PointSource(PointSource {
                position: point(rng),
                start_deg: s,
                end_deg: s + rng.range(1.0, 90.0),
                emission,
            })
        }
        _ => {
            if rng.below(2) == 0 {
                ObjectKind::BeamSource(BeamSource {
                    center: point(rng),
                    width: rng.range(0.0, 5.0),
                    direction_deg: rng.range(-180.0, 180.0),
                    emission,
                })
            } else {
                ObjectKind::LambertianSource(LambertianSource { a: point(rng), b: point(rng), emission })
            }
        }
    }
}

fn random_scene(rng: &mut Rng) -> Scene {
    let mut scene = Scene::new("random");
    scene.materials.push(Material::constant("glass-a", 1.52));
    for k in 0..=rng.below(8) {
        let kind = random_kind(rng);
        scene.add(&format!("object {k}"), kind);
    }
    scene
}

/// An id in the scene, or now and then one that is not, to exercise refused edits.
fn some_id(rng: &mut Rng, scene: &Scene) -> u64 {
    if scene.objects.is_empty() || rng.below(20) == 0 {
        return 1_000 + rng.below(10) as u64;
    }
    scene.objects[rng.below(scene.objects.len())].id
}

/// A random edit of every kind; some of them cannot apply (wrong vertex, not a free outline).
fn random_edit(rng: &mut Rng, scene: &Scene) -> Edit {
    let id = some_id(rng, scene);
    let small = |rng: &mut Rng| rng.below(8);
    match rng.below(22) {
        0 => Edit::add_new(scene, "new", random_kind(rng)),
        1 => Edit::RemoveObject { id },
        2 => Edit::Rename { id, name: format!("name {}", rng.below(100)) },
        3 => Edit::Reorder { id, to_index: small(rng) },
        4 => {
            let mut object = Object { id, name: "replaced".to_owned(), kind: random_kind(rng) };
            object.id = id;
            Edit::ReplaceObject { id, object }
        }
        5 | 6 => Edit::MoveVertex { id, vertex: small(rng), to: point(rng) },
        7 => Edit::InsertVertex { id, edge: small(rng), point: point(rng) },
        8 => Edit::DeleteVertex { id, vertex: small(rng) },
        9 => Edit::SetBulge { id, edge: small(rng), bulge: rng.range(-1.5, 1.5) },
        10 => {
            let ids = (0..=rng.below(3)).map(|_| some_id(rng, scene)).collect();
            Edit::Translate { ids, by: point(rng) }
        }
        11 => {
            let ids = (0..=rng.below(3)).map(|_| some_id(rng, scene)).collect();
            Edit::Rotate { ids, pivot: point(rng), angle_deg: rng.range(-360.0, 360.0) }
        }
        12 => {
            let ids = (0..=rng.below(3)).map(|_| some_id(rng, scene)).collect();
            Edit::Mirror { ids, point: point(rng), direction_deg: rng.range(-180.0, 180.0) }
        }
        13 => Edit::SetShape { id, shape: random_shape(rng) },
        14 => Edit::ToFreeOutline { id },
        15 => Edit::SetMaterial { id, material: if rng.below(2) == 0 { "water" } else { "glass-a" }.to_owned() },
        16 => {
            let mut settings = scene.settings.clone();
            settings.mode = [TraceMode::Principal, TraceMode::Tree, TraceMode::MonteCarlo][rng.below(3)];
            settings.threshold = rng.range(0.0, 0.01);
            settings.max_depth = 1 + rng.below(300) as u32;
            Edit::SetSettings(settings)
        }
        17 => Edit::SetAmbient(if rng.below(2) == 0 { "water" } else { "air" }.to_owned()),
        18 => Edit::SetTitle(format!("title {}", rng.below(10))),
        19 => Edit::InsertMaterial {
            index: small(rng),
            material: Material::constant(&format!("glass-{}", rng.below(4)), rng.range(1.3, 1.9)),
        },
        20 => Edit::SetMaterialDef {
            name: format!("glass-{}", ["a", "0", "1"][rng.below(3)]),
            material: Material::constant(&format!("glass-{}", ["a", "b", "2"][rng.below(3)]), rng.range(1.3, 1.9)),
        },
        _ => {
            if rng.below(2) == 0 {
                Edit::RemoveMaterial { name: format!("glass-{}", ["a", "0", "1"][rng.below(3)]) }
            } else {
                let n = 2 + rng.below(3);
                Edit::Batch((0..n).map(|_| random_edit(rng, scene)).collect())
            }
        }
    }
}

#[test]
fn inverses_applied_newest_first_give_back_the_exact_scene() {
    let mut rng = Rng::new(seed());
    let (mut applied, mut refused) = (0, 0);
    for case in 0..400 {
        let original = random_scene(&mut rng);
        let mut scene = original.clone();
        let mut inverses = Vec::new();
        let mut states = vec![scene.clone()];
        for _ in 0..=rng.below(12) {
            let edit = random_edit(&mut rng, &scene);
            let before = scene.clone();
            let revision = scene.revision;
            match apply(&mut scene, edit.clone()) {
                Ok(inv) => {
                    applied += 1;
                    assert_eq!(scene.revision, revision + 1);
                    inverses.push(inv);
                    states.push(scene.clone());
                }
                Err(_) => {
                    refused += 1;
                    assert_eq!(scene, before, "case {case}: a refused edit changed the scene: {edit:?}");
                    assert_eq!(scene.revision, revision);
                }
            }
        }
        // Undo one by one, checking every intermediate state exactly.
        states.pop();
        while let Some(inv) = inverses.pop() {
            apply(&mut scene, inv).unwrap_or_else(|e| panic!("case {case}: an inverse failed: {e}"));
            let expected = states.pop().expect("a state per inverse");
            assert!(scene.same_content(&expected), "case {case}");
        }
        assert!(scene.same_content(&original), "case {case}");
    }
    // The generator exercises both outcomes.
    assert!(applied > 1000 && refused > 100, "applied {applied}, refused {refused}");
}

#[test]
fn undo_all_then_redo_all_through_the_history() {
    let mut rng = Rng::new(seed() ^ 0x5eed);
    for case in 0..300 {
        let original = random_scene(&mut rng);
        let mut scene = original.clone();
        let mut history = History::new(1_000);
        let mut gesture = None;
        for _ in 0..=rng.below(15) {
            let edit = random_edit(&mut rng, &scene);
            // Now and then a run of edits under one gesture, as a drag makes.
            if rng.below(4) == 0 {
                gesture = Some(history.begin_gesture());
            } else if rng.below(3) == 0 {
                gesture = None;
            }
            let _ = match gesture {
                Some(g) => history.apply_in(&mut scene, edit, g),
                None => history.apply(&mut scene, edit),
            };
        }
        let edited = scene.clone();
        let steps = history.len();
        while history.undo(&mut scene) {}
        assert!(scene.same_content(&original), "case {case}: undo all");
        let mut redone = 0;
        while history.redo(&mut scene) {
            redone += 1;
        }
        assert_eq!(redone, steps, "case {case}");
        assert!(scene.same_content(&edited), "case {case}: redo all");
    }
}

#[test]
fn ids_stay_unique_and_are_never_given_twice() {
    let mut rng = Rng::new(seed() ^ 0x1d5);
    let mut scene = random_scene(&mut rng);
    let mut ever: HashSet<u64> = scene.objects.iter().map(|o| o.id).collect();
    let mut history = History::default();
    for step in 0..5_000 {
        match rng.below(5) {
            0 | 1 => {
                let edit = Edit::add_new(&scene, "n", random_kind(&mut rng));
                let Edit::AddObject { object, .. } = &edit else { panic!("an add") };
                assert!(!ever.contains(&object.id), "step {step}: id {} given twice", object.id);
                ever.insert(object.id);
                history.apply(&mut scene, edit).expect("a fresh id always applies");
            }
            2 | 3 if !scene.objects.is_empty() => {
                // Deleting the newest object is the case that used to hand its id out again.
                let k = if rng.below(2) == 0 { scene.objects.len() - 1 } else { rng.below(scene.objects.len()) };
                let id = scene.objects[k].id;
                history.apply(&mut scene, Edit::RemoveObject { id }).expect("removes");
            }
            _ => {
                if rng.below(2) == 0 {
                    history.undo(&mut scene);
                } else {
                    history.redo(&mut scene);
                }
            }
        }
        let ids: HashSet<u64> = scene.objects.iter().map(|o| o.id).collect();
        assert_eq!(ids.len(), scene.objects.len(), "step {step}: ids repeat");
        assert!(scene.objects.iter().all(|o| o.id < scene.next_id), "step {step}");
    }
}
