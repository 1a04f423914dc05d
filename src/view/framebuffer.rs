//! Offscreen framebuffers (a colour renderbuffer and a depth texture the marks' shader reads), and
//! block copies of their colour into other framebuffers. A block copy (`glBlitFramebuffer`) of the
//! cached level into the window is a memory copy on Mesa's CPU rasteriser, several times cheaper
//! than drawing a textured quad; copying depth too cost ~3.5 ms a frame at 1920×1040, so the level's
//! depth stays in its texture (see `mark_material`).

use three_d::Context;
use three_d::context::{self as gl, HasContext};

/// A framebuffer with an RGBA8 colour renderbuffer and a 32-bit float depth texture.
pub struct Offscreen {
    context: Context,
    /// The framebuffer.
    pub framebuffer: gl::Framebuffer,
    colour: gl::Renderbuffer,
    /// The depth of what was drawn, readable by shaders (nearest texel, no comparison).
    pub depth: gl::Texture,
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
}

impl Offscreen {
    /// Creates a framebuffer of the given size.
    pub fn new(context: &Context, width: u32, height: u32) -> Result<Offscreen, String> {
        // SAFETY: creates and binds fresh objects on the current context; every name used is one
        // just created here.
        unsafe {
            let framebuffer = context.create_framebuffer()?;
            let colour = context.create_renderbuffer()?;
            let depth = context.create_texture()?;
            context.bind_renderbuffer(gl::RENDERBUFFER, Some(colour));
            context.renderbuffer_storage(gl::RENDERBUFFER, gl::RGBA8, width as i32, height as i32);
            context.bind_renderbuffer(gl::RENDERBUFFER, None);
            context.bind_texture(gl::TEXTURE_2D, Some(depth));
            context.tex_storage_2d(
                gl::TEXTURE_2D,
                1,
                gl::DEPTH_COMPONENT32F,
                width as i32,
                height as i32,
            );
            for (parameter, value) in [
                (gl::TEXTURE_MIN_FILTER, gl::NEAREST),
                (gl::TEXTURE_MAG_FILTER, gl::NEAREST),
                (gl::TEXTURE_WRAP_S, gl::CLAMP_TO_EDGE),
                (gl::TEXTURE_WRAP_T, gl::CLAMP_TO_EDGE),
                (gl::TEXTURE_COMPARE_MODE, gl::NONE),
            ] {
                context.tex_parameter_i32(gl::TEXTURE_2D, parameter, value as i32);
            }
            context.bind_texture(gl::TEXTURE_2D, None);
            context.bind_framebuffer(gl::FRAMEBUFFER, Some(framebuffer));
            context.framebuffer_renderbuffer(
                gl::FRAMEBUFFER,
                gl::COLOR_ATTACHMENT0,
                gl::RENDERBUFFER,
                Some(colour),
            );
            context.framebuffer_texture_2d(
                gl::FRAMEBUFFER,
                gl::DEPTH_ATTACHMENT,
                gl::TEXTURE_2D,
                Some(depth),
                0,
            );
            let status = context.check_framebuffer_status(gl::FRAMEBUFFER);
            context.bind_framebuffer(gl::FRAMEBUFFER, None);
            let made = Offscreen {
                context: context.clone(),
                framebuffer,
                colour,
                depth,
                width,
                height,
            };
            if status != gl::FRAMEBUFFER_COMPLETE {
                return Err(format!(
                    "offscreen framebuffer incomplete (status {status:#x})"
                ));
            }
            Ok(made)
        }
    }

    /// Reads the colour buffer: RGBA rows from the bottom up.
    pub fn read_colour(&self) -> Vec<u8> {
        let mut pixels = vec![0u8; self.width as usize * self.height as usize * 4];
        // SAFETY: the buffer holds exactly width × height RGBA bytes.
        unsafe {
            self.context
                .bind_framebuffer(gl::READ_FRAMEBUFFER, Some(self.framebuffer));
            self.context.read_pixels(
                0,
                0,
                self.width as i32,
                self.height as i32,
                gl::RGBA,
                gl::UNSIGNED_BYTE,
                gl::PixelPackData::Slice(Some(&mut pixels)),
            );
            self.context.bind_framebuffer(gl::READ_FRAMEBUFFER, None);
        }
        pixels
    }
}

impl Drop for Offscreen {
    fn drop(&mut self) {
        // SAFETY: the names were created by this value and are deleted once.
        unsafe {
            self.context.delete_framebuffer(self.framebuffer);
            self.context.delete_renderbuffer(self.colour);
            self.context.delete_texture(self.depth);
        }
    }
}

/// Copies the colour of the whole of `from` into the rectangle `(x, y, width, height)` of framebuffer
/// `to` (`None`: the window).
pub fn block_copy(
    context: &Context,
    from: &Offscreen,
    to: Option<gl::Framebuffer>,
    [x, y, width, height]: [i32; 4],
) {
    // SAFETY: binds existing framebuffers and copies colour within their sizes.
    unsafe {
        context.bind_framebuffer(gl::READ_FRAMEBUFFER, Some(from.framebuffer));
        context.bind_framebuffer(gl::DRAW_FRAMEBUFFER, to);
        context.blit_framebuffer(
            0,
            0,
            from.width as i32,
            from.height as i32,
            x,
            y,
            x + width,
            y + height,
            gl::COLOR_BUFFER_BIT,
            gl::NEAREST,
        );
        context.bind_framebuffer(gl::READ_FRAMEBUFFER, None);
        context.bind_framebuffer(gl::DRAW_FRAMEBUFFER, to);
    }
}
