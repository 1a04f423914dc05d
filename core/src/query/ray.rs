//! Ray probes: the first crossing, or every crossing, of the segment `from → to` with the level.

use std::cell::Cell;

use glam::DVec3;
use parry3d_f64::partitioning::BvhNode;
use parry3d_f64::query::Ray;

use super::watertight::ShearedRay;
use super::world::{Body, ObjectId, View};
use super::{QueryError, merge_tolerance};

/// Where a ray probe crosses a surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RayHit {
    /// The object crossed.
    pub object: ObjectId,
    /// Metres from the segment's start.
    pub distance: f64,
    /// Fraction of the segment, 0 at `from`, 1 at `to`.
    pub t: f64,
    /// The crossing point.
    pub point: DVec3,
    /// Unit surface normal, turned to face the segment's start.
    pub normal: DVec3,
    /// Triangle index within the object's mesh; `None` for primitives.
    pub triangle: Option<u32>,
    /// True when the segment crosses the surface from behind (from inside a solid).
    pub back_face: bool,
}

/// A validated segment: start, unit direction and length.
struct Segment {
    from: DVec3,
    dir: DVec3,
    inv_dir: DVec3,
    len: f64,
}

impl Segment {
    fn new(from: DVec3, to: DVec3) -> Result<Segment, QueryError> {
        if !from.is_finite() || !to.is_finite() {
            return Err(QueryError::RayNotFinite);
        }
        let len = from.distance(to);
        if len == 0.0 {
            return Err(QueryError::RayHasNoLength);
        }
        let dir = (to - from) / len;
        Ok(Segment {
            from,
            dir,
            inv_dir: dir.recip(),
            len,
        })
    }

    fn hit(
        &self,
        object: ObjectId,
        distance: f64,
        outward_normal: DVec3,
        triangle: Option<u32>,
    ) -> RayHit {
        let back_face = outward_normal.dot(self.dir) > 0.0;
        RayHit {
            object,
            distance,
            t: distance / self.len,
            point: self.from + self.dir * distance,
            normal: if back_face {
                -outward_normal
            } else {
                outward_normal
            },
            triangle,
            back_face,
        }
    }
}

impl View<'_> {
    /// The first surface the segment `from → to` crosses, if any.
    pub fn ray_first(&self, from: DVec3, to: DVec3) -> Result<Option<RayHit>, QueryError> {
        let seg = Segment::new(from, to)?;
        let ray = Ray::new(seg.from, seg.dir);
        let sheared = ShearedRay::new(seg.from, seg.dir);
        let best: Cell<Option<RayHit>> = Cell::new(None);
        self.world.bvh.find_best(
            seg.len,
            |node, best| node_entry(node, &ray, seg.inv_dir, best),
            |leaf, best_so_far| {
                let body = self.body(leaf)?;
                let hit = first_hit_on_body(body, &seg, &ray, &sheared, best_so_far)?;
                if best
                    .get()
                    .is_none_or(|b| (hit.distance, hit.object) < (b.distance, b.object))
                {
                    best.set(Some(hit));
                }
                Some(hit.distance)
            },
        );
        Ok(best.get())
    }

    /// Every surface crossing on the segment `from → to`, sorted by distance; where the segment passes
    /// through an edge or vertex shared by several triangles of one object, that is one crossing.
    pub fn ray_all(&self, from: DVec3, to: DVec3) -> Result<Vec<RayHit>, QueryError> {
        let seg = Segment::new(from, to)?;
        let ray = Ray::new(seg.from, seg.dir);
        let sheared = ShearedRay::new(seg.from, seg.dir);
        let mut hits = Vec::new();
        for leaf in self
            .world
            .bvh
            .leaves(|node| node_entry(node, &ray, seg.inv_dir, seg.len) <= seg.len)
        {
            if let Some(body) = self.body(leaf) {
                all_hits_on_body(body, &seg, &ray, &sheared, &mut hits);
            }
        }
        // One crossing where the segment passes through an edge or vertex shared by several triangles
        // of one object (also across the parts of a split mesh): hits on the same object at the same
        // distance, crossing the same way, are the same crossing.
        hits.sort_by(|a, b| {
            a.object
                .cmp(&b.object)
                .then(a.distance.total_cmp(&b.distance))
                .then(a.triangle.cmp(&b.triangle))
        });
        let tolerance = merge_tolerance(seg.len);
        hits.dedup_by(|later, kept| {
            later.object == kept.object
                && later.back_face == kept.back_face
                && later.distance - kept.distance <= tolerance
        });
        hits.sort_by(|a, b| {
            a.distance
                .total_cmp(&b.distance)
                .then(a.object.cmp(&b.object))
        });
        Ok(hits)
    }
}

fn first_hit_on_body(
    body: &Body,
    seg: &Segment,
    ray: &Ray,
    sheared: &ShearedRay,
    max_distance: f64,
) -> Option<RayHit> {
    match body.mesh() {
        Some(mesh) => {
            let (tri, distance) = mesh.bvh().find_best(
                max_distance,
                |node, best| node_entry(node, ray, seg.inv_dir, best),
                |tri, best| {
                    let t = mesh.triangle(tri);
                    sheared.intersect(t.a, t.b, t.c, best)
                },
            )?;
            Some(seg.hit(
                body.object,
                distance,
                triangle_normal(mesh, tri),
                Some(body.triangle_id(tri)),
            ))
        }
        None => primitive_crossings(body, seg, ray)
            .into_iter()
            .flatten()
            .find(|h| h.distance <= max_distance),
    }
}

/// Pushes every crossing of the segment with one body (merged across shared edges by the caller).
fn all_hits_on_body(
    body: &Body,
    seg: &Segment,
    ray: &Ray,
    sheared: &ShearedRay,
    out: &mut Vec<RayHit>,
) {
    let Some(mesh) = body.mesh() else {
        out.extend(primitive_crossings(body, seg, ray).into_iter().flatten());
        return;
    };
    out.extend(
        mesh.bvh()
            .leaves(|node| node_entry(node, ray, seg.inv_dir, seg.len) <= seg.len)
            .filter_map(|tri| {
                let t = mesh.triangle(tri);
                let distance = sheared.intersect(t.a, t.b, t.c, seg.len)?;
                Some(seg.hit(
                    body.object,
                    distance,
                    triangle_normal(mesh, tri),
                    Some(body.triangle_id(tri)),
                ))
            }),
    );
}

/// How much BVH boxes are grown for ray tests. The slab test of a box can miss a ray that passes
/// exactly through a box corner or along a face by one rounding error (Williams et al., "An Efficient
/// and Robust Ray–Box Intersection Algorithm", JGT 10(1), 2005); and a ray through a mesh vertex passes
/// through the corners of the boxes of every triangle around it. Growing the boxes by far more than
/// rounding keeps those triangles in the search; the triangle test itself stays exact.
const NODE_SLACK: f64 = 1e-7;

/// Where the ray enters a BVH node's box (grown by [`NODE_SLACK`]), or `f64::MAX` when it misses.
/// The slab test of Williams et al. (2005) with a precomputed inverse direction: a zero direction
/// component gives infinite slab distances, and the NaN of `0 × ∞` (origin on a slab plane) is
/// ignored by `min`/`max`, so that axis does not constrain the ray.
fn node_entry(node: &BvhNode, ray: &Ray, inv_dir: DVec3, max_distance: f64) -> f64 {
    let lo = (node.mins() - DVec3::splat(NODE_SLACK) - ray.origin) * inv_dir;
    let hi = (node.maxs() + DVec3::splat(NODE_SLACK) - ray.origin) * inv_dir;
    let near = lo.min(hi);
    let far = lo.max(hi);
    let enter = near.x.max(near.y).max(near.z).max(0.0);
    let exit = far.x.min(far.y).min(far.z).min(max_distance);
    if enter <= exit { enter } else { f64::MAX }
}

/// The crossings of a convex primitive, in order along the segment: where the segment enters it
/// (when `from` is outside) and where it leaves it (when `to` is outside). A grazing touch is one.
fn primitive_crossings(body: &Body, seg: &Segment, ray: &Ray) -> [Option<RayHit>; 2] {
    let shape = &*body.shape;
    let to = seg.from + seg.dir * seg.len;
    let strictly_inside = |p: DVec3| {
        let proj = shape.project_point(&body.pose, p, false);
        proj.is_inside && proj.point != p
    };
    let entry = (!strictly_inside(seg.from))
        .then(|| shape.cast_ray_and_get_normal(&body.pose, ray, seg.len, false))
        .flatten()
        .map(|i| seg.hit(body.object, i.time_of_impact, i.normal, None));
    let back = Ray::new(to, -seg.dir);
    let exit = (!strictly_inside(to))
        .then(|| shape.cast_ray_and_get_normal(&body.pose, &back, seg.len, false))
        .flatten()
        .map(|i| seg.hit(body.object, seg.len - i.time_of_impact, i.normal, None))
        .filter(|x| entry.is_none_or(|e| x.distance - e.distance > merge_tolerance(seg.len)));
    [entry, exit]
}

/// The unit geometric normal of a mesh triangle (counter-clockwise front).
fn triangle_normal(mesh: &parry3d_f64::shape::TriMesh, tri: u32) -> DVec3 {
    let t = mesh.triangle(tri);
    (t.b - t.a).cross(t.c - t.a).normalize()
}
