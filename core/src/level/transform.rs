//! Node transforms as glTF defines them: scale, then rotation, then translation.

use glam::{DMat4, DQuat, DVec3};

/// A transform in the glTF convention, applied scale first, then rotation, then translation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Transform {
    /// Applied last.
    pub translation: DVec3,
    /// Unit quaternion.
    pub rotation: DQuat,
    /// Applied first, per axis.
    pub scale: DVec3,
}

impl Default for Transform {
    fn default() -> Self {
        Self {
            translation: DVec3::ZERO,
            rotation: DQuat::IDENTITY,
            scale: DVec3::ONE,
        }
    }
}

impl Transform {
    /// The 4x4 matrix of this transform.
    pub fn matrix(&self) -> DMat4 {
        DMat4::from_scale_rotation_translation(self.scale, self.rotation, self.translation)
    }
}

/// Applies an affine matrix to a point.
pub fn apply(matrix: &DMat4, p: DVec3) -> DVec3 {
    matrix.transform_point3(p)
}

/// True when the matrix mirrors space (negative determinant of its linear part), so winding must flip.
pub fn mirrors(matrix: &DMat4) -> bool {
    glam::DMat3::from_mat4(*matrix).determinant() < 0.0
}
