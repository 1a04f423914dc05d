//! The loaded level: named, tagged objects whose geometry is in level (world) coordinates.

use std::sync::Arc;

use glam::{DQuat, DVec3};

/// A level as loaded: every object with its geometry in level coordinates, and the up axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Level {
    /// Unit vector pointing up in this level.
    pub up: DVec3,
    /// The objects, in file order; names are unique.
    pub objects: Vec<LevelObject>,
}

/// One named object of the level.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelObject {
    /// Unique name (`<level object>/<inner name>` for objects inside a referenced mesh file).
    pub name: String,
    /// Tags, sorted and without duplicates.
    pub tags: Vec<String>,
    /// What the object is made of.
    pub geometry: Geometry,
}

/// The geometry of an object.
#[derive(Debug, Clone, PartialEq)]
pub enum Geometry {
    /// A triangle mesh with vertices already in level coordinates.
    Mesh(Mesh),
    /// A convex primitive placed by a rigid pose (any scale is already folded into its sizes).
    Primitive {
        /// The primitive's shape and sizes.
        shape: Primitive,
        /// Where its centre is.
        translation: DVec3,
        /// How it is turned (unit quaternion).
        rotation: DQuat,
    },
}

/// A validated triangle mesh: finite vertices, indices in range, no degenerate triangles.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Mesh {
    /// Vertex positions.
    pub vertices: Vec<DVec3>,
    /// Counter-clockwise triangles (seen from the front) as vertex indices.
    pub triangles: Vec<[u32; 3]>,
    /// Where the triangles come from in the user's file, and their materials.
    pub origin: MeshOrigin,
}

/// Where a mesh's triangles come from in the user's file. Triangles are numbered as the file gives
/// them — per object, counting polygons' fan triangles and the degenerate triangles that were dropped
/// — so that a number found in a hit is the same face in the user's modelling tool.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MeshOrigin {
    /// The mesh file, as named by the level (none for triangles written in a level file).
    pub file: Option<Arc<str>>,
    /// For each kept triangle, its number; empty when none was dropped (triangle `k` is number `k`).
    pub numbers: Vec<u32>,
    /// How numbers map to the file's own faces and primitives.
    pub layout: FaceLayout,
    /// Material runs, ascending by first number; empty when the file names no material.
    pub materials: Vec<MaterialRun>,
    /// Triangles dropped because they had no area: their numbers and where they were (the middle
    /// of their corners), at most [`MAX_LISTED_DROPPED`] (the count of all is in the load warning).
    pub dropped: Vec<(u32, glam::DVec3)>,
}

/// The most dropped triangles a mesh lists by place (lint names them). Ours.
pub const MAX_LISTED_DROPPED: usize = 1000;

/// How a mesh's triangle numbers map to places in its file.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum FaceLayout {
    /// The numbers are the places: a level file's `triangles` list, a heightfield's cells (two
    /// triangles each, row by row), generated meshes.
    #[default]
    Listed,
    /// An OBJ group: its faces in file order.
    Obj(Vec<ObjFace>),
    /// A glTF mesh instance: its primitives in order.
    Gltf {
        /// The mesh's index in the file.
        mesh: u32,
        /// For each primitive with triangles: (its first triangle number, its index in the mesh).
        primitives: Vec<(u32, u32)>,
    },
}

/// One face (`f` statement) of an OBJ group.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ObjFace {
    /// The number of its first triangle (a polygon of n corners gives n − 2, as a fan).
    pub first_triangle: u32,
    /// Its line in the file (1-based).
    pub line: u32,
    /// Its ordinal among all faces of the file (0-based).
    pub file_face: u32,
}

/// The triangles from `first` on (up to the next run) have this material.
#[derive(Debug, Clone, PartialEq)]
pub struct MaterialRun {
    /// The first triangle number of the run.
    pub first: u32,
    /// The material's name (`usemtl` in OBJ; the material's name, or `material#i`, in glTF).
    pub name: Arc<str>,
    /// Tags the level's tag rules give this material, sorted.
    pub tags: Vec<String>,
}

/// Where one triangle of a mesh is in the user's file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FacePlace {
    /// Triangle `number` of a list (see [`FaceLayout::Listed`]).
    Listed,
    /// An OBJ face.
    Obj {
        /// Its line in the file.
        line: u32,
        /// Its ordinal among the file's faces (0-based).
        face: u32,
        /// Its ordinal among its group's faces (0-based).
        group_face: u32,
        /// Which triangle of the polygon's fan (0 for a triangle).
        fan: u32,
    },
    /// A triangle of a glTF primitive.
    Gltf {
        /// The mesh's index.
        mesh: u32,
        /// The primitive's index within the mesh.
        primitive: u32,
        /// The triangle's index within the primitive (strips and fans counted as glTF orders them).
        triangle: u32,
    },
}

impl MeshOrigin {
    /// The file's number of kept triangle `k`.
    pub fn number(&self, k: u32) -> u32 {
        self.numbers.get(k as usize).copied().unwrap_or(k)
    }

    /// The kept triangle with file number `number`, if it was kept.
    pub fn kept(&self, number: u32) -> Option<u32> {
        if self.numbers.is_empty() {
            return Some(number);
        }
        self.numbers.binary_search(&number).ok().map(|k| k as u32)
    }

    /// Where triangle number `number` is in the file.
    pub fn place(&self, number: u32) -> FacePlace {
        match &self.layout {
            FaceLayout::Listed => FacePlace::Listed,
            FaceLayout::Obj(faces) => {
                let k = faces
                    .partition_point(|f| f.first_triangle <= number)
                    .saturating_sub(1);
                let face = faces.get(k).copied().unwrap_or(ObjFace {
                    first_triangle: 0,
                    line: 0,
                    file_face: 0,
                });
                FacePlace::Obj {
                    line: face.line,
                    face: face.file_face,
                    group_face: k as u32,
                    fan: number - face.first_triangle.min(number),
                }
            }
            FaceLayout::Gltf { mesh, primitives } => {
                let k = primitives
                    .partition_point(|(first, _)| *first <= number)
                    .saturating_sub(1);
                let (first, primitive) = primitives.get(k).copied().unwrap_or((0, 0));
                FacePlace::Gltf {
                    mesh: *mesh,
                    primitive,
                    triangle: number - first.min(number),
                }
            }
        }
    }

    /// The material run of triangle number `number`, if the file names materials.
    pub fn material(&self, number: u32) -> Option<&MaterialRun> {
        let k = self.materials.partition_point(|m| m.first <= number);
        k.checked_sub(1).map(|k| &self.materials[k])
    }
}

/// Convex primitive shapes, in their local frame (axis along local Y for capsule and cylinder).
#[derive(Debug, Clone, PartialEq)]
pub enum Primitive {
    /// A ball.
    Sphere {
        /// Radius in metres.
        radius: f64,
    },
    /// An axis-aligned box in the local frame.
    Box {
        /// Half the size along each local axis.
        half_extents: DVec3,
    },
    /// A segment along local Y, inflated by a radius.
    Capsule {
        /// Radius in metres.
        radius: f64,
        /// Half the length of the axis segment.
        half_height: f64,
    },
    /// A cylinder along local Y.
    Cylinder {
        /// Radius in metres.
        radius: f64,
        /// Half the height.
        half_height: f64,
    },
    /// The convex hull of points.
    Convex {
        /// The points whose hull is the shape.
        points: Vec<DVec3>,
    },
}

impl Primitive {
    /// The shape as a file writes it.
    pub fn spec(&self) -> super::ShapeSpec {
        use super::ShapeSpec;
        match self {
            Primitive::Sphere { radius } => ShapeSpec::Sphere { radius: *radius },
            Primitive::Box { half_extents } => ShapeSpec::Box {
                half_extents: half_extents.to_array(),
            },
            Primitive::Capsule {
                radius,
                half_height,
            } => ShapeSpec::Capsule {
                radius: *radius,
                half_height: *half_height,
            },
            Primitive::Cylinder {
                radius,
                half_height,
            } => ShapeSpec::Cylinder {
                radius: *radius,
                half_height: *half_height,
            },
            Primitive::Convex { points } => ShapeSpec::Convex {
                points: points.iter().map(|p| p.to_array()).collect(),
            },
        }
    }

    /// The shape's `type` name as written in files.
    pub fn type_name(&self) -> &'static str {
        match self {
            Primitive::Sphere { .. } => "sphere",
            Primitive::Box { .. } => "box",
            Primitive::Capsule { .. } => "capsule",
            Primitive::Cylinder { .. } => "cylinder",
            Primitive::Convex { .. } => "convex",
        }
    }
}

impl Level {
    /// Total triangle count over all mesh objects.
    pub fn triangle_count(&self) -> usize {
        self.objects
            .iter()
            .map(|o| match &o.geometry {
                Geometry::Mesh(m) => m.triangles.len(),
                Geometry::Primitive { .. } => 0,
            })
            .sum()
    }
}
