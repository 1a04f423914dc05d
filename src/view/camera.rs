//! The viewport camera: orbit, pan, zoom and fly around a level whose up axis may be Y or Z, with the
//! projections the renderer, the picker and the overlay labels share.

use glam::{DMat4, DVec2, DVec3};

/// Vertical field of view, radians (60°, common practice for level editors).
pub const FIELD_OF_VIEW: f64 = std::f64::consts::FRAC_PI_3;

/// How much room framing leaves around what it frames (a tenth of the half-view). Ours.
pub const FRAME_MARGIN: f64 = 1.1;

/// Steepest pitch, short of the pole so the view never flips (common practice).
const MAX_PITCH: f64 = 1.54;

/// A camera orbiting `target` at `distance`, its heading and pitch measured about the level's up axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrbitCamera {
    /// The point looked at and orbited.
    pub target: DVec3,
    /// Metres from the eye to the target.
    pub distance: f64,
    /// Heading about the up axis, radians.
    pub yaw: f64,
    /// Elevation above the horizontal, radians (positive looks down on the target).
    pub pitch: f64,
    /// The level's up axis (unit).
    pub up: DVec3,
}

impl OrbitCamera {
    /// A three-quarter view that frames the box `min..max`.
    pub fn framing(min: DVec3, max: DVec3, up: DVec3) -> OrbitCamera {
        let mut camera = OrbitCamera {
            target: DVec3::ZERO,
            distance: 1.0,
            yaw: 0.7,
            pitch: 0.55,
            up: up.normalize(),
        };
        camera.frame(min, max, FRAME_MARGIN, 1.0);
        camera
    }

    /// Moves the target to the box centre and backs off just until every corner of the box is in a
    /// view of the given aspect ratio (width / height), with `margin` to spare (1.1: a tenth of the
    /// half-width free on the tightest side). A box is convex, so its corners inside means all of it.
    pub fn frame(&mut self, min: DVec3, max: DVec3, margin: f64, aspect: f64) {
        let centre = (min + max) * 0.5;
        let half_height = (FIELD_OF_VIEW * 0.5).tan() / margin.max(1e-3);
        let half_width = half_height * aspect.max(0.1);
        let (right, up, back) = (self.right(), self.screen_up(), self.backward());
        // A corner at offset c from the centre is at depth d - c·back in front of an eye d away; it
        // is in view while |c·right| ≤ depth · half_width and |c·up| ≤ depth · half_height.
        let mut distance: f64 = 0.05;
        for k in 0..8 {
            let corner = DVec3::new(
                if k & 1 == 0 { min.x } else { max.x },
                if k & 2 == 0 { min.y } else { max.y },
                if k & 4 == 0 { min.z } else { max.z },
            ) - centre;
            let depth_needed =
                (corner.dot(right).abs() / half_width).max(corner.dot(up).abs() / half_height);
            distance = distance.max(corner.dot(back) + depth_needed);
        }
        self.target = centre;
        self.distance = distance;
    }

    /// Two horizontal unit axes that, with `up`, make a right-handed frame.
    fn horizontal_axes(&self) -> (DVec3, DVec3) {
        let helper = if self.up.x.abs() < 0.9 {
            DVec3::X
        } else {
            DVec3::Y
        };
        let a = (helper - self.up * helper.dot(self.up)).normalize();
        let b = self.up.cross(a);
        (a, b)
    }

    /// Unit vector from the target to the eye.
    pub fn backward(&self) -> DVec3 {
        let (a, b) = self.horizontal_axes();
        let horizontal = a * self.yaw.cos() + b * self.yaw.sin();
        horizontal * self.pitch.cos() + self.up * self.pitch.sin()
    }

    /// Where the eye is.
    pub fn eye(&self) -> DVec3 {
        self.target + self.backward() * self.distance
    }

    /// Unit vector to the right of the view direction.
    pub fn right(&self) -> DVec3 {
        self.up.cross(self.backward()).normalize()
    }

    /// Unit vector up on the screen.
    pub fn screen_up(&self) -> DVec3 {
        self.backward().cross(self.right())
    }

    /// Turns the view: the eye circles the target.
    pub fn orbit(&mut self, d_yaw: f64, d_pitch: f64) {
        self.yaw += d_yaw;
        self.pitch = (self.pitch + d_pitch).clamp(-MAX_PITCH, MAX_PITCH);
    }

    /// Turns the view about the eye (fly mode): the target circles the eye.
    pub fn look(&mut self, d_yaw: f64, d_pitch: f64) {
        let eye = self.eye();
        self.orbit(d_yaw, d_pitch);
        self.target = eye - self.backward() * self.distance;
    }

    /// Slides eye and target together by a screen-space motion in pixels.
    pub fn pan(&mut self, pixels: DVec2, viewport_height: f64) {
        let metres_per_pixel = self.metres_per_pixel(self.distance, viewport_height);
        self.target += (-self.right() * pixels.x + self.screen_up() * pixels.y) * metres_per_pixel;
    }

    /// Moves the eye towards (factor < 1) or away from (factor > 1) the target.
    pub fn zoom(&mut self, factor: f64) {
        self.distance = (self.distance * factor).clamp(0.05, 1.0e6);
    }

    /// Moves eye and target together, in the eye's frame: `forward` along the view, `right`, and `up`
    /// along the level's up axis (fly mode).
    pub fn fly(&mut self, forward: f64, right: f64, up: f64) {
        self.target += -self.backward() * forward + self.right() * right + self.up * up;
    }

    /// The size of one pixel, in metres, at `depth` metres in front of the eye.
    pub fn metres_per_pixel(&self, depth: f64, viewport_height: f64) -> f64 {
        2.0 * depth * (FIELD_OF_VIEW * 0.5).tan() / viewport_height.max(1.0)
    }

    /// Near and far clip distances for a scene of the given radius around the target.
    pub fn clip_range(&self, scene_radius: f64) -> (f64, f64) {
        let near = (self.distance * 0.002).clamp(0.005, 10.0);
        let far = self.distance + scene_radius * 3.0 + 10.0;
        (near, far)
    }

    /// The world-to-clip matrix for a viewport of the given aspect ratio (width / height).
    pub fn view_projection(&self, aspect: f64, scene_radius: f64) -> DMat4 {
        let (near, far) = self.clip_range(scene_radius);
        let projection =
            glam::dcamera::rh::proj::opengl::perspective(FIELD_OF_VIEW, aspect, near, far);
        projection
            * glam::dcamera::rh::view::look_at_mat4(self.eye(), self.target, self.screen_up())
    }

    /// The pixel (origin top left, y down) a world point projects to in a `size` viewport, with its
    /// depth in front of the eye; `None` when it is behind the eye.
    pub fn project(&self, point: DVec3, size: DVec2, scene_radius: f64) -> Option<DVec2> {
        let clip = self.view_projection(size.x / size.y, scene_radius) * point.extend(1.0);
        if clip.w <= 1e-9 {
            return None;
        }
        let ndc = clip / clip.w;
        Some(DVec2::new(
            (ndc.x + 1.0) * 0.5 * size.x,
            (1.0 - ndc.y) * 0.5 * size.y,
        ))
    }

    /// The ray from the eye through a pixel (origin top left, y down): start and unit direction.
    pub fn pixel_ray(&self, pixel: DVec2, size: DVec2) -> (DVec3, DVec3) {
        let ndc_x = pixel.x / size.x * 2.0 - 1.0;
        let ndc_y = 1.0 - pixel.y / size.y * 2.0;
        let half_height = (FIELD_OF_VIEW * 0.5).tan();
        let half_width = half_height * size.x / size.y;
        let direction = (-self.backward()
            + self.right() * (ndc_x * half_width)
            + self.screen_up() * (ndc_y * half_height))
            .normalize();
        (self.eye(), direction)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn framing_keeps_every_corner_of_the_box_in_tall_wide_and_square_views() {
        // A flat, wide level like the demo's (200 x 10 x 170 m) and a tall tower.
        for (min, max) in [
            (
                DVec3::new(-100.0, -5.0, -70.0),
                DVec3::new(100.0, 5.0, 100.0),
            ),
            (DVec3::new(-2.0, 0.0, -2.0), DVec3::new(2.0, 40.0, 2.0)),
        ] {
            for size in [
                DVec2::new(600.0, 1000.0),
                DVec2::new(1600.0, 700.0),
                DVec2::new(800.0, 800.0),
            ] {
                let mut camera = OrbitCamera::framing(min, max, DVec3::Y);
                camera.frame(min, max, FRAME_MARGIN, size.x / size.y);
                let radius = (max - min).length();
                let mut widest = 0.0f64;
                for k in 0..8 {
                    let corner = DVec3::new(
                        if k & 1 == 0 { min.x } else { max.x },
                        if k & 2 == 0 { min.y } else { max.y },
                        if k & 4 == 0 { min.z } else { max.z },
                    );
                    let p = camera.project(corner, size, radius).expect("in front");
                    assert!(
                        p.x >= 0.0 && p.x <= size.x && p.y >= 0.0 && p.y <= size.y,
                        "corner {corner} at {p} outside {size}"
                    );
                    let from_centre = ((p.x / size.x - 0.5).abs()).max((p.y / size.y - 0.5).abs());
                    widest = widest.max(from_centre);
                }
                // Tight: some corner comes within the margin of an edge.
                assert!(widest > 0.5 / FRAME_MARGIN - 0.01, "{widest} for {size}");
            }
        }
    }

    #[test]
    fn pixel_ray_passes_through_the_projected_point() {
        for up in [DVec3::Y, DVec3::Z] {
            let camera = OrbitCamera::framing(DVec3::splat(-3.0), DVec3::splat(5.0), up);
            let size = DVec2::new(800.0, 450.0);
            let point = DVec3::new(1.5, -2.0, 0.7);
            let pixel = camera.project(point, size, 10.0).unwrap();
            let (eye, dir) = camera.pixel_ray(pixel, size);
            let to_point = (point - eye).normalize();
            assert!(to_point.dot(dir) > 1.0 - 1e-12, "{up}");
        }
    }

    #[test]
    fn the_target_projects_to_the_centre_and_up_is_up() {
        let camera = OrbitCamera::framing(DVec3::ZERO, DVec3::new(0.0, 0.0, 2.0), DVec3::Z);
        let size = DVec2::new(640.0, 480.0);
        let centre = camera.project(camera.target, size, 5.0).unwrap();
        assert!((centre - size * 0.5).length() < 1e-9);
        let above = camera.project(camera.target + DVec3::Z, size, 5.0).unwrap();
        assert!(
            above.y < centre.y,
            "a point above the target is higher on screen"
        );
    }

    #[test]
    fn look_keeps_the_eye_and_orbit_keeps_the_target() {
        let mut camera = OrbitCamera::framing(DVec3::ZERO, DVec3::ONE, DVec3::Y);
        let eye = camera.eye();
        camera.look(0.3, -0.2);
        assert!((camera.eye() - eye).length() < 1e-12);
        let target = camera.target;
        camera.orbit(1.0, 0.4);
        assert_eq!(camera.target, target);
    }
}
