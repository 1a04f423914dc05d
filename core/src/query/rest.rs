//! Rest probes: where a placed shape rests on the level below it. Exact, from the shape itself: the
//! gap is the time of impact of the shape moved straight down onto a surface that faces up; a shape
//! already sunk into a surface below it has a negative gap, minus its penetration depth.

use glam::DVec3;

use super::shapes::ProbeShape;
use super::world::{MaterialId, ObjectId, View};
use super::{QueryError, TOUCH_TOLERANCE};

/// What a shape rests on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RestHit {
    /// The support.
    pub object: ObjectId,
    /// The gap between the shape and the support, metres; negative when the shape sinks into it.
    pub gap: f64,
    /// The contact point on the support (at the end of the gap, or its deepest point).
    pub point: DVec3,
    /// The support's unit normal there, facing up.
    pub normal: DVec3,
    /// The support's material, when the file names one.
    pub material: Option<MaterialId>,
}

/// How far above its place a resting shape starts its drop, metres. Ours.
const LIFT: f64 = 1e-3;

/// A surface faces up when its normal is within 60° of the level's up (cos 60° = 0.5): a floor, a
/// ramp, a shelf — not a wall the shape merely stands beside. Ours.
const SUPPORT_COSINE: f64 = 0.5;

impl View<'_> {
    /// What the shape placed at `at` rests on within `search` metres below it: the deepest surface
    /// facing up that it sinks into, or else the first it meets moving straight down. `None` when
    /// nothing is below within reach (it would fall).
    pub fn rest(
        &self,
        shape: &ProbeShape,
        at: DVec3,
        search: f64,
    ) -> Result<Option<RestHit>, QueryError> {
        if !(search.is_finite() && search > 0.0) {
            return Err(QueryError::BadMaxDistance);
        }
        let up = self.world.up();
        let sunk = self
            .overlap(shape, at)?
            .into_iter()
            .filter(|h| h.depth > TOUCH_TOLERANCE && h.direction.dot(up) >= SUPPORT_COSINE)
            .max_by(|a, b| a.depth.total_cmp(&b.depth).then(b.object.cmp(&a.object)));
        if let Some(h) = sunk {
            return Ok(Some(RestHit {
                object: h.object,
                gap: -h.depth,
                point: h.point,
                normal: h.direction,
                material: h.material,
            }));
        }
        // From a millimetre up, so that a shape set exactly on a floor meets it after a clean
        // millimetre (with the floor's normal) rather than at a touch of no direction.
        let path = [at + up * LIFT, at - up * search];
        let support = self
            .sweep_all(shape, &path)?
            .into_iter()
            .map(|h| (self.surface_normal(h.object, h.point), h))
            .filter(|(normal, _)| normal.dot(up) >= SUPPORT_COSINE)
            .min_by(|(_, a), (_, b)| {
                a.distance
                    .total_cmp(&b.distance)
                    .then(a.object.cmp(&b.object))
            });
        Ok(support.map(|(normal, h)| RestHit {
            object: h.object,
            gap: (h.distance - LIFT).max(0.0),
            point: h.point,
            normal,
            material: h.material,
        }))
    }

    /// The outward normal of an object's surface at `point` (on it), seen from above: the way from
    /// the surface to a point a hair above it. A sweep's own contact normal is no use here: where
    /// two faces meet flat, any direction in them is as near.
    fn surface_normal(&self, object: ObjectId, point: DVec3) -> DVec3 {
        let up = self.world.up();
        let probe = point + up * SURFACE_HAIR;
        self.world
            .bodies
            .iter()
            .filter(|b| b.object == object)
            .map(|b| b.shape().project_point(&b.pose, probe, false).point)
            .min_by(|a, b| a.distance(probe).total_cmp(&b.distance(probe)))
            .and_then(|on| (probe - on).try_normalize())
            .unwrap_or(up)
    }
}

/// How far above a support's surface its normal is measured from, metres. Ours: well below any
/// feature of a level, well above rounding at level coordinates.
const SURFACE_HAIR: f64 = 1e-4;
