use super::Vec2;

/// An axis-aligned bounding box. An empty box has `min > max`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Aabb {
    pub min: Vec2,
    pub max: Vec2,
}

impl Default for Aabb {
    fn default() -> Self {
        Self::EMPTY
    }
}

impl Aabb {
    pub const EMPTY: Self =
        Self { min: Vec2::new(f64::INFINITY, f64::INFINITY), max: Vec2::new(f64::NEG_INFINITY, f64::NEG_INFINITY) };

    pub fn from_points(points: impl IntoIterator<Item = Vec2>) -> Self {
        let mut b = Self::EMPTY;
        for p in points {
            b.include(p);
        }
        b
    }

    pub fn include(&mut self, p: Vec2) {
        self.min = self.min.inf(&p);
        self.max = self.max.sup(&p);
    }

    #[must_use]
    pub fn union(&self, other: &Self) -> Self {
        Self { min: self.min.inf(&other.min), max: self.max.sup(&other.max) }
    }

    pub fn is_empty(&self) -> bool {
        !(self.min.x <= self.max.x && self.min.y <= self.max.y)
    }

    pub fn center(&self) -> Vec2 {
        (self.min + self.max) * 0.5
    }

    pub fn size(&self) -> Vec2 {
        self.max - self.min
    }

    /// The larger side, or zero for an empty box.
    pub fn extent(&self) -> f64 {
        if self.is_empty() {
            0.0
        } else {
            let s = self.size();
            s.x.max(s.y)
        }
    }

    #[must_use]
    pub fn expanded(&self, margin: f64) -> Self {
        Self { min: self.min - Vec2::new(margin, margin), max: self.max + Vec2::new(margin, margin) }
    }

    pub fn contains(&self, p: Vec2) -> bool {
        p.x >= self.min.x && p.x <= self.max.x && p.y >= self.min.y && p.y <= self.max.y
    }

    pub fn overlaps(&self, other: &Self) -> bool {
        self.min.x <= other.max.x && other.min.x <= self.max.x && self.min.y <= other.max.y && other.min.y <= self.max.y
    }

    /// Entry and exit distances of the ray `origin + t·dir` through the box (slab test),
    /// given the componentwise inverse of `dir`. Returns `None` if the ray misses `[t_min, t_max]`.
    #[inline]
    pub fn ray_interval(&self, origin: Vec2, inv_dir: Vec2, t_min: f64, t_max: f64) -> Option<(f64, f64)> {
        let tx1 = (self.min.x - origin.x) * inv_dir.x;
        let tx2 = (self.max.x - origin.x) * inv_dir.x;
        let ty1 = (self.min.y - origin.y) * inv_dir.y;
        let ty2 = (self.max.y - origin.y) * inv_dir.y;
        // `min`/`max` of f64 ignore NaN (0 · ∞ on a slab boundary), which keeps the test conservative.
        let t0 = t_min.max(tx1.min(tx2)).max(ty1.min(ty2));
        let t1 = t_max.min(tx1.max(tx2)).min(ty1.max(ty2));
        (t0 <= t1).then_some((t0, t1))
    }

    /// Distance along a ray starting inside (or on) the box to the point where it leaves it.
    pub fn exit_distance(&self, origin: Vec2, dir: Vec2) -> f64 {
        let mut t = f64::INFINITY;
        if dir.x > 0.0 {
            t = t.min((self.max.x - origin.x) / dir.x);
        } else if dir.x < 0.0 {
            t = t.min((self.min.x - origin.x) / dir.x);
        }
        if dir.y > 0.0 {
            t = t.min((self.max.y - origin.y) / dir.y);
        } else if dir.y < 0.0 {
            t = t.min((self.min.y - origin.y) / dir.y);
        }
        if t.is_finite() { t.max(0.0) } else { 0.0 }
    }
}
