//! The scene file format: round trips, atomic saving and old files that must keep loading.

use std::path::{Path, PathBuf};

use raydraft::scene::file::{self, LoadError};
use raydraft::scene::{Emission, ObjectKind, Scene, Shape, Solid};
use raydraft::trace::{TraceConfig, trace};

mod common;

fn demo_scenes() -> Vec<PathBuf> {
    common::files_in("scenes")
}

#[test]
fn there_are_at_least_six_demo_scenes_and_the_panel_demo_is_one() {
    let paths = demo_scenes();
    assert!(paths.len() >= 6, "{paths:?}");
    assert!(paths.iter().any(|p| p.ends_with("light_guide.ron")));
}

#[test]
fn every_demo_reads_back_identical_after_saving() {
    for path in demo_scenes() {
        let loaded = file::load(&path).unwrap_or_else(|e| panic!("{e}"));
        let scene = loaded.scene;
        assert!(!scene.title.is_empty() && !scene.notes.is_empty(), "{}: needs a title and notes", path.display());
        let text = file::to_string(&scene).expect("to text");
        let again = file::from_str(&text, "round trip").unwrap_or_else(|e| panic!("{}: {e}\n{text}", path.display()));
        assert_eq!(again.scene, scene, "{}", path.display());
        // Writing is deterministic.
        assert_eq!(file::to_string(&again.scene).expect("to text"), text);
    }
}

#[test]
fn awkward_floats_round_trip_exactly() {
    let mut scene = Scene::new("floats");
    let awkward = [0.1 + 0.2, 1e-300, 123_456_789.123_456_78, -0.0, f64::MIN_POSITIVE, 2.0f64.sqrt(), 1.0 / 3.0];
    for (k, v) in awkward.iter().enumerate() {
        scene.add(
            &format!("ball {k}"),
            ObjectKind::Solid(Solid {
                shape: Shape::Ball { position: (*v, -*v), radius: 1.0 + v.abs() },
                material: "water".to_owned(),
            }),
        );
    }
    scene.add(
        "beam",
        ObjectKind::BeamSource(raydraft::scene::BeamSource {
            center: (0.1, 0.7),
            width: 1.0 / 7.0,
            direction_deg: 33.333_333_333_333_336,
            emission: Emission::new(3, 0.3, 587.5618),
        }),
    );
    let text = file::to_string(&scene).expect("to text");
    let back: Scene = ron::from_str(&text).expect("parse");
    assert_eq!(back, scene);
    for (a, b) in back.objects.iter().zip(&scene.objects) {
        if let (ObjectKind::Solid(x), ObjectKind::Solid(y)) = (&a.kind, &b.kind) {
            let (Shape::Ball { position: p, .. }, Shape::Ball { position: q, .. }) = (&x.shape, &y.shape) else {
                panic!("not a ball")
            };
            assert_eq!(p.0.to_bits(), q.0.to_bits(), "bits of {}", q.0);
        }
    }
}

#[test]
fn saving_is_atomic_and_keeps_the_previous_file_as_bak() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("layout.ron");
    let first = Scene::new("first");
    file::save(&first, &path).expect("first save");
    assert!(!dir.path().join("layout.ron.bak").exists(), "nothing to back up on the first save");
    let mut second = Scene::new("second");
    second.notes = "changed".to_owned();
    file::save(&second, &path).expect("second save");
    let backup = std::fs::read_to_string(dir.path().join("layout.ron.bak")).expect("backup exists");
    assert!(backup.contains("\"first\""));
    assert_eq!(file::load(&path).expect("load").scene, second);
    // No temporary files are left behind.
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .expect("list")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names.len(), 2, "{names:?}");
}

#[test]
fn saving_into_a_missing_folder_fails_with_the_path() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("no such folder").join("x.ron");
    let err = file::save(&Scene::new("x"), &path).expect_err("cannot write");
    assert!(err.to_string().contains("no such folder"), "{err}");
}

#[test]
fn the_hand_written_version_1_file_loads_and_traces() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/scene_v1.ron");
    let loaded = file::load(&path).unwrap_or_else(|e| panic!("{e}"));
    // Migrated on loading: the current version, and the next id past the largest in the file.
    assert_eq!(loaded.scene.version, raydraft::scene::SCENE_VERSION);
    assert_eq!(loaded.scene.objects.len(), 9);
    let max_id = loaded.scene.objects.iter().map(|o| o.id).max().expect("objects");
    assert_eq!(loaded.scene.next_id, max_id + 1);
    let t = trace(&loaded.scene, &TraceConfig::from_scene(&loaded.scene));
    assert!(t.budget.launched > 0.0);
    assert!(t.budget.closure_error() < 1e-9, "{}", t.budget.closure_error());
    assert_eq!(t.detectors.len(), 1);
}

#[test]
fn errors_name_the_line_and_column() {
    let text = "(\n    version: 1,\n    objects: [],\n    colour: 3,\n)\n";
    let err = file::from_str(text, "x.ron").expect_err("unknown field");
    assert_eq!(err.position(), Some((4, 5)), "{err}");
    assert!(err.to_string().starts_with("x.ron:4:5: "), "{err}");
}

#[test]
fn a_newer_version_is_refused_before_its_fields_are_read() {
    let text = "(version: 3, objects: [], something_new: (a: 1))";
    let err = file::from_str(text, "new.ron").expect_err("newer");
    assert!(matches!(err, LoadError::NewerVersion { version: 3, .. }), "{err}");
}

#[test]
fn infinite_numbers_are_refused_with_their_place() {
    let text = "(version: 1, objects: [], settings: (margin: 1e999))";
    let err = file::from_str(text, "big.ron").expect_err("infinite");
    assert!(matches!(err, LoadError::NotFinite { line: 1, col: 46, .. }), "{err}");
}

#[test]
fn warnings_come_back_beside_the_scene() {
    let loaded = file::from_str("(version: 1, objects: [])", "empty.ron").expect("loads");
    assert!(loaded.warnings.iter().any(|w| w.message.contains("no light source")));
}

/// The text of `scene` written as version 1 would have been: no `next_id`, version 1.
fn as_version_1(scene: &Scene) -> String {
    let text = file::to_string(scene).expect("to text");
    let text = text.replacen(&format!("version: {},", raydraft::scene::SCENE_VERSION), "version: 1,", 1);
    text.lines().filter(|l| !l.trim_start().starts_with("next_id:")).collect::<Vec<_>>().join("\n")
}

#[test]
fn version_1_files_migrate_and_round_trip() {
    let mut texts: Vec<(String, String)> = demo_scenes()
        .iter()
        .map(|p| {
            let scene = file::load(p).unwrap_or_else(|e| panic!("{e}")).scene;
            (p.display().to_string(), as_version_1(&scene))
        })
        .collect();
    let v1 = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/scene_v1.ron");
    texts.push((v1.display().to_string(), std::fs::read_to_string(&v1).expect("read")));
    for (name, text) in texts {
        assert!(text.contains("version: 1,") && !text.contains("next_id"), "{name}");
        let migrated = file::from_str(&text, &name).unwrap_or_else(|e| panic!("{e}")).scene;
        assert_eq!(migrated.version, 2, "{name}");
        let max_id = migrated.objects.iter().map(|o| o.id).max().unwrap_or(0);
        assert_eq!(migrated.next_id, max_id + 1, "{name}");
        // Saved as version 2, it reads back identical.
        let saved = file::to_string(&migrated).expect("to text");
        assert!(saved.contains("version: 2,") && saved.contains("next_id:"), "{name}");
        let again = file::from_str(&saved, &name).unwrap_or_else(|e| panic!("{e}")).scene;
        assert_eq!(again, migrated, "{name}");
    }
}

#[test]
fn the_next_id_is_saved_and_survives_deleting_the_newest_object() {
    let mut scene = Scene::new("ids");
    let ball = || {
        ObjectKind::Solid(Solid { shape: Shape::Ball { position: (0.0, 0.0), radius: 1.0 }, material: "water".into() })
    };
    scene.add("a", ball());
    let b = scene.add("b", ball());
    raydraft::scene::apply(&mut scene, raydraft::scene::Edit::RemoveObject { id: b }).expect("removes");
    let text = file::to_string(&scene).expect("to text");
    let back = file::from_str(&text, "ids.ron").expect("loads").scene;
    assert_eq!(back.next_id, b + 1);
    let add = raydraft::scene::Edit::add_new(&back, "c", ball());
    let raydraft::scene::Edit::AddObject { object, .. } = add else { panic!("an add") };
    assert_eq!(object.id, b + 1, "the deleted object's id is not given again");
}

#[test]
fn a_next_id_below_the_ids_in_use_is_raised_on_loading() {
    let text = "(version: 2, next_id: 1, objects: [(id: 7, name: \"b\", kind: Solid((shape: Ball(position: (0.0, 0.0), radius: 1.0), material: \"water\")))])";
    let scene = file::from_str(text, "low.ron").expect("loads").scene;
    assert_eq!(scene.next_id, 8);
}
