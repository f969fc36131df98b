use super::{Aabb, Vec2, cross, perp};

/// Bulges smaller than this in magnitude are treated as straight edges (the arc then departs
/// from its chord by less than 5·10⁻¹⁰ of the chord's length).
const MIN_BULGE: f64 = 1e-9;
/// Tolerance on the edge parameter so that a ray through a shared vertex hits both edges.
const PARAM_TOL: f64 = 1e-12;

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

    /// Included angle of the arc in radians (signed like the bulge); 0 for a segment.
    pub fn sweep(&self) -> f64 {
        if self.is_arc() { 4.0 * self.bulge.atan() } else { 0.0 }
    }

    /// Length along the edge.
    pub fn length(&self) -> f64 {
        match self.arc() {
            Some(arc) => arc.radius * self.sweep().abs(),
            None => self.chord_length(),
        }
    }

    /// The point at fraction `u ∈ [0, 1]` of the way along the edge.
    pub fn point_at(&self, u: f64) -> Vec2 {
        match self.arc() {
            Some(arc) => {
                let start = (self.a - arc.center).y.atan2((self.a - arc.center).x);
                let ang = start + self.sweep() * u;
                arc.center + Vec2::new(ang.cos(), ang.sin()) * arc.radius
            }
            None => self.a + (self.b - self.a) * u,
        }
    }

    /// The unit right normal at fraction `u` along the edge.
    pub fn normal_at(&self, u: f64) -> Vec2 {
        match self.arc() {
            Some(arc) => (self.point_at(u) - arc.center).normalize() * arc.side,
            None => {
                let d = self.b - self.a;
                let len = d.norm();
                if len > 0.0 { Vec2::new(d.y, -d.x) / len } else { Vec2::new(0.0, 0.0) }
            }
        }
    }

    /// Fraction along the edge of a point that lies on it (projected for points nearby).
    pub fn param_of(&self, p: Vec2) -> f64 {
        match self.arc() {
            Some(arc) => {
                let start = self.a - arc.center;
                let v = p - arc.center;
                let mut ang = cross(start, v).atan2(start.dot(&v));
                let sweep = self.sweep();
                if sweep > 0.0 && ang < 0.0 {
                    ang += std::f64::consts::TAU;
                } else if sweep < 0.0 && ang > 0.0 {
                    ang -= std::f64::consts::TAU;
                }
                (ang / sweep).clamp(0.0, 1.0)
            }
            None => {
                let d = self.b - self.a;
                let l2 = d.norm_squared();
                if l2 > 0.0 { ((p - self.a).dot(&d) / l2).clamp(0.0, 1.0) } else { 0.0 }
            }
        }
    }

    /// Whether a point on the arc's circle lies on the arc itself (not on the rest of the circle).
    #[inline]
    fn arc_contains(&self, arc: &ArcGeom, p: Vec2) -> bool {
        // The chord splits the circle into two arcs, each wholly on one side of it; the arc is
        // the one on its bulge side. A small tolerance keeps the end points.
        let chord = self.b - self.a;
        let s = cross(chord, p - self.a);
        // `s` is the chord length times the distance from the chord line, so the tolerance is
        // 10⁻¹² of the chord in distance; scaling it with the radius would let nearly straight
        // arcs accept points well beyond their ends.
        s * arc.side <= PARAM_TOL * chord.norm_squared()
    }

    pub fn aabb(&self) -> Aabb {
        let mut bb = Aabb::from_points([self.a, self.b]);
        if let Some(arc) = self.arc() {
            for dir in [Vec2::new(1.0, 0.0), Vec2::new(-1.0, 0.0), Vec2::new(0.0, 1.0), Vec2::new(0.0, -1.0)] {
                let p = arc.center + dir * arc.radius;
                if self.arc_contains(&arc, p) {
                    bb.include(p);
                }
            }
        }
        bb
    }

    /// The nearest intersection of the ray `origin + t·dir` (unit `dir`) with this edge for
    /// `t` in `(t_min, t_max)`. Rays parallel to a straight edge never hit it.
    #[inline]
    pub fn cast(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<EdgeHit> {
        match self.arc() {
            None => self.cast_segment(origin, dir, t_min, t_max),
            Some(arc) => self.cast_arc(&arc, origin, dir, t_min, t_max, false),
        }
    }

    /// Like [`Edge::cast`] for a ray that starts on this very edge: the root at the origin is
    /// skipped, so only a second crossing of a concave arc can be returned.
    pub fn cast_from_self(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<EdgeHit> {
        match self.arc() {
            None => None,
            Some(arc) => self.cast_arc(&arc, origin, dir, t_min, t_max, true),
        }
    }

    #[inline]
    fn cast_segment(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<EdgeHit> {
        let e = self.b - self.a;
        let denom = cross(dir, e);
        if denom.abs() <= 1e-300 || !denom.is_finite() {
            return None;
        }
        let ao = self.a - origin;
        let t = cross(ao, e) / denom;
        if !(t > t_min && t < t_max) {
            return None;
        }
        let s = cross(ao, dir) / denom;
        if !(-PARAM_TOL..=1.0 + PARAM_TOL).contains(&s) {
            return None;
        }
        let len = e.norm();
        Some(EdgeHit { t, point: origin + dir * t, normal: Vec2::new(e.y, -e.x) / len })
    }

    fn cast_arc(
        &self,
        arc: &ArcGeom,
        origin: Vec2,
        dir: Vec2,
        t_min: f64,
        t_max: f64,
        from_self: bool,
    ) -> Option<EdgeHit> {
        let oc = origin - arc.center;
        let b = dir.dot(&oc);
        let c = oc.norm_squared() - arc.radius * arc.radius;
        let roots = if from_self {
            // The origin is on the circle: one root is zero, the other is −2b.
            [-2.0 * b, f64::NAN]
        } else {
            let disc = b * b - c;
            if disc < 0.0 {
                return None;
            }
            let sq = disc.sqrt();
            // Numerically stable pair of roots.
            let q = if b > 0.0 { -b - sq } else { -b + sq };
            let (t1, t2) = if q == 0.0 { (0.0, 0.0) } else { (q, c / q) };
            if t1 <= t2 { [t1, t2] } else { [t2, t1] }
        };
        for t in roots {
            if t > t_min && t < t_max {
                let p = origin + dir * t;
                if self.arc_contains(arc, p) {
                    return Some(EdgeHit { t, point: p, normal: (p - arc.center) / arc.radius * arc.side });
                }
            }
        }
        None
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
                arc.side * 0.5 * arc.radius * arc.radius * (theta - theta.sin())
            }
            None => 0.0,
        }
    }

    /// Winding contribution of the region between the chord and the arc at `p`: ±1 inside
    /// that circular segment, else 0. Added to the chord polygon's winding number, it gives
    /// the winding number of the outline with arcs.
    pub fn segment_winding(&self, p: Vec2) -> i32 {
        let Some(arc) = self.arc() else { return 0 };
        if (p - arc.center).norm_squared() >= arc.radius * arc.radius {
            return 0;
        }
        let s = cross(self.b - self.a, p - self.a);
        if s * arc.side < 0.0 { arc.side as i32 } else { 0 }
    }

    /// The edge run backwards.
    #[must_use]
    pub fn reversed(&self) -> Self {
        Self { a: self.b, b: self.a, bulge: -self.bulge }
    }
}
