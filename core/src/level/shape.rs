//! Shapes as users write them (SPEC §1 and §2), their validation, and their level geometry.

use glam::DVec3;
use serde::{Deserialize, Serialize};

use super::MAX_SIZE;
use super::mesh::{BuiltMesh, MeshFault, build_mesh};
use super::model::{Geometry, MeshOrigin, Primitive};
use super::transform::Transform;
use crate::input::number;

/// What is wrong with a shape as written in a level file or a probe set.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ShapeError {
    /// A size that must be positive is not (or is beyond [`MAX_SIZE`]).
    #[error("{field} must be a positive number of metres up to {MAX_SIZE:e}, not {}", number(*.value))]
    NotPositive {
        /// The field.
        field: &'static str,
        /// Its value.
        value: f64,
    },
    /// A size that must not be negative is (or is beyond [`MAX_SIZE`]).
    #[error(
        "{field} must be zero or a positive number of metres up to {MAX_SIZE:e}, not {}",
        number(*.value)
    )]
    Negative {
        /// The field.
        field: &'static str,
        /// Its value.
        value: f64,
    },
    /// A size that is too large once the object's scale is applied.
    #[error("{field} is {} m once scaled; at most {MAX_SIZE:e} m is allowed", number(*.value))]
    ScaledTooLarge {
        /// The field.
        field: &'static str,
        /// Its scaled value.
        value: f64,
    },
    /// A convex shape's point is not finite or too far from the centre.
    #[error("points[{index}] must be finite and within {MAX_SIZE:e} m of the shape's centre")]
    PointOutOfRange {
        /// Which point.
        index: usize,
    },
    /// A convex shape's points are fewer than four or all in one plane.
    #[error("a convex shape needs at least four points that are not all in one plane")]
    Flat,
    /// The convex hull could not be built.
    #[error("the convex hull of the points could not be built")]
    Hull,
    /// A level object was given the probe-only `point` shape.
    #[error("a level object cannot be a point")]
    PointInLevel,
    /// A probe was given a shape that only levels take (`triangles`, `heightfield`) or a point where
    /// a solid is needed.
    #[error("a {0} cannot be a probe shape")]
    NotAProbeShape(&'static str),
    /// A rotation that is not a unit quaternion.
    #[error("rotation must be a unit quaternion [x, y, z, w]")]
    Rotation,
    /// A scale that is zero or not finite along some axis.
    #[error(
        "scale must be finite and non-zero, not [{}, {}, {}]",
        number(.0[0]),
        number(.0[1]),
        number(.0[2])
    )]
    Scale([f64; 3]),
    /// A sphere given a scale that is not uniform.
    #[error("a sphere can only take a uniform scale")]
    SphereScale,
    /// A capsule or cylinder given different scales along X and Z.
    #[error("a capsule or cylinder needs the same scale along X and Z")]
    AxialScale,
    /// A triangle of a `triangles` shape names a negative vertex index.
    #[error("triangle {triangle}: vertex index {index} is negative")]
    NegativeIndex {
        /// The triangle.
        triangle: usize,
        /// The index.
        index: i64,
    },
    /// A vertex or triangle of a mesh shape is unusable.
    #[error("{}: {}", .0.place(), .0.message())]
    Mesh(MeshFault),
    /// A heightfield with fewer than 2 × 2 heights.
    #[error("a heightfield needs at least 2 rows of at least 2 heights")]
    HeightfieldTooSmall,
    /// A heightfield row of another length than the first.
    #[error("heights[{row}] has {length} values but the first row has {first}")]
    RaggedRow {
        /// The row.
        row: usize,
        /// Its length.
        length: usize,
        /// The first row's length.
        first: usize,
    },
    /// A height that is not a finite number.
    #[error("heights[{row}][{column}] is not a finite number")]
    HeightNotFinite {
        /// Row.
        row: usize,
        /// Column.
        column: usize,
    },
}

/// A shape as written in a level file or a probe set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "lowercase", deny_unknown_fields)]
pub enum ShapeSpec {
    /// A ball.
    Sphere {
        /// Radius in metres.
        radius: f64,
    },
    /// A box given by half its size along each local axis.
    Box {
        /// Half extents in metres.
        half_extents: [f64; 3],
    },
    /// A capsule along local Y.
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
        /// At least four points not all in one plane.
        points: Vec<[f64; 3]>,
    },
    /// A triangle mesh (levels only).
    Triangles {
        /// Vertex positions.
        vertices: Vec<[f64; 3]>,
        /// Triangles as vertex indices.
        indices: Vec<[i64; 3]>,
    },
    /// A height grid, rows along Z and columns along X, centred on the origin (levels only).
    Heightfield {
        /// Heights in metres, one row per Z step.
        heights: Vec<Vec<f64>>,
        /// Size along X and Z in metres.
        size: [f64; 2],
    },
    /// A single point (probes only). Written with braces so that, like every other shape, it takes
    /// no fields it does not know.
    Point {},
}

impl ShapeSpec {
    /// The shape's `type` name as written in files.
    pub fn type_name(&self) -> &'static str {
        match self {
            ShapeSpec::Sphere { .. } => "sphere",
            ShapeSpec::Box { .. } => "box",
            ShapeSpec::Capsule { .. } => "capsule",
            ShapeSpec::Cylinder { .. } => "cylinder",
            ShapeSpec::Convex { .. } => "convex",
            ShapeSpec::Triangles { .. } => "triangles",
            ShapeSpec::Heightfield { .. } => "heightfield",
            ShapeSpec::Point {} => "point",
        }
    }

    /// Checks sizes and numbers and returns the convex primitive this shape is, if it is one.
    /// `Ok(None)` for `point`, `triangles` and `heightfield`.
    pub fn primitive(&self) -> Result<Option<Primitive>, ShapeError> {
        Ok(Some(match self {
            ShapeSpec::Sphere { radius } => Primitive::Sphere {
                radius: positive("radius", *radius)?,
            },
            ShapeSpec::Box { half_extents } => {
                for h in half_extents {
                    positive("half_extents", *h)?;
                }
                Primitive::Box {
                    half_extents: DVec3::from_array(*half_extents),
                }
            }
            ShapeSpec::Capsule {
                radius,
                half_height,
            } => Primitive::Capsule {
                radius: positive("radius", *radius)?,
                half_height: non_negative("half_height", *half_height)?,
            },
            ShapeSpec::Cylinder {
                radius,
                half_height,
            } => Primitive::Cylinder {
                radius: positive("radius", *radius)?,
                half_height: positive("half_height", *half_height)?,
            },
            ShapeSpec::Convex { points } => Primitive::Convex {
                points: convex_points(points)?,
            },
            ShapeSpec::Triangles { .. } | ShapeSpec::Heightfield { .. } | ShapeSpec::Point {} => {
                return Ok(None);
            }
        }))
    }

    /// The level geometry of this shape placed by `transform`, with how many degenerate triangles
    /// were dropped. Errors name the field or the vertex/triangle at fault.
    pub fn level_geometry(&self, transform: &Transform) -> Result<(Geometry, usize), ShapeError> {
        match self {
            ShapeSpec::Point {} => Err(ShapeError::PointInLevel),
            ShapeSpec::Triangles { vertices, indices } => {
                let vertices: Vec<DVec3> = vertices.iter().map(|v| DVec3::from_array(*v)).collect();
                let mut triangles = Vec::with_capacity(indices.len());
                for (t, tri) in indices.iter().enumerate() {
                    if let Some(&index) = tri.iter().find(|&&i| i < 0) {
                        return Err(ShapeError::NegativeIndex { triangle: t, index });
                    }
                    triangles.push(tri.map(|i| i as u64));
                }
                mesh_geometry(&vertices, &triangles, transform)
            }
            ShapeSpec::Heightfield { heights, size } => {
                let (vertices, triangles) = heightfield_grid(heights, *size)?;
                mesh_geometry(&vertices, &triangles, transform)
            }
            _ => {
                let primitive = self
                    .primitive()?
                    .expect("convex primitives have a primitive form");
                let shape = scale_primitive(primitive, transform.scale)?;
                Ok((
                    Geometry::Primitive {
                        shape,
                        translation: transform.translation,
                        rotation: transform.rotation,
                    },
                    0,
                ))
            }
        }
    }
}

fn mesh_geometry(
    vertices: &[DVec3],
    triangles: &[[u64; 3]],
    transform: &Transform,
) -> Result<(Geometry, usize), ShapeError> {
    let BuiltMesh {
        mesh,
        degenerate_dropped,
    } = build_mesh(
        vertices,
        triangles,
        &transform.matrix(),
        MeshOrigin::default(),
    )
    .map_err(ShapeError::Mesh)?;
    Ok((Geometry::Mesh(mesh), degenerate_dropped))
}

fn positive(field: &'static str, value: f64) -> Result<f64, ShapeError> {
    if value.is_finite() && value > 0.0 && value <= MAX_SIZE {
        Ok(value)
    } else {
        Err(ShapeError::NotPositive { field, value })
    }
}

fn non_negative(field: &'static str, value: f64) -> Result<f64, ShapeError> {
    if value.is_finite() && (0.0..=MAX_SIZE).contains(&value) {
        Ok(value)
    } else {
        Err(ShapeError::Negative { field, value })
    }
}

fn convex_points(points: &[[f64; 3]]) -> Result<Vec<DVec3>, ShapeError> {
    let points: Vec<DVec3> = points.iter().map(|p| DVec3::from_array(*p)).collect();
    if let Some(index) = points
        .iter()
        .position(|p| !p.is_finite() || p.abs().max_element() > MAX_SIZE)
    {
        return Err(ShapeError::PointOutOfRange { index });
    }
    if points.len() < 4 || !spans_volume(&points) {
        return Err(ShapeError::Flat);
    }
    Ok(points)
}

/// True when the points are not all (nearly) in one plane.
fn spans_volume(points: &[DVec3]) -> bool {
    let a = points[0];
    let size = points.iter().map(|p| (*p - a).length()).fold(0.0, f64::max);
    let Some(b) = points
        .iter()
        .copied()
        .find(|p| (*p - a).length() > 1e-9 * size)
    else {
        return false;
    };
    let Some(c) = points
        .iter()
        .copied()
        .find(|p| (b - a).cross(*p - a).length() > 1e-9 * size * size)
    else {
        return false;
    };
    let normal = (b - a).cross(c - a).normalize();
    points
        .iter()
        .any(|p| normal.dot(*p - a).abs() > 1e-9 * size)
}

/// Folds a scale into a primitive's sizes; spheres need a uniform scale, capsules and cylinders the
/// same scale along X and Z.
fn scale_primitive(primitive: Primitive, scale: DVec3) -> Result<Primitive, ShapeError> {
    let s = scale.abs();
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-12 * a.max(b);
    if !scale.is_finite() || s.min_element() <= 0.0 {
        return Err(ShapeError::Scale(scale.to_array()));
    }
    Ok(match primitive {
        Primitive::Sphere { radius } => {
            if !(same(s.x, s.y) && same(s.y, s.z)) {
                return Err(ShapeError::SphereScale);
            }
            Primitive::Sphere {
                radius: radius * s.x,
            }
        }
        Primitive::Box { half_extents } => Primitive::Box {
            half_extents: half_extents * s,
        },
        Primitive::Capsule { .. } | Primitive::Cylinder { .. } if !same(s.x, s.z) => {
            return Err(ShapeError::AxialScale);
        }
        Primitive::Capsule {
            radius,
            half_height,
        } => Primitive::Capsule {
            radius: radius * s.x,
            half_height: half_height * s.y,
        },
        Primitive::Cylinder {
            radius,
            half_height,
        } => Primitive::Cylinder {
            radius: radius * s.x,
            half_height: half_height * s.y,
        },
        Primitive::Convex { points } => Primitive::Convex {
            points: points.iter().map(|p| *p * scale).collect(),
        },
    })
    .and_then(within_size)
}

/// A scaled primitive must still be within [`MAX_SIZE`] (beyond it parry's iterative queries fail).
fn within_size(primitive: Primitive) -> Result<Primitive, ShapeError> {
    let too_large = |field: &'static str, value: f64| {
        (value.is_nan() || value > MAX_SIZE).then_some(ShapeError::ScaledTooLarge { field, value })
    };
    let fault = match &primitive {
        Primitive::Sphere { radius } => too_large("radius", *radius),
        Primitive::Box { half_extents } => too_large("half_extents", half_extents.max_element()),
        Primitive::Capsule {
            radius,
            half_height,
        }
        | Primitive::Cylinder {
            radius,
            half_height,
        } => too_large("radius", *radius).or(too_large("half_height", *half_height)),
        Primitive::Convex { points } => too_large(
            "points",
            points
                .iter()
                .map(|p| p.abs().max_element())
                .fold(0.0, f64::max),
        ),
    };
    fault.map_or(Ok(primitive), Err)
}

/// The vertices and triangles of a height grid (rows along Z, columns along X, centred).
fn heightfield_grid(
    heights: &[Vec<f64>],
    size: [f64; 2],
) -> Result<(Vec<DVec3>, Vec<[u64; 3]>), ShapeError> {
    let rows = heights.len();
    let cols = heights.first().map_or(0, Vec::len);
    if rows < 2 || cols < 2 {
        return Err(ShapeError::HeightfieldTooSmall);
    }
    if let Some(row) = heights.iter().position(|r| r.len() != cols) {
        return Err(ShapeError::RaggedRow {
            row,
            length: heights[row].len(),
            first: cols,
        });
    }
    positive("size", size[0])?;
    positive("size", size[1])?;
    let mut vertices = Vec::with_capacity(rows * cols);
    for (i, row) in heights.iter().enumerate() {
        for (j, &h) in row.iter().enumerate() {
            if !h.is_finite() {
                return Err(ShapeError::HeightNotFinite { row: i, column: j });
            }
            let x = -0.5 * size[0] + size[0] * j as f64 / (cols - 1) as f64;
            let z = -0.5 * size[1] + size[1] * i as f64 / (rows - 1) as f64;
            vertices.push(DVec3::new(x, h, z));
        }
    }
    let mut triangles = Vec::with_capacity(2 * (rows - 1) * (cols - 1));
    let at = |i: usize, j: usize| (i * cols + j) as u64;
    for i in 0..rows - 1 {
        for j in 0..cols - 1 {
            triangles.push([at(i, j), at(i + 1, j), at(i, j + 1)]);
            triangles.push([at(i, j + 1), at(i + 1, j), at(i + 1, j + 1)]);
        }
    }
    Ok((vertices, triangles))
}
