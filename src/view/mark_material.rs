//! How the probe marks are drawn over the cached level: each fragment of a mark is tested against
//! the level's own depth, read from the cache's depth texture, in the shader. So the level's depth
//! never has to be copied into the window, nor the window's depth cleared (on Mesa's CPU rasteriser
//! copying it took ~3.5 ms of a frame at 1920×1040, clearing the view's part of it ~3 ms). Only
//! the pixels a mark covers are ever tested, and the marks' first passes overwrite the window's
//! depth at each of them (the far plane under see-through marks, a solid mark's own depth under
//! solid ones), whatever an earlier frame left there; from then on it holds the marks alone, which
//! hide one another by the ordinary depth test.

use three_d::context::{self as gl, HasContext};
use three_d::{
    Blend, ColorMapping, Context, DepthTest, EffectMaterialId, Light, Material, MaterialType,
    Program, RenderStates, Srgba, Viewer, WriteMask,
};

/// Which of the marks' passes a material draws, in the order they are drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MarkPass {
    /// The see-through marks' pixels get the far plane's depth; nothing is drawn.
    Reset,
    /// The solid marks are drawn faintly where the level hides them, and every pixel of theirs
    /// gets the depth of the last one drawn there (a depth no nearer than the nearest: the solid
    /// pass that follows still finds the nearest).
    Hidden,
    /// The solid marks where the level does not hide them (they hide one another).
    Solid,
    /// The see-through marks where neither the level nor a solid mark hides them.
    SeeThrough,
}

/// A mark's material: its vertex colours (times `colour`), drawn only where the level's depth
/// (`level_depth`, a 32-bit float depth texture of the view's size whose lower-left corner is at
/// window pixel `origin`) puts it in front of the level, or behind it for [`MarkPass::Hidden`].
pub struct MarkMaterial {
    /// The context the depth texture belongs to.
    pub context: Context,
    /// The pass.
    pub pass: MarkPass,
    /// The level's depth, as drawn into the cache.
    pub level_depth: gl::Texture,
    /// The window pixel of the depth texture's lower-left corner.
    pub origin: [i32; 2],
}

/// The first of the marks' shader ids, one a shader: three-d keeps 0x0000–0x4FFF for materials
/// of its users and caches compiled shaders by id.
const FIRST_SHADER_ID: u16 = 0x4A00;

/// The texture unit the level's depth is bound to (the material has no other texture).
const DEPTH_UNIT: u32 = 0;

impl MarkPass {
    /// Marks behind the level are drawn at 135 of 255, as opaque as two layers at 80 (marks are
    /// drawn as their front halves; whole, front and back both showed).
    fn colour(self) -> Srgba {
        match self {
            MarkPass::Hidden => Srgba::new(255, 255, 255, 135),
            MarkPass::Reset | MarkPass::Solid | MarkPass::SeeThrough => Srgba::WHITE,
        }
    }

    /// What the fragment shader does once `level` holds the level's depth at the fragment.
    fn shader_body(self) -> &'static str {
        match self {
            MarkPass::Reset => "gl_FragDepth = 1.0;\n    outColor = vec4(0.0);",
            // Drawn (faintly) only where the level's depth test, less or equal, would refuse it.
            MarkPass::Hidden => {
                "outColor = surfaceColor * col;\n    \
                 outColor.rgb = color_mapping(outColor.rgb);\n    \
                 if (gl_FragCoord.z <= level) outColor.a = 0.0;"
            }
            MarkPass::Solid | MarkPass::SeeThrough => {
                "if (gl_FragCoord.z > level) discard;\n    outColor = surfaceColor * col;\n    \
                 outColor.rgb = color_mapping(outColor.rgb);"
            }
        }
    }

    fn render_states(self) -> RenderStates {
        let (depth_test, write_mask, blend) = match self {
            MarkPass::Reset => (DepthTest::Always, WriteMask::DEPTH, Blend::Disabled),
            MarkPass::Hidden => (
                DepthTest::Always,
                WriteMask::COLOR_AND_DEPTH,
                Blend::TRANSPARENCY,
            ),
            MarkPass::Solid => (
                DepthTest::LessOrEqual,
                WriteMask::COLOR_AND_DEPTH,
                Blend::Disabled,
            ),
            MarkPass::SeeThrough => (
                DepthTest::LessOrEqual,
                WriteMask::COLOR,
                Blend::TRANSPARENCY,
            ),
        };
        RenderStates {
            cull: three_d::Cull::None,
            depth_test,
            write_mask,
            blend,
        }
    }
}

impl Material for MarkMaterial {
    fn fragment_shader_source(&self, _lights: &[&dyn Light]) -> String {
        format!(
            "{mapping}
uniform vec4 surfaceColor;
uniform sampler2D levelDepth;
uniform vec2 origin;
in vec4 col;
layout (location = 0) out vec4 outColor;
void main()
{{
    float level = texelFetch(levelDepth, ivec2(gl_FragCoord.xy - origin), 0).r;
    {body}
}}
",
            mapping = ColorMapping::fragment_shader_source(),
            body = self.pass.shader_body()
        )
    }

    fn id(&self) -> EffectMaterialId {
        EffectMaterialId(
            FIRST_SHADER_ID
                + match self.pass {
                    MarkPass::Reset => 0,
                    MarkPass::Hidden => 1,
                    MarkPass::Solid | MarkPass::SeeThrough => 2,
                },
        )
    }

    fn use_uniforms(&self, program: &Program, viewer: &dyn Viewer, _lights: &[&dyn Light]) {
        // A reset draws no colour and reads no depth: its shader keeps none of these uniforms, and
        // sending one a shader does not keep is an error.
        if self.pass == MarkPass::Reset {
            return;
        }
        viewer.color_mapping().use_uniforms(program);
        program.use_uniform("surfaceColor", self.pass.colour().to_linear_srgb());
        program.use_uniform(
            "origin",
            three_d::vec2(self.origin[0] as f32, self.origin[1] as f32),
        );
        program.use_uniform("levelDepth", DEPTH_UNIT as i32);
        // SAFETY: binds a texture this renderer created, on its own context.
        unsafe {
            self.context.active_texture(gl::TEXTURE0 + DEPTH_UNIT);
            self.context
                .bind_texture(gl::TEXTURE_2D, Some(self.level_depth));
        }
    }

    fn render_states(&self) -> RenderStates {
        self.pass.render_states()
    }

    fn material_type(&self) -> MaterialType {
        match self.pass {
            MarkPass::Reset | MarkPass::Solid => MaterialType::Opaque,
            MarkPass::Hidden | MarkPass::SeeThrough => MaterialType::Transparent,
        }
    }
}
