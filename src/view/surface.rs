//! Triangle soups ready for the GPU: three f32 vertices per triangle, relative to a drawing origin, each
//! with a colour whose lighting is already baked in (flat shading reads facets best and costs the CPU
//! rasteriser nothing per pixel).

use glam::DVec3;

use super::palette::Rgb;

/// Flat-shaded triangles: `positions` and `colours` hold three entries per triangle.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Surface {
    /// Vertex positions, metres from the drawing origin.
    pub positions: Vec<[f32; 3]>,
    /// Vertex colours, sRGB with alpha.
    pub colours: Vec<[u8; 4]>,
}

impl Surface {
    /// Number of triangles.
    pub fn triangle_count(&self) -> usize {
        self.positions.len() / 3
    }

    /// True when there is nothing to draw.
    pub fn is_empty(&self) -> bool {
        self.positions.is_empty()
    }

    /// Adds one triangle (world coordinates) with a colour already shaded.
    pub fn push(&mut self, corners: [DVec3; 3], origin: DVec3, colour: [u8; 4]) {
        for corner in corners {
            let p = corner - origin;
            self.positions.push([p.x as f32, p.y as f32, p.z as f32]);
            self.colours.push(colour);
        }
    }

    /// Adds another surface's triangles.
    pub fn extend(&mut self, other: &Surface) {
        self.positions.extend_from_slice(&other.positions);
        self.colours.extend_from_slice(&other.colours);
    }
}

/// Scales a base tone by a light factor and adds alpha.
pub fn shaded(tone: Rgb, light: f64, alpha: u8) -> [u8; 4] {
    let channel = |c: u8| (c as f64 * light).round().clamp(0.0, 255.0) as u8;
    [channel(tone[0]), channel(tone[1]), channel(tone[2]), alpha]
}

/// The unit normal of a triangle, or `None` when it has no area.
pub fn face_normal([a, b, c]: [DVec3; 3]) -> Option<DVec3> {
    (b - a).cross(c - a).try_normalize()
}

/// Light on a facet under a fixed sun and sky: a soft key light from above and to one side, the same
/// on both faces (level meshes are often open and wound either way). Common practice for editor views.
pub fn sun_light(normal: DVec3, up: DVec3, sun: DVec3) -> f64 {
    let key = normal.dot(sun).abs();
    let sky = 0.5 + 0.5 * normal.dot(up).abs();
    0.38 + 0.44 * key + 0.18 * sky
}
