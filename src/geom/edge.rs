use super::{Aabb, ArcRay, Vec2, cross, perp, ray_arc, ray_segment, right_normal};

/// Bulges smaller than this in magnitude are treated as straight edges (the arc then departs
/// from its chord by less than 5·10⁻¹⁰ of the chord's length).
const MIN_BULGE: f64 = 1e-9;

/// One edge of an outline or of an open path: a straight segment from `a` to `b`, or a
/// circular arc between them.
///
/// `bulge` is the tangent of a quarter of the arc's included angle (0 = straight). A
/// positive bulge is an arc that runs counter-clockwise around its centre from `a` to `b`,
/// so it bows out to the right of the chord; on a counter-clockwise outline that is outward
/// (convex). |bulge| = 1 is a half circle; |bulge| > 1 is more than a half circle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Edge {
    pub a: Vec2,
    pub b: Vec2,
    pub bulge: f64,
}

/// The circle an arc edge lies on.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ArcGeom {
    pub center: Vec2,
    pub radius: f64,
    /// +1 if the arc bows to the right of the chord `a → b` (positive bulge), −1 otherwise.
    pub side: f64,
}

/// Where a ray meets an edge.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EdgeHit {
    /// Distance along the (unit) ray direction.
    pub t: f64,
    pub point: Vec2,
    /// The unit right normal of the edge at the hit point (see [`Edge`]).
    pub normal: Vec2,
}

impl Edge {
    pub fn segment(a: Vec2, b: Vec2) -> Self {
        Self { a, b, bulge: 0.0 }
    }

    pub fn is_arc(&self) -> bool {
        self.bulge.abs() > MIN_BULGE
    }

    pub fn chord_length(&self) -> f64 {
        (self.b - self.a).norm()
    }

    /// The arc's circle, or `None` for a straight or degenerate edge.
    pub fn arc(&self) -> Option<ArcGeom> {
        if !self.is_arc() {
            return None;
        }
        let chord = self.b - self.a;
        let c = chord.norm();
        if c <= 0.0 || !c.is_finite() || !self.bulge.is_finite() {
            return None;
        }
        let bulge = self.bulge;
        let radius = c * (1.0 + bulge * bulge) / (4.0 * bulge.abs());
        let left = perp(chord / c);
        let sagitta = bulge * c * 0.5;
        let mid = (self.a + self.b) * 0.5;
        let apex = mid - left * sagitta;
        let center = apex + left * bulge.signum() * radius;
        Some(ArcGeom { center, radius, side: bulge.signum() })
    }

    /// The arc set up for ray tests and precise evaluation, or `None` for a straight or
    /// degenerate edge.
    pub fn arc_ray(&self) -> Option<ArcRay> {
        self.arc().map(|g| ArcRay::new(self.a, self.b - self.a, g.center, g.radius, g.side))
    }

    /// Included angle of the arc in radians (signed like the bulge); 0 for a segment.
    pub fn sweep(&self) -> f64 {
        if self.is_arc() { 4.0 * self.bulge.atan() } else { 0.0 }
    }

    /// Length along the edge: radius × included angle for an arc, the chord for a segment.
    pub fn length(&self) -> f64 {
        match self.arc() {
            Some(arc) => arc.radius * self.sweep().abs(),
            None => self.chord_length(),
        }
    }

    /// The point at fraction `u ∈ [0, 1]` of the way along the edge (`u` = 1 gives `b`
    /// exactly). Arc points are found by turning `a` about the centre, written relative to
    /// `a` so that nearly straight arcs keep their digits.
    pub fn point_at(&self, u: f64) -> Vec2 {
        if u == 1.0 {
            return self.b;
        }
        match self.arc_ray() {
            Some(arc) => {
                let phi = self.sweep() * u;
                let v = arc.a_from_center;
                let half = (0.5 * phi).sin();
                // rot(φ)·v − v = (cos φ − 1)·v + sin φ·perp(v), with cos φ − 1 = −2 sin²(φ/2).
                self.a + v * (-2.0 * half * half) + perp(v) * phi.sin()
            }
            None => self.a + (self.b - self.a) * u,
        }
    }

    /// The unit right normal at fraction `u` along the edge (radial for an arc, see
    /// [`ArcRay::normal_at`]; [`right_normal`] for a segment).
    pub fn normal_at(&self, u: f64) -> Vec2 {
        match self.arc_ray() {
            Some(arc) => arc.normal_at(self.point_at(u)),
            None => right_normal(self.b - self.a),
        }
    }

    /// Fraction along the edge of the point of the edge nearest to `p` (of `p` itself when it
    /// lies on the edge); see [`Edge::project`].
    pub fn param_of(&self, p: Vec2) -> f64 {
        self.project(p).param
    }

    pub fn aabb(&self) -> Aabb {
        let mut bb = Aabb::from_points([self.a, self.b]);
        if let Some(arc) = self.arc_ray() {
            let v = arc.a_from_center;
            let r = v.norm();
            for e in [Vec2::new(1.0, 0.0), Vec2::new(-1.0, 0.0), Vec2::new(0.0, 1.0), Vec2::new(0.0, -1.0)] {
                // The extreme point of the circle along `e`, relative to `a`: e·(R − v·e) − perp(e)·(v·perp(e)).
                // R − v·e cancels when v·e ≈ R (a near that extreme), so it is then written
                // as (v·perp(e))² / (R + v·e).
                let (ve, vp) = (v.dot(&e), v.dot(&perp(e)));
                let along = if ve > 0.0 { vp * vp / (r + ve) } else { r - ve };
                let p = self.a + e * along - perp(e) * vp;
                if arc.contains_on_circle(p) {
                    bb.include(p);
                }
            }
        }
        bb
    }

    /// The nearest intersection of the ray `origin + t·dir` (unit `dir`) with this edge for
    /// `t` in `(t_min, t_max)`, by [`ray_segment`] or [`ray_arc`]. Rays parallel to a straight
    /// edge never hit it; a ray tangent to an arc touches it once.
    #[inline]
    pub fn cast(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<EdgeHit> {
        self.cast_with(origin, dir, t_min, t_max, false)
    }

    /// Like [`Edge::cast`] for a ray that starts on this very edge: the root at the origin is
    /// skipped, so only a second crossing of a concave arc can be returned.
    pub fn cast_from_self(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<EdgeHit> {
        self.cast_with(origin, dir, t_min, t_max, true)
    }

    #[inline]
    fn cast_with(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64, from_self: bool) -> Option<EdgeHit> {
        match self.arc_ray() {
            None => {
                if from_self {
                    return None;
                }
                let d = self.b - self.a;
                let t = ray_segment(origin, dir, self.a, d, t_min, t_max)?;
                Some(EdgeHit { t, point: origin + dir * t, normal: right_normal(d) })
            }
            Some(arc) => {
                let t = ray_arc(origin, dir, &arc, t_min, t_max, from_self)[0]?;
                let point = origin + dir * t;
                Some(EdgeHit { t, point, normal: arc.normal_at(point) })
            }
        }
    }

    /// Points along the edge for drawing, including both ends. Arcs get a point every few
    /// degrees; segments just their ends.
    pub fn polyline(&self, max_step_rad: f64) -> Vec<Vec2> {
        if self.arc().is_none() {
            return vec![self.a, self.b];
        }
        let n = ((self.sweep().abs() / max_step_rad.max(1e-3)).ceil() as usize).clamp(2, 512);
        (0..=n).map(|i| self.point_at(i as f64 / n as f64)).collect()
    }

    /// Signed area between the chord and the arc (positive when the arc bows to the right of
    /// the chord, which adds area to a counter-clockwise outline).
    pub fn segment_area(&self) -> f64 {
        match self.arc() {
            Some(arc) => {
                let theta = self.sweep().abs();
                // θ − sin θ cancels for a nearly straight arc; its series is exact to rounding
                // below 10⁻³ (the next term is θ⁹/362880).
                let theta2 = theta * theta;
                let excess = if theta < 1e-3 {
                    theta * theta2 / 6.0 * (1.0 - theta2 / 20.0 * (1.0 - theta2 / 42.0))
                } else {
                    theta - theta.sin()
                };
                arc.side * 0.5 * arc.radius * arc.radius * excess
            }
            None => 0.0,
        }
    }

    /// Winding contribution of the region between the chord and the arc at `p`: ±1 inside
    /// that circular segment, else 0. Added to the chord polygon's winding number, it gives
    /// the winding number of the outline with arcs.
    pub fn segment_winding(&self, p: Vec2) -> i32 {
        let Some(arc) = self.arc_ray() else { return 0 };
        // |p − c|² − R², written relative to `a` (see `ray_arc`).
        let pa = p - self.a;
        if pa.norm_squared() + 2.0 * pa.dot(&arc.a_from_center) >= 0.0 {
            return 0;
        }
        let s = cross(arc.chord, pa);
        if s * arc.side < 0.0 { arc.side as i32 } else { 0 }
    }

    /// The edge run backwards.
    #[must_use]
    pub fn reversed(&self) -> Self {
        Self { a: self.b, b: self.a, bulge: -self.bulge }
    }
}

#[cfg(test)]
mod tests {
    use std::f64::consts::{FRAC_PI_2, PI, TAU};

    use super::*;
    use crate::geom::{Bvh, unit};
    use crate::rng::Rng;

    fn v(x: f64, y: f64) -> Vec2 {
        Vec2::new(x, y)
    }

    /// An arc on the circle of `radius` about `center` from angle `from` through `sweep`
    /// (radians, counter-clockwise positive).
    fn arc_on_circle(center: Vec2, radius: f64, from: f64, sweep: f64) -> Edge {
        Edge { a: center + unit(from) * radius, b: center + unit(from + sweep) * radius, bulge: (sweep / 4.0).tan() }
    }

    #[test]
    fn collinear_ray_along_segment_hits_the_next_edge_at_the_vertex() {
        let bottom = Edge::segment(v(0.0, 0.0), v(4.0, 0.0));
        let right = Edge::segment(v(4.0, 0.0), v(4.0, 3.0));
        let (o, d) = (v(-1.0, 0.0), v(1.0, 0.0));
        assert_eq!(bottom.cast(o, d, 0.0, f64::INFINITY), None);
        let hit = right.cast(o, d, 0.0, f64::INFINITY).expect("a hit");
        assert_eq!(hit.t, 5.0);
        assert_eq!(hit.normal, v(1.0, 0.0));
    }

    #[test]
    fn ray_starting_on_segment_does_not_hit_it_again() {
        let e = Edge::segment(v(0.0, 0.0), v(4.0, 0.0));
        for d in [v(0.0, 1.0), v(0.0, -1.0), unit(0.3)] {
            assert_eq!(e.cast(v(1.0, 0.0), d, 1e-9, f64::INFINITY), None);
            assert_eq!(e.cast_from_self(v(1.0, 0.0), d, 0.0, f64::INFINITY), None);
        }
    }

    #[test]
    fn ray_parallel_at_a_distance_misses_segment() {
        let e = Edge::segment(v(0.0, 0.0), v(4.0, 0.0));
        assert_eq!(e.cast(v(-1.0, 1e-9), v(1.0, 0.0), 0.0, f64::INFINITY), None);
        assert_eq!(e.cast(v(-1.0, -3.0), v(-1.0, 0.0), 0.0, f64::INFINITY), None);
    }

    #[test]
    fn ray_tangent_to_arc_touches_once_and_just_outside_misses() {
        // The upper half of the unit circle, counter-clockwise from (1, 0): bulge 1.
        let e = arc_on_circle(v(0.0, 0.0), 1.0, 0.0, PI);
        let touch = e.cast(v(-5.0, 1.0), v(1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
        assert!((touch.t - 5.0).abs() < 1e-12 && (touch.normal - v(0.0, 1.0)).norm() < 1e-12);
        assert_eq!(e.cast(v(-5.0, 1.0 + 1e-9), v(1.0, 0.0), 0.0, f64::INFINITY), None);
        let inside = e.cast(v(-5.0, 1.0 - 1e-9), v(1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
        assert!((inside.t - 5.0).abs() < 1e-4);
    }

    #[test]
    fn ray_starting_on_arc_leaving_outward_never_hits_it() {
        // Three quarters of the unit circle (bulge tan(3π/16)).
        let e = arc_on_circle(v(0.0, 0.0), 1.0, 0.0, 1.5 * PI);
        let o = unit(0.7);
        for d in [o, unit(0.7 + 1.0), unit(0.7 - 1.0)] {
            assert_eq!(e.cast_from_self(o, d, 1e-9, f64::INFINITY), None);
            assert_eq!(e.cast(o, d, 1e-9, f64::INFINITY), None);
        }
    }

    #[test]
    fn ray_starting_on_arc_leaving_inward_hits_the_far_side() {
        let e = arc_on_circle(v(0.0, 0.0), 1.0, 0.0, 1.5 * PI);
        let o = unit(0.7);
        // Through the centre: the far point, at angle 0.7 + π, is on the arc, 2 mm away.
        for hit in [e.cast_from_self(o, -o, 1e-9, f64::INFINITY), e.cast(o, -o, 1e-9, f64::INFINITY)] {
            let hit = hit.expect("a hit");
            assert!((hit.t - 2.0).abs() < 1e-12);
            // The arc runs counter-clockwise, so its right normal is outward: along −o there.
            assert!((hit.normal + o).norm() < 1e-12);
        }
        // Towards angle −0.3 (in the gap of the arc) it leaves through the missing quarter.
        let gap_point = unit(-0.3);
        let d = (gap_point - o).normalize();
        assert_eq!(e.cast_from_self(o, d, 1e-9, f64::INFINITY), None);
    }

    #[test]
    fn arc_parameter_wraps_around_the_branch_cut() {
        // Arcs through angle π (where atan2 jumps), both senses, and one starting just below it.
        for (from, sweep) in [(170f64.to_radians(), 20f64.to_radians()), (-170f64.to_radians(), -20f64.to_radians())]
            .into_iter()
            .chain([(PI - 1e-12, 0.5), (-PI + 1e-12, -0.5), (3.0, 6.0)])
        {
            let e = arc_on_circle(v(2.0, -1.0), 3.0, from, sweep);
            for k in 0..=100 {
                let u = f64::from(k) / 100.0;
                let p = e.point_at(u);
                assert!((e.param_of(p) - u).abs() < 1e-12, "from {from} sweep {sweep} u {u}: {}", e.param_of(p));
                let expected = v(2.0, -1.0) + unit(from + sweep * u) * 3.0;
                assert!((p - expected).norm() < 1e-12);
            }
        }
    }

    #[test]
    fn bulge_at_the_straight_limit_is_a_segment_and_just_above_it_an_arc() {
        let straight = Edge { a: v(0.0, 0.0), b: v(10.0, 0.0), bulge: 1e-9 };
        assert!(!straight.is_arc());
        assert_eq!(straight.length(), 10.0);
        let arc = Edge { bulge: 2e-9, ..straight };
        assert!(arc.is_arc());
        // Sagitta = bulge · chord / 2 = 1e-8 below the chord (positive bulge bows right of +x).
        let mid = arc.point_at(0.5);
        assert!((mid - v(5.0, -1e-8)).norm() < 1e-15, "{mid:?}");
        assert_eq!(arc.point_at(0.0), v(0.0, 0.0));
        assert_eq!(arc.point_at(1.0), v(10.0, 0.0));
        // Arc length − chord = 8 s² / (3 c) to leading order: 2.7e-17, lost in rounding.
        assert!((arc.length() - 10.0).abs() < 1e-14);
        for k in 0..=10 {
            let u = f64::from(k) / 10.0;
            assert!((arc.param_of(arc.point_at(u)) - u).abs() < 1e-12);
            assert!((arc.normal_at(u) - v(0.0, -1.0)).norm() < 1e-8);
        }
        // A ray straight down at x = 5 meets the arc at the sagitta, the segment at the chord.
        let hit = arc.cast(v(5.0, 1.0), v(0.0, -1.0), 0.0, f64::INFINITY).expect("a hit");
        assert!((hit.t - (1.0 + 1e-8)).abs() < 1e-15, "{}", hit.t);
        let hit = straight.cast(v(5.0, 1.0), v(0.0, -1.0), 0.0, f64::INFINITY).expect("a hit");
        assert_eq!(hit.t, 1.0);
        // The box of the arc reaches its lowest point.
        assert!((arc.aabb().min.y + 1e-8).abs() < 1e-15);
    }

    #[test]
    fn nearly_full_arc_with_bulge_1e3() {
        let e = Edge { a: v(0.0, -0.001), b: v(0.0, 0.001), bulge: 1e3 };
        let g = e.arc().expect("an arc");
        let theta = 4.0 * 1e3f64.atan();
        assert!(theta > TAU - 0.005);
        // R = c / (2 sin(θ/2)).
        let r = 0.002 / (2.0 * (theta / 2.0).sin());
        assert!((g.radius - r).abs() < 1e-9 * r);
        assert!((e.length() - r * theta).abs() < 1e-9);
        // It bows to the right of +y (towards +x): the centre is at x = √(R² − (c/2)²).
        let cx = (r * r - 1e-6).sqrt();
        assert!((g.center - v(cx, 0.0)).norm() < 1e-9, "{g:?} r {r}");
        // A ray along the axis from far left enters the near side at x = 0 only through the gap
        // (between y = ±0.001), so at y = 0 it first meets the far side at x = cx + R.
        let hit = e.cast(v(-10.0, 0.0), v(1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
        assert!((hit.t - (10.0 + cx + r)).abs() < 1e-9, "{}", hit.t);
        // At y = 0.5 R it meets the arc twice; the nearer is on the left half.
        let hit = e.cast(v(-10.0, 0.5 * r), v(1.0, 0.0), 0.0, f64::INFINITY).expect("a hit");
        assert!((hit.point.x - (cx - r * 0.75f64.sqrt())).abs() < 1e-9);
        for k in 0..=50 {
            let u = f64::from(k) / 50.0;
            assert!((e.param_of(e.point_at(u)) - u).abs() < 1e-12);
        }
    }

    /// Length, point, normal and parameter against closed forms on random arcs and segments.
    #[test]
    fn length_point_normal_param_match_closed_forms() {
        let mut rng = Rng::new(11);
        for case in 0..3000 {
            // The centre within a few radii of the origin: an arc 10⁻³ mm across drawn 100 mm
            // from the origin is defined by its end points only to 10⁻¹⁴/10⁻³ of itself.
            let radius = 10f64.powf(rng.uniform() * 6.0 - 3.0);
            let center = v(rng.uniform() * 4.0 - 2.0, rng.uniform() * 4.0 - 2.0) * radius;
            let from = rng.uniform() * TAU - PI;
            let mag = match case % 3 {
                0 => 1e-6 + rng.uniform() * 0.1,
                1 => rng.uniform() * TAU * 0.999,
                _ => TAU - 1e-3 * rng.uniform() - 1e-6,
            };
            let sweep = if rng.uniform() < 0.5 { mag } else { -mag };
            let e = arc_on_circle(center, radius, from, sweep);
            let g = e.arc().expect("an arc");
            let scale = radius + center.norm();
            assert!((g.radius - radius).abs() < 1e-9 * scale, "case {case}");
            assert!((e.length() - radius * sweep.abs()).abs() < 1e-9 * scale, "case {case}");
            for k in 0..=8 {
                let u = f64::from(k) / 8.0;
                let p = e.point_at(u);
                let expected = center + unit(from + sweep * u) * radius;
                assert!((p - expected).norm() < 1e-9 * scale, "case {case} u {u}");
                // Right normal: outward for a counter-clockwise arc, inward otherwise.
                let radial = unit(from + sweep * u) * sweep.signum();
                assert!((e.normal_at(u) - radial).norm() < 1e-9, "case {case} u {u}");
                assert!((e.param_of(p) - u).abs() < 1e-9, "case {case} u {u}: {}", e.param_of(p));
            }
            let s = Edge::segment(e.a, e.b);
            assert!((s.length() - (e.b - e.a).norm()).abs() == 0.0);
            assert_eq!(s.normal_at(0.3), right_normal(e.b - e.a));
            let p = s.point_at(0.3);
            assert!((s.point_at(s.param_of(p)) - p).norm() < 1e-12 * scale);
        }
    }

    /// The box of an edge holds every point of it and touches it on all four sides, for
    /// shallow, half, nearly full and nearly straight arcs.
    #[test]
    fn aabb_is_the_tight_box_of_the_edge() {
        let mut rng = Rng::new(5);
        for case in 0..500 {
            let e = random_edge(&mut rng);
            let bb = e.aabb();
            let n = 4000;
            let pts: Vec<Vec2> = (0..=n).map(|k| e.point_at(f64::from(k) / f64::from(n))).collect();
            let slack = 1e-9 * (1.0 + e.a.norm());
            assert!(pts.iter().all(|p| bb.expanded(slack).contains(*p)), "case {case}: {e:?}");
            // The sampled extremes are within the sagitta of one step of the box.
            let step = e.length() / f64::from(n);
            let reach = step * step / e.arc().map_or(f64::INFINITY, |g| g.radius) + slack;
            let lo = pts.iter().fold(v(f64::INFINITY, f64::INFINITY), |m, p| m.inf(p));
            let hi = pts.iter().fold(v(f64::NEG_INFINITY, f64::NEG_INFINITY), |m, p| m.sup(p));
            assert!((lo - bb.min).norm() <= 2.0 * reach && (hi - bb.max).norm() <= 2.0 * reach, "case {case}: {e:?}");
        }
    }

    /// The polyline of an arc is as long as the arc, to the chord error of its steps.
    #[test]
    fn polyline_length_approaches_arc_length() {
        let e = arc_on_circle(v(0.0, 0.0), 5.0, 0.3, 4.0);
        let pts = e.polyline(0.001);
        let len: f64 = pts.windows(2).map(|w| (w[1] - w[0]).norm()).sum();
        // 512 steps of 4/512 rad: relative error ≈ (step)²/24 = 2.5e-6.
        assert!((len - 20.0).abs() < 20.0 * 5e-6);
    }

    #[test]
    fn segment_area_of_nearly_straight_arc_is_two_thirds_chord_times_sagitta() {
        let e = Edge { a: v(0.0, 0.0), b: v(10.0, 0.0), bulge: 1e-6 };
        // Area of a shallow circular segment ≈ (2/3)·c·s, s = bulge·c/2 (from memory).
        let expected = 2.0 / 3.0 * 10.0 * 5e-6;
        assert!((e.segment_area() - expected).abs() < 1e-9 * expected);
        let half = arc_on_circle(v(0.0, 0.0), 2.0, 0.0, FRAC_PI_2 * 2.0);
        assert!((half.segment_area() - 2.0 * PI).abs() < 1e-12);
    }

    fn random_edge(rng: &mut Rng) -> Edge {
        let a = v(rng.uniform() * 100.0, rng.uniform() * 100.0);
        let b = a + v(rng.uniform() * 20.0 - 10.0, rng.uniform() * 20.0 - 10.0);
        let sign = if rng.uniform() < 0.5 { -1.0 } else { 1.0 };
        let bulge = match (rng.uniform() * 6.0) as u32 {
            0 | 1 => 0.0,
            2 => sign * rng.uniform() * 2.0,
            3 => sign * 10f64.powf(-9.0 + 4.0 * rng.uniform()),
            4 => sign * 10f64.powf(1.0 + 2.0 * rng.uniform()),
            _ => sign * rng.uniform() * 0.3,
        };
        Edge { a, b, bulge }
    }

    /// Thousands of random rays: the BVH and `Edge::cast` give the same nearest hit, including
    /// rays that start on an edge (`cast_from_self` for that edge) and rays along an edge.
    #[test]
    fn edge_cast_agrees_with_bvh_on_random_rays() {
        let mut rng = Rng::new(0x5EED);
        let edges: Vec<Edge> = (0..400).map(|_| random_edge(&mut rng)).collect();
        let bvh = Bvh::build(&edges);
        let mut group = Vec::new();
        let mut n_hits = 0;
        for k in 0..6000 {
            let (o, d, on): (Vec2, Vec2, Option<u32>) = match k % 3 {
                0 => (v(rng.uniform() * 140.0 - 20.0, rng.uniform() * 140.0 - 20.0), unit(rng.uniform() * TAU), None),
                1 => {
                    let i = (rng.uniform() * edges.len() as f64) as usize % edges.len();
                    (edges[i].point_at(rng.uniform()), unit(rng.uniform() * TAU), Some(i as u32))
                }
                _ => {
                    // Along an edge's chord from its start: collinear with a straight edge.
                    let i = (rng.uniform() * edges.len() as f64) as usize % edges.len();
                    let e = edges[i];
                    (e.a, (e.b - e.a).normalize(), Some(i as u32))
                }
            };
            let brute = edges
                .iter()
                .enumerate()
                .filter_map(|(i, e)| {
                    if on == Some(i as u32) {
                        e.cast_from_self(o, d, 1e-9, f64::INFINITY)
                    } else {
                        e.cast(o, d, 1e-9, f64::INFINITY)
                    }
                })
                .min_by(|a, b| a.t.total_cmp(&b.t));
            let on_edges: Vec<u32> = on.into_iter().collect();
            bvh.cast_group(o, d, 1e-9, f64::INFINITY, 0.0, &on_edges, &mut group);
            match (brute, group.first()) {
                (None, None) => {}
                (Some(a), Some(b)) => {
                    n_hits += 1;
                    assert!((a.t - b.t).abs() <= 1e-9, "ray {k}: edge {} vs bvh {}", a.t, b.t);
                    assert!((a.normal - b.normal).norm() <= 1e-9 || (a.t - b.t).abs() <= 1e-12, "ray {k}");
                }
                other => panic!("ray {k} from {o:?} along {d:?}: {other:?}"),
            }
            if on.is_none() {
                let plain = bvh.cast(o, d, 1e-9, f64::INFINITY).map(|h| h.t);
                assert_eq!(plain.is_some(), brute.is_some(), "ray {k}");
                if let (Some(a), Some(b)) = (plain, brute) {
                    assert!((a - b.t).abs() <= 1e-9, "ray {k}");
                }
            }
        }
        assert!(n_hits > 2000, "too few hits to mean anything: {n_hits}");
    }

    /// The normal reported by a hit is the normal at the hit's parameter.
    #[test]
    fn hit_normal_equals_normal_at_the_hit_parameter() {
        let mut rng = Rng::new(3);
        let mut checked = 0;
        for _ in 0..3000 {
            let e = random_edge(&mut rng);
            let o = v(rng.uniform() * 140.0 - 20.0, rng.uniform() * 140.0 - 20.0);
            let d = unit(rng.uniform() * TAU);
            if let Some(hit) = e.cast(o, d, 0.0, f64::INFINITY) {
                let u = e.param_of(hit.point);
                assert!((e.normal_at(u) - hit.normal).norm() < 1e-6, "{e:?} {u}");
                assert!((e.point_at(u) - hit.point).norm() < 1e-6);
                checked += 1;
            }
        }
        assert!(checked > 100);
    }
}
