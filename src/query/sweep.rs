//! Sweep probes: a convex shape with a fixed turn moved along a polyline, answered continuously
//! (exact time of impact per segment, never sampled).

use glam::DVec3;
use parry3d_f64::bounding_volume::{Aabb, BoundingVolume};
use parry3d_f64::math::Pose;
use parry3d_f64::query::{ShapeCastOptions, ShapeCastStatus, cast_shapes, contact};

use super::shapes::ProbeShape;
use super::world::{Body, ObjectId, View};
use super::{PathGeometry, QueryError};

/// Where a swept shape first touches one object.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SweepHit {
    /// The object touched.
    pub object: ObjectId,
    /// Path length travelled before the impact, metres.
    pub distance: f64,
    /// Fraction of the whole path length.
    pub t: f64,
    /// Index of the path segment where the impact happens.
    pub segment: usize,
    /// The shape's centre at impact.
    pub position: DVec3,
    /// The contact point on the object.
    pub point: DVec3,
    /// Unit normal from the object towards the shape.
    pub normal: DVec3,
    /// True when the shape already overlaps the object at the start of the path (then `t` is 0).
    pub started_inside: bool,
}

/// How far before an impact the contact geometry is measured again, so that the witness point and
/// normal come from a clean closest-point query rather than from the (possibly sideways) state at the
/// exact time of impact. Common practice; the value is ours, well below the millimetre users read.
const RECONTACT_BACKOFF: f64 = 1e-5;

impl View<'_> {
    /// The first impact of the shape along the path, over all objects in the view.
    pub fn sweep_first(
        &self,
        shape: &ProbeShape,
        path: &[DVec3],
    ) -> Result<Option<SweepHit>, QueryError> {
        Ok(self.sweep_all(shape, path)?.into_iter().next())
    }

    /// For every object touched along the path, its first impact; sorted by distance travelled.
    pub fn sweep_all(
        &self,
        shape: &ProbeShape,
        path: &[DVec3],
    ) -> Result<Vec<SweepHit>, QueryError> {
        let geometry = PathGeometry::new(path)?;
        let mut hits: Vec<SweepHit> = Vec::new();
        let mut done = vec![false; self.world.len()];
        for (s, (a, b)) in geometry.segments().enumerate() {
            let len = a.distance(b);
            if len == 0.0 {
                continue;
            }
            let swept = swept_aabb(shape, a, b, 0.0);
            let candidates: Vec<u32> = self.world.bvh.intersect_aabb(&swept).collect();
            for id in candidates {
                let id = id as ObjectId;
                if done[id] || !self.allows(id) {
                    continue;
                }
                if let Some(hit) = self.segment_hit(id, shape, &geometry, s, a, b) {
                    done[id] = true;
                    hits.push(hit);
                }
            }
        }
        hits.sort_by(|x, y| {
            x.distance
                .total_cmp(&y.distance)
                .then(x.object.cmp(&y.object))
        });
        Ok(hits)
    }

    /// The impact of the shape with one object on segment `s` (`a → b`) of the path, if any.
    fn segment_hit(
        &self,
        id: ObjectId,
        shape: &ProbeShape,
        geometry: &PathGeometry,
        s: usize,
        a: DVec3,
        b: DVec3,
    ) -> Option<SweepHit> {
        let body = &self.world.bodies[id];
        let len = a.distance(b);
        let dir = (b - a) / len;
        let start = shape.pose_at(a);
        if s == 0 && body.closed && body.shape.contains_point(&body.pose, a) {
            return Some(impact(body, id, shape, geometry, s, a, dir, 0.0, true));
        }
        let options = ShapeCastOptions {
            max_time_of_impact: len,
            target_distance: 0.0,
            stop_at_penetration: true,
            compute_impact_geometry_on_penetration: true,
        };
        let cast = cast_shapes(
            &body.pose,
            DVec3::ZERO,
            &*body.shape,
            &start,
            dir,
            &*shape.shape,
            options,
        )
        .ok()??;
        let started_inside =
            s == 0 && cast.status == ShapeCastStatus::PenetratingOrWithinTargetDist;
        Some(impact(
            body,
            id,
            shape,
            geometry,
            s,
            a,
            dir,
            cast.time_of_impact,
            started_inside,
        ))
    }
}

/// The hit record for an impact at `toi` metres along segment `s`, with the contact point and normal
/// measured by a closest-point query a hair before impact.
#[allow(clippy::too_many_arguments)]
fn impact(
    body: &Body,
    id: ObjectId,
    shape: &ProbeShape,
    geometry: &PathGeometry,
    s: usize,
    a: DVec3,
    dir: DVec3,
    toi: f64,
    started_inside: bool,
) -> SweepHit {
    let position = a + dir * toi;
    let before = if started_inside {
        position
    } else {
        a + dir * (toi - RECONTACT_BACKOFF)
    };
    let (point, normal) = contact_geometry(body, &shape.pose_at(before), shape, -dir);
    let distance = geometry.distance_at(s, toi);
    SweepHit {
        object: id,
        distance,
        t: geometry.fraction(distance),
        segment: s,
        position,
        point,
        normal,
        started_inside,
    }
}

/// The contact point on the body and the unit normal from the body towards the shape at `pose`.
/// `fallback` is used as the normal when the contact has no direction (deep overlap of a point).
pub(crate) fn contact_geometry(
    body: &Body,
    pose: &Pose,
    shape: &ProbeShape,
    fallback: DVec3,
) -> (DVec3, DVec3) {
    let prediction = 10.0 * RECONTACT_BACKOFF + shape.bounding_radius;
    match contact(&body.pose, &*body.shape, pose, &*shape.shape, prediction) {
        Ok(Some(c)) if c.normal1.length_squared() > 0.0 => (c.point1, c.normal1.normalize()),
        Ok(Some(c)) => (c.point1, fallback),
        _ => {
            let centre = pose.translation;
            let p = parry3d_f64::query::PointQuery::project_point(
                &*body.shape,
                &body.pose,
                centre,
                false,
            )
            .point;
            let n = (centre - p).try_normalize().unwrap_or(fallback);
            (p, n)
        }
    }
}

/// The bounding box of the shape swept over a segment, grown by `margin`.
fn swept_aabb(shape: &ProbeShape, a: DVec3, b: DVec3, margin: f64) -> Aabb {
    shape
        .shape
        .compute_aabb(&shape.pose_at(a))
        .merged(&shape.shape.compute_aabb(&shape.pose_at(b)))
        .loosened(margin)
}
