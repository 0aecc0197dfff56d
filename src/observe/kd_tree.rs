//! A static k-d tree over points in three dimensions, with squared Euclidean distances.
//!
//! Built once by recursive median splits on the axis of widest spread (Bentley 1975, Comm. ACM
//! 18, 509; Friedman, Bentley & Finkel 1977, ACM TOMS 3, 209 for the bounds-overlap pruning used
//! in the queries). Leaves hold up to [`LEAF_SIZE`] points, stored contiguously so that a leaf
//! scan is a plain loop over a slice.
//!
//! Queries are exact: `nearest_k` and `within` return the same sets as an exhaustive search
//! (tested against [`crate::observe::spatial::brute_force_within`] and
//! [`crate::observe::spatial::brute_force_nearest_k`]). Ties in distance are broken by the point's
//! index, so results do not depend on the build order or on thread scheduling.
//!
//! Our own tree rather than a crate: the k-d tree crates we tried pull in a build script that
//! compiles C, and the project allows no C toolchain step.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

/// Points per leaf. Small enough that leaf scans stay in L1, large enough that the tree is
/// shallow (common practice: 8–64).
pub const LEAF_SIZE: usize = 32;

#[derive(Debug, Clone, Copy)]
enum Node {
    /// Points `start..end` of the permuted arrays.
    Leaf { start: usize, end: usize },
    /// Points with `coordinate[axis] <= split` are under `left` (the next node), the others under
    /// `right`.
    Split {
        axis: usize,
        split: f64,
        right: usize,
    },
}

/// A neighbour found by a query: the point's index in the input and its squared distance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Found {
    pub index: usize,
    pub distance_squared: f64,
}

/// Orders found points by distance, then index (the max-heap's top is the worst kept).
#[derive(Debug, Clone, Copy, PartialEq)]
struct ByDistance(Found);

impl Eq for ByDistance {}

impl PartialOrd for ByDistance {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for ByDistance {
    fn cmp(&self, other: &Self) -> Ordering {
        self.0
            .distance_squared
            .total_cmp(&other.0.distance_squared)
            .then(self.0.index.cmp(&other.0.index))
    }
}

/// A static k-d tree in three dimensions. `Send + Sync`; queries take `&self`.
#[derive(Debug, Clone)]
pub struct KdTree3 {
    nodes: Vec<Node>,
    /// Points in leaf order.
    points: Vec<[f64; 3]>,
    /// `order[i]` is the input index of `points[i]`.
    order: Vec<usize>,
}

#[inline]
fn distance_squared(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    let d0 = a[0] - b[0];
    let d1 = a[1] - b[1];
    let d2 = a[2] - b[2];
    d0 * d0 + d1 * d1 + d2 * d2
}

impl KdTree3 {
    /// Builds the tree. Non-finite coordinates are the caller's to refuse beforehand; they do not
    /// break the build but such points are never found.
    pub fn new(points: &[[f64; 3]]) -> KdTree3 {
        let mut order: Vec<usize> = (0..points.len()).collect();
        let mut nodes = Vec::with_capacity(2 * points.len() / LEAF_SIZE + 1);
        build(points, &mut order, 0, &mut nodes);
        let permuted = order.iter().map(|&i| points[i]).collect();
        KdTree3 {
            nodes,
            points: permuted,
            order,
        }
    }

    pub fn len(&self) -> usize {
        self.points.len()
    }

    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }

    /// The `k` nearest points to `query`, nearest first (ties by index).
    pub fn nearest_k(&self, query: &[f64; 3], k: usize) -> Vec<Found> {
        if k == 0 || self.points.is_empty() {
            return Vec::new();
        }
        let mut heap: BinaryHeap<ByDistance> = BinaryHeap::with_capacity(k + 1);
        self.search_nearest(0, query, k, &mut heap);
        let mut found: Vec<Found> = heap.into_iter().map(|b| b.0).collect();
        found.sort_by_key(|a| ByDistance(*a));
        found
    }

    /// Every point whose squared distance to `query` is at most `radius_squared`, in no
    /// particular order.
    pub fn within(&self, query: &[f64; 3], radius_squared: f64) -> Vec<Found> {
        let mut found = Vec::new();
        if !self.points.is_empty() {
            self.search_within(0, query, radius_squared, &mut found);
        }
        found
    }

    fn search_nearest(
        &self,
        node: usize,
        query: &[f64; 3],
        k: usize,
        heap: &mut BinaryHeap<ByDistance>,
    ) {
        match self.nodes[node] {
            Node::Leaf { start, end } => {
                for i in start..end {
                    let candidate = ByDistance(Found {
                        index: self.order[i],
                        distance_squared: distance_squared(&self.points[i], query),
                    });
                    if heap.len() < k {
                        heap.push(candidate);
                    } else if heap.peek().is_some_and(|worst| candidate < *worst) {
                        heap.pop();
                        heap.push(candidate);
                    }
                }
            }
            Node::Split { axis, split, right } => {
                let offset = query[axis] - split;
                let (near, far) = if offset <= 0.0 {
                    (node + 1, right)
                } else {
                    (right, node + 1)
                };
                self.search_nearest(near, query, k, heap);
                // `<=` keeps equal-distance points on the far side, so ties resolve by index.
                let worst = heap.peek().map_or(f64::INFINITY, |w| w.0.distance_squared);
                if heap.len() < k || offset * offset <= worst {
                    self.search_nearest(far, query, k, heap);
                }
            }
        }
    }

    fn search_within(
        &self,
        node: usize,
        query: &[f64; 3],
        radius_squared: f64,
        found: &mut Vec<Found>,
    ) {
        match self.nodes[node] {
            Node::Leaf { start, end } => {
                for i in start..end {
                    let d = distance_squared(&self.points[i], query);
                    if d <= radius_squared {
                        found.push(Found {
                            index: self.order[i],
                            distance_squared: d,
                        });
                    }
                }
            }
            Node::Split { axis, split, right } => {
                let offset = query[axis] - split;
                if offset <= 0.0 || offset * offset <= radius_squared {
                    self.search_within(node + 1, query, radius_squared, found);
                }
                if offset > 0.0 || offset * offset <= radius_squared {
                    self.search_within(right, query, radius_squared, found);
                }
            }
        }
    }
}

/// Appends the subtree of `order[..]` (indices into `points`, reordered in place) in pre-order,
/// left child immediately after its parent. `first` is the position of `order[0]` in the whole.
fn build(points: &[[f64; 3]], order: &mut [usize], first: usize, nodes: &mut Vec<Node>) {
    if order.len() <= LEAF_SIZE {
        nodes.push(Node::Leaf {
            start: first,
            end: first + order.len(),
        });
        return;
    }
    let axis = widest_axis(points, order);
    let mid = order.len() / 2;
    order.select_nth_unstable_by(mid, |&a, &b| {
        points[a][axis].total_cmp(&points[b][axis]).then(a.cmp(&b))
    });
    let split = points[order[mid]][axis];
    let here = nodes.len();
    nodes.push(Node::Split {
        axis,
        split,
        right: 0,
    });
    // Left holds order[..=mid] (all ≤ split after the selection); right the rest (all ≥ split).
    let (left, right) = order.split_at_mut(mid + 1);
    build(points, left, first, nodes);
    let right_node = nodes.len();
    build(points, right, first + mid + 1, nodes);
    if let Node::Split { right: r, .. } = &mut nodes[here] {
        *r = right_node;
    }
}

fn widest_axis(points: &[[f64; 3]], order: &[usize]) -> usize {
    let mut low = [f64::INFINITY; 3];
    let mut high = [f64::NEG_INFINITY; 3];
    for &i in order {
        for axis in 0..3 {
            low[axis] = low[axis].min(points[i][axis]);
            high[axis] = high[axis].max(points[i][axis]);
        }
    }
    let spread = [high[0] - low[0], high[1] - low[1], high[2] - low[2]];
    let mut best = 0;
    for axis in 1..3 {
        if spread[axis] > spread[best] {
            best = axis;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lattice() -> Vec<[f64; 3]> {
        let mut p = Vec::new();
        for i in 0..7 {
            for j in 0..6 {
                for k in 0..5 {
                    p.push([i as f64, j as f64 * 0.5, k as f64 * 2.0]);
                }
            }
        }
        p
    }

    fn brute(points: &[[f64; 3]], q: &[f64; 3]) -> Vec<Found> {
        let mut all: Vec<Found> = points
            .iter()
            .enumerate()
            .map(|(index, p)| Found {
                index,
                distance_squared: distance_squared(p, q),
            })
            .collect();
        all.sort_by_key(|a| ByDistance(*a));
        all
    }

    /// A lattice has many exact ties; exhaustive search with the same tie rule is the reference.
    #[test]
    fn nearest_k_matches_exhaustive_search_with_ties() {
        let points = lattice();
        let tree = KdTree3::new(&points);
        for q in [
            [3.0, 1.0, 4.0],
            [0.5, 0.25, 1.0],
            [-1.0, 9.0, 3.0],
            [6.0, 2.5, 8.0],
        ] {
            for k in [1, 5, 33, 100, points.len(), points.len() + 3] {
                let expected: Vec<Found> = brute(&points, &q).into_iter().take(k).collect();
                assert_eq!(tree.nearest_k(&q, k), expected, "query {q:?}, k = {k}");
            }
        }
    }

    #[test]
    fn within_matches_exhaustive_search() {
        let points = lattice();
        let tree = KdTree3::new(&points);
        for q in [[3.0, 1.0, 4.0], [0.0, 0.0, 0.0], [6.5, 3.0, 9.0]] {
            for r2 in [0.0, 1.0, 2.25, 10.0, 1e9] {
                let mut got: Vec<usize> = tree.within(&q, r2).iter().map(|f| f.index).collect();
                got.sort_unstable();
                let expected: Vec<usize> = brute(&points, &q)
                    .into_iter()
                    .filter(|f| f.distance_squared <= r2)
                    .map(|f| f.index)
                    .collect::<std::collections::BTreeSet<_>>()
                    .into_iter()
                    .collect();
                assert_eq!(got, expected, "query {q:?}, r² = {r2}");
            }
        }
    }

    #[test]
    fn empty_and_tiny_trees() {
        let tree = KdTree3::new(&[]);
        assert!(tree.is_empty());
        assert!(tree.nearest_k(&[0.0; 3], 3).is_empty());
        assert!(tree.within(&[0.0; 3], 1.0).is_empty());
        let tree = KdTree3::new(&[[1.0, 2.0, 3.0]]);
        assert_eq!(tree.nearest_k(&[0.0; 3], 3).len(), 1);
        assert_eq!(tree.nearest_k(&[0.0; 3], 3)[0].distance_squared, 14.0);
    }

    /// All points identical: every split has equal keys on both sides.
    #[test]
    fn identical_points() {
        let points = vec![[0.5, 0.5, 0.5]; 200];
        let tree = KdTree3::new(&points);
        let found = tree.nearest_k(&[0.5, 0.5, 0.5], 10);
        let idx: Vec<usize> = found.iter().map(|f| f.index).collect();
        assert_eq!(idx, (0..10).collect::<Vec<_>>());
        assert_eq!(tree.within(&[0.5, 0.5, 0.5], 0.0).len(), 200);
    }
}
