//! Drawing the level and the probes: the camera, colours, the geometry of every mark, and the three-d
//! renderer that puts them on screen (or into an offscreen image for tests and screenshots). Only this
//! module converts the core's f64 geometry to f32.

pub mod camera;
pub mod framebuffer;
pub mod level_drawing;
pub mod mark_material;
pub mod marks;
pub mod palette;
pub mod probe_marks;
pub mod renderer;
pub mod scene_marks;
pub mod surface;
