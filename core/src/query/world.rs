//! The World: every level object as parry3d-f64 shapes (its [`Body`]s), one BVH over the bodies, and
//! views filtered by tags, materials and names.

use std::collections::HashMap;
use std::sync::{Arc, OnceLock};

use glam::{DQuat, DVec3};
use parry3d_f64::bounding_volume::Aabb;
use parry3d_f64::math::Pose;
use parry3d_f64::partitioning::{Bvh, BvhBuildStrategy};
use parry3d_f64::shape::TriMeshBuilderError;

use parry3d_f64::shape::SharedShape;

use super::body::{Body, MaterialGroup, mesh_bodies, weld};
use super::ray_index::RayIndex;
use super::ray_tree::RayFrame;
use super::shapes::{primitive_shape, solid_shape};
use crate::level::{
    FacePlace, Geometry, Level, LevelObject, MeshOrigin, Primitive, ShapeError, ShapeSpec,
    VOLUME_TAG,
};

/// Index of an object in the [`World`] (the same order as the level's objects).
pub type ObjectId = usize;

/// A material named by the level's files, by its index in the world's list of material names.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct MaterialId(pub u32);

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
    /// An object marked as a volume encloses no space (its points are flat or a line).
    #[error("a volume must enclose space, but its points lie flat")]
    FlatVolume,
}

/// What the world keeps of each object besides its bodies.
struct ObjectInfo {
    name: Arc<str>,
    tags: Arc<[String]>,
    closed: bool,
    /// Where a mesh's triangles come from (`None` for primitives).
    origin: Option<MeshOrigin>,
    /// The first of the object's numbers in the level's file order: objects in order, each
    /// counting its triangles as its file numbers them (a primitive counts one).
    first_ordinal: u64,
    /// Shared edges of the mesh that two triangles run the same way.
    winding_faults: usize,
    /// A primitive's shape and pose.
    primitive: Option<(Primitive, DVec3, DQuat)>,
}

/// A volume of the level (an object tagged [`VOLUME_TAG`]): a convex region that blocks nothing —
/// a primitive, or the convex hull of a mesh's vertices.
pub(crate) struct Volume {
    /// The object it is.
    pub object: ObjectId,
    /// Its convex shape.
    pub shape: SharedShape,
    /// Where it is.
    pub pose: Pose,
    /// The box around it.
    pub aabb: Aabb,
}

/// The queryable level: parry shapes, one BVH over objects (or their parts), names and tags.
pub struct World {
    /// Leaves of `bvh`: primitives, and meshes by material and part (volumes are not among them).
    pub(crate) bodies: Vec<Body>,
    /// The volumes, in level order.
    pub(crate) volumes: Vec<Volume>,
    objects: Vec<ObjectInfo>,
    materials: Vec<Arc<str>>,
    /// The tags of an object's material, where the material adds some.
    material_tags: HashMap<(ObjectId, MaterialId), Arc<[String]>>,
    /// The box around each object's bodies.
    object_boxes: Vec<Aabb>,
    pub(crate) bvh: Bvh,
    /// Every triangle and primitive of the bodies in one tree made for rays, built when a ray
    /// first needs it.
    ray_index: OnceLock<RayIndex>,
    up: DVec3,
}

impl World {
    /// Builds the world from a validated level, which stays the caller's.
    pub fn new(level: &Level) -> Result<World, BuildError> {
        World::from_level(level.clone())
    }

    /// Builds the world from a validated level, taking it over: each mesh is handed to its bodies, or
    /// freed as soon as its parts are built, so peak memory holds one copy of the geometry.
    pub fn from_level(level: Level) -> Result<World, BuildError> {
        World::from_level_seen(level, |_| {})
    }

    /// [`World::from_level`], showing each object to `see`, in order, before it is taken over: a
    /// mesh while it is welded, on another thread of the pool when one is free (a check takes the
    /// level's digest so).
    pub fn from_level_seen(
        level: Level,
        mut see: impl FnMut(&LevelObject) + Send,
    ) -> Result<World, BuildError> {
        let up = level.up;
        let mut bodies = Vec::with_capacity(level.objects.len());
        let mut volumes = Vec::new();
        let mut objects = Vec::with_capacity(level.objects.len());
        let mut materials = Materials::default();
        let mut ordinal = 0u64;
        for (object, item) in level.objects.into_iter().enumerate() {
            let fail = |cause: BuildCause| BuildError {
                object: item.name.clone(),
                cause,
            };
            let volume = item.tags.iter().any(|t| t == VOLUME_TAG);
            let welded = match &item.geometry {
                Geometry::Mesh(mesh) if !volume => {
                    let (welded, ()) =
                        rayon::join(|| weld(&mesh.vertices, &mesh.triangles), || see(&item));
                    Some(welded)
                }
                _ => {
                    see(&item);
                    None
                }
            };
            let tags: Arc<[String]> = Arc::from(item.tags);
            let mut primitive_of = None;
            if volume {
                let (shape, pose) = match &item.geometry {
                    Geometry::Mesh(mesh) => {
                        let hull = SharedShape::convex_hull(&mesh.vertices)
                            .ok_or(fail(BuildCause::Shape(ShapeError::Hull)))?;
                        if hull.mass_properties(1.0).mass().partial_cmp(&0.0)
                            != Some(std::cmp::Ordering::Greater)
                        {
                            return Err(fail(BuildCause::FlatVolume));
                        }
                        (hull, Pose::IDENTITY)
                    }
                    Geometry::Primitive {
                        shape,
                        translation,
                        rotation,
                    } => {
                        primitive_of = Some((shape.clone(), *translation, *rotation));
                        (
                            solid_shape(shape).map_err(|e| fail(BuildCause::Shape(e)))?,
                            Pose::from_parts(*translation, *rotation),
                        )
                    }
                };
                let numbers = match &item.geometry {
                    Geometry::Mesh(mesh) => mesh.triangles.len().max(1) as u64,
                    Geometry::Primitive { .. } => 1,
                };
                volumes.push(Volume {
                    object,
                    aabb: shape.compute_aabb(&pose),
                    shape,
                    pose,
                });
                objects.push(ObjectInfo {
                    name: Arc::from(item.name),
                    tags,
                    closed: true,
                    origin: None,
                    first_ordinal: ordinal,
                    winding_faults: 0,
                    primitive: primitive_of,
                });
                ordinal += numbers;
                continue;
            }
            let (origin, closed, winding_faults, numbers) = match item.geometry {
                Geometry::Mesh(mut mesh) => {
                    let origin = std::mem::take(&mut mesh.origin);
                    let groups = material_groups(&mesh, &origin, &tags, &mut materials);
                    let numbers =
                        origin.number(mesh.triangles.len().saturating_sub(1) as u32) as u64 + 1;
                    // Welded above, beside the digest; welded here should that ever change.
                    let welded = welded.unwrap_or_else(|| weld(&mesh.vertices, &mesh.triangles));
                    let (own, facts) = mesh_bodies(object, mesh, welded, groups).map_err(fail)?;
                    bodies.extend(own);
                    (Some(origin), facts.closed, facts.winding_faults, numbers)
                }
                Geometry::Primitive {
                    shape,
                    translation,
                    rotation,
                } => {
                    let parry = primitive_shape(&shape).map_err(|e| fail(BuildCause::Shape(e)))?;
                    let pose = Pose::from_parts(translation, rotation);
                    bodies.push(Body::primitive(object, parry, pose, tags.clone()));
                    primitive_of = Some((shape, translation, rotation));
                    (None, false, 0, 1)
                }
            };
            objects.push(ObjectInfo {
                name: Arc::from(item.name),
                tags,
                closed,
                origin,
                first_ordinal: ordinal,
                winding_faults,
                primitive: primitive_of,
            });
            ordinal += numbers;
        }
        let aabbs: Vec<Aabb> = bodies.iter().map(|b| b.aabb).collect();
        let bvh = Bvh::from_leaves(BvhBuildStrategy::Binned, &aabbs);
        let material_tags = bodies
            .iter()
            .filter_map(|b| {
                let m = b.material?;
                (b.tags != objects[b.object].tags).then(|| ((b.object, m), b.tags.clone()))
            })
            .collect();
        let mut object_boxes = vec![Aabb::new_invalid(); objects.len()];
        for body in &bodies {
            object_boxes[body.object].take_point(body.aabb.mins);
            object_boxes[body.object].take_point(body.aabb.maxs);
        }
        for volume in &volumes {
            object_boxes[volume.object] = volume.aabb;
        }
        Ok(World {
            bodies,
            volumes,
            objects,
            materials: materials.names,
            material_tags,
            object_boxes,
            bvh,
            ray_index: OnceLock::new(),
            up,
        })
    }

    /// Builds what rays walk (done anyway by the first ray that needs it): call it on the thread
    /// pool that will answer, before answering rays in parallel, so that one build uses the pool's
    /// threads rather than each of the first rays building its own.
    pub fn prepare_rays(&self) {
        self.ray_index();
    }

    /// The world's ray index, built on first use. Not built inside the cell's own initialisation:
    /// the build runs on the thread pool, and a ray job the pool hands this thread while it waits
    /// would otherwise wait for the build it interrupted. Such a job builds its own instead; the
    /// first finished is kept (all are the same).
    #[inline]
    pub(crate) fn ray_index(&self) -> &RayIndex {
        match self.ray_index.get() {
            Some(index) => index,
            None => self.build_ray_index(),
        }
    }

    /// Builds the ray index (see [`World::ray_index`]): once a world, out of every ray's way.
    #[cold]
    fn build_ray_index(&self) -> &RayIndex {
        let root = self.bvh.root_aabb();
        let number = |body: &Body, k: u32| self.triangle_number(body.object, body.triangle_id(k));
        let index = RayIndex::new(RayFrame::around(root.mins, root.maxs), &self.bodies, number);
        self.ray_index.get_or_init(|| index)
    }

    /// Number of objects.
    pub fn len(&self) -> usize {
        self.objects.len()
    }

    /// True when the world has no objects.
    pub fn is_empty(&self) -> bool {
        self.objects.is_empty()
    }

    /// The object's name.
    pub fn name(&self, id: ObjectId) -> &str {
        &self.objects[id].name
    }

    /// The object's tags (sorted).
    pub fn tags(&self, id: ObjectId) -> &[String] {
        &self.objects[id].tags
    }

    /// The object's name, shared (no copy of the text).
    pub fn shared_name(&self, id: ObjectId) -> Arc<str> {
        self.objects[id].name.clone()
    }

    /// The object's tags, shared (no copy of the list).
    pub fn shared_tags(&self, id: ObjectId) -> Arc<[String]> {
        self.objects[id].tags.clone()
    }

    /// True when the object is a closed triangle mesh (it has an inside).
    pub fn is_closed(&self, id: ObjectId) -> bool {
        self.objects[id].closed
    }

    /// How many shared edges of the object's mesh join two triangles wound the same way (0 for a
    /// consistently wound mesh or a primitive).
    pub fn winding_faults(&self, id: ObjectId) -> usize {
        self.objects[id].winding_faults
    }

    /// The tags of a hit on `object`'s surface of `material`: the object's tags and those the
    /// level's tag rules give the material.
    pub fn hit_tags(&self, object: ObjectId, material: Option<MaterialId>) -> Arc<[String]> {
        material
            .and_then(|m| self.material_tags.get(&(object, m)))
            .cloned()
            .unwrap_or_else(|| self.shared_tags(object))
    }

    /// The name of a material.
    pub fn material(&self, id: MaterialId) -> &str {
        &self.materials[id.0 as usize]
    }

    /// The name of a material, shared.
    pub fn shared_material(&self, id: MaterialId) -> Arc<str> {
        self.materials[id.0 as usize].clone()
    }

    /// The mesh file an object's triangles come from, as the level names it.
    pub fn source_file(&self, id: ObjectId) -> Option<&Arc<str>> {
        self.objects[id].origin.as_ref()?.file.as_ref()
    }

    /// Where triangle `number` (as the file numbers it) of a mesh object is in its file.
    pub fn face_place(&self, id: ObjectId, number: u32) -> Option<FacePlace> {
        Some(self.objects[id].origin.as_ref()?.place(number))
    }

    /// The file number of an object's kept triangle `k` (or `k` itself for objects without an
    /// origin).
    pub(crate) fn triangle_number(&self, id: ObjectId, k: u32) -> u32 {
        self.objects[id].origin.as_ref().map_or(k, |o| o.number(k))
    }

    /// The position of an object's triangle `number` (or a primitive, `0`) in the level's file order:
    /// the tie-break where answers are otherwise equal, so they do not depend on how the level is cut
    /// into objects and parts.
    pub(crate) fn ordinal(&self, id: ObjectId, number: u32) -> u64 {
        self.objects[id].first_ordinal + u64::from(number)
    }

    /// The level's up axis.
    pub fn up(&self) -> DVec3 {
        self.up
    }

    /// The bounds of an object: the box around all its bodies.
    pub fn object_bounds(&self, id: ObjectId) -> (DVec3, DVec3) {
        let boxes = &self.object_boxes[id];
        (boxes.mins, boxes.maxs)
    }

    /// An object's frame: a primitive's centre and turn; a mesh's bounds centre, unturned.
    pub fn object_frame(&self, id: ObjectId) -> (DVec3, DQuat) {
        match &self.objects[id].primitive {
            Some((_, at, turn)) => (*at, *turn),
            None => {
                let (lo, hi) = self.object_bounds(id);
                ((lo + hi) / 2.0, DQuat::IDENTITY)
            }
        }
    }

    /// An object's own solid shape around its frame's centre ([`World::object_frame`]): a
    /// primitive's shape, or the convex hull of a mesh's vertices.
    pub fn object_shape(&self, id: ObjectId) -> ShapeSpec {
        if let Some((shape, _, _)) = &self.objects[id].primitive {
            return shape.spec();
        }
        let (centre, _) = self.object_frame(id);
        if let Some(hull) = self
            .volumes
            .iter()
            .find(|v| v.object == id)
            .and_then(|v| v.shape.as_convex_polyhedron())
        {
            let points = hull.points().iter().map(|v| (*v - centre).to_array());
            return ShapeSpec::Convex {
                points: points.collect(),
            };
        }
        let points = self
            .bodies
            .iter()
            .filter(|b| b.object == id)
            .filter_map(|b| {
                b.with_triangles(|vertices, _| {
                    vertices
                        .iter()
                        .map(|v| (*v - centre).to_array())
                        .collect::<Vec<_>>()
                })
            })
            .flatten()
            .collect();
        ShapeSpec::Convex { points }
    }

    /// True when the level has volumes.
    pub fn has_volumes(&self) -> bool {
        !self.volumes.is_empty()
    }

    /// True when the object is a volume (it blocks nothing; probes report entering it).
    pub fn is_volume(&self, id: ObjectId) -> bool {
        self.volumes.iter().any(|v| v.object == id)
    }

    /// The objects that have any of these tags, in level order.
    pub fn tagged(&self, tags: &[String]) -> Vec<ObjectId> {
        (0..self.len())
            .filter(|&id| self.tags(id).iter().any(|t| tags.contains(t)))
            .collect()
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
            volumes_allowed: None,
        }
    }

    /// A view of what the filter lets through (objects, or some materials of them).
    pub fn view(&self, filter: &Filter) -> View<'_> {
        if filter.is_empty() {
            return self.everything();
        }
        let allowed = self
            .bodies
            .iter()
            .map(|b| {
                filter.allows(
                    self.name(b.object),
                    &b.tags,
                    b.material.map(|m| self.material(m)),
                )
            })
            .collect();
        let volumes_allowed = self
            .volumes
            .iter()
            .map(|v| filter.allows(self.name(v.object), self.tags(v.object), None))
            .collect();
        View {
            world: self,
            allowed: Some(allowed),
            volumes_allowed: Some(volumes_allowed),
        }
    }
}

/// Material names, each once.
#[derive(Default)]
struct Materials {
    names: Vec<Arc<str>>,
    ids: HashMap<Arc<str>, MaterialId>,
}

impl Materials {
    fn id(&mut self, name: &Arc<str>) -> MaterialId {
        if let Some(id) = self.ids.get(name) {
            return *id;
        }
        let id = MaterialId(self.names.len() as u32);
        self.names.push(name.clone());
        self.ids.insert(name.clone(), id);
        id
    }
}

/// A mesh's kept triangles grouped by material name (runs of one name anywhere in the file form one
/// group), each with the object's tags and the material's.
fn material_groups(
    mesh: &crate::level::Mesh,
    origin: &MeshOrigin,
    object_tags: &Arc<[String]>,
    materials: &mut Materials,
) -> Vec<MaterialGroup> {
    if origin.materials.is_empty() {
        return vec![MaterialGroup {
            material: None,
            tags: object_tags.clone(),
            triangles: (0..mesh.triangles.len() as u32).collect(),
        }];
    }
    let mut groups: Vec<MaterialGroup> = Vec::new();
    let mut index_of: HashMap<Option<MaterialId>, usize> = HashMap::new();
    for k in 0..mesh.triangles.len() as u32 {
        let run = origin.material(origin.number(k));
        let material = run.map(|r| materials.id(&r.name));
        let g = *index_of.entry(material).or_insert_with(|| {
            let mut tags: Vec<String> = object_tags.to_vec();
            if let Some(run) = run {
                tags.extend(run.tags.iter().cloned());
            }
            tags.sort();
            tags.dedup();
            groups.push(MaterialGroup {
                material,
                tags: Arc::from(tags),
                triangles: Vec::new(),
            });
            groups.len() - 1
        });
        groups[g].triangles.push(k);
    }
    groups
}

/// Which objects a probe queries (SPEC §2): none of `ignore_tags`, one of `only_tags` when given,
/// and not named in `ignore_objects`. A tag `material:NAME` stands for the triangles of a material,
/// so a filter can leave out (or keep only) part of an object.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Filter {
    /// Objects with any of these tags are left out.
    pub ignore_tags: Vec<String>,
    /// When given, only objects with one of these tags are queried.
    pub only_tags: Option<Vec<String>>,
    /// Objects with these names are left out.
    pub ignore_objects: Vec<String>,
}

/// The prefix that makes a filter tag name a material.
pub const MATERIAL_TAG: &str = "material:";

impl Filter {
    /// True when the filter lets every object through.
    pub fn is_empty(&self) -> bool {
        self.ignore_tags.is_empty() && self.only_tags.is_none() && self.ignore_objects.is_empty()
    }

    /// True when (part of) an object with this name and these tags, of this material, is queried.
    pub fn allows(&self, name: &str, tags: &[String], material: Option<&str>) -> bool {
        let has = |wanted: &String| {
            tags.contains(wanted)
                || wanted
                    .strip_prefix(MATERIAL_TAG)
                    .is_some_and(|m| material == Some(m))
        };
        !self.ignore_tags.iter().any(has)
            && self
                .only_tags
                .as_ref()
                .is_none_or(|only| only.iter().any(has))
            && !self.ignore_objects.iter().any(|n| n == name)
    }
}

/// The world as one probe sees it: the bodies its filter lets through.
#[derive(Clone)]
pub struct View<'w> {
    pub(crate) world: &'w World,
    allowed: Option<Vec<bool>>,
    /// Which volumes the view reports, by index into the world's volumes.
    volumes_allowed: Option<Vec<bool>>,
}

impl<'w> View<'w> {
    /// The world this view looks at.
    pub fn world(&self) -> &'w World {
        self.world
    }

    /// This view without some objects (a sightline between two spots on objects looks past them).
    pub fn without(&self, objects: &[ObjectId]) -> View<'w> {
        if objects.is_empty() {
            return self.clone();
        }
        let allowed = self
            .world
            .bodies
            .iter()
            .enumerate()
            .map(|(leaf, b)| {
                self.allowed.as_ref().is_none_or(|a| a[leaf]) && !objects.contains(&b.object)
            })
            .collect();
        View {
            world: self.world,
            allowed: Some(allowed),
            volumes_allowed: self.volumes_allowed.clone(),
        }
    }

    /// The volumes the view reports, in level order.
    pub(crate) fn volumes(&self) -> impl Iterator<Item = &'w Volume> + '_ {
        let world = self.world;
        world
            .volumes
            .iter()
            .enumerate()
            .filter(|(k, _)| self.volumes_allowed.as_ref().is_none_or(|a| a[*k]))
            .map(|(_, v)| v)
    }

    /// The body behind a world BVH leaf, when the view queries it.
    pub(crate) fn body(&self, leaf: u32) -> Option<&'w Body> {
        let allowed = self.allowed.as_ref().is_none_or(|a| a[leaf as usize]);
        allowed.then(|| &self.world.bodies[leaf as usize])
    }
}
