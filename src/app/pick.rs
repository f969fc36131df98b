//! Small picking queries on the scene for the canvas. Replace with `scene::pick` once merged.

use crate::geom::{Aabb, Edge, Outline, Vec2};
use crate::scene::{ObjectKind, Path, Point, Scene, Shape, to_vec};

/// The drawable geometry of one object in scene millimetres.
pub struct ObjectGeom {
    pub id: u64,
    /// The closed outline of a solid.
    pub outline: Option<Outline>,
    /// Flattened polylines (a closed solid repeats its first point at the end).
    pub lines: Vec<Vec<Vec2>>,
    /// Points that stand for the object (sources).
    pub points: Vec<Vec2>,
    pub bounds: Aabb,
}

/// Flattens an edge into points (arcs every 3°, at least 1 step), without the first point.
pub fn flatten_into(e: &Edge, out: &mut Vec<Vec2>) {
    let poly = e.polyline(3f64.to_radians());
    out.extend(poly.into_iter().skip(1));
}

pub fn path_of(kind: &ObjectKind) -> Option<&Path> {
    match kind {
        ObjectKind::Mirror(m) => Some(&m.path),
        ObjectKind::Absorber(a) => Some(&a.path),
        ObjectKind::Splitter(s) => Some(&s.path),
        ObjectKind::Detector(d) => Some(&d.path),
        _ => None,
    }
}

/// The editable vertices and edges of an object: points and per-edge bulges, and whether the
/// edges close into a loop. `None` for objects edited only by parameters.
pub fn editable_polyline(kind: &ObjectKind) -> Option<(Vec<Point>, Vec<f64>, bool)> {
    match kind {
        ObjectKind::Solid(s) => match &s.shape {
            Shape::Outline { points, bulges } => Some((points.clone(), bulges.clone(), true)),
            _ => None,
        },
        k => path_of(k).map(|p| (p.points.clone(), p.bulges.clone(), false)),
    }
}

/// Edge `i` of an editable polyline.
pub fn poly_edge(points: &[Point], bulges: &[f64], closed: bool, i: usize) -> Option<Edge> {
    let n = points.len();
    let j = if closed { (i + 1) % n } else { i + 1 };
    if i >= n || j >= n {
        return None;
    }
    Some(Edge { a: to_vec(points[i]), b: to_vec(points[j]), bulge: bulges.get(i).copied().unwrap_or(0.0) })
}

pub fn n_edges(points: &[Point], closed: bool) -> usize {
    if closed { points.len() } else { points.len().saturating_sub(1) }
}

/// Geometry of every object, in scene order.
pub fn scene_geometry(scene: &Scene) -> Vec<ObjectGeom> {
    scene.objects.iter().map(|o| object_geometry(o.id, &o.kind)).collect()
}

pub fn object_geometry(id: u64, kind: &ObjectKind) -> ObjectGeom {
    let mut g = ObjectGeom { id, outline: None, lines: Vec::new(), points: Vec::new(), bounds: Aabb::EMPTY };
    match kind {
        ObjectKind::Solid(s) => {
            if let Ok(o) = s.shape.outline() {
                let mut pts = vec![o.vertices.first().copied().unwrap_or_default()];
                for e in o.edges() {
                    flatten_into(&e, &mut pts);
                }
                g.lines.push(pts);
                g.outline = Some(o);
            }
        }
        ObjectKind::PointSource(p) => g.points.push(to_vec(p.position)),
        ObjectKind::BeamSource(b) => {
            let (s, c) = b.direction_deg.to_radians().sin_cos();
            let h = b.width / 2.0;
            let a = Vec2::new(b.center.0 - s * h, b.center.1 + c * h);
            let e = Vec2::new(b.center.0 + s * h, b.center.1 - c * h);
            g.lines.push(vec![a, e]);
            g.points.push(to_vec(b.center));
        }
        ObjectKind::LambertianSource(l) => g.lines.push(vec![to_vec(l.a), to_vec(l.b)]),
        k => {
            if let Some(p) = path_of(k) {
                let mut pts = vec![p.points.first().map(|&q| to_vec(q)).unwrap_or_default()];
                for e in p.edges() {
                    flatten_into(&e, &mut pts);
                }
                g.lines.push(pts);
            }
        }
    }
    for p in g.lines.iter().flatten().chain(&g.points) {
        if p.x.is_finite() && p.y.is_finite() {
            g.bounds.include(*p);
        }
    }
    g
}

/// Distance from `p` to the segment `a`–`b`.
pub fn segment_distance(p: Vec2, a: Vec2, b: Vec2) -> f64 {
    let d = b - a;
    let len2 = d.norm_squared();
    let t = if len2 > 0.0 { ((p - a).dot(&d) / len2).clamp(0.0, 1.0) } else { 0.0 };
    (a + d * t - p).norm()
}

/// Distance from `p` to the object's lines and points (0 inside a solid).
pub fn distance_to(g: &ObjectGeom, p: Vec2) -> f64 {
    if g.outline.as_ref().is_some_and(|o| o.contains(p)) {
        return 0.0;
    }
    let mut best = f64::INFINITY;
    for line in &g.lines {
        for w in line.windows(2) {
            best = best.min(segment_distance(p, w[0], w[1]));
        }
    }
    for q in &g.points {
        best = best.min((q - p).norm());
    }
    best
}

/// The object under `p` within `tolerance_mm`: thin elements and sources first (they lie on
/// top), then the innermost (last drawn) solid.
pub fn object_at(geoms: &[ObjectGeom], scene: &Scene, p: Vec2, tolerance_mm: f64) -> Option<u64> {
    let thin = geoms
        .iter()
        .zip(&scene.objects)
        .filter(|(_, o)| !matches!(o.kind, ObjectKind::Solid(_)))
        .map(|(g, _)| (g.id, distance_to(g, p)))
        .filter(|(_, d)| *d <= tolerance_mm)
        .min_by(|a, b| a.1.total_cmp(&b.1));
    if let Some((id, _)) = thin {
        return Some(id);
    }
    // A solid edge within tolerance, or the smallest solid containing the point.
    geoms
        .iter()
        .filter(|g| g.outline.is_some())
        .filter(|g| distance_to(g, p) <= tolerance_mm)
        .min_by(|a, b| {
            let area = |g: &ObjectGeom| g.outline.as_ref().map_or(0.0, |o| o.signed_area().abs());
            area(a).total_cmp(&area(b))
        })
        .map(|g| g.id)
}

/// Objects whose bounds lie wholly inside the box.
pub fn objects_in_box(geoms: &[ObjectGeom], a: Vec2, b: Vec2) -> Vec<u64> {
    let bx = Aabb::from_points([a, b]);
    geoms
        .iter()
        .filter(|g| !g.bounds.is_empty() && bx.contains(g.bounds.min) && bx.contains(g.bounds.max))
        .map(|g| g.id)
        .collect()
}

/// The bulge that makes the arc over `a`–`b` pass through `m` at its middle: the sagitta
/// over half the chord, positive when `m` lies to the right of a → b.
pub fn bulge_through(a: Vec2, b: Vec2, m: Vec2) -> f64 {
    let d = b - a;
    let c2 = d.norm_squared();
    if c2 <= 0.0 {
        return 0.0;
    }
    let left = crate::geom::cross(d, m - a);
    (-2.0 * left / c2).clamp(-8.0, 8.0)
}

/// The nearest edge of an editable polyline to `p` and the distance, in mm.
pub fn nearest_edge(points: &[Point], bulges: &[f64], closed: bool, p: Vec2) -> Option<(usize, f64)> {
    (0..n_edges(points, closed))
        .filter_map(|i| {
            let e = poly_edge(points, bulges, closed, i)?;
            let mut pts = vec![e.a];
            flatten_into(&e, &mut pts);
            let d = pts.windows(2).map(|w| segment_distance(p, w[0], w[1])).fold(f64::INFINITY, f64::min);
            Some((i, d))
        })
        .min_by(|a, b| a.1.total_cmp(&b.1))
}
