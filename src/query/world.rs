//! The World: every level object as a parry3d-f64 shape, one BVH over the objects, and filtered views.

use std::collections::HashMap;

use glam::DVec3;
use parry3d_f64::bounding_volume::Aabb;
use parry3d_f64::math::Pose;
use parry3d_f64::partitioning::{Bvh, BvhBuildStrategy};
use parry3d_f64::shape::{SharedShape, TriMesh, TriMeshFlags};

use super::shapes::primitive_shape;
use crate::level::{Geometry, Level};

/// Index of an object in the [`World`] (the same order as the level's objects).
pub type ObjectId = usize;

/// One object ready for queries.
pub(crate) struct Body {
    pub shape: SharedShape,
    pub pose: Pose,
    pub aabb: Aabb,
    /// True for a triangle mesh that is closed (every edge shared by exactly two triangles with
    /// opposite directions), so it has an inside.
    pub closed: bool,
}

impl Body {
    /// The triangle mesh of this body, when it is one.
    pub fn mesh(&self) -> Option<&TriMesh> {
        self.shape.as_trimesh()
    }
}

/// The queryable level: parry shapes, one BVH over objects, names and tags.
pub struct World {
    pub(crate) bodies: Vec<Body>,
    names: Vec<String>,
    tags: Vec<Vec<String>>,
    pub(crate) bvh: Bvh,
    up: DVec3,
}

impl World {
    /// Builds the world from a validated level.
    pub fn new(level: &Level) -> Result<World, String> {
        let mut bodies = Vec::with_capacity(level.objects.len());
        for object in &level.objects {
            let body = match &object.geometry {
                Geometry::Mesh(mesh) => mesh_body(&mesh.vertices, &mesh.triangles)
                    .map_err(|e| format!("object \"{}\": {e}", object.name))?,
                Geometry::Primitive {
                    shape,
                    translation,
                    rotation,
                } => {
                    let shape = primitive_shape(shape)
                        .map_err(|e| format!("object \"{}\": {e}", object.name))?;
                    let pose = Pose::from_parts(*translation, *rotation);
                    let aabb = shape.compute_aabb(&pose);
                    Body {
                        shape,
                        pose,
                        aabb,
                        closed: false,
                    }
                }
            };
            bodies.push(body);
        }
        let aabbs: Vec<Aabb> = bodies.iter().map(|b| b.aabb).collect();
        let bvh = Bvh::from_leaves(BvhBuildStrategy::Binned, &aabbs);
        Ok(World {
            bodies,
            names: level.objects.iter().map(|o| o.name.clone()).collect(),
            tags: level.objects.iter().map(|o| o.tags.clone()).collect(),
            bvh,
            up: level.up,
        })
    }

    /// Number of objects.
    pub fn len(&self) -> usize {
        self.bodies.len()
    }

    /// True when the world has no objects.
    pub fn is_empty(&self) -> bool {
        self.bodies.is_empty()
    }

    /// The object's name.
    pub fn name(&self, id: ObjectId) -> &str {
        &self.names[id]
    }

    /// The object's tags (sorted).
    pub fn tags(&self, id: ObjectId) -> &[String] {
        &self.tags[id]
    }

    /// True when the object is a closed triangle mesh (it has an inside).
    pub fn is_closed(&self, id: ObjectId) -> bool {
        self.bodies[id].closed
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
}

fn mesh_body(vertices: &[DVec3], triangles: &[[u32; 3]]) -> Result<Body, String> {
    let (welded, indices) = weld(vertices, triangles);
    let closed = is_closed(&indices);
    let flags = if closed {
        TriMeshFlags::ORIENTED
    } else {
        TriMeshFlags::empty()
    };
    let mesh = TriMesh::with_flags(welded, indices, flags)
        .map_err(|e| format!("cannot build the mesh: {e:?}"))?;
    let shape = SharedShape::new(mesh);
    let pose = Pose::IDENTITY;
    let aabb = shape.compute_aabb(&pose);
    Ok(Body {
        shape,
        pose,
        aabb,
        closed,
    })
}

/// Merges vertices at exactly the same position, keeping the triangle order.
fn weld(vertices: &[DVec3], triangles: &[[u32; 3]]) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let key = |v: DVec3| {
        v.to_array()
            .map(|c| if c == 0.0 { 0u64 } else { c.to_bits() })
    };
    let mut first: HashMap<[u64; 3], u32> = HashMap::with_capacity(vertices.len());
    let mut remap = Vec::with_capacity(vertices.len());
    let mut welded = Vec::with_capacity(vertices.len());
    for &v in vertices {
        let id = *first.entry(key(v)).or_insert_with(|| {
            welded.push(v);
            (welded.len() - 1) as u32
        });
        remap.push(id);
    }
    let indices = triangles
        .iter()
        .map(|t| t.map(|i| remap[i as usize]))
        .collect();
    (welded, indices)
}

/// True when every directed edge appears once and its reverse once (a closed, consistently wound mesh).
fn is_closed(triangles: &[[u32; 3]]) -> bool {
    let mut edges: HashMap<(u32, u32), u32> = HashMap::with_capacity(triangles.len() * 3);
    for t in triangles {
        for k in 0..3 {
            *edges.entry((t[k], t[(k + 1) % 3])).or_insert(0) += 1;
        }
    }
    edges
        .iter()
        .all(|(&(a, b), &n)| n == 1 && edges.get(&(b, a)) == Some(&1))
}
