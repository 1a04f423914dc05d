//! Everything a ray can meet in a world, in one ray tree ([`super::ray_tree`]): every mesh
//! triangle of every body, and every primitive body whole. Items are stored in leaf order with
//! their triangles' corners beside them, so a leaf's items are read from one place (80 bytes an
//! item). Built when a ray first needs it.

use glam::DVec3;

use super::body::Body;
use super::ray_tree::{RayFrame, RayTree, TreeItems, TreeRay};

/// Most items in one leaf.
const LEAF_ITEMS: usize = 4;

/// What stands in for a triangle number on a primitive's item.
const PRIMITIVE: u32 = u32::MAX;

/// One thing a ray can meet: a body's triangle, or a primitive body.
#[derive(Debug, Clone, Copy)]
pub(crate) struct RayItem {
    /// The body, by index into the world's bodies.
    pub body: u32,
    /// The triangle's number in its object (as the level's file numbers it), or [`PRIMITIVE`].
    triangle: u32,
    /// The triangle's corners (unused for a primitive).
    pub corners: [DVec3; 3],
}

impl RayItem {
    /// The triangle's number in its object (as the level's file numbers it: what a hit reports),
    /// or `None` for a primitive.
    pub fn triangle(&self) -> Option<u32> {
        (self.triangle != PRIMITIVE).then_some(self.triangle)
    }
}

/// The world's ray tree and its items in leaf order.
#[derive(Debug)]
pub(crate) struct RayIndex {
    tree: RayTree,
    items: Box<[RayItem]>,
}

impl RayIndex {
    /// The index of `bodies`, with coordinates measured in `frame`; `number(body, k)` is the
    /// file's number of the body's triangle `k`, kept with the item so a hit needs no look-ups.
    pub fn new(
        frame: RayFrame,
        bodies: &[Body],
        number: impl Fn(&Body, u32) -> u32 + Copy,
    ) -> RayIndex {
        let count = bodies
            .iter()
            .map(|body| {
                body.with_triangles(|_, triangles| triangles.len())
                    .unwrap_or(1)
            })
            .sum();
        // The tree from the items' boxes; then the items in body order, put in the tree's leaf
        // order in place. Each body's mesh is read where it is held, twice, so the build never
        // holds the boxes and the items at once, nor two copies of the items.
        let mut boxes = TreeItems::with_capacity(frame, count);
        for_each_item(bodies, number, |item| {
            let [a, b, c] = item.corners;
            boxes.push(a.min(b).min(c), a.max(b).max(c));
        });
        let (tree, order) = boxes.build(LEAF_ITEMS);
        let mut items = Vec::with_capacity(count);
        for_each_item(bodies, number, |item| items.push(item));
        put_in_order(&mut items, &order);
        RayIndex {
            tree,
            items: items.into_boxed_slice(),
        }
    }

    /// The frame of the tree's coordinates.
    pub fn frame(&self) -> RayFrame {
        self.tree.frame()
    }

    /// Calls `leaf(items, reach)` on every leaf the ray may meet within `reach`, nearest box first;
    /// `leaf` returns the new reach (see [`RayTree::nearest_first`]).
    pub fn nearest_first<'s>(
        &'s self,
        ray: &TreeRay,
        reach: f64,
        mut leaf: impl FnMut(&'s [RayItem], f64) -> f64,
    ) {
        self.tree
            .nearest_first(ray, reach, |range, reach| leaf(&self.items[range], reach));
    }

    /// Calls `leaf(items)` on every leaf whose box may overlap the box `lo ..= hi`: every item
    /// whose own box does is among them.
    pub fn overlapping(&self, lo: DVec3, hi: DVec3, mut leaf: impl FnMut(&[RayItem])) {
        self.tree
            .overlapping(lo, hi, |range| leaf(&self.items[range]));
    }
}

/// Calls `each` on every item of `bodies`, in body order: a mesh's triangles in order (numbered by
/// `number`), or the primitive whole (its box standing in for corners).
fn for_each_item(
    bodies: &[Body],
    number: impl Fn(&Body, u32) -> u32,
    mut each: impl FnMut(RayItem),
) {
    for (index, body) in bodies.iter().enumerate() {
        let body_id = index as u32;
        let mesh = body.with_triangles(|vertices, triangles| {
            for (t, corners) in triangles.iter().enumerate() {
                each(RayItem {
                    body: body_id,
                    triangle: number(body, t as u32),
                    corners: corners.map(|v| vertices[v as usize]),
                });
            }
        });
        if mesh.is_none() {
            each(RayItem {
                body: body_id,
                triangle: PRIMITIVE,
                corners: [body.aabb.mins, body.aabb.maxs, body.aabb.mins],
            });
        }
    }
}

/// Rearranges `items` so that position `p` holds what was at `order[p]` (`order` is a permutation),
/// in place: each cycle of the permutation is followed once, keeping one item aside.
fn put_in_order<T: Copy>(items: &mut [T], order: &[u32]) {
    let mut placed = vec![false; items.len()];
    for start in 0..items.len() {
        if placed[start] {
            continue;
        }
        let aside = items[start];
        let mut at = start;
        loop {
            placed[at] = true;
            let from = order[at] as usize;
            if from == start {
                items[at] = aside;
                break;
            }
            items[at] = items[from];
            at = from;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn items_are_put_in_the_order_asked() {
        // Against the plain way: a new array that reads each position's item from `order`.
        let mut state = 7u64;
        for len in [0usize, 1, 2, 5, 64, 1000] {
            let mut order: Vec<u32> = (0..len as u32).collect();
            for k in (1..len).rev() {
                state = state.wrapping_mul(6364136223846793005).wrapping_add(1);
                order.swap(k, (state >> 33) as usize % (k + 1));
            }
            let original: Vec<u64> = (0..len as u64).map(|x| x * 10 + 3).collect();
            let expected: Vec<u64> = order.iter().map(|&i| original[i as usize]).collect();
            let mut items = original.clone();
            put_in_order(&mut items, &order);
            assert_eq!(items, expected, "{len} items");
        }
    }
}
