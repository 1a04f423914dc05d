//! Pairs of objects: those that interpenetrate, and those that come closer than a character's
//! wedge width without touching.
//!
//! Broad phase: one BVH over every body's box grown by the gap width, traversed against itself
//! (parry's tree-against-tree traversal), so the work grows with the pairs that are near each
//! other, not with the square of the objects. Narrow phase, per pair of bodies: a primitive
//! against anything is one exact contact query (GJK/EPA, or the specialised box and sphere tests),
//! with a primitive wholly inside a closed mesh measured to the mesh's nearest wall; two meshes are
//! compared triangle against triangle under both meshes' own BVHs, each pair an exact contact
//! query, and a mesh wholly inside a closed one is measured by its deepest vertex. An object
//! pair's signed distance is the least over its bodies' pairs: negative is a depth.

use std::collections::HashSet;
use std::sync::Arc;

use glam::DVec3;
use parry3d_f64::bounding_volume::{Aabb, BoundingVolume};
use parry3d_f64::math::Pose;
use parry3d_f64::partitioning::{Bvh, BvhBuildStrategy, BvhWorkspace};
use parry3d_f64::query::{PointQueryWithLocation, contact};
use parry3d_f64::shape::TriMesh;

use super::{Finding, FindingKind, LintOptions, TOUCHING, TriangleRef};
use crate::check::metres;
use crate::query::body::Body;
use crate::query::{ObjectId, World};

/// The nearest approach of two bodies: signed distance (negative: depth), a point between them,
/// and the triangles involved (body-local triangle index on each side, for meshes).
#[derive(Debug, Clone, Copy)]
struct Approach {
    distance: f64,
    point: DVec3,
    triangles: [Option<u32>; 2],
}

/// The findings about pairs of objects; pairs in `skip` (a sunk prop and its support) are told
/// elsewhere.
pub(super) fn pairs(
    world: &World,
    options: &LintOptions,
    skip: &HashSet<(ObjectId, ObjectId)>,
) -> Vec<Finding> {
    let reach = options.narrow_gap.max(options.max_overlap).max(TOUCHING);
    let bodies = &world.bodies;
    let grown: Vec<Aabb> = bodies
        .iter()
        .map(|b| b.aabb.loosened(reach / 2.0))
        .collect();
    let bvh = Bvh::from_leaves(BvhBuildStrategy::Binned, &grown);
    let mut candidates = Vec::new();
    bvh.traverse_bvtt_single_tree::<false>(&mut BvhWorkspace::default(), &mut |a, b| {
        let (a, b) = (a as usize, b as usize);
        let (oa, ob) = (bodies[a].object, bodies[b].object);
        if oa != ob && grown[a].intersects(&grown[b]) {
            let (a, b) = if oa < ob { (a, b) } else { (b, a) };
            candidates.push((bodies[a].object, bodies[b].object, a, b));
        }
    });
    candidates.sort_unstable();
    candidates.dedup();
    let mut findings = Vec::new();
    let mut k = 0;
    while k < candidates.len() {
        let (oa, ob) = (candidates[k].0, candidates[k].1);
        let mut nearest: Option<(Approach, usize, usize)> = None;
        while k < candidates.len() && (candidates[k].0, candidates[k].1) == (oa, ob) {
            let (a, b) = (candidates[k].2, candidates[k].3);
            if let Some(found) = approach(&bodies[a], &bodies[b], reach)
                && nearest.is_none_or(|(n, _, _)| found.distance < n.distance)
            {
                nearest = Some((found, a, b));
            }
            k += 1;
        }
        let Some((found, a, b)) = nearest else {
            continue;
        };
        if skip.contains(&(oa, ob)) {
            continue;
        }
        let names = [world.shared_name(oa), world.shared_name(ob)];
        let kind = if found.distance < -options.max_overlap {
            FindingKind::Overlap
        } else if found.distance > TOUCHING && found.distance < options.narrow_gap {
            FindingKind::NarrowGap
        } else {
            continue;
        };
        let triangles = triangle_refs(world, [&bodies[a], &bodies[b]], found.triangles, &names);
        let message = match kind {
            FindingKind::Overlap => format!(
                "{} and {} interpenetrate by {}",
                names[0],
                names[1],
                metres(-found.distance)
            ),
            _ => format!(
                "{} and {} leave a gap of {} (narrower than {})",
                names[0],
                names[1],
                metres(found.distance),
                metres(options.narrow_gap)
            ),
        };
        findings.push(Finding {
            kind,
            objects: names.to_vec(),
            triangles,
            count: 1,
            measure: Some(found.distance.abs()),
            point: found.point,
            edges: Vec::new(),
            message,
        });
    }
    findings
}

/// The triangles of a finding, numbered as their files number them.
fn triangle_refs(
    world: &World,
    bodies: [&Body; 2],
    local: [Option<u32>; 2],
    names: &[Arc<str>; 2],
) -> Vec<TriangleRef> {
    (0..2)
        .filter_map(|k| {
            let t = local[k]?;
            let kept = bodies[k].triangle_id(t);
            Some(TriangleRef {
                object: names[k].clone(),
                number: world.triangle_number(bodies[k].object, kept),
            })
        })
        .collect()
}

/// The nearest approach of two bodies within `reach`, or `None` when they are farther apart.
fn approach(a: &Body, b: &Body, reach: f64) -> Option<Approach> {
    match (a.mesh(), b.mesh()) {
        (Some(ma), Some(mb)) => {
            let crossing = mesh_approach(ma, mb, reach);
            let inside = |outer: &Body, inner: &TriMesh| {
                let first = *inner.vertices().first()?;
                if !outer.encloses(first) {
                    return None;
                }
                // The deepest vertex of the inner mesh below the outer one's surface.
                let (depth, at) = inner
                    .vertices()
                    .iter()
                    .filter(|v| outer.encloses(**v))
                    .map(|v| (outer.nearest_wall(*v).distance(*v), *v))
                    .max_by(|x, y| x.0.total_cmp(&y.0))?;
                Some(Approach {
                    distance: -depth,
                    point: at,
                    triangles: [None, None],
                })
            };
            [crossing, inside(a, mb), inside(b, ma)]
                .into_iter()
                .flatten()
                .min_by(|x, y| x.distance.total_cmp(&y.distance))
        }
        _ => primitive_approach(a, b, reach),
    }
}

/// Two meshes, triangle against triangle where their BVHs' boxes come within `reach`.
fn mesh_approach(a: &TriMesh, b: &TriMesh, reach: f64) -> Option<Approach> {
    let near = |x: &Aabb, y: &Aabb| x.loosened(reach).intersects(y);
    let mut best: Option<Approach> = None;
    for (ta, tb) in a
        .bvh()
        .leaf_pairs(b.bvh(), |x, y| near(&x.aabb(), &y.aabb()))
    {
        let (tri_a, tri_b) = (a.triangle(ta), b.triangle(tb));
        if !near(&tri_a.local_aabb(), &tri_b.local_aabb()) {
            continue;
        }
        let Ok(Some(c)) = contact(&Pose::IDENTITY, &tri_a, &Pose::IDENTITY, &tri_b, reach) else {
            continue;
        };
        if best.is_none_or(|n| c.dist < n.distance) {
            best = Some(Approach {
                distance: c.dist,
                point: (c.point1 + c.point2) / 2.0,
                triangles: [Some(ta), Some(tb)],
            });
        }
    }
    best
}

/// A primitive against a body: one contact query; a primitive inside a closed mesh is as deep as
/// its centre is from the mesh's nearest wall (at least).
fn primitive_approach(a: &Body, b: &Body, reach: f64) -> Option<Approach> {
    let c = contact(&a.pose, &**a.shape(), &b.pose, &**b.shape(), reach)
        .ok()
        .flatten();
    let on_mesh = |body: &Body, point: DVec3| {
        let mesh = body.mesh()?;
        let local = body.pose.inverse_transform_point(point);
        let (_, (triangle, _)) = mesh.project_local_point_and_get_location(local, false);
        Some(triangle)
    };
    let mut found = c.map(|c| Approach {
        distance: c.dist,
        point: (c.point1 + c.point2) / 2.0,
        triangles: [on_mesh(a, c.point1), on_mesh(b, c.point2)],
    });
    for (outer, inner) in [(a, b), (b, a)] {
        let centre = inner.pose.translation;
        if !inner.is_mesh() && outer.encloses(centre) {
            let depth = outer.nearest_wall(centre).distance(centre);
            if found.is_none_or(|f| -depth < f.distance) {
                found = Some(Approach {
                    distance: -depth,
                    point: centre,
                    triangles: [None, None],
                });
            }
        }
    }
    found
}
