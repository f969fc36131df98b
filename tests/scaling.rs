//! Inputs that made the old checks quadratic (a notched plate stood upright, deeply nested
//! solids, many separate solids), scaled to run quickly here: the checks must give the right
//! answers (no false errors or warnings, the right nesting). How the time grows is measured
//! in `benches/scaling.rs`, never here.

mod common;

use common::*;
use raydraft::scene::validate::Severity;
use raydraft::scene::{Scene, Shape, validate};
use raydraft::trace::Compiled;

fn plate(notches: u32, depth: f64, rotation_deg: f64) -> Shape {
    Shape::NotchedPlate {
        position: (0.0, 0.0),
        length: 100.0,
        thickness: 3.0,
        notches,
        notch_depth: depth,
        notch_angle_deg: 90.0,
        notch_start: 5.0,
        notch_end: 95.0,
        density_ratio: 1.0,
        rotation_deg,
    }
}

/// No errors and no warnings but the missing light source.
fn assert_clean(scene: &Scene) {
    let problems = validate(scene);
    let other: Vec<_> = problems.iter().filter(|p| !p.message.contains("no light source")).collect();
    assert!(other.is_empty(), "{other:?}");
}

#[test]
fn upright_plate_of_20000_notches_checks_clean() {
    for rotation in [90.0, 37.0] {
        let mut s = scene();
        solid(&mut s, "plate", plate(20_000, 0.002, rotation), 1.49);
        assert_clean(&s);
    }
}

#[test]
fn upright_plate_with_one_crossing_is_reported() {
    // Pull one notch tip through the top face of an upright plate.
    let outline = plate(2_000, 0.02, 90.0).outline().expect("plate");
    let mut points: Vec<(f64, f64)> = outline.vertices.iter().map(|v| (v.x, v.y)).collect();
    let tip = points.len() / 2 + 1;
    points[tip].0 -= 10.0;
    let mut s = scene();
    solid(&mut s, "plate", Shape::Outline { points, bulges: Vec::new() }, 1.49);
    let problems = validate(&s);
    assert!(
        problems.iter().any(|p| p.severity == Severity::Error && p.message.contains("cross each other")),
        "{problems:?}"
    );
}

#[test]
fn two_thousand_nested_balls_nest_in_order() {
    let mut s = scene();
    let n = 2_000;
    // Listed from the inside out, so a solid's parent comes after it.
    for k in 0..n {
        solid(&mut s, &format!("ball {k}"), Shape::Ball { position: (0.0, 0.0), radius: 1.0 + k as f64 }, 1.3);
    }
    point(&mut s, (0.5, 0.0), 0.0, 360.0, 4);
    let c = Compiled::new(&s);
    assert!(c.warnings().is_empty(), "{:?}", &c.warnings()[..c.warnings().len().min(3)]);
    for (k, info) in c.solids().iter().enumerate() {
        assert_eq!(info.depth as usize, n - 1 - k);
        assert_eq!(info.parent, if k + 1 < n { Some(k as u32 + 1) } else { None });
    }
    // The lamp sits in the innermost ball.
    assert_eq!(c.medium_at(raydraft::geom::Vec2::new(0.5, 0.0)), 1);
}

#[test]
fn nested_rectangles_touching_and_overlapping_are_told_apart() {
    let mut s = scene();
    // 500 nested squares, then two side by side touching along a face, then one overlapping.
    for k in 0..500 {
        let w = 2.0 * f64::from(k + 1);
        solid(&mut s, &format!("square {k}"), rect(0.0, 0.0, w, w), 1.4);
    }
    solid(&mut s, "left", rect(2000.0, 0.0, 10.0, 10.0), 1.5);
    solid(&mut s, "right", rect(2010.0, 0.0, 10.0, 10.0), 1.5);
    let over = solid(&mut s, "over", rect(2004.0, 4.0, 4.0, 4.0), 1.5);
    let problems = validate(&s);
    let overlaps: Vec<_> = problems.iter().filter(|p| p.message.contains("overlaps")).collect();
    // "over" sits across the corner of "left" only... and across "right"? It spans x 2002–2006,
    // y 2–6: inside "left" (1995–2005) and across its right face into "right" (2005–2015).
    assert_eq!(overlaps.len(), 2, "{overlaps:?}");
    assert!(overlaps.iter().all(|p| p.message.contains(&format!("solid {over} "))));
    let c = Compiled::new(&s);
    for (k, info) in c.solids().iter().take(500).enumerate() {
        assert_eq!(info.depth as usize, 499 - k);
    }
}

#[test]
fn twenty_thousand_separate_squares_check_clean() {
    let mut s = scene();
    let material = constant(&mut s, 1.5);
    for i in 0..142 {
        for j in 0..142 {
            // Pushed directly: `Scene::add` looks for a free id among all objects each time.
            let id = s.objects.len() as u64 + 10;
            s.objects.push(raydraft::scene::Object {
                id,
                name: format!("sq{i}-{j}"),
                kind: raydraft::scene::ObjectKind::Solid(raydraft::scene::Solid {
                    shape: rect(2.0 * f64::from(i), 2.0 * f64::from(j), 1.0, 1.0),
                    material: material.clone(),
                }),
            });
        }
    }
    assert_eq!(s.objects.len(), 20_164);
    assert_clean(&s);
    let c = Compiled::new(&s);
    assert!(c.solids().iter().all(|i| i.parent.is_none() && i.depth == 0));
    assert_eq!(c.medium_at(raydraft::geom::Vec2::new(4.2, 6.1)), 2 * 142 + 3 + 1);
}
