//! The loaded level: named, tagged objects whose geometry is in level (world) coordinates.

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
