//! A bounding-volume hierarchy over edges, answering "which edges does this ray meet first".
//!
//! The tree is stored flat: nodes in one vector, each leaf pointing at a run of primitives
//! stored in tree order, so a query walks memory mostly forwards. Primitives keep what a
//! ray test needs precomputed (direction and unit normal of a segment; centre and radius of
//! an arc), which is most of the speed over testing raw [`Edge`]s.

use super::{Aabb, ArcRay, Edge, Vec2, ray_arc, ray_segment, right_normal};

/// Leaves hold at most this many primitives.
const LEAF_SIZE: usize = 4;
/// Trees over at least this many edges group consecutive joined edges before splitting.
pub const CLUSTERED_FROM: usize = 4096;
/// Most edges in one group of a clustered build.
const CLUSTER: usize = 16;
/// Number of bins for the surface-area split.
const BINS: usize = 16;

/// One hit of a BVH query.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BvhHit {
    pub t: f64,
    pub point: Vec2,
    /// Unit right normal of the edge at the hit (see [`Edge`]).
    pub normal: Vec2,
    /// The id given to the edge when the tree was built.
    pub id: u32,
}

/// What a ray test needs of one edge. Kept small (40 bytes) because the leaves of a query
/// are read in a scattered order: the rarely needed arc data lives in a separate table.
#[derive(Clone, Copy, Debug)]
struct Prim {
    a: Vec2,
    /// b − a
    d: Vec2,
    id: u32,
    /// Index into [`Bvh::arcs`], or [`STRAIGHT`] for a segment.
    arc: u32,
}

/// `Prim::arc` of a straight edge.
const STRAIGHT: u32 = u32::MAX;

/// Circle of an arc edge.
#[derive(Clone, Copy, Debug)]
struct ArcPrim {
    center: Vec2,
    radius: f64,
    /// +1/−1: the side of the chord the arc bows to.
    side: f64,
}

impl Prim {
    fn new(e: &Edge, id: u32, arcs: &mut Vec<ArcPrim>) -> Self {
        let arc = match e.arc() {
            Some(g) if g.radius != 0.0 => {
                arcs.push(ArcPrim { center: g.center, radius: g.radius, side: g.side });
                (arcs.len() - 1) as u32
            }
            _ => STRAIGHT,
        };
        Self { a: e.a, d: e.b - e.a, id, arc }
    }

    /// Calls `f` with every crossing in `(t_min, t_max)`. `from_self`: the ray starts on this
    /// edge, so only a second crossing of an arc can count. The intersection code is
    /// [`ray_segment`] and [`ray_arc`], shared with [`Edge::cast`].
    #[inline]
    #[allow(clippy::too_many_arguments)] // the ray, its range and the arc table; all needed
    fn cast(
        &self,
        arcs: &[ArcPrim],
        o: Vec2,
        dir: Vec2,
        t_min: f64,
        t_max: f64,
        from_self: bool,
        mut f: impl FnMut(f64, Vec2),
    ) {
        if self.arc == STRAIGHT {
            if !from_self && let Some(t) = ray_segment(o, dir, self.a, self.d, t_min, t_max) {
                f(t, right_normal(self.d));
            }
            return;
        }
        let ArcPrim { center, radius, side } = arcs[self.arc as usize];
        let arc = ArcRay::new(self.a, self.d, center, radius, side);
        for t in ray_arc(o, dir, &arc, t_min, t_max, from_self).into_iter().flatten() {
            f(t, arc.normal_at(o + dir * t));
        }
    }
}

#[derive(Clone, Copy, Debug)]
struct Node {
    bb: Aabb,
    /// For a leaf: index of its first primitive; for an inner node: index of its first
    /// child (the second is next to it).
    first: u32,
    /// Number of primitives for a leaf, 0 for an inner node.
    count: u32,
}

/// A bounding-volume hierarchy over a set of edges.
#[derive(Clone, Debug, Default)]
pub struct Bvh {
    nodes: Vec<Node>,
    prims: Vec<Prim>,
    arcs: Vec<ArcPrim>,
    /// [`Bvh::cost`] when the tree was built; a refit that makes it much worse rebuilds.
    built_cost: f64,
}

impl Bvh {
    /// Builds the tree over `edges`; hits report the edge's index in `edges` as its id.
    ///
    /// From [`CLUSTERED_FROM`] edges on, runs of up to [`CLUSTER`] consecutive edges that
    /// join end to end (the edges of an outline or a path, in order) are grouped first: the
    /// surface-area split runs over the groups, and each group becomes a small subtree that
    /// keeps its edges in order. That cuts the build's work by about the group size (the
    /// binned split costs O(n log n) with a large constant) for little loss of quality,
    /// since consecutive edges of an outline lie next to each other.
    pub fn build(edges: &[Edge]) -> Self {
        let boxes: Vec<Aabb> = edges.iter().map(Edge::aabb).collect();
        let (nodes, idx) = if edges.len() >= CLUSTERED_FROM {
            Self::clustered_nodes(edges, &boxes)
        } else {
            let centers: Vec<Vec2> = boxes.iter().map(Aabb::center).collect();
            let mut idx: Vec<u32> = (0..edges.len() as u32).collect();
            let mut nodes = Vec::with_capacity(2 * edges.len() / LEAF_SIZE + 1);
            let root_bb = boxes.iter().fold(Aabb::EMPTY, |acc, b| acc.union(b));
            nodes.push(Node { bb: root_bb, first: 0, count: edges.len() as u32 });
            if !edges.is_empty() {
                Self::split(&mut nodes, 0, &mut idx, &boxes, &centers, LEAF_SIZE);
            }
            (nodes, idx)
        };
        let mut arcs = Vec::new();
        let prims = idx.iter().map(|&i| Prim::new(&edges[i as usize], i, &mut arcs)).collect();
        let mut bvh = Self { nodes, prims, arcs, built_cost: 0.0 };
        bvh.built_cost = bvh.cost();
        bvh
    }

    /// The nodes and edge order of a tree whose surface-area split runs over groups of
    /// consecutive joined edges (see [`Bvh::build`]).
    fn clustered_nodes(edges: &[Edge], boxes: &[Aabb]) -> (Vec<Node>, Vec<u32>) {
        // Runs of joined edges: (first edge, number of edges).
        let mut runs: Vec<(u32, u32)> = Vec::with_capacity(edges.len() / CLUSTER + 1);
        for (i, e) in edges.iter().enumerate() {
            match runs.last_mut() {
                Some(r) if (r.1 as usize) < CLUSTER && edges[i - 1].b == e.a => r.1 += 1,
                _ => runs.push((i as u32, 1)),
            }
        }
        let run_box =
            |r: &(u32, u32)| boxes[r.0 as usize..(r.0 + r.1) as usize].iter().fold(Aabb::EMPTY, |acc, b| acc.union(b));
        let run_boxes: Vec<Aabb> = runs.iter().map(run_box).collect();
        let centers: Vec<Vec2> = run_boxes.iter().map(Aabb::center).collect();
        let mut ridx: Vec<u32> = (0..runs.len() as u32).collect();
        let mut nodes = Vec::with_capacity(2 * edges.len() / LEAF_SIZE + 1);
        let root_bb = run_boxes.iter().fold(Aabb::EMPTY, |acc, b| acc.union(b));
        nodes.push(Node { bb: root_bb, first: 0, count: runs.len() as u32 });
        Self::split(&mut nodes, 0, &mut ridx, &run_boxes, &centers, 1);
        // Edges in tree order, and where each position of `ridx` starts among them.
        let mut idx = Vec::with_capacity(edges.len());
        let mut start = Vec::with_capacity(runs.len() + 1);
        for &r in &ridx {
            start.push(idx.len() as u32);
            let (first, n) = runs[r as usize];
            idx.extend(first..first + n);
        }
        start.push(idx.len() as u32);
        // Leaves of the split hold runs; give each the edges of its runs, split in order
        // into leaves of at most LEAF_SIZE edges.
        for ni in 0..nodes.len() {
            let Node { first, count, .. } = nodes[ni];
            if count == 0 {
                continue;
            }
            let (lo, hi) = (start[first as usize], start[(first + count) as usize]);
            nodes[ni].first = lo;
            nodes[ni].count = hi - lo;
            let mut todo = vec![ni];
            while let Some(k) = todo.pop() {
                let Node { first, count, .. } = nodes[k];
                if count as usize <= LEAF_SIZE {
                    continue;
                }
                let mid = count / 2;
                let child = nodes.len() as u32;
                for (a, n) in [(first, mid), (first + mid, count - mid)] {
                    let bb = idx[a as usize..(a + n) as usize]
                        .iter()
                        .fold(Aabb::EMPTY, |acc, &i| acc.union(&boxes[i as usize]));
                    nodes.push(Node { bb, first: a, count: n });
                }
                nodes[k].first = child;
                nodes[k].count = 0;
                todo.push(child as usize);
                todo.push(child as usize + 1);
            }
        }
        (nodes, idx)
    }

    /// Moves the tree's edges to `edges` (the same number as it was built over, edge `i`
    /// replacing edge `i`) keeping the tree's shape and recomputing its boxes from the
    /// leaves up: O(n), for edits that move vertices. Returns `false`, leaving the tree
    /// unusable until rebuilt, if the number of edges differs or if the refitted tree's
    /// [`Bvh::cost`] has grown past twice that of the tree as built (its boxes then overlap
    /// so much that a new tree pays for itself).
    #[must_use]
    pub fn refit(&mut self, edges: &[Edge]) -> bool {
        if edges.len() != self.prims.len() {
            return false;
        }
        if edges.is_empty() {
            return true;
        }
        self.arcs.clear();
        for p in &mut self.prims {
            *p = Prim::new(&edges[p.id as usize], p.id, &mut self.arcs);
        }
        // Children always come after their parent, so one pass backwards refits.
        for ni in (0..self.nodes.len()).rev() {
            let Node { first, count, .. } = self.nodes[ni];
            let (first, count) = (first as usize, count as usize);
            self.nodes[ni].bb = if count > 0 {
                self.prims[first..first + count]
                    .iter()
                    .fold(Aabb::EMPTY, |acc, p| acc.union(&edges[p.id as usize].aabb()))
            } else {
                self.nodes[first].bb.union(&self.nodes[first + 1].bb)
            };
        }
        self.cost() <= 2.0 * self.built_cost
    }

    /// Sum of the half perimeters of all node boxes: a measure of how much work a query
    /// does, used to tell when a refitted tree has degraded.
    pub fn cost(&self) -> f64 {
        self.nodes.iter().map(|n| half_perimeter(&n.bb)).sum()
    }

    pub fn len(&self) -> usize {
        self.prims.len()
    }

    pub fn is_empty(&self) -> bool {
        self.prims.is_empty()
    }

    /// Bounding box of everything in the tree.
    pub fn bounds(&self) -> Aabb {
        self.nodes.first().map_or(Aabb::EMPTY, |n| n.bb)
    }

    /// Splits node `ni` (over `idx[first..first + count]`) by the binned surface-area
    /// heuristic until nodes hold at most `leaf` items.
    fn split(nodes: &mut Vec<Node>, ni: usize, idx: &mut [u32], boxes: &[Aabb], centers: &[Vec2], leaf: usize) {
        let Node { first, count, .. } = nodes[ni];
        let (first, count) = (first as usize, count as usize);
        if count <= leaf {
            return;
        }
        let range = &mut idx[first..first + count];
        let cb = Aabb::from_points(range.iter().map(|&i| centers[i as usize]));
        let size = cb.size();
        let mut best: Option<(f64, usize, f64)> = None; // (cost, axis, split position)
        for axis in 0..2 {
            let lo = cb.min[axis];
            let ext = size[axis];
            if ext <= 0.0 {
                continue;
            }
            let mut bins = [(Aabb::EMPTY, 0usize); BINS];
            for &i in range.iter() {
                let b = (((centers[i as usize][axis] - lo) / ext * BINS as f64) as usize).min(BINS - 1);
                bins[b].0 = bins[b].0.union(&boxes[i as usize]);
                bins[b].1 += 1;
            }
            // Sweep from the right to get suffix areas.
            let mut right_cost = [0.0; BINS];
            let mut acc = (Aabb::EMPTY, 0usize);
            for k in (1..BINS).rev() {
                acc.0 = acc.0.union(&bins[k].0);
                acc.1 += bins[k].1;
                right_cost[k] = half_perimeter(&acc.0) * acc.1 as f64;
            }
            let mut left = (Aabb::EMPTY, 0usize);
            for k in 0..BINS - 1 {
                left.0 = left.0.union(&bins[k].0);
                left.1 += bins[k].1;
                if left.1 == 0 || left.1 == count {
                    continue;
                }
                let cost = half_perimeter(&left.0) * left.1 as f64 + right_cost[k + 1];
                if best.is_none_or(|(c, _, _)| cost < c) {
                    best = Some((cost, axis, lo + ext * (k + 1) as f64 / BINS as f64));
                }
            }
        }
        let mid = match best {
            Some((_, axis, pos)) => {
                let mut l = 0;
                for k in 0..range.len() {
                    if centers[range[k] as usize][axis] < pos {
                        range.swap(k, l);
                        l += 1;
                    }
                }
                if l == 0 || l == count { count / 2 } else { l }
            }
            // All centres coincide: split in half.
            None => count / 2,
        };
        let child = nodes.len();
        for (start, n) in [(first, mid), (first + mid, count - mid)] {
            let bb = idx[start..start + n].iter().fold(Aabb::EMPTY, |acc, &i| acc.union(&boxes[i as usize]));
            nodes.push(Node { bb, first: start as u32, count: n as u32 });
        }
        nodes[ni].first = child as u32;
        nodes[ni].count = 0;
        Self::split(nodes, child, idx, boxes, centers, leaf);
        Self::split(nodes, child + 1, idx, boxes, centers, leaf);
    }

    /// Visits, nearest box first, every leaf the ray `origin + t·dir` reaches within
    /// `(t_min, limit)`. `leaf` tests the leaf's primitives and returns the new `limit`, which
    /// may only shrink; boxes entered beyond it are skipped.
    #[inline]
    fn walk(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64, mut leaf: impl FnMut(&[Prim], f64) -> f64) {
        if self.prims.is_empty() {
            return;
        }
        let slab = Slab::new(origin, dir);
        let mut limit = t_max;
        // Far children still to visit, with the distance at which the ray enters their box.
        // The limit only shrinks, so a box is still reachable exactly when that entry
        // distance is within the limit: no second box test on the way back.
        // Two plain arrays rather than one of pairs: zeroing them is a short memset, where an
        // array of padded pairs took a measurable share of a short query.
        let mut stack_node = [0u32; 64];
        let mut stack_enter = [0.0f64; 64];
        let mut sp = 0usize;
        let mut node = 0usize;
        if !slab.enter(&self.nodes[0].bb, t_min, limit).0 {
            return;
        }
        loop {
            let n = &self.nodes[node];
            if n.count > 0 {
                let first = n.first as usize;
                limit = leaf(&self.prims[first..first + n.count as usize], limit);
            } else {
                let c0 = n.first as usize;
                let (hit0, enter0) = slab.enter(&self.nodes[c0].bb, t_min, limit);
                let (hit1, enter1) = slab.enter(&self.nodes[c0 + 1].bb, t_min, limit);
                if hit0 || hit1 {
                    // Nearer child first (the first one on a tie); the other waits on the
                    // stack if the ray meets it too. Written as selects rather than a match
                    // so the data-dependent choice costs fewer mispredicted branches.
                    let first_near = hit0 && (!hit1 || enter0 <= enter1);
                    let (near, far, far_enter) = if first_near { (c0, c0 + 1, enter1) } else { (c0 + 1, c0, enter0) };
                    if sp < stack_node.len() {
                        stack_node[sp] = far as u32;
                        stack_enter[sp] = far_enter;
                        sp += usize::from(hit0 && hit1);
                    }
                    node = near;
                    continue;
                }
            }
            // Pop the next node that the ray can still reach.
            loop {
                if sp == 0 {
                    return;
                }
                sp -= 1;
                if stack_enter[sp] <= limit {
                    node = stack_node[sp] as usize;
                    break;
                }
            }
        }
    }

    /// The nearest hit of the ray `origin + t·dir` (unit `dir`) for `t` in `(t_min, t_max)`,
    /// together with every other hit no farther than `group_eps` beyond it (a vertex, or two
    /// faces that touch). Edges whose ids are in `on_edges` are those the ray starts on: a
    /// straight one is skipped, an arc can only be hit again at its far crossing.
    ///
    /// `hits` is cleared and filled in order of distance.
    #[allow(clippy::too_many_arguments)] // the query's inputs; a struct would only rename them
    pub fn cast_group(
        &self,
        origin: Vec2,
        dir: Vec2,
        t_min: f64,
        t_max: f64,
        group_eps: f64,
        on_edges: &[u32],
        hits: &mut Vec<BvhHit>,
    ) {
        hits.clear();
        let mut best = f64::INFINITY;
        let mut limit = t_max;
        self.walk(origin, dir, t_min, t_max, |prims, lim| {
            for p in prims {
                let from_self = !on_edges.is_empty() && on_edges.contains(&p.id);
                p.cast(&self.arcs, origin, dir, t_min, lim, from_self, |t, normal| {
                    best = best.min(t);
                    hits.push(BvhHit { t, point: origin + dir * t, normal, id: p.id });
                });
            }
            limit = lim.min(best + group_eps);
            limit
        });
        hits.retain(|h| h.t <= limit);
        hits.sort_by(|a, b| a.t.total_cmp(&b.t));
    }

    /// The nearest hit only (no grouping, no edges to skip). Of hits at exactly the same
    /// distance, the first found wins, as in [`Bvh::cast_group`].
    pub fn cast(&self, origin: Vec2, dir: Vec2, t_min: f64, t_max: f64) -> Option<BvhHit> {
        let mut best: Option<(f64, Vec2, u32)> = None;
        self.walk(origin, dir, t_min, t_max, |prims, mut lim| {
            for p in prims {
                p.cast(&self.arcs, origin, dir, t_min, lim, false, |t, normal| {
                    if t < lim {
                        lim = t;
                        best = Some((t, normal, p.id));
                    }
                });
            }
            lim
        });
        best.map(|(t, normal, id)| BvhHit { t, point: origin + dir * t, normal, id })
    }
}

/// A ray set up for box tests.
///
/// [`Aabb::ray_interval`] takes `min`/`max` of each slab's two distances, which must cope
/// with NaN (0 · ∞ when the ray runs along a slab face). NaN can only appear when a component
/// of `1/dir` is infinite; for every other ray the nearer face of each slab is known from the
/// sign of `1/dir` once per query and the test reduces to plain comparisons. The distances
/// are the same products as in `ray_interval`, so both give the same answer.
struct Slab {
    origin: Vec2,
    inv: Vec2,
    /// Both components of `inv` are finite: the fast path applies.
    finite: bool,
    neg_x: bool,
    neg_y: bool,
}

impl Slab {
    #[inline]
    fn new(origin: Vec2, dir: Vec2) -> Self {
        let inv = Vec2::new(1.0 / dir.x, 1.0 / dir.y);
        Self { origin, inv, finite: inv.x.is_finite() && inv.y.is_finite(), neg_x: inv.x < 0.0, neg_y: inv.y < 0.0 }
    }

    /// Whether the ray meets the box within `[t_min, t_max]`, and the distance at which it
    /// enters, as [`Aabb::ray_interval`] (the distance means nothing on a miss).
    #[inline]
    fn enter(&self, bb: &Aabb, t_min: f64, t_max: f64) -> (bool, f64) {
        if !self.finite {
            return bb.ray_interval(self.origin, self.inv, t_min, t_max).map_or((false, 0.0), |(t0, _)| (true, t0));
        }
        let (nx, fx) = if self.neg_x { (bb.max.x, bb.min.x) } else { (bb.min.x, bb.max.x) };
        let (ny, fy) = if self.neg_y { (bb.max.y, bb.min.y) } else { (bb.min.y, bb.max.y) };
        // Rounding is monotone, so the near face's distance is the smaller of the two.
        let tnx = (nx - self.origin.x) * self.inv.x;
        let tfx = (fx - self.origin.x) * self.inv.x;
        let tny = (ny - self.origin.y) * self.inv.y;
        let tfy = (fy - self.origin.y) * self.inv.y;
        let t0 = max(max(t_min, tnx), tny);
        let t1 = min(min(t_max, tfx), tfy);
        (t0 <= t1, t0)
    }
}

/// `a.max(b)` for numbers that are not NaN, as one compare-and-select.
#[inline]
fn max(a: f64, b: f64) -> f64 {
    if a > b { a } else { b }
}

/// `a.min(b)` for numbers that are not NaN, as one compare-and-select.
#[inline]
fn min(a: f64, b: f64) -> f64 {
    if a < b { a } else { b }
}

fn half_perimeter(b: &Aabb) -> f64 {
    if b.is_empty() {
        return 0.0;
    }
    let s = b.size();
    s.x + s.y
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agrees_with_brute_force() {
        let mut r = crate::rng::Rng::new(7);
        let edges: Vec<Edge> = (0..500)
            .map(|_| {
                let a = Vec2::new(r.uniform() * 100.0, r.uniform() * 100.0);
                let b = a + Vec2::new(r.uniform() * 10.0 - 5.0, r.uniform() * 10.0 - 5.0);
                let bulge = if r.uniform() < 0.3 { r.uniform() * 2.0 - 1.0 } else { 0.0 };
                Edge { a, b, bulge }
            })
            .collect();
        let bvh = Bvh::build(&edges);
        for _ in 0..2000 {
            let o = Vec2::new(r.uniform() * 120.0 - 10.0, r.uniform() * 120.0 - 10.0);
            let d = super::super::unit(r.uniform() * std::f64::consts::TAU);
            let brute =
                edges.iter().filter_map(|e| e.cast(o, d, 1e-9, f64::INFINITY)).map(|h| h.t).min_by(f64::total_cmp);
            let got = bvh.cast(o, d, 1e-9, f64::INFINITY).map(|h| h.t);
            match (brute, got) {
                (None, None) => {}
                (Some(a), Some(b)) => assert!((a - b).abs() < 1e-9, "{a} vs {b}"),
                other => panic!("mismatch {other:?}"),
            }
        }
    }

    #[test]
    fn clustered_build_agrees_with_brute_force() {
        // A closed zigzag of 6,000 joined edges (grouped when built) plus loose edges.
        let mut r = crate::rng::Rng::new(9);
        let n = 6_000;
        let pts: Vec<Vec2> = (0..n)
            .map(|i| {
                let a = i as f64 / n as f64 * std::f64::consts::TAU;
                let rad = 50.0 + if i % 2 == 0 { 0.0 } else { 1.5 };
                Vec2::new(rad * a.cos(), rad * a.sin())
            })
            .collect();
        let mut edges: Vec<Edge> = (0..n).map(|i| Edge::segment(pts[i], pts[(i + 1) % n])).collect();
        for _ in 0..50 {
            let a = Vec2::new(r.uniform() * 100.0 - 50.0, r.uniform() * 100.0 - 50.0);
            edges.push(Edge { a, b: a + Vec2::new(r.uniform() * 10.0, r.uniform() * 10.0), bulge: 0.3 });
        }
        assert!(edges.len() >= CLUSTERED_FROM);
        let bvh = Bvh::build(&edges);
        assert_eq!(bvh.len(), edges.len());
        for _ in 0..1000 {
            let o = Vec2::new(r.uniform() * 120.0 - 60.0, r.uniform() * 120.0 - 60.0);
            let d = super::super::unit(r.uniform() * std::f64::consts::TAU);
            let brute =
                edges.iter().filter_map(|e| e.cast(o, d, 1e-9, f64::INFINITY)).map(|h| h.t).min_by(f64::total_cmp);
            let got = bvh.cast(o, d, 1e-9, f64::INFINITY).map(|h| h.t);
            match (brute, got) {
                (None, None) => {}
                (Some(a), Some(b)) => assert!((a - b).abs() < 1e-9, "{a} vs {b}"),
                other => panic!("mismatch {other:?}"),
            }
        }
    }

    #[test]
    fn refit_follows_moved_edges() {
        let mut edges: Vec<Edge> =
            (0..40).map(|i| Edge::segment(Vec2::new(f64::from(i), 0.0), Vec2::new(f64::from(i) + 1.0, 0.0))).collect();
        let mut bvh = Bvh::build(&edges);
        edges[17].a.y = 3.0;
        assert!(bvh.refit(&edges));
        let h = bvh.cast(Vec2::new(17.05, 5.0), Vec2::new(0.0, -1.0), 1e-9, f64::INFINITY).expect("hit");
        assert_eq!(h.id, 17);
        assert!((h.point.y - 2.85).abs() < 1e-9);
        assert!(!bvh.refit(&edges[..39]), "another number of edges needs a rebuild");
    }

    #[test]
    fn vertex_hit_returns_both_edges() {
        let edges = [
            Edge::segment(Vec2::new(0.0, 0.0), Vec2::new(1.0, 1.0)),
            Edge::segment(Vec2::new(1.0, 1.0), Vec2::new(2.0, 0.0)),
        ];
        let bvh = Bvh::build(&edges);
        let mut hits = Vec::new();
        bvh.cast_group(Vec2::new(1.0, 5.0), Vec2::new(0.0, -1.0), 1e-9, f64::INFINITY, 1e-9, &[], &mut hits);
        assert_eq!(hits.len(), 2);
    }
}
