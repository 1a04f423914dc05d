//! The World: every level object as a parry3d-f64 shape, one BVH over the objects, and filtered views.

use std::sync::Arc;

use glam::DVec3;
use parry3d_f64::bounding_volume::Aabb;
use parry3d_f64::math::Pose;
use parry3d_f64::partitioning::{Bvh, BvhBuildStrategy};
use parry3d_f64::shape::{SharedShape, TriMesh, TriMeshBuilderError, TriMeshFlags};

use super::shapes::primitive_shape;
use crate::level::{Geometry, Level, ShapeError};

/// An object of a validated level that could not be made into query shapes.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("object \"{object}\": {cause}")]
pub struct BuildError {
    /// The object's name.
    pub object: String,
    /// What went wrong.
    pub cause: BuildCause,
}

/// Why an object could not be made into query shapes.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum BuildCause {
    /// parry refused the triangle mesh.
    #[error("cannot build the mesh: {0:?}")]
    Mesh(TriMeshBuilderError),
    /// A primitive's shape could not be built.
    #[error("{0}")]
    Shape(ShapeError),
}

/// Index of an object in the [`World`] (the same order as the level's objects).
pub type ObjectId = usize;

/// Open meshes larger than this are split into parts of at most this many triangles, grouped in space: the
/// BVH of each part is built with bounded temporary memory, and the world's BVH holds the parts.
pub const PART_TRIANGLES: usize = 1 << 18;

/// One convex primitive, or one mesh or part of a mesh, ready for queries.
pub(crate) struct Body {
    pub shape: SharedShape,
    pub pose: Pose,
    pub aabb: Aabb,
    /// The object this body belongs to.
    pub object: ObjectId,
    /// True for a triangle mesh that is closed (every edge shared by exactly two triangles with
    /// opposite directions), so it has an inside. Closed meshes are never split.
    pub closed: bool,
    /// For a part of a split mesh: the object's triangle index of each of the part's triangles.
    triangle_ids: Option<Box<[u32]>>,
}

impl Body {
    /// The triangle mesh of this body, when it is one.
    pub fn mesh(&self) -> Option<&TriMesh> {
        self.shape.as_trimesh()
    }

    /// True when `p` is inside this body's closed mesh (never for open meshes or primitives). The
    /// box test first: most points are far outside.
    pub fn encloses(&self, p: DVec3) -> bool {
        self.closed && self.aabb.contains_local_point(p) && self.shape.contains_point(&self.pose, p)
    }

    /// The object's triangle index of this body's triangle `local`.
    pub fn triangle_id(&self, local: u32) -> u32 {
        self.triangle_ids
            .as_ref()
            .map_or(local, |ids| ids[local as usize])
    }
}

/// The queryable level: parry shapes, one BVH over objects (or their parts), names and tags.
pub struct World {
    /// Leaves of `bvh`: primitives, meshes and parts of meshes.
    pub(crate) bodies: Vec<Body>,
    names: Vec<Arc<str>>,
    tags: Vec<Arc<[String]>>,
    closed: Vec<bool>,
    pub(crate) bvh: Bvh,
    up: DVec3,
}

impl World {
    /// Builds the world from a validated level, which stays the caller's.
    pub fn new(level: &Level) -> Result<World, BuildError> {
        World::from_level(level.clone())
    }

    /// Builds the world from a validated level, taking it over: each mesh is handed to its body, or
    /// freed as soon as its parts are built, so peak memory holds one copy of the geometry.
    pub fn from_level(level: Level) -> Result<World, BuildError> {
        let up = level.up;
        let mut bodies = Vec::with_capacity(level.objects.len());
        let mut names = Vec::with_capacity(level.objects.len());
        let mut tags = Vec::with_capacity(level.objects.len());
        for (object, item) in level.objects.into_iter().enumerate() {
            let fail = |cause: BuildCause| BuildError {
                object: item.name.clone(),
                cause,
            };
            match item.geometry {
                Geometry::Mesh(mesh) => {
                    bodies.extend(mesh_bodies(object, mesh.vertices, mesh.triangles).map_err(fail)?)
                }
                Geometry::Primitive {
                    shape,
                    translation,
                    rotation,
                } => {
                    let shape = primitive_shape(&shape).map_err(|e| fail(BuildCause::Shape(e)))?;
                    let pose = Pose::from_parts(translation, rotation);
                    let aabb = shape.compute_aabb(&pose);
                    bodies.push(Body {
                        shape,
                        pose,
                        aabb,
                        object,
                        closed: false,
                        triangle_ids: None,
                    });
                }
            }
            names.push(Arc::from(item.name));
            tags.push(Arc::from(item.tags));
        }
        let aabbs: Vec<Aabb> = bodies.iter().map(|b| b.aabb).collect();
        let bvh = Bvh::from_leaves(BvhBuildStrategy::Binned, &aabbs);
        let mut closed = vec![false; names.len()];
        for body in &bodies {
            closed[body.object] |= body.closed;
        }
        Ok(World {
            bodies,
            names,
            tags,
            closed,
            bvh,
            up,
        })
    }

    /// Number of objects.
    pub fn len(&self) -> usize {
        self.names.len()
    }

    /// True when the world has no objects.
    pub fn is_empty(&self) -> bool {
        self.names.is_empty()
    }

    /// The object's name.
    pub fn name(&self, id: ObjectId) -> &str {
        &self.names[id]
    }

    /// The object's tags (sorted).
    pub fn tags(&self, id: ObjectId) -> &[String] {
        &self.tags[id]
    }

    /// The object's name, shared (no copy of the text).
    pub fn shared_name(&self, id: ObjectId) -> Arc<str> {
        self.names[id].clone()
    }

    /// The object's tags, shared (no copy of the list).
    pub fn shared_tags(&self, id: ObjectId) -> Arc<[String]> {
        self.tags[id].clone()
    }

    /// True when the object is a closed triangle mesh (it has an inside).
    pub fn is_closed(&self, id: ObjectId) -> bool {
        self.closed[id]
    }

    /// The level's up axis.
    pub fn up(&self) -> DVec3 {
        self.up
    }

    /// The bounds of the whole level, or `None` when it is empty.
    pub fn bounds(&self) -> Option<(DVec3, DVec3)> {
        (!self.bodies.is_empty()).then(|| {
            let root = self.bvh.root_aabb();
            (root.mins, root.maxs)
        })
    }

    /// A view of every object.
    pub fn everything(&self) -> View<'_> {
        View {
            world: self,
            allowed: None,
        }
    }

    /// A view of the objects the filter lets through.
    pub fn view(&self, filter: &Filter) -> View<'_> {
        if filter.is_empty() {
            return self.everything();
        }
        let allowed = (0..self.len())
            .map(|id| filter.allows(self.name(id), self.tags(id)))
            .collect();
        View {
            world: self,
            allowed: Some(allowed),
        }
    }
}

/// Which objects a probe queries (SPEC §2): none of `ignore_tags`, one of `only_tags` when given,
/// and not named in `ignore_objects`.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Filter {
    /// Objects with any of these tags are left out.
    pub ignore_tags: Vec<String>,
    /// When given, only objects with one of these tags are queried.
    pub only_tags: Option<Vec<String>>,
    /// Objects with these names are left out.
    pub ignore_objects: Vec<String>,
}

impl Filter {
    /// True when the filter lets every object through.
    pub fn is_empty(&self) -> bool {
        self.ignore_tags.is_empty() && self.only_tags.is_none() && self.ignore_objects.is_empty()
    }

    /// True when an object with this name and these tags is queried.
    pub fn allows(&self, name: &str, tags: &[String]) -> bool {
        !tags.iter().any(|t| self.ignore_tags.contains(t))
            && self
                .only_tags
                .as_ref()
                .is_none_or(|only| tags.iter().any(|t| only.contains(t)))
            && !self.ignore_objects.iter().any(|n| n == name)
    }
}

/// The world as one probe sees it: the objects its filter lets through.
#[derive(Clone)]
pub struct View<'w> {
    pub(crate) world: &'w World,
    allowed: Option<Vec<bool>>,
}

impl<'w> View<'w> {
    /// The world this view looks at.
    pub fn world(&self) -> &'w World {
        self.world
    }

    /// True when the view queries this object.
    pub fn allows(&self, id: ObjectId) -> bool {
        self.allowed.as_ref().is_none_or(|a| a[id])
    }

    /// The body behind a world BVH leaf, when the view queries its object.
    pub(crate) fn body(&self, leaf: u32) -> Option<&'w Body> {
        let body = &self.world.bodies[leaf as usize];
        self.allows(body.object).then_some(body)
    }
}

/// The bodies of one mesh object: the whole mesh, or for a large open mesh, parts of
/// [`PART_TRIANGLES`] triangles grouped along a Morton curve of their centroids.
fn mesh_bodies(
    object: ObjectId,
    vertices: Vec<DVec3>,
    triangles: Vec<[u32; 3]>,
) -> Result<Vec<Body>, BuildCause> {
    let (welded, indices) = weld(&vertices, &triangles);
    if is_closed(&indices) {
        drop((vertices, triangles));
        return Ok(vec![mesh_body(
            object,
            welded,
            indices,
            TriMeshFlags::ORIENTED,
            true,
            None,
        )?]);
    }
    // Open: the welded copy was only needed to tell; free it before any BVH is built.
    drop((welded, indices));
    if triangles.len() <= PART_TRIANGLES {
        return Ok(vec![mesh_body(
            object,
            vertices,
            triangles,
            TriMeshFlags::empty(),
            false,
            None,
        )?]);
    }
    let (welded, indices) = (vertices, triangles);
    let mut order: Vec<u32> = (0..indices.len() as u32).collect();
    let mut parts = Vec::new();
    split_in_space(&welded, &indices, &mut order, &mut parts);
    // Copy every part out first and free the whole mesh before any BVH is built.
    let mut local_of = vec![u32::MAX; welded.len()];
    let mut pieces = Vec::with_capacity(parts.len());
    for part in parts.iter().map(|r| &order[r.clone()]) {
        let mut part_vertices = Vec::new();
        let mut part_indices = Vec::with_capacity(part.len());
        for &t in part {
            part_indices.push(indices[t as usize].map(|v| {
                if local_of[v as usize] == u32::MAX {
                    local_of[v as usize] = part_vertices.len() as u32;
                    part_vertices.push(welded[v as usize]);
                }
                local_of[v as usize]
            }));
        }
        for &t in part {
            for v in indices[t as usize] {
                local_of[v as usize] = u32::MAX;
            }
        }
        part_vertices.shrink_to_fit();
        pieces.push((part_vertices, part_indices, Box::<[u32]>::from(part)));
    }
    drop((welded, indices, order, local_of));
    let mut bodies = Vec::with_capacity(pieces.len());
    for (part_vertices, part_indices, ids) in pieces {
        bodies.push(mesh_body(
            object,
            part_vertices,
            part_indices,
            TriMeshFlags::empty(),
            false,
            Some(ids),
        )?);
    }
    Ok(bodies)
}

fn mesh_body(
    object: ObjectId,
    vertices: Vec<DVec3>,
    indices: Vec<[u32; 3]>,
    flags: TriMeshFlags,
    closed: bool,
    triangle_ids: Option<Box<[u32]>>,
) -> Result<Body, BuildCause> {
    let mesh = TriMesh::with_flags(vertices, indices, flags).map_err(BuildCause::Mesh)?;
    let shape = SharedShape::new(mesh);
    let pose = Pose::IDENTITY;
    let aabb = shape.compute_aabb(&pose);
    Ok(Body {
        shape,
        pose,
        aabb,
        object,
        closed,
        triangle_ids,
    })
}

/// Splits `order` (triangle indices) into ranges of at most [`PART_TRIANGLES`] triangles that are
/// compact in space: the centroids are cut at the median of their widest axis, recursively (a
/// k-d split; Bentley, "Multidimensional binary search trees", CACM 18(9), 1975), so parts overlap
/// little and a query rarely opens more than one.
fn split_in_space(
    vertices: &[DVec3],
    triangles: &[[u32; 3]],
    order: &mut [u32],
    parts: &mut Vec<std::ops::Range<usize>>,
) {
    let centroid = |t: u32| {
        let [a, b, c] = triangles[t as usize];
        vertices[a as usize] + vertices[b as usize] + vertices[c as usize]
    };
    let mut pending: Vec<std::ops::Range<usize>> = Vec::new();
    pending.push(0..order.len());
    while let Some(range) = pending.pop() {
        if range.len() <= PART_TRIANGLES {
            parts.push(range);
            continue;
        }
        let slice = &mut order[range.clone()];
        let (lo, hi) = slice.iter().fold(
            (DVec3::splat(f64::MAX), DVec3::splat(f64::MIN)),
            |(lo, hi), &t| {
                let c = centroid(t);
                (lo.min(c), hi.max(c))
            },
        );
        let axis = (hi - lo).max_position();
        // Cut at a multiple of the part size so parts come out full.
        let half = slice.len().div_ceil(2).div_ceil(PART_TRIANGLES) * PART_TRIANGLES;
        let cut = half.min(slice.len() - 1);
        slice.select_nth_unstable_by(cut, |&x, &y| {
            centroid(x)[axis]
                .total_cmp(&centroid(y)[axis])
                .then(x.cmp(&y))
        });
        pending.push(range.start + cut..range.end);
        pending.push(range.start..range.start + cut);
    }
    parts.sort_by_key(|r| r.start);
}

/// Merges vertices at exactly the same position, keeping the triangle order. Sorting vertex indices
/// by position keeps the extra memory to two `u32` per vertex.
fn weld(vertices: &[DVec3], triangles: &[[u32; 3]]) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let key = |v: DVec3| {
        v.to_array()
            .map(|c| if c == 0.0 { 0u64 } else { c.to_bits() })
    };
    let mut order: Vec<u32> = (0..vertices.len() as u32).collect();
    order.sort_unstable_by_key(|&i| (key(vertices[i as usize]), i));
    let mut remap = vec![0u32; vertices.len()];
    let mut first_of_run = vec![false; vertices.len()];
    for (k, &i) in order.iter().enumerate() {
        let same = k > 0 && key(vertices[order[k - 1] as usize]) == key(vertices[i as usize]);
        // Within a run of equal positions, the lowest original index (sorted first) represents it.
        remap[i as usize] = if same {
            remap[order[k - 1] as usize]
        } else {
            i
        };
        first_of_run[i as usize] = !same;
    }
    drop(order);
    // Keep representatives in their original order so welding a mesh without duplicates is a no-op.
    let mut new_index = vec![u32::MAX; vertices.len()];
    let mut welded = Vec::with_capacity(vertices.len());
    for (i, v) in vertices.iter().enumerate() {
        if first_of_run[i] {
            new_index[i] = welded.len() as u32;
            welded.push(*v);
        }
    }
    let indices = triangles
        .iter()
        .map(|t| t.map(|i| new_index[remap[i as usize] as usize]))
        .collect();
    (welded, indices)
}

/// True when every directed edge appears once and its reverse once (a closed, consistently wound
/// mesh). Sorted edge keys keep the extra memory to 24 bytes per triangle.
fn is_closed(triangles: &[[u32; 3]]) -> bool {
    let mut edges: Vec<u64> = Vec::with_capacity(triangles.len() * 3);
    for t in triangles {
        for k in 0..3 {
            edges.push((u64::from(t[k]) << 32) | u64::from(t[(k + 1) % 3]));
        }
    }
    edges.sort_unstable();
    let unique = edges.windows(2).all(|w| w[0] != w[1]);
    unique
        && edges
            .iter()
            .all(|&e| edges.binary_search(&e.rotate_right(32)).is_ok())
}
