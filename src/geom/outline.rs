use super::{Aabb, BoxTree, Edge, Vec2, cross};

/// The most vertices one outline may have (a notched light guide with 10 000 notches has
/// about 30 000).
pub const MAX_VERTICES: usize = 200_000;

/// A closed outline: vertices joined in order by straight or arc edges, the last vertex back
/// to the first. `bulges[i]` belongs to the edge from vertex `i` to vertex `i + 1`.
#[derive(Clone, Debug, PartialEq)]
pub struct Outline {
    pub vertices: Vec<Vec2>,
    pub bulges: Vec<f64>,
}

/// What makes an outline unusable.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum OutlineError {
    #[error("an outline needs at least 2 vertices (with an arc) or 3, it has {0}")]
    TooFewVertices(usize),
    #[error("an outline may have at most {MAX_VERTICES} vertices, it has {0}")]
    TooManyVertices(usize),
    #[error("vertex {0} is not a finite number")]
    NotFinite(usize),
    #[error("there are {vertices} vertices but {bulges} bulges; give one bulge per edge or none")]
    BulgeCount { vertices: usize, bulges: usize },
    #[error("the outline encloses no area")]
    ZeroArea,
    #[error("edges {0} and {1} cross each other near ({2:.4}, {3:.4}) mm")]
    SelfIntersecting(usize, usize, f64, f64),
}

impl Outline {
    /// An outline of straight edges.
    pub fn polygon(vertices: Vec<Vec2>) -> Self {
        let bulges = vec![0.0; vertices.len()];
        Self { vertices, bulges }
    }

    pub fn len(&self) -> usize {
        self.vertices.len()
    }

    pub fn is_empty(&self) -> bool {
        self.vertices.is_empty()
    }

    /// Edge `i`, from vertex `i` to vertex `i + 1` (wrapping).
    pub fn edge(&self, i: usize) -> Edge {
        let n = self.vertices.len();
        Edge { a: self.vertices[i], b: self.vertices[(i + 1) % n], bulge: self.bulges.get(i).copied().unwrap_or(0.0) }
    }

    pub fn edges(&self) -> impl Iterator<Item = Edge> + '_ {
        (0..self.vertices.len()).map(|i| self.edge(i))
    }

    /// Signed area, positive for a counter-clockwise outline, arcs included.
    pub fn signed_area(&self) -> f64 {
        let n = self.vertices.len();
        let mut a = 0.0;
        for i in 0..n {
            let p = self.vertices[i];
            let q = self.vertices[(i + 1) % n];
            a += 0.5 * cross(p, q);
        }
        a + self.edges().map(|e| e.segment_area()).sum::<f64>()
    }

    /// +1 for a counter-clockwise outline, −1 for clockwise. The outward normal of every edge
    /// is its right normal times this sign.
    pub fn orientation(&self) -> f64 {
        if self.signed_area() >= 0.0 { 1.0 } else { -1.0 }
    }

    /// Winding number of the outline around `p` (arcs included). Points exactly on an edge
    /// may count either way.
    pub fn winding(&self, p: Vec2) -> i32 {
        // The winding is that of the chord polygon plus that of each arc's circular segment.
        // A point exactly on an arc's chord (a ball's centre line, say) lies between the two
        // and would count in neither: move it off the chord, towards the arc, by a distance
        // far below any tolerance of the scene.
        let mut p = p;
        for e in self.edges() {
            if let Some(arc) = e.arc() {
                let d = e.b - e.a;
                if cross(d, p - e.a) == 0.0 && (p - arc.center).norm_squared() < arc.radius * arc.radius {
                    p += Vec2::new(d.y, -d.x) * (arc.side * 1e-12);
                    break;
                }
            }
        }
        let n = self.vertices.len();
        let mut w = 0;
        for i in 0..n {
            let a = self.vertices[i];
            let b = self.vertices[(i + 1) % n];
            if a.y <= p.y {
                if b.y > p.y && cross(b - a, p - a) > 0.0 {
                    w += 1;
                }
            } else if b.y <= p.y && cross(b - a, p - a) < 0.0 {
                w -= 1;
            }
        }
        w + self.edges().map(|e| e.segment_winding(p)).sum::<i32>()
    }

    /// Whether `p` is inside the outline (non-zero winding).
    pub fn contains(&self, p: Vec2) -> bool {
        self.winding(p) != 0
    }

    pub fn aabb(&self) -> Aabb {
        self.edges().fold(Aabb::EMPTY, |bb, e| bb.union(&e.aabb()))
    }

    /// Total length of the edges.
    pub fn perimeter(&self) -> f64 {
        self.edges().map(|e| e.length()).sum()
    }

    /// A point strictly inside the outline, found by casting a horizontal line through the
    /// middle of the bounding box (and a few other heights) and taking the midpoint of the
    /// widest inside interval.
    pub fn interior_point(&self) -> Option<Vec2> {
        let bb = self.aabb();
        if bb.is_empty() {
            return None;
        }
        let mut best: Option<(f64, Vec2)> = None;
        for frac in [0.5, 0.37, 0.63, 0.25, 0.75, 0.11, 0.89, 0.03, 0.97] {
            let y = bb.min.y + (bb.max.y - bb.min.y) * frac;
            let origin = Vec2::new(bb.min.x - 1.0 - bb.extent(), y);
            let dir = Vec2::new(1.0, 0.0);
            let mut ts: Vec<f64> = Vec::new();
            for e in self.edges() {
                // A straight edge wholly above or below the line cannot be met (the margin
                // covers the end-point tolerance of the cast).
                let margin = 1e-9 * (e.b - e.a).norm();
                if !e.is_arc() && (e.a.y.min(e.b.y) > y + margin || e.a.y.max(e.b.y) < y - margin) {
                    continue;
                }
                let mut t0 = 0.0;
                let mut found = 0;
                while let Some(h) = e.cast(origin, dir, t0, f64::INFINITY) {
                    ts.push(h.t);
                    t0 = h.t;
                    found += 1;
                    if found > 2 {
                        break;
                    }
                }
            }
            ts.sort_by(f64::total_cmp);
            for w in ts.windows(2) {
                let width = w[1] - w[0];
                if width <= 0.0 {
                    continue;
                }
                let p = origin + dir * (0.5 * (w[0] + w[1]));
                if self.contains(p) && best.is_none_or(|(bw, _)| width > bw) {
                    best = Some((width, p));
                }
            }
            if best.is_some_and(|(bw, _)| bw > 1e-3 * bb.extent()) {
                break;
            }
        }
        best.map(|(_, p)| p)
    }

    /// Checks that the outline is usable: enough finite vertices, matching bulges, non-zero
    /// area and no crossing edges (arcs are checked as fine polylines).
    pub fn validate(&self) -> Result<(), OutlineError> {
        self.validate_with_box().map(|_| ())
    }

    /// [`Outline::validate`], giving the outline's bounding box when it is usable.
    pub fn validate_with_box(&self) -> Result<Aabb, OutlineError> {
        let n = self.vertices.len();
        if n > MAX_VERTICES {
            return Err(OutlineError::TooManyVertices(n));
        }
        if self.bulges.len() != n {
            return Err(OutlineError::BulgeCount { vertices: n, bulges: self.bulges.len() });
        }
        let has_arc = self.bulges.iter().any(|b| b.abs() > 1e-9);
        if n < 2 || (n < 3 && !has_arc) {
            return Err(OutlineError::TooFewVertices(n));
        }
        for (i, v) in self.vertices.iter().enumerate() {
            if !super::is_finite(*v) || !self.bulges[i].is_finite() {
                return Err(OutlineError::NotFinite(i));
            }
        }
        let area = self.signed_area();
        let bb = self.aabb();
        if area.abs() <= 1e-12 * bb.extent().powi(2).max(1e-300) || !area.is_finite() {
            return Err(OutlineError::ZeroArea);
        }
        if let Some((i, j, p)) = self.first_crossing(&bb) {
            return Err(OutlineError::SelfIntersecting(i, j, p.x, p.y));
        }
        Ok(bb)
    }

    /// Validates this outline knowing that `before` (with bounding box `before_box`) was
    /// valid and that this one came from it by moving a few vertices or bending a few
    /// edges: only pairs involving a changed edge can cross now, so only those are tested,
    /// in O(n) rather than a full check. Returns the bounding box if the outline is surely
    /// valid; `None` when this shortcut does not apply (another vertex count, many changed
    /// edges, another bounding box, which changes the tolerance) or finds a fault, so the
    /// caller runs [`Outline::validate`] (which also words the fault the same way).
    pub fn validate_edited(&self, before: &Outline, before_box: &Aabb) -> Option<Aabb> {
        const MOST_CHANGED: usize = 8;
        let n = self.vertices.len();
        if n != before.vertices.len() || self.bulges.len() != n || before.bulges.len() != n || n < 3 {
            return None;
        }
        let mut changed = Vec::new();
        for i in 0..n {
            let j = (i + 1) % n;
            if self.vertices[i] != before.vertices[i]
                || self.vertices[j] != before.vertices[j]
                || self.bulges[i] != before.bulges[i]
            {
                if changed.len() == MOST_CHANGED
                    || !(super::is_finite(self.vertices[i]) && super::is_finite(self.vertices[j]))
                    || !self.bulges[i].is_finite()
                {
                    return None;
                }
                changed.push(i);
            }
        }
        let bb = self.aabb();
        if bb != *before_box {
            return None;
        }
        let area = self.signed_area();
        if area.abs() <= 1e-12 * bb.extent().powi(2).max(1e-300) || !area.is_finite() {
            return None;
        }
        let tol = 1e-9 * bb.extent();
        let mut mine = Vec::new();
        for &i in &changed {
            let e = self.edge(i);
            for w in e.polyline(2f64.to_radians()).windows(2) {
                mine.push((i, w[0], w[1]));
            }
        }
        let reach = mine.iter().fold(Aabb::EMPTY, |acc, p| acc.union(&piece_box(p, tol)));
        let mut theirs = Vec::new();
        for (k, e) in self.edges().enumerate() {
            if !e.aabb().expanded(tol).overlaps(&reach) {
                continue;
            }
            theirs.clear();
            if e.is_arc() {
                theirs.extend(e.polyline(2f64.to_radians()).windows(2).map(|w| (w[0], w[1])));
            } else {
                theirs.push((e.a, e.b));
            }
            for &(ei, a1, b1) in &mine {
                let adjacent = ei == k || (ei + 1) % n == k || (k + 1) % n == ei;
                let bi = piece_box(&(ei, a1, b1), tol);
                for &(a2, b2) in &theirs {
                    if bi.overlaps(&piece_box(&(k, a2, b2), tol))
                        && segments_cross(a1, b1, a2, b2, tol, adjacent).is_some()
                    {
                        return None;
                    }
                }
            }
        }
        Some(bb)
    }

    /// The first pair of non-adjacent edges that cross, with the crossing point. Arcs are
    /// replaced by polylines with a point every 2°. Pieces are found through a tree of their
    /// boxes, so the check stays near n log n however the outline is turned.
    fn first_crossing(&self, bb: &Aabb) -> Option<(usize, usize, Vec2)> {
        let pieces = self.pieces(0);
        let n = self.vertices.len();
        let tol = 1e-9 * bb.extent();
        // Consecutive pieces of an outline are neighbours: the tree keeps their order.
        let tree = BoxTree::build_in_order(pieces.iter().map(|p| piece_box(p, tol)).collect());
        let mut found = None;
        tree.overlapping_pairs(|k, m| {
            let ((ei, a1, b1), (ej, a2, b2)) = (pieces[k.min(m) as usize], pieces[k.max(m) as usize]);
            let adjacent = ei == ej || (ei + 1) % n == ej || (ej + 1) % n == ei;
            found = segments_cross(a1, b1, a2, b2, tol, adjacent).map(|p| (ei.min(ej), ei.max(ej), p));
            found.is_some()
        });
        found
    }

    /// A point where the boundaries of this outline and `other` properly cross, if any: then
    /// the two overlap without one containing the other. Boundaries that only touch (a
    /// shared face, a vertex on an edge) do not count. The answer depends only on the two
    /// outlines (the first crossing piece of `self` in order, then of `other` in tree order).
    pub fn crossing_with(&self, other: &Outline) -> Option<Vec2> {
        let tol = 1e-9 * self.aabb().union(&other.aabb()).extent();
        let theirs = other.pieces(0);
        let tree = BoxTree::build_in_order(theirs.iter().map(|p| piece_box(p, tol)).collect());
        for p in self.pieces(0) {
            let mut found = None;
            // `adjacent = true` asks for a proper crossing only.
            if tree.overlapping(&piece_box(&p, tol), |m| {
                let (_, a2, b2) = theirs[m as usize];
                found = segments_cross(p.1, p.2, a2, b2, tol, true);
                found.is_some()
            }) {
                return found;
            }
        }
        None
    }

    /// The edges as straight pieces `(edge index + offset, a, b)`, arcs as polylines with a
    /// point every 2°.
    pub(crate) fn pieces(&self, offset: usize) -> Vec<(usize, Vec2, Vec2)> {
        let mut pieces = Vec::with_capacity(self.vertices.len());
        for (i, e) in self.edges().enumerate() {
            if e.arc().is_none() {
                pieces.push((i + offset, e.a, e.b));
                continue;
            }
            let pts = e.polyline(2f64.to_radians());
            for w in pts.windows(2) {
                pieces.push((i + offset, w[0], w[1]));
            }
        }
        pieces
    }
}

/// The pairs `(i, j)`, `i < j`, of outlines whose boundaries properly cross (as
/// [`Outline::crossing_with`] would find), in order. One tree over the pieces of all
/// outlines, so nested or crowded outlines cost near n log n in their pieces, not one test
/// per pair of outlines whose boxes overlap.
pub fn crossing_pairs(outlines: &[&Outline]) -> Vec<(usize, usize)> {
    let boxes: Vec<Aabb> = outlines.iter().map(|o| o.aabb()).collect();
    let all = boxes.iter().fold(Aabb::EMPTY, |acc, b| acc.union(b));
    let tol_max = 1e-9 * all.extent();
    // Only outlines whose boxes meet another's can cross anything. (One query each that
    // stops at the first other box: listing every meeting pair would be quadratic for
    // nested outlines, whose boxes all meet.)
    let grown: Vec<Aabb> = boxes.iter().map(|b| b.expanded(tol_max)).collect();
    let solid_tree = BoxTree::build(grown.clone());
    let mut pieces = Vec::new();
    for (k, o) in outlines.iter().enumerate() {
        if solid_tree.overlapping(&grown[k], |j| j as usize != k) {
            pieces.extend(o.pieces(0).into_iter().map(|(_, a, b)| (k, a, b)));
        }
    }
    // Split by position, not in outline order: the pieces of nested outlines must be told
    // apart by where they lie, since the outlines' own boxes all overlap.
    let tree = BoxTree::build(pieces.iter().map(|p| piece_box(p, tol_max)).collect());
    let mut pairs = Vec::new();
    tree.overlapping_pairs(|k, m| {
        let ((i, a1, b1), (j, a2, b2)) = (pieces[k as usize], pieces[m as usize]);
        if i != j {
            let tol = 1e-9 * boxes[i].union(&boxes[j]).extent();
            if segments_cross(a1, b1, a2, b2, tol, true).is_some() {
                pairs.push((i.min(j), i.max(j)));
            }
        }
        false
    });
    pairs.sort_unstable();
    pairs.dedup();
    pairs
}

/// The box of a piece, grown by `tol`.
fn piece_box(p: &(usize, Vec2, Vec2), tol: f64) -> Aabb {
    Aabb::from_points([p.1, p.2]).expanded(tol)
}

/// Whether two segments cross. For pieces of the same or adjacent edges only a proper
/// crossing counts (shared end points are expected); otherwise touching counts too.
fn segments_cross(a1: Vec2, b1: Vec2, a2: Vec2, b2: Vec2, tol: f64, adjacent: bool) -> Option<Vec2> {
    let d1 = b1 - a1;
    let d2 = b2 - a2;
    let denom = cross(d1, d2);
    let len1 = d1.norm();
    let len2 = d2.norm();
    if len1 <= tol || len2 <= tol {
        return None;
    }
    if denom.abs() <= 1e-12 * len1 * len2 {
        // Parallel: overlapping collinear pieces of non-adjacent edges are a fault.
        if adjacent || cross(d1, a2 - a1).abs() > tol * len1 {
            return None;
        }
        let u = d1 / len1;
        let (s0, s1) = ((a2 - a1).dot(&u), (b2 - a1).dot(&u));
        let (lo, hi) = (s0.min(s1), s0.max(s1));
        if hi > tol && lo < len1 - tol {
            return Some(a1 + u * lo.max(0.0));
        }
        return None;
    }
    let s = cross(a2 - a1, d2) / denom;
    let t = cross(a2 - a1, d1) / denom;
    let (e1, e2) = (tol / len1, tol / len2);
    let inside = if adjacent {
        s > e1 && s < 1.0 - e1 && t > e2 && t < 1.0 - e2
    } else {
        s >= -e1 && s <= 1.0 + e1 && t >= -e2 && t <= 1.0 + e2
    };
    inside.then(|| a1 + d1 * s)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square() -> Outline {
        Outline::polygon(vec![Vec2::new(0.0, 0.0), Vec2::new(2.0, 0.0), Vec2::new(2.0, 2.0), Vec2::new(0.0, 2.0)])
    }

    #[test]
    fn area_and_containment_of_a_square() {
        let s = square();
        assert!((s.signed_area() - 4.0).abs() < 1e-12);
        assert!(s.contains(Vec2::new(1.0, 1.0)));
        assert!(!s.contains(Vec2::new(3.0, 1.0)));
        assert!(s.validate().is_ok());
    }

    #[test]
    fn circle_from_two_half_arcs() {
        // Two half circles of radius 1 (bulge 1 each, counter-clockwise): area π.
        let c = Outline { vertices: vec![Vec2::new(-1.0, 0.0), Vec2::new(1.0, 0.0)], bulges: vec![1.0, 1.0] };
        assert!((c.signed_area() - std::f64::consts::PI).abs() < 1e-12);
        assert!(c.contains(Vec2::new(0.0, 0.9)));
        assert!(c.contains(Vec2::new(0.0, -0.9)));
        assert!(!c.contains(Vec2::new(0.8, 0.8)));
        assert!(c.validate().is_ok());
        let p = c.interior_point().expect("interior");
        assert!(c.contains(p));
    }

    #[test]
    fn bow_tie_is_rejected() {
        let b =
            Outline::polygon(vec![Vec2::new(0.0, 0.0), Vec2::new(3.0, 3.0), Vec2::new(3.0, 0.0), Vec2::new(0.0, 1.0)]);
        assert!(matches!(b.validate(), Err(OutlineError::SelfIntersecting(..))));
    }

    #[test]
    fn crossing_boundaries_are_found_but_touching_and_nesting_are_not() {
        let at = |x: f64, y: f64, w: f64| {
            Outline::polygon(vec![Vec2::new(x, y), Vec2::new(x + w, y), Vec2::new(x + w, y + w), Vec2::new(x, y + w)])
        };
        let a = at(0.0, 0.0, 2.0);
        assert!(a.crossing_with(&at(2.0, 0.0, 2.0)).is_none(), "a shared face");
        assert!(a.crossing_with(&at(2.0, 2.0, 2.0)).is_none(), "a shared corner");
        assert!(a.crossing_with(&at(0.5, 0.5, 1.0)).is_none(), "nested");
        assert!(a.crossing_with(&at(1.0, 1.0, 2.0)).is_some(), "overlapping corners");
        let ball = Outline { vertices: vec![Vec2::new(1.3, 2.2), Vec2::new(3.3, 2.2)], bulges: vec![1.0, 1.0] };
        assert!(a.crossing_with(&ball).is_some(), "a circle over a corner");
    }

    #[test]
    fn an_edited_outline_is_checked_where_it_moved() {
        // A comb of teeth; move one tooth's tip through the next tooth, then a little.
        let mut v = vec![Vec2::new(0.0, 0.0)];
        for k in 0..50 {
            let x = f64::from(k);
            v.extend([Vec2::new(x + 0.2, 0.0), Vec2::new(x + 0.5, -1.0), Vec2::new(x + 0.8, 0.0)]);
        }
        v.extend([Vec2::new(51.0, 0.0), Vec2::new(51.0, 2.0), Vec2::new(0.0, 2.0)]);
        let comb = Outline::polygon(v);
        let bb = comb.validate_with_box().expect("valid comb");
        let mut moved = comb.clone();
        moved.vertices[2 + 3 * 10].x += 2.0; // tip of tooth 10 across tooth 11
        assert!(moved.validate().is_err());
        assert_eq!(moved.validate_edited(&comb, &bb), None);
        let mut nudged = comb.clone();
        nudged.vertices[2 + 3 * 10].x += 0.05;
        assert_eq!(nudged.validate_edited(&comb, &bb), Some(bb));
        assert!(nudged.validate().is_ok());
    }

    #[test]
    fn concave_arc_reduces_area() {
        // A square whose top edge bows inward by a shallow arc.
        let mut s = square();
        s.bulges[2] = -0.2;
        assert!(s.signed_area() < 4.0);
        assert!(!s.contains(Vec2::new(1.0, 1.95)));
        assert!(s.contains(Vec2::new(1.0, 1.0)));
    }
}
