//! Bodies: the leaves of the world's BVH. A primitive is one body; a mesh is one body per material
//! (so a filter can leave a material out), and a large open mesh is further split into parts of at
//! most [`PART_TRIANGLES`] triangles, grouped in space, so that building their BVHs stays within the
//! memory target. A closed mesh keeps its whole surface as a solid for inside tests, whatever its
//! bodies.

use std::sync::Arc;

use glam::DVec3;
use parry3d_f64::bounding_volume::Aabb;
use parry3d_f64::math::Pose;
use parry3d_f64::shape::{SharedShape, TriMesh, TriMeshFlags};

use super::world::{BuildCause, MaterialId, ObjectId};
use crate::level::Mesh;

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
    /// The material of its triangles, when the file names one.
    pub material: Option<MaterialId>,
    /// The object's tags and its material's, sorted: what filters see and hits report.
    pub tags: Arc<[String]>,
    /// The whole closed surface of the body's object, for inside tests (`None` when the object is
    /// open or a primitive). For a closed mesh of one material it is the body's own shape.
    solid: Option<(SharedShape, Aabb)>,
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
            shape,
            pose,
            aabb,
            object,
            material: None,
            tags,
            solid: None,
            triangle_ids: None,
        }
    }

    /// The triangle mesh of this body, when it is one.
    pub fn mesh(&self) -> Option<&TriMesh> {
        self.shape.as_trimesh()
    }

    /// The nearest point to `p` on the whole surface of the closed mesh the body belongs to (on the
    /// body itself for an open mesh or a primitive).
    pub fn nearest_wall(&self, p: DVec3) -> DVec3 {
        match &self.solid {
            Some((solid, _)) => solid.project_point(&Pose::IDENTITY, p, false).point,
            None => self.shape.project_point(&self.pose, p, false).point,
        }
    }

    /// True when `p` is inside the closed mesh the body belongs to (never for open meshes or
    /// primitives). The box test first: most points are far outside.
    pub fn encloses(&self, p: DVec3) -> bool {
        self.solid.as_ref().is_some_and(|(solid, aabb)| {
            aabb.contains_local_point(p) && solid.contains_point(&Pose::IDENTITY, p)
        })
    }

    /// The object's (kept) triangle index of this body's triangle `local`.
    pub fn triangle_id(&self, local: u32) -> u32 {
        self.triangle_ids
            .as_ref()
            .map_or(local, |ids| ids[local as usize])
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
/// group), large open groups split into parts.
pub(crate) fn mesh_bodies(
    object: ObjectId,
    mesh: Mesh,
    groups: Vec<MaterialGroup>,
) -> Result<(Vec<Body>, MeshFacts), BuildCause> {
    let Mesh {
        vertices,
        triangles,
        ..
    } = mesh;
    let (welded, indices) = weld(&vertices, &triangles);
    let facts = surface_facts(&indices);
    let whole = groups.len() == 1;
    if facts.closed {
        drop((vertices, triangles));
        // Bodies by material share the welded surface with the solid; a whole mesh is the solid.
        let surface = (!whole).then(|| (welded.clone(), indices.clone()));
        let solid = SharedShape::new(
            TriMesh::with_flags(welded, indices, TriMeshFlags::ORIENTED)
                .map_err(BuildCause::Mesh)?,
        );
        let solid_aabb = solid.compute_aabb(&Pose::IDENTITY);
        let solid = Some((solid, solid_aabb));
        if whole {
            let group = groups.into_iter().next().expect("one group");
            let (shape, aabb) = solid.clone().expect("closed");
            return Ok((
                vec![Body {
                    shape,
                    pose: Pose::IDENTITY,
                    aabb,
                    object,
                    material: group.material,
                    tags: group.tags,
                    solid,
                    triangle_ids: None,
                }],
                facts,
            ));
        }
        let (welded, indices) = surface.expect("kept for the groups");
        let mut bodies = Vec::new();
        for group in groups {
            bodies.extend(group_bodies(
                object,
                &welded,
                &indices,
                group,
                solid.clone(),
            )?);
        }
        return Ok((bodies, facts));
    }
    // Open: the welded copy was only needed to tell; free it before any BVH is built.
    drop((welded, indices));
    if whole && triangles.len() <= PART_TRIANGLES {
        let group = groups.into_iter().next().expect("one group");
        let shape = SharedShape::new(
            TriMesh::with_flags(vertices, triangles, TriMeshFlags::empty())
                .map_err(BuildCause::Mesh)?,
        );
        let aabb = shape.compute_aabb(&Pose::IDENTITY);
        return Ok((
            vec![Body {
                shape,
                pose: Pose::IDENTITY,
                aabb,
                object,
                material: group.material,
                tags: group.tags,
                solid: None,
                triangle_ids: None,
            }],
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
/// space. Every part is copied out before any BVH is built, to bound peak memory.
fn group_bodies(
    object: ObjectId,
    vertices: &[DVec3],
    triangles: &[[u32; 3]],
    group: MaterialGroup,
    solid: Option<(SharedShape, Aabb)>,
) -> Result<Vec<Body>, BuildCause> {
    let MaterialGroup {
        material,
        tags,
        triangles: mut order,
    } = group;
    let mut parts = Vec::new();
    split_in_space(vertices, triangles, &mut order, &mut parts);
    let mut local_of = vec![u32::MAX; vertices.len()];
    let mut pieces = Vec::with_capacity(parts.len());
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
        part_vertices.shrink_to_fit();
        pieces.push((part_vertices, part_indices, Box::<[u32]>::from(part)));
    }
    drop((order, local_of));
    let mut bodies = Vec::with_capacity(pieces.len());
    for (part_vertices, part_indices, ids) in pieces {
        let shape = SharedShape::new(
            TriMesh::with_flags(part_vertices, part_indices, TriMeshFlags::empty())
                .map_err(BuildCause::Mesh)?,
        );
        let aabb = shape.compute_aabb(&Pose::IDENTITY);
        bodies.push(Body {
            shape,
            pose: Pose::IDENTITY,
            aabb,
            object,
            material,
            tags: tags.clone(),
            solid: solid.clone(),
            triangle_ids: Some(ids),
        });
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
    edges.sort_unstable();
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
