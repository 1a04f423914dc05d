//! Ray probes: the first crossing, or every crossing, of the segment `from → to` with the level.
//!
//! Rules on real, messy meshes (README, "Exactness"):
//! - Ties: where the segment meets several triangles at exactly the same distance (through a shared
//!   edge or vertex), the first hit is the one earliest in the level's file order — objects in
//!   order, each object's triangles as its file numbers them — so the answer does not depend on how
//!   the level is cut into objects and parts, nor on the BVH.
//! - Crossings: all-hit rays give one hit per surface crossing whatever the triangles' winding.
//!   Hits of one object at the same distance (within [`merge_tolerance`]) are one place; exactly
//!   coincident duplicate faces there count once; and how many times the segment crosses the surface
//!   there is counted on copies of the segment moved a hair sideways in eight directions, where no
//!   edge or vertex is hit: the most any copy crosses is the number of hits reported. A crossing
//!   through an edge or vertex is one hit; a segment grazing a ridge or a vertex from outside, which
//!   nearby copies cross twice or not at all, is two (reaching the surface and leaving it, so a
//!   closed surface is still crossed an even number of times from outside to outside); a touch on an
//!   open edge is one. The reported hits of a place are its triangles earliest in file order, each
//!   with its own normal and `back_face`.

use glam::DVec3;
use parry3d_f64::query::{PointQuery, Ray};
use parry3d_f64::shape::Triangle;

use super::body::Body;
use super::ray_tree::TreeRay;
use super::watertight::{ShearedRay, edge_tolerance};
use super::world::{MaterialId, ObjectId, View, World};
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
    /// The triangle as the object's file numbers it (see [`World::face_place`]); `None` for
    /// primitives.
    pub triangle: Option<u32>,
    /// The material of the surface crossed, when the file names one.
    pub material: Option<MaterialId>,
    /// True when the segment crosses the surface from behind (from inside a solid).
    pub back_face: bool,
}

/// A validated segment: start, unit direction and length.
struct Segment {
    from: DVec3,
    dir: DVec3,
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
        Ok(Segment { from, dir, len })
    }
}

/// A hit on one triangle or primitive, with what the merging and tie rules need.
#[derive(Debug, Clone, Copy)]
struct Candidate {
    hit: RayHit,
    /// Place in the level's file order (the tie-break).
    ordinal: u64,
    /// The triangle's corners (meshes only), to merge duplicates and count crossings.
    corners: Option<[DVec3; 3]>,
}

impl Candidate {
    fn key(&self) -> (f64, u64) {
        (self.hit.distance, self.ordinal)
    }
}

impl View<'_> {
    /// The first surface the segment `from → to` crosses, if any.
    pub fn ray_first(&self, from: DVec3, to: DVec3) -> Result<Option<RayHit>, QueryError> {
        let seg = Segment::new(from, to)?;
        let ray = Ray::new(seg.from, seg.dir);
        let sheared = ShearedRay::new(seg.from, seg.dir);
        let index = self.world.ray_index();
        let boxes = TreeRay::new(index.frame(), seg.from, seg.dir);
        let ordinal = |body: &Body, number: u32| self.world.ordinal(body.object, number);
        // The best so far: its distance, and the item (or the primitive's worked-out crossing).
        let mut best: Option<(f64, &Body, Found)> = None;
        index.nearest_first(&boxes, seg.len, |items, reach| {
            for item in items {
                // The triangle test first: most items are missed, and need no body.
                let (distance, body, found) = match item.triangle() {
                    Some(tri) => {
                        let [a, b, c] = item.corners;
                        let Some(distance) = sheared.intersect(a, b, c, reach) else {
                            continue;
                        };
                        let Some(body) = self.body(item.body) else {
                            continue;
                        };
                        (distance, body, Found::Triangle(tri, &item.corners))
                    }
                    None => {
                        let Some(body) = self.body(item.body) else {
                            continue;
                        };
                        let crossings = primitive_crossings(self.world, body, &seg, &ray);
                        let Some(hit) = crossings
                            .into_iter()
                            .flatten()
                            .find(|h| h.hit.distance <= reach)
                        else {
                            continue;
                        };
                        (hit.hit.distance, body, Found::Primitive(hit))
                    }
                };
                // File order is only asked where two surfaces meet the ray at the same distance.
                let better = best.as_ref().is_none_or(|(d, other, old)| {
                    distance < *d
                        || (distance == *d
                            && found.ordinal(body, &ordinal) < old.ordinal(other, &ordinal))
                });
                if better {
                    best = Some((distance, body, found));
                }
            }
            // The next float above the best, so that ties at its distance are still seen.
            best.as_ref()
                .map_or(reach, |(d, _, _)| d.next_up().min(reach))
        });
        Ok(best.map(|(distance, body, found)| match found {
            Found::Triangle(tri, &[a, b, c]) => {
                candidate(
                    self.world,
                    body,
                    &seg,
                    distance,
                    triangle_normal(a, b, c),
                    Some((tri, [a, b, c])),
                )
                .hit
            }
            Found::Primitive(hit) => hit.hit,
        }))
    }

    /// Every surface crossing on the segment `from → to`, sorted by distance (the crossing rules of
    /// this module's documentation).
    pub fn ray_all(&self, from: DVec3, to: DVec3) -> Result<Vec<RayHit>, QueryError> {
        let seg = Segment::new(from, to)?;
        let ray = Ray::new(seg.from, seg.dir);
        let sheared = ShearedRay::new(seg.from, seg.dir);
        let mut candidates = Vec::new();
        let index = self.world.ray_index();
        let boxes = TreeRay::new(index.frame(), seg.from, seg.dir);
        index.nearest_first(&boxes, seg.len, |items, reach| {
            for item in items {
                let Some(body) = self.body(item.body) else {
                    continue;
                };
                let Some(tri) = item.triangle() else {
                    let crossings = primitive_crossings(self.world, body, &seg, &ray);
                    candidates.extend(crossings.into_iter().flatten());
                    continue;
                };
                let [a, b, c] = item.corners;
                if let Some(distance) = sheared.intersect(a, b, c, seg.len) {
                    let normal = triangle_normal(a, b, c);
                    let hit = candidate(
                        self.world,
                        body,
                        &seg,
                        distance,
                        normal,
                        Some((tri, [a, b, c])),
                    );
                    candidates.push(hit);
                }
            }
            reach
        });
        candidates.sort_by(|a, b| {
            a.hit.object.cmp(&b.hit.object).then(
                a.key()
                    .partial_cmp(&b.key())
                    .unwrap_or(std::cmp::Ordering::Equal),
            )
        });
        let tolerance = merge_tolerance(seg.len);
        let mut hits = Vec::with_capacity(candidates.len());
        let mut start = 0;
        while start < candidates.len() {
            let first = candidates[start];
            let end = start
                + candidates[start..]
                    .iter()
                    .take_while(|c| {
                        c.hit.object == first.hit.object
                            && c.hit.distance - first.hit.distance <= tolerance
                    })
                    .count();
            let place = &candidates[start..end];
            let on_an_edge = |c: &Candidate| c.corners.is_some_and(|k| on_edge(c.hit.point, k));
            if place.len() == 1 && !on_an_edge(&place[0]) {
                hits.push(place[0].hit);
            } else {
                self.crossings_at(place, &seg, &mut hits);
            }
            start = end;
        }
        hits.sort_by(|a, b| {
            a.distance
                .total_cmp(&b.distance)
                .then(a.object.cmp(&b.object))
        });
        Ok(hits)
    }

    /// The hits reported where the segment meets an object on an edge or vertex, or several
    /// triangles at once (`place`, sorted by file order): one per crossing of the object's faces
    /// there, counted on copies of the segment moved sideways.
    fn crossings_at(&self, place: &[Candidate], seg: &Segment, out: &mut Vec<RayHit>) {
        if place.iter().any(|c| c.corners.is_none()) {
            // A primitive's entry and exit are already one hit each.
            out.extend(place.iter().map(|c| c.hit));
            return;
        }
        let faces = self.faces_at(place[0], seg);
        let count = match crossings_nearby(&faces, seg) {
            // A touch that no nearby copy crosses: reaching the surface and leaving it.
            0 => faces.len().min(2),
            n => n,
        };
        out.extend(faces.iter().take(count).map(|f| f.hit));
    }

    /// Every face of `at`'s object (that the view queries) holding `at`'s point, as hits there,
    /// sorted by file order, exactly coincident faces once.
    fn faces_at(&self, at: Candidate, seg: &Segment) -> Vec<Candidate> {
        let p = at.hit.point;
        let reach = edge_tolerance(p, 0.0);
        let mut faces: Vec<Candidate> = Vec::new();
        let corner = DVec3::splat(reach);
        self.world
            .ray_index()
            .overlapping(p - corner, p + corner, |items| {
                for item in items {
                    let (Some(body), Some(tri)) = (self.body(item.body), item.triangle()) else {
                        continue;
                    };
                    if body.object != at.hit.object {
                        continue;
                    }
                    let [a, b, c] = item.corners;
                    let t = Triangle::new(a, b, c);
                    if t.project_local_point(p, false).point.distance(p) <= reach {
                        let mut face = candidate(
                            self.world,
                            body,
                            seg,
                            at.hit.distance,
                            triangle_normal(a, b, c),
                            Some((tri, [a, b, c])),
                        );
                        face.hit.point = p;
                        faces.push(face);
                    }
                }
            });
        faces.sort_by_key(|f| f.ordinal);
        let mut kept: Vec<Candidate> = Vec::with_capacity(faces.len());
        for face in faces {
            let corners = face.corners.expect("a triangle");
            if !kept
                .iter()
                .any(|k| k.corners.is_some_and(|other| same_face(corners, other)))
            {
                kept.push(face);
            }
        }
        if kept.is_empty() {
            kept.push(at);
        }
        kept
    }
}

/// True when `p`, a point of triangle `abc`, lies on (or within [`edge_tolerance`] of) its edges.
fn on_edge(p: DVec3, [a, b, c]: [DVec3; 3]) -> bool {
    let size = a.distance(b).max(b.distance(c)).max(c.distance(a));
    let reach = edge_tolerance(p, size);
    [(a, b), (b, c), (c, a)].iter().any(|&(u, v)| {
        let edge = v - u;
        let s = ((p - u).dot(edge) / edge.length_squared()).clamp(0.0, 1.0);
        (u + edge * s).distance(p) <= reach
    })
}

/// The most crossings of the faces by copies of the segment moved sideways, by less than any
/// distance in the level, in eight directions. Seen along the segment, each face holding the point
/// covers a sector of directions around it (a half-plane when the point is on one of its edges, the
/// angle between two edges at a corner, every direction inside it), and a copy moved towards `w`
/// crosses the faces whose sector holds `w`. Counting sectors rather than moving copies by a finite
/// amount keeps the count right however closely the segment grazes a face or passes a corner
/// (common practice: the "simulation of simplicity" idea of Edelsbrunner & Mücke, ACM TOG 9(1),
/// 1990, from memory). A face the segment runs along covers no direction.
fn crossings_nearby(faces: &[Candidate], seg: &Segment) -> usize {
    let point = faces[0].hit.point;
    let (u, v) = seg.dir.any_orthonormal_pair();
    let flat = |q: DVec3| {
        let d = q - point;
        glam::DVec2::new(d.dot(u), d.dot(v))
    };
    // Each face as the edges that pass through the point, each with the side the face lies on.
    let sectors: Vec<Vec<(glam::DVec2, f64)>> = faces
        .iter()
        .filter_map(|f| f.corners)
        .filter_map(|corners| {
            let size = corners[0]
                .distance(corners[1])
                .max(corners[1].distance(corners[2]))
                .max(corners[2].distance(corners[0]));
            let [a, b, c] = corners.map(flat);
            let area = (b - a).perp_dot(c - a);
            if area.abs() <= 1e-12 * size * size {
                return None;
            }
            let reach = edge_tolerance(point, size);
            let through = [(a, b), (b, c), (c, a)]
                .into_iter()
                .filter(|&(p, q)| {
                    let edge = q - p;
                    edge.length() > reach && edge.perp_dot(-p).abs() <= reach * edge.length()
                })
                .map(|(p, q)| (q - p, area.signum()))
                .collect();
            Some(through)
        })
        .collect();
    // Angles away from multiples of 45°, so no direction runs along an axis-aligned edge.
    (0..8)
        .map(|k| {
            let angle = 0.371 + k as f64 * std::f64::consts::FRAC_PI_4;
            let w = glam::DVec2::new(angle.cos(), angle.sin());
            sectors
                .iter()
                .filter(|edges| {
                    edges
                        .iter()
                        .all(|(edge, side)| side * edge.perp_dot(w) > 0.0)
                })
                .count()
        })
        .max()
        .unwrap_or(0)
}

/// True when two triangles have the same three corners, in any order.
fn same_face(a: [DVec3; 3], b: [DVec3; 3]) -> bool {
    let key = |v: DVec3| v.to_array().map(|c| if c == 0.0 { 0.0 } else { c });
    let mut a = a.map(key);
    let mut b = b.map(key);
    a.sort_by(|x, y| x.partial_cmp(y).unwrap_or(std::cmp::Ordering::Equal));
    b.sort_by(|x, y| x.partial_cmp(y).unwrap_or(std::cmp::Ordering::Equal));
    a == b
}

/// The hit of a body's triangle or primitive crossing, with its ordinal.
fn candidate(
    world: &World,
    body: &Body,
    seg: &Segment,
    distance: f64,
    outward_normal: DVec3,
    triangle: Option<(u32, [DVec3; 3])>,
) -> Candidate {
    let back_face = outward_normal.dot(seg.dir) > 0.0;
    let number = triangle.map(|(number, _)| number);
    let point = seg.from + seg.dir * distance;
    Candidate {
        hit: RayHit {
            object: body.object,
            distance,
            t: distance / seg.len,
            point,
            normal: if back_face {
                -outward_normal
            } else {
                outward_normal
            },
            triangle: number,
            material: body.material,
            back_face,
        },
        ordinal: world.ordinal(body.object, number.unwrap_or(0)),
        corners: triangle.map(|(_, corners)| corners),
    }
}

/// What a first-hit search has found on a body; the hit is only worked out for the winner.
enum Found<'a> {
    /// A mesh triangle (its number in the object, as the file numbers it) and its corners (in
    /// the ray index: a hit that a nearer one replaces copies nothing).
    Triangle(u32, &'a [DVec3; 3]),
    /// A primitive's crossing, already worked out.
    Primitive(Candidate),
}

impl Found<'_> {
    /// The place in file order of what was found on `body`, `ordinal` giving a triangle's.
    fn ordinal(&self, body: &Body, ordinal: &impl Fn(&Body, u32) -> u64) -> u64 {
        match self {
            Found::Triangle(tri, _) => ordinal(body, *tri),
            Found::Primitive(hit) => hit.ordinal,
        }
    }
}

/// The crossings of a convex primitive, in order along the segment: where the segment enters it
/// (when `from` is outside) and where it leaves it (when `to` is outside). A grazing touch is one.
fn primitive_crossings(
    world: &World,
    body: &Body,
    seg: &Segment,
    ray: &Ray,
) -> [Option<Candidate>; 2] {
    let shape = &**body.shape();
    let to = seg.from + seg.dir * seg.len;
    let strictly_inside = |p: DVec3| {
        let proj = shape.project_point(&body.pose, p, false);
        proj.is_inside && proj.point != p
    };
    let entry = (!strictly_inside(seg.from))
        .then(|| shape.cast_ray_and_get_normal(&body.pose, ray, seg.len, false))
        .flatten()
        .map(|i| candidate(world, body, seg, i.time_of_impact, i.normal, None));
    let back = Ray::new(to, -seg.dir);
    let exit = (!strictly_inside(to))
        .then(|| shape.cast_ray_and_get_normal(&body.pose, &back, seg.len, false))
        .flatten()
        .map(|i| candidate(world, body, seg, seg.len - i.time_of_impact, i.normal, None))
        .filter(|x| {
            entry.is_none_or(|e| x.hit.distance - e.hit.distance > merge_tolerance(seg.len))
        });
    [entry, exit]
}

/// The unit geometric normal of a triangle (counter-clockwise front).
fn triangle_normal(a: DVec3, b: DVec3, c: DVec3) -> DVec3 {
    (b - a).cross(c - a).normalize()
}
