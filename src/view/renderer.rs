//! The GPU side of the viewport (three-d on whatever OpenGL there is, Mesa's CPU rasteriser included).
//!
//! The level is drawn into an offscreen colour + depth target only when the level, the camera or the
//! viewport size changed; every other frame copies that target and draws the overlay marks over it with
//! depth testing, so selecting or editing a probe never redraws the level. While the camera moves, big
//! levels are drawn from their proxy. Marks hidden behind the level show through faintly.

use std::sync::Arc;

use three_d::{
    Blend, Camera, ClearState, ColorMaterial, ColorTexture, Context, CopyEffect, CpuMesh, Cull,
    DepthTest, DepthTexture, DepthTexture2D, Gm, Indices, Interpolation, Mesh, Positions,
    RenderStates, RenderTarget, ScissorBox, Srgba, Texture2D, Viewport, Wrapping, WriteMask,
    degrees, vec3,
};

use super::camera::{FIELD_OF_VIEW, OrbitCamera};
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
    colour: Texture2D,
    depth: DepthTexture2D,
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
}

impl Renderer {
    /// A renderer on an OpenGL context.
    pub fn new(context: Context) -> Renderer {
        Renderer {
            context,
            level: None,
            marks: None,
            cache: None,
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
        target: &RenderTarget,
        viewport: Viewport,
        frame: &FrameInput,
    ) -> FrameKind {
        self.upload(frame);
        let (Some(level), Some(marks)) = (&self.level, &self.marks) else {
            return FrameKind::MarksOnly;
        };
        let proxy = frame.moving && level.proxy.is_some();
        let key = CacheKey {
            level_revision: frame.level_revision,
            camera: frame.camera,
            size: (viewport.width, viewport.height),
            proxy,
        };
        let kind = if self.cache.as_ref().is_some_and(|c| c.key == key) {
            FrameKind::MarksOnly
        } else {
            let cache = self.cache.take().filter(|c| c.key.size == key.size);
            let cache = cache.unwrap_or_else(|| new_cache(&self.context, key));
            let local = Viewport::new_at_origo(viewport.width, viewport.height);
            let camera = three_d_camera(&frame.camera, &frame.level, local);
            {
                let [r, g, b] = BACKGROUND;
                let offscreen = RenderTarget::new(
                    cache.colour.as_color_target(None),
                    cache.depth.as_depth_target(),
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
            }
            self.cache = Some(LevelCache { key, ..cache });
            if proxy {
                FrameKind::Proxy
            } else {
                FrameKind::Level
            }
        };
        let cache = self.cache.as_ref().expect("the level pass leaves a cache");
        let camera = three_d_camera(&frame.camera, &frame.level, viewport);
        let scissor = ScissorBox::from(viewport);
        target.apply_screen_effect_partially(
            scissor,
            &CopyEffect::default(),
            &camera,
            &[],
            Some(ColorTexture::Single(&cache.colour)),
            Some(DepthTexture::Single(&cache.depth)),
        );
        if let Some(solid) = &marks.solid {
            target.render_partially_with_material(
                scissor,
                &mark_material(false),
                &camera,
                [solid],
                &[],
            );
        }
        if let Some(see_through) = &marks.see_through {
            target.render_partially_with_material(
                scissor,
                &mark_material(true),
                &camera,
                [see_through],
                &[],
            );
        }
        if let Some(solid) = &marks.solid {
            target.render_partially_with_material(
                scissor,
                &hidden_material(),
                &camera,
                [solid],
                &[],
            );
        }
        kind
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

fn new_cache(context: &Context, key: CacheKey) -> LevelCache {
    let (width, height) = key.size;
    LevelCache {
        key,
        colour: Texture2D::new_empty::<[u8; 4]>(
            context,
            width,
            height,
            Interpolation::Nearest,
            Interpolation::Nearest,
            None,
            Wrapping::ClampToEdge,
            Wrapping::ClampToEdge,
        ),
        depth: DepthTexture2D::new::<f32>(
            context,
            width,
            height,
            Wrapping::ClampToEdge,
            Wrapping::ClampToEdge,
        ),
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
