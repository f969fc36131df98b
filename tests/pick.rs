//! Picking queries (`raydraft::scene::pick`, `raydraft::trace::pick`): small hand cases,
//! then fixed-seed loops over random scenes where every answer is checked against a
//! brute-force search (exhaustive loops, or dense sampling along the edges for distances).

use std::f64::consts::TAU;

use raydraft::geom::{Aabb, Edge, Outline, Vec2, perp, unit};
use raydraft::optics::Material;
use raydraft::rng::Rng;
use raydraft::scene::pick::{
    IndexSpace, PickGeometry, SourceHandle, nearest_bend_handle, nearest_edge, nearest_object, nearest_source_handle,
    nearest_vertex, objects_in_box, objects_touching_box, source_handles,
};
use raydraft::scene::{
    Absorber, BeamSource, Detector, Emission, LambertianSource, Mirror, Object, ObjectKind, Path, PointSource, Scene,
    Shape, Solid, Splitter,
};
use raydraft::trace::pick::nearest_ray_segment;
use raydraft::trace::{Trace, TraceConfig, trace};

fn v(x: f64, y: f64) -> Vec2 {
    Vec2::new(x, y)
}

fn solid(scene: &mut Scene, shape: Shape) -> u64 {
    if scene.material("n1.5").is_none() {
        scene.materials.push(Material::constant("n1.5", 1.5));
    }
    scene.add("solid", ObjectKind::Solid(Solid { shape, material: "n1.5".into() }))
}

fn rect(cx: f64, cy: f64, w: f64, h: f64) -> Shape {
    Shape::Rectangle { position: (cx, cy), width: w, height: h, rotation_deg: 0.0 }
}

fn mirror(scene: &mut Scene, path: Path) -> u64 {
    scene.add("mirror", ObjectKind::Mirror(Mirror { path, reflectance: 0.9, one_sided: false }))
}

// ---------------------------------------------------------------------------------------
// Hand cases.

#[test]
fn rectangle_corner_is_a_primitive_outline_vertex() {
    let mut s = Scene::new("t");
    let id = solid(&mut s, rect(0.0, 0.0, 4.0, 2.0));
    // The rectangle's outline runs (−2,−1), (2,−1), (2,1), (−2,1).
    let pick = nearest_vertex(&s, v(2.1, 1.1), 0.5).expect("a pick within tolerance");
    assert_eq!((pick.object_id, pick.vertex_idx, pick.index_space), (id, 2, IndexSpace::PrimitiveOutline));
    assert_eq!(pick.point, v(2.0, 1.0));
    assert!((pick.distance_mm - 0.02f64.sqrt()).abs() < 1e-15);
}

#[test]
fn miss_beyond_tolerance_is_none() {
    let mut s = Scene::new("t");
    solid(&mut s, rect(0.0, 0.0, 4.0, 2.0));
    let far = v(10.0, 10.0);
    assert_eq!(nearest_vertex(&s, far, 1.0), None);
    assert_eq!(nearest_edge(&s, far, 1.0), None);
    assert_eq!(nearest_bend_handle(&s, far, 1.0), None);
    assert_eq!(nearest_object(&s, far, 1.0), None);
    assert_eq!(nearest_source_handle(&s, far, 1.0, 5.0), None);
    assert!(nearest_edge(&s, v(0.0, 1.5), 0.5).is_some());
    assert_eq!(nearest_edge(&s, v(0.0, 1.5), 0.49), None);
}

#[test]
fn clockwise_free_outline_keeps_its_file_indices() {
    let mut s = Scene::new("t");
    // Clockwise in the file; the traced outline runs the other way, picking does not.
    let points = vec![(0.0, 0.0), (0.0, 10.0), (10.0, 10.0), (10.0, 0.0)];
    let id = solid(&mut s, Shape::Outline { points, bulges: Vec::new() });
    let vtx = nearest_vertex(&s, v(0.1, 9.9), 1.0).expect("a pick within tolerance");
    assert_eq!((vtx.object_id, vtx.vertex_idx, vtx.index_space), (id, 1, IndexSpace::FilePoints));
    let edge = nearest_edge(&s, v(4.0, 10.2), 1.0).expect("a pick within tolerance");
    assert_eq!((edge.edge_idx, edge.index_space), (1, IndexSpace::FilePoints));
    assert!((edge.param - 0.4).abs() < 1e-15 && (edge.distance_mm - 0.2).abs() < 1e-12);
    assert_eq!(edge.point, v(4.0, 10.0));
    // The closing edge, from the last point back to the first, is edge 3.
    assert_eq!(nearest_edge(&s, v(5.0, -0.1), 1.0).expect("a pick within tolerance").edge_idx, 3);
}

#[test]
fn free_outline_with_wrong_bulge_count_can_still_be_picked() {
    let mut s = Scene::new("t");
    let id = solid(&mut s, Shape::Outline { points: vec![(0.0, 0.0), (1.0, 0.0), (0.0, 1.0)], bulges: vec![0.1] });
    assert_eq!(nearest_vertex(&s, v(1.0, 0.1), 0.5).expect("a pick within tolerance").object_id, id);
}

#[test]
fn prebuilt_geometry_answers_like_the_free_functions_and_skips_broken_primitives() {
    let mut s = Scene::new("t");
    solid(&mut s, Shape::Ball { position: (0.0, 0.0), radius: -1.0 });
    let id = solid(&mut s, rect(0.0, 0.0, 4.0, 2.0));
    let g = PickGeometry::new(&s);
    for p in [v(2.1, 1.1), v(0.0, 0.0), v(0.0, -1.3), v(9.0, 9.0)] {
        assert_eq!(g.nearest_vertex(p, 0.5), nearest_vertex(&s, p, 0.5));
        assert_eq!(g.nearest_edge(p, 0.5), nearest_edge(&s, p, 0.5));
        assert_eq!(g.nearest_bend_handle(p, 0.5), nearest_bend_handle(&s, p, 0.5));
        assert_eq!(g.nearest_object(p, 0.5), nearest_object(&s, p, 0.5));
    }
    assert_eq!(g.nearest_object(v(0.0, 0.0), 0.5).expect("inside the rectangle").object_id, id);
    let everything = Aabb { min: v(-100.0, -100.0), max: v(100.0, 100.0) };
    assert_eq!(g.objects_in_box(&everything), vec![id]);
}

#[test]
fn bend_handle_of_an_arc_is_the_arc_midpoint() {
    let mut s = Scene::new("t");
    // Upper half circle of radius 2 from (2, 0) to (−2, 0): its midpoint is (0, 2).
    let id = mirror(&mut s, Path { points: vec![(2.0, 0.0), (-2.0, 0.0)], bulges: vec![1.0] });
    let pick = nearest_bend_handle(&s, v(0.0, 2.2), 0.5).expect("a pick within tolerance");
    assert_eq!((pick.object_id, pick.edge_idx), (id, 0));
    assert!((pick.point - v(0.0, 2.0)).norm() < 1e-15);
    assert_eq!(nearest_bend_handle(&s, v(0.0, 0.0), 0.5), None);
    // The arc itself is 0.2 mm away; its chord does not count.
    let edge = nearest_edge(&s, v(0.0, 2.2), 0.5).expect("a pick within tolerance");
    assert!((edge.distance_mm - 0.2).abs() < 1e-12 && (edge.param - 0.5).abs() < 1e-12);
    assert_eq!(nearest_edge(&s, v(0.0, 0.3), 0.5), None);
}

#[test]
fn nested_solids_pick_the_innermost() {
    let mut s = Scene::new("t");
    let block = solid(&mut s, rect(0.0, 0.0, 40.0, 40.0));
    let ball = solid(&mut s, Shape::Ball { position: (5.0, 0.0), radius: 5.0 });
    let inner = nearest_object(&s, v(5.0, 1.0), 1.0).expect("a pick within tolerance");
    assert_eq!((inner.object_id, inner.distance_mm, inner.inside), (ball, 0.0, true));
    let outer = nearest_object(&s, v(-10.0, 0.0), 1.0).expect("a pick within tolerance");
    assert_eq!((outer.object_id, outer.inside), (block, true));
    // Outside both, near the block's edge.
    let near = nearest_object(&s, v(20.5, 3.0), 1.0).expect("a pick within tolerance");
    assert_eq!((near.object_id, near.inside), (block, false));
    assert!((near.distance_mm - 0.5).abs() < 1e-12 && near.point == v(20.0, 3.0));
}

#[test]
fn thin_element_through_the_point_wins_over_the_solid_around_it() {
    let mut s = Scene::new("t");
    let block = solid(&mut s, rect(0.0, 0.0, 40.0, 40.0));
    let m = mirror(&mut s, Path::segment((-5.0, 0.0), (5.0, 0.0)));
    assert_eq!(nearest_object(&s, v(1.0, 0.0), 1.0).expect("a pick within tolerance").object_id, m);
    // Inside the block the block is at distance 0, nearer than the mirror 0.5 mm away.
    assert_eq!(nearest_object(&s, v(1.0, 0.5), 1.0).expect("a pick within tolerance").object_id, block);
}

#[test]
fn source_handles_sit_where_documented() {
    let mut s = Scene::new("t");
    let lamp = s.add(
        "lamp",
        ObjectKind::PointSource(PointSource {
            position: (1.0, 2.0),
            start_deg: 0.0,
            end_deg: 90.0,
            emission: Emission::new(10, 1.0, 550.0),
        }),
    );
    let beam = s.add(
        "beam",
        ObjectKind::BeamSource(BeamSource {
            center: (20.0, 0.0),
            width: 4.0,
            direction_deg: 0.0,
            emission: Emission::new(10, 1.0, 550.0),
        }),
    );
    let led = s.add(
        "led",
        ObjectKind::LambertianSource(LambertianSource {
            a: (-20.0, 0.0),
            b: (-20.0, 3.0),
            emission: Emission::new(10, 1.0, 550.0),
        }),
    );
    let check = |p: Vec2, id: u64, handle: SourceHandle| {
        let pick = nearest_source_handle(&s, p + v(0.01, 0.0), 0.1, 5.0).expect("a pick within tolerance");
        assert_eq!((pick.object_id, pick.handle), (id, handle), "at {p:?}");
        assert!((pick.point - p).norm() < 1e-12);
    };
    check(v(1.0, 2.0), lamp, SourceHandle::PointPosition);
    check(v(6.0, 2.0), lamp, SourceHandle::RangeStart);
    check(v(1.0, 7.0), lamp, SourceHandle::RangeEnd);
    check(v(20.0, 0.0), beam, SourceHandle::BeamCenter);
    check(v(20.0, 2.0), beam, SourceHandle::BeamEndLeft);
    check(v(20.0, -2.0), beam, SourceHandle::BeamEndRight);
    check(v(25.0, 0.0), beam, SourceHandle::BeamDirection);
    check(v(-20.0, 0.0), led, SourceHandle::LambertianA);
    check(v(-20.0, 3.0), led, SourceHandle::LambertianB);
    // Sources are objects too: the beam's width, the emitter's face.
    assert_eq!(nearest_object(&s, v(20.3, 1.0), 0.5).expect("a pick within tolerance").object_id, beam);
    assert_eq!(nearest_object(&s, v(-20.2, 1.5), 0.5).expect("a pick within tolerance").object_id, led);
    assert_eq!(nearest_object(&s, v(1.0, 2.4), 0.5).expect("a pick within tolerance").object_id, lamp);
}

#[test]
fn box_queries_tell_inside_from_touching() {
    let mut s = Scene::new("t");
    let small = solid(&mut s, rect(0.0, 0.0, 2.0, 2.0));
    let big = solid(&mut s, rect(50.0, 0.0, 40.0, 40.0));
    let m = mirror(&mut s, Path::segment((-10.0, 5.0), (10.0, 5.0)));
    let bb = Aabb { min: v(-3.0, -3.0), max: v(3.0, 6.0) };
    assert_eq!(objects_in_box(&s, &bb), vec![small]);
    assert_eq!(objects_touching_box(&s, &bb), vec![small, m]);
    // A box inside the big block touches it without meeting an edge.
    let inside = Aabb { min: v(45.0, -1.0), max: v(46.0, 1.0) };
    assert_eq!(objects_touching_box(&s, &inside), vec![big]);
    assert!(objects_in_box(&s, &inside).is_empty());
    // A box that an edge crosses without holding either end.
    let crossed = Aabb { min: v(-1.0, 4.0), max: v(1.0, 4.5) };
    assert!(objects_touching_box(&s, &crossed).is_empty());
    let crossed = Aabb { min: v(-1.0, 4.0), max: v(1.0, 6.0) };
    assert_eq!(objects_touching_box(&s, &crossed), vec![m]);
    assert!(objects_touching_box(&s, &Aabb::EMPTY).is_empty());
}

#[test]
fn ray_segment_pick_on_a_single_beam() {
    let mut s = Scene::new("t");
    s.add(
        "beam",
        ObjectKind::BeamSource(BeamSource {
            center: (0.0, 0.0),
            width: 2.0,
            direction_deg: 0.0,
            emission: Emission::new(2, 1.0, 550.0),
        }),
    );
    solid(&mut s, rect(10.0, 0.0, 2.0, 10.0));
    let t = trace(&s, &TraceConfig::from_scene(&s));
    // Rays at y = −0.5 and y = +0.5; the point is nearest the second.
    let pick = nearest_ray_segment(&t, v(3.0, 0.6), 0.3).expect("a pick within tolerance");
    let ray = &t.rays[pick.ray_idx];
    assert_eq!(pick.event_idx, ray.first_event, "the first segment: launch to the front face");
    assert!((pick.distance_mm - 0.1).abs() < 1e-9 && (pick.point - v(3.0, 0.5)).norm() < 1e-9);
    assert_eq!(nearest_ray_segment(&t, v(3.0, 0.0), 0.3), None);
}

// ---------------------------------------------------------------------------------------
// Random scenes against brute force.

/// A random scene of rectangles, balls, lenses, free outlines with arcs (either way round),
/// thin elements with arcs, and sources of every kind, in a 100 mm square.
fn random_scene(rng: &mut Rng) -> Scene {
    let mut s = Scene::new("random");
    let n = 4 + rng.below(8);
    for _ in 0..n {
        let c = (rng.range(-40.0, 40.0), rng.range(-40.0, 40.0));
        let rotation_deg = rng.range(-180.0, 180.0);
        let emission = Emission::new(3, 1.0, 550.0);
        match rng.below(9) {
            0 => {
                let (width, height) = (rng.range(1.0, 20.0), rng.range(1.0, 20.0));
                solid(&mut s, Shape::Rectangle { position: c, width, height, rotation_deg });
            }
            1 => {
                solid(&mut s, Shape::Ball { position: c, radius: rng.range(0.5, 10.0) });
            }
            2 => {
                let (diameter, thickness) = (rng.range(5.0, 15.0), rng.range(4.0, 8.0));
                let (r1, r2) = (rng.range(20.0, 50.0), -rng.range(20.0, 50.0));
                solid(&mut s, Shape::Lens { position: c, diameter, thickness, r1, r2, rotation_deg });
            }
            3 => {
                let k = 3 + rng.below(5);
                let r = rng.range(2.0, 12.0);
                let mut angles: Vec<f64> = (0..k).map(|_| rng.uniform() * TAU).collect();
                angles.sort_by(f64::total_cmp);
                let mut points: Vec<(f64, f64)> =
                    angles.iter().map(|a| (c.0 + r * a.cos(), c.1 + r * a.sin())).collect();
                if rng.uniform() < 0.5 {
                    points.reverse();
                }
                let bulges = if rng.uniform() < 0.7 { (0..k).map(|_| rng.range(-0.5, 0.5)).collect() } else { vec![] };
                solid(&mut s, Shape::Outline { points, bulges });
            }
            4 | 5 => {
                let k = 2 + rng.below(3);
                let points: Vec<(f64, f64)> =
                    (0..k).map(|_| (c.0 + rng.range(-10.0, 10.0), c.1 + rng.range(-10.0, 10.0))).collect();
                let bulges =
                    if rng.uniform() < 0.5 { (0..k - 1).map(|_| rng.range(-1.5, 1.5)).collect() } else { vec![] };
                let path = Path { points, bulges };
                let kind = match rng.below(4) {
                    0 => ObjectKind::Mirror(Mirror { path, reflectance: 0.9, one_sided: false }),
                    1 => ObjectKind::Absorber(Absorber { path }),
                    2 => ObjectKind::Splitter(Splitter { path, reflectance: 0.5, transmittance: 0.5 }),
                    _ => ObjectKind::Detector(Detector { path, bins: 10, angle_bins: 10 }),
                };
                s.add("thin", kind);
            }
            6 => {
                let start_deg = rng.range(-180.0, 180.0);
                let end_deg = start_deg + rng.range(1.0, 360.0);
                s.add("lamp", ObjectKind::PointSource(PointSource { position: c, start_deg, end_deg, emission }));
            }
            7 => {
                let (width, direction_deg) = (rng.range(0.0, 10.0), rng.range(-180.0, 180.0));
                s.add("beam", ObjectKind::BeamSource(BeamSource { center: c, width, direction_deg, emission }));
            }
            _ => {
                let b = (c.0 + rng.range(-5.0, 5.0), c.1 + rng.range(-5.0, 5.0));
                s.add("led", ObjectKind::LambertianSource(LambertianSource { a: c, b, emission }));
            }
        }
    }
    s
}

/// Vertices, edges, the solid's outline and the index space of one object.
type FileGeometry = (Vec<Vec2>, Vec<Edge>, Option<Outline>, IndexSpace);

/// The editable geometry of an object, worked out independently of the picking code:
/// vertices and edges in file order, the solid's outline, and the index space.
fn file_geometry(o: &Object) -> Option<FileGeometry> {
    let path = match &o.kind {
        ObjectKind::Solid(solid) => {
            let (outline, space) = match &solid.shape {
                Shape::Outline { points, bulges } => {
                    let n = points.len();
                    let vertices: Vec<Vec2> = points.iter().map(|p| v(p.0, p.1)).collect();
                    let bulges = (0..n).map(|i| if bulges.len() == n { bulges[i] } else { 0.0 }).collect();
                    (Outline { vertices, bulges }, IndexSpace::FilePoints)
                }
                shape => (shape.outline().ok()?, IndexSpace::PrimitiveOutline),
            };
            let edges = (0..outline.len()).map(|i| outline.edge(i)).collect();
            return Some((outline.vertices.clone(), edges, Some(outline), space));
        }
        ObjectKind::Mirror(m) => &m.path,
        ObjectKind::Absorber(a) => &a.path,
        ObjectKind::Splitter(x) => &x.path,
        ObjectKind::Detector(d) => &d.path,
        _ => return None,
    };
    let vertices: Vec<Vec2> = path.points.iter().map(|p| v(p.0, p.1)).collect();
    let edges = vertices
        .windows(2)
        .enumerate()
        .map(|(i, w)| Edge { a: w[0], b: w[1], bulge: path.bulges.get(i).copied().unwrap_or(0.0) })
        .collect();
    Some((vertices, edges, None, IndexSpace::FilePoints))
}

/// Source geometry for distances: a point source's position, a beam's width, a face.
fn source_segment(o: &Object) -> Option<Edge> {
    match &o.kind {
        ObjectKind::PointSource(p) => Some(Edge::segment(v(p.position.0, p.position.1), v(p.position.0, p.position.1))),
        ObjectKind::BeamSource(b) => {
            let c = v(b.center.0, b.center.1);
            let half = perp(unit(b.direction_deg.to_radians())) * (b.width / 2.0);
            Some(Edge::segment(c - half, c + half))
        }
        ObjectKind::LambertianSource(l) => Some(Edge::segment(v(l.a.0, l.a.1), v(l.b.0, l.b.1))),
        _ => None,
    }
}

/// Points along an edge no farther apart than `step` (ends included) and the spacing used.
fn samples(e: &Edge, step: f64) -> (Vec<Vec2>, f64) {
    let n = ((e.length() / step).ceil() as usize).clamp(1, 100_000);
    ((0..=n).map(|k| e.point_at(k as f64 / n as f64)).collect(), e.length() / n as f64)
}

/// Sampled distance from `p` to an edge, and the sampling error bound (half the spacing).
fn sampled_distance(e: &Edge, p: Vec2, step: f64) -> (f64, f64) {
    let (pts, spacing) = samples(e, step);
    (pts.iter().map(|q| (q - p).norm()).fold(f64::INFINITY, f64::min), spacing / 2.0)
}

/// Query points: uniform over the scene, and near random points of its geometry.
fn query_point(rng: &mut Rng, scene: &Scene) -> Vec2 {
    if rng.uniform() < 0.5 || scene.objects.is_empty() {
        return v(rng.range(-55.0, 55.0), rng.range(-55.0, 55.0));
    }
    let o = &scene.objects[rng.below(scene.objects.len())];
    let anchor = match file_geometry(o) {
        Some((_, edges, _, _)) if !edges.is_empty() => edges[rng.below(edges.len())].point_at(rng.uniform()),
        _ => source_segment(o).map_or(v(0.0, 0.0), |e| e.point_at(rng.uniform())),
    };
    anchor + unit(rng.uniform() * TAU) * rng.range(0.0, 2.5)
}

const TOL: f64 = 2.0;
const STEP: f64 = 0.01;

#[test]
fn nearest_vertex_and_bend_handle_equal_exhaustive_search() {
    let mut rng = Rng::new(0x0101);
    for case in 0..150 {
        let s = random_scene(&mut rng);
        for _ in 0..40 {
            let p = query_point(&mut rng, &s);
            let mut best_v: Option<(f64, u64, usize, IndexSpace)> = None;
            let mut best_h: Option<(f64, u64, usize)> = None;
            for o in &s.objects {
                let Some((vertices, edges, _, space)) = file_geometry(o) else { continue };
                for (i, q) in vertices.iter().enumerate() {
                    let d = (q - p).norm();
                    if d <= TOL && best_v.is_none_or(|b| d < b.0) {
                        best_v = Some((d, o.id, i, space));
                    }
                }
                for (i, e) in edges.iter().enumerate() {
                    let d = (e.point_at(0.5) - p).norm();
                    if d <= TOL && best_h.is_none_or(|b| d < b.0) {
                        best_h = Some((d, o.id, i));
                    }
                }
            }
            let got = nearest_vertex(&s, p, TOL).map(|k| (k.distance_mm, k.object_id, k.vertex_idx, k.index_space));
            assert_eq!(got, best_v, "case {case} at {p:?}");
            let got = nearest_bend_handle(&s, p, TOL).map(|k| (k.distance_mm, k.object_id, k.edge_idx));
            assert_eq!(got, best_h, "case {case} at {p:?}");
        }
    }
}

#[test]
fn nearest_edge_matches_dense_sampling() {
    let mut rng = Rng::new(0x0202);
    let mut n_hits = 0;
    for case in 0..60 {
        let s = random_scene(&mut rng);
        for _ in 0..25 {
            let p = query_point(&mut rng, &s);
            // Every edge's sampled distance, with its error bound.
            let mut all: Vec<(f64, f64, u64, usize, Edge)> = Vec::new();
            for o in &s.objects {
                let Some((_, edges, _, _)) = file_geometry(o) else { continue };
                for (i, e) in edges.iter().enumerate() {
                    let (d, err) = sampled_distance(e, p, STEP);
                    all.push((d, err, o.id, i, *e));
                }
            }
            all.sort_by(|a, b| a.0.total_cmp(&b.0));
            match nearest_edge(&s, p, TOL) {
                None => assert!(all.first().is_none_or(|b| b.0 > TOL), "case {case}: missed {:?}", all.first()),
                Some(pick) => {
                    n_hits += 1;
                    let best = &all[0];
                    assert!(pick.distance_mm <= TOL);
                    assert!(pick.distance_mm <= best.0 + 1e-9, "case {case}: {} > {}", pick.distance_mm, best.0);
                    assert!(
                        pick.distance_mm >= best.0 - best.1 - 1e-9,
                        "case {case}: {} < {}",
                        pick.distance_mm,
                        best.0
                    );
                    // The reported point is on the reported edge, at the reported parameter.
                    let (_, _, _, _, e) = all
                        .iter()
                        .find(|x| x.2 == pick.object_id && x.3 == pick.edge_idx)
                        .copied()
                        .expect("the picked edge exists");
                    assert!((e.point_at(pick.param) - pick.point).norm() < 1e-9, "case {case}");
                    assert!(((pick.point - p).norm() - pick.distance_mm).abs() < 1e-9, "case {case}");
                    // When the nearest edge is clear of the next one, it is the one picked.
                    if all.len() > 1 && all[1].0 - all[1].1 > best.0 + 1e-9 {
                        assert_eq!((pick.object_id, pick.edge_idx), (best.2, best.3), "case {case} at {p:?}");
                    }
                }
            }
        }
    }
    assert!(n_hits > 400, "too few hits: {n_hits}");
}

#[test]
fn nearest_object_matches_brute_force() {
    let mut rng = Rng::new(0x0303);
    let mut n_inside = 0;
    for case in 0..60 {
        let s = random_scene(&mut rng);
        for _ in 0..25 {
            let p = query_point(&mut rng, &s);
            // (distance, error bound, area, id, inside) for every object within reach.
            let mut all: Vec<(f64, f64, f64, u64, bool)> = Vec::new();
            for o in &s.objects {
                let (edges, outline) = match file_geometry(o) {
                    Some((_, edges, outline, _)) => (edges, outline),
                    None => (source_segment(o).into_iter().collect(), None),
                };
                let area = outline.as_ref().map_or(0.0, |o| o.signed_area().abs());
                if outline.as_ref().is_some_and(|ol| ol.contains(p)) {
                    all.push((0.0, 0.0, area, o.id, true));
                    continue;
                }
                let (d, err) = edges
                    .iter()
                    .map(|e| sampled_distance(e, p, STEP))
                    .fold((f64::INFINITY, 0.0), |acc, x| if x.0 < acc.0 { x } else { acc });
                all.push((d, err, area, o.id, false));
            }
            all.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.2.total_cmp(&b.2)));
            let within = all.iter().filter(|x| x.0 - x.1 <= TOL).count();
            match nearest_object(&s, p, TOL) {
                None => assert!(all.first().is_none_or(|b| b.0 > TOL), "case {case}: missed {:?}", all.first()),
                Some(pick) => {
                    let best = all[0];
                    assert!(within > 0);
                    assert!(pick.distance_mm <= best.0 + 1e-9 && pick.distance_mm >= best.0 - best.1 - 1e-9);
                    if pick.inside {
                        n_inside += 1;
                        assert_eq!(pick.point, p);
                    } else {
                        assert!(((pick.point - p).norm() - pick.distance_mm).abs() < 1e-9);
                    }
                    let clear = all.len() == 1 || all[1].0 - all[1].1 > best.0 + 1e-9 || (best.4 && all[1].2 > best.2);
                    if clear {
                        assert_eq!((pick.object_id, pick.inside), (best.3, best.4), "case {case} at {p:?}: {all:?}");
                    }
                }
            }
        }
    }
    assert!(n_inside > 100, "too few points inside solids: {n_inside}");
}

#[test]
fn nearest_source_handle_equals_exhaustive_search() {
    let mut rng = Rng::new(0x0404);
    for case in 0..150 {
        let s = random_scene(&mut rng);
        let handle_length_mm = rng.range(1.0, 8.0);
        for _ in 0..40 {
            let p = query_point(&mut rng, &s);
            let mut best: Option<(f64, u64, SourceHandle)> = None;
            for o in &s.objects {
                // Handles worked out from the documented rules.
                let hs: Vec<(SourceHandle, Vec2)> = match &o.kind {
                    ObjectKind::PointSource(x) => {
                        let c = v(x.position.0, x.position.1);
                        vec![
                            (SourceHandle::PointPosition, c),
                            (SourceHandle::RangeStart, c + unit(x.start_deg.to_radians()) * handle_length_mm),
                            (SourceHandle::RangeEnd, c + unit(x.end_deg.to_radians()) * handle_length_mm),
                        ]
                    }
                    ObjectKind::BeamSource(b) => {
                        let c = v(b.center.0, b.center.1);
                        let d = unit(b.direction_deg.to_radians());
                        let left = v(-d.y, d.x) * (b.width / 2.0);
                        vec![
                            (SourceHandle::BeamCenter, c),
                            (SourceHandle::BeamEndLeft, c + left),
                            (SourceHandle::BeamEndRight, c - left),
                            (SourceHandle::BeamDirection, c + d * handle_length_mm),
                        ]
                    }
                    ObjectKind::LambertianSource(l) => {
                        vec![(SourceHandle::LambertianA, v(l.a.0, l.a.1)), (SourceHandle::LambertianB, v(l.b.0, l.b.1))]
                    }
                    _ => vec![],
                };
                assert_eq!(hs.len(), source_handles(o, handle_length_mm).len());
                for (h, q) in hs {
                    let d = (q - p).norm();
                    if d <= TOL && best.is_none_or(|b| d < b.0 - 1e-12) {
                        best = Some((d, o.id, h));
                    }
                }
            }
            let got = nearest_source_handle(&s, p, TOL, handle_length_mm);
            match (got, best) {
                (None, None) => {}
                (Some(g), Some(b)) => {
                    assert!((g.distance_mm - b.0).abs() < 1e-12, "case {case}");
                    assert_eq!((g.object_id, g.handle), (b.1, b.2), "case {case} at {p:?}");
                }
                other => panic!("case {case} at {p:?}: {other:?}"),
            }
        }
    }
}

#[test]
fn box_queries_match_dense_sampling() {
    let mut rng = Rng::new(0x0505);
    let mut counts = [0usize; 2];
    for case in 0..80 {
        let s = random_scene(&mut rng);
        for _ in 0..20 {
            let c = v(rng.range(-50.0, 50.0), rng.range(-50.0, 50.0));
            let half = v(rng.range(0.5, 30.0), rng.range(0.5, 30.0));
            let bb = Aabb { min: c - half, max: c + half };
            let inside = objects_in_box(&s, &bb);
            let touching = objects_touching_box(&s, &bb);
            counts[0] += inside.len();
            counts[1] += touching.len();
            for o in &s.objects {
                let (edges, outline) = match file_geometry(o) {
                    Some((_, edges, outline, _)) => (edges, outline),
                    None => (source_segment(o).into_iter().collect(), None),
                };
                if edges.is_empty() {
                    continue;
                }
                let mut pts = Vec::new();
                let mut spacing: f64 = 0.0;
                for e in &edges {
                    let (p, sp) = samples(e, 0.01);
                    pts.extend(p);
                    spacing = spacing.max(sp);
                }
                let all_in = |b: &Aabb| pts.iter().all(|p| b.contains(*p));
                let any_in = |b: &Aabb| pts.iter().any(|p| b.contains(*p));
                let box_in_solid = outline.as_ref().is_some_and(|ol| ol.contains(bb.center()));
                let (is_in, is_touching) = (inside.contains(&o.id), touching.contains(&o.id));
                if all_in(&bb.expanded(-spacing)) {
                    assert!(is_in, "case {case}: object {} should be inside {bb:?}", o.id);
                }
                if is_in {
                    assert!(all_in(&bb), "case {case}: object {} is not inside {bb:?}", o.id);
                    assert!(is_touching, "case {case}");
                }
                if any_in(&bb) || box_in_solid {
                    assert!(is_touching, "case {case}: object {} should touch {bb:?}", o.id);
                }
                if is_touching {
                    assert!(any_in(&bb.expanded(spacing)) || box_in_solid, "case {case}: object {} {bb:?}", o.id);
                }
            }
        }
    }
    assert!(counts[0] > 100 && counts[1] > 300, "too few objects in or touching boxes: {counts:?}");
}

/// Exact distance from `p` to the segment `a`–`b`, written out here rather than borrowed
/// from the code under test.
fn segment_distance(a: Vec2, b: Vec2, p: Vec2) -> f64 {
    let d = b - a;
    let l2 = d.dot(&d);
    let u = if l2 > 0.0 { ((p - a).dot(&d) / l2).clamp(0.0, 1.0) } else { 0.0 };
    (a + d * u - p).norm()
}

fn traced(rng: &mut Rng) -> (Scene, Trace) {
    let s = random_scene(rng);
    let mut config = TraceConfig::from_scene(&s);
    config.rays = Some(20);
    let t = trace(&s, &config);
    (s, t)
}

#[test]
fn nearest_ray_segment_equals_exhaustive_search() {
    let mut rng = Rng::new(0x0606);
    let mut n_hits = 0;
    for case in 0..40 {
        let (_, t) = traced(&mut rng);
        if t.events.is_empty() {
            continue;
        }
        for _ in 0..50 {
            let e = &t.events[rng.below(t.events.len())];
            let p = if rng.uniform() < 0.3 {
                v(rng.range(-60.0, 60.0), rng.range(-60.0, 60.0))
            } else {
                e.point + unit(rng.uniform() * TAU) * rng.range(0.0, 1.5)
            };
            let mut all: Vec<(f64, usize, usize)> = Vec::new();
            for (ri, ray) in t.rays.iter().enumerate() {
                let evs = t.events_of(ray);
                for k in 1..evs.len() {
                    all.push((segment_distance(evs[k - 1].point, evs[k].point, p), ri, ray.first_event + k - 1));
                }
            }
            all.sort_by(|a, b| a.0.total_cmp(&b.0));
            let tol = 1.0;
            match nearest_ray_segment(&t, p, tol) {
                None => assert!(all.first().is_none_or(|b| b.0 > tol), "case {case}"),
                Some(pick) => {
                    n_hits += 1;
                    let best = all[0];
                    assert!((pick.distance_mm - best.0).abs() < 1e-9, "case {case}");
                    if all.len() == 1 || all[1].0 > best.0 + 1e-9 {
                        assert_eq!((pick.ray_idx, pick.event_idx), (best.1, best.2), "case {case}");
                    }
                    let (a, b) = (t.events[pick.event_idx].point, t.events[pick.event_idx + 1].point);
                    assert!((a + (b - a) * pick.param - pick.point).norm() < 1e-9);
                }
            }
        }
    }
    assert!(n_hits > 500, "too few hits: {n_hits}");
}
