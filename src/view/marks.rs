//! Overlay marks (lines, points, arrows, translucent shapes) and their triangles. Widths and sizes are
//! in screen pixels, so marks are rebuilt when the camera moves; they stay readable at any distance.

use std::fmt;
use std::sync::Arc;

use glam::{DVec2, DVec3};
use plumbline_core::query::{ProbeShape, ROUND_SEGMENTS};

use super::camera::OrbitCamera;
use super::palette::{Rgb, StateMark};
use super::surface::{Surface, face_normal, shaded};

/// One thing drawn over the level.
#[derive(Debug, Clone, PartialEq)]
pub enum Mark {
    /// A straight line, solid or dashed.
    Line {
        /// Start.
        from: DVec3,
        /// End.
        to: DVec3,
        /// Colour.
        colour: Rgb,
        /// Width in pixels.
        width: f64,
        /// Drawn as dashes (used for the part of a ray beyond its first hit).
        dashed: bool,
    },
    /// A dark band under a line (the selected probe's), pushed back from the eye so the line
    /// itself stays in front of it.
    Halo {
        /// Start.
        from: DVec3,
        /// End.
        to: DVec3,
        /// Colour.
        colour: Rgb,
        /// Width in pixels.
        width: f64,
    },
    /// A point marker whose shape tells the probe's state.
    Point {
        /// Where.
        at: DVec3,
        /// Colour.
        colour: Rgb,
        /// Size in pixels.
        size: f64,
        /// Marker shape.
        mark: StateMark,
    },
    /// An arrow from a point along a direction (normals, penetration directions).
    Arrow {
        /// Tail.
        from: DVec3,
        /// Unit direction.
        direction: DVec3,
        /// Length in pixels.
        length: f64,
        /// Colour.
        colour: Rgb,
        /// Shaft width in pixels.
        width: f64,
    },
    /// A probe's shape placed in the world, drawn see-through with as many segments as its size
    /// on screen needs.
    Shape {
        /// The shape, turned.
        shape: SharedShape,
        /// Where its centre is.
        at: DVec3,
        /// Colour.
        colour: Rgb,
        /// Opacity, 0–255.
        alpha: u8,
    },
    /// A shape surface placed in the world, drawn see-through.
    Ghost {
        /// Vertices, world coordinates.
        vertices: Vec<DVec3>,
        /// Triangles.
        triangles: Vec<[u32; 3]>,
        /// Colour.
        colour: Rgb,
        /// Opacity, 0–255.
        alpha: u8,
    },
}

/// A probe shape that several marks may place (equal when it is the same shape).
#[derive(Clone)]
pub struct SharedShape(pub Arc<ProbeShape>);

impl PartialEq for SharedShape {
    fn eq(&self, other: &SharedShape) -> bool {
        Arc::ptr_eq(&self.0, &other.0)
    }
}

impl fmt::Debug for SharedShape {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "shape within {} m", self.0.bounding_radius())
    }
}

/// The longest a round shape's facet edge may be on screen, in pixels, before it gets more
/// segments (up to [`ROUND_SEGMENTS`]): small and distant shapes take few triangles. Ours.
const FACET_PIXELS: f64 = 4.0;

/// Segments around a round shape whose bounding radius spans `radius_pixels` on screen.
fn segments_for(radius_pixels: f64) -> u32 {
    let needed = (std::f64::consts::TAU * radius_pixels / FACET_PIXELS).ceil();
    if needed.is_finite() {
        needed.clamp(0.0, f64::from(ROUND_SEGMENTS)) as u32
    } else {
        ROUND_SEGMENTS
    }
}

/// The triangles of a set of marks: solid ones, and see-through ones drawn after them.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MarkSurfaces {
    /// Opaque triangles.
    pub solid: Surface,
    /// Translucent triangles.
    pub see_through: Surface,
}

/// The camera and viewport marks are sized for.
#[derive(Debug, Clone, Copy)]
pub struct Sizing {
    /// The camera.
    pub camera: OrbitCamera,
    /// Viewport height, pixels.
    pub viewport_height: f64,
    /// World point the drawing coordinates start from.
    pub origin: DVec3,
}

impl Sizing {
    /// Metres that one pixel covers at a world point.
    fn metres_per_pixel(&self, at: DVec3) -> f64 {
        let depth = (at - self.camera.eye())
            .dot(-self.camera.backward())
            .max(self.camera.distance * 0.01);
        self.camera.metres_per_pixel(depth, self.viewport_height)
    }
}

/// Builds the triangles of `marks` for the given camera.
pub fn mark_surfaces(marks: &[Mark], sizing: &Sizing) -> MarkSurfaces {
    let mut out = MarkSurfaces::default();
    for mark in marks {
        match mark {
            Mark::Line {
                from,
                to,
                colour,
                width,
                dashed,
            } => {
                if *dashed {
                    dashes(&mut out.solid, *from, *to, *colour, *width, sizing);
                } else {
                    tube(&mut out.solid, *from, *to, *colour, *width, sizing);
                }
            }
            Mark::Halo {
                from,
                to,
                colour,
                width,
            } => {
                // Back by its own radius at each end: its front is then behind the line's centre,
                // and the line (narrower, on the centre) covers it wherever both are drawn.
                let back = |p: DVec3| {
                    let away = (p - sizing.camera.eye()).normalize_or_zero();
                    p + away * sizing.metres_per_pixel(p) * *width * 0.5
                };
                tube(
                    &mut out.solid,
                    back(*from),
                    back(*to),
                    *colour,
                    *width,
                    sizing,
                );
            }
            Mark::Point {
                at,
                colour,
                size,
                mark,
            } => marker(&mut out.solid, *at, *colour, *size, *mark, sizing),
            Mark::Arrow {
                from,
                direction,
                length,
                colour,
                width,
            } => {
                let along = *direction * sizing.metres_per_pixel(*from) * *length;
                arrow(&mut out.solid, *from, along, *colour, *width, sizing)
            }
            Mark::Shape {
                shape,
                at,
                colour,
                alpha,
            } => {
                let radius = shape.0.bounding_radius() / sizing.metres_per_pixel(*at);
                let (vertices, triangles) = shape.0.surface(segments_for(radius));
                let placed: Vec<DVec3> = vertices.iter().map(|v| *at + *v).collect();
                see_through(
                    &mut out.see_through,
                    &placed,
                    &triangles,
                    *colour,
                    *alpha,
                    sizing,
                );
            }
            Mark::Ghost {
                vertices,
                triangles,
                colour,
                alpha,
            } => see_through(
                &mut out.see_through,
                vertices,
                triangles,
                *colour,
                *alpha,
                sizing,
            ),
        }
    }
    out
}

/// Adds a see-through surface's triangles.
fn see_through(
    surface: &mut Surface,
    vertices: &[DVec3],
    triangles: &[[u32; 3]],
    colour: Rgb,
    alpha: u8,
    sizing: &Sizing,
) {
    for t in triangles {
        let corners = t.map(|i| vertices[i as usize]);
        push_lit(surface, corners, colour, alpha, sizing);
    }
}

/// Adds a triangle lit by a light at the eye (marks are shaded so their shape reads).
fn push_lit(surface: &mut Surface, corners: [DVec3; 3], colour: Rgb, alpha: u8, sizing: &Sizing) {
    let Some(normal) = face_normal(corners) else {
        return;
    };
    let light = 0.62 + 0.38 * normal.dot(sizing.camera.backward()).abs();
    surface.push(corners, sizing.origin, shaded(colour, light, alpha));
}

/// Two unit vectors across a direction.
fn across(dir: DVec3) -> (DVec3, DVec3) {
    let helper = if dir.x.abs() < 0.9 {
        DVec3::X
    } else {
        DVec3::Y
    };
    let u = dir.cross(helper).normalize();
    (u, dir.cross(u))
}

/// The front half of a six-sided tube whose width is `width` pixels at both ends: three faces
/// turned to the eye (the middle one facing it), so every line is shaded alike and no triangle is
/// spent on faces the front hides.
fn tube(surface: &mut Surface, from: DVec3, to: DVec3, colour: Rgb, width: f64, sizing: &Sizing) {
    let Some(dir) = (to - from).try_normalize() else {
        return;
    };
    let eye = sizing.camera.eye() - (from + to) * 0.5;
    let (toward, side) = match eye.reject_from_normalized(dir).try_normalize() {
        Some(toward) => (toward, dir.cross(toward)),
        // Seen end on: any two directions across it.
        None => across(dir),
    };
    let r0 = sizing.metres_per_pixel(from) * width * 0.5;
    let r1 = sizing.metres_per_pixel(to) * width * 0.5;
    // The hexagon's corners from one side of the silhouette to the other, 60° apart.
    const CORNERS: [f64; 4] = [-90.0, -30.0, 30.0, 90.0];
    let ring = |centre: DVec3, r: f64, k: usize| {
        let angle = CORNERS[k].to_radians();
        centre + (toward * angle.cos() + side * angle.sin()) * r
    };
    for k in 0..CORNERS.len() - 1 {
        let (a0, a1) = (ring(from, r0, k), ring(from, r0, k + 1));
        let (b0, b1) = (ring(to, r1, k), ring(to, r1, k + 1));
        push_lit(surface, [a0, a1, b1], colour, 255, sizing);
        push_lit(surface, [a0, b1, b0], colour, 255, sizing);
    }
}

/// Dashes about eight pixels long with equal gaps.
fn dashes(surface: &mut Surface, from: DVec3, to: DVec3, colour: Rgb, width: f64, sizing: &Sizing) {
    let length = (to - from).length();
    let middle = (from + to) * 0.5;
    let dash = sizing.metres_per_pixel(middle) * 8.0;
    let count = ((length / (2.0 * dash)).floor() as usize).clamp(1, 400);
    for i in 0..count {
        let t0 = i as f64 / count as f64;
        let t1 = t0 + 0.5 / count as f64;
        tube(
            surface,
            from.lerp(to, t0),
            from.lerp(to, t1),
            colour,
            width,
            sizing,
        );
    }
}

/// A tube with a four-sided head.
fn arrow(
    surface: &mut Surface,
    from: DVec3,
    along: DVec3,
    colour: Rgb,
    width: f64,
    sizing: &Sizing,
) {
    let Some(dir) = along.try_normalize() else {
        return;
    };
    let tip = from + along;
    let head = (sizing.metres_per_pixel(tip) * width * 4.0).min(along.length() * 0.5);
    let neck = tip - dir * head;
    tube(surface, from, neck, colour, width, sizing);
    let (u, v) = across(dir);
    let r = head * 0.45;
    let base = [neck + u * r, neck + v * r, neck - u * r, neck - v * r];
    for k in 0..4 {
        push_lit(
            surface,
            [base[k], base[(k + 1) % 4], tip],
            colour,
            255,
            sizing,
        );
        push_lit(
            surface,
            [base[(k + 1) % 4], base[k], neck],
            colour,
            255,
            sizing,
        );
    }
}

/// A point marker: ball, cube, diamond or cross, `size` pixels across, with screen-aligned faces.
fn marker(
    surface: &mut Surface,
    at: DVec3,
    colour: Rgb,
    size: f64,
    mark: StateMark,
    sizing: &Sizing,
) {
    let r = sizing.metres_per_pixel(at) * size * 0.5;
    let camera = &sizing.camera;
    let (x, y, z) = (camera.right(), camera.screen_up(), camera.backward());
    let to_world = |p: DVec3| at + (x * p.x + y * p.y + z * p.z) * r;
    match mark {
        StateMark::Round => {
            for corners in front_of_unit_ball(size <= SMALL_MARKER) {
                push_lit(surface, corners.map(&to_world), colour, 255, sizing);
            }
        }
        StateMark::Square => {
            // The face of a screen-aligned cube that the eye sees.
            let quad = [(-1.0, -1.0), (1.0, -1.0), (1.0, 1.0), (-1.0, 1.0)]
                .map(|(x, y)| to_world(DVec3::new(x, y, 1.0) * 0.8));
            push_lit(surface, [quad[0], quad[1], quad[2]], colour, 255, sizing);
            push_lit(surface, [quad[0], quad[2], quad[3]], colour, 255, sizing);
        }
        StateMark::Diamond => {
            // The half of an octahedron turned to the eye.
            let tips = [DVec3::X, DVec3::Y, -DVec3::X, -DVec3::Y];
            for k in 0..4 {
                let corners = [tips[k], tips[(k + 1) % 4], DVec3::Z * 0.7].map(&to_world);
                push_lit(surface, corners, colour, 255, sizing);
            }
        }
        StateMark::Cross => {
            let d = DVec2::splat(0.25);
            for sign in [1.0, -1.0] {
                // Two bars at ±45° on screen.
                let along = DVec3::new(1.0, sign, 0.0).normalize();
                let side = DVec3::new(-sign, 1.0, 0.0).normalize();
                let corners = [
                    -along - side * d.x,
                    along - side * d.x,
                    along + side * d.y,
                    -along + side * d.y,
                ];
                let quad = corners.map(&to_world);
                push_lit(surface, [quad[0], quad[1], quad[2]], colour, 255, sizing);
                push_lit(surface, [quad[0], quad[2], quad[3]], colour, 255, sizing);
            }
        }
    }
}

/// Markers at most this many pixels across are drawn with fewer faces (a reach map or a coverage
/// draws thousands of them). Ours.
const SMALL_MARKER: f64 = 6.0;

/// The half of a unit ball turned to +z (the eye, in a marker's frame), its outline an octagon: for
/// a small marker a fan of eight faces from the tip, otherwise the upper half of an octahedron
/// split once and pushed out to the sphere (16 faces). A marker's back half is always hidden by
/// its front, so it is not drawn.
fn front_of_unit_ball(small: bool) -> Vec<[DVec3; 3]> {
    let tips = [DVec3::X, DVec3::Y, -DVec3::X, -DVec3::Y];
    let mut triangles = Vec::with_capacity(16);
    for k in 0..4 {
        let (a, b, c) = (tips[k], tips[(k + 1) % 4], DVec3::Z);
        let (ab, bc, ca) = (
            (a + b).normalize(),
            (b + c).normalize(),
            (c + a).normalize(),
        );
        if small {
            triangles.extend([[a, ab, c], [ab, b, c]]);
        } else {
            triangles.extend([[a, ab, ca], [ab, b, bc], [ca, bc, c], [ab, bc, ca]]);
        }
    }
    triangles
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sizing() -> Sizing {
        Sizing {
            camera: OrbitCamera::framing(DVec3::splat(-5.0), DVec3::splat(5.0), DVec3::Y),
            viewport_height: 600.0,
            origin: DVec3::ZERO,
        }
    }

    #[test]
    fn a_line_is_as_wide_as_asked_on_screen() {
        let sizing = sizing();
        let (from, to) = (DVec3::new(-2.0, 0.0, 0.0), DVec3::new(2.0, 0.0, 0.0));
        let marks = [Mark::Line {
            from,
            to,
            colour: [1, 2, 3],
            width: 4.0,
            dashed: false,
        }];
        let out = mark_surfaces(&marks, &sizing);
        assert_eq!(out.solid.triangle_count(), 6);
        // The ring at `from` spans 4 pixels on screen: its farthest corners, the silhouette's, are 2
        // pixels from the centre line's end.
        let size = DVec2::new(800.0, 600.0);
        let end = sizing.camera.project(from, size, 10.0).unwrap();
        let farthest = out
            .solid
            .positions
            .iter()
            .map(|p| DVec3::new(p[0] as f64, p[1] as f64, p[2] as f64))
            .filter(|p| (p.x - from.x).abs() < 1e-3)
            .filter_map(|p| sizing.camera.project(p, size, 10.0))
            .map(|q| (q - end).length())
            .fold(0.0, f64::max);
        assert!((1.95..=2.05).contains(&farthest), "{farthest}");
    }

    #[test]
    fn shapes_take_more_segments_the_larger_they_are_on_screen() {
        let sizing = sizing();
        let spec: plumbline_core::level::ShapeSpec =
            serde_json::from_str(r#"{"type": "capsule", "radius": 0.4, "half_height": 0.5}"#)
                .unwrap();
        let shape = SharedShape(Arc::new(
            ProbeShape::new(&spec, glam::DQuat::IDENTITY).unwrap(),
        ));
        let triangles_at = |at: DVec3| {
            let marks = [Mark::Shape {
                shape: shape.clone(),
                at,
                colour: [9, 9, 9],
                alpha: 90,
            }];
            mark_surfaces(&marks, &sizing).see_through.triangle_count()
        };
        let near = triangles_at(sizing.camera.target);
        let far = triangles_at(sizing.camera.eye() - sizing.camera.backward() * 2000.0);
        let (_, full) = shape.0.surface(ROUND_SEGMENTS);
        let (_, least) = shape.0.surface(0);
        assert!(least.len() < full.len() / 4);
        assert_eq!(
            near,
            full.len(),
            "a capsule at the centre of view is large on screen"
        );
        assert_eq!(far, least.len(), "2 km away it is a few pixels");
        assert_eq!(segments_for(0.5), 1);
        assert_eq!(segments_for(1e9), ROUND_SEGMENTS);
        assert_eq!(segments_for(f64::INFINITY), ROUND_SEGMENTS);
    }

    #[test]
    fn small_round_markers_take_fewer_faces() {
        let faces = |size: f64| {
            let marks = [Mark::Point {
                at: DVec3::ZERO,
                colour: [1, 2, 3],
                size,
                mark: StateMark::Round,
            }];
            mark_surfaces(&marks, &sizing()).solid.triangle_count()
        };
        assert_eq!(faces(4.0), 8);
        assert_eq!(faces(12.0), 16);
    }

    #[test]
    fn dashes_leave_gaps_and_ghosts_are_see_through() {
        let sizing = sizing();
        let dashed = mark_surfaces(
            &[Mark::Line {
                from: DVec3::ZERO,
                to: DVec3::new(0.0, 0.0, 8.0),
                colour: [0, 0, 0],
                width: 2.0,
                dashed: true,
            }],
            &sizing,
        );
        assert!(dashed.solid.triangle_count() > 12);
        let ghost = mark_surfaces(
            &[Mark::Ghost {
                vertices: vec![DVec3::ZERO, DVec3::X, DVec3::Y],
                triangles: vec![[0, 1, 2]],
                colour: [9, 9, 9],
                alpha: 90,
            }],
            &sizing,
        );
        assert!(ghost.solid.is_empty());
        assert_eq!(ghost.see_through.colours[0][3], 90);
    }
}
