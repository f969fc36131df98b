//! A static tree over axis-aligned boxes answering "which boxes overlap this one", used by
//! the checks (crossing edges, overlapping solids) so that they stay near n log n whatever
//! the orientation of the shapes: a sweep along x degenerates to n² when a long outline
//! stands upright, a tree of boxes does not.

use super::{Aabb, Vec2};

/// Leaves hold at most this many boxes.
const LEAF_SIZE: usize = 4;

#[derive(Clone, Copy, Debug)]
struct Node {
    bb: Aabb,
    /// For a leaf: index of its first item in [`BoxTree::items`]; for an inner node: index
    /// of its first child (the second is next to it).
    first: u32,
    /// Number of items of a leaf, 0 for an inner node.
    count: u32,
}

/// A bounding-volume tree over boxes, built by median splits of the box centres along the
/// longer side (O(n log n), no surface-area heuristic: the queries are box overlaps, which
/// do not need a tuned tree).
#[derive(Clone, Debug, Default)]
pub struct BoxTree {
    nodes: Vec<Node>,
    /// Item indices in tree order.
    items: Vec<u32>,
    /// The boxes, by item index.
    boxes: Vec<Aabb>,
}

impl BoxTree {
    /// Builds the tree; queries report the index of a box in `boxes`.
    pub fn build(boxes: Vec<Aabb>) -> Self {
        let mut items: Vec<u32> = (0..boxes.len() as u32).collect();
        let centers: Vec<Vec2> = boxes.iter().map(Aabb::center).collect();
        let mut nodes = Vec::with_capacity(2 * boxes.len() / LEAF_SIZE + 1);
        if !boxes.is_empty() {
            let bb = boxes.iter().fold(Aabb::EMPTY, |acc, b| acc.union(b));
            nodes.push(Node { bb, first: 0, count: boxes.len() as u32 });
            // Nodes still to split (an explicit stack: deep trees must not overflow the call stack).
            let mut todo = vec![0usize];
            while let Some(ni) = todo.pop() {
                let Node { first, count, .. } = nodes[ni];
                let (first, count) = (first as usize, count as usize);
                if count <= LEAF_SIZE {
                    continue;
                }
                let range = &mut items[first..first + count];
                let cb = Aabb::from_points(range.iter().map(|&i| centers[i as usize]));
                let axis = usize::from(cb.size().y > cb.size().x);
                let mid = count / 2;
                range.select_nth_unstable_by(mid, |&a, &b| {
                    centers[a as usize][axis].total_cmp(&centers[b as usize][axis]).then(a.cmp(&b))
                });
                let child = nodes.len();
                for (start, n) in [(first, mid), (first + mid, count - mid)] {
                    let bb = items[start..start + n].iter().fold(Aabb::EMPTY, |acc, &i| acc.union(&boxes[i as usize]));
                    nodes.push(Node { bb, first: start as u32, count: n as u32 });
                }
                nodes[ni].first = child as u32;
                nodes[ni].count = 0;
                todo.push(child + 1);
                todo.push(child);
            }
        }
        Self { nodes, items, boxes }
    }

    /// Builds the tree keeping the boxes in the order given, halving runs of it: O(n), no
    /// sorting. Good when neighbours in the order are neighbours in the plane, as the
    /// pieces of an outline are; queries report the index of a box in `boxes`.
    pub fn build_in_order(boxes: Vec<Aabb>) -> Self {
        let items: Vec<u32> = (0..boxes.len() as u32).collect();
        let mut nodes = Vec::with_capacity(2 * boxes.len() / LEAF_SIZE + 1);
        if !boxes.is_empty() {
            nodes.push(Node { bb: Aabb::EMPTY, first: 0, count: boxes.len() as u32 });
            let mut todo = vec![0usize];
            while let Some(ni) = todo.pop() {
                let Node { first, count, .. } = nodes[ni];
                if count as usize <= LEAF_SIZE {
                    continue;
                }
                let mid = count / 2;
                let child = nodes.len();
                nodes.push(Node { bb: Aabb::EMPTY, first, count: mid });
                nodes.push(Node { bb: Aabb::EMPTY, first: first + mid, count: count - mid });
                nodes[ni].first = child as u32;
                nodes[ni].count = 0;
                todo.push(child + 1);
                todo.push(child);
            }
            // Children come after their parent: boxes from the leaves up, O(n).
            for ni in (0..nodes.len()).rev() {
                let Node { first, count, .. } = nodes[ni];
                let (first, count) = (first as usize, count as usize);
                nodes[ni].bb = if count > 0 {
                    boxes[first..first + count].iter().fold(Aabb::EMPTY, |acc, b| acc.union(b))
                } else {
                    nodes[first].bb.union(&nodes[first + 1].bb)
                };
            }
        }
        Self { nodes, items, boxes }
    }

    pub fn len(&self) -> usize {
        self.boxes.len()
    }

    pub fn is_empty(&self) -> bool {
        self.boxes.is_empty()
    }

    /// The box of item `i`.
    pub fn item_box(&self, i: usize) -> &Aabb {
        &self.boxes[i]
    }

    /// Calls `visit` with every item whose box overlaps `query` (touching counts), until
    /// `visit` returns `true`; returns whether it did.
    pub fn overlapping(&self, query: &Aabb, mut visit: impl FnMut(u32) -> bool) -> bool {
        if self.nodes.is_empty() {
            return false;
        }
        // Median splits halve the count at each level, so the tree is at most 64 deep and
        // the stack (one pending sibling per level) never overflows.
        let mut stack = [0u32; 66];
        let mut sp = 1usize;
        while sp > 0 {
            sp -= 1;
            let n = &self.nodes[stack[sp] as usize];
            if !n.bb.overlaps(query) {
                continue;
            }
            if n.count > 0 {
                let first = n.first as usize;
                for &i in &self.items[first..first + n.count as usize] {
                    if self.boxes[i as usize].overlaps(query) && visit(i) {
                        return true;
                    }
                }
            } else {
                stack[sp] = n.first + 1;
                stack[sp + 1] = n.first;
                sp += 2;
            }
        }
        false
    }
}

impl BoxTree {
    /// Calls `visit` once with every pair of distinct items whose boxes overlap (in either
    /// order), until `visit` returns `true`; returns whether it did. Walks pairs of nodes
    /// (a self-join), so each pair is met once and no query starts again from the root.
    pub fn overlapping_pairs(&self, mut visit: impl FnMut(u32, u32) -> bool) -> bool {
        if self.nodes.is_empty() {
            return false;
        }
        let mut stack: Vec<(u32, u32)> = vec![(0, 0)];
        while let Some((a, b)) = stack.pop() {
            let (na, nb) = (&self.nodes[a as usize], &self.nodes[b as usize]);
            if a == b {
                if na.count > 0 {
                    let items = &self.items[na.first as usize..(na.first + na.count) as usize];
                    for (k, &i) in items.iter().enumerate() {
                        for &j in &items[k + 1..] {
                            if self.boxes[i as usize].overlaps(&self.boxes[j as usize]) && visit(i, j) {
                                return true;
                            }
                        }
                    }
                } else {
                    let c = na.first;
                    stack.extend([(c + 1, c + 1), (c, c + 1), (c, c)]);
                }
                continue;
            }
            if !na.bb.overlaps(&nb.bb) {
                continue;
            }
            match (na.count > 0, nb.count > 0) {
                (true, true) => {
                    for &i in &self.items[na.first as usize..(na.first + na.count) as usize] {
                        let bi = &self.boxes[i as usize];
                        if !bi.overlaps(&nb.bb) {
                            continue;
                        }
                        for &j in &self.items[nb.first as usize..(nb.first + nb.count) as usize] {
                            if bi.overlaps(&self.boxes[j as usize]) && visit(i, j) {
                                return true;
                            }
                        }
                    }
                }
                // Open the inner node (the larger box if both are inner).
                (false, true) => stack.extend([(na.first + 1, b), (na.first, b)]),
                (true, false) => stack.extend([(a, nb.first + 1), (a, nb.first)]),
                (false, false) => {
                    let s = |n: &Node| n.bb.size().x + n.bb.size().y;
                    if s(na) >= s(nb) {
                        stack.extend([(na.first + 1, b), (na.first, b)]);
                    } else {
                        stack.extend([(a, nb.first + 1), (a, nb.first)]);
                    }
                }
            }
        }
        false
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agrees_with_brute_force() {
        let mut r = crate::rng::Rng::new(11);
        let boxes: Vec<Aabb> = (0..700)
            .map(|_| {
                let a = Vec2::new(r.uniform() * 100.0, r.uniform() * 100.0);
                Aabb::from_points([a, a + Vec2::new(r.uniform() * 8.0, r.uniform() * 8.0)])
            })
            .collect();
        let tree = BoxTree::build(boxes.clone());
        check_against_brute_force(&tree, &boxes);
        check_against_brute_force(&BoxTree::build_in_order(boxes.clone()), &boxes);
    }

    fn check_against_brute_force(tree: &BoxTree, boxes: &[Aabb]) {
        for q in boxes.iter().take(200) {
            let mut got = Vec::new();
            tree.overlapping(q, |i| {
                got.push(i as usize);
                false
            });
            got.sort_unstable();
            let want: Vec<usize> = (0..boxes.len()).filter(|&i| boxes[i].overlaps(q)).collect();
            assert_eq!(got, want);
        }
        let mut got = Vec::new();
        tree.overlapping_pairs(|i, j| {
            got.push((i.min(j) as usize, i.max(j) as usize));
            false
        });
        got.sort_unstable();
        let mut want = Vec::new();
        for i in 0..boxes.len() {
            for j in i + 1..boxes.len() {
                if boxes[i].overlaps(&boxes[j]) {
                    want.push((i, j));
                }
            }
        }
        assert_eq!(got, want);
    }
}
