//! Everything a ray can meet in a world, in one ray tree ([`super::ray_tree`]): every mesh
//! triangle of every body, and every primitive body whole. Items are stored in leaf order with
//! their triangles' corners beside them, so a leaf's items are read from one place (80 bytes an
//! item). Built when a ray first needs it.

use glam::DVec3;
use rayon::prelude::*;

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
        // Item `i` belongs to the last body whose first item is at or before it.
        let mut firsts = Vec::with_capacity(bodies.len());
        let mut count = 0usize;
        for body in bodies {
            firsts.push(count);
            count += body.mesh().map_or(1, |mesh| mesh.num_triangles());
        }
        let item = |i: u32| {
            let index = firsts.partition_point(|&first| first <= i as usize) - 1;
            let body = &bodies[index];
            match body.mesh() {
                Some(mesh) => {
                    let triangle = (i as usize - firsts[index]) as u32;
                    let t = mesh.triangle(triangle);
                    RayItem {
                        body: index as u32,
                        triangle,
                        corners: [t.a, t.b, t.c],
                    }
                }
                None => RayItem {
                    body: index as u32,
                    triangle: PRIMITIVE,
                    corners: [body.aabb.mins, body.aabb.maxs, body.aabb.mins],
                },
            }
        };
        let (tree, order) = RayTree::new(frame, count, LEAF_ITEMS, |i| {
            let [a, b, c] = item(i).corners;
            (a.min(b).min(c), a.max(b).max(c))
        });
        let items = order.par_iter().map(|&i| item(i)).collect();
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
