//! From validated primitives to parry3d-f64 shapes, and the probe shapes that move through the level.

use glam::{DQuat, DVec3};
use parry3d_f64::math::Pose;
use parry3d_f64::shape::SharedShape;

use crate::level::{Primitive, ShapeError, ShapeSpec};

/// The parry shape of a validated primitive.
pub fn primitive_shape(primitive: &Primitive) -> Result<SharedShape, ShapeError> {
    Ok(match primitive {
        Primitive::Sphere { radius } => SharedShape::ball(*radius),
        Primitive::Box { half_extents } => {
            SharedShape::cuboid(half_extents.x, half_extents.y, half_extents.z)
        }
        Primitive::Capsule {
            radius,
            half_height,
        } if *half_height == 0.0 => SharedShape::ball(*radius),
        Primitive::Capsule {
            radius,
            half_height,
        } => SharedShape::capsule_y(*half_height, *radius),
        Primitive::Cylinder {
            radius,
            half_height,
        } => SharedShape::cylinder(*half_height, *radius),
        Primitive::Convex { points } => SharedShape::convex_hull(points).ok_or(ShapeError::Hull)?,
    })
}

/// The parry shape of a primitive that is queried as a solid against other convex shapes (a moving
/// probe shape, a volume). A box is the convex polyhedron of its corners: parry's box-against-
/// triangle and box-against-box closest points approximate (they take a support point of the
/// separating axis, which can lie far from the nearest one), while its general convex path (GJK) is
/// exact.
pub fn solid_shape(primitive: &Primitive) -> Result<SharedShape, ShapeError> {
    match primitive {
        Primitive::Box { half_extents: h } => {
            let corners: Vec<DVec3> = (0..8)
                .map(|k| {
                    DVec3::new(
                        if k & 1 == 0 { -h.x } else { h.x },
                        if k & 2 == 0 { -h.y } else { h.y },
                        if k & 4 == 0 { -h.z } else { h.z },
                    )
                })
                .collect();
            SharedShape::convex_hull(&corners).ok_or(ShapeError::Hull)
        }
        other => primitive_shape(other),
    }
}

/// Segments around a round shape's surface when drawn at full detail.
pub const ROUND_SEGMENTS: u32 = 24;

/// A triangulated surface of a primitive's parry shape in its own frame, for drawing: vertices and
/// triangles with outward winding; round shapes with `around` segments around (at least 8) and
/// half as many along.
pub fn shape_surface(shape: &SharedShape, around: u32) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let around = around.max(8);
    let along = around / 2;
    if let Some(ball) = shape.as_ball() {
        ball.to_trimesh(around, along)
    } else if let Some(cuboid) = shape.as_cuboid() {
        cuboid.to_trimesh()
    } else if let Some(capsule) = shape.as_capsule() {
        capsule.to_trimesh(around, along)
    } else if let Some(cylinder) = shape.as_cylinder() {
        cylinder.to_trimesh(around)
    } else if let Some(convex) = shape.as_convex_polyhedron() {
        convex.to_trimesh()
    } else {
        (Vec::new(), Vec::new())
    }
}

/// The triangulated surface of a primitive placed at `translation` with `rotation`, in level
/// coordinates (for drawing); empty when the shape cannot be built.
pub fn placed_primitive_surface(
    primitive: &Primitive,
    translation: DVec3,
    rotation: DQuat,
) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let Ok(shape) = primitive_shape(primitive) else {
        return (Vec::new(), Vec::new());
    };
    let (vertices, triangles) = shape_surface(&shape, ROUND_SEGMENTS);
    let placed = vertices
        .into_iter()
        .map(|v| translation + rotation * v)
        .collect();
    (placed, triangles)
}

/// A convex shape a probe places or moves, with its turn.
#[derive(Clone)]
pub struct ProbeShape {
    pub(crate) shape: SharedShape,
    pub(crate) rotation: DQuat,
    /// Radius of a ball around the shape's centre that holds the whole shape.
    pub(crate) bounding_radius: f64,
}

impl ProbeShape {
    /// The probe shape for a shape spec (`point` is not a probe shape here; it has its own queries).
    pub fn new(spec: &ShapeSpec, rotation: DQuat) -> Result<ProbeShape, ShapeError> {
        if !rotation.is_finite() || (rotation.length() - 1.0).abs() > 1e-6 {
            return Err(ShapeError::Rotation);
        }
        let primitive = spec
            .primitive()?
            .ok_or(ShapeError::NotAProbeShape(spec.type_name()))?;
        let shape = solid_shape(&primitive)?;
        let local = shape.compute_local_aabb();
        let bounding_radius = local.mins.abs().max(local.maxs.abs()).length();
        Ok(ProbeShape {
            shape,
            rotation: rotation.normalize(),
            bounding_radius,
        })
    }

    /// The probe shape for a shape spec turned by `rotation`, unturned when there is none (as a
    /// probe file leaves it out).
    pub fn turned_by(spec: &ShapeSpec, rotation: Option<DQuat>) -> Result<ProbeShape, ShapeError> {
        ProbeShape::new(spec, rotation.unwrap_or(DQuat::IDENTITY))
    }

    /// [`ProbeShape::turned_by`], or `None` for a point (which has queries of its own).
    pub fn unless_point(
        spec: &ShapeSpec,
        rotation: Option<DQuat>,
    ) -> Result<Option<ProbeShape>, ShapeError> {
        if matches!(spec, ShapeSpec::Point {}) {
            return Ok(None);
        }
        ProbeShape::turned_by(spec, rotation).map(Some)
    }

    /// The same shape with another turn.
    pub fn turned(&self, rotation: DQuat) -> ProbeShape {
        ProbeShape {
            rotation: rotation.normalize(),
            ..self.clone()
        }
    }

    /// The shape's surface with its turn applied, centred on the origin (for drawing), round
    /// shapes with `around` segments around (see [`shape_surface`]).
    pub fn surface(&self, around: u32) -> (Vec<DVec3>, Vec<[u32; 3]>) {
        let (vertices, triangles) = shape_surface(&self.shape, around);
        let turned = vertices.into_iter().map(|v| self.rotation * v).collect();
        (turned, triangles)
    }

    /// The radius of a ball around the shape's centre that holds the whole shape.
    pub fn bounding_radius(&self) -> f64 {
        self.bounding_radius
    }

    /// The radius when the shape is a ball.
    pub fn ball_radius(&self) -> Option<f64> {
        self.shape.as_ball().map(|b| b.radius)
    }

    /// A ball or capsule as its axis (`start → end` relative to the centre, equal for a ball) and
    /// radius: the shapes whose sweeps have a closed-form time of impact. `None` for others.
    pub fn rounded(&self) -> Option<(DVec3, DVec3, f64)> {
        if let Some(ball) = self.shape.as_ball() {
            return Some((DVec3::ZERO, DVec3::ZERO, ball.radius));
        }
        let capsule = self.shape.as_capsule()?;
        Some((
            self.rotation * capsule.segment.a,
            self.rotation * capsule.segment.b,
            capsule.radius,
        ))
    }

    /// The pose of the shape with its centre at `at`.
    pub fn pose_at(&self, at: DVec3) -> Pose {
        Pose::from_parts(at, self.rotation)
    }

    /// The farthest the shape reaches from its centre along the unit direction `dir`.
    pub fn extent_along(&self, dir: DVec3) -> f64 {
        self.support_offset(dir).dot(dir)
    }

    /// The shape's farthest point along the unit direction `dir`, from its centre.
    pub(crate) fn support_offset(&self, dir: DVec3) -> DVec3 {
        let local = self.rotation.inverse() * dir;
        let support = self
            .shape
            .as_support_map()
            .map(|s| s.local_support_point_toward(local))
            .unwrap_or(DVec3::ZERO);
        self.rotation * support
    }
}
