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

#[cfg(test)]
mod tests {
    use std::f64::consts::TAU;

    use super::*;
    use crate::geom::unit;
    use crate::rng::Rng;

    fn v(x: f64, y: f64) -> Vec2 {
        Vec2::new(x, y)
    }

    #[test]
    fn point_beside_a_segment_projects_perpendicularly_and_beyond_its_end_to_the_end() {
        let e = Edge::segment(v(0.0, 0.0), v(4.0, 0.0));
        assert_eq!(e.project(v(1.0, 2.0)), EdgeProjection { point: v(1.0, 0.0), param: 0.25, distance_mm: 2.0 });
        assert_eq!(e.project(v(7.0, 4.0)), EdgeProjection { point: v(4.0, 0.0), param: 1.0, distance_mm: 5.0 });
        let dot = Edge::segment(v(1.0, 1.0), v(1.0, 1.0));
        assert_eq!(dot.project(v(4.0, 5.0)).distance_mm, 5.0);
    }

    #[test]
    fn point_inside_an_arc_projects_radially_and_its_centre_to_the_start() {
        // Upper half of the circle of radius 2 about the origin, from (2, 0) to (−2, 0).
        let e = Edge { a: v(2.0, 0.0), b: v(-2.0, 0.0), bulge: 1.0 };
        let p = e.project(v(0.0, 1.0));
        assert!((p.point - v(0.0, 2.0)).norm() < 1e-15 && (p.param - 0.5).abs() < 1e-15);
        assert!((p.distance_mm - 1.0).abs() < 1e-15);
        let p = e.project(v(0.0, 5.0));
        assert!((p.distance_mm - 3.0).abs() < 1e-15);
        // Below the chord the nearest point is an end.
        let p = e.project(v(1.0, -1.0));
        assert_eq!((p.point, p.param), (v(2.0, 0.0), 0.0));
        assert_eq!(e.project(v(0.0, 0.0)).param, 0.0);
    }

    #[test]
    fn non_finite_point_gives_non_finite_distance() {
        let e = Edge { a: v(2.0, 0.0), b: v(-2.0, 0.0), bulge: 1.0 };
        assert!(!e.project(v(f64::NAN, 0.0)).distance_mm.is_finite());
        assert!(!Edge::segment(v(0.0, 0.0), v(1.0, 0.0)).project(v(f64::INFINITY, 0.0)).distance_mm.is_finite());
    }

    /// Random edges (straight, shallow, half, nearly full arcs) and random points: the
    /// projection is on the edge, at its parameter, and no farther than the nearest of 5 000
    /// points sampled along the edge (and nearer than it by at most the sample spacing).
    #[test]
    fn projection_matches_dense_sampling() {
        let mut rng = Rng::new(21);
        for case in 0..200 {
            let a = v(rng.uniform() * 20.0 - 10.0, rng.uniform() * 20.0 - 10.0);
            let b = a + unit(rng.uniform() * TAU) * (0.1 + rng.uniform() * 10.0);
            let bulge = match case % 4 {
                0 => 0.0,
                1 => (rng.uniform() - 0.5) * 0.2,
                2 => (rng.uniform() - 0.5) * 4.0,
                _ => (if rng.uniform() < 0.5 { -1.0 } else { 1.0 }) * (10.0 + rng.uniform() * 990.0),
            };
            let e = Edge { a, b, bulge };
            let n = 5_000;
            let samples: Vec<Vec2> = (0..=n).map(|k| e.point_at(f64::from(k) / f64::from(n))).collect();
            let spacing = e.length() / f64::from(n);
            for _ in 0..20 {
                let p = v(rng.uniform() * 40.0 - 20.0, rng.uniform() * 40.0 - 20.0);
                let got = e.project(p);
                let brute = samples.iter().map(|q| (q - p).norm()).fold(f64::INFINITY, f64::min);
                assert!(got.distance_mm <= brute + 1e-9, "case {case}: {} > {brute}", got.distance_mm);
                assert!(got.distance_mm >= brute - spacing, "case {case}: {} < {brute}", got.distance_mm);
                assert!(((got.point - p).norm() - got.distance_mm).abs() < 1e-9, "case {case}");
                assert!((e.point_at(got.param) - got.point).norm() < 1e-9, "case {case}");
            }
        }
    }
}
