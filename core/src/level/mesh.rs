//! Turning raw vertex and index lists into a validated [`Mesh`] in level coordinates.

use glam::{DMat4, DVec3};

use super::model::{Mesh, MeshOrigin};
use super::transform::{apply, mirrors};

/// Relative area below which a triangle counts as degenerate: its doubled area is at most this
/// fraction of its longest edge squared (a needle or a point). Common practice; the value is ours.
pub const DEGENERATE_RELATIVE_AREA: f64 = 1e-12;

/// What is wrong with a raw mesh, and where (vertex or triangle index).
#[derive(Debug, Clone, PartialEq)]
pub enum MeshFault {
    /// A vertex coordinate is NaN or infinite.
    NonFiniteVertex(usize),
    /// A triangle refers to a vertex that does not exist.
    IndexOutOfRange {
        /// The triangle.
        triangle: usize,
        /// The bad index.
        index: u64,
        /// How many vertices there are.
        vertex_count: usize,
    },
}

impl MeshFault {
    /// Where the fault is, for an error message.
    pub fn place(&self) -> String {
        match self {
            MeshFault::NonFiniteVertex(v) => format!("vertex {v}"),
            MeshFault::IndexOutOfRange { triangle, .. } => format!("triangle {triangle}"),
        }
    }

    /// What the fault is, for an error message.
    pub fn message(&self) -> String {
        match self {
            MeshFault::NonFiniteVertex(_) => {
                format!(
                    "vertex coordinate is not a finite number within ±{:e} m",
                    super::MAX_COORDINATE
                )
            }
            MeshFault::IndexOutOfRange {
                index,
                vertex_count,
                ..
            } => {
                format!(
                    "vertex index {index} is out of range (the mesh has {vertex_count} vertices)"
                )
            }
        }
    }
}

/// A mesh after validation, with how many degenerate triangles were dropped.
#[derive(Debug, Clone, PartialEq)]
pub struct BuiltMesh {
    /// The usable mesh.
    pub mesh: Mesh,
    /// Triangles dropped because they had (almost) no area.
    pub degenerate_dropped: usize,
}

/// Validates raw vertices and triangles, transforms them by `matrix` (flipping the winding where it
/// mirrors space) and drops degenerate triangles. `origin` says where the triangles come from (its
/// `numbers`, when not empty, number the given triangles); the built mesh's origin numbers the
/// triangles it keeps.
pub fn build_mesh(
    vertices: &[DVec3],
    triangles: &[[u64; 3]],
    matrix: &DMat4,
    origin: MeshOrigin,
) -> Result<BuiltMesh, MeshFault> {
    if let Some(bad) = vertices.iter().position(|v| !v.is_finite()) {
        return Err(MeshFault::NonFiniteVertex(bad));
    }
    for (t, tri) in triangles.iter().enumerate() {
        if let Some(&index) = tri.iter().find(|&&i| i >= vertices.len() as u64) {
            return Err(MeshFault::IndexOutOfRange {
                triangle: t,
                index,
                vertex_count: vertices.len(),
            });
        }
    }
    let placed: Vec<DVec3> = vertices.iter().map(|&v| apply(matrix, v)).collect();
    if let Some(bad) = placed.iter().position(|v| !super::within_range(*v)) {
        return Err(MeshFault::NonFiniteVertex(bad));
    }
    let flip = mirrors(matrix);
    let mut kept = Vec::with_capacity(triangles.len());
    let mut numbers = Vec::new();
    // Triangles an earlier build dropped keep their places, moved with the mesh.
    let mut dropped: Vec<(u32, DVec3)> = origin
        .dropped
        .iter()
        .map(|&(n, at)| (n, apply(matrix, at)))
        .collect();
    for (k, tri) in triangles.iter().enumerate() {
        let [a, b, c] = tri.map(|i| i as u32);
        let tri = if flip { [a, c, b] } else { [a, b, c] };
        if is_degenerate(
            placed[tri[0] as usize],
            placed[tri[1] as usize],
            placed[tri[2] as usize],
        ) {
            // At the first dropped triangle, the numbers of those kept so far are written down; every
            // triangle kept after it needs its own.
            if kept.len() == k {
                numbers.extend((0..k as u32).map(|j| origin.number(j)));
            }
            if dropped.len() < super::model::MAX_LISTED_DROPPED {
                let middle = tri.map(|i| placed[i as usize]).iter().sum::<DVec3>() / 3.0;
                dropped.push((origin.number(k as u32), middle));
            }
        } else {
            if kept.len() < k {
                numbers.push(origin.number(k as u32));
            }
            kept.push(tri);
        }
    }
    let degenerate_dropped = triangles.len() - kept.len();
    let numbers = if degenerate_dropped == 0 {
        origin.numbers
    } else {
        numbers
    };
    Ok(BuiltMesh {
        mesh: Mesh {
            vertices: placed,
            triangles: kept,
            origin: MeshOrigin {
                numbers,
                dropped,
                ..origin
            },
        },
        degenerate_dropped,
    })
}

/// True when the triangle has (almost) no area relative to its size.
pub fn is_degenerate(a: DVec3, b: DVec3, c: DVec3) -> bool {
    let doubled_area = (b - a).cross(c - a).length();
    let longest_sq = (b - a)
        .length_squared()
        .max((c - a).length_squared())
        .max((c - b).length_squared());
    doubled_area <= DEGENERATE_RELATIVE_AREA * longest_sq || longest_sq == 0.0
}
