//! Ray against a circular arc: the one routine behind [`Edge::cast`](super::Edge::cast),
//! [`Edge::cast_from_self`](super::Edge::cast_from_self) and the BVH.
//!
//! The circle is written relative to the arc's start point `a` rather than to its centre:
//! `|o − c|² − R² = |o − a|² + 2 (o − a)·(a − c)`. For a nearly straight arc the centre is
//! far away (R ≈ chord / (4·bulge), 2.5·10⁹ mm for a 10 mm chord and a bulge of 10⁻⁹) and the
//! textbook form loses every digit to cancellation; this form keeps the error at rounding of
//! the distances near the arc.

use super::{Vec2, cross};

/// Tolerance of [`ArcRay::contains_on_circle`]: 10⁻¹² of the chord, in distance from the
/// chord line.
const CHORD_SIDE_TOL: f64 = 1e-12;

/// A circular arc set up for ray tests.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ArcRay {
    /// The arc's start point.
    pub a: Vec2,
    /// The chord, end point minus start point.
    pub chord: Vec2,
    /// The start point seen from the centre (`a − centre`); its length is the radius.
    pub a_from_center: Vec2,
    pub radius: f64,
    /// +1 if the arc bows to the right of its chord (positive bulge), −1 otherwise.
    pub side: f64,
}

impl ArcRay {
    pub fn new(a: Vec2, chord: Vec2, center: Vec2, radius: f64, side: f64) -> Self {
        Self { a, chord, a_from_center: a - center, radius, side }
    }

    /// `p − centre`, computed from the start point so that it keeps its digits for a far centre.
    #[inline]
    pub fn from_center(&self, p: Vec2) -> Vec2 {
        (p - self.a) + self.a_from_center
    }

    /// Whether a point on the arc's circle lies on the arc rather than on the rest of the
    /// circle. The chord splits the circle into two arcs, each wholly on one side of it; the
    /// arc is the one on its bulge side. The tolerance keeps the end points.
    #[inline]
    pub fn contains_on_circle(&self, p: Vec2) -> bool {
        // `s` is the chord length times the distance from the chord line; scaling the
        // tolerance with the radius would let nearly straight arcs accept points beyond their ends.
        let s = cross(self.chord, p - self.a);
        s * self.side <= CHORD_SIDE_TOL * self.chord.norm_squared()
    }

    /// The unit right normal at a point of the arc: radial, outward from the centre for a
    /// positive bulge, inward for a negative one.
    #[inline]
    pub fn normal_at(&self, p: Vec2) -> Vec2 {
        self.from_center(p) / self.radius * self.side
    }
}

/// Distances `t` along the ray `origin + t·dir` (unit `dir`) at which it crosses the arc, for
/// `t` strictly inside `(t_min, t_max)`: nearest first, `None` after the hits.
///
/// A ray tangent to the circle (one double root) touches the arc once. `from_self` says the
/// ray starts on this very arc: the root at the origin is dropped and only the second
/// crossing, `−2 (o − c)·dir`, can count, so a ray leaving outward never hits its own arc and
/// one leaving inward can meet it again across the circle.
#[inline]
pub fn ray_arc(origin: Vec2, dir: Vec2, arc: &ArcRay, t_min: f64, t_max: f64, from_self: bool) -> [Option<f64>; 2] {
    let oa = origin - arc.a;
    let b = dir.dot(&(oa + arc.a_from_center));
    let roots = if from_self {
        [-2.0 * b, f64::NAN]
    } else {
        let c = oa.norm_squared() + 2.0 * oa.dot(&arc.a_from_center);
        let disc = b * b - c;
        if !(disc >= 0.0) {
            return [None, None];
        }
        if disc == 0.0 {
            [-b, f64::NAN]
        } else {
            // Numerically stable pair of roots; `q` cannot be zero when `disc > 0`.
            let sq = disc.sqrt();
            let q = if b > 0.0 { -b - sq } else { -b + sq };
            let (t1, t2) = (q, c / q);
            if t1 <= t2 { [t1, t2] } else { [t2, t1] }
        }
    };
    let mut out = [None, None];
    let mut n = 0;
    for t in roots {
        if t > t_min && t < t_max && arc.contains_on_circle(origin + dir * t) {
            out[n] = Some(t);
            n += 1;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64, y: f64) -> Vec2 {
        Vec2::new(x, y)
    }

    /// The upper half of the unit circle, from (1, 0) to (−1, 0) counter-clockwise, which bows
    /// to the right of its chord (the chord runs −x, its right is +y).
    fn upper_half() -> ArcRay {
        ArcRay::new(v(1.0, 0.0), v(-2.0, 0.0), v(0.0, 0.0), 1.0, 1.0)
    }

    #[test]
    fn ray_through_the_arc_gives_both_crossings_in_order() {
        // A ray along y = 0.5 meets the upper half circle twice.
        let hits = ray_arc(v(-5.0, 0.5), v(1.0, 0.0), &upper_half(), 0.0, f64::INFINITY, false);
        let x = 0.75f64.sqrt();
        assert!((hits[0].expect("a crossing") - (5.0 - x)).abs() < 1e-15);
        assert!((hits[1].expect("a crossing") - (5.0 + x)).abs() < 1e-15);
    }

    #[test]
    fn crossings_on_the_other_half_of_the_circle_do_not_count() {
        let hits = ray_arc(v(-5.0, -0.5), v(1.0, 0.0), &upper_half(), 0.0, f64::INFINITY, false);
        assert_eq!(hits, [None, None]);
    }

    #[test]
    fn tangent_ray_touches_once() {
        let hits = ray_arc(v(-5.0, 1.0), v(1.0, 0.0), &upper_half(), 0.0, f64::INFINITY, false);
        assert_eq!(hits, [Some(5.0), None]);
    }

    #[test]
    fn from_self_keeps_only_the_far_crossing() {
        let arc = upper_half();
        let o = v(0.6, 0.8);
        // Inward, towards the centre: the far crossing is at the opposite point (−0.6, −0.8),
        // which is not on the upper half; straight down it meets the circle at (0.6, −0.8), not
        // on the arc either; towards (−0.6, 0.8) it meets the arc again 1.2 mm away.
        assert_eq!(ray_arc(o, -o, &arc, 1e-9, f64::INFINITY, true), [None, None]);
        assert_eq!(ray_arc(o, v(0.0, -1.0), &arc, 1e-9, f64::INFINITY, true), [None, None]);
        let t = ray_arc(o, v(-1.0, 0.0), &arc, 1e-9, f64::INFINITY, true)[0].expect("a crossing");
        assert!((t - 1.2).abs() < 1e-15);
        // Outward it never meets its own arc.
        assert_eq!(ray_arc(o, o, &arc, 1e-9, f64::INFINITY, true), [None, None]);
    }

    #[test]
    fn normal_is_radial_and_follows_the_side() {
        let arc = upper_half();
        let n = arc.normal_at(v(0.6, 0.8));
        assert!((n - v(0.6, 0.8)).norm() < 1e-15);
        let flipped = ArcRay::new(v(-1.0, 0.0), v(2.0, 0.0), v(0.0, 0.0), 1.0, -1.0);
        assert!((flipped.normal_at(v(0.6, 0.8)) + v(0.6, 0.8)).norm() < 1e-15);
    }
}
