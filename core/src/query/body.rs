//! Bodies: the leaves of the world's BVH. A primitive is one body; a mesh is one body per material
//! (so a filter can leave a material out), and a large open mesh is further split into parts of at
//! most [`PART_TRIANGLES`] triangles, grouped in space, so that building their BVHs stays within the
//! memory target. A closed mesh keeps its whole surface as a solid for inside tests, whatever its
//! bodies. A mesh's parry `TriMesh` (and its BVH, the costly part of loading a level) is built the
//! first time a query needs it: rays walk the world's ray index instead, so a check of rays alone
//! never builds one.

use std::sync::{Arc, Mutex, OnceLock, PoisonError};

use glam::DVec3;
use parry3d_f64::bounding_volume::Aabb;
use parry3d_f64::math::Pose;
use parry3d_f64::shape::{SharedShape, TriMesh, TriMeshBuilderError, TriMeshFlags};
use rayon::slice::ParallelSliceMut;

use super::world::{BuildCause, MaterialId, ObjectId};
use crate::level::Mesh;

/// Open meshes larger than this are split into parts of at most this many triangles, grouped in space: the
/// BVH of each part is built with bounded temporary memory, and the world's BVH holds the parts.
pub const PART_TRIANGLES: usize = 1 << 18;

/// One convex primitive, or one mesh or part of a mesh, ready for queries.
pub(crate) struct Body {
    shape: Arc<LazyShape>,
    pub pose: Pose,
    pub aabb: Aabb,
    /// The object this body belongs to.
    pub object: ObjectId,
    /// The material of its triangles, when the file names one.
    pub material: Option<MaterialId>,
    /// The object's tags and its material's, sorted: what filters see and hits report.
    pub tags: Arc<[String]>,
    /// The whole closed surface of the body's object, for inside tests (`None` when the object is
    /// open or a primitive). For a closed mesh of one material it is the body's own shape.
    solid: Option<Arc<LazyShape>>,
    /// For a body that holds only some of its object's triangles: the object's (kept) triangle index
    /// of each of the body's triangles.
    triangle_ids: Option<Box<[u32]>>,
}

impl Body {
    /// A convex primitive placed by `pose`.
    pub fn primitive(
        object: ObjectId,
        shape: SharedShape,
        pose: Pose,
        tags: Arc<[String]>,
    ) -> Body {
        let aabb = shape.compute_aabb(&pose);
        Body {
            shape: Arc::new(LazyShape::Ready(shape, aabb)),
            pose,
            aabb,
            object,
            material: None,
            tags,
            solid: None,
            triangle_ids: None,
        }
    }

    /// A mesh body of `group`'s material: `shape`, within the closed `solid` it belongs to (if
    /// any), holding the object's triangles `triangle_ids` (all of them when `None`).
    fn of_mesh(
        object: ObjectId,
        group: &MaterialGroup,
        shape: Arc<LazyShape>,
        solid: Option<Arc<LazyShape>>,
        triangle_ids: Option<Box<[u32]>>,
    ) -> Body {
        Body {
            aabb: shape.aabb(),
            shape,
            pose: Pose::IDENTITY,
            object,
            material: group.material,
            tags: group.tags.clone(),
            solid,
            triangle_ids,
        }
    }

    /// The parry shape of this body (a mesh's is built on first use).
    pub fn shape(&self) -> &SharedShape {
        self.shape.get()
    }

    /// The triangle mesh of this body, when it is one (built on first use).
    pub fn mesh(&self) -> Option<&TriMesh> {
        self.is_mesh().then(|| self.shape().as_trimesh()).flatten()
    }

    /// True when this body is a triangle mesh (nothing is built to tell).
    pub fn is_mesh(&self) -> bool {
        matches!(*self.shape, LazyShape::Mesh { .. })
    }

    /// `read(vertices, triangles)` on this body's mesh, when it is one, built or not (nothing is
    /// built to read it).
    pub fn with_triangles<R>(&self, read: impl FnOnce(&[DVec3], &[[u32; 3]]) -> R) -> Option<R> {
        self.shape.with_triangles(read)
    }

    /// This body's mesh, when it is one, held where it is for reading (built or not; nothing is
    /// built or copied to read it). Nothing is locked while it is held: a query that builds the
    /// mesh meanwhile builds it from a copy.
    pub(crate) fn hold_triangles(&self) -> Option<HeldMesh<'_>> {
        self.shape.hold_triangles()
    }

    /// The nearest point to `p` on the whole surface of the closed mesh the body belongs to (on the
    /// body itself for an open mesh or a primitive).
    pub fn nearest_wall(&self, p: DVec3) -> DVec3 {
        match &self.solid {
            Some(solid) => solid.get().project_point(&Pose::IDENTITY, p, false).point,
            None => self.shape().project_point(&self.pose, p, false).point,
        }
    }

    /// True when `p` is inside the closed mesh the body belongs to (never for open meshes or
    /// primitives). The box test first: most points are far outside.
    pub fn encloses(&self, p: DVec3) -> bool {
        self.solid.as_ref().is_some_and(|solid| {
            solid.aabb().contains_local_point(p) && solid.get().contains_point(&Pose::IDENTITY, p)
        })
    }

    /// The object's (kept) triangle index of this body's triangle `local`.
    pub fn triangle_id(&self, local: u32) -> u32 {
        self.triangle_ids
            .as_ref()
            .map_or(local, |ids| ids[local as usize])
    }
}

/// A mesh's vertices, and its triangles as indices into them.
type MeshData = (Box<[DVec3]>, Box<[[u32; 3]]>);

/// A body's mesh held for reading: its triangles as loaded (shared, so that holding them locks
/// nothing: a lock held across parallel work could be wanted by a job the holding thread runs
/// while it waits), or the built mesh's.
pub(crate) enum HeldMesh<'a> {
    /// Not built yet: the pending triangles.
    Pending(Arc<MeshData>),
    /// Built.
    Built(&'a TriMesh),
}

impl HeldMesh<'_> {
    /// The mesh's vertices and its triangles as indices into them.
    pub fn triangles(&self) -> (&[DVec3], &[[u32; 3]]) {
        match self {
            HeldMesh::Pending(pending) => (&pending.0, &pending.1),
            HeldMesh::Built(mesh) => (mesh.vertices(), mesh.indices()),
        }
    }
}

/// A body's parry shape. A mesh keeps its triangles as loaded and hands them to its `TriMesh` the
/// first time a query asks for it: building the BVH is most of the cost of loading a level, and
/// the queries that never ask (rays, which walk the world's ray index) never pay it.
enum LazyShape {
    /// A shape built already (a primitive), and its bounds where it stands.
    Ready(SharedShape, Aabb),
    /// A triangle mesh.
    Mesh {
        /// Its vertices and triangles until it is built (then they are the `TriMesh`'s).
        pending: Mutex<Option<Arc<MeshData>>>,
        /// The flags it is built with.
        flags: TriMeshFlags,
        /// The least box around its triangles.
        aabb: Aabb,
        /// The mesh, once built.
        built: OnceLock<SharedShape>,
    },
}

impl LazyShape {
    /// A mesh of these triangles, to be built with `flags` when first asked for. Fails as parry
    /// would when it is built: without triangles.
    fn mesh(
        vertices: Vec<DVec3>,
        triangles: Vec<[u32; 3]>,
        flags: TriMeshFlags,
    ) -> Result<LazyShape, BuildCause> {
        if triangles.is_empty() {
            return Err(BuildCause::Mesh(TriMeshBuilderError::EmptyIndices));
        }
        let mut aabb = Aabb::new_invalid();
        for t in &triangles {
            for v in t {
                aabb.take_point(vertices[*v as usize]);
            }
        }
        Ok(LazyShape::Mesh {
            pending: Mutex::new(Some(Arc::new((vertices.into(), triangles.into())))),
            flags,
            aabb,
            built: OnceLock::new(),
        })
    }

    /// The bounds of the shape where it stands.
    fn aabb(&self) -> Aabb {
        match self {
            LazyShape::Ready(_, aabb) | LazyShape::Mesh { aabb, .. } => *aabb,
        }
    }

    /// The shape, a mesh built on first use.
    fn get(&self) -> &SharedShape {
        match self {
            LazyShape::Ready(shape, _) => shape,
            LazyShape::Mesh {
                pending,
                flags,
                built,
                ..
            } => built.get_or_init(|| {
                let pending = pending
                    .lock()
                    .unwrap_or_else(PoisonError::into_inner)
                    .take()
                    .expect("a mesh's triangles are pending until it is built");
                // Moved into the mesh, or copied when they are held for reading meanwhile.
                let (vertices, triangles) = Arc::unwrap_or_clone(pending);
                let mesh = TriMesh::with_flags(vertices.into_vec(), triangles.into_vec(), *flags)
                    .expect("a mesh has triangles (checked when it was made)");
                SharedShape::new(mesh)
            }),
        }
    }

    /// `read(vertices, triangles)` on a mesh, from where they are: pending, or in the built mesh.
    fn with_triangles<R>(&self, read: impl FnOnce(&[DVec3], &[[u32; 3]]) -> R) -> Option<R> {
        self.hold_triangles().map(|held| {
            let (vertices, triangles) = held.triangles();
            read(vertices, triangles)
        })
    }

    /// A mesh's triangles held where they are: pending, or in the built mesh.
    fn hold_triangles(&self) -> Option<HeldMesh<'_>> {
        let LazyShape::Mesh { pending, built, .. } = self else {
            return None;
        };
        if built.get().is_none() {
            let pending = pending.lock().unwrap_or_else(PoisonError::into_inner);
            if let Some(triangles) = pending.as_ref() {
                return Some(HeldMesh::Pending(Arc::clone(triangles)));
            }
        }
        // Built, or being built on another thread (which `get` waits for).
        Some(HeldMesh::Built(self.get().as_trimesh().expect("a mesh")))
    }

    /// True once a mesh is built (a primitive always is).
    #[cfg(test)]
    fn is_built(&self) -> bool {
        match self {
            LazyShape::Ready(..) => true,
            LazyShape::Mesh { built, .. } => built.get().is_some(),
        }
    }
}

/// The triangles of one material of a mesh: (material, tags of the body, kept triangle indices).
pub(crate) struct MaterialGroup {
    pub material: Option<MaterialId>,
    pub tags: Arc<[String]>,
    pub triangles: Vec<u32>,
}

/// What building a mesh's bodies found out about its surface.
pub(crate) struct MeshFacts {
    /// Every edge shared by exactly two triangles running opposite ways: the mesh has an inside.
    pub closed: bool,
    /// Edges that exactly two triangles run the same way, none back (their windings disagree).
    pub winding_faults: usize,
}

/// The bodies of one mesh object: one per material group (or the whole mesh when it has one
/// group), large open groups split into parts. `welded` is the mesh [`weld`]ed.
pub(crate) fn mesh_bodies(
    object: ObjectId,
    mesh: Mesh,
    welded: Welded,
    groups: Vec<MaterialGroup>,
) -> Result<(Vec<Body>, MeshFacts), BuildCause> {
    let Mesh {
        vertices,
        triangles,
        ..
    } = mesh;
    let (welded, indices) = welded;
    let facts = surface_facts(&indices);
    let whole = groups.len() == 1;
    if facts.closed {
        drop((vertices, triangles));
        // Bodies by material are parts of the welded surface the solid keeps; a whole mesh is the
        // solid.
        let solid = Arc::new(LazyShape::mesh(welded, indices, TriMeshFlags::ORIENTED)?);
        if whole {
            let group = groups.into_iter().next().expect("one group");
            return Ok((
                vec![Body::of_mesh(
                    object,
                    &group,
                    solid.clone(),
                    Some(solid),
                    None,
                )],
                facts,
            ));
        }
        let mut bodies = Vec::new();
        solid
            .with_triangles(|welded, indices| {
                for group in groups {
                    bodies.extend(group_bodies(object, welded, indices, group, Some(&solid))?);
                }
                Ok(())
            })
            .expect("a mesh")?;
        return Ok((bodies, facts));
    }
    // Open: the welded copy was only needed to tell.
    drop((welded, indices));
    if whole && triangles.len() <= PART_TRIANGLES {
        let group = groups.into_iter().next().expect("one group");
        let shape = LazyShape::mesh(vertices, triangles, TriMeshFlags::empty())?;
        return Ok((
            vec![Body::of_mesh(object, &group, Arc::new(shape), None, None)],
            facts,
        ));
    }
    let mut bodies = Vec::new();
    for group in groups {
        bodies.extend(group_bodies(object, &vertices, &triangles, group, None)?);
    }
    Ok((bodies, facts))
}

/// The bodies of one material group: parts of at most [`PART_TRIANGLES`] triangles, compact in
/// space, each with its own copy of its triangles and the vertices they use.
fn group_bodies(
    object: ObjectId,
    vertices: &[DVec3],
    triangles: &[[u32; 3]],
    mut group: MaterialGroup,
    solid: Option<&Arc<LazyShape>>,
) -> Result<Vec<Body>, BuildCause> {
    let mut order = std::mem::take(&mut group.triangles);
    let mut parts = Vec::new();
    split_in_space(vertices, triangles, &mut order, &mut parts);
    let mut local_of = vec![u32::MAX; vertices.len()];
    let mut bodies = Vec::with_capacity(parts.len());
    for part in parts.iter().map(|r| &order[r.clone()]) {
        let mut part_vertices = Vec::new();
        let mut part_indices = Vec::with_capacity(part.len());
        for &t in part {
            part_indices.push(triangles[t as usize].map(|v| {
                if local_of[v as usize] == u32::MAX {
                    local_of[v as usize] = part_vertices.len() as u32;
                    part_vertices.push(vertices[v as usize]);
                }
                local_of[v as usize]
            }));
        }
        for &t in part {
            for v in triangles[t as usize] {
                local_of[v as usize] = u32::MAX;
            }
        }
        let shape = LazyShape::mesh(part_vertices, part_indices, TriMeshFlags::empty())?;
        bodies.push(Body::of_mesh(
            object,
            &group,
            Arc::new(shape),
            solid.cloned(),
            Some(Box::from(part)),
        ));
    }
    Ok(bodies)
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

/// A mesh with its vertices at the same position merged: the vertices, and the triangles over them.
pub(crate) type Welded = (Vec<DVec3>, Vec<[u32; 3]>);

/// Merges vertices at exactly the same position, keeping the triangle order. Sorting vertex indices
/// by position keeps the extra memory to two `u32` per vertex.
pub(crate) fn weld(vertices: &[DVec3], triangles: &[[u32; 3]]) -> Welded {
    let key = |v: DVec3| {
        v.to_array()
            .map(|c| if c == 0.0 { 0u64 } else { c.to_bits() })
    };
    let mut order: Vec<u32> = (0..vertices.len() as u32).collect();
    // Keys are unique (the index breaks ties), so the parallel sort's order is the only one.
    order.par_sort_unstable_by_key(|&i| (key(vertices[i as usize]), i));
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

/// Whether a welded mesh is closed (every directed edge appears once and its reverse once), and how
/// many shared edges two triangles run the same way. Sorted edge keys keep the extra memory to 24
/// bytes per triangle.
fn surface_facts(triangles: &[[u32; 3]]) -> MeshFacts {
    let mut edges: Vec<u64> = Vec::with_capacity(triangles.len() * 3);
    for t in triangles {
        for k in 0..3 {
            edges.push((u64::from(t[k]) << 32) | u64::from(t[(k + 1) % 3]));
        }
    }
    edges.par_sort_unstable();
    let repeated = edges.windows(2).filter(|w| w[0] == w[1]).count();
    let closed = repeated == 0
        && edges
            .iter()
            .all(|&e| edges.binary_search(&e.rotate_right(32)).is_ok());
    // A winding fault is an edge two triangles run the same way with none running it back; an
    // edge that four triangles share (two boxes stacked face to face) is a junction, not a fault.
    let uses = |e: u64| edges.partition_point(|&x| x <= e) - edges.partition_point(|&x| x < e);
    let winding_faults = edges
        .windows(2)
        .filter(|w| w[0] == w[1] && uses(w[0]) == 2 && uses(w[0].rotate_right(32)) == 0)
        .count();
    MeshFacts {
        closed,
        winding_faults,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demo::large_level;
    use crate::query::{ClosestProbe, World};

    /// How many of the world's mesh bodies have their parry mesh built.
    fn built(world: &World) -> usize {
        world
            .bodies
            .iter()
            .filter(|b| b.is_mesh() && b.shape.is_built())
            .count()
    }

    #[test]
    fn rays_build_no_mesh_and_a_closest_point_builds_the_bodies_it_reaches() {
        // Large enough that the ground is split into parts.
        let world = World::from_level(large_level(600_000)).expect("builds");
        assert!(world.bodies.iter().filter(|b| b.is_mesh()).count() > 2);
        let view = world.everything();
        let mut hits = 0;
        for k in 0..200 {
            let x = -40.0 + 0.4 * f64::from(k);
            let from = DVec3::new(x, 30.0, 0.5 * x);
            hits += usize::from(
                view.ray_first(from, from - DVec3::Y * 60.0)
                    .unwrap()
                    .is_some(),
            );
            hits += view.ray_all(from, from - DVec3::Y * 60.0).unwrap().len();
        }
        assert!(hits > 200, "the rays meet the level ({hits} hits)");
        assert_eq!(built(&world), 0, "rays walk the ray index alone");
        let at = DVec3::new(1.0, 40.0, 2.0);
        let hit = view.closest(ClosestProbe::Point, at, 100.0).unwrap();
        assert!(hit.is_some());
        let meshes = world.bodies.iter().filter(|b| b.is_mesh()).count();
        assert!((1..meshes).contains(&built(&world)), "only what it reached");
    }

    #[test]
    fn a_mesh_body_box_is_the_least_box_around_its_triangles() {
        // Reference: parry3d-f64's own BVH root box over the same triangles (the union of each
        // triangle's exact bounds), built here only to compare.
        let world = World::from_level(large_level(300_000)).expect("builds");
        for body in world.bodies.iter().filter(|b| b.is_mesh()) {
            let reference = body.mesh().expect("a mesh").local_aabb();
            assert_eq!(body.aabb, reference);
        }
    }
}
