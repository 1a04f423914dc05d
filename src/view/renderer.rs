//! The GPU side of the viewport (three-d on whatever OpenGL there is, Mesa's CPU rasteriser included).
//!
//! The level is drawn into an offscreen colour + depth target only when the level, the camera or the
//! viewport size changed; every other frame copies that target and draws the overlay marks over it with
//! depth testing, so selecting or editing a probe never redraws the level. While the camera moves, big
//! levels are drawn from their proxy. Marks hidden behind the level show through faintly.

use std::sync::Arc;

use three_d::{
    Blend, Camera, ClearState, ColorMaterial, Context, CpuMesh, Cull, DepthTest, Gm, Indices, Mesh,
    Positions, RenderStates, RenderTarget, ScissorBox, Srgba, Viewport, WriteMask, degrees, vec3,
};

use super::camera::{FIELD_OF_VIEW, OrbitCamera};
use super::framebuffer::{DepthFormat, Offscreen, block_copy};
use super::level_drawing::LevelDrawing;
use super::marks::MarkSurfaces;
use super::surface::Surface;

/// Background of the viewport (a dark slate, so lit surfaces and state colours both read).
pub const BACKGROUND: [u8; 3] = [38, 42, 50];

/// Everything one frame needs. Revisions tell the renderer when to upload new geometry.
#[derive(Clone)]
pub struct FrameInput {
    /// The camera.
    pub camera: OrbitCamera,
    /// The level drawing.
    pub level: Arc<LevelDrawing>,
    /// Changes whenever `level` is a new drawing.
    pub level_revision: u64,
    /// Overlay triangles.
    pub marks: Arc<MarkSurfaces>,
    /// Changes whenever `marks` changed.
    pub marks_revision: u64,
    /// The camera is moving: big levels may be drawn from their proxy.
    pub moving: bool,
}

/// What the last level pass was drawn for.
#[derive(Clone, Copy, PartialEq)]
struct CacheKey {
    level_revision: u64,
    camera: OrbitCamera,
    size: (u32, u32),
    proxy: bool,
}

struct LevelCache {
    key: CacheKey,
    buffer: Offscreen,
}

/// Where a frame is drawn.
pub enum Target<'a> {
    /// The window's own framebuffer, of this size in pixels.
    Window {
        /// Width.
        width: u32,
        /// Height.
        height: u32,
    },
    /// An offscreen framebuffer.
    Offscreen(&'a Offscreen),
}

struct GpuLevel {
    revision: u64,
    surface: Gm<Mesh, ColorMaterial>,
    proxy: Option<Gm<Mesh, ColorMaterial>>,
    grid: Gm<Mesh, ColorMaterial>,
}

struct GpuMarks {
    revision: u64,
    solid: Option<Mesh>,
    see_through: Option<Mesh>,
}

/// How the last frame was drawn, for the frame-time figures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FrameKind {
    /// The level was drawn in full.
    Level,
    /// The level proxy was drawn (camera moving).
    Proxy,
    /// Only the marks were drawn over the cached level.
    MarksOnly,
}

/// The GPU scene: uploaded geometry and the cached level image.
pub struct Renderer {
    context: Context,
    level: Option<GpuLevel>,
    marks: Option<GpuMarks>,
    cache: Option<LevelCache>,
    window_depth: Option<DepthFormat>,
    depth_copy_refused: bool,
}

impl Renderer {
    /// A renderer on an OpenGL context.
    pub fn new(context: Context) -> Renderer {
        Renderer {
            context,
            level: None,
            marks: None,
            cache: None,
            window_depth: None,
            depth_copy_refused: false,
        }
    }

    /// The OpenGL context drawn with.
    pub fn context(&self) -> &Context {
        &self.context
    }

    /// Waits until the GPU (or the CPU rasteriser) has finished every command so far, so that frame
    /// times measure the drawing itself.
    pub fn finish(&self) {
        use three_d::context::HasContext;
        // SAFETY: glFinish has no preconditions beyond a current context, which the caller has.
        unsafe { self.context.finish() }
    }

    /// Draws a frame into `viewport` of `target` (pixels from the bottom left). Returns how it was
    /// drawn.
    pub fn render(
        &mut self,
        target: Target,
        viewport: Viewport,
        frame: &FrameInput,
    ) -> Result<FrameKind, String> {
        self.upload(frame);
        let depth_format = match target {
            Target::Window { .. } => *self
                .window_depth
                .get_or_insert_with(|| DepthFormat::of_window(&self.context)),
            Target::Offscreen(buffer) => buffer.depth_format,
        };
        let kind = self.draw_level(viewport, depth_format, frame)?;
        let Some(cache) = &self.cache else {
            return Ok(kind);
        };
        let (framebuffer, width, height) = match target {
            Target::Window { width, height } => (None, width, height),
            Target::Offscreen(buffer) => (Some(buffer.framebuffer), buffer.width, buffer.height),
        };
        let rect = [
            viewport.x,
            viewport.y,
            viewport.width as i32,
            viewport.height as i32,
        ];
        if self.depth_copy_refused
            || !block_copy(&self.context, &cache.buffer, framebuffer, rect, true)
        {
            if !self.depth_copy_refused {
                eprintln!(
                    "plumbline: the driver refused to copy depth; probe marks are drawn without hiding"
                );
                self.depth_copy_refused = true;
            }
            block_copy(&self.context, &cache.buffer, framebuffer, rect, false);
        }
        let screen = match framebuffer {
            None => RenderTarget::screen(&self.context, width, height),
            Some(fb) => RenderTarget::from_framebuffer(&self.context, width, height, fb),
        };
        self.draw_marks(&screen, viewport, frame);
        // The framebuffer belongs to its owner, not to this render target.
        let _ = screen.into_framebuffer();
        Ok(kind)
    }

    /// Draws a frame into a new offscreen image of the given size: RGBA rows from the top down.
    pub fn render_image(
        &mut self,
        width: u32,
        height: u32,
        frame: &FrameInput,
    ) -> Result<Vec<u8>, String> {
        let buffer = Offscreen::new(&self.context, width, height, DepthFormat::Depth24)?;
        self.render(
            Target::Offscreen(&buffer),
            Viewport::new_at_origo(width, height),
            frame,
        )?;
        let bottom_up = buffer.read_colour();
        let row = width as usize * 4;
        Ok(bottom_up
            .chunks_exact(row)
            .rev()
            .flatten()
            .copied()
            .collect())
    }

    /// Draws the level into the cache unless the cache already holds this view of it.
    fn draw_level(
        &mut self,
        viewport: Viewport,
        depth_format: DepthFormat,
        frame: &FrameInput,
    ) -> Result<FrameKind, String> {
        let Some(level) = &self.level else {
            return Ok(FrameKind::MarksOnly);
        };
        let proxy = frame.moving && level.proxy.is_some();
        let key = CacheKey {
            level_revision: frame.level_revision,
            camera: frame.camera,
            size: (viewport.width, viewport.height),
            proxy,
        };
        if self
            .cache
            .as_ref()
            .is_some_and(|c| c.key == key && c.buffer.depth_format == depth_format)
        {
            return Ok(FrameKind::MarksOnly);
        }
        let buffer = match self.cache.take() {
            Some(c) if c.key.size == key.size && c.buffer.depth_format == depth_format => c.buffer,
            _ => Offscreen::new(&self.context, viewport.width, viewport.height, depth_format)?,
        };
        let local = Viewport::new_at_origo(viewport.width, viewport.height);
        let camera = three_d_camera(&frame.camera, &frame.level, local);
        let [r, g, b] = BACKGROUND;
        let offscreen = RenderTarget::from_framebuffer(
            &self.context,
            viewport.width,
            viewport.height,
            buffer.framebuffer,
        );
        offscreen.clear(ClearState::color_and_depth(
            r as f32 / 255.0,
            g as f32 / 255.0,
            b as f32 / 255.0,
            1.0,
            1.0,
        ));
        let surface = if proxy {
            level.proxy.as_ref().unwrap_or(&level.surface)
        } else {
            &level.surface
        };
        offscreen.render(&camera, [surface, &level.grid], &[]);
        let _ = offscreen.into_framebuffer();
        self.cache = Some(LevelCache { key, buffer });
        Ok(if proxy {
            FrameKind::Proxy
        } else {
            FrameKind::Level
        })
    }

    /// Draws the marks over the copied level: first faintly where the level hides them (while the
    /// depth buffer holds the level alone, so a mark never shows faintly through another mark),
    /// then solid, then see-through.
    fn draw_marks(&self, target: &RenderTarget, viewport: Viewport, frame: &FrameInput) {
        let Some(marks) = &self.marks else {
            return;
        };
        let camera = three_d_camera(&frame.camera, &frame.level, viewport);
        let scissor = ScissorBox::from(viewport);
        let passes = [
            (&marks.solid, hidden_material()),
            (&marks.solid, mark_material(false)),
            (&marks.see_through, mark_material(true)),
        ];
        for (mesh, material) in passes {
            if let Some(mesh) = mesh {
                target.render_partially_with_material(scissor, &material, &camera, [mesh], &[]);
            }
        }
    }

    fn upload(&mut self, frame: &FrameInput) {
        if self.level.as_ref().map(|l| l.revision) != Some(frame.level_revision) {
            let level = &frame.level;
            let opaque = |surface: &Surface| {
                Gm::new(
                    Mesh::new(&self.context, &cpu_mesh(surface)),
                    level_material(),
                )
            };
            self.level = Some(GpuLevel {
                revision: frame.level_revision,
                surface: opaque(&level.surface),
                proxy: level.proxy.as_ref().map(opaque),
                grid: opaque(&level.grid),
            });
            self.cache = None;
        }
        if self.marks.as_ref().map(|m| m.revision) != Some(frame.marks_revision) {
            let mesh = |surface: &Surface| {
                (!surface.is_empty()).then(|| Mesh::new(&self.context, &cpu_mesh(surface)))
            };
            self.marks = Some(GpuMarks {
                revision: frame.marks_revision,
                solid: mesh(&frame.marks.solid),
                see_through: mesh(&frame.marks.see_through),
            });
        }
    }
}

/// The three-d camera for our camera, in drawing coordinates (relative to the level's origin).
pub fn three_d_camera(camera: &OrbitCamera, level: &LevelDrawing, viewport: Viewport) -> Camera {
    let f = |v: glam::DVec3| vec3(v.x as f32, v.y as f32, v.z as f32);
    let (near, far) = camera.clip_range(level.radius() + (camera.target - level.origin).length());
    Camera::new_perspective(
        viewport,
        f(camera.eye() - level.origin),
        f(camera.target - level.origin),
        f(camera.screen_up()),
        degrees(FIELD_OF_VIEW.to_degrees() as f32),
        near as f32,
        far as f32,
    )
}

fn cpu_mesh(surface: &Surface) -> CpuMesh {
    CpuMesh {
        positions: Positions::F32(
            surface
                .positions
                .iter()
                .map(|p| vec3(p[0], p[1], p[2]))
                .collect(),
        ),
        indices: Indices::None,
        colors: Some(
            surface
                .colours
                .iter()
                .map(|c| Srgba::new(c[0], c[1], c[2], c[3]))
                .collect(),
        ),
        ..Default::default()
    }
}

fn level_material() -> ColorMaterial {
    ColorMaterial {
        color: Srgba::WHITE,
        texture: None,
        render_states: RenderStates {
            cull: Cull::None,
            ..Default::default()
        },
        is_transparent: false,
    }
}

fn mark_material(see_through: bool) -> ColorMaterial {
    ColorMaterial {
        color: Srgba::WHITE,
        texture: None,
        render_states: RenderStates {
            cull: Cull::None,
            depth_test: DepthTest::LessOrEqual,
            write_mask: if see_through {
                WriteMask::COLOR
            } else {
                WriteMask::COLOR_AND_DEPTH
            },
            blend: if see_through {
                Blend::TRANSPARENCY
            } else {
                Blend::Disabled
            },
        },
        is_transparent: see_through,
    }
}

/// Marks behind the level, drawn faintly where the level hides them.
fn hidden_material() -> ColorMaterial {
    ColorMaterial {
        color: Srgba::new(255, 255, 255, 80),
        texture: None,
        render_states: RenderStates {
            cull: Cull::None,
            depth_test: DepthTest::Greater,
            write_mask: WriteMask::COLOR,
            blend: Blend::TRANSPARENCY,
        },
        is_transparent: true,
    }
}
