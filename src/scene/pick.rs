//! Picking for the editor: which vertex, edge, bend handle, object or source handle lies
//! nearest a point of the scene, and which objects a box holds or touches.
//!
//! Conventions:
//! - Points, distances and tolerances are in scene millimetres. Every `nearest_*` query
//!   takes a tolerance and answers `None` when nothing lies within it. Ties go to the object
//!   that comes first in `scene.objects` (and within it to the lower index).
//! - Indices are in file order. For a free outline (`Shape::Outline`) and a thin element's
//!   path they index the object's own `points`; edge `i` runs from point `i` to point
//!   `i + 1` (wrapping round for an outline). A primitive lists no points in the file, so
//!   its indices are those of its generated outline ([`Shape::outline`]), and the result
//!   says so with [`IndexSpace::PrimitiveOutline`].
//! - Objects whose geometry cannot be built (a primitive with impossible parameters) are
//!   skipped; a free outline is picked from its points even when it fails validation, so the
//!   user can reach it to mend it.
//!
//! Every query is one linear pass over the edges of the objects whose bounding box lies
//! within the tolerance of the point. Generating the outlines of primitives costs more
//! than the pass, so an editor asking many questions of one scene revision builds a
//! [`PickGeometry`] once and asks it; the free functions build one per call.
//! `benches/pick.rs` measures both.

use crate::geom::{Aabb, Edge, Outline, Vec2, perp, unit};

use super::{Object, ObjectKind, Scene, Shape, to_vec};

/// Which list a vertex or edge index counts in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum IndexSpace {
    /// The object's own `points` in the file: a free outline's or a thin element's path's.
    FilePoints,
    /// The vertices of a primitive's generated outline, counter-clockwise, which the file
    /// does not list. Editing one means turning the primitive into a free outline first
    /// ([`Shape::to_free`] keeps this order).
    PrimitiveOutline,
}

/// The vertex nearest the query point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct VertexPick {
    pub object_id: u64,
    pub vertex_idx: usize,
    pub index_space: IndexSpace,
    /// Where the vertex is, mm.
    pub point: Vec2,
    pub distance_mm: f64,
}

/// The edge nearest the query point, with the nearest point on it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EdgePick {
    pub object_id: u64,
    pub edge_idx: usize,
    pub index_space: IndexSpace,
    /// The point of the edge nearest the query point, mm.
    pub point: Vec2,
    /// Its fraction along the edge (0 at its first vertex, 1 at its second), as
    /// [`Edge::point_at`].
    pub param: f64,
    pub distance_mm: f64,
}

/// The bend handle nearest the query point: the midpoint of an edge (straight or arc), which
/// the user drags to bend the edge.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BendHandlePick {
    pub object_id: u64,
    pub edge_idx: usize,
    pub index_space: IndexSpace,
    /// The midpoint of the edge, mm.
    pub point: Vec2,
    pub distance_mm: f64,
}

/// The object nearest the query point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ObjectPick {
    pub object_id: u64,
    /// The nearest point of the object: the query point itself inside a solid, else the
    /// nearest point of its outline, path or source geometry.
    pub point: Vec2,
    /// 0 inside a solid.
    pub distance_mm: f64,
    /// Whether the query point is inside the (solid) object.
    pub inside: bool,
}

/// A draggable handle of a source.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SourceHandle {
    /// A point source's position.
    PointPosition,
    /// The end of a point source's angular range at `start_deg`, one handle length out.
    RangeStart,
    /// The end at `end_deg`.
    RangeEnd,
    /// A beam's centre.
    BeamCenter,
    /// The end of a beam's width to the left of its direction of travel.
    BeamEndLeft,
    /// The end to the right.
    BeamEndRight,
    /// One handle length from the centre along the direction of travel.
    BeamDirection,
    /// A Lambertian emitter's first end, `a`.
    LambertianA,
    /// Its second end, `b`.
    LambertianB,
}

/// The source handle nearest the query point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SourceHandlePick {
    pub object_id: u64,
    pub handle: SourceHandle,
    /// Where the handle is, mm.
    pub point: Vec2,
    pub distance_mm: f64,
}

/// The handles of a source object, in a fixed order (empty for anything else). Direction
/// handles sit `handle_length_mm` from the point they turn about; the editor chooses that
/// length (say, a fixed number of screen pixels converted to mm).
pub fn source_handles(object: &Object, handle_length_mm: f64) -> Vec<(SourceHandle, Vec2)> {
    match &object.kind {
        ObjectKind::PointSource(s) => {
            let p = to_vec(s.position);
            vec![
                (SourceHandle::PointPosition, p),
                (SourceHandle::RangeStart, p + unit(s.start_deg.to_radians()) * handle_length_mm),
                (SourceHandle::RangeEnd, p + unit(s.end_deg.to_radians()) * handle_length_mm),
            ]
        }
        ObjectKind::BeamSource(b) => {
            let c = to_vec(b.center);
            let d = unit(b.direction_deg.to_radians());
            let half = perp(d) * (b.width * 0.5);
            vec![
                (SourceHandle::BeamCenter, c),
                (SourceHandle::BeamEndLeft, c + half),
                (SourceHandle::BeamEndRight, c - half),
                (SourceHandle::BeamDirection, c + d * handle_length_mm),
            ]
        }
        ObjectKind::LambertianSource(l) => {
            vec![(SourceHandle::LambertianA, to_vec(l.a)), (SourceHandle::LambertianB, to_vec(l.b))]
        }
        _ => Vec::new(),
    }
}

/// The pickable geometry of a scene: every object's vertices and edges in file order, a
/// solid's outline and area, and each object's bounding box. Building it generates the
/// outlines of the primitives (the costly part for a plate with thousands of notches);
/// the editor builds it once per scene revision and asks it many questions. The free
/// functions of this module build one for a single question.
#[derive(Clone, Debug, Default)]
pub struct PickGeometry {
    objects: Vec<ObjectGeometry>,
}

/// What one object is made of, for picking.
#[derive(Clone, Debug)]
struct ObjectGeometry {
    object_id: u64,
    /// Vertices in file order (empty for a source).
    vertices: Vec<Vec2>,
    /// Edges in file order; for a source, the segments that stand for it.
    edges: Vec<Edge>,
    /// Whether vertices and edges can be edited (not a source).
    editable: bool,
    index_space: IndexSpace,
    /// For a solid, the closed outline in file order, and its area.
    solid: Option<(Outline, f64)>,
    /// Box around all edges.
    bounds: Aabb,
}

impl PickGeometry {
    /// Collects the geometry of every object of `scene`. Primitives whose outline cannot be
    /// built are left out; a free outline is kept even when it fails validation.
    pub fn new(scene: &Scene) -> Self {
        Self { objects: scene.objects.iter().filter_map(object_geometry).collect() }
    }

    /// Objects whose box, grown by `r`, holds `p`.
    fn near(&self, p: Vec2, r: f64) -> impl Iterator<Item = &ObjectGeometry> {
        self.objects.iter().filter(move |g| g.bounds.expanded(r).contains(p))
    }

    /// The vertex of a solid or thin element nearest `p`, within `tolerance_mm`.
    pub fn nearest_vertex(&self, p: Vec2, tolerance_mm: f64) -> Option<VertexPick> {
        let mut best = None;
        for g in self.near(p, tolerance_mm).filter(|g| g.editable) {
            for (vertex_idx, &v) in g.vertices.iter().enumerate() {
                keep_nearer(&mut best, (v - p).norm(), tolerance_mm, || VertexPick {
                    object_id: g.object_id,
                    vertex_idx,
                    index_space: g.index_space,
                    point: v,
                    distance_mm: 0.0,
                });
            }
        }
        best.map(|(d, pick)| VertexPick { distance_mm: d, ..pick })
    }

    /// The edge of a solid or thin element nearest `p`, within `tolerance_mm`, with the
    /// nearest point on it.
    pub fn nearest_edge(&self, p: Vec2, tolerance_mm: f64) -> Option<EdgePick> {
        let mut best = None;
        for g in self.near(p, tolerance_mm).filter(|g| g.editable) {
            for (edge_idx, e) in g.edges.iter().enumerate() {
                if !could_be_within(e, p, tolerance_mm) {
                    continue;
                }
                let proj = e.project(p);
                keep_nearer(&mut best, proj.distance_mm, tolerance_mm, || EdgePick {
                    object_id: g.object_id,
                    edge_idx,
                    index_space: g.index_space,
                    point: proj.point,
                    param: proj.param,
                    distance_mm: proj.distance_mm,
                });
            }
        }
        best.map(|(_, pick)| pick)
    }

    /// The bend handle (edge midpoint) of a solid or thin element nearest `p`, within
    /// `tolerance_mm`.
    pub fn nearest_bend_handle(&self, p: Vec2, tolerance_mm: f64) -> Option<BendHandlePick> {
        let mut best = None;
        for g in self.near(p, tolerance_mm).filter(|g| g.editable) {
            for (edge_idx, e) in g.edges.iter().enumerate() {
                let mid = e.point_at(0.5);
                keep_nearer(&mut best, (mid - p).norm(), tolerance_mm, || BendHandlePick {
                    object_id: g.object_id,
                    edge_idx,
                    index_space: g.index_space,
                    point: mid,
                    distance_mm: 0.0,
                });
            }
        }
        best.map(|(d, pick)| BendHandlePick { distance_mm: d, ..pick })
    }

    /// The object nearest `p`, within `tolerance_mm`; see [`nearest_object`].
    pub fn nearest_object(&self, p: Vec2, tolerance_mm: f64) -> Option<ObjectPick> {
        // Ranked by (distance, area); thin elements and sources have area 0.
        let mut best: Option<((f64, f64), ObjectPick)> = None;
        let better = |key: (f64, f64), best: &Option<((f64, f64), ObjectPick)>| {
            best.as_ref().is_none_or(|(k, _)| key.0 < k.0 || (key.0 == k.0 && key.1 < k.1))
        };
        for g in self.near(p, tolerance_mm) {
            let area = g.solid.as_ref().map_or(0.0, |(_, area)| *area);
            if let Some((outline, _)) = &g.solid
                && outline.contains(p)
            {
                if better((0.0, area), &best) {
                    let pick = ObjectPick { object_id: g.object_id, point: p, distance_mm: 0.0, inside: true };
                    best = Some(((0.0, area), pick));
                }
                continue;
            }
            let mut nearest: Option<(f64, Vec2)> = None;
            for e in &g.edges {
                let radius = nearest.map_or(tolerance_mm, |(d, _)| d.min(tolerance_mm));
                if !could_be_within(e, p, radius) {
                    continue;
                }
                let proj = e.project(p);
                if proj.distance_mm <= tolerance_mm && nearest.is_none_or(|(d, _)| proj.distance_mm < d) {
                    nearest = Some((proj.distance_mm, proj.point));
                }
            }
            let Some((d, point)) = nearest else { continue };
            if better((d, area), &best) {
                best = Some(((d, area), ObjectPick { object_id: g.object_id, point, distance_mm: d, inside: false }));
            }
        }
        best.map(|(_, pick)| pick)
    }

    /// Ids of the objects lying wholly inside `bb`; see [`objects_in_box`].
    pub fn objects_in_box(&self, bb: &Aabb) -> Vec<u64> {
        self.objects
            .iter()
            .filter(|g| !g.edges.is_empty() && bb.contains(g.bounds.min) && bb.contains(g.bounds.max))
            .map(|g| g.object_id)
            .collect()
    }

    /// Ids of the objects that `bb` touches; see [`objects_touching_box`].
    pub fn objects_touching_box(&self, bb: &Aabb) -> Vec<u64> {
        if bb.is_empty() {
            return Vec::new();
        }
        self.objects
            .iter()
            .filter(|g| {
                g.bounds.overlaps(bb)
                    && (g.edges.iter().any(|e| edge_touches_box(e, bb))
                        || g.solid.as_ref().is_some_and(|(o, _)| o.contains(bb.center())))
            })
            .map(|g| g.object_id)
            .collect()
    }
}

/// The geometry of one object; `None` for a primitive whose outline cannot be built.
fn object_geometry(object: &Object) -> Option<ObjectGeometry> {
    let path = match &object.kind {
        ObjectKind::Solid(s) => return solid_geometry(object.id, &s.shape),
        ObjectKind::Mirror(m) => &m.path,
        ObjectKind::Absorber(a) => &a.path,
        ObjectKind::Splitter(s) => &s.path,
        ObjectKind::Detector(d) => &d.path,
        ObjectKind::PointSource(_) | ObjectKind::BeamSource(_) | ObjectKind::LambertianSource(_) => {
            let edges = source_edges(object);
            return Some(ObjectGeometry {
                object_id: object.id,
                vertices: Vec::new(),
                bounds: bounds(&edges),
                edges,
                editable: false,
                index_space: IndexSpace::FilePoints,
                solid: None,
            });
        }
    };
    let edges = path.edges();
    Some(ObjectGeometry {
        object_id: object.id,
        vertices: path.points.iter().map(|&p| to_vec(p)).collect(),
        bounds: bounds(&edges),
        edges,
        editable: true,
        index_space: IndexSpace::FilePoints,
        solid: None,
    })
}

fn solid_geometry(object_id: u64, shape: &Shape) -> Option<ObjectGeometry> {
    let (outline, index_space) = match shape {
        // The file's own order: `Shape::outline` would turn a clockwise outline round.
        Shape::Outline { points, bulges } => {
            let vertices: Vec<Vec2> = points.iter().map(|&p| to_vec(p)).collect();
            let bulges = (0..vertices.len()).map(|i| bulges.get(i).copied().unwrap_or(0.0)).collect();
            (Outline { vertices, bulges }, IndexSpace::FilePoints)
        }
        _ => (shape.outline().ok()?, IndexSpace::PrimitiveOutline),
    };
    let edges: Vec<Edge> = outline.edges().collect();
    let area = outline.signed_area().abs();
    Some(ObjectGeometry {
        object_id,
        vertices: outline.vertices.clone(),
        bounds: bounds(&edges),
        edges,
        editable: true,
        index_space,
        solid: Some((outline, area)),
    })
}

fn bounds(edges: &[Edge]) -> Aabb {
    edges.iter().fold(Aabb::EMPTY, |bb, e| bb.union(&e.aabb()))
}

/// The segments (possibly of zero length) that stand for a source when measuring distance
/// to it: a point source's position, a beam's width, a Lambertian emitter's face.
fn source_edges(object: &Object) -> Vec<Edge> {
    match &object.kind {
        ObjectKind::PointSource(s) => vec![Edge::segment(to_vec(s.position), to_vec(s.position))],
        ObjectKind::BeamSource(b) => {
            let c = to_vec(b.center);
            let half = perp(unit(b.direction_deg.to_radians())) * (b.width * 0.5);
            vec![Edge::segment(c - half, c + half)]
        }
        ObjectKind::LambertianSource(l) => vec![Edge::segment(to_vec(l.a), to_vec(l.b))],
        _ => Vec::new(),
    }
}

/// Keeps `best` as the candidate with the smallest distance within `tolerance_mm`; NaN
/// distances never win, and an equal distance does not replace an earlier candidate.
fn keep_nearer<T>(best: &mut Option<(f64, T)>, distance_mm: f64, tolerance_mm: f64, candidate: impl FnOnce() -> T) {
    if distance_mm <= tolerance_mm && best.as_ref().is_none_or(|(d, _)| distance_mm < *d) {
        *best = Some((distance_mm, candidate()));
    }
}

/// A cheap reject: a straight edge whose end points' box, grown by `r`, misses `p` is farther
/// than `r`. Arcs always go on to the exact test.
#[inline]
fn could_be_within(e: &Edge, p: Vec2, r: f64) -> bool {
    e.is_arc() || Aabb::from_points([e.a, e.b]).expanded(r).contains(p) || !r.is_finite()
}

/// The vertex of a solid or thin element nearest `p`, within `tolerance_mm`.
pub fn nearest_vertex(scene: &Scene, p: Vec2, tolerance_mm: f64) -> Option<VertexPick> {
    PickGeometry::new(scene).nearest_vertex(p, tolerance_mm)
}

/// The edge of a solid or thin element nearest `p`, within `tolerance_mm`, with the nearest
/// point on it.
pub fn nearest_edge(scene: &Scene, p: Vec2, tolerance_mm: f64) -> Option<EdgePick> {
    PickGeometry::new(scene).nearest_edge(p, tolerance_mm)
}

/// The bend handle (edge midpoint) of a solid or thin element nearest `p`, within
/// `tolerance_mm`.
pub fn nearest_bend_handle(scene: &Scene, p: Vec2, tolerance_mm: f64) -> Option<BendHandlePick> {
    PickGeometry::new(scene).nearest_bend_handle(p, tolerance_mm)
}

/// The object nearest `p`, within `tolerance_mm`. A point inside a solid is at distance 0
/// from it; when several solids contain the point (nesting, overlap) the one with the
/// smallest area wins, and a thin element or source passing exactly through the point wins
/// over the solids around it. Otherwise the nearest outline, path or source geometry wins
/// (a point source is its position, a beam the segment across its width, a Lambertian
/// emitter its face).
pub fn nearest_object(scene: &Scene, p: Vec2, tolerance_mm: f64) -> Option<ObjectPick> {
    PickGeometry::new(scene).nearest_object(p, tolerance_mm)
}

/// The source handle nearest `p`, within `tolerance_mm`; see [`source_handles`] for where
/// the handles are. (Cheap: it needs no outlines, so there is no [`PickGeometry`] form.)
pub fn nearest_source_handle(
    scene: &Scene,
    p: Vec2,
    tolerance_mm: f64,
    handle_length_mm: f64,
) -> Option<SourceHandlePick> {
    let mut best = None;
    for object in scene.objects.iter().filter(|o| o.kind.is_source()) {
        for (handle, point) in source_handles(object, handle_length_mm) {
            keep_nearer(&mut best, (point - p).norm(), tolerance_mm, || SourceHandlePick {
                object_id: object.id,
                handle,
                point,
                distance_mm: 0.0,
            });
        }
    }
    best.map(|(d, pick)| SourceHandlePick { distance_mm: d, ..pick })
}

/// Ids of the objects lying wholly inside `bb` (outline, path or source geometry; a
/// source's direction handles do not count), in scene order.
pub fn objects_in_box(scene: &Scene, bb: &Aabb) -> Vec<u64> {
    PickGeometry::new(scene).objects_in_box(bb)
}

/// Ids of the objects that `bb` touches: an edge, path or source geometry meets the box, or
/// the box lies inside a solid. In scene order.
pub fn objects_touching_box(scene: &Scene, bb: &Aabb) -> Vec<u64> {
    PickGeometry::new(scene).objects_touching_box(bb)
}

/// Whether an edge meets a (non-empty) box: an end inside it, or a crossing of one of its
/// sides. An edge inside the box has its ends inside, so nothing is missed.
fn edge_touches_box(e: &Edge, bb: &Aabb) -> bool {
    if bb.contains(e.a) || bb.contains(e.b) {
        return true;
    }
    if !e.aabb().overlaps(bb) {
        return false;
    }
    let corners = [bb.min, Vec2::new(bb.max.x, bb.min.y), bb.max, Vec2::new(bb.min.x, bb.max.y)];
    (0..4).any(|k| {
        let (from, to) = (corners[k], corners[(k + 1) % 4]);
        let len = (to - from).norm();
        // Slightly beyond both corners, so an edge through a corner counts.
        let slack = 1e-12 * len.max(1.0);
        len > 0.0 && e.cast(from, (to - from) / len, -slack, len + slack).is_some()
    })
}
