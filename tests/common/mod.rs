//! Helpers shared by the trace tests: small scenes built in code.
#![allow(dead_code)]

use raydraft::optics::Material;
use raydraft::scene::{
    Absorber, BeamSource, Detector, Emission, ObjectKind, Path, PointSource, Polarization, Scene, Shape, Solid,
    TraceMode,
};
use raydraft::trace::{Trace, TraceConfig, trace};

/// A scene in air with constant-index materials "n1.5" style names added on demand.
pub fn scene() -> Scene {
    Scene::new("test")
}

/// Adds (if needed) a constant material of index `n` and returns its name.
pub fn constant(scene: &mut Scene, n: f64) -> String {
    let name = format!("n{n}");
    if scene.material(&name).is_none() {
        scene.materials.push(Material::constant(&name, n));
    }
    name
}

pub fn solid(scene: &mut Scene, name: &str, shape: Shape, n: f64) -> u64 {
    let material = constant(scene, n);
    scene.add(name, ObjectKind::Solid(Solid { shape, material }))
}

pub fn rect(cx: f64, cy: f64, w: f64, h: f64) -> Shape {
    Shape::Rectangle { position: (cx, cy), width: w, height: h, rotation_deg: 0.0 }
}

pub fn beam(
    scene: &mut Scene,
    center: (f64, f64),
    width: f64,
    direction_deg: f64,
    rays: u32,
    pol: Polarization,
) -> u64 {
    let mut emission = Emission::new(rays, 1.0, 587.5618);
    emission.polarization = pol;
    scene.add("beam", ObjectKind::BeamSource(BeamSource { center, width, direction_deg, emission }))
}

pub fn point(scene: &mut Scene, at: (f64, f64), start: f64, end: f64, rays: u32) -> u64 {
    scene.add(
        "lamp",
        ObjectKind::PointSource(PointSource {
            position: at,
            start_deg: start,
            end_deg: end,
            emission: Emission::new(rays, 1.0, 587.5618),
        }),
    )
}

pub fn detector(scene: &mut Scene, name: &str, a: (f64, f64), b: (f64, f64)) -> u64 {
    scene.add(name, ObjectKind::Detector(Detector { path: Path::segment(a, b), bins: 50, angle_bins: 50 }))
}

pub fn absorber(scene: &mut Scene, name: &str, a: (f64, f64), b: (f64, f64)) -> u64 {
    scene.add(name, ObjectKind::Absorber(Absorber { path: Path::segment(a, b) }))
}

pub fn config(scene: &Scene, mode: TraceMode) -> TraceConfig {
    let mut c = TraceConfig::from_scene(scene);
    c.settings.mode = mode;
    c
}

/// Traces and checks the invariants every trace must keep: no warnings about the budget,
/// the budget closing to 1e-9 and every stored number finite.
pub fn run(scene: &Scene, config: &TraceConfig) -> Trace {
    let t = trace(scene, config);
    let err = t.budget.closure_error();
    assert!(err <= 1e-9, "budget closes only to {err:e}: {:?}", t.budget);
    for e in &t.events {
        assert!(e.point.x.is_finite() && e.point.y.is_finite(), "NaN point in {e:?}");
        assert!(e.after_s.is_finite() && e.after_p.is_finite(), "NaN power in {e:?}");
    }
    t
}

/// Direction of travel leaving the last event before the ray ends.
pub fn final_direction(t: &Trace, ray: usize) -> raydraft::geom::Vec2 {
    let ev = t.events_of(&t.rays[ray]);
    let n = ev.len();
    assert!(n >= 2, "ray {ray} has {n} events");
    (ev[n - 1].point - ev[n - 2].point).normalize()
}

/// The scene files (`*.ron`) in a folder of the project, sorted by name.
pub fn files_in(folder: &str) -> Vec<std::path::PathBuf> {
    let mut paths: Vec<std::path::PathBuf> =
        std::fs::read_dir(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(folder))
            .expect("folder")
            .map(|e| e.expect("entry").path())
            .filter(|p| p.extension().is_some_and(|x| x == "ron"))
            .collect();
    paths.sort();
    paths
}
