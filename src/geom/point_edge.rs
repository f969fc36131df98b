//! The point of an edge (segment or arc) nearest to a given point, and its distance: what
//! picking in the editor and [`Edge::param_of`] are built on.

use std::f64::consts::TAU;

use super::{Edge, Vec2, cross};

/// The point of an edge nearest to a query point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EdgeProjection {
    /// The nearest point on the edge, mm.
    pub point: Vec2,
    /// Its fraction along the edge, in `[0, 1]`, as in [`Edge::point_at`].
    pub param: f64,
    /// Distance from the query point to `point`, mm.
    pub distance_mm: f64,
}

/// The point of `edge` nearest to `p`, with its parameter and distance.
///
/// For an arc, a point whose direction from the centre falls within the arc projects
/// radially onto it; any other point (and the centre itself) is nearest to the closer end.
/// Everything is computed relative to the arc's start point, so nearly straight arcs (far
/// centres) keep their digits. Non-finite input gives a non-finite distance, never a panic.
pub fn project_point_on_edge(edge: &Edge, p: Vec2) -> EdgeProjection {
    let Some(arc) = edge.arc_ray() else {
        let d = edge.b - edge.a;
        let l2 = d.norm_squared();
        let param = if l2 > 0.0 { ((p - edge.a).dot(&d) / l2).clamp(0.0, 1.0) } else { 0.0 };
        let point = if param == 1.0 { edge.b } else { edge.a + d * param };
        return EdgeProjection { point, param, distance_mm: (p - point).norm() };
    };
    let v = arc.a_from_center;
    let pa = p - edge.a;
    let w = pa + v;
    let sweep = edge.sweep();
    // Angle from the start direction to p's direction, turned into the sense of the sweep.
    let mut ang = cross(v, pa).atan2(v.norm_squared() + v.dot(&pa));
    if sweep > 0.0 && ang < 0.0 {
        ang += TAU;
    } else if sweep < 0.0 && ang > 0.0 {
        ang -= TAU;
    }
    let u = ang / sweep;
    let wn = w.norm();
    if (0.0..=1.0).contains(&u) && wn > 0.0 {
        // Signed distance beyond the circle: |w| − R = (|w|² − R²) / (|w| + R).
        let beyond = (pa.norm_squared() + 2.0 * pa.dot(&v)) / (wn + v.norm());
        return EdgeProjection { point: p - w * (beyond / wn), param: u, distance_mm: beyond.abs() };
    }
    let (da, db) = ((p - edge.a).norm(), (p - edge.b).norm());
    if db < da {
        EdgeProjection { point: edge.b, param: 1.0, distance_mm: db }
    } else {
        EdgeProjection { point: edge.a, param: 0.0, distance_mm: da }
    }
}

impl Edge {
    /// The point of this edge nearest to `p`; see [`project_point_on_edge`].
    pub fn project(&self, p: Vec2) -> EdgeProjection {
        project_point_on_edge(self, p)
    }

    /// Distance from `p` to the nearest point of this edge, mm.
    pub fn distance_to(&self, p: Vec2) -> f64 {
        project_point_on_edge(self, p).distance_mm
    }
}
