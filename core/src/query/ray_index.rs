//! Everything a ray can meet in a world, in one ray tree ([`super::ray_tree`]): every mesh
//! triangle of every body, and every primitive body whole. Items are stored in leaf order with
//! their triangles' corners beside them, so a leaf's items are read from one place (80 bytes an
//! item). Built when a ray first needs it.

use glam::DVec3;

use super::body::Body;
use super::ray_tree::{RayFrame, RayTree, TreeRay};

/// Most items in one leaf.
const LEAF_ITEMS: usize = 4;

/// What stands in for a triangle number on a primitive's item.
const PRIMITIVE: u32 = u32::MAX;

/// One thing a ray can meet: a body's triangle, or a primitive body.
#[derive(Debug, Clone, Copy)]
pub(crate) struct RayItem {
    /// The body, by index into the world's bodies.
    pub body: u32,
    /// The body's triangle, or [`PRIMITIVE`].
    triangle: u32,
    /// The triangle's corners (unused for a primitive).
    pub corners: [DVec3; 3],
}

impl RayItem {
    /// The body's triangle, or `None` for a primitive.
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
    /// The index of `bodies`, with coordinates measured in `frame`.
    pub fn new(frame: RayFrame, bodies: &[Body]) -> RayIndex {
        let mut items = Vec::new();
        for (index, body) in bodies.iter().enumerate() {
            let body_index = index as u32;
            match body.mesh() {
                Some(mesh) => items.extend(mesh.triangles().enumerate().map(|(k, t)| RayItem {
                    body: body_index,
                    triangle: k as u32,
                    corners: [t.a, t.b, t.c],
                })),
                None => items.push(RayItem {
                    body: body_index,
                    triangle: PRIMITIVE,
                    corners: [body.aabb.mins, body.aabb.maxs, body.aabb.mins],
                }),
            }
        }
        let (tree, order) = RayTree::new(frame, items.len(), LEAF_ITEMS, |i| {
            let [a, b, c] = items[i as usize].corners;
            (a.min(b).min(c), a.max(b).max(c))
        });
        let items = order.iter().map(|&i| items[i as usize]).collect();
        RayIndex { tree, items }
    }

    /// The frame of the tree's coordinates.
    pub fn frame(&self) -> RayFrame {
        self.tree.frame()
    }

    /// Calls `leaf(items, reach)` on every leaf the ray may meet within `reach`, nearest box first;
    /// `leaf` returns the new reach (see [`RayTree::nearest_first`]).
    pub fn nearest_first(
        &self,
        ray: &TreeRay,
        reach: f64,
        mut leaf: impl FnMut(&[RayItem], f64) -> f64,
    ) {
        self.tree
            .nearest_first(ray, reach, |range, reach| leaf(&self.items[range], reach));
    }
}
