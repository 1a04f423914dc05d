//! What the viewport draws of a level: every object's triangles coloured by tag and lit, a simplified
//! proxy of big levels for frames while the camera moves, and a ground grid on the level's up axis.

use std::collections::{HashMap, HashSet};

use glam::DVec3;

use super::palette::{Rgb, material_tone, tag_tone};
use super::surface::{Surface, face_normal, shaded, sun_light};
use plumbline_core::level::{Geometry, Level, VOLUME_TAG};
use plumbline_core::query::placed_primitive_surface;

/// Levels with more triangles than this get a proxy for frames while the camera moves.
pub const PROXY_ABOVE: usize = 250_000;

/// Proxy cells across the level's longest side (vertex clustering resolution).
const PROXY_CELLS: f64 = 220.0;

/// The level as the viewport draws it.
#[derive(Debug, Clone)]
pub struct LevelDrawing {
    /// World point that drawing coordinates are measured from (the bounds' centre), so that f32
    /// positions stay exact enough far from the world origin.
    pub origin: DVec3,
    /// Lower corner of the level's bounds.
    pub min: DVec3,
    /// Upper corner of the level's bounds.
    pub max: DVec3,
    /// The level's up axis.
    pub up: DVec3,
    /// Every triangle of the level.
    pub surface: Surface,
    /// A simplified surface for frames during camera motion, for big levels.
    pub proxy: Option<Surface>,
    /// The ground grid.
    pub grid: Surface,
    /// Grid spacing, metres.
    pub grid_step: f64,
}

impl LevelDrawing {
    /// Builds the drawing of a level.
    pub fn new(level: &Level) -> LevelDrawing {
        let triangles = world_triangles(level);
        let (min, max) = bounds(&triangles).unwrap_or((DVec3::splat(-1.0), DVec3::splat(1.0)));
        let origin = (min + max) * 0.5;
        let up = level.up.normalize();
        let sun = sun_direction(up);
        let mut surface = Surface::default();
        for (corners, tone) in &triangles {
            if let Some(normal) = face_normal(*corners) {
                surface.push(
                    *corners,
                    origin,
                    shaded(*tone, sun_light(normal, up, sun), 255),
                );
            }
        }
        let proxy = (surface.triangle_count() > PROXY_ABOVE)
            .then(|| proxy_surface(&triangles, min, max, origin, up, sun));
        let (grid, grid_step) = ground_grid(min, max, up, origin);
        LevelDrawing {
            origin,
            min,
            max,
            up,
            surface,
            proxy,
            grid,
            grid_step,
        }
    }

    /// Radius of a ball around the level's centre that holds all of it.
    pub fn radius(&self) -> f64 {
        ((self.max - self.min).length() * 0.5).max(1.0)
    }
}

/// The sun: high, from one side, fixed to the level so the shading helps orientation.
fn sun_direction(up: DVec3) -> DVec3 {
    let helper = if up.x.abs() < 0.9 { DVec3::X } else { DVec3::Y };
    let side = (helper - up * helper.dot(up)).normalize();
    let other = up.cross(side);
    (up * 0.75 + side * 0.45 + other * 0.3).normalize()
}

/// Every triangle of the level in world coordinates, with its tone: its material's where the file
/// names materials (the parts users named, e.g. floors and roofs, read apart), else its object's.
/// Volumes are left out: they are drawn see-through with the marks.
fn world_triangles(level: &Level) -> Vec<([DVec3; 3], Rgb)> {
    let mut out = Vec::with_capacity(level.triangle_count());
    for object in level
        .objects
        .iter()
        .filter(|o| !o.tags.iter().any(|t| t == VOLUME_TAG))
    {
        let tone = tag_tone(&object.tags);
        match &object.geometry {
            Geometry::Mesh(mesh) => out.extend(mesh.triangles.iter().enumerate().map(|(k, t)| {
                let origin = &mesh.origin;
                let tone = origin
                    .material(origin.number(k as u32))
                    .map_or(tone, |m| material_tone(&m.name));
                (t.map(|i| mesh.vertices[i as usize]), tone)
            })),
            Geometry::Primitive {
                shape,
                translation,
                rotation,
            } => {
                let (vertices, triangles) =
                    placed_primitive_surface(shape, *translation, *rotation);
                out.extend(
                    triangles
                        .iter()
                        .map(|t| (t.map(|i| vertices[i as usize]), tone)),
                );
            }
        }
    }
    out
}

fn bounds(triangles: &[([DVec3; 3], Rgb)]) -> Option<(DVec3, DVec3)> {
    let mut corners = triangles.iter().flat_map(|(t, _)| t.iter().copied());
    let first = corners.next()?;
    Some(corners.fold((first, first), |(lo, hi), p| (lo.min(p), hi.max(p))))
}

/// A simplified surface by vertex clustering (Rossignac, J. & Borrel, P., "Multi-resolution 3D
/// approximations for rendering complex scenes", 1993): every vertex moves to the first vertex seen in
/// its grid cell; triangles that collapse, and repeats, are dropped.
fn proxy_surface(
    triangles: &[([DVec3; 3], Rgb)],
    min: DVec3,
    max: DVec3,
    origin: DVec3,
    up: DVec3,
    sun: DVec3,
) -> Surface {
    let cell = ((max - min).max_element() / PROXY_CELLS).max(1e-3);
    let key = |p: DVec3| {
        let q = ((p - min) / cell).floor();
        (q.x as i64, q.y as i64, q.z as i64)
    };
    let mut representative: HashMap<(i64, i64, i64), DVec3> = HashMap::new();
    let mut seen = HashSet::new();
    let mut surface = Surface::default();
    for (corners, tone) in triangles {
        let keys = corners.map(key);
        if keys[0] == keys[1] || keys[1] == keys[2] || keys[0] == keys[2] {
            continue;
        }
        let mut sorted = keys;
        sorted.sort_unstable();
        if !seen.insert(sorted) {
            continue;
        }
        let moved = [0, 1, 2].map(|i| *representative.entry(keys[i]).or_insert(corners[i]));
        if let Some(normal) = face_normal(moved) {
            surface.push(
                moved,
                origin,
                shaded(*tone, sun_light(normal, up, sun), 255),
            );
        }
    }
    surface
}

/// A grid of thin strips on the ground plane: the plane through the origin along `up` when the level
/// straddles it, else through the level's lowest point (just below either). About 20–50 lines a side, at 1-2-5 steps.
fn ground_grid(min: DVec3, max: DVec3, up: DVec3, origin: DVec3) -> (Surface, f64) {
    let helper = if up.x.abs() < 0.9 { DVec3::X } else { DVec3::Y };
    let a = (helper - up * helper.dot(up)).normalize();
    let b = up.cross(a);
    let low = min.dot(up).min(max.dot(up));
    let high = min.dot(up).max(max.dot(up));
    let span = (max - min).length().max(1.0);
    // A little below the plane, so a floor lying on it hides the grid instead of flickering with it.
    let height = if low <= 0.0 && high >= 0.0 { 0.0 } else { low } - 0.01 - span * 1e-4;
    let step = nice_step(span / 30.0);
    let centre = (min + max) * 0.5;
    let extent = (span * 0.65 / step).ceil() * step;
    let (ca, cb) = (
        (centre.dot(a) / step).round() * step,
        (centre.dot(b) / step).round() * step,
    );
    let half_width = step * 0.012;
    let mut grid = Surface::default();
    let lines = (extent / step) as i64;
    for i in -lines..=lines {
        let major = i % 5 == 0;
        let colour = if major {
            [92, 96, 104, 255]
        } else {
            [120, 124, 130, 255]
        };
        let w = if major { half_width * 2.0 } else { half_width };
        let offset = i as f64 * step;
        for (along, across, c_along, c_across) in [(a, b, ca, cb), (b, a, cb, ca)] {
            let base = up * height + across * (c_across + offset);
            let p0 = base + along * (c_along - extent);
            let p1 = base + along * (c_along + extent);
            let d = across * w;
            grid.push([p0 - d, p1 - d, p1 + d], origin, colour);
            grid.push([p0 - d, p1 + d, p0 + d], origin, colour);
        }
    }
    (grid, step)
}

/// The nearest of 1, 2 and 5 times a power of ten at or above `x`.
fn nice_step(x: f64) -> f64 {
    let power = 10f64.powf(x.max(1e-6).log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|s| *s >= x)
        .unwrap_or(10.0 * power)
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::level::{LevelObject, Mesh};

    fn grid_level(n: usize) -> Level {
        let mut mesh = Mesh::default();
        for i in 0..=n {
            for j in 0..=n {
                let h = ((i * 7 + j * 3) % 5) as f64 * 0.1;
                mesh.vertices.push(DVec3::new(i as f64, h, j as f64));
            }
        }
        let at = |i: usize, j: usize| (i * (n + 1) + j) as u32;
        for i in 0..n {
            for j in 0..n {
                mesh.triangles
                    .push([at(i, j), at(i + 1, j), at(i + 1, j + 1)]);
                mesh.triangles
                    .push([at(i, j), at(i + 1, j + 1), at(i, j + 1)]);
            }
        }
        Level {
            up: DVec3::Y,
            objects: vec![LevelObject {
                name: "floor".into(),
                tags: vec![],
                geometry: Geometry::Mesh(mesh),
            }],
        }
    }

    #[test]
    fn every_triangle_is_drawn_relative_to_the_centre() {
        let drawing = LevelDrawing::new(&grid_level(10));
        assert_eq!(drawing.surface.triangle_count(), 200);
        assert_eq!(drawing.origin.x, 5.0);
        assert!(drawing.proxy.is_none());
        assert!(!drawing.grid.is_empty());
        assert_eq!(drawing.grid_step, nice_step(14.2 / 30.0));
    }

    #[test]
    fn the_proxy_of_a_fine_mesh_is_much_smaller() {
        let triangles = world_triangles(&grid_level(400));
        let (min, max) = bounds(&triangles).unwrap();
        let up = DVec3::Y;
        let proxy = proxy_surface(&triangles, min, max, DVec3::ZERO, up, sun_direction(up));
        assert!(proxy.triangle_count() > 1000);
        assert!(proxy.triangle_count() < triangles.len() / 2);
    }

    #[test]
    fn nice_steps() {
        assert_eq!(nice_step(0.7), 1.0);
        assert_eq!(nice_step(1.5), 2.0);
        assert_eq!(nice_step(3.0), 5.0);
        assert_eq!(nice_step(6.0), 10.0);
    }
}
