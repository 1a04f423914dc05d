//! Shapes as users write them (SPEC §1 and §2), their validation, and their level geometry.

use glam::DVec3;
use serde::{Deserialize, Serialize};

use super::mesh::{BuiltMesh, build_mesh};
use super::model::{Geometry, Primitive};
use super::transform::Transform;

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
    /// A single point (probes only).
    Point,
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
            ShapeSpec::Point => "point",
        }
    }

    /// Checks sizes and numbers and returns the convex primitive this shape is, if it is one.
    /// `Ok(None)` for `point`, `triangles` and `heightfield`.
    pub fn primitive(&self) -> Result<Option<Primitive>, String> {
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
            ShapeSpec::Triangles { .. } | ShapeSpec::Heightfield { .. } | ShapeSpec::Point => {
                return Ok(None);
            }
        }))
    }

    /// The level geometry of this shape placed by `transform`, with how many degenerate triangles
    /// were dropped. Errors name the field or the vertex/triangle at fault.
    pub fn level_geometry(&self, transform: &Transform) -> Result<(Geometry, usize), String> {
        match self {
            ShapeSpec::Point => Err("a level object cannot be a point".into()),
            ShapeSpec::Triangles { vertices, indices } => {
                let vertices: Vec<DVec3> = vertices.iter().map(|v| DVec3::from_array(*v)).collect();
                let mut triangles = Vec::with_capacity(indices.len());
                for (t, tri) in indices.iter().enumerate() {
                    if let Some(bad) = tri.iter().find(|&&i| i < 0) {
                        return Err(format!("triangle {t}: vertex index {bad} is negative"));
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
) -> Result<(Geometry, usize), String> {
    let BuiltMesh {
        mesh,
        degenerate_dropped,
    } = build_mesh(vertices, triangles, &transform.matrix())
        .map_err(|fault| format!("{}: {}", fault.place(), fault.message()))?;
    Ok((Geometry::Mesh(mesh), degenerate_dropped))
}

fn positive(field: &str, value: f64) -> Result<f64, String> {
    if value.is_finite() && value > 0.0 && value <= super::MAX_SIZE {
        Ok(value)
    } else {
        Err(format!(
            "{field} must be a positive number of metres up to {:e}, not {value}",
            super::MAX_SIZE
        ))
    }
}

fn non_negative(field: &str, value: f64) -> Result<f64, String> {
    if value.is_finite() && (0.0..=super::MAX_SIZE).contains(&value) {
        Ok(value)
    } else {
        Err(format!(
            "{field} must be zero or a positive number of metres up to {:e}, not {value}",
            super::MAX_SIZE
        ))
    }
}

fn convex_points(points: &[[f64; 3]]) -> Result<Vec<DVec3>, String> {
    let points: Vec<DVec3> = points.iter().map(|p| DVec3::from_array(*p)).collect();
    if let Some(bad) = points
        .iter()
        .position(|p| !p.is_finite() || p.abs().max_element() > super::MAX_SIZE)
    {
        return Err(format!(
            "points[{bad}] must be finite and within {:e} m of the shape's centre",
            super::MAX_SIZE
        ));
    }
    if points.len() < 4 || !spans_volume(&points) {
        return Err(
            "a convex shape needs at least four points that are not all in one plane".into(),
        );
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
fn scale_primitive(primitive: Primitive, scale: DVec3) -> Result<Primitive, String> {
    let s = scale.abs();
    let same = |a: f64, b: f64| (a - b).abs() <= 1e-12 * a.max(b);
    if !scale.is_finite() || s.min_element() <= 0.0 {
        return Err(format!(
            "scale must be finite and non-zero, not {:?}",
            scale.to_array()
        ));
    }
    Ok(match primitive {
        Primitive::Sphere { radius } => {
            if !(same(s.x, s.y) && same(s.y, s.z)) {
                return Err("a sphere can only take a uniform scale".into());
            }
            Primitive::Sphere {
                radius: radius * s.x,
            }
        }
        Primitive::Box { half_extents } => Primitive::Box {
            half_extents: half_extents * s,
        },
        Primitive::Capsule { .. } | Primitive::Cylinder { .. } if !same(s.x, s.z) => {
            return Err("a capsule or cylinder needs the same scale along X and Z".into());
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
}

/// The vertices and triangles of a height grid (rows along Z, columns along X, centred).
fn heightfield_grid(
    heights: &[Vec<f64>],
    size: [f64; 2],
) -> Result<(Vec<DVec3>, Vec<[u64; 3]>), String> {
    let rows = heights.len();
    let cols = heights.first().map_or(0, Vec::len);
    if rows < 2 || cols < 2 {
        return Err("a heightfield needs at least 2 rows of at least 2 heights".into());
    }
    if let Some(r) = heights.iter().position(|row| row.len() != cols) {
        return Err(format!(
            "heights[{r}] has {} values but the first row has {cols}",
            heights[r].len()
        ));
    }
    positive("size", size[0])?;
    positive("size", size[1])?;
    let mut vertices = Vec::with_capacity(rows * cols);
    for (i, row) in heights.iter().enumerate() {
        for (j, &h) in row.iter().enumerate() {
            if !h.is_finite() {
                return Err(format!("heights[{i}][{j}] is not a finite number"));
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
