//! Offscreen framebuffers of plain renderbuffers, and block copies between framebuffers. A block copy
//! (`glBlitFramebuffer`) of the cached level into the window is a memory copy on Mesa's CPU rasteriser,
//! several times cheaper than drawing a textured quad that writes depth.

use three_d::Context;
use three_d::context::{self as gl, HasContext};

/// Depth buffer layouts a framebuffer may have; a depth block copy needs the same on both sides.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DepthFormat {
    /// 24-bit depth, no stencil.
    Depth24,
    /// 24-bit depth with 8-bit stencil.
    Depth24Stencil8,
    /// 32-bit normalised depth.
    Depth32,
    /// 32-bit float depth.
    Depth32F,
}

impl DepthFormat {
    fn internal_format(self) -> u32 {
        match self {
            DepthFormat::Depth24 => gl::DEPTH_COMPONENT24,
            DepthFormat::Depth24Stencil8 => gl::DEPTH24_STENCIL8,
            DepthFormat::Depth32 => gl::DEPTH_COMPONENT32,
            DepthFormat::Depth32F => gl::DEPTH_COMPONENT32F,
        }
    }

    fn attachment(self) -> u32 {
        match self {
            DepthFormat::Depth24Stencil8 => gl::DEPTH_STENCIL_ATTACHMENT,
            _ => gl::DEPTH_ATTACHMENT,
        }
    }

    /// The depth layout of the window's own framebuffer (framebuffer 0).
    pub fn of_window(context: &Context) -> DepthFormat {
        // SAFETY: plain queries on the current context's default framebuffer.
        let (depth, stencil, kind) = unsafe {
            context.bind_framebuffer(gl::FRAMEBUFFER, None);
            let depth = context.get_framebuffer_attachment_parameter_i32(
                gl::FRAMEBUFFER,
                gl::DEPTH,
                gl::FRAMEBUFFER_ATTACHMENT_DEPTH_SIZE,
            );
            let stencil = context.get_framebuffer_attachment_parameter_i32(
                gl::FRAMEBUFFER,
                gl::STENCIL,
                gl::FRAMEBUFFER_ATTACHMENT_STENCIL_SIZE,
            );
            let kind = context.get_framebuffer_attachment_parameter_i32(
                gl::FRAMEBUFFER,
                gl::DEPTH,
                gl::FRAMEBUFFER_ATTACHMENT_COMPONENT_TYPE,
            );
            (depth, stencil, kind as u32)
        };
        match (depth, stencil) {
            (32, _) if kind == gl::FLOAT => DepthFormat::Depth32F,
            (32, _) => DepthFormat::Depth32,
            (_, s) if s > 0 => DepthFormat::Depth24Stencil8,
            _ => DepthFormat::Depth24,
        }
    }
}

/// A framebuffer with an RGBA8 colour renderbuffer and a depth renderbuffer.
pub struct Offscreen {
    context: Context,
    /// The framebuffer.
    pub framebuffer: gl::Framebuffer,
    colour: gl::Renderbuffer,
    depth: gl::Renderbuffer,
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
    /// Its depth layout.
    pub depth_format: DepthFormat,
}

impl Offscreen {
    /// Creates a framebuffer of the given size and depth layout.
    pub fn new(
        context: &Context,
        width: u32,
        height: u32,
        depth_format: DepthFormat,
    ) -> Result<Offscreen, String> {
        // SAFETY: creates and binds fresh objects on the current context; every name used is one
        // just created here.
        unsafe {
            let framebuffer = context.create_framebuffer()?;
            let colour = context.create_renderbuffer()?;
            let depth = context.create_renderbuffer()?;
            context.bind_renderbuffer(gl::RENDERBUFFER, Some(colour));
            context.renderbuffer_storage(gl::RENDERBUFFER, gl::RGBA8, width as i32, height as i32);
            context.bind_renderbuffer(gl::RENDERBUFFER, Some(depth));
            context.renderbuffer_storage(
                gl::RENDERBUFFER,
                depth_format.internal_format(),
                width as i32,
                height as i32,
            );
            context.bind_renderbuffer(gl::RENDERBUFFER, None);
            context.bind_framebuffer(gl::FRAMEBUFFER, Some(framebuffer));
            context.framebuffer_renderbuffer(
                gl::FRAMEBUFFER,
                gl::COLOR_ATTACHMENT0,
                gl::RENDERBUFFER,
                Some(colour),
            );
            context.framebuffer_renderbuffer(
                gl::FRAMEBUFFER,
                depth_format.attachment(),
                gl::RENDERBUFFER,
                Some(depth),
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
                depth_format,
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
            self.context.delete_renderbuffer(self.depth);
        }
    }
}

/// Copies colour (and depth, when `with_depth`) from the whole of `from` into the rectangle
/// `(x, y, width, height)` of framebuffer `to` (`None`: the window). Returns false when the driver
/// refused the copy (for example, depth layouts that differ).
pub fn block_copy(
    context: &Context,
    from: &Offscreen,
    to: Option<gl::Framebuffer>,
    [x, y, width, height]: [i32; 4],
    with_depth: bool,
) -> bool {
    let mask = if with_depth {
        gl::COLOR_BUFFER_BIT | gl::DEPTH_BUFFER_BIT
    } else {
        gl::COLOR_BUFFER_BIT
    };
    // SAFETY: binds existing framebuffers and copies within their sizes; errors are read back.
    unsafe {
        while context.get_error() != gl::NO_ERROR {}
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
            mask,
            gl::NEAREST,
        );
        let ok = context.get_error() == gl::NO_ERROR;
        context.bind_framebuffer(gl::READ_FRAMEBUFFER, None);
        context.bind_framebuffer(gl::DRAW_FRAMEBUFFER, to);
        ok
    }
}
