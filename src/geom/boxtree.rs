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
        let mut stack = vec![0usize];
        while let Some(ni) = stack.pop() {
            let n = &self.nodes[ni];
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
                stack.push(n.first as usize + 1);
                stack.push(n.first as usize);
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
    }
}
