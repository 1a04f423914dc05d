//! The GPU side of the viewport (three-d on whatever OpenGL there is, Mesa's CPU rasteriser included).
//!
//! The level is drawn into an offscreen colour + depth target only when the level, the camera or the
//! viewport size changed; every other frame copies that target's colour and draws the overlay marks
//! over it, each tested against the target's depth in their shader (`mark_material`), so selecting
//! or editing a probe never redraws the level. While the camera moves, big levels are drawn from
//! their proxy; once it rests, a window draws the full level a part per frame into a second target
//! while the proxy's image stays on screen, so no frame waits for the whole level and input stays
//! live. Marks hidden behind the level show through faintly.

use std::ops::Range;
use std::sync::Arc;

use three_d::{
    Camera, ClearState, ColorMaterial, Context, CpuMesh, Cull, Gm, Indices, Mesh, Positions,
    RenderStates, RenderTarget, ScissorBox, Srgba, Viewport, degrees, vec3,
};

use super::camera::{FIELD_OF_VIEW, OrbitCamera};
use super::framebuffer::{Offscreen, block_copy};
use super::level_drawing::{LevelDrawing, PROXY_ABOVE};
use super::mark_material::{MarkMaterial, MarkPass};
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

impl CacheKey {
    /// The same view drawn from the proxy.
    fn as_proxy(self) -> CacheKey {
        CacheKey {
            proxy: true,
            ..self
        }
    }
}

struct LevelCache {
    key: CacheKey,
    buffer: Offscreen,
}

/// A full level being drawn a part per frame, not yet shown.
struct PartlyDrawn {
    key: CacheKey,
    buffer: Offscreen,
    /// How many of the level's parts are in `buffer`.
    parts: usize,
}

/// Triangles of the full level drawn in one frame of a window's progressive drawing: on Mesa's
/// CPU rasteriser about 30 ms at a desktop's size, leaving the frame well under 100 ms.
const PART_TRIANGLES: usize = PROXY_ABOVE + PROXY_ABOVE / 2;

/// How a big level at rest is drawn after the camera moved.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pace {
    /// Whole, in the frame that asks for it (pictures).
    AtOnce,
    /// A part per frame into a second target while the proxy's image stays on screen (a window:
    /// no frame waits for the whole level); the caller asks for frames while
    /// [`Renderer::drawing_in_parts`].
    PartPerFrame,
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
    /// The level's triangles in parts of at most [`PART_TRIANGLES`].
    parts: Vec<Gm<Mesh, ColorMaterial>>,
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
    /// The level was drawn in full, or its last part (the full level is now on screen).
    Level,
    /// A part of the full level was drawn, not the last; the proxy's image is on screen.
    LevelPart,
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
    partly_drawn: Option<PartlyDrawn>,
    /// A target of the view's size no longer in use, kept to draw the next level into.
    spare: Option<Offscreen>,
}

impl Renderer {
    /// A renderer on an OpenGL context.
    pub fn new(context: Context) -> Renderer {
        Renderer {
            context,
            level: None,
            marks: None,
            cache: None,
            partly_drawn: None,
            spare: None,
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

    /// True while the full level is being drawn a part per frame: the caller should ask for
    /// another frame.
    pub fn drawing_in_parts(&self) -> bool {
        self.partly_drawn.is_some()
    }

    /// Draws a frame into `viewport` of `target` (pixels from the bottom left), a big level at rest
    /// at `pace`. Returns how it was drawn.
    pub fn render(
        &mut self,
        target: Target,
        viewport: Viewport,
        frame: &FrameInput,
        pace: Pace,
    ) -> Result<FrameKind, String> {
        self.upload(frame);
        let kind = self.draw_level(viewport, frame, pace)?;
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
        block_copy(&self.context, &cache.buffer, framebuffer, rect);
        let screen = match framebuffer {
            None => RenderTarget::screen(&self.context, width, height),
            Some(fb) => RenderTarget::from_framebuffer(&self.context, width, height, fb),
        };
        self.draw_marks(&screen, viewport, frame, cache.buffer.depth);
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
        let buffer = Offscreen::new(&self.context, width, height)?;
        self.render(
            Target::Offscreen(&buffer),
            Viewport::new_at_origo(width, height),
            frame,
            Pace::AtOnce,
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

    /// Draws the level into the cache unless the cache already holds this view of it; at
    /// [`Pace::PartPerFrame`], a big level at rest goes a part per call into a second target,
    /// shown once whole.
    fn draw_level(
        &mut self,
        viewport: Viewport,
        frame: &FrameInput,
        pace: Pace,
    ) -> Result<FrameKind, String> {
        let Some(level) = &self.level else {
            return Ok(FrameKind::MarksOnly);
        };
        let has_proxy = level.proxy.is_some();
        let parts = level.parts.len();
        let key = CacheKey {
            level_revision: frame.level_revision,
            camera: frame.camera,
            size: (viewport.width, viewport.height),
            proxy: frame.moving && has_proxy,
        };
        let cached = |key: CacheKey| self.cache.as_ref().is_some_and(|c| c.key == key);
        if cached(key) {
            self.partly_drawn = None;
            return Ok(FrameKind::MarksOnly);
        }
        let proxy_shown = cached(key.as_proxy());
        if key.proxy || pace == Pace::AtOnce || parts <= 1 {
            self.partly_drawn = None;
            let buffer = self.target(key)?;
            self.draw_into(&buffer, viewport, frame, 0..parts, key.proxy);
            self.keep(key, buffer);
            return Ok(if key.proxy {
                FrameKind::Proxy
            } else {
                FrameKind::Level
            });
        }
        // Parts drawn for another view are of no use now; their target may be.
        let partly = match self.partly_drawn.take() {
            Some(p) if p.key == key => Some(p),
            stale => {
                if let Some(p) = stale {
                    self.spare.get_or_insert(p.buffer);
                }
                None
            }
        };
        let mut partly = match partly {
            Some(p) => p,
            None => PartlyDrawn {
                key,
                buffer: self.target(key)?,
                parts: 0,
            },
        };
        if has_proxy && partly.parts == 0 && !proxy_shown {
            // Nothing of this view on screen yet: its proxy first, the parts from the next frame.
            let buffer = self.target(key.as_proxy())?;
            self.draw_into(&buffer, viewport, frame, 0..0, true);
            self.keep(key.as_proxy(), buffer);
            self.partly_drawn = Some(partly);
            return Ok(FrameKind::Proxy);
        }
        let next = partly.parts;
        self.draw_into(&partly.buffer, viewport, frame, next..next + 1, false);
        partly.parts += 1;
        if partly.parts < parts {
            self.partly_drawn = Some(partly);
            return Ok(FrameKind::LevelPart);
        }
        self.keep(key, partly.buffer);
        Ok(FrameKind::Level)
    }

    /// A target of the view's size for drawing `key` into: the spare one, or a new one.
    fn target(&mut self, key: CacheKey) -> Result<Offscreen, String> {
        match self.spare.take() {
            Some(b) if (b.width, b.height) == key.size => Ok(b),
            _ => Offscreen::new(&self.context, key.size.0, key.size.1),
        }
    }

    /// Makes `buffer` the cache of `key`; the old cache's target becomes the spare.
    fn keep(&mut self, key: CacheKey, buffer: Offscreen) {
        if let Some(old) = self.cache.replace(LevelCache { key, buffer }) {
            self.spare = Some(old.buffer);
        }
    }

    /// Draws into `buffer` the level's parts `parts` (clearing it first when they start at the
    /// first part, which brings the grid), or with `proxy` the proxy and the grid.
    fn draw_into(
        &self,
        buffer: &Offscreen,
        viewport: Viewport,
        frame: &FrameInput,
        parts: Range<usize>,
        proxy: bool,
    ) {
        let Some(level) = &self.level else {
            return;
        };
        let local = Viewport::new_at_origo(viewport.width, viewport.height);
        let camera = three_d_camera(&frame.camera, &frame.level, local);
        let offscreen = RenderTarget::from_framebuffer(
            &self.context,
            viewport.width,
            viewport.height,
            buffer.framebuffer,
        );
        if proxy || parts.start == 0 {
            let [r, g, b] = BACKGROUND;
            offscreen.clear(ClearState::color_and_depth(
                r as f32 / 255.0,
                g as f32 / 255.0,
                b as f32 / 255.0,
                1.0,
                1.0,
            ));
            offscreen.render(&camera, [&level.grid], &[]);
        }
        if let Some(surface) = level.proxy.as_ref().filter(|_| proxy) {
            offscreen.render(&camera, [surface], &[]);
        } else {
            let end = parts.end.min(level.parts.len());
            let start = parts.start.min(end);
            offscreen.render(&camera, &level.parts[start..end], &[]);
        }
        let _ = offscreen.into_framebuffer();
    }

    /// Draws the marks over the copied level, each tested against the level's depth
    /// (`level_depth`, the cache's) in its shader (see `mark_material`): first the see-through
    /// marks' pixels are given the far plane's depth, then the solid marks are drawn faintly where
    /// the level hides them (their pixels taking their depth), then solid, then see-through. So
    /// the target's depth holds the marks alone wherever a mark is: a mark never shows faintly
    /// through another mark, and solid marks hide the marks behind them.
    fn draw_marks(
        &self,
        target: &RenderTarget,
        viewport: Viewport,
        frame: &FrameInput,
        level_depth: three_d::context::Texture,
    ) {
        let Some(marks) = &self.marks else {
            return;
        };
        let camera = three_d_camera(&frame.camera, &frame.level, viewport);
        let scissor = ScissorBox::from(viewport);
        let material = |pass| MarkMaterial {
            context: self.context.clone(),
            pass,
            level_depth,
            origin: [viewport.x, viewport.y],
        };
        let passes = [
            (&marks.see_through, MarkPass::Reset),
            (&marks.solid, MarkPass::Hidden),
            (&marks.solid, MarkPass::Solid),
            (&marks.see_through, MarkPass::SeeThrough),
        ];
        for (mesh, pass) in passes {
            if let Some(mesh) = mesh {
                target.render_partially_with_material(
                    scissor,
                    &material(pass),
                    &camera,
                    [mesh],
                    &[],
                );
            }
        }
    }

    fn upload(&mut self, frame: &FrameInput) {
        if self.level.as_ref().map(|l| l.revision) != Some(frame.level_revision) {
            let level = &frame.level;
            let opaque = |surface: &Surface, triangles: Range<usize>| {
                Gm::new(
                    Mesh::new(&self.context, &cpu_mesh(surface, triangles)),
                    level_material(),
                )
            };
            let whole = |surface: &Surface| opaque(surface, 0..surface.triangle_count());
            let part =
                |k: usize| opaque(&level.surface, k * PART_TRIANGLES..(k + 1) * PART_TRIANGLES);
            let count = level
                .surface
                .triangle_count()
                .div_ceil(PART_TRIANGLES)
                .max(1);
            self.level = Some(GpuLevel {
                revision: frame.level_revision,
                parts: (0..count).map(part).collect(),
                proxy: level.proxy.as_ref().map(whole),
                grid: whole(&level.grid),
            });
            self.cache = None;
            self.partly_drawn = None;
        }
        if self.marks.as_ref().map(|m| m.revision) != Some(frame.marks_revision) {
            let mesh = |surface: &Surface| {
                (!surface.is_empty()).then(|| {
                    let triangles = 0..surface.triangle_count();
                    Mesh::new(&self.context, &cpu_mesh(surface, triangles))
                })
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

/// The GPU mesh of `surface`'s triangles `triangles` (numbered in order; cut short at its end).
fn cpu_mesh(surface: &Surface, triangles: Range<usize>) -> CpuMesh {
    let end = (triangles.end * 3).min(surface.positions.len());
    let start = (triangles.start * 3).min(end);
    CpuMesh {
        positions: Positions::F32(
            surface.positions[start..end]
                .iter()
                .map(|p| vec3(p[0], p[1], p[2]))
                .collect(),
        ),
        indices: Indices::None,
        colors: Some(
            surface.colours[start..end]
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
