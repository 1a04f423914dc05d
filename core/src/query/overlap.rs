//! Overlap probes: every object a placed shape overlaps, with penetration depth and direction.

use glam::DVec3;
use parry3d_f64::query::contact;

use super::QueryError;
use super::shapes::ProbeShape;
use super::world::{MaterialId, ObjectId, View};

/// Contacts shallower than this count as touching, not overlapping: a capsule set down exactly on a
/// floor must not be reported as inside it because of rounding. Common practice; the value is ours.
pub const TOUCH_TOLERANCE: f64 = 1e-9;

/// One object a placed shape overlaps.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OverlapHit {
    /// The object overlapped.
    pub object: ObjectId,
    /// Penetration depth in metres.
    pub depth: f64,
    /// Unit direction; moving the shape by `depth` along it separates the two.
    pub direction: DVec3,
    /// The deepest point on the object.
    pub point: DVec3,
    /// True when the shape is entirely inside a closed mesh.
    pub enclosed: bool,
    /// The material of the surface overlapped, when the file names one.
    pub material: Option<MaterialId>,
}

impl View<'_> {
    /// Every object the shape placed at `at` overlaps, deepest first.
    pub fn overlap(&self, shape: &ProbeShape, at: DVec3) -> Result<Vec<OverlapHit>, QueryError> {
        if !at.is_finite() {
            return Err(QueryError::PositionNotFinite);
        }
        let pose = shape.pose_at(at);
        let bounds = shape.shape.compute_aabb(&pose);
        let mut hits = Vec::new();
        for leaf in self.world.bvh.intersect_aabb(&bounds) {
            let Some(body) = self.body(leaf) else {
                continue;
            };
            let id = body.object;
            let touching = contact(&body.pose, &**body.shape(), &pose, &*shape.shape, 0.0)
                .ok()
                .flatten();
            if body.encloses(at) {
                // The centre is inside a closed mesh: push the shape out through the nearest wall.
                let wall = body.nearest_wall(at);
                let direction = (wall - at).try_normalize().unwrap_or(self.world.up());
                let depth = wall.distance(at) + shape.extent_along(-direction);
                let enclosed = touching.is_none_or(|c| c.dist > 0.0);
                hits.push(OverlapHit {
                    object: id,
                    depth,
                    direction,
                    point: wall,
                    enclosed,
                    material: body.material,
                });
            } else if let Some(c) = touching.filter(|c| c.dist < -TOUCH_TOLERANCE) {
                let direction = c.normal1.try_normalize().unwrap_or(self.world.up());
                hits.push(OverlapHit {
                    object: id,
                    depth: -c.dist,
                    direction,
                    point: c.point1,
                    enclosed: false,
                    material: body.material,
                });
            }
        }
        // An object split into parts keeps its deepest overlap.
        hits.sort_by(|a, b| a.object.cmp(&b.object).then(b.depth.total_cmp(&a.depth)));
        hits.dedup_by_key(|h| h.object);
        hits.sort_by(|a, b| b.depth.total_cmp(&a.depth).then(a.object.cmp(&b.object)));
        Ok(hits)
    }
}
