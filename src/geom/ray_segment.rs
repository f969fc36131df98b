//! Ray against a straight segment: the one routine behind [`Edge::cast`](super::Edge::cast)
//! and the BVH.

use super::{Vec2, cross};

/// Tolerance on the segment parameter, so that a ray through a shared vertex hits both edges.
pub(crate) const SEGMENT_PARAM_TOL: f64 = 1e-12;

/// Distance `t` along the ray `origin + t·dir` at which it crosses the segment from `a` to
/// `a + d`, for `t` strictly inside `(t_min, t_max)`; `None` on a miss.
///
/// A ray parallel to the segment never hits it, including a ray running along it (it grazes
/// the face; the edges at the ends are what it meets). Non-finite input gives `None`: every
/// comparison with NaN fails.
#[inline]
pub fn ray_segment(origin: Vec2, dir: Vec2, a: Vec2, d: Vec2, t_min: f64, t_max: f64) -> Option<f64> {
    let denom = cross(dir, d);
    if denom == 0.0 {
        return None;
    }
    let ao = a - origin;
    let t = cross(ao, d) / denom;
    if !(t > t_min && t < t_max) {
        return None;
    }
    let s = cross(ao, dir) / denom;
    if (-SEGMENT_PARAM_TOL..=1.0 + SEGMENT_PARAM_TOL).contains(&s) { Some(t) } else { None }
}

/// The unit right normal of a segment running along `d` (zero for a zero-length segment).
/// The right normal of an arc at a point is [`ArcRay::normal_at`](super::ArcRay::normal_at);
/// together they are the only normal formulas in the crate.
#[inline]
pub fn right_normal(d: Vec2) -> Vec2 {
    let len = d.norm();
    if len > 0.0 { Vec2::new(d.y, -d.x) / len } else { Vec2::zeros() }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64, y: f64) -> Vec2 {
        Vec2::new(x, y)
    }

    #[test]
    fn perpendicular_ray_hits_in_the_middle() {
        let t = ray_segment(v(1.0, -2.0), v(0.0, 1.0), v(0.0, 0.0), v(2.0, 0.0), 0.0, f64::INFINITY);
        assert_eq!(t, Some(2.0));
    }

    #[test]
    fn collinear_ray_along_segment_misses() {
        // Starting before, on, or inside the segment: a ray along it grazes, never hits.
        for o in [v(-1.0, 0.0), v(0.0, 0.0), v(0.5, 0.0)] {
            assert_eq!(ray_segment(o, v(1.0, 0.0), v(0.0, 0.0), v(2.0, 0.0), -1.0, f64::INFINITY), None);
        }
    }

    #[test]
    fn ray_parallel_at_a_distance_misses() {
        for gap in [1e-12, 1e-6, 1.0] {
            assert_eq!(ray_segment(v(-1.0, gap), v(1.0, 0.0), v(0.0, 0.0), v(2.0, 0.0), 0.0, f64::INFINITY), None);
        }
    }

    #[test]
    fn ray_starting_on_segment_hits_at_zero_only_if_range_allows() {
        let (o, d) = (v(1.0, 0.0), v(0.0, 1.0));
        assert_eq!(ray_segment(o, d, v(0.0, 0.0), v(2.0, 0.0), 1e-9, f64::INFINITY), None);
        assert_eq!(ray_segment(o, d, v(0.0, 0.0), v(2.0, 0.0), -1.0, f64::INFINITY), Some(0.0));
    }

    #[test]
    fn ray_through_shared_vertex_hits_both_segments() {
        let (o, d) = (v(1.0, 5.0), v(0.0, -1.0));
        assert!(ray_segment(o, d, v(0.0, 0.0), v(1.0, 1.0), 0.0, f64::INFINITY).is_some());
        assert!(ray_segment(o, d, v(1.0, 1.0), v(1.0, -1.0), 0.0, f64::INFINITY).is_some());
    }

    #[test]
    fn range_is_open_at_both_ends() {
        let (o, d) = (v(1.0, -2.0), v(0.0, 1.0));
        assert_eq!(ray_segment(o, d, v(0.0, 0.0), v(2.0, 0.0), 2.0, 3.0), None);
        assert_eq!(ray_segment(o, d, v(0.0, 0.0), v(2.0, 0.0), 1.0, 2.0), None);
    }

    #[test]
    fn nan_and_zero_length_miss() {
        assert_eq!(ray_segment(v(f64::NAN, 0.0), v(0.0, 1.0), v(0.0, 0.0), v(2.0, 0.0), 0.0, 9.0), None);
        assert_eq!(ray_segment(v(0.0, -1.0), v(0.0, 1.0), v(0.0, 0.0), v(0.0, 0.0), 0.0, 9.0), None);
        assert_eq!(right_normal(v(0.0, 0.0)), v(0.0, 0.0));
    }

    #[test]
    fn right_normal_points_right_of_travel() {
        assert_eq!(right_normal(v(2.0, 0.0)), v(0.0, -1.0));
        assert_eq!(right_normal(v(0.0, 3.0)), v(1.0, 0.0));
    }
}
