//! Closest-point probes: the nearest object to a point or a placed shape, within a maximum distance.

use glam::DVec3;
use parry3d_f64::query::{ClosestPoints, closest_points};

use super::QueryError;
use super::body::Body;
use super::shapes::ProbeShape;
use super::sweep::contact_geometry;
use super::world::{MaterialId, ObjectId, View};

/// The nearest object to a closest-point probe.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClosestHit {
    /// The nearest object.
    pub object: ObjectId,
    /// Metres between the probe and the object; 0 when they overlap.
    pub distance: f64,
    /// The nearest point on the object.
    pub point: DVec3,
    /// The nearest point on the probe shape (the probe point itself for a point probe).
    pub shape_point: DVec3,
    /// Unit normal from the object towards the probe.
    pub normal: DVec3,
    /// True when the probe overlaps the object (touching, penetrating, or enclosed by a closed mesh).
    pub overlapping: bool,
    /// The material of the surface nearest, when the file names one.
    pub material: Option<MaterialId>,
}

/// What a closest-point probe places: a point, or a convex shape.
#[derive(Clone)]
pub enum ClosestProbe<'a> {
    /// A single point.
    Point,
    /// A convex shape centred on the probe's position.
    Shape(&'a ProbeShape),
}

impl View<'_> {
    /// The nearest object within `max_distance` of the probe placed at `at`.
    pub fn closest(
        &self,
        probe: ClosestProbe,
        at: DVec3,
        max_distance: f64,
    ) -> Result<Option<ClosestHit>, QueryError> {
        if !at.is_finite() {
            return Err(QueryError::PositionNotFinite);
        }
        if max_distance.is_nan() || max_distance < 0.0 {
            return Err(QueryError::BadMaxDistance);
        }
        let reach = match probe {
            ClosestProbe::Point => 0.0,
            ClosestProbe::Shape(shape) => shape.bounding_radius,
        };
        // Best-first over object boxes: a box whose distance exceeds the best answer so far is
        // never opened. A hit exactly at `max_distance` still counts, hence the next float up.
        let best = self.world.bvh.find_best(
            max_distance.next_up(),
            |node, _| box_distance(node.mins(), node.maxs(), at) - reach,
            |leaf, best_so_far| {
                let body = self.body(leaf)?;
                let hit = self.closest_on_body(body, &probe, at, best_so_far.min(max_distance))?;
                Some((hit.distance, hit))
            },
        );
        Ok(best.map(|(_, (_, hit))| hit))
    }

    /// The nearest point of one object to the probe, when within `limit`.
    fn closest_on_body(
        &self,
        body: &Body,
        probe: &ClosestProbe,
        at: DVec3,
        limit: f64,
    ) -> Option<ClosestHit> {
        let id = body.object;
        match probe {
            ClosestProbe::Point => {
                let proj = match body
                    .shape()
                    .project_point_with_max_dist(&body.pose, at, false, limit)
                {
                    Some(proj) => proj,
                    // Farther than `limit` from the surface, but possibly inside a solid.
                    None if body.encloses(at)
                        || (!body.is_mesh() && body.shape().contains_point(&body.pose, at)) =>
                    {
                        body.shape().project_point(&body.pose, at, false)
                    }
                    None => return None,
                };
                // A point on the surface is at distance 0 but not inside.
                let inside = proj.point != at
                    && if body.is_mesh() {
                        body.encloses(at)
                    } else {
                        body.shape().contains_point(&body.pose, at)
                    };
                let distance = if inside { 0.0 } else { proj.point.distance(at) };
                if distance > limit {
                    return None;
                }
                let outward = (at - proj.point).try_normalize().unwrap_or(self.world.up());
                let normal = if inside { -outward } else { outward };
                Some(ClosestHit {
                    object: id,
                    distance,
                    point: proj.point,
                    shape_point: at,
                    normal,
                    overlapping: inside,
                    material: body.material,
                })
            }
            ClosestProbe::Shape(shape) => {
                let pose = shape.pose_at(at);
                if body.encloses(at) {
                    let (point, normal) = contact_geometry(body, &pose, shape, self.world.up());
                    return Some(ClosestHit {
                        object: id,
                        distance: 0.0,
                        point,
                        shape_point: at,
                        normal,
                        overlapping: true,
                        material: body.material,
                    });
                }
                match closest_points(&body.pose, &**body.shape(), &pose, &*shape.shape, limit)
                    .ok()?
                {
                    ClosestPoints::Intersecting => {
                        let (point, normal) = contact_geometry(body, &pose, shape, self.world.up());
                        Some(ClosestHit {
                            object: id,
                            distance: 0.0,
                            point,
                            shape_point: point,
                            normal,
                            overlapping: true,
                            material: body.material,
                        })
                    }
                    ClosestPoints::WithinMargin(p1, p2) => {
                        let distance = p1.distance(p2);
                        let normal = (p2 - p1).try_normalize().unwrap_or(self.world.up());
                        Some(ClosestHit {
                            object: id,
                            distance,
                            point: p1,
                            shape_point: p2,
                            normal,
                            overlapping: false,
                            material: body.material,
                        })
                    }
                    ClosestPoints::Disjoint => None,
                }
            }
        }
    }
}

/// The distance from `p` to the box `[mins, maxs]` (0 inside): the per-node cost of the best-first
/// search, kept to a few arithmetic operations since it runs for every node visited.
fn box_distance(mins: DVec3, maxs: DVec3, p: DVec3) -> f64 {
    (mins - p).max(p - maxs).max(DVec3::ZERO).length()
}
