//! The scene file format: round trips, atomic saving and old files that must keep loading.

use std::path::{Path, PathBuf};

use raydraft::scene::file::{self, LoadError};
use raydraft::scene::validate::Severity;
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

/// A scene with one prism and one beam; `prism`, `material` and `line` are spliced in so each
/// test can misspell one place.
fn scene_text(settings: &str, material: &str, prism: &str, line: &str) -> String {
    format!(
        r#"(
    version: 1,
    settings: ({settings}),
    materials: [(name: "glass", dispersion: {material}, reference: Air, absorption_per_mm: 0.0,
        valid_nm: (400.0, 700.0), source: "")],
    objects: [
        (id: 1, name: "prism", kind: Solid((shape: Prism({prism}), material: "glass"))),
        (id: 2, name: "beam", kind: BeamSource((center: (-40.0, 5.0), width: 2.0, direction_deg: 0.0,
            emission: (rays: 3, power_w: 1.0, spectrum: [{line}])))),
    ],
)"#
    )
}

const PRISM: &str = "position: (0.0, 0.0), apex_deg: 60.0, side: 30.0";
const CAUCHY: &str = "Cauchy(a: 1.5, b_um2: 0.004, c_um4: 0.0)";
const LINE: &str = "(nm: 550.0, weight: 1.0)";

#[test]
fn the_spliced_scene_loads_as_written() {
    file::from_str(&scene_text("mode: Tree", CAUCHY, PRISM, LINE), "ok.ron").unwrap_or_else(|e| panic!("{e}"));
}

#[test]
fn unknown_fields_are_refused_in_every_place_with_their_position() {
    let cases = [
        ("shape", scene_text("", CAUCHY, &format!("{PRISM}, rotation_degs: 10.0"), LINE), "rotation_degs", 7),
        (
            "material",
            scene_text("", CAUCHY, PRISM, LINE).replace("absorption_per_mm", "absorbtion_per_mm"),
            "absorbtion_per_mm",
            4,
        ),
        ("dispersion", scene_text("", "Cauchy(a: 1.5, b_um: 0.004, c_um4: 0.0)", PRISM, LINE), "b_um", 4),
        ("spectrum line", scene_text("", CAUCHY, PRISM, "(nm: 550.0, wieght: 1.0)"), "wieght", 9),
        ("settings", scene_text("treshold: 0.01", CAUCHY, PRISM, LINE), "treshold", 3),
    ];
    for (place, text, field, line) in cases {
        let err = file::from_str(&text, "typo.ron").expect_err(place);
        assert!(matches!(err, LoadError::Syntax { .. }), "{place}: {err}");
        assert_eq!(err.position().map(|p| p.0), Some(line), "{place}: {err}");
        assert!(err.to_string().contains(&format!("`{field}`")), "{place}: {err}");
        assert!(err.to_string().contains("remove the field or correct its spelling"), "{place}: {err}");
    }
}

#[test]
fn a_byte_order_mark_is_skipped() {
    let text = format!("\u{feff}{}", scene_text("", CAUCHY, PRISM, LINE));
    file::from_str(&text, "bom.ron").unwrap_or_else(|e| panic!("{e}"));
}

fn problems_of(text: &str) -> Vec<raydraft::scene::Problem> {
    match file::from_str(text, "p.ron") {
        Ok(loaded) => loaded.warnings,
        Err(LoadError::Invalid { problems, .. }) => problems,
        Err(e) => panic!("{e}"),
    }
}

#[test]
fn problems_carry_the_object_the_field_a_hint_and_the_place() {
    let text = scene_text("", CAUCHY, PRISM, "(nm: 550.0, weight: 1.0), (nm: 600.0, weight: -1.0)");
    let problems = problems_of(&text);
    let p = problems.iter().find(|p| p.field.as_deref() == Some("emission.spectrum[1].weight")).expect("weight");
    assert_eq!(p.severity, Severity::Error);
    assert_eq!(p.object_id(), Some(2));
    assert_eq!(p.object_name(), Some("beam"));
    assert_eq!(p.at, Some((8, 9)));
    assert!(p.to_string().starts_with("error: object 2 \"beam\": a spectral weight must be zero or positive"), "{p}");

    let problems = problems_of(&scene_text("threshold: 2.0", CAUCHY, PRISM, LINE));
    let p = &problems[0];
    assert_eq!((p.field.as_deref(), p.object_id(), p.at), (Some("settings.threshold"), None, None), "{p}");

    let problems = problems_of(&scene_text("", CAUCHY, "position: (0.0, 0.0), apex_deg: 200.0, side: 30.0", LINE));
    assert_eq!(problems[0].field.as_deref(), Some("shape.apex_deg"), "{}", problems[0]);

    let problems = problems_of(&scene_text("", "Cauchy(a: -1.5, b_um2: 0.0, c_um4: 0.0)", PRISM, LINE));
    let p = &problems[0];
    assert_eq!(p.field.as_deref(), Some("material"));
    assert!(p.hint.as_deref().is_some_and(|h| h.contains("pole")), "{p}");
    assert!(p.to_string().ends_with(&format!("; {}", p.hint.as_deref().unwrap_or_default())), "{p}");
}

#[test]
fn check_and_trace_agree_on_an_unusable_index() {
    // n² − 1 = λ²/(λ² − 0.5²) has its pole at 500 nm; at 450 nm n² < 0.
    for nm in [500.0, 450.0] {
        let text = scene_text(
            "",
            "SellmeierWavelength(c0: 0.0, terms: [(1.0, 0.5)])",
            PRISM,
            &format!("(nm: {nm}, weight: 1.0)"),
        );
        let problems = problems_of(&text);
        assert!(
            problems.iter().any(|p| p.severity == Severity::Error && p.message.contains("no usable index")),
            "{nm}"
        );
        // The trace uses the same validation: the prism is left out instead of traced as air.
        let scene: Scene = ron::from_str(&text).expect("parse");
        let compiled = raydraft::trace::Compiled::new(&scene);
        assert_eq!(compiled.excluded(), &[1], "{nm}");
    }
}

#[test]
fn an_index_near_a_pole_is_warned_about_with_its_value() {
    // 1e-9 nm from the pole at 500 nm the index is in the tens of thousands.
    let text =
        scene_text("", "SellmeierWavelength(c0: 0.0, terms: [(1.0, 0.499999999)])", PRISM, "(nm: 500.0, weight: 1.0)");
    let problems = problems_of(&text);
    let p = problems.iter().find(|p| p.message.contains("outside 0.99–10")).expect("warning");
    assert_eq!(p.severity, Severity::Warning);
    assert!(p.message.contains("gives n = "), "{p}");
}

#[test]
fn weights_and_powers_must_add_up_to_finite_amounts() {
    let problems =
        problems_of(&scene_text("", CAUCHY, PRISM, "(nm: 500.0, weight: 1e308), (nm: 600.0, weight: 1e308)"));
    assert!(problems.iter().any(|p| p.message.contains("add up to more than the largest number")));

    let text = scene_text("", CAUCHY, PRISM, LINE).replace("power_w: 1.0", "power_w: 1e13");
    assert!(problems_of(&text).iter().any(|p| p.field.as_deref() == Some("emission.power_w")));

    // 1000 sources of 1e12 W each are each allowed but not together.
    let mut scene = Scene::new("bright");
    for k in 0..1001 {
        scene.add(
            &format!("lamp {k}"),
            ObjectKind::BeamSource(raydraft::scene::BeamSource {
                center: (0.0, f64::from(k)),
                width: 1.0,
                direction_deg: 0.0,
                emission: Emission::new(1, 1e12, 550.0),
            }),
        );
    }
    let problems = raydraft::scene::validate(&scene);
    assert!(problems.iter().any(|p| p.message.contains("together")), "{:?}", problems.first());
}

fn square(scene: &mut Scene, name: &str, at: (f64, f64), side: f64) -> u64 {
    scene.add(
        name,
        ObjectKind::Solid(Solid {
            shape: Shape::Rectangle { position: at, width: side, height: side, rotation_deg: 0.0 },
            material: "pmma".to_owned(),
        }),
    )
}

#[test]
fn coordinates_and_sizes_outside_the_supported_range_are_refused_by_name() {
    let mut scene = Scene::new("far");
    square(&mut scene, "near", (0.0, 0.0), 10.0);
    square(&mut scene, "far square", (1e9, 1e9), 10.0);
    let problems = raydraft::scene::validate(&scene);
    let p = problems.iter().find(|p| p.severity == Severity::Error).expect("error");
    assert_eq!(p.object_name(), Some("far square"), "{p}");
    assert!(p.message.contains("outside the supported area"), "{p}");
    assert_eq!(problems.iter().filter(|p| p.severity == Severity::Error).count(), 1, "{problems:?}");

    let mut scene = Scene::new("tiny");
    square(&mut scene, "block", (0.0, 0.0), 10.0);
    square(&mut scene, "speck", (20.0, 0.0), 1e-12);
    let problems = raydraft::scene::validate(&scene);
    let p = problems.iter().find(|p| p.severity == Severity::Error).expect("error");
    assert_eq!(p.object_name(), Some("speck"), "{p}");
    assert!(p.message.contains("too small"), "{p}");

    // At the edge of the range a millimetre part is still fine.
    let mut scene = Scene::new("edge");
    square(&mut scene, "block", (9e5, -9e5), 1.0);
    assert!(raydraft::scene::validate(&scene).iter().all(|p| p.severity == Severity::Warning));
}

#[test]
fn absurd_bulges_and_zero_length_pieces_are_refused() {
    use raydraft::scene::{Mirror, Path as ScenePath};
    let mirror = |path: ScenePath| ObjectKind::Mirror(Mirror { path, reflectance: 0.9, one_sided: false });
    let mut scene = Scene::new("bulge");
    scene.add("m", mirror(ScenePath { points: vec![(0.0, 0.0), (10.0, 0.0)], bulges: vec![1e300] }));
    let problems = raydraft::scene::validate(&scene);
    assert!(problems.iter().any(|p| p.field.as_deref() == Some("path.bulges[0]")), "{problems:?}");

    let mut scene = Scene::new("zero");
    scene.add("m", mirror(ScenePath { points: vec![(0.0, 0.0), (1.0, 0.0), (1.0, 0.0)], bulges: vec![] }));
    let problems = raydraft::scene::validate(&scene);
    let p = problems.iter().find(|p| p.severity == Severity::Error).expect("error");
    assert_eq!(p.field.as_deref(), Some("path.points[2]"), "{p}");

    let mut scene = Scene::new("outline bulge");
    scene.add(
        "lens",
        ObjectKind::Solid(Solid {
            shape: Shape::Outline { points: vec![(0.0, 0.0), (10.0, 0.0)], bulges: vec![2e6, 1.0] },
            material: "pmma".to_owned(),
        }),
    );
    let problems = raydraft::scene::validate(&scene);
    assert!(problems.iter().any(|p| p.field.as_deref() == Some("shape.bulges[0]")), "{problems:?}");
}

#[test]
fn coincident_solids_are_warned_about_even_drawn_differently() {
    let mut scene = Scene::new("twins");
    square(&mut scene, "a", (0.0, 0.0), 10.0);
    // The same square as a free outline starting at another corner and running clockwise.
    scene.add(
        "b",
        ObjectKind::Solid(Solid {
            shape: Shape::Outline { points: vec![(5.0, 5.0), (5.0, -5.0), (-5.0, -5.0), (-5.0, 5.0)], bulges: vec![] },
            material: "water".to_owned(),
        }),
    );
    square(&mut scene, "c", (0.0, 0.0), 10.5);
    let problems = raydraft::scene::validate(&scene);
    let dup: Vec<_> = problems.iter().filter(|p| p.message.contains("same outline")).collect();
    assert_eq!(dup.len(), 1, "{problems:?}");
    assert_eq!(dup[0].object_name(), Some("b"));
    assert!(dup[0].message.contains("\"pmma\"") && dup[0].message.contains("\"water\""), "{}", dup[0]);
}

#[test]
fn long_names_are_cut_in_messages() {
    let mut scene = Scene::new("long");
    let name = "n".repeat(10_000);
    scene.add(
        &name,
        ObjectKind::Solid(Solid { shape: Shape::Ball { position: (0.0, 0.0), radius: 1.0 }, material: name.clone() }),
    );
    for p in raydraft::scene::validate(&scene) {
        assert!(p.to_string().len() < 600, "{} bytes", p.to_string().len());
    }
}

#[test]
fn files_are_read_with_a_size_limit_and_only_if_regular() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenes/prism_fold.ron");
    let err = file::load_limited(&path, 100).expect_err("too large");
    assert!(matches!(err, LoadError::TooLarge { limit: 100, .. }), "{err}");
    assert!(file::load_limited(&path, 1 << 20).is_ok());
    if cfg!(unix) {
        let err = file::load("/dev/zero").expect_err("a device");
        assert!(matches!(err, LoadError::NotAFile { .. }), "{err}");
    }
    let err = file::load(env!("CARGO_MANIFEST_DIR")).expect_err("a folder");
    assert!(err.to_string().contains("is a folder"), "{err}");
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
