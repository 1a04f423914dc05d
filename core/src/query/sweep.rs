//! Sweep probes: a convex shape with a fixed turn moved along a polyline, answered continuously
//! (exact time of impact per segment, never sampled).

use glam::{DQuat, DVec3};
use parry3d_f64::bounding_volume::{Aabb, BoundingVolume};
use parry3d_f64::math::Pose;
use parry3d_f64::query::details::closest_points_segment_segment_with_locations_nD;
use parry3d_f64::query::{
    ClosestPoints, ShapeCastOptions, ShapeCastStatus, cast_shapes, closest_points, contact,
};
use parry3d_f64::query::{PointQuery, Ray, RayCast};
use parry3d_f64::shape::{FeatureId, Segment, Shape, TriMesh, Triangle};

use super::body::Body;
use super::rounded;
use super::shapes::ProbeShape;
use super::world::{MaterialId, ObjectId, View};
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
    /// The shape's turn at impact (its fixed turn, unless the path turns it).
    pub rotation: DQuat,
    /// The contact point on the object.
    pub point: DVec3,
    /// Unit normal from the object towards the shape.
    pub normal: DVec3,
    /// True when the shape already overlaps the object at the start of the path (then `t` is 0).
    pub started_inside: bool,
    /// The triangle touched, as the object's file numbers it, when known (meshes).
    pub triangle: Option<u32>,
    /// The material of the surface touched, when the file names one.
    pub material: Option<MaterialId>,
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
        let geometry = PathGeometry::new(path)?;
        let first = self.impacts(shape, &geometry, true).into_iter().next();
        Ok(first.map(|i| self.measure(i, shape, &geometry)))
    }

    /// For every object touched along the path, its first impact; sorted by distance travelled.
    pub fn sweep_all(
        &self,
        shape: &ProbeShape,
        path: &[DVec3],
    ) -> Result<Vec<SweepHit>, QueryError> {
        let geometry = PathGeometry::new(path)?;
        let impacts = self.impacts(shape, &geometry, false);
        Ok(impacts
            .into_iter()
            .map(|i| self.measure(i, shape, &geometry))
            .collect())
    }

    /// Times of impact along the path, sorted by distance travelled: every object's first, or with
    /// `first_only` just the earliest (later candidates are cut off as soon as one is found).
    fn impacts(
        &self,
        shape: &ProbeShape,
        geometry: &PathGeometry,
        first_only: bool,
    ) -> Vec<Impact> {
        let mut impacts: Vec<Impact> = Vec::new();
        let mut done = vec![false; self.world.len()];
        for (segment, (a, b)) in geometry.segments().enumerate() {
            let len = a.distance(b);
            if len == 0.0 {
                continue;
            }
            let mut limit = len;
            let dir = (b - a) / len;
            // Candidates in the order the moving shape's box reaches theirs: once the nearest impact
            // is known, every candidate the box reaches later is skipped.
            let reach = shape.shape.compute_aabb(&shape.pose_at(DVec3::ZERO));
            let ray = Ray::new(a, dir);
            let mut candidates: Vec<(f64, u32)> = self
                .world
                .bvh
                .intersect_aabb(&swept_aabb(shape, a, b))
                .filter_map(|leaf| {
                    let body = self.body(leaf)?;
                    // Grown by a hair so a shape exactly touching a face along it stays a candidate.
                    let grown = Aabb::new(body.aabb.mins - reach.maxs, body.aabb.maxs - reach.mins)
                        .loosened(1e-7);
                    let entry = grown.cast_local_ray(&ray, len, true)?;
                    Some((entry, leaf))
                })
                .collect();
            candidates.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
            let mut found: Vec<Impact> = Vec::new();
            for (entry, leaf) in candidates {
                if first_only && entry > limit {
                    break;
                }
                let body = &self.world.bodies[leaf as usize];
                if done[body.object] {
                    continue;
                }
                if let Some((toi, part, started_inside)) =
                    time_of_impact(body, shape, segment, a, b, limit)
                {
                    found.push(Impact {
                        object: body.object,
                        body: leaf as usize,
                        segment,
                        toi,
                        part,
                        started_inside,
                    });
                    if first_only {
                        limit = limit.min(toi);
                    }
                }
            }
            // An object split into parts keeps its earliest impact.
            found.sort_by(|x, y| x.object.cmp(&y.object).then(x.toi.total_cmp(&y.toi)));
            found.dedup_by_key(|i| i.object);
            for impact in &found {
                done[impact.object] = true;
            }
            impacts.extend(found);
            if first_only && !impacts.is_empty() {
                break;
            }
        }
        impacts.sort_by(|x, y| {
            geometry
                .distance_at(x.segment, x.toi)
                .total_cmp(&geometry.distance_at(y.segment, y.toi))
                .then(x.object.cmp(&y.object))
        });
        if first_only {
            impacts.truncate(1);
        }
        impacts
    }

    /// The full hit record of an impact, with the contact point and normal measured a hair before it.
    fn measure(&self, impact: Impact, shape: &ProbeShape, geometry: &PathGeometry) -> SweepHit {
        let (a, b) = geometry
            .segments()
            .nth(impact.segment)
            .expect("the impact's segment exists");
        let dir = (b - a) / a.distance(b);
        let body = &self.world.bodies[impact.body];
        let refined = match shape.ball_radius() {
            Some(radius) if !impact.started_inside => {
                refine_ball_impact(body, radius, a, dir, impact.toi, impact.part)
            }
            _ => None,
        };
        let (toi, point, normal) = refined.unwrap_or_else(|| {
            let position = a + dir * impact.toi;
            let before = if impact.started_inside {
                position
            } else {
                position - dir * RECONTACT_BACKOFF
            };
            let pose = shape.pose_at(before);
            let part = match body.mesh() {
                Some(mesh) if impact.part < mesh.num_triangles() as u32 => {
                    // The exact capsule contact needs no back-off: at impact the axis is a radius
                    // away from the triangle (unless the path started inside).
                    let triangle = mesh.triangle(impact.part);
                    let exact = (!impact.started_inside)
                        .then(|| {
                            capsule_triangle_contact(&triangle, &shape.pose_at(position), shape)
                        })
                        .flatten();
                    // Only the iterative contact needs its normal set to the face's; the capsule's
                    // exact one has it already (and the check costs a point query on the mesh).
                    exact.or_else(|| {
                        let (point, normal) =
                            part_contact(&triangle, &Pose::IDENTITY, &pose, shape)?;
                        let normal = match impact.started_inside {
                            true => normal,
                            false => face_normal(body, shape, before, normal),
                        };
                        Some((point, normal))
                    })
                }
                Some(_) => None,
                None => part_contact(&**body.shape(), &body.pose, &pose, shape),
            };
            let (point, normal) =
                part.unwrap_or_else(|| contact_geometry(body, &pose, shape, -dir));
            (impact.toi, point, normal)
        });
        let distance = geometry.distance_at(impact.segment, toi);
        let triangle = body
            .mesh()
            .filter(|m| impact.part < m.num_triangles() as u32)
            .map(|_| {
                self.world
                    .triangle_number(body.object, body.triangle_id(impact.part))
            });
        SweepHit {
            object: impact.object,
            distance,
            t: geometry.fraction(distance),
            segment: impact.segment,
            position: a + dir * toi,
            rotation: shape.rotation,
            point,
            normal,
            started_inside: impact.started_inside,
            triangle,
            material: body.material,
        }
    }
}

/// When (metres along segment `segment`, `a → b`, up to `limit`) the shape first touches one
/// object, which part of it (the triangle of a mesh), and whether it already overlaps it at the
/// start of the path.
fn time_of_impact(
    body: &Body,
    shape: &ProbeShape,
    segment: usize,
    a: DVec3,
    b: DVec3,
    limit: f64,
) -> Option<(f64, u32, bool)> {
    let dir = (b - a) / a.distance(b);
    if segment == 0 && body.encloses(a) {
        return Some((0.0, u32::MAX, true));
    }
    if let (Some(mesh), Some(axis)) = (body.mesh(), shape.rounded()) {
        return rounded_time_of_impact(mesh, &body.pose, shape, axis, segment, a, dir, limit);
    }
    let options = ShapeCastOptions {
        max_time_of_impact: limit,
        target_distance: 0.0,
        stop_at_penetration: true,
        compute_impact_geometry_on_penetration: false,
    };
    let start = shape.pose_at(a);
    let cast = cast_shapes(
        &body.pose,
        DVec3::ZERO,
        &**body.shape(),
        &start,
        dir,
        &*shape.shape,
        options,
    )
    .ok()??;
    let started_inside =
        segment == 0 && cast.status == ShapeCastStatus::PenetratingOrWithinTargetDist;
    Some((cast.time_of_impact, cast.subshape1, started_inside))
}

/// [`time_of_impact`] of a ball or capsule (`axis`: its ends relative to the centre, and its radius)
/// against a mesh, in closed form per triangle ([`super::rounded`]): the mesh's BVH is searched
/// best-first, each node's box grown by the shape's box and cast along the path, so triangles the
/// shape reaches later than the best impact so far are never looked at. A triangle the shape
/// already touches at `a` is an impact at 0.
#[allow(clippy::too_many_arguments)]
fn rounded_time_of_impact(
    mesh: &TriMesh,
    pose: &Pose,
    shape: &ProbeShape,
    (start, end, radius): (DVec3, DVec3, f64),
    segment: usize,
    a: DVec3,
    dir: DVec3,
    limit: f64,
) -> Option<(f64, u32, bool)> {
    // In the mesh's own frame (meshes are built in level coordinates, so this is usually the same).
    let local_a = pose.inverse_transform_point(a);
    let local_dir = pose.rotation.inverse() * dir;
    let (s0, s1) = (
        local_a + pose.rotation.inverse() * start,
        local_a + pose.rotation.inverse() * end,
    );
    let reach = shape.shape.compute_aabb(&Pose::from_parts(
        DVec3::ZERO,
        pose.rotation.inverse() * shape.rotation,
    ));
    let ray = Ray::new(local_a, local_dir);
    let ball = s0 == s1;
    let (triangle, toi) = mesh.bvh().find_best(
        limit,
        |node, best| {
            let boxed = node.aabb();
            Aabb::new(boxed.mins - reach.maxs, boxed.maxs - reach.mins)
                .loosened(1e-7)
                .cast_local_ray(&ray, best, true)
                .unwrap_or(f64::MAX)
        },
        |tri, best| {
            let triangle = mesh.triangle(tri);
            if ball {
                if rounded::ball_touches(&triangle, s0, radius) {
                    return Some(0.0);
                }
                rounded::ball_entry(&triangle, s0, local_dir, radius, best)
            } else {
                if rounded::capsule_touches(&triangle, s0, s1, radius) {
                    return Some(0.0);
                }
                rounded::capsule_entry(&triangle, s0, s1, local_dir, radius, best)
            }
        },
    )?;
    Some((toi, triangle, segment == 0 && toi == 0.0))
}

/// A time of impact found along the path, before its contact geometry is measured.
struct Impact {
    object: ObjectId,
    /// The body (part of the object) that is hit.
    body: usize,
    segment: usize,
    toi: f64,
    /// The triangle of a mesh that is hit (`u32::MAX` when not known).
    part: u32,
    started_inside: bool,
}

/// The exact time of impact of a ball of `radius` whose centre moves from `a` along unit `dir`
/// against a body, refined from parry's estimate `toi` (and the triangle `part` it names, `u32::MAX`
/// when none), with the contact point and the unit normal.
///
/// The gap is the distance from the centre to a convex part (a mesh triangle near the contact, or a
/// primitive) minus the radius: an exact point projection (Ericson, Real-Time Collision Detection,
/// 2005, §5.1.5 for triangles), convex in the distance travelled, with slope `normal · dir`. Newton's
/// method on a convex decreasing function, started left of the root, never overshoots and converges
/// quadratically (Ortega & Rheinboldt, Iterative Solution of Nonlinear Equations, 1970, §13.3). The
/// earliest root over the parts is the impact. `None` when no part converges near `toi`.
fn refine_ball_impact(
    body: &Body,
    radius: f64,
    a: DVec3,
    dir: DVec3,
    toi: f64,
    part: u32,
) -> Option<(f64, DVec3, DVec3)> {
    let refine = |project: &dyn Fn(DVec3) -> DVec3| -> Option<(f64, DVec3, DVec3)> {
        // A part that is not touching at parry's estimate (to well beyond its error) is not the
        // first contact: skip it without iterating.
        let at_estimate = a + dir * toi;
        if at_estimate.distance(project(at_estimate)) - radius > 1e-4 {
            return None;
        }
        let mut s = (toi - 1e-5).max(0.0);
        for _ in 0..60 {
            let centre = a + dir * s;
            let point = project(centre);
            let away = centre - point;
            let gap = away.length() - radius;
            if gap < -1e-9 {
                return None;
            }
            let normal = away.try_normalize()?;
            if gap <= 1e-12 {
                return ((s - toi).abs() <= 1e-3).then_some((s, point, normal));
            }
            let closing = -normal.dot(dir);
            if closing <= 1e-12 || s > toi + 1e-3 {
                return None;
            }
            s += gap / closing;
        }
        None
    };
    match body.mesh() {
        Some(mesh) => {
            // The triangles that can share the first touch lie around the contact point on the
            // triangle parry names; without one, search the whole ball.
            let centre = a + dir * toi;
            let reach = if part < mesh.num_triangles() as u32 {
                Aabb::from_points([mesh.triangle(part).project_local_point(centre, false).point])
                    .loosened(1e-3)
            } else {
                Aabb::from_points([centre]).loosened(radius + 1e-3)
            };
            mesh.bvh()
                .intersect_aabb(&reach)
                .filter_map(|tri| {
                    let triangle = mesh.triangle(tri);
                    refine(&|p| triangle.project_local_point(p, false).point)
                })
                .min_by(|x, y| x.0.total_cmp(&y.0))
        }
        None => refine(&|p| body.shape().project_point(&body.pose, p, false).point),
    }
}

/// For a capsule a hair before impact, the contact point on a mesh triangle and the unit normal
/// towards the capsule, exactly: the closest points of the capsule's axis segment and the triangle
/// (which do not meet, since the capsule is still apart) are the nearest of the axis end points
/// projected onto the triangle (Ericson 2005, §5.1.5) and the axis against each triangle edge
/// (§5.1.9). `None` for other shapes.
fn capsule_triangle_contact(
    triangle: &Triangle,
    pose: &Pose,
    shape: &ProbeShape,
) -> Option<(DVec3, DVec3)> {
    let capsule = shape.shape.as_capsule()?;
    let (a, b) = (
        pose.transform_point(capsule.segment.a),
        pose.transform_point(capsule.segment.b),
    );
    let axis = Segment::new(a, b);
    let mut best: Option<(f64, DVec3, DVec3)> = None;
    let mut consider = |on_triangle: DVec3, on_axis: DVec3| {
        let d = on_triangle.distance_squared(on_axis);
        if best.is_none_or(|(bd, _, _)| d < bd) {
            best = Some((d, on_triangle, on_axis));
        }
    };
    for end in [a, b] {
        consider(triangle.project_local_point(end, false).point, end);
    }
    for (p, q) in [
        (triangle.a, triangle.b),
        (triangle.b, triangle.c),
        (triangle.c, triangle.a),
    ] {
        let (on_axis, on_edge) =
            closest_points_segment_segment_with_locations_nD((&axis.a, &axis.b), (&p, &q));
        consider(
            Segment::new(p, q).point_at(&on_edge),
            axis.point_at(&on_axis),
        );
    }
    let (_, on_triangle, on_axis) = best?;
    Some((on_triangle, (on_axis - on_triangle).try_normalize()?))
}

/// A contact on a mesh's face has the face's own normal: exact, where the closest-point direction a
/// hair before impact carries the iterative query's error (a curved rim meeting a floor, say). It is
/// a face contact when the shape's farthest point against the measured normal projects onto the
/// inside of a face whose normal agrees with the measured one to within a hundredth of a radian (far
/// more than the query's error, far less than any crease a level is built with); edge and corner
/// contacts keep the measured normal.
fn face_normal(body: &Body, shape: &ProbeShape, centre: DVec3, measured: DVec3) -> DVec3 {
    let Some(mesh) = body.mesh() else {
        return measured;
    };
    let lowest = body
        .pose
        .inverse_transform_point(centre + shape.support_offset(-measured));
    let (projection, feature) = mesh.project_local_point_and_get_feature(lowest);
    let FeatureId::Face(_) = feature else {
        return measured;
    };
    let Some(face) = mesh
        .triangle(projection.subshape)
        .normal()
        .map(|n| body.pose.rotation * n)
    else {
        return measured;
    };
    let face = if face.dot(measured) < 0.0 {
        -face
    } else {
        face
    };
    if face.angle_between(measured) < 0.01 {
        face
    } else {
        measured
    }
}

/// The contact point on one convex part of an object (a mesh triangle or a primitive) and the unit
/// normal from it towards the shape at `pose`, just before impact: one closest-point query.
fn part_contact(
    part: &dyn Shape,
    part_pose: &Pose,
    pose: &Pose,
    shape: &ProbeShape,
) -> Option<(DVec3, DVec3)> {
    match closest_points(part_pose, part, pose, &*shape.shape, 1.0).ok()? {
        ClosestPoints::WithinMargin(p1, p2) => Some((p1, (p2 - p1).try_normalize()?)),
        ClosestPoints::Intersecting => {
            let c = contact(part_pose, part, pose, &*shape.shape, 0.0).ok()??;
            Some((c.point1, c.normal1.try_normalize()?))
        }
        ClosestPoints::Disjoint => None,
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
    // A hair before impact the gap is at most the back-off (the gap shrinks no faster than the
    // shape moves); twice that finds the contact without gathering far-away triangles.
    let prediction = 2.0 * RECONTACT_BACKOFF;
    match contact(&body.pose, &**body.shape(), pose, &*shape.shape, prediction) {
        Ok(Some(c)) if c.normal1.length_squared() > 0.0 => (c.point1, c.normal1.normalize()),
        Ok(Some(c)) => (c.point1, fallback),
        _ => {
            let centre = pose.translation;
            let p = parry3d_f64::query::PointQuery::project_point(
                &**body.shape(),
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

/// The bounding box of the shape swept over a segment.
fn swept_aabb(shape: &ProbeShape, a: DVec3, b: DVec3) -> Aabb {
    shape
        .shape
        .compute_aabb(&shape.pose_at(a))
        .merged(&shape.shape.compute_aabb(&shape.pose_at(b)))
}
