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
